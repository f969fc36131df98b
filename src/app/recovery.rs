//! Recovery copies: unsaved work written to the user's state folder every so often, so that
//! a crash, a kill or a power cut loses at most one interval of it.
//!
//! Each running editor keeps at most one copy, `recovery-PID.ron`, in
//! `$XDG_STATE_HOME/raydraft/` (else `~/.local/state/raydraft/`), never beside or over the
//! user's file. A copy is an ordinary scene file whose first line is a comment saying what
//! it belongs to, as JSON:
//!
//! ```text
//! // raydraft-recovery {"pid":4242,"process_start":981234,"original":"/home/me/guide.ron",...}
//! (
//!     version: 2,
//!     ...
//! ```
//!
//! so a copy can also be opened by hand like any scene. Copies are written atomically
//! (temporary file, sync, rename) on a background thread. The copy is removed when the
//! document has no unsaved changes any more (saved, or undone back to the saved state) and
//! on a clean exit. At start the editor offers the copies of editors that are no longer
//! running; a live editor's copy is never offered. A panic hook writes the copy of the
//! latest revision before the process ends ([`PanicSlot`]).

use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex, TryLockError};
use std::thread::JoinHandle;
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use serde::{Deserialize, Serialize};

use super::files::DiskStamp;
use crate::scene::{Scene, file};

/// How often unsaved work is written when nothing else says.
pub const DEFAULT_INTERVAL: Duration = Duration::from_secs(30);
/// The environment variable that overrides the interval, in seconds (fractions allowed).
pub const INTERVAL_ENV: &str = "RAYDRAFT_AUTOSAVE_SECS";
/// The first characters of a recovery copy.
const HEADER_PREFIX: &str = "// raydraft-recovery ";
/// The longest header line read (a path is rarely longer than a few hundred bytes).
const MAX_HEADER_BYTES: u64 = 64 * 1024;
/// Where no process table can be read, a copy not refreshed for this long is taken to be
/// left behind by an editor that stopped (a live editor refreshes its copy every interval).
#[cfg(not(target_os = "linux"))]
const STALE_AFTER: Duration = Duration::from_secs(10 * 60);

/// What a recovery copy belongs to: its first line.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CopyInfo {
    /// The editor process that wrote it.
    pub pid: u32,
    /// When that process started, as the system counts it (on Linux, clock ticks since boot,
    /// from `/proc/PID/stat`): tells a process that reused the number apart.
    #[serde(default)]
    pub process_start: Option<u64>,
    /// The document's file, or `None` for a document never saved.
    #[serde(default)]
    pub original: Option<String>,
    /// The document's file as the editor last loaded or saved it, to notice a change made
    /// to it by someone else before the copy is saved over it.
    #[serde(default)]
    pub original_stamp: Option<DiskStamp>,
    /// When the copy was written, seconds since 1970-01-01 UTC.
    pub written_unix_s: u64,
}

impl CopyInfo {
    pub fn original_path(&self) -> Option<PathBuf> {
        self.original.as_ref().map(PathBuf::from)
    }
}

/// A recovery copy found on disk.
#[derive(Clone, Debug, PartialEq)]
pub struct RecoveryCopy {
    /// The copy itself.
    pub file: PathBuf,
    pub info: CopyInfo,
}

impl RecoveryCopy {
    /// How long ago the copy was written, in words ("3 minutes ago").
    pub fn age_text(&self) -> String {
        let secs = unix_now_s().saturating_sub(self.info.written_unix_s);
        let (n, unit) = match secs {
            0..60 => return "less than a minute ago".to_owned(),
            60..3600 => (secs / 60, "minute"),
            3600..86_400 => (secs / 3600, "hour"),
            _ => (secs / 86_400, "day"),
        };
        format!("{n} {unit}{} ago", if n == 1 { "" } else { "s" })
    }
}

/// `$XDG_STATE_HOME/raydraft`, else `~/.local/state/raydraft`.
pub fn default_state_dir() -> Option<PathBuf> {
    let base = std::env::var_os("XDG_STATE_HOME")
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
        .or_else(|| std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".local").join("state")))?;
    Some(base.join("raydraft"))
}

