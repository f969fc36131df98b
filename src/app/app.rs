//! The editor's state and the commands that change it.

use std::cell::Cell;
use std::path::{Path, PathBuf};
use std::time::Duration;

use egui::{Key, KeyboardShortcut, Modifiers};

use super::canvas::{self, CanvasState, View};
use super::files::{self, DiskStamp, Prefs};
use super::recovery::{self, Autosave, DocState, PanicSlot, RecoveryCopy};
use super::tools::{self, Tool, ToolState};
use super::worker::TraceWorker;
use super::{Edit, Gesture, History, about, budget, inspect, materials, problems, properties};
use crate::scene::{Object, Scene, file};

/// How to start the editor.
#[derive(Clone, Debug)]
pub struct Options {
    /// A scene file to open; `None` opens the demo scene.
    pub file: Option<PathBuf>,
    /// Where to keep settings between runs; `None` keeps them for this run only.
    pub prefs_path: Option<PathBuf>,
    /// Where recovery copies of unsaved work live (see [`recovery`](super::recovery));
    /// `None` neither writes nor offers any.
    pub state_dir: Option<PathBuf>,
    /// How often unsaved work is written to the recovery copy.
    pub autosave_every: Duration,
}

impl Default for Options {
    fn default() -> Self {
        Self { file: None, prefs_path: None, state_dir: None, autosave_every: recovery::DEFAULT_INTERVAL }
    }
}

/// Something the UI asks for during a frame; applied once at the end of the frame.
#[must_use]
#[derive(Clone, Debug)]
pub enum Command {
    /// An edit as its own undo step.
    Edit(Edit),
    /// An edit merged into the undo step of a gesture (a drag, a held key).
    EditIn(Edit, u64),
    Undo,
    Redo,
    Select(Vec<u64>),
    /// Select one vertex of one object (for Delete).
    SelectVertex(u64, usize),
    SelectAll,
    DeleteSelection,
    Duplicate,
    Copy,
    Paste,
    /// Mirror the selection about the vertical (`true`) or horizontal line through its centre.
    MirrorSelection(bool),
    /// Rotate the selection about its centre, degrees counter-clockwise.
    RotateSelection(f64),
    MakeFreeOutline,
    /// File actions that may discard unsaved work go through [`Command::Guarded`].
    Guarded(Guarded),
    Save,
    SaveAs(PathBuf),
    SaveAsDialog,
    FitView,
    CancelTrace,
    SetTool(Tool),
}

/// Actions that discard the current document: asked about first when it has unsaved changes.
#[derive(Clone, Debug, PartialEq)]
pub enum Guarded {
    New,
    Open(PathBuf),
    OpenDialog,
    OpenDemo,
    /// Open a recovery copy as the document (see [`EditorApp::restore`]).
    Restore(PathBuf),
    Quit,
}

/// The open document: the scene, its file and its undo history.
pub struct Document {
    pub scene: Scene,
    pub path: Option<PathBuf>,
    pub history: History,
    /// Bumped by every change to the scene (edits, undo, redo, a new document); never reset.
    pub revision: u64,
    /// The revision last saved or loaded; `None` when the scene on screen never was (a
    /// restored recovery copy).
    pub saved_revision: Option<u64>,
    /// The scene as last saved or loaded (for a restored copy: its file as it is on disk),
    /// so that undoing back to it shows the document unmodified.
    saved_scene: Option<Scene>,
    /// The file as last loaded or saved: a save over a file changed since asks first.
    pub disk: Option<DiskStamp>,
    /// `is_modified` of one revision, so the scenes are compared once per change.
    modified_cache: Cell<Option<(u64, bool)>>,
}

impl Document {
    /// Whether the scene differs from what was last saved or loaded. Undoing back to the
    /// saved content counts as unmodified, redoing as modified again.
    pub fn is_modified(&self) -> bool {
        if self.saved_revision == Some(self.revision) {
            return false;
        }
        match self.modified_cache.get() {
            Some((revision, modified)) if revision == self.revision => modified,
            _ => {
                let modified = self.saved_scene.as_ref().is_none_or(|s| !s.same_content(&self.scene));
                self.modified_cache.set(Some((self.revision, modified)));
                modified
            }
        }
    }

    /// Marks the scene on screen as the one in the file.
    fn mark_saved(&mut self, disk: Option<DiskStamp>) {
        self.saved_revision = Some(self.revision);
        self.saved_scene = Some(self.scene.clone());
        self.disk = disk;
        self.modified_cache.set(None);
    }

    /// Whether `path` names this document's file.
    fn is_own_file(&self, path: &Path) -> bool {
        self.path.as_deref().is_some_and(|own| {
            own == path || matches!((own.canonicalize(), path.canonicalize()), (Ok(a), Ok(b)) if a == b)
        })
    }

    /// The file's name, or "untitled".
    pub fn display_name(&self) -> String {
        self.path
            .as_ref()
            .and_then(|p| p.file_name())
            .map_or_else(|| "untitled".to_owned(), |n| n.to_string_lossy().into_owned())
    }
}

