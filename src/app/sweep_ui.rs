//! The parameter sweep panel: pick a number in the scene (by its path in the scene file), a
//! metric and a range; the sweep runs on a background thread with progress and cancel, and
//! its curve is plotted and can be written as CSV (`value,metric`, as the command line's
//! `sweep` prints it).

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::{Receiver, TryRecvError, channel};

use egui_plot::{Line, Plot, PlotPoints, Points};

use super::app::EditorApp;
use crate::analysis::{Metric, ParamPath, SweepError, sweep_with};
use crate::scene::{ObjectKind, Scene};
use crate::trace::Control;

/// A finished (or stopped) sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepResult {
    pub param: String,
    pub metric: String,
    pub points: Vec<(f64, f64)>,
    /// Stopped before the last step.
    pub partial: bool,
}

impl SweepResult {
    /// The CSV the command line prints: `value,metric`, one row per step.
    pub fn csv(&self) -> String {
        let mut out = String::from("value,metric\n");
        for (v, m) in &self.points {
            let _ = writeln!(out, "{v},{m}");
        }
        out
    }
}

struct Running {
    control: Arc<Control>,
    done: Arc<AtomicUsize>,
    steps: usize,
    param: String,
    metric: String,
    result: Receiver<Result<Vec<(f64, f64)>, SweepError>>,
}

/// The sweep panel's state.
pub struct SweepState {
    pub param: String,
    pub metric: String,
    pub from: f64,
    pub to: f64,
    pub steps: usize,
    pub csv_path: String,
    pub result: Option<SweepResult>,
    pub error: Option<String>,
    running: Option<Running>,
    /// The parameter's current value (or why it has none) for a scene revision and text:
    /// reading it goes through the object's serialised form, too slow for every frame.
    preview: Option<((u64, String), Result<f64, String>)>,
}

impl Default for SweepState {
    fn default() -> Self {
        Self {
            param: String::new(),
            metric: "escaped".to_owned(),
            from: 0.0,
            to: 10.0,
            steps: 11,
            csv_path: "sweep.csv".to_owned(),
            result: None,
            error: None,
            running: None,
            preview: None,
        }
    }
}

impl SweepState {
    pub fn is_running(&self) -> bool {
        self.running.is_some()
    }

    /// Starts a sweep of a copy of `scene`; errors in the inputs are reported at once.
    pub fn start(&mut self, scene: &Scene) {
        self.error = None;
        let param = match ParamPath::parse(scene, &self.param) {
            Ok(p) => p,
            Err(e) => {
                self.error = Some(e.to_string());
                return;
            }
        };
        let metric = match Metric::parse(scene, &self.metric) {
            Ok(m) => m,
            Err(e) => {
                self.error = Some(e.to_string());
                return;
            }
        };
        self.cancel();
        let control = Arc::new(Control::new());
        let done = Arc::new(AtomicUsize::new(0));
        let (tx, rx) = channel();
        let (c, d) = (Arc::clone(&control), Arc::clone(&done));
        let (scene, from, to, steps) = (scene.clone(), self.from, self.to, self.steps);
        std::thread::spawn(move || {
            let r = sweep_with(&scene, &param, from, to, steps, &metric, &c, &mut |k, _| d.store(k, Ordering::Relaxed));
            // The receiver is gone when the sweep was abandoned; nothing to do then.
            let _ = tx.send(r);
        });
        self.running = Some(Running {
            control,
            done,
            steps: self.steps,
            param: self.param.trim().to_owned(),
            metric: self.metric.trim().to_owned(),
            result: rx,
        });
    }

    /// Stops the running sweep; the steps done so far are kept.
    pub fn cancel(&mut self) {
        if let Some(r) = &self.running {
            r.control.cancel();
        }
    }

    /// Collects a finished sweep; true while one is running.
    pub fn poll(&mut self) -> bool {
        let Some(r) = &self.running else { return false };
        match r.result.try_recv() {
            Ok(Ok(points)) => {
                let partial = points.len() < r.steps;
                self.result = Some(SweepResult { param: r.param.clone(), metric: r.metric.clone(), points, partial });
                self.running = None;
            }
            Ok(Err(e)) => {
                self.error = Some(e.to_string());
                self.running = None;
            }
            Err(TryRecvError::Disconnected) => {
                self.error = Some("the sweep stopped unexpectedly".to_owned());
                self.running = None;
            }
            Err(TryRecvError::Empty) => {}
        }
        self.running.is_some()
    }

    /// Steps done and in all of the running sweep.
    pub fn progress(&self) -> Option<(usize, usize)> {
        self.running.as_ref().map(|r| (r.done.load(Ordering::Relaxed), r.steps))
    }
}

/// Every metric the scene offers, for the metric menu.
fn metric_choices(scene: &Scene) -> Vec<String> {
    let mut out: Vec<String> = ["escaped", "absorbed", "trapped", "deviation"].map(str::to_owned).to_vec();
    for o in &scene.objects {
        match &o.kind {
            ObjectKind::Detector(_) => {
                out.push(format!("detected:{}", o.name));
                out.push(format!("uniformity:{}", o.name));
            }
            ObjectKind::Absorber(_) | ObjectKind::Solid(_) => out.push(format!("absorbed:{}", o.name)),
            _ => {}
        }
    }
    out.dedup();
    out
}

