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

pub fn detectors_ui(app: &EditorApp, ui: &mut egui::Ui) {
    let Some(t) = app.worker.trace() else {
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
            t.wavelengths
                .iter()
                .map(|&nm| {
                    let bins = f(&at_wavelength(d, nm));
                    (format!("{nm} nm"), wavelength_rgb(nm), bins.iter().map(|b| [b.centre, b.density]).collect())
                })
                .collect()
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
    }
}