/// The autosave interval: [`INTERVAL_ENV`] if set to a positive number of seconds, else
/// [`DEFAULT_INTERVAL`].
pub fn interval_from_env() -> Duration {
    let Some(value) = std::env::var_os(INTERVAL_ENV) else { return DEFAULT_INTERVAL };
    let text = value.to_string_lossy();
    match text.trim().parse::<f64>() {
        Ok(s) if s.is_finite() && s > 0.0 && s < 1e9 => Duration::from_secs_f64(s),
        _ => {
            eprintln!(
                "warning: {INTERVAL_ENV}={text} is not a positive number of seconds; autosaving every {} s",
                DEFAULT_INTERVAL.as_secs()
            );
            DEFAULT_INTERVAL
        }
    }
}

/// The copy this process writes in `dir`.
pub fn copy_path(dir: &Path, pid: u32) -> PathBuf {
    dir.join(format!("recovery-{pid}.ron"))
}

/// The header line and the scene as one text.
fn copy_text(info: &CopyInfo, scene: &Scene) -> Result<String, String> {
    let header = serde_json::to_string(info).map_err(|e| format!("the recovery header: {e}"))?;
    let body = file::to_string(scene).map_err(|e| e.to_string())?;
    Ok(format!("{HEADER_PREFIX}{header}\n{body}"))
}

/// Writes the copy of `info.pid` into `dir` atomically and returns its path.
pub fn write_copy(dir: &Path, info: &CopyInfo, scene: &Scene) -> Result<PathBuf, String> {
    let text = copy_text(info, scene)?;
    create_private_dir(dir).map_err(|e| format!("{}: cannot make the folder: {e}", dir.display()))?;
    let path = copy_path(dir, info.pid);
    file::write_atomically(&path, text.as_bytes(), false).map_err(|e| format!("{}: {e}", path.display()))?;
    Ok(path)
}

/// Makes `dir` (readable by its owner only on Unix: a scene may be confidential work).
fn create_private_dir(dir: &Path) -> std::io::Result<()> {
    let mut builder = std::fs::DirBuilder::new();
    builder.recursive(true);
    #[cfg(unix)]
    std::os::unix::fs::DirBuilderExt::mode(&mut builder, 0o700);
    builder.create(dir)
}

/// Reads the header line of a copy; `None` if the file is not a recovery copy.
pub fn read_info(path: &Path) -> Option<CopyInfo> {
    let f = std::fs::File::open(path).ok()?;
    let mut line = String::new();
    BufReader::new(f.take(MAX_HEADER_BYTES)).read_line(&mut line).ok()?;
    serde_json::from_str(line.trim_end().strip_prefix(HEADER_PREFIX)?).ok()
}

/// Reads a copy: its header and its scene. A scene with validation errors still loads (the
/// editor holds such scenes while the user edits, and the copy must give back exactly that).
pub fn read_copy(path: &Path) -> Result<(CopyInfo, Scene), String> {
    let shown = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| format!("{shown}: cannot read the recovery copy: {e}"))?;
    let (first, body) = text.split_once('\n').unwrap_or((&text, ""));
    let info: CopyInfo = first
        .strip_prefix(HEADER_PREFIX)
        .and_then(|h| serde_json::from_str(h).ok())
        .ok_or_else(|| format!("{shown}:1:1: not a recovery copy (its first line is not a recovery header)"))?;
    let scene = match file::from_str(body, &shown) {
        Ok(loaded) => loaded.scene,
        // Copies are always written in the current version, which parses straight into a
        // Scene; only the validation failed, and the Problems panel will list it again.
        Err(file::LoadError::Invalid { .. }) => {
            let mut scene: Scene = ron::from_str(body).map_err(|e| format!("{shown}: {e}"))?;
            scene.fix_next_id();
            scene
        }
        Err(e) => return Err(e.to_string()),
    };
    Ok((info, scene))
}

/// The copies in `dir` left by editors that are no longer running, newest first. A missing
/// or unreadable folder has none; files that are not recovery copies are left alone.
pub fn orphaned_copies(dir: &Path) -> Vec<RecoveryCopy> {
    let Ok(entries) = std::fs::read_dir(dir) else { return Vec::new() };
    let mut copies: Vec<RecoveryCopy> = entries
        .filter_map(Result::ok)
        .filter(|e| {
            let name = e.file_name();
            let name = name.to_string_lossy();
            name.starts_with("recovery-") && name.ends_with(".ron")
        })
        .filter_map(|e| {
            let file = e.path();
            let info = read_info(&file)?;
            (!is_running(&info, &file)).then_some(RecoveryCopy { file, info })
        })
        .collect();
    copies.sort_by(|a, b| b.info.written_unix_s.cmp(&a.info.written_unix_s).then_with(|| a.file.cmp(&b.file)));
    copies
}

