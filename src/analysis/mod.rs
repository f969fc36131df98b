//! Turning a [`Trace`] into numbers people read: the power budget by named sink, and
//! detector histograms. Pure functions of the scene and the trace.

pub mod escape;
pub mod explain;
pub mod measure;
pub mod sweep;
pub mod uniformity;

pub use escape::{EdgeShare, EscapeCone, EscapeError, EscapedByEdge, escape_cone, escape_cone_with, escaped_by_edge};
pub use explain::{RayExplanation, Step, Surface, explain_ray, surface_edge};
pub use measure::{OpticalPath, PathPiece, angle_deg, optical_path};
pub use sweep::{Metric, ParamPath, SweepError, sweep, sweep_with};
pub use uniformity::{Uniformity, detector_uniformity, uniformity};

use crate::scene::{ObjectKind, Scene};
use crate::trace::{DetectorResult, Trace};

/// One bin of a histogram: its centre and the power density in it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bin {
    /// Bin centre (mm along a detector, or degrees from its normal).
    pub centre: f64,
    /// Power per unit of the binned quantity (W/mm or W/deg).
    pub density: f64,
}

/// Irradiance along a detector: `bins` equal bins over its length, in W/mm. A hit at the
/// far end counts in the last bin. Returns no bins when `bins` is 0 or the detector has no
/// length.
pub fn irradiance(det: &DetectorResult, bins: u32) -> Vec<Bin> {
    histogram(det.hits.iter().map(|h| (h.along, h.power)), 0.0, det.length, bins)
}

/// Radiant intensity on a detector by angle from its normal: `bins` equal bins over −90°…90°,
/// in W/deg.
pub fn intensity(det: &DetectorResult, bins: u32) -> Vec<Bin> {
    histogram(det.hits.iter().map(|h| (h.angle_deg, h.power)), -90.0, 90.0, bins)
}

fn histogram(samples: impl Iterator<Item = (f64, f64)>, low: f64, high: f64, bins: u32) -> Vec<Bin> {
    let width = (high - low) / f64::from(bins.max(1));
    if bins == 0 || !(width.is_finite() && width > 0.0) {
        return Vec::new();
    }
    let mut power = vec![0.0; bins as usize];
    for (x, w) in samples {
        if !(x.is_finite() && w.is_finite()) {
            continue;
        }
        let k = (((x - low) / width).floor().max(0.0) as usize).min(power.len() - 1);
        power[k] += w;
    }
    power.iter().enumerate().map(|(k, p)| Bin { centre: low + (k as f64 + 0.5) * width, density: p / width }).collect()
}

/// The histogram sizes the scene asks for on detector `det`: (position bins, angle bins).
pub fn detector_bins(scene: &Scene, det: &DetectorResult) -> (u32, u32) {
    match scene.object(det.object).map(|o| &o.kind) {
        Some(ObjectKind::Detector(d)) => (d.bins, d.angle_bins),
        _ => (50, 50),
    }
}

/// One named part of the budget: a detector, a thin element that absorbs, or a medium.
#[derive(Clone, Debug, PartialEq)]
pub struct Sink {
    /// The object (as in the file): the detector, the thin element, or the solid whose
    /// medium absorbed; `None` for the ambient medium.
    pub object_id: Option<u64>,
    /// The object's name (for the ambient medium, its material).
    pub name: String,
    /// How people read it: `by absorber "stop"`, `in block (pmma)`, or the detector's name.
    pub label: String,
    pub power_w: f64,
}

/// Where the launched power went, with every sink named for people.
#[derive(Clone, Debug, PartialEq)]
pub struct BudgetReport {
    pub launched_w: f64,
    pub escaped_w: f64,
    /// All absorption: media, absorbers, mirror and splitter losses.
    pub absorbed_w: f64,
    /// The nonzero parts of `absorbed_w`: media first (in medium order), then thin elements
    /// (in scene order).
    pub absorbed_by: Vec<Sink>,
    pub trapped_w: f64,
    pub below_threshold_w: f64,
    /// Power on each detector, in scene order.
    pub detected: Vec<Sink>,
    pub closure_error: f64,
}

