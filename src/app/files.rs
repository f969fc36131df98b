//! Documents and settings: the File menu, file dialogs (with a typed-path fallback when no
//! dialog service answers), recent files, and the editor's settings kept between runs in a
//! small RON file in the user's config directory. The undo history is never saved.

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
