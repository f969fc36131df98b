//! Unsaved work survives a crash: the editor writes a recovery copy while there are unsaved
//! changes, removes it on a clean exit, and the next start offers the copies of editors that
//! stopped. The last test does it for real: the editor binary on a virtual display, changed
//! by key presses, killed with SIGKILL, and the copy restored by a new editor.

use std::path::{Path, PathBuf};
use std::process::{Child, Command as Process, Stdio};
use std::time::{Duration, Instant};

use egui::Modifiers;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use raydraft::app::recovery::{self, CopyInfo};
use raydraft::app::{Command, DEMO_SCENE, Edit, EditorApp, Options};
use raydraft::scene::{Scene, edit, file};

fn harness(app: EditorApp) -> Harness<'static, EditorApp> {
    Harness::builder()
        .with_size(egui::vec2(1280.0, 820.0))
        .build_ui_state(|ui, app: &mut EditorApp| app.frame_ui(ui), app)
}

fn demo() -> Scene {
    file::from_str(DEMO_SCENE, "demo").expect("demo scene").scene
}

/// The demo scene with every object moved right by `dx_mm`, as Ctrl+A then → does it.
fn demo_moved_right(dx_mm: f64) -> Scene {
    let mut scene = demo();
    let ids = scene.objects.iter().map(|o| o.id).collect();
    edit::apply(&mut scene, Edit::Translate { ids, by: (dx_mm, 0.0) }).expect("translate");
    scene
}

/// A process number no Linux system hands out (the largest is 2²² ≈ 4.2 million).
const ENDED_PID: u32 = 4_000_000_000;

fn options(state: &Path) -> Options {
    Options { state_dir: Some(state.to_path_buf()), ..Options::default() }
}

#[test]
fn a_copy_left_behind_is_offered_and_restored_onto_its_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let state = dir.path().join("state");
    let original = dir.path().join("guide.ron");
    std::fs::write(&original, DEMO_SCENE).expect("the user's file");
    let changed = demo_moved_right(2.0);
    let info = CopyInfo {
        pid: ENDED_PID,
        process_start: None,
        original: Some(original.display().to_string()),
        original_stamp: None,
        written_unix_s: 0,
    };
    let copy = recovery::write_copy(&state, &info, &changed).expect("copy");

    let app = EditorApp::new(Options { file: None, ..options(&state) });
    let mut h = harness(app);
    h.step();
    h.step();
    assert!(h.query_by_label_contains("Recover unsaved work").is_some(), "no offer shown");
    assert!(h.query_by_label_contains(&original.display().to_string()).is_some(), "the offer names the file");
    h.get_by_label("Restore").click();
    h.step();
    h.step();
    let app = h.state();
    assert!(app.doc.scene == changed, "the restored scene is the changed one");
    assert_eq!(app.doc.path.as_deref(), Some(original.as_path()));
    assert!(app.doc.is_modified() && app.title().contains('•'));
    assert!(app.dialogs.recovery_offers.is_empty());
    // The old copy gave way to this editor's own, which holds the same work.
    assert!(!copy.exists());
    let own = app.recovery_file().expect("own copy path");
    assert!(recovery::read_copy(&own).expect("own copy").1 == changed);

    // Save writes to the original file, and the recovery copy goes.
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::S);
    h.step();
    h.step();
    assert!(!h.state().doc.is_modified(), "{:?}", h.state().dialogs.error);
    assert!(file::load(&original).expect("saved").scene == changed);
    assert!(!own.exists(), "a saved document keeps no recovery copy");
}

#[test]
fn later_keeps_a_copy_and_discard_deletes_it() {
    let dir = tempfile::tempdir().expect("temp dir");
    let state = dir.path().to_path_buf();
    let info = |pid, written_unix_s| CopyInfo {
        pid,
        process_start: None,
        original: None,
        original_stamp: None,
        written_unix_s,
    };
    let newer = recovery::write_copy(&state, &info(ENDED_PID, 200), &demo_moved_right(1.0)).expect("copy");
    let older = recovery::write_copy(&state, &info(ENDED_PID + 1, 100), &demo_moved_right(3.0)).expect("copy");
    let mut h = harness(EditorApp::new(options(&state)));
    h.step();
    assert!(h.query_by_label_contains("1 more recovery copy").is_some());
    h.get_by_label("Later").click();
    h.step();
    h.step();
    h.get_by_label("Discard").click();
    h.step();
    h.step();
    assert!(h.query_by_label_contains("Recover unsaved work").is_none());
    assert!(newer.exists(), "later keeps the copy");
    assert!(!older.exists(), "discard deletes it");
    assert!(!h.state().doc.is_modified(), "the demo scene stays as it was");
    // The next start offers what was kept.
    let again = EditorApp::new(options(&state));
    assert_eq!(again.dialogs.recovery_offers.iter().map(|c| c.file.clone()).collect::<Vec<_>>(), vec![newer]);
}