/// Names the media of a trace: the ambient medium by its material, then each solid by
/// object name and material.
pub fn medium_labels(trace: &Trace) -> Vec<String> {
    let material = |m: usize| trace.medium_names.get(m).map_or("?", String::as_str);
    let mut labels = vec![format!("ambient {}", material(0))];
    for (m, id) in trace.medium_objects.iter().enumerate().skip(1) {
        let name = id.and_then(|id| trace.object(id)).map_or("?", |o| o.name.as_str());
        labels.push(format!("{name} ({})", material(m)));
    }
    labels
}

/// The budget of `trace`, with media and objects named, from what the trace recorded (the
/// scene need not be compiled again).
pub fn budget_report(trace: &Trace) -> BudgetReport {
    let b = &trace.budget;
    let labels = medium_labels(trace);
    let mut absorbed_by = Vec::new();
    for (m, w) in b.absorbed_in_media.iter().enumerate() {
        if *w > 0.0 {
            let object_id = trace.medium_objects.get(m).copied().flatten();
            let name = match object_id.and_then(|id| trace.object(id)) {
                Some(o) => o.name.clone(),
                None => trace.medium_names.get(m).cloned().unwrap_or_default(),
            };
            let label = labels.get(m).cloned().unwrap_or_else(|| format!("medium {m}"));
            absorbed_by.push(Sink { object_id, name, label: format!("in {label}"), power_w: *w });
        }
    }
    for &(id, w) in &b.absorbed_by_object {
        if w > 0.0 {
            let (name, label) = trace.object(id).map_or_else(
                || (String::new(), format!("object {id}")),
                |o| (o.name.clone(), format!("by {} \"{}\"", o.kind, o.name)),
            );
            absorbed_by.push(Sink { object_id: Some(id), name, label, power_w: w });
        }
    }
    let detected = trace
        .detectors
        .iter()
        .zip(&b.detected)
        .map(|(d, w)| Sink { object_id: Some(d.object), name: d.name.clone(), label: d.name.clone(), power_w: *w })
        .collect();
    BudgetReport {
        launched_w: b.launched,
        escaped_w: b.escaped,
        absorbed_w: b.absorbed,
        absorbed_by,
        trapped_w: b.trapped,
        below_threshold_w: b.below_threshold,
        detected,
        closure_error: b.closure_error(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::trace::DetectorHit;

    fn detector(hits: &[(f64, f64, f64)]) -> DetectorResult {
        DetectorResult {
            object: 0,
            name: "d".to_owned(),
            length: 10.0,
            hits: hits
                .iter()
                .map(|&(along, angle_deg, power)| DetectorHit { along, angle_deg, power, wavelength_nm: 550.0 })
                .collect(),
        }
    }

    #[test]
    fn irradiance_keeps_power_and_puts_the_far_end_in_the_last_bin() {
        let d = detector(&[(0.0, 0.0, 1.0), (2.5, 0.0, 2.0), (10.0, 0.0, 4.0)]);
        let bins = irradiance(&d, 4);
        assert_eq!(bins.len(), 4);
        assert!((bins[0].centre - 1.25).abs() < 1e-12);
        let total: f64 = bins.iter().map(|b| b.density * 2.5).sum();
        assert!((total - 7.0).abs() < 1e-12);
        assert!((bins[3].density - 4.0 / 2.5).abs() < 1e-12);
        assert!((bins[1].density - 2.0 / 2.5).abs() < 1e-12);
    }

    #[test]
    fn intensity_spans_minus_90_to_90() {
        let d = detector(&[(1.0, -90.0, 1.0), (1.0, 89.9, 1.0), (1.0, 90.0, 1.0)]);
        let bins = intensity(&d, 3);
        assert!((bins[0].centre + 60.0).abs() < 1e-12);
        assert!((bins[0].density - 1.0 / 60.0).abs() < 1e-12);
        assert!((bins[2].density - 2.0 / 60.0).abs() < 1e-12);
    }

    #[test]
    fn no_bins_gives_an_empty_histogram() {
        assert!(irradiance(&detector(&[(1.0, 0.0, 1.0)]), 0).is_empty());
    }
}
