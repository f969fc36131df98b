//! Detector plots: irradiance along each detector and intensity by angle, per wavelength.

use egui_plot::{Legend, Line, Plot, PlotPoints};

use super::app::EditorApp;
use super::canvas::rgb;
use crate::analysis;
use crate::optics::colour::wavelength_rgb;
use crate::trace::DetectorResult;

/// The same detector with only the hits at one wavelength.
fn at_wavelength(d: &DetectorResult, nm: f64) -> DetectorResult {
    DetectorResult { hits: d.hits.iter().copied().filter(|h| h.wavelength_nm == nm).collect(), ..d.clone() }
}

fn plot_ui(
    ui: &mut egui::Ui,
    id: (&str, u64),
    x_label: &str,
    y_label: &str,
    lines: Vec<(String, [u8; 3], Vec<[f64; 2]>)>,
) {
    Plot::new(id)
        .height(130.0)
        .allow_scroll(false)
        .x_axis_label(x_label)
        .y_axis_label(y_label)
        .legend(Legend::default())
        .show(ui, |p| {
            for (name, colour, points) in lines {
                p.line(Line::new(name, PlotPoints::from(points)).color(rgb(colour)));
            }
        });
}

/// Irradiance and intensity bins of a detector as CSV: one row per bin, the total and each
/// wavelength.
pub fn detector_csv(d: &DetectorResult, wavelengths: &[f64], bins: u32, angle_bins: u32) -> String {
    use std::fmt::Write as _;
    let mut out = String::new();
    let table = |out: &mut String, x: &str, unit: &str, f: &dyn Fn(&DetectorResult) -> Vec<analysis::Bin>| {
        let total = f(d);
        let per: Vec<Vec<analysis::Bin>> = wavelengths.iter().map(|&nm| f(&at_wavelength(d, nm))).collect();
        let _ = write!(out, "{x},total_{unit}");
        for nm in wavelengths {
            let _ = write!(out, ",nm{nm}_{unit}");
        }
        out.push('\n');
        for (k, b) in total.iter().enumerate() {
            let _ = write!(out, "{},{}", b.centre, b.density);
            for p in &per {
                let _ = write!(out, ",{}", p.get(k).map_or(0.0, |b| b.density));
            }
            out.push('\n');
        }
    };
    table(&mut out, "position_mm", "w_per_mm", &|x| analysis::irradiance(x, bins));
    out.push('\n');
    table(&mut out, "angle_deg", "w_per_deg", &|x| analysis::intensity(x, angle_bins));
    out
}

pub fn detectors_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    let Some(t) = app.worker.trace().cloned() else {
        ui.label("Tracing…");
        return;
    };
    if t.detectors.is_empty() {
        ui.label("No detectors in the scene. Add one with the Detector tool.");
        return;
    }
    for d in &t.detectors {
        let (bins, angle_bins) = analysis::detector_bins(&app.doc.scene, d);
        ui.label(egui::RichText::new(&d.name).strong());
        let per = |f: &dyn Fn(&DetectorResult) -> Vec<analysis::Bin>| -> Vec<(String, [u8; 3], Vec<[f64; 2]>)> {
            let mut lines: Vec<(String, [u8; 3], Vec<[f64; 2]>)> = t
                .wavelengths
                .iter()
                .map(|&nm| {
                    let bins = f(&at_wavelength(d, nm));
                    (format!("{nm} nm"), wavelength_rgb(nm), bins.iter().map(|b| [b.centre, b.density]).collect())
                })
                .collect();
            if lines.len() > 1 {
                lines.push(("total".to_owned(), [30, 30, 30], f(d).iter().map(|b| [b.centre, b.density]).collect()));
            }
            lines
        };
        plot_ui(
            ui,
            ("irradiance", d.object),
            "position along the detector (mm)",
            "W/mm",
            per(&|x| analysis::irradiance(x, bins)),
        );
        plot_ui(
            ui,
            ("intensity", d.object),
            "angle from the normal (°)",
            "W/°",
            per(&|x| analysis::intensity(x, angle_bins)),
        );
        match analysis::uniformity(&analysis::irradiance(d, bins)) {
            Some(u) => {
                ui.label(
                    egui::RichText::new(format!(
                        "Uniformity over {bins} bins: min/max {:.3}, min/mean {:.3}, coefficient of variation {:.3}",
                        u.min_over_max, u.min_over_mean, u.cv
                    ))
                    .small(),
                );
            }
            None => {
                ui.label(egui::RichText::new("No light on this detector.").small().weak());
            }
        }
        if ui.button(format!("Save {} as CSV…", d.name)).clicked() {
            let name = format!("{}.csv", d.name.replace(|c: char| !c.is_alphanumeric() && c != '-', "_"));
            let path = super::sweep_ui::csv_dialog(&name).unwrap_or_else(|| std::path::PathBuf::from(&name));
            let text = detector_csv(d, &t.wavelengths, bins, angle_bins);
            app.status = match super::sweep_ui::write_text(&path, &text) {
                Ok(()) => format!("Wrote {}", path.display()),
                Err(e) => format!("Detector CSV not written: {e}"),
            };
        }
        ui.separator();
    }
}