/// The state of the open dialogs.
#[derive(Default)]
pub struct Dialogs {
    /// Unsaved changes: ask before doing this.
    pub confirm_discard: Option<Guarded>,
    pub about: bool,
    /// A typed path for opening (`Some(false)`) or saving (`Some(true)`) when no file dialog
    /// is available.
    pub path_prompt: Option<bool>,
    pub path_text: String,
    /// The rotate-by-angle prompt.
    pub rotate_prompt: bool,
    pub rotate_deg: f64,
    /// The last error, shown until dismissed.
    pub error: Option<String>,
    /// Recovery copies left by editors that stopped without saving, offered one at a time.
    pub recovery_offers: Vec<RecoveryCopy>,
    /// A save over a file that changed on disk, waiting for the user's answer.
    pub save_conflict: Option<SaveConflict>,
}

/// A save that would replace changes someone else made to the file.
#[derive(Clone, Debug)]
pub struct SaveConflict {
    pub path: PathBuf,
    /// How the file changed, in words.
    pub change: String,
    /// What to do after the save (the user was quitting or opening another file).
    pub then: Option<Guarded>,
}

/// The whole editor.
pub struct EditorApp {
    pub doc: Document,
    pub selection: Vec<u64>,
    /// A selected vertex (object id, vertex index), for Delete.
    pub selected_vertex: Option<(u64, usize)>,
    pub view: View,
    pub tool: Tool,
    pub tool_state: ToolState,
    pub canvas: CanvasState,
    pub worker: TraceWorker,
    pub prefs: Prefs,
    prefs_path: Option<PathBuf>,
    pub dialogs: Dialogs,
    pub clipboard: Vec<Object>,
    commands: Vec<Command>,
    /// One line of feedback in the status bar.
    pub status: String,
    /// The gesture of a held arrow key.
    arrow_gesture: Option<u64>,
    /// The gesture of a drag in the properties panel.
    pub(crate) props_gesture: Option<u64>,
    pub problems: problems::ProblemsCache,
    pub materials: materials::MaterialsState,
    /// The ray inspector, escape cones and measurements.
    pub analysis: inspect::AnalysisState,
    /// The parameter sweep panel.
    pub sweep: super::sweep_ui::SweepState,
    /// True once the window may close (the user confirmed).
    close_confirmed: bool,
    last_title: String,
    theme_set: bool,
    /// Writes recovery copies of unsaved work; `None` without a state folder.
    autosave: Option<Autosave>,
}

impl EditorApp {
    pub fn new(options: Options) -> Self {
        let prefs = options.prefs_path.as_deref().map(files::load_prefs).unwrap_or_default();
        let mut app = Self {
            doc: Document {
                scene: Scene::new("Untitled"),
                path: None,
                history: History::new(500),
                revision: 1,
                saved_revision: Some(1),
                saved_scene: None,
                disk: None,
                modified_cache: Cell::new(None),
            },
            selection: Vec::new(),
            selected_vertex: None,
            view: View::default(),
            tool: Tool::Select,
            tool_state: ToolState::default(),
            canvas: CanvasState::default(),
            worker: TraceWorker::default(),
            prefs,
            prefs_path: options.prefs_path,
            dialogs: Dialogs::default(),
            clipboard: Vec::new(),
            commands: Vec::new(),
            status: String::new(),
            arrow_gesture: None,
            props_gesture: None,
            problems: problems::ProblemsCache::default(),
            materials: materials::MaterialsState::default(),
            analysis: inspect::AnalysisState::default(),
            sweep: super::sweep_ui::SweepState::default(),
            close_confirmed: false,
            last_title: String::new(),
            theme_set: false,
            autosave: options.state_dir.map(|dir| Autosave::new(dir, options.autosave_every)),
        };
        match options.file {
            Some(path) => app.open(&path),
            None => app.open_demo(),
        }
        if let Some(a) = &app.autosave {
            app.dialogs.recovery_offers = recovery::orphaned_copies(a.dir());
        }
        app
    }

    /// What a panic hook needs to write the unsaved work; `None` without a state folder.
    pub fn panic_slot(&self) -> Option<PanicSlot> {
        self.autosave.as_ref().map(Autosave::panic_slot)
    }

    /// This editor's recovery copy (present only while there is unsaved work).
    pub fn recovery_file(&self) -> Option<PathBuf> {
        self.autosave.as_ref().map(Autosave::copy_file)
    }

    /// Looks again for recovery copies of editors that stopped (File ▸ Recovered work…).
    pub fn find_recovery_copies(&mut self) {
        match &self.autosave {
            Some(a) => {
                self.dialogs.recovery_offers = recovery::orphaned_copies(a.dir());
                if self.dialogs.recovery_offers.is_empty() {
                    self.status = format!("No unsaved work of an earlier run was found in {}", a.dir().display());
                }
            }
            None => self.status = "Recovery copies are off: no state folder (set XDG_STATE_HOME or HOME)".into(),
        }
    }