/// Writes `text` to `path` atomically (a failed write never leaves half a file).
pub fn write_text(path: &Path, text: &str) -> Result<(), String> {
    crate::scene::file::write_atomically(path, text.as_bytes(), false).map_err(|e| format!("{}: {e}", path.display()))
}

/// A save dialog for a CSV file, when a dialog service answers.
pub fn csv_dialog(name: &str) -> Option<PathBuf> {
    if std::env::var_os("RAYDRAFT_NO_DIALOGS").is_some() {
        return None;
    }
    rfd::FileDialog::new().add_filter("CSV", &["csv"]).set_file_name(name).save_file()
}

pub fn sweep_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    if app.sweep.poll() {
        ui.ctx().request_repaint_after(std::time::Duration::from_millis(50));
    }
    let scene = &app.doc.scene;
    let revision = app.doc.revision;
    let s = &mut app.sweep;
    ui.horizontal(|ui| {
        let l = ui.label("Parameter");
        ui.add(egui::TextEdit::singleline(&mut s.param).hint_text("e.g. beam.direction_deg").desired_width(170.0))
            .labelled_by(l.id);
    });
    if let Some(&id) = app.selection.first() {
        if let Some(o) = scene.object(id) {
            if ui.small_button(format!("Start from \"{}\"", o.name)).clicked() {
                s.param = format!("{}.", o.name);
            }
        }
    }
    if !s.param.trim().is_empty() {
        let key = (revision, s.param.clone());
        if s.preview.as_ref().is_none_or(|(k, _)| *k != key) {
            let value = ParamPath::parse(scene, &s.param).and_then(|p| p.get(scene)).map_err(|e| e.to_string());
            s.preview = Some((key, value));
        }
        let Some((_, value)) = &s.preview else { return };
        match value {
            Ok(v) => {
                ui.label(egui::RichText::new(format!("now {v}")).small());
            }
            Err(e) => {
                ui.label(egui::RichText::new(e).small().color(egui::Color32::from_rgb(180, 60, 0)));
            }
        }
    }
    ui.horizontal(|ui| {
        let l = ui.label("Metric");
        egui::ComboBox::from_id_salt("sweep_metric")
            .selected_text(&s.metric)
            .show_ui(ui, |ui| {
                for m in metric_choices(scene) {
                    ui.selectable_value(&mut s.metric, m.clone(), m);
                }
            })
            .response
            .labelled_by(l.id);
    });
    ui.horizontal(|ui| {
        let l = ui.label("From");
        ui.add(egui::DragValue::new(&mut s.from).speed(0.1)).labelled_by(l.id);
        let l = ui.label("to");
        ui.add(egui::DragValue::new(&mut s.to).speed(0.1)).labelled_by(l.id);
        let l = ui.label("steps");
        ui.add(egui::DragValue::new(&mut s.steps).range(1..=2000)).labelled_by(l.id);
    });
    ui.horizontal(|ui| {
        if let Some((done, all)) = s.progress() {
            ui.add(
                egui::ProgressBar::new(done as f32 / all.max(1) as f32)
                    .text(format!("{done} / {all}"))
                    .desired_width(160.0),
            );
            if ui.button("Cancel sweep").clicked() {
                s.cancel();
            }
        } else if ui.button("Run sweep").clicked() {
            s.start(scene);
        }
    });
    if let Some(e) = &s.error {
        ui.label(egui::RichText::new(e).color(egui::Color32::from_rgb(180, 60, 0)));
    }
    result_ui(ui, s, &mut app.status);
}

/// The finished sweep's curve and its CSV export.
fn result_ui(ui: &mut egui::Ui, s: &mut SweepState, status: &mut String) {
    let Some(r) = s.result.clone() else { return };
    if r.partial {
        ui.label(egui::RichText::new("Stopped early: the curve covers the steps done.").small().weak());
    }
    let finite: Vec<[f64; 2]> = r.points.iter().filter(|(_, m)| m.is_finite()).map(|&(v, m)| [v, m]).collect();
    Plot::new("sweep_plot")
        .height(160.0)
        .allow_scroll(false)
        .x_axis_label(r.param.clone())
        .y_axis_label(r.metric.clone())
        .show(ui, |p| {
            p.line(Line::new(r.metric.clone(), PlotPoints::from(finite.clone())));
            p.points(Points::new("steps", PlotPoints::from(finite)).radius(2.5));
        });
    ui.horizontal(|ui| {
        let l = ui.label("CSV file");
        ui.add(egui::TextEdit::singleline(&mut s.csv_path).desired_width(140.0)).labelled_by(l.id);
        if ui.button("Save CSV").clicked() {
            let path = PathBuf::from(s.csv_path.trim());
            *status = match write_text(&path, &r.csv()) {
                Ok(()) => format!("Wrote {}", path.display()),
                Err(e) => format!("Sweep CSV not written: {e}"),
            };
        }
        if ui.button("Choose…").clicked() {
            if let Some(p) = csv_dialog("sweep.csv") {
                s.csv_path = p.display().to_string();
            }
        }
    });
}
