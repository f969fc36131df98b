//! Documents and settings: the File menu, file dialogs (with a typed-path fallback when no
//! dialog service answers), recent files, and the editor's settings kept between runs in a
//! small RON file in the user's config directory. The undo history is never saved.
//!
//! Saving never loses the document: a save that fails (a read-only folder, a full disk)
//! says which file and why, and the document stays open and modified. The file's size and
//! a hash of its bytes are remembered at every load and save ([`DiskStamp`]), so a save
//! over a file someone else changed since asks first.

use std::io::ErrorKind;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::app::{Command, EditorApp, Guarded};

/// Most recent files remembered.
const MAX_RECENT: usize = 10;

/// The settings kept between runs.
#[allow(clippy::struct_excessive_bools)] // independent View-menu switches, saved as they are
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Prefs {
    pub recent: Vec<PathBuf>,
    pub grid_mm: f64,
    pub snap: bool,
    pub show_grid: bool,
    pub show_rays: bool,
    pub show_normals: bool,
    pub show_legend: bool,
    pub show_side_panel: bool,
}

impl Default for Prefs {
    fn default() -> Self {
        Self {
            recent: Vec::new(),
            grid_mm: 1.0,
            snap: true,
            show_grid: true,
            show_rays: true,
            show_normals: false,
            show_legend: true,
            show_side_panel: true,
        }
    }
}

impl Prefs {
    /// Puts `path` first in the recent files.
    pub fn add_recent(&mut self, path: &Path) {
        let path = path.canonicalize().unwrap_or_else(|_| path.to_path_buf());
        self.recent.retain(|p| p != &path);
        self.recent.insert(0, path);
        self.recent.truncate(MAX_RECENT);
    }
}

/// `$XDG_CONFIG_HOME/raydraft/editor.ron`, else `~/.config/raydraft/editor.ron`.
pub fn default_prefs_path() -> Option<PathBuf> {
    let base = std::env::var_os("XDG_CONFIG_HOME")
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
        .or_else(|| std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".config")))?;
    Some(base.join("raydraft").join("editor.ron"))
}

/// Reads the settings; a missing or unreadable file gives the defaults (with a warning for
/// an unreadable one).
pub fn load_prefs(path: &Path) -> Prefs {
    match std::fs::read_to_string(path) {
        Ok(text) => ron::from_str(&text).unwrap_or_else(|e| {
            eprintln!("warning: {}: settings not understood ({e}); using the defaults", path.display());
            Prefs::default()
        }),
        Err(_) => Prefs::default(),
    }
}

pub fn save_prefs(prefs: &Prefs, path: &Path) -> anyhow::Result<()> {
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir)?;
    }
    let text = ron::ser::to_string_pretty(prefs, ron::ser::PrettyConfig::default())?;
    std::fs::write(path, text)?;
    Ok(())
}

/// What a document's file looked like when the editor last loaded or saved it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct DiskStamp {
    pub len: u64,
    /// FNV-1a hash of the bytes. The bytes are compared rather than the modification time,
    /// which is coarse on some file systems and changes when a file is only touched.
    pub hash: u64,
}

impl DiskStamp {
    /// The stamp of `bytes` (just written to, or read from, the file).
    pub fn of_bytes(bytes: &[u8]) -> Self {
        Self { len: bytes.len() as u64, hash: fnv1a(bytes) }
    }

    /// The stamp of the file at `path` now; `None` if it cannot be read.
    pub fn of_file(path: &Path) -> Option<Self> {
        std::fs::read(path).ok().map(|bytes| Self::of_bytes(&bytes))
    }

    /// How the file at `path` differs from this stamp, in words; `None` when it holds the
    /// same bytes (or is gone: saving then only puts it back).
    pub fn change_on_disk(&self, path: &Path) -> Option<String> {
        let bytes = std::fs::read(path).ok()?;
        if Self::of_bytes(&bytes) == *self {
            return None;
        }
        let ago = std::fs::metadata(path)
            .and_then(|m| m.modified())
            .ok()
            .and_then(|t| t.elapsed().ok())
            .map_or_else(String::new, |d| format!(", last modified {} s ago", d.as_secs()));
        Some(format!("it now holds {} bytes instead of {}{ago}", bytes.len(), self.len))
    }
}

/// The 64-bit FNV-1a hash (Fowler, Noll and Vo): stable between runs and builds.
fn fnv1a(bytes: &[u8]) -> u64 {
    bytes.iter().fold(0xcbf2_9ce4_8422_2325, |h, &b| (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3))
}

/// Why writing to a file failed, in words a user can act on.
pub fn io_cause(e: &std::io::Error) -> String {
    // ENOSPC and EDQUOT on Linux, for systems whose error kind is not mapped.
    const NO_SPACE: i32 = 28;
    const QUOTA: i32 = 122;
    match e.kind() {
        ErrorKind::PermissionDenied => "permission denied: the folder or the file is read-only for you".to_owned(),
        ErrorKind::ReadOnlyFilesystem => "the disk holding it is mounted read-only".to_owned(),
        ErrorKind::StorageFull => "the disk is full".to_owned(),
        ErrorKind::NotFound => "the folder does not exist".to_owned(),
        _ if e.raw_os_error() == Some(NO_SPACE) => "the disk is full".to_owned(),
        _ if e.raw_os_error() == Some(QUOTA) => "your disk quota is used up".to_owned(),
        _ => e.to_string(),
    }
}

