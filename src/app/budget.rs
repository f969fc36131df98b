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

/// What the numbers of a 2D trace mean for a real part.
pub const MEANING_2D: &str = "A scene is a cross-section: every ray stays in the drawing plane. \
The numbers carry over to rays in that plane of a part extruded from the drawing, and to \
meridional rays of a part turned about an axis in the plane. They do not cover skew rays, and \
escape shares differ in 3D: an even emitter inside a slab of n = 1.5 sends 2θc/π = 0.465 of \
its power into the two escape cones in 2D, but 1 − cos θc = 0.255 in 3D. See docs/analysis.md.";

/// The full budget in the side panel.
pub fn budget_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
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
    escaped_by_edge_ui(app, ui, launched);
    ui.collapsing("What a 2D budget means", |ui| {
        ui.label(egui::RichText::new(MEANING_2D).small());
    });
}

/// Escaped light by the surface it left through; clicking a row marks that edge on the
/// canvas and selects its object.
fn escaped_by_edge_ui(app: &mut EditorApp, ui: &mut egui::Ui, launched: f64) {
    let Some(by) = app.worker.escaped_by_edge().cloned() else { return };
    if by.shares.is_empty() {
        return;
    }
    ui.add_space(4.0);
    ui.label(egui::RichText::new("Escaped light by the surface it left through").strong());
    let mut clicked = None;
    egui::Grid::new("escaped_grid").num_columns(2).striped(true).show(ui, |ui| {
        for share in by.shares.iter().take(12) {
            let text = match &share.surface {
                Some(s) => format!("edge {} of \"{}\"", s.edge, s.object),
                None => "straight from a source".to_owned(),
            };
            let marked = share.surface.is_some() && share.surface == app.analysis.highlight;
            if ui.selectable_label(marked, text).on_hover_text("Mark this edge on the canvas").clicked() {
                clicked = Some(share.surface.clone());
            }
            ui.monospace(format!("{:.2} % ({:.4} W)", pct(share.w, launched), share.w));
            ui.end_row();
        }
    });
    if by.shares.len() > 12 {
        ui.label(egui::RichText::new(format!("… and {} more surfaces", by.shares.len() - 12)).small().weak());
    }
    if by.truncated {
        ui.label(
            egui::RichText::new(format!(
                "From the stored events only: {:.4} W of the {:.4} W escaped (raise the event limit to see all).",
                by.stored_w, by.budget_w
            ))
            .small()
            .weak(),
        );
    }
    if let Some(surface) = clicked {
        if let Some(s) = &surface {
            app.push(super::app::Command::Select(vec![s.object_id]));
        }
        app.analysis.highlight = if surface == app.analysis.highlight { None } else { surface };
    }
}
