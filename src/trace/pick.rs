//! Picking a ray of a finished trace: the ray segment nearest a point, for the inspector.
//!
//! A ray's drawn path is the points of its stored events in order, so segment `k` of a ray
//! runs from its event `k` to its event `k + 1`. Distances and the tolerance are in scene
//! millimetres; a miss is `None`.
//!
//! Cost: one linear pass over `trace.events`, reading each event's point once and rejecting
//! a segment with four comparisons when the query point lies outside its end points' box
//! grown by the search radius (the tolerance, shrinking to the best distance so far). Only
//! segments passing that test are projected. About 1–3 ns per event when the events are in
//! cache, bounded by memory bandwidth beyond (64 bytes per event), so a few milliseconds for
//! 10⁶ events: fine for a click, not meant for every mouse move over a huge trace.

use crate::geom::{Edge, Vec2};

use super::Trace;

/// The ray segment nearest the query point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RaySegmentPick {
    /// Index of the ray in `trace.rays`.
    pub ray_idx: usize,
    /// Index in `trace.events` of the event the segment starts at; the segment ends at the
    /// next event.
    pub event_idx: usize,
    /// The point of the segment nearest the query point, mm.
    pub point: Vec2,
    /// Its fraction along the segment, from the start event (0) to the next one (1).
    pub param: f64,
    pub distance_mm: f64,
}

/// The segment of any ray of `trace` nearest `p`, within `tolerance_mm`. Of segments at the
/// same distance, the first in ray order wins. Rays whose event range lies outside
/// `trace.events` (a trace cut short) are skipped.
pub fn nearest_ray_segment(trace: &Trace, p: Vec2, tolerance_mm: f64) -> Option<RaySegmentPick> {
    let mut best: Option<RaySegmentPick> = None;
    let mut radius = tolerance_mm;
    for (ray_idx, ray) in trace.rays.iter().enumerate() {
        let Some(events) = trace.events.get(ray.first_event..ray.first_event.saturating_add(ray.n_events as usize))
        else {
            continue;
        };
        for (k, pair) in events.windows(2).enumerate() {
            let (a, b) = (pair[0].point, pair[1].point);
            // Box reject; written so that NaN coordinates or radius reject too.
            if !(p.x >= a.x.min(b.x) - radius
                && p.x <= a.x.max(b.x) + radius
                && p.y >= a.y.min(b.y) - radius
                && p.y <= a.y.max(b.y) + radius)
            {
                continue;
            }
            let proj = Edge::segment(a, b).project(p);
            if proj.distance_mm <= tolerance_mm && best.is_none_or(|q| proj.distance_mm < q.distance_mm) {
                radius = proj.distance_mm;
                best = Some(RaySegmentPick {
                    ray_idx,
                    event_idx: ray.first_event + k,
                    point: proj.point,
                    param: proj.param,
                    distance_mm: proj.distance_mm,
                });
            }
        }
    }
    best
}