#[test]
fn unsaved_work_is_copied_while_it_lasts_and_the_copy_goes_on_a_clean_exit() {
    let dir = tempfile::tempdir().expect("temp dir");
    let state = dir.path().join("state");
    let app = EditorApp::new(Options { autosave_every: Duration::from_millis(50), ..options(&state) });
    let copy = app.recovery_file().expect("copy path");
    let mut h = harness(app);
    h.step();
    let wait_for = |h: &mut Harness<'_, EditorApp>, what: &dyn Fn() -> bool| {
        let start = Instant::now();
        while !what() {
            assert!(start.elapsed() < Duration::from_secs(10), "timed out");
            std::thread::sleep(Duration::from_millis(20));
            h.step();
        }
    };
    std::thread::sleep(Duration::from_millis(100));
    h.step();
    assert!(!copy.exists(), "nothing unsaved, no copy");
    h.state_mut().push(Command::SelectAll);
    h.step();
    h.key_press(egui::Key::ArrowRight);
    h.step();
    wait_for(&mut h, &|| copy.exists());
    let (info, scene) = recovery::read_copy(&copy).expect("copy");
    assert!(scene == demo_moved_right(1.0));
    assert_eq!(info.pid, std::process::id());
    assert_eq!(info.original, None);
    // A later change is copied at the next interval.
    h.key_press(egui::Key::ArrowRight);
    h.step();
    wait_for(&mut h, &|| recovery::read_copy(&copy).is_ok_and(|(_, s)| s == demo_moved_right(2.0)));
    // A running editor's copy is never offered to another.
    assert!(EditorApp::new(options(&state)).dialogs.recovery_offers.is_empty());
    // Undone back to the saved scene: nothing to recover.
    for _ in 0..2 {
        h.key_press_modifiers(Modifiers::COMMAND, egui::Key::Z);
        h.step();
    }
    h.step();
    assert!(!h.state().doc.is_modified());
    assert!(!copy.exists());
    // Changed again, then closed after the user agrees to discard: the copy goes too.
    h.key_press(egui::Key::ArrowLeft);
    h.step();
    wait_for(&mut h, &|| copy.exists());
    h.input_mut().viewports.entry(egui::ViewportId::ROOT).or_default().events.push(egui::ViewportEvent::Close);
    h.step();
    h.step();
    h.get_by_label("Discard changes").click();
    h.step();
    // The frames until the window is gone write nothing either.
    std::thread::sleep(Duration::from_millis(100));
    h.step();
    assert!(!copy.exists(), "a clean exit leaves no copy");
}

/// The first program called `name` on the PATH.
fn find_program(name: &str) -> Option<PathBuf> {
    std::env::split_paths(&std::env::var_os("PATH")?).map(|d| d.join(name)).find(|p| p.is_file())
}

/// A child process killed when the test ends, whatever happens.
struct Killed(Child);