/// This process's id and start time.
pub fn this_process() -> (u32, Option<u64>) {
    let pid = std::process::id();
    (pid, process_start(pid))
}

/// When process `pid` started, in clock ticks since boot (Linux), and whether it has ended
/// but not yet been reaped (a zombie). `None` when the process does not exist.
#[cfg(target_os = "linux")]
fn proc_stat(pid: u32) -> Option<(Option<u64>, bool)> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    // "PID (NAME) STATE PPID ...": the name may hold spaces and parentheses, so the fields
    // are counted from the last ')'. The start time is field 22, the 20th after the name.
    let rest = stat.rsplit_once(')').map_or("", |(_, r)| r);
    let mut fields = rest.split_whitespace();
    let zombie = fields.next().is_some_and(|s| s == "Z" || s == "X");
    Some((fields.nth(18).and_then(|s| s.parse().ok()), zombie))
}

fn process_start(pid: u32) -> Option<u64> {
    #[cfg(target_os = "linux")]
    {
        proc_stat(pid).and_then(|(start, _)| start)
    }
    #[cfg(not(target_os = "linux"))]
    {
        let _ = pid;
        None
    }
}

/// Whether the editor that wrote a copy still runs.
fn is_running(info: &CopyInfo, file: &Path) -> bool {
    #[cfg(target_os = "linux")]
    {
        let _ = file;
        match proc_stat(info.pid) {
            None | Some((_, true)) => false,
            // Another process got the same number after the editor ended.
            Some((Some(start), false)) if info.process_start.is_some_and(|s| s != start) => false,
            Some(_) => true,
        }
    }
    #[cfg(not(target_os = "linux"))]
    {
        if info.pid == std::process::id() {
            return true;
        }
        let age = std::fs::metadata(file).and_then(|m| m.modified()).ok().and_then(|t| t.elapsed().ok());
        age.is_some_and(|a| a < STALE_AFTER)
    }
}

fn unix_now_s() -> u64 {
    SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs())
}

/// The latest unsaved revision, where a panic hook can reach it.
///
/// The editor puts a copy of the scene here whenever the revision changes while there are
/// unsaved changes, and empties it when there are none. The hook only ever `try_lock`s it, so
/// a panic while the editor holds the lock cannot hang the process.
#[derive(Clone, Default)]
pub struct PanicSlot(Arc<Mutex<Option<SlotContent>>>);

struct SlotContent {
    dir: PathBuf,
    info: CopyInfo,
    scene: Scene,
}

impl PanicSlot {
    fn set(&self, dir: &Path, info: CopyInfo, scene: Scene) {
        let content = SlotContent { dir: dir.to_path_buf(), info, scene };
        match self.0.lock() {
            Ok(mut g) => *g = Some(content),
            Err(poisoned) => *poisoned.into_inner() = Some(content),
        }
    }

    fn clear(&self) {
        match self.0.lock() {
            Ok(mut g) => *g = None,
            Err(poisoned) => *poisoned.into_inner() = None,
        }
    }

    /// Writes the held revision as this process's recovery copy, without waiting for the
    /// lock. `None` when there is nothing unsaved (or the lock is busy).
    pub fn write_now(&self) -> Option<Result<PathBuf, String>> {
        let guard = match self.0.try_lock() {
            Ok(g) => g,
            Err(TryLockError::Poisoned(p)) => p.into_inner(),
            Err(TryLockError::WouldBlock) => return None,
        };
        let content = guard.as_ref()?;
        let mut info = content.info.clone();
        info.written_unix_s = unix_now_s();
        Some(write_copy(&content.dir, &info, &content.scene))
    }
}

