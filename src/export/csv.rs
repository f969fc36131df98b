//! CSV tables: detector histograms, and every stored event of every ray.
//!
//! Numbers are written in full precision with `.` as the decimal mark; text fields are
//! quoted when they hold a comma, a quote or a line break.

use std::fmt::Write;

use crate::analysis::{detector_bins, intensity, irradiance};
use crate::geom::Vec2;
use crate::scene::Scene;
use crate::trace::{EventKind, NONE, Trace};

/// Header of the detector table.
pub const DETECTOR_HEADER: &str = "detector,bin,position_mm,irradiance_w_per_mm,angle_deg,intensity_w_per_deg";

/// Header of the event table.
pub const EVENT_HEADER: &str = "ray,parent,x_mm,y_mm,direction_deg,wavelength_nm,power_s_w,power_p_w,kind,object_id,object,edge,n1,n2,incidence_deg";

/// Quotes a text field if it needs it.
fn field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) { format!("\"{}\"", text.replace('"', "\"\"")) } else { text.to_owned() }
}

/// One block of rows per detector: bin k of its irradiance histogram (position bin centre
/// and W/mm) beside bin k of its intensity histogram (angle bin centre from the normal and
/// W/deg). The bin counts come from the scene; where one histogram has fewer bins its cells
/// are left empty.
pub fn detectors(scene: &Scene, trace: &Trace) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "{DETECTOR_HEADER}");
    for det in &trace.detectors {
        let (bins, angle_bins) = detector_bins(scene, det);
        let position = irradiance(det, bins);
        let angle = intensity(det, angle_bins);
        for k in 0..position.len().max(angle.len()) {
            let _ = write!(out, "{},{k}", field(&det.name));
            match position.get(k) {
                Some(b) => {
                    let _ = write!(out, ",{},{}", b.centre, b.density);
                }
                None => out.push_str(",,"),
            }
            match angle.get(k) {
                Some(b) => {
                    let _ = write!(out, ",{},{}", b.centre, b.density);
                }
                None => out.push_str(",,"),
            }
            out.push('\n');
        }
    }
    out
}

/// One row per stored event, ray by ray in order.
///
/// - `direction_deg` is the direction of travel leaving the event (towards the ray's next
///   event), counter-clockwise from +x; at a ray's last event it is the arriving direction.
///   It is empty for a ray with a single event.
/// - `power_s_w`, `power_p_w` are the power carried on from the event; at an event that ends
///   the ray (absorb, detect, escape, limit, dropped) they are the power that arrived there.
/// - `parent` is empty for a launched ray; `object_id` is the object's id as in the scene
///   file and `object` its name, both empty if none.
/// - `edge` is the edge's number in the object as the file gives it (a free outline's edges
///   in the order its points are written, whichever way round they run), empty if none.
pub fn events(trace: &Trace) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "{EVENT_HEADER}");
    for ray in &trace.rays {
        let evs = trace.events_of(ray);
        for (k, e) in evs.iter().enumerate() {
            let direction = if k + 1 < evs.len() {
                Some(evs[k + 1].point - e.point)
            } else if k > 0 {
                Some(e.point - evs[k - 1].point)
            } else {
                None
            };
            let direction = direction.and_then(angle_deg).map_or_else(String::new, |a| a.to_string());
            let (s, p) = if e.kind.is_end() { (e.before_s, e.before_p) } else { (e.after_s, e.after_p) };
            let parent = if ray.parent == NONE { String::new() } else { ray.parent.to_string() };
            let (object_id, object) = trace
                .object_of(e)
                .map_or_else(|| (String::new(), String::new()), |o| (o.id.to_string(), field(&o.name)));
            let edge = if e.edge == NONE { String::new() } else { e.edge.to_string() };
            let _ = writeln!(
                out,
                "{},{parent},{},{},{direction},{},{s},{p},{},{object_id},{object},{edge},{},{},{}",
                ray.id,
                e.point.x,
                e.point.y,
                ray.wavelength_nm,
                kind_word(e.kind),
                e.n1,
                e.n2,
                e.incidence_deg
            );
        }
    }
    out
}

/// The event kind as written in the CSV (lower case, no spaces).
pub fn kind_word(kind: EventKind) -> &'static str {
    match kind {
        EventKind::Tir => "tir",
        other => other.word(),
    }
}

fn angle_deg(v: Vec2) -> Option<f64> {
    (v.norm() > 0.0).then(|| v.y.atan2(v.x).to_degrees())
}