    /// Opens a recovery copy as a modified document belonging to its original file, so that
    /// Save writes there. This editor's own copy is written before the old one is removed,
    /// so a crash in between still leaves one.
    pub fn restore(&mut self, copy_file: &Path) {
        self.dialogs.recovery_offers.retain(|c| c.file != copy_file);
        let (info, scene) = match recovery::read_copy(copy_file) {
            Ok(read) => read,
            Err(e) => {
                self.dialogs.error = Some(format!("The recovery copy could not be read, and was kept: {e}"));
                return;
            }
        };
        let original = info.original_path();
        let on_disk = original.as_deref().and_then(|p| file::load(p).ok()).map(|l| l.scene);
        self.set_scene(scene, original);
        self.doc.saved_revision = None;
        self.doc.saved_scene = on_disk;
        self.doc.disk = info.original_stamp;
        self.doc.modified_cache.set(None);
        self.status = format!("Restored the unsaved work on {}", self.doc.display_name());
        let doc = &self.doc;
        let own = self.autosave.as_mut().map(|a| a.write_now(&doc_state(doc)));
        match own {
            Some(Ok(own)) if own != copy_file => {
                if let Err(e) = std::fs::remove_file(copy_file) {
                    eprintln!("warning: {}: restored recovery copy not removed: {e}", copy_file.display());
                }
            }
            Some(Err(e)) => {
                self.status = format!("Restored; the recovery copy {} is kept ({e})", copy_file.display());
            }
            Some(Ok(_)) | None => {}
        }
    }

    /// Queues a command for the end of the frame.
    pub fn push(&mut self, command: Command) {
        self.commands.push(command);
    }

    /// A fresh gesture id for a drag or a held key.
    pub fn begin_gesture(&mut self) -> u64 {
        self.doc.history.begin_gesture().0
    }

    fn set_scene(&mut self, scene: Scene, path: Option<PathBuf>) {
        self.doc.scene = scene;
        self.doc.path = path;
        self.doc.history.clear();
        self.doc.revision += 1;
        self.doc.mark_saved(None);
        self.selection.clear();
        self.selected_vertex = None;
        self.tool_state = ToolState::default();
        self.view.fit_pending = true;
        self.worker.reset();
        self.analysis.clear();
    }

    pub fn open_demo(&mut self) {
        match file::from_str(super::DEMO_SCENE, "demo scene") {
            Ok(loaded) => self.set_scene(loaded.scene, None),
            Err(e) => self.dialogs.error = Some(format!("The demo scene did not load: {e}")),
        }
    }

    /// Opens a scene file, reporting a failure in the error window.
    pub fn open(&mut self, path: &std::path::Path) {
        match file::load(path) {
            Ok(loaded) => {
                self.set_scene(loaded.scene, Some(path.to_path_buf()));
                self.doc.disk = DiskStamp::of_file(path);
                self.prefs.add_recent(path);
                self.save_prefs();
                self.status = format!("Opened {}", path.display());
            }
            Err(e) => {
                self.dialogs.error = Some(format!("{e}"));
                if self.doc.scene.objects.is_empty() && self.doc.path.is_none() {
                    self.open_demo();
                }
            }
        }
    }

    /// Saves to `path`; true on success. Saving over the document's own file after someone
    /// else changed it asks first (and returns false meanwhile).
    pub fn save_to(&mut self, path: &Path) -> bool {
        self.save_then(path, None)
    }

    /// [`save_to`](Self::save_to), then `then` once the file is written (also after the user
    /// chose to overwrite a file changed on disk).
    fn save_then(&mut self, path: &Path, then: Option<Guarded>) -> bool {
        if self.doc.is_own_file(path) {
            if let Some(change) = self.doc.disk.as_ref().and_then(|d| d.change_on_disk(path)) {
                self.dialogs.save_conflict = Some(SaveConflict { path: path.to_path_buf(), change, then });
                return false;
            }
        }
        self.write_to(path)
    }

    /// Writes the document to `path` without asking. On failure the document stays open and
    /// modified, and the error window names the file and the cause.
    fn write_to(&mut self, path: &Path) -> bool {
        let text = match file::to_string(&self.doc.scene) {
            Ok(text) => text,
            Err(e) => {
                self.dialogs.error = Some(files::save_failed_message(path, &e.to_string()));
                return false;
            }
        };
        match file::write_atomically(path, text.as_bytes(), true) {
            Ok(()) => {
                self.doc.path = Some(path.to_path_buf());
                self.doc.mark_saved(Some(DiskStamp::of_bytes(text.as_bytes())));
                self.prefs.add_recent(path);
                self.save_prefs();
                self.status = format!("Saved {}", path.display());
                true
            }
            Err(e) => {
                let cause = files::io_cause(&e);
                self.status = format!("Not saved: {cause}");
                self.dialogs.error = Some(files::save_failed_message(path, &cause));
                false
            }
        }
    }

    pub fn save_prefs(&self) {
        if let Some(p) = &self.prefs_path {
            if let Err(e) = files::save_prefs(&self.prefs, p) {
                eprintln!("warning: settings not saved to {}: {e}", p.display());
            }
        }
    }

    /// The window title: file name and a modified marker.
    pub fn title(&self) -> String {
        let marker = if self.doc.is_modified() { " •" } else { "" };
        format!("{}{marker} — Raydraft", self.doc.display_name())
    }

    /// Whether the confirm-discard dialog is showing.
    pub fn is_confirming_discard(&self) -> bool {
        self.dialogs.confirm_discard.is_some()
    }

