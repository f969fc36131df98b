//! The power budget: where the launched watts went, always visible in the status bar and in
//! full in the side panel.

use std::fmt::Write as _;

use super::app::EditorApp;

fn pct(part: f64, whole: f64) -> f64 {
    if whole > 0.0 { 100.0 * part / whole } else { 0.0 }
}

/// Every sink with its watts, in a fixed order: escaped, absorbed, each detector, trapped,
/// below threshold.
pub fn sinks(app: &EditorApp) -> Option<(f64, Vec<(String, f64)>)> {
    let t = app.worker.trace()?;
    let b = &t.budget;
    let mut rows = vec![("escaped".to_owned(), b.escaped), ("absorbed".to_owned(), b.absorbed)];
    for (d, w) in t.detectors.iter().zip(&b.detected) {
        rows.push((format!("detected on {}", d.name), *w));
    }
    rows.push(("trapped".to_owned(), b.trapped));
    rows.push(("below threshold".to_owned(), b.below_threshold));
    Some((b.launched, rows))
}

/// The compact line in the status bar.
pub fn budget_line_ui(app: &EditorApp, ui: &mut egui::Ui) {
    let Some((launched, rows)) = sinks(app) else {
        ui.label("No trace yet");
        return;
    };
    let short: Vec<String> = rows.iter().map(|(n, w)| format!("{n} {:.1}%", pct(*w, launched))).collect();
    let detail: Vec<String> = rows.iter().map(|(n, w)| format!("{n}: {w:.6} W ({:.3}%)", pct(*w, launched))).collect();
    ui.label(format!("Launched {launched:.4} W · {}", short.join(" · ")))
        .on_hover_text(format!("Launched {launched:.6} W\n{}", detail.join("\n")));
}

/// The full budget in the side panel.
pub fn budget_ui(app: &EditorApp, ui: &mut egui::Ui) {
    let Some((launched, rows)) = sinks(app) else {
        ui.label("Tracing…");
        return;
    };
    let Some(t) = app.worker.trace() else { return };
    egui::Grid::new("budget_grid").num_columns(3).striped(true).show(ui, |ui| {
        ui.strong("Launched");
        ui.monospace(format!("{launched:.6} W"));
        ui.monospace("100 %");
        ui.end_row();
        for (name, w) in &rows {
            ui.label(name);
            ui.monospace(format!("{w:.6} W"));
            ui.monospace(format!("{:.2} %", pct(*w, launched)));
            ui.end_row();
        }
    });
    let mode = crate::export::json::mode_word(t.mode);
    let mut info = format!("{mode} trace: {} rays, {} events", t.n_rays, t.n_events);
    if let Some(d) = app.worker.last_duration {
        let _ = write!(info, ", {:.0} ms", d.as_secs_f64() * 1000.0);
    }
    ui.label(egui::RichText::new(info).small());
    if t.mode == crate::scene::TraceMode::Principal {
        ui.label(egui::RichText::new("Principal paths: the budget counts paths, not watts.").small().weak());
    }
    for w in t.warnings.iter().take(5) {
        ui.label(egui::RichText::new(w).small().color(egui::Color32::from_rgb(160, 90, 0)));
    }
}