/// Installs a panic hook that writes the recovery copy held in `slot`, then runs the hook
/// that was there before (which prints the message).
pub fn install_panic_hook(slot: PanicSlot) {
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        match slot.write_now() {
            Some(Ok(path)) => eprintln!("raydraft: the unsaved work was written to {}", path.display()),
            Some(Err(e)) => eprintln!("raydraft: the unsaved work could not be written: {e}"),
            None => {}
        }
        previous(info);
    }));
}

/// The document as the autosave needs it.
pub struct DocState<'a> {
    pub scene: &'a Scene,
    pub path: Option<&'a Path>,
    pub stamp: Option<DiskStamp>,
    pub revision: u64,
    pub modified: bool,
}

/// The autosave of one editor.
pub struct Autosave {
    dir: PathBuf,
    interval: Duration,
    pid: u32,
    process_start: Option<u64>,
    /// When the document last went from saved to modified.
    modified_since: Option<Instant>,
    last_write: Option<Instant>,
    /// The revision and file the copy on disk holds (or is being written with).
    written: Option<(u64, Option<PathBuf>)>,
    /// Whether a copy of ours may exist on disk.
    has_copy: bool,
    pending: Option<JoinHandle<Result<PathBuf, String>>>,
    slot: PanicSlot,
    slot_revision: Option<(u64, Option<PathBuf>)>,
    /// Set by a clean exit: the frames until the window closes write nothing.
    finished: bool,
}

impl Autosave {
    /// The autosave of this process into `dir`. A copy already under this process's name
    /// was left by an ended process that had the same number: it is renamed out of the way
    /// (to `recovery-PID-SECONDS.ron`) so it can still be offered.
    pub fn new(dir: PathBuf, interval: Duration) -> Self {
        let (pid, process_start) = this_process();
        let own = copy_path(&dir, pid);
        if let Some(info) = read_info(&own) {
            if info.pid != pid || info.process_start != process_start {
                let aside = dir.join(format!("recovery-{pid}-{}.ron", unix_now_s()));
                if let Err(e) = std::fs::rename(&own, &aside) {
                    eprintln!("warning: {}: not moved to {}: {e}", own.display(), aside.display());
                }
            }
        }
        Self {
            dir,
            interval,
            pid,
            process_start,
            modified_since: None,
            last_write: None,
            written: None,
            has_copy: false,
            pending: None,
            slot: PanicSlot::default(),
            slot_revision: None,
            finished: false,
        }
    }