    /// Applies every queued command.
    pub fn apply_commands(&mut self, ctx: &egui::Context) {
        let commands = std::mem::take(&mut self.commands);
        for c in commands {
            self.apply_command(ctx, c);
        }
    }

    fn apply_edit(&mut self, edit: Edit, gesture: Option<u64>) {
        let result = match gesture {
            Some(g) => self.doc.history.apply_in(&mut self.doc.scene, edit, Gesture(g)),
            None => self.doc.history.apply(&mut self.doc.scene, edit),
        };
        match result {
            Ok(()) => self.doc.revision += 1,
            Err(e) => self.status = format!("Not done: {e}"),
        }
    }

    #[allow(clippy::too_many_lines)] // one arm per command
    fn apply_command(&mut self, ctx: &egui::Context, command: Command) {
        match command {
            Command::Edit(e) => self.apply_edit(e, None),
            Command::EditIn(e, g) => self.apply_edit(e, Some(g)),
            Command::Undo => {
                if self.doc.history.undo(&mut self.doc.scene) {
                    self.doc.revision += 1;
                    self.prune_selection();
                }
            }
            Command::Redo => {
                if self.doc.history.redo(&mut self.doc.scene) {
                    self.doc.revision += 1;
                    self.prune_selection();
                }
            }
            Command::Select(ids) => {
                self.selection = ids;
                self.selected_vertex = None;
            }
            Command::SelectVertex(id, v) => {
                self.selection = vec![id];
                self.selected_vertex = Some((id, v));
            }
            Command::SelectAll => self.selection = self.doc.scene.objects.iter().map(|o| o.id).collect(),
            Command::DeleteSelection => {
                if let Some((id, v)) = self.selected_vertex.take() {
                    self.apply_edit(Edit::DeleteVertex { id, vertex: v }, None);
                } else if !self.selection.is_empty() {
                    let edits = self.selection.iter().map(|&id| Edit::RemoveObject { id }).collect();
                    self.apply_edit(Edit::Batch(edits), None);
                    self.selection.clear();
                }
            }
            Command::Copy => {
                self.clipboard = self.selected_objects();
                self.status = format!("Copied {} objects", self.clipboard.len());
            }
            Command::Duplicate => {
                let objects = self.selected_objects();
                self.paste_objects(objects, 5.0);
            }
            Command::Paste => {
                let objects = self.clipboard.clone();
                self.paste_objects(objects, 5.0);
            }
            Command::MirrorSelection(vertical) => {
                if let Some(c) = self.selection_centre() {
                    let ids = self.selection.clone();
                    let direction_deg = if vertical { 90.0 } else { 0.0 };
                    self.apply_edit(Edit::Mirror { ids, point: c, direction_deg }, None);
                }
            }
            Command::RotateSelection(angle_deg) => {
                if let Some(c) = self.selection_centre() {
                    let ids = self.selection.clone();
                    self.apply_edit(Edit::Rotate { ids, pivot: c, angle_deg }, None);
                }
            }
            Command::MakeFreeOutline => {
                let edits: Vec<Edit> = self
                    .selection
                    .iter()
                    .filter(|&&id| {
                        self.doc.scene.object(id).is_some_and(|o| {
                            matches!(&o.kind, crate::scene::ObjectKind::Solid(s)
                                if !matches!(s.shape, crate::scene::Shape::Outline { .. }))
                        })
                    })
                    .map(|&id| Edit::ToFreeOutline { id })
                    .collect();
                if edits.is_empty() {
                    self.status = "Select a primitive solid to turn it into a free outline".into();
                } else {
                    self.apply_edit(Edit::Batch(edits), None);
                }
            }
            Command::Guarded(g) => {
                if self.doc.is_modified() && !matches!(g, Guarded::Quit if self.close_confirmed) {
                    self.dialogs.confirm_discard = Some(g);
                } else {
                    self.run_guarded(ctx, g);
                }
            }
            Command::Save => {
                if let Some(p) = self.doc.path.clone() {
                    self.save_to(&p);
                } else {
                    self.apply_command(ctx, Command::SaveAsDialog);
                }
            }
            Command::SaveAs(p) => {
                self.save_to(&p);
            }
            Command::SaveAsDialog => match files::save_dialog(self.doc.path.as_deref()) {
                Some(p) => {
                    self.save_to(&p);
                }
                None => self.ask_path(true),
            },
            Command::FitView => self.view.fit_pending = true,
            Command::CancelTrace => self.worker.cancel(),
            Command::SetTool(t) => {
                self.tool = t;
                self.tool_state = ToolState::default();
            }
        }
    }

    fn ask_path(&mut self, save: bool) {
        self.dialogs.path_prompt = Some(save);
        if self.dialogs.path_text.is_empty() {
            self.dialogs.path_text =
                self.doc.path.as_ref().map_or_else(|| "scene.ron".to_owned(), |p| p.display().to_string());
        }
        self.status = "No file dialog answered; type a path instead".into();
    }

