//! The egui editor: a canvas to sketch solids, thin elements and sources on, with the scene
//! retraced live on a worker thread, and panels for properties, materials, problems and the
//! power budget.
//!
//! The editor keeps no copy of the model. Each frame it reads the [`Scene`](crate::scene::Scene)
//! held by its document and the last finished trace, and UI code never changes the scene in
//! place: it pushes [`Command`]s during the frame, applied once at the end, and every change to
//! the scene is an `Edit` applied through the undo `History`.
//!
//! Coordinates: the scene is in millimetres with Y up; the canvas maps it to screen points with
//! its own f64 transform ([`canvas::View`]).

mod about;
#[allow(clippy::module_inception)] // egui's demo habit: the app's state lives in app.rs
mod app;
mod budget;
mod canvas;
mod detectors;
mod files;
mod inspect;
mod materials;
mod pick;
mod problems;
mod properties;
pub mod recovery;
mod sweep_ui;
mod tools;
mod view_rays;
mod worker;

pub use app::{Command, EditorApp, Guarded, Options};
pub use canvas::View;
pub use files::Prefs;
pub use tools::Tool;
pub use worker::TraceWorker;

pub use crate::scene::edit::Edit;
pub use crate::scene::history::{Gesture, History};

/// The demo scene shown when the editor starts without a file.
pub const DEMO_SCENE: &str = include_str!("../../scenes/light_guide.ron");

/// Opens the editor window and runs it until it is closed. Unsaved work is written to a
/// recovery copy in the state folder every [`recovery::interval_from_env`] and by a panic
/// hook; the next start offers copies left behind.
pub fn run(file: Option<std::path::PathBuf>) -> anyhow::Result<()> {
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default().with_inner_size([1280.0, 820.0]).with_title("Raydraft"),
        ..Default::default()
    };
    let app = EditorApp::new(Options {
        file,
        prefs_path: files::default_prefs_path(),
        state_dir: recovery::default_state_dir(),
        autosave_every: recovery::interval_from_env(),
    });
    if let Some(slot) = app.panic_slot() {
        recovery::install_panic_hook(slot);
    }
    eframe::run_native("Raydraft", options, Box::new(|_cc| Ok(Box::new(app))))
        .map_err(|e| anyhow::anyhow!("the editor window could not be opened: {e}"))
}