impl Drop for Killed {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

/// The X server, asked to stop (SIGTERM) so that it removes its socket and lock file.
struct Server(Child);

impl Drop for Server {
    fn drop(&mut self) {
        let _ = Process::new("kill").args(["-TERM", &self.0.id().to_string()]).status();
        if poll(Duration::from_secs(3), || self.0.try_wait().ok().flatten()).is_none() {
            let _ = self.0.kill();
            let _ = self.0.wait();
        }
    }
}

/// Starts Xvfb on the first free display number from 70 and returns it with its display.
fn start_xvfb(xvfb: &Path, xdo: &Path) -> Option<(Server, String)> {
    for n in 70..120 {
        let socket = PathBuf::from(format!("/tmp/.X11-unix/X{n}"));
        if socket.exists() || Path::new(&format!("/tmp/.X{n}-lock")).exists() {
            continue;
        }
        let display = format!(":{n}");
        let child = Process::new(xvfb)
            .args([display.as_str(), "-screen", "0", "1280x900x24", "-nolisten", "tcp"])
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .ok()?;
        let mut server = Server(child);
        let start = Instant::now();
        while start.elapsed() < Duration::from_secs(10) {
            // The server answers once it is ready for clients.
            if socket.exists() && xdotool(xdo, &display, &["getmouselocation"]).is_some() {
                return Some((server, display));
            }
            if server.0.try_wait().ok().flatten().is_some() {
                break; // another server took the number first
            }
            std::thread::sleep(Duration::from_millis(50));
        }
    }
    None
}

fn xdotool(xdotool: &Path, display: &str, args: &[&str]) -> Option<String> {
    let out = Process::new(xdotool).env("DISPLAY", display).args(args).stderr(Stdio::null()).output().ok()?;
    out.status.success().then(|| String::from_utf8_lossy(&out.stdout).trim().to_owned())
}

/// Polls `f` every 50 ms until it gives something or `limit` passes.
fn poll<T>(limit: Duration, mut f: impl FnMut() -> Option<T>) -> Option<T> {
    let start = Instant::now();
    loop {
        if let Some(v) = f() {
            return Some(v);
        }
        if start.elapsed() > limit {
            return None;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
}

#[test]
fn a_killed_editor_leaves_its_work_for_the_next_start() {
    let (Some(xvfb), Some(xdo)) = (find_program("Xvfb"), find_program("xdotool")) else {
        eprintln!("skipped: needs Xvfb and xdotool (the xvfb and xdotool packages; .ci/run installs them)");
        return;
    };
    let Some((_server, display)) = start_xvfb(&xvfb, &xdo) else {
        eprintln!("skipped: Xvfb did not start on any display from :70 to :119");
        return;
    };
    let dir = tempfile::tempdir().expect("temp dir");
    let state_home = dir.path().join("state");
    let log = dir.path().join("editor.log");
    let editor = Process::new(env!("CARGO_BIN_EXE_raydraft"))
        .env("DISPLAY", &display)
        .env_remove("WAYLAND_DISPLAY")
        .env("XDG_STATE_HOME", &state_home)
        .env("XDG_CONFIG_HOME", dir.path().join("config"))
        .env("RAYDRAFT_AUTOSAVE_SECS", "0.5")
        .env("RAYDRAFT_NO_DIALOGS", "1")
        .stdout(Stdio::null())
        .stderr(std::fs::File::create(&log).expect("log"))
        .spawn()
        .expect("the editor starts");
    let pid = editor.id();
    let mut editor = Killed(editor);
    let log_text = || std::fs::read_to_string(&log).unwrap_or_default();

    // The title becomes "untitled — Raydraft" once the first frame ran.
    let window = poll(Duration::from_secs(20), || {
        xdotool(&xdo, &display, &["search", "--name", "^untitled"])?.lines().next().map(str::to_owned)
    })
    .unwrap_or_else(|| panic!("no editor window; its output:\n{}", log_text()));

    // Select everything and move it one grid step (1 mm) right; the title shows the
    // modified marker once the key presses arrived. Pressing again is safe while it does
    // not: Ctrl+A alone changes nothing, and → without a selection neither.
    let mut modified = false;
    for _ in 0..5 {
        xdotool(&xdo, &display, &["windowfocus", &window]);
        std::thread::sleep(Duration::from_millis(300));
        xdotool(&xdo, &display, &["key", "ctrl+a"]);
        std::thread::sleep(Duration::from_millis(300));
        xdotool(&xdo, &display, &["key", "Right"]);
        modified = poll(Duration::from_secs(3), || {
            xdotool(&xdo, &display, &["getwindowname", &window]).filter(|t| t.contains('•'))
        })
        .is_some();
        if modified {
            break;
        }
    }
    assert!(modified, "the key presses did not change the scene; editor output:\n{}", log_text());

    let expected = demo_moved_right(1.0);
    let copy = state_home.join("raydraft").join(format!("recovery-{pid}.ron"));
    let written =
        poll(Duration::from_secs(10), || recovery::read_copy(&copy).ok().filter(|(_, scene)| *scene == expected));
    assert!(written.is_some(), "no recovery copy of the moved scene at {}", copy.display());

    // Kill it the hard way: no chance to clean up.
    editor.0.kill().expect("SIGKILL");
    editor.0.wait().expect("reaped");

    let (info, scene) = recovery::read_copy(&copy).expect("the copy survives the kill");
    assert!(scene == expected, "the copy holds the changed scene");
    assert_eq!((info.pid, info.original), (pid, None));

    // The next start offers it, and restoring gives the changed scene back.
    let mut h = harness(EditorApp::new(options(&state_home.join("raydraft"))));
    h.step();
    h.step();
    assert_eq!(h.state().dialogs.recovery_offers.len(), 1, "offered once");
    h.get_by_label("Restore").click();
    h.step();
    h.step();
    let app = h.state();
    assert!(app.doc.scene == expected, "the restored scene is the changed one");
    assert!(app.doc.is_modified());
    assert_eq!(app.doc.path, None);
    assert!(!copy.exists(), "the restored copy made way for the new editor's own");
}