    /// Does a guarded action now (the user agreed to discard, or nothing was unsaved).
    pub fn run_guarded(&mut self, ctx: &egui::Context, g: Guarded) {
        match g {
            Guarded::New => self.set_scene(Scene::new("Untitled"), None),
            Guarded::Open(p) => self.open(&p),
            Guarded::OpenDemo => self.open_demo(),
            Guarded::Restore(copy_file) => self.restore(&copy_file),
            Guarded::OpenDialog => match files::open_dialog(self.doc.path.as_deref()) {
                Some(p) => self.open(&p),
                None => self.ask_path(false),
            },
            Guarded::Quit => {
                self.close_confirmed = true;
                self.save_prefs();
                if let Some(a) = &mut self.autosave {
                    a.finish();
                }
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
        }
    }

    fn prune_selection(&mut self) {
        let scene = &self.doc.scene;
        self.selection.retain(|&id| scene.object(id).is_some());
        self.selected_vertex = None;
    }

    pub fn selected_objects(&self) -> Vec<Object> {
        self.selection.iter().filter_map(|&id| self.doc.scene.object(id).cloned()).collect()
    }

    /// The centre of the selection's bounds.
    pub fn selection_centre(&self) -> Option<(f64, f64)> {
        let mut b = crate::geom::Aabb::EMPTY;
        for o in self.selected_objects() {
            let g = super::pick::object_geometry(o.id, &o.kind);
            if !g.bounds.is_empty() {
                b = b.union(&g.bounds);
            }
        }
        (!b.is_empty()).then(|| (b.center().x, b.center().y))
    }

    fn paste_objects(&mut self, objects: Vec<Object>, offset_mm: f64) {
        if objects.is_empty() {
            return;
        }
        let Edit::AddObject { object: first, .. } = Edit::add_new(
            &self.doc.scene,
            "",
            crate::scene::ObjectKind::Absorber(crate::scene::Absorber {
                path: crate::scene::Path::segment((0.0, 0.0), (1.0, 0.0)),
            }),
        ) else {
            return;
        };
        let base = first.id;
        let mut edits = Vec::new();
        let mut ids = Vec::new();
        for (k, mut o) in objects.into_iter().enumerate() {
            o.id = base + k as u64;
            ids.push(o.id);
            o.name = format!("{} copy", o.name);
            edits.push(Edit::AddObject { index: usize::MAX, object: o });
        }
        edits.push(Edit::Translate { ids: ids.clone(), by: (offset_mm, -offset_mm) });
        self.apply_edit(Edit::Batch(edits), None);
        self.selection = ids;
    }

    /// Handles the keyboard shortcuts of the whole window.
    fn shortcuts(&mut self, ctx: &egui::Context) {
        let cmd = Modifiers::COMMAND;
        let cmd_shift = Modifiers::COMMAND | Modifiers::SHIFT;
        let text_focus = ctx.egui_wants_keyboard_input();
        let mut out = Vec::new();
        ctx.input_mut(|i| {
            let mut sc = |m: Modifiers, k: Key, c: Command| {
                if i.consume_shortcut(&KeyboardShortcut::new(m, k)) {
                    out.push(c);
                }
            };
            sc(cmd_shift, Key::S, Command::SaveAsDialog);
            sc(cmd_shift, Key::Z, Command::Redo);
            sc(cmd, Key::N, Command::Guarded(Guarded::New));
            sc(cmd, Key::O, Command::Guarded(Guarded::OpenDialog));
            sc(cmd, Key::S, Command::Save);
            if !text_focus {
                sc(cmd, Key::Z, Command::Undo);
                sc(cmd, Key::Y, Command::Redo);
                sc(cmd, Key::A, Command::SelectAll);
                sc(cmd, Key::D, Command::Duplicate);
                sc(cmd, Key::C, Command::Copy);
                sc(cmd, Key::V, Command::Paste);
            }
        });
        self.commands.extend(out);
        if text_focus {
            return;
        }
        let (delete, escape, arrows, shift, any_arrow_down) = ctx.input(|i| {
            let mut d = (0.0, 0.0);
            for e in &i.events {
                if let egui::Event::Key { key, pressed: true, modifiers, .. } = e {
                    if modifiers.command {
                        continue;
                    }
                    match key {
                        Key::ArrowLeft => d.0 -= 1.0,
                        Key::ArrowRight => d.0 += 1.0,
                        Key::ArrowUp => d.1 += 1.0,
                        Key::ArrowDown => d.1 -= 1.0,
                        _ => {}
                    }
                }
            }
            let down = [Key::ArrowLeft, Key::ArrowRight, Key::ArrowUp, Key::ArrowDown].iter().any(|k| i.key_down(*k));
            (
                i.key_pressed(Key::Delete) || (i.key_pressed(Key::Backspace) && self.tool == Tool::Select),
                i.key_pressed(Key::Escape),
                d,
                i.modifiers.shift,
                down,
            )
        });
        if delete {
            self.push(Command::DeleteSelection);
        }
        if escape {
            if self.tool_state.is_drawing() {
                self.tool_state = ToolState::default();
            } else if self.tool != Tool::Select {
                self.push(Command::SetTool(Tool::Select));
            } else {
                self.push(Command::Select(Vec::new()));
            }
        }
        if arrows != (0.0, 0.0) && !self.selection.is_empty() {
            let step = self.prefs.grid_mm * if shift { 10.0 } else { 1.0 };
            let g = match self.arrow_gesture {
                Some(g) => g,
                None => {
                    let g = self.begin_gesture();
                    self.arrow_gesture = Some(g);
                    g
                }
            };
            let edit = Edit::Translate { ids: self.selection.clone(), by: (arrows.0 * step, arrows.1 * step) };
            self.push(Command::EditIn(edit, g));
        }
        if !any_arrow_down && arrows == (0.0, 0.0) {
            self.arrow_gesture = None;
        }
    }

    /// One frame of the whole editor inside `ui` (the window's root, or a test harness).
    pub fn frame_ui(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        if !self.theme_set {
            // A light theme around the light drawing sheet, like the exported pictures.
            ctx.set_theme(egui::Theme::Light);
            // The default text font lacks a few signs the panels use (→); the monospace font
            // has them, so it stands in for them.
            let mut fonts = egui::FontDefinitions::default();
            if let Some(family) = fonts.families.get_mut(&egui::FontFamily::Proportional) {
                family.push("Hack".to_owned());
            }
            ctx.set_fonts(fonts);
            self.theme_set = true;
        }
        self.handle_close_request(&ctx);
        self.shortcuts(&ctx);
        self.menu_bar_ui(ui);
        self.status_bar_ui(ui);
        if self.prefs.show_side_panel {
            egui::Panel::right("side_panel").resizable(true).default_size(330.0).show(ui, |ui| {
                egui::ScrollArea::vertical().show(ui, |ui| self.side_panel_ui(ui));
            });
        }
        egui::Panel::left("tools_panel").resizable(false).exact_size(118.0).show(ui, |ui| {
            tools::toolbox_ui(self, ui);
        });
        egui::CentralPanel::default().frame(egui::Frame::NONE).show(ui, |ui| {
            canvas::canvas_ui(self, ui);
        });
        self.dialogs_ui(&ctx);
        self.apply_commands(&ctx);
        if self.worker.update(&self.doc.scene, self.doc.revision) {
            ctx.request_repaint_after(std::time::Duration::from_millis(30));
        }
        self.autosave_tick(&ctx);
        let title = self.title();
        if title != self.last_title {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.last_title = title;
        }
    }

    /// Writes or removes the recovery copy as it falls due.
    fn autosave_tick(&mut self, ctx: &egui::Context) {
        let doc = &self.doc;
        let Some(autosave) = self.autosave.as_mut() else { return };
        let (next, error) = autosave.tick(&doc_state(doc));
        if let Some(after) = next {
            ctx.request_repaint_after(after);
        }
        if let Some(e) = error {
            self.status = e;
        }
    }

    fn handle_close_request(&mut self, ctx: &egui::Context) {
        if ctx.input(|i| i.viewport().close_requested()) {
            if self.doc.is_modified() && !self.close_confirmed {
                ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
                self.dialogs.confirm_discard = Some(Guarded::Quit);
            } else {
                // A clean exit: nothing is left to recover.
                self.save_prefs();
                if let Some(a) = &mut self.autosave {
                    a.finish();
                }
            }
        }
    }

    fn menu_bar_ui(&mut self, ui: &mut egui::Ui) {
        egui::Panel::top("menu_bar").show(ui, |ui| {
            egui::MenuBar::new().ui(ui, |ui| {
                files::file_menu_ui(self, ui);
                self.edit_menu_ui(ui);
                self.view_menu_ui(ui);
                tools::add_menu_ui(self, ui);
                self.explain_menu_ui(ui);
                ui.menu_button("Help", |ui| {
                    if ui.button("About Raydraft and safety").clicked() {
                        self.dialogs.about = true;
                    }
                });
            });
        });
    }

    fn edit_menu_ui(&mut self, ui: &mut egui::Ui) {
        ui.menu_button("Edit", |ui| {
            let undo = self.doc.history.undo_label().map_or_else(|| "Undo".to_owned(), |l| format!("Undo {l}"));
            if ui.add_enabled(self.doc.history.can_undo(), egui::Button::new(undo).shortcut_text("Ctrl+Z")).clicked() {
                self.push(Command::Undo);
            }
            let redo = self.doc.history.redo_label().map_or_else(|| "Redo".to_owned(), |l| format!("Redo {l}"));
            if ui
                .add_enabled(self.doc.history.can_redo(), egui::Button::new(redo).shortcut_text("Ctrl+Shift+Z"))
                .clicked()
            {
                self.push(Command::Redo);
            }
            ui.separator();
            let some = !self.selection.is_empty();
            let items: [(&str, &str, Command, bool); 5] = [
                ("Select all", "Ctrl+A", Command::SelectAll, true),
                ("Copy", "Ctrl+C", Command::Copy, some),
                ("Paste", "Ctrl+V", Command::Paste, !self.clipboard.is_empty()),
                ("Duplicate", "Ctrl+D", Command::Duplicate, some),
                ("Delete", "Del", Command::DeleteSelection, some),
            ];
            for (text, key, c, enabled) in items {
                if ui.add_enabled(enabled, egui::Button::new(text).shortcut_text(key)).clicked() {
                    self.push(c);
                }
            }
            ui.separator();
            if ui.add_enabled(some, egui::Button::new("Rotate 90° left")).clicked() {
                self.push(Command::RotateSelection(90.0));
            }
            if ui.add_enabled(some, egui::Button::new("Rotate 90° right")).clicked() {
                self.push(Command::RotateSelection(-90.0));
            }
            if ui.add_enabled(some, egui::Button::new("Rotate by…")).clicked() {
                self.dialogs.rotate_prompt = true;
            }
            if ui.add_enabled(some, egui::Button::new("Mirror left–right")).clicked() {
                self.push(Command::MirrorSelection(true));
            }
            if ui.add_enabled(some, egui::Button::new("Mirror top–bottom")).clicked() {
                self.push(Command::MirrorSelection(false));
            }
            if ui.add_enabled(some, egui::Button::new("Make free outline")).clicked() {
                self.push(Command::MakeFreeOutline);
            }
        });
    }

    fn explain_menu_ui(&mut self, ui: &mut egui::Ui) {
        ui.menu_button("Explain", |ui| {
            for t in Tool::ANALYSIS {
                if ui.button(t.name()).on_hover_text(t.hint()).clicked() {
                    self.push(Command::SetTool(t));
                }
            }
            ui.separator();
            if ui.add_enabled(!self.analysis.is_empty(), egui::Button::new("Clear marks")).clicked() {
                self.analysis.clear();
            }
        });
    }

    fn view_menu_ui(&mut self, ui: &mut egui::Ui) {
        ui.menu_button("View", |ui| {
            if ui.button("Fit scene to window").clicked() {
                self.push(Command::FitView);
            }
            let mut changed = false;
            changed |= ui.checkbox(&mut self.prefs.show_grid, "Grid").changed();
            changed |= ui.checkbox(&mut self.prefs.snap, "Snap to grid").changed();
            ui.menu_button("Grid step", |ui| {
                for step in [0.1, 0.5, 1.0, 2.0, 5.0, 10.0] {
                    if ui.radio(self.prefs.grid_mm == step, format!("{step} mm")).clicked() {
                        self.prefs.grid_mm = step;
                        changed = true;
                    }
                }
            });
            changed |= ui.checkbox(&mut self.prefs.show_rays, "Rays").changed();
            changed |= ui.checkbox(&mut self.prefs.show_normals, "Surface normals").changed();
            changed |= ui.checkbox(&mut self.prefs.show_legend, "Legend").changed();
            changed |= ui.checkbox(&mut self.prefs.show_side_panel, "Side panel").changed();
            if changed {
                self.save_prefs();
            }
        });
    }

    fn status_bar_ui(&mut self, ui: &mut egui::Ui) {
        egui::Panel::bottom("status_bar").show(ui, |ui| {
            ui.horizontal_wrapped(|ui| {
                match self.canvas.cursor_mm {
                    Some((x, y)) => ui.monospace(format!("x {x:9.3} mm  y {y:9.3} mm")),
                    None => ui.monospace(format!("{:32}", "")),
                };
                ui.separator();
                budget::budget_line_ui(self, ui);
                if !self.status.is_empty() {
                    ui.separator();
                    ui.label(&self.status);
                }
            });
        });
    }

    fn side_panel_ui(&mut self, ui: &mut egui::Ui) {
        egui::CollapsingHeader::new("Properties").default_open(true).show(ui, |ui| properties::properties_ui(self, ui));
        egui::CollapsingHeader::new("Power budget").default_open(true).show(ui, |ui| budget::budget_ui(self, ui));
        egui::CollapsingHeader::new("Detectors")
            .default_open(false)
            .show(ui, |ui| super::detectors::detectors_ui(self, ui));
        egui::CollapsingHeader::new("Analysis").default_open(true).show(ui, |ui| inspect::analysis_panel_ui(self, ui));
        egui::CollapsingHeader::new("Parameter sweep")
            .default_open(false)
            .show(ui, |ui| super::sweep_ui::sweep_ui(self, ui));
        egui::CollapsingHeader::new("Problems").default_open(true).show(ui, |ui| problems::problems_ui(self, ui));
        egui::CollapsingHeader::new("Trace settings")
            .default_open(false)
            .show(ui, |ui| properties::settings_ui(self, ui));
        egui::CollapsingHeader::new("Materials").default_open(false).show(ui, |ui| materials::materials_ui(self, ui));
    }

    fn dialogs_ui(&mut self, ctx: &egui::Context) {
        if let Some(g) = self.dialogs.confirm_discard.clone() {
            let mut choice = None;
            egui::Modal::new(egui::Id::unique("confirm_discard")).show(ctx, |ui| {
                ui.heading("Unsaved changes");
                ui.label(format!("{} has changes that are not saved. Save them first?", self.doc.display_name()));
                choice = button_row(ui, &["Save", "Discard changes", "Cancel"]);
            });
            match choice {
                Some(0) => {
                    self.dialogs.confirm_discard = None;
                    let saved = match self.doc.path.clone() {
                        Some(p) => self.save_then(&p, Some(g.clone())),
                        None => match files::save_dialog(None) {
                            Some(p) => self.save_then(&p, Some(g.clone())),
                            None => {
                                self.ask_path(true);
                                false
                            }
                        },
                    };
                    if saved {
                        self.run_guarded(ctx, g);
                    }
                }
                Some(1) => {
                    self.dialogs.confirm_discard = None;
                    if g == Guarded::Quit {
                        self.close_confirmed = true;
                    }
                    self.run_guarded(ctx, g);
                }
                Some(_) => self.dialogs.confirm_discard = None,
                None => {}
            }
        }
        self.save_conflict_ui(ctx);
        self.recovery_offer_ui(ctx);
        inspect::inspector_window_ui(self, ctx);
        if self.dialogs.about {
            about::about_ui(ctx, &mut self.dialogs.about);
        }
        files::path_prompt_ui(self, ctx);
        if self.dialogs.rotate_prompt {
            let mut open = true;
            let mut go = false;
            egui::Window::new("Rotate selection").open(&mut open).collapsible(false).show(ctx, |ui| {
                ui.horizontal(|ui| {
                    let l = ui.label("Angle (counter-clockwise)");
                    ui.add(egui::DragValue::new(&mut self.dialogs.rotate_deg).suffix(" °").speed(1.0))
                        .labelled_by(l.id);
                });
                go = ui.button("Rotate").clicked();
            });
            if go {
                self.push(Command::RotateSelection(self.dialogs.rotate_deg));
                open = false;
            }
            self.dialogs.rotate_prompt = open;
        }
        if let Some(e) = self.dialogs.error.clone() {
            let mut open = true;
            egui::Window::new("Problem").open(&mut open).collapsible(false).show(ctx, |ui| {
                ui.label(e);
            });
            if !open {
                self.dialogs.error = None;
            }
        }
    }
}

impl EditorApp {
    /// Asks what to do about a save over a file that changed on disk.
    fn save_conflict_ui(&mut self, ctx: &egui::Context) {
        let Some(conflict) = self.dialogs.save_conflict.clone() else { return };
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("save_conflict")).show(ctx, |ui| {
            ui.heading("File changed on disk");
            ui.label(format!(
                "{} was changed by another program since it was opened or last saved here ({}). \
                 Saving now would replace those changes.",
                conflict.path.display(),
                conflict.change
            ));
            choice = button_row(ui, &["Overwrite", "Save as…", "Cancel"]);
        });
        if choice.is_some() {
            self.dialogs.save_conflict = None;
        }
        match choice {
            Some(0) => {
                let written = self.write_to(&conflict.path);
                if let (true, Some(g)) = (written, conflict.then) {
                    self.run_guarded(ctx, g);
                }
            }
            Some(1) => self.push(Command::SaveAsDialog),
            _ => {}
        }
    }