    /// The header of a copy of `doc` written now.
    fn info(&self, doc: &DocState<'_>) -> CopyInfo {
        CopyInfo {
            pid: self.pid,
            process_start: self.process_start,
            original: doc.path.map(|p| p.to_string_lossy().into_owned()),
            original_stamp: doc.stamp.clone(),
            written_unix_s: unix_now_s(),
        }
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// This editor's copy (it exists only while there is unsaved work).
    pub fn copy_file(&self) -> PathBuf {
        copy_path(&self.dir, self.pid)
    }

    /// What a panic hook needs to write the copy.
    pub fn panic_slot(&self) -> PanicSlot {
        self.slot.clone()
    }

    /// Call once a frame. Writes the copy when it is due, removes it when nothing is unsaved.
    /// Returns how long until the next write is due (the caller repaints then), and the
    /// error of a write that failed.
    pub fn tick(&mut self, doc: &DocState<'_>) -> (Option<Duration>, Option<String>) {
        let error = self.collect_finished();
        if self.finished {
            return (None, error);
        }
        let key = (doc.revision, doc.path.map(Path::to_path_buf));
        if self.slot_revision.as_ref() != Some(&key) {
            if doc.modified {
                self.slot.set(&self.dir, self.info(doc), doc.scene.clone());
            } else {
                self.slot.clear();
            }
            self.slot_revision = Some(key.clone());
        }
        if !doc.modified {
            self.modified_since = None;
            if self.has_copy {
                self.remove_copy();
            }
            return (None, error);
        }
        let now = Instant::now();
        let since = *self.modified_since.get_or_insert(now);
        let due = self.last_write.map_or(since, |t| t.max(since)) + self.interval;
        if now < due {
            return (Some(due - now), error);
        }
        if self.pending.is_some() {
            // The previous copy is still being written (a large scene on a slow disk).
            return (Some(Duration::from_millis(250)), error);
        }
        self.last_write = Some(now);
        if self.written.as_ref() == Some(&key) {
            // Nothing new: only show that this editor is still alive.
            let _ = std::fs::File::options()
                .write(true)
                .open(self.copy_file())
                .and_then(|f| f.set_modified(SystemTime::now()));
        } else {
            let dir = self.dir.clone();
            let info = self.info(doc);
            let scene = doc.scene.clone();
            self.pending = Some(std::thread::spawn(move || write_copy(&dir, &info, &scene)));
            self.written = Some(key);
            self.has_copy = true;
        }
        (Some(self.interval), error)
    }

    /// Writes the copy now, on this thread (after restoring a copy, before the old one goes).
    pub fn write_now(&mut self, doc: &DocState<'_>) -> Result<PathBuf, String> {
        self.wait_pending();
        self.has_copy = true;
        let path = write_copy(&self.dir, &self.info(doc), doc.scene)?;
        self.written = Some((doc.revision, doc.path.map(Path::to_path_buf)));
        self.last_write = Some(Instant::now());
        Ok(path)
    }

    /// Removes this editor's copy (a clean exit, or nothing unsaved any more).
    pub fn remove_copy(&mut self) {
        self.wait_pending();
        match std::fs::remove_file(self.copy_file()) {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => eprintln!("warning: {}: recovery copy not removed: {e}", self.copy_file().display()),
        }
        self.has_copy = false;
        self.written = None;
    }

    /// A clean exit: nothing to recover.
    pub fn finish(&mut self) {
        self.finished = true;
        self.slot.clear();
        self.slot_revision = None;
        self.remove_copy();
    }

    fn wait_pending(&mut self) {
        if let Some(h) = self.pending.take() {
            let _ = h.join();
        }
    }

    /// The result of a finished background write, if it failed.
    fn collect_finished(&mut self) -> Option<String> {
        if !self.pending.as_ref().is_some_and(JoinHandle::is_finished) {
            return None;
        }
        let result = self.pending.take().map(JoinHandle::join);
        match result {
            Some(Ok(Ok(_))) | None => None,
            Some(Ok(Err(e))) => {
                // Try again at the next interval.
                self.written = None;
                Some(format!("The recovery copy was not written: {e}"))
            }
            Some(Err(_)) => {
                self.written = None;
                Some("The recovery copy was not written: the writing thread stopped".to_owned())
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn info(pid: u32) -> CopyInfo {
        CopyInfo {
            pid,
            process_start: None,
            original: Some("/tmp/a b/guide (1).ron".into()),
            original_stamp: None,
            written_unix_s: 1_700_000_000,
        }
    }

    #[test]
    fn a_copy_reads_back_with_its_header_and_scene() {
        let dir = tempfile::tempdir().expect("temp dir");
        let mut scene = crate::scene::file::from_str(super::super::DEMO_SCENE, "demo").expect("demo").scene;
        scene.title = "changed \"title\"\n// not a header".into();
        let path = write_copy(dir.path(), &info(7), &scene).expect("written");
        assert_eq!(path, dir.path().join("recovery-7.ron"));
        let (read, back) = read_copy(&path).expect("read");
        assert_eq!(read, info(7));
        assert_eq!(back, scene);
        assert_eq!(read_info(&path), Some(info(7)));
        // The copy is an ordinary scene file too.
        assert!(crate::scene::file::load(&path).is_ok());
    }

    #[test]
    fn a_copy_of_an_invalid_scene_still_reads_back() {
        let dir = tempfile::tempdir().expect("temp dir");
        let mut scene = Scene::new("broken");
        scene.add(
            "bow tie",
            crate::scene::ObjectKind::Solid(crate::scene::Solid {
                shape: crate::scene::Shape::Outline {
                    points: vec![(0.0, 0.0), (10.0, 10.0), (10.0, 0.0), (0.0, 10.0)],
                    bulges: vec![0.0; 4],
                },
                material: "pmma".into(),
            }),
        );
        assert!(crate::scene::file::from_str(&file::to_string(&scene).expect("text"), "x").is_err());
        let path = write_copy(dir.path(), &info(8), &scene).expect("written");
        assert_eq!(read_copy(&path).expect("read").1, scene);
    }

    #[test]
    fn only_copies_of_ended_processes_are_offered() {
        let dir = tempfile::tempdir().expect("temp dir");
        let scene = Scene::new("x");
        // This process is running; a number above the largest Linux process id is not.
        let (pid, start) = this_process();
        let mut live = info(pid);
        live.process_start = start;
        write_copy(dir.path(), &live, &scene).expect("live");
        let mut gone = info(4_000_000_000);
        gone.written_unix_s += 10;
        write_copy(dir.path(), &gone, &scene).expect("gone");
        let mut older = info(4_000_000_001);
        older.written_unix_s -= 10;
        write_copy(dir.path(), &older, &scene).expect("older");
        std::fs::write(dir.path().join("recovery-notes.ron"), "not a copy").expect("other file");
        let offered: Vec<u32> = orphaned_copies(dir.path()).iter().map(|c| c.info.pid).collect();
        if cfg!(target_os = "linux") {
            assert_eq!(offered, vec![4_000_000_000, 4_000_000_001]);
        }
        assert!(!offered.contains(&pid));
        assert!(orphaned_copies(&dir.path().join("missing")).is_empty());
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn a_reused_process_number_does_not_hide_a_copy() {
        let (pid, start) = this_process();
        let start = start.expect("this process's start time");
        let mut info = info(pid);
        info.process_start = Some(start + 1);
        assert!(!is_running(&info, Path::new("unused")));
        info.process_start = Some(start);
        assert!(is_running(&info, Path::new("unused")));
    }

    #[test]
    fn a_copy_under_this_process_number_from_an_ended_process_is_moved_aside() {
        let dir = tempfile::tempdir().expect("temp dir");
        let (pid, start) = this_process();
        let mut old = info(pid);
        old.process_start = Some(start.map_or(1, |s| s + 1));
        write_copy(dir.path(), &old, &Scene::new("old work")).expect("old copy");
        let autosave = Autosave::new(dir.path().to_path_buf(), DEFAULT_INTERVAL);
        assert!(!autosave.copy_file().exists(), "the old copy would be written over");
        if cfg!(target_os = "linux") {
            let offered = orphaned_copies(dir.path());
            assert_eq!(offered.len(), 1);
            assert_eq!(read_copy(&offered[0].file).expect("read").1.title, "old work");
        }
        // A copy of this very process stays where it is.
        let mut ours = info(pid);
        ours.process_start = start;
        write_copy(dir.path(), &ours, &Scene::new("ours")).expect("own copy");
        let again = Autosave::new(dir.path().to_path_buf(), DEFAULT_INTERVAL);
        assert!(again.copy_file().exists());
    }

    #[test]
    fn the_panic_slot_writes_only_unsaved_work() {
        let dir = tempfile::tempdir().expect("temp dir");
        let slot = PanicSlot::default();
        assert!(slot.write_now().is_none());
        slot.set(dir.path(), info(9), Scene::new("kept"));
        let path = slot.write_now().expect("something to write").expect("written");
        assert_eq!(read_copy(&path).expect("read").1.title, "kept");
        // A held lock is not waited for.
        let guard = slot.0.lock().expect("lock");
        assert!(slot.write_now().is_none());
        drop(guard);
        slot.clear();
        assert!(slot.write_now().is_none());
    }

    #[test]
    fn the_panic_hook_writes_the_copy() {
        let dir = tempfile::tempdir().expect("temp dir");
        let slot = PanicSlot::default();
        slot.set(dir.path(), info(10), Scene::new("at the panic"));
        let before = std::panic::take_hook();
        install_panic_hook(slot);
        let result = std::thread::spawn(|| panic!("a test panic")).join();
        drop(std::panic::take_hook());
        std::panic::set_hook(before);
        assert!(result.is_err());
        let (_, scene) = read_copy(&dir.path().join("recovery-10.ron")).expect("written by the hook");
        assert_eq!(scene.title, "at the panic");
    }

    #[test]
    fn ages_read_as_words() {
        let mut copy = RecoveryCopy { file: PathBuf::new(), info: info(1) };
        copy.info.written_unix_s = unix_now_s() - 3 * 60 - 5;
        assert_eq!(copy.age_text(), "3 minutes ago");
        copy.info.written_unix_s = unix_now_s() - 3600;
        assert_eq!(copy.age_text(), "1 hour ago");
    }
}