/// The message for a save that failed: the file, the cause, and that nothing was lost.
pub fn save_failed_message(path: &Path, cause: &str) -> String {
    format!(
        "Could not save {}: {cause}.\n\nThe document is still open with all its changes. Save it \
         somewhere else (Save as… in the File menu), or fix the cause and save again.",
        path.display()
    )
}

fn dialog(start: Option<&Path>) -> rfd::FileDialog {
    let mut d = rfd::FileDialog::new().add_filter("Raydraft scene", &["ron"]);
    if let Some(dir) = start.and_then(Path::parent) {
        d = d.set_directory(dir);
    }
    d
}

/// The system's open dialog; `None` when cancelled or when no dialog service exists.
pub fn open_dialog(start: Option<&Path>) -> Option<PathBuf> {
    if std::env::var_os("RAYDRAFT_NO_DIALOGS").is_some() {
        return None;
    }
    dialog(start).pick_file()
}

pub fn save_dialog(start: Option<&Path>) -> Option<PathBuf> {
    if std::env::var_os("RAYDRAFT_NO_DIALOGS").is_some() {
        return None;
    }
    let name =
        start.and_then(Path::file_name).map_or_else(|| "scene.ron".to_owned(), |n| n.to_string_lossy().into_owned());
    dialog(start).set_file_name(name).save_file()
}

pub fn file_menu_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    ui.menu_button("File", |ui| {
        if ui.add(egui::Button::new("New").shortcut_text("Ctrl+N")).clicked() {
            app.push(Command::Guarded(Guarded::New));
        }
        if ui.add(egui::Button::new("Open…").shortcut_text("Ctrl+O")).clicked() {
            app.push(Command::Guarded(Guarded::OpenDialog));
        }
        if ui.button("Open by typing a path…").clicked() {
            app.dialogs.path_prompt = Some(false);
        }
        ui.menu_button("Open recent", |ui| {
            if app.prefs.recent.is_empty() {
                ui.label("No recent files");
            }
            for p in app.prefs.recent.clone() {
                if ui.button(p.display().to_string()).clicked() {
                    app.push(Command::Guarded(Guarded::Open(p)));
                }
            }
        });
        if ui.button("Open the demo scene").clicked() {
            app.push(Command::Guarded(Guarded::OpenDemo));
        }
        if ui.button("Recovered work…").clicked() {
            app.find_recovery_copies();
        }
        ui.separator();
        if ui.add(egui::Button::new("Save").shortcut_text("Ctrl+S")).clicked() {
            app.push(Command::Save);
        }
        if ui.add(egui::Button::new("Save as…").shortcut_text("Ctrl+Shift+S")).clicked() {
            app.push(Command::SaveAsDialog);
        }
        if ui.button("Save as by typing a path…").clicked() {
            app.dialogs.path_prompt = Some(true);
        }
        ui.separator();
        if ui.button("Quit").clicked() {
            app.push(Command::Guarded(Guarded::Quit));
        }
    });
}

/// The typed-path window.
pub fn path_prompt_ui(app: &mut EditorApp, ctx: &egui::Context) {
    let Some(save) = app.dialogs.path_prompt else { return };
    let mut open = true;
    let mut go = false;
    let title = if save { "Save as" } else { "Open" };
    egui::Window::new(title).open(&mut open).collapsible(false).show(ctx, |ui| {
        ui.horizontal(|ui| {
            let l = ui.label("File path");
            let r =
                ui.add(egui::TextEdit::singleline(&mut app.dialogs.path_text).desired_width(360.0)).labelled_by(l.id);
            go |= r.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
        });
        go |= ui.button(title).clicked();
    });
    if go {
        let p = PathBuf::from(app.dialogs.path_text.trim());
        if save {
            app.push(Command::SaveAs(p));
        } else {
            app.push(Command::Guarded(Guarded::Open(p)));
        }
        open = false;
    }
    if !open {
        app.dialogs.path_prompt = None;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn write_failures_name_their_cause() {
        let full = std::io::Error::from(ErrorKind::StorageFull);
        let message = save_failed_message(Path::new("/data/guide.ron"), &io_cause(&full));
        assert!(message.starts_with("Could not save /data/guide.ron: the disk is full."), "{message}");
        assert!(message.contains("still open with all its changes"));
        // ENOSPC as the system reports it (Linux errno 28).
        #[cfg(target_os = "linux")]
        assert_eq!(io_cause(&std::io::Error::from_raw_os_error(28)), "the disk is full");
        let denied = std::io::Error::from(ErrorKind::PermissionDenied);
        assert!(io_cause(&denied).contains("read-only"));
    }

    #[test]
    fn a_stamp_notices_changed_bytes_but_not_a_touch() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("a.ron");
        std::fs::write(&path, "(version: 2)").expect("write");
        let stamp = DiskStamp::of_file(&path).expect("stamp");
        assert_eq!(stamp.change_on_disk(&path), None);
        std::fs::write(&path, "(version: 2)").expect("same bytes again");
        assert_eq!(stamp.change_on_disk(&path), None);
        std::fs::write(&path, "(version: 3)").expect("same size, other bytes");
        assert!(stamp.change_on_disk(&path).is_some());
        std::fs::remove_file(&path).expect("remove");
        assert_eq!(stamp.change_on_disk(&path), None, "a deleted file is only put back");
    }
}