    /// Offers the first recovery copy left by an editor that stopped without saving.
    fn recovery_offer_ui(&mut self, ctx: &egui::Context) {
        if self.dialogs.confirm_discard.is_some() || self.dialogs.save_conflict.is_some() {
            return;
        }
        let Some(copy) = self.dialogs.recovery_offers.first().cloned() else { return };
        let more = self.dialogs.recovery_offers.len() - 1;
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("recovery_offer")).show(ctx, |ui| {
            ui.set_max_width(520.0);
            ui.heading("Recover unsaved work");
            let what = copy
                .info
                .original_path()
                .map_or_else(|| "an untitled scene".to_owned(), |p| format!("changes to {}", p.display()));
            ui.label(format!(
                "An earlier Raydraft stopped before saving {what}. Its last recovery copy was written {}.",
                copy.age_text()
            ));
            ui.label(
                "Restore opens it as a modified document, and Save then writes it to its file. \
                 Discard deletes the copy. Later keeps it for the next start (or for Recovered work… in the File menu).",
            );
            if more > 0 {
                ui.label(format!("{more} more recovery {} after this one.", if more == 1 { "copy" } else { "copies" }));
            }
            choice = button_row(ui, &["Restore", "Discard", "Later"]);
            ui.small(format!("The copy: {}", copy.file.display()));
        });
        match choice {
            Some(0) => self.push(Command::Guarded(Guarded::Restore(copy.file))),
            Some(1) => {
                self.dialogs.recovery_offers.retain(|c| c.file != copy.file);
                match std::fs::remove_file(&copy.file) {
                    Ok(()) => self.status = format!("Discarded the recovery copy {}", copy.file.display()),
                    Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
                    Err(e) => self.dialogs.error = Some(format!("{}: not removed: {e}", copy.file.display())),
                }
            }
            Some(_) => self.dialogs.recovery_offers.retain(|c| c.file != copy.file),
            None => {}
        }
    }
}

/// The document as the autosave needs it.
fn doc_state(doc: &Document) -> DocState<'_> {
    DocState {
        scene: &doc.scene,
        path: doc.path.as_deref(),
        stamp: doc.disk.clone(),
        revision: doc.revision,
        modified: doc.is_modified(),
    }
}

impl eframe::App for EditorApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.frame_ui(ui);
    }
}

/// A row of buttons; the index of the one clicked this frame.
fn button_row(ui: &mut egui::Ui, labels: &[&str]) -> Option<usize> {
    ui.horizontal(|ui| {
        let mut clicked = None;
        for (k, label) in labels.iter().enumerate() {
            if ui.button(*label).clicked() {
                clicked = Some(k);
            }
        }
        clicked
    })
    .inner
}
