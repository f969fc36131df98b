//! The power budget as one JSON object, for scripts.

use serde_json::{Map, Value, json};

use crate::analysis::{BudgetReport, Sink};
use crate::scene::TraceMode;
use crate::trace::Trace;

/// The mode as written in files and on the command line.
pub fn mode_word(mode: TraceMode) -> &'static str {
    match mode {
        TraceMode::Principal => "principal",
        TraceMode::Tree => "tree",
        TraceMode::MonteCarlo => "montecarlo",
    }
}

/// One sink as `{"id", "name", "label", "power_w"}`; `id` is the object's id as in the scene
/// file (`null` for the ambient medium).
fn sink(s: &Sink) -> Value {
    json!({ "id": s.object_id, "name": s.name, "label": s.label, "power_w": s.power_w })
}

/// The budget of a trace as a JSON value. Powers are in watts; `detected` maps each
/// detector's name to its power (detectors sharing a name are added together),
/// `absorbed_by` does the same for the nonzero parts of `absorbed_w` by label. `detectors`
/// and `absorbers` list the same sinks one by one with the object's id and name.
pub fn budget(report: &BudgetReport, trace: &Trace) -> Value {
    let mut detected = Map::new();
    for d in &report.detected {
        let sum = detected.get(&d.name).and_then(Value::as_f64).unwrap_or(0.0) + d.power_w;
        detected.insert(d.name.clone(), json!(sum));
    }
    let mut absorbed_by = Map::new();
    for a in &report.absorbed_by {
        let sum = absorbed_by.get(&a.label).and_then(Value::as_f64).unwrap_or(0.0) + a.power_w;
        absorbed_by.insert(a.label.clone(), json!(sum));
    }
    json!({
        "mode": mode_word(trace.mode),
        "launched_w": report.launched_w,
        "escaped_w": report.escaped_w,
        "absorbed_w": report.absorbed_w,
        "absorbed_by": absorbed_by,
        "trapped_w": report.trapped_w,
        "below_threshold_w": report.below_threshold_w,
        "detected": detected,
        "detectors": report.detected.iter().map(sink).collect::<Vec<_>>(),
        "absorbers": report.absorbed_by.iter().map(sink).collect::<Vec<_>>(),
        "closure_error": report.closure_error,
        "n_rays": trace.n_rays,
        "n_events": trace.n_events,
        "events_truncated": trace.events_truncated,
        "warnings": trace.warnings,
    })
}

/// The analysis figures added to the JSON budget: `escaped_by_edge` (escaped power by the
/// surface it last crossed, largest first, with `truncated` when the event cap cut the stored
/// events) and `uniformity` (per detector name: min/max, min/mean and the coefficient of
/// variation of its irradiance histogram; null when no light arrived).
pub fn analysis(scene: &crate::scene::Scene, trace: &Trace) -> Map<String, Value> {
    let by = crate::analysis::escaped_by_edge(trace);
    let shares: Vec<Value> = by
        .shares
        .iter()
        .map(|s| match &s.surface {
            Some(x) => json!({ "object_id": x.object_id, "object": x.object, "edge": x.edge, "w": s.w }),
            None => json!({ "object_id": null, "object": null, "edge": null, "w": s.w }),
        })
        .collect();
    let mut uniformity = Map::new();
    for d in &trace.detectors {
        let u = crate::analysis::detector_uniformity(scene, d).map_or(
            Value::Null,
            |u| json!({ "min_over_max": u.min_over_max, "min_over_mean": u.min_over_mean, "cv": u.cv }),
        );
        uniformity.insert(d.name.clone(), u);
    }
    let mut out = Map::new();
    out.insert(
        "escaped_by_edge".to_owned(),
        json!({ "shares": shares, "stored_w": by.stored_w, "truncated": by.truncated }),
    );
    out.insert("uniformity".to_owned(), Value::Object(uniformity));
    out
}
