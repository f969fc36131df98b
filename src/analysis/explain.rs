//! Why a ray went where it went: every event along one ray's path, from its source, with the
//! numbers at each interface (indices, angles, Snell or the TIR statement, Fresnel R and T for
//! s and p, power before and after, optical path length so far).
//!
//! The functions in the "event access" section below are the only place that reads how an
//! [`Event`] names its surface and how a branch finds its parent; everything else in
//! `analysis` goes through them.

use std::fmt;

use crate::geom::{Edge, Vec2};
use crate::optics::fresnel::critical_angle;
use crate::optics::{Fresnel, fresnel};
use crate::scene::{ObjectKind, Scene};
use crate::trace::{Event, EventKind, NONE, RayRecord, Trace};

// ---------------------------------------------------------------------------------------
// Event access: how today's trace types name surfaces and parents.

/// A surface of the scene: one edge of one object.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct Surface {
    /// The object's stable id.
    pub object_id: u64,
    /// The object's name.
    pub object: String,
    /// Edge index within the object (in the order of its outline or path).
    pub edge: u32,
}

/// The surface an event happened on (`None` for launches, escapes and limits).
pub(crate) fn event_surface(trace: &Trace, e: &Event) -> Option<Surface> {
    if e.edge == NONE {
        return None;
    }
    let o = trace.object_of(e)?;
    Some(Surface { object_id: o.id, object: o.name.clone(), edge: e.edge })
}

/// The geometry of a surface, if it still exists in `scene` (for drawing normals).
pub fn surface_edge(scene: &Scene, surface: &Surface) -> Option<Edge> {
    let o = scene.object(surface.object_id)?;
    let k = surface.edge as usize;
    match &o.kind {
        ObjectKind::Solid(s) => {
            let outline = s.shape.outline().ok()?;
            (k < outline.len()).then(|| outline.edge(k))
        }
        ObjectKind::Mirror(m) => m.path.edges().get(k).copied(),
        ObjectKind::Absorber(a) => a.path.edges().get(k).copied(),
        ObjectKind::Splitter(s) => s.path.edges().get(k).copied(),
        ObjectKind::Detector(d) => d.path.edges().get(k).copied(),
        _ => None,
    }
}

/// The source object a ray came from.
pub(crate) fn ray_source<'s>(scene: &'s Scene, ray: &RayRecord) -> Option<&'s crate::scene::Object> {
    scene.object(ray.source)
}

/// Total power arriving at an event, W.
pub(crate) fn power_before(e: &Event) -> f64 {
    f64::from(e.before_s) + f64::from(e.before_p)
}

/// Total power leaving an event along the ray, W.
pub(crate) fn power_after(e: &Event) -> f64 {
    f64::from(e.after_s) + f64::from(e.after_p)
}

/// Whether the ray crossed an interface at this event (into the far medium).
pub(crate) fn is_crossing(e: &Event) -> bool {
    matches!(e.kind, EventKind::Refract | EventKind::Transmit) && e.edge != NONE
}

/// The index of the medium the ray travels in after this event.
fn index_after(e: &Event) -> f64 {
    if matches!(e.kind, EventKind::Refract | EventKind::Transmit) { f64::from(e.n2) } else { f64::from(e.n1) }
}

/// Position in `trace.rays` of the ray with id `id`.
pub(crate) fn ray_position(trace: &Trace, id: u32) -> Option<usize> {
    if id == NONE {
        return None;
    }
    // Rays are stored in id order; fall back to a search if that ever changes.
    match trace.rays.binary_search_by_key(&id, |r| r.id) {
        Ok(k) => Some(k),
        Err(_) => trace.rays.iter().position(|r| r.id == id),
    }
}

/// One stretch of a path: a ray (position in `trace.rays`) and how many of its stored events
/// belong to the path.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Stretch {
    pub ray: usize,
    pub n_events: usize,
}

/// The stretches of ray `ray_idx`'s path from its source: its ancestors' events up to the
/// point each branch split off, then its own. The second value is false when an ancestor was
/// not stored (the path then starts at the first stored ancestor).
pub(crate) fn path_stretches(trace: &Trace, ray_idx: usize) -> (Vec<Stretch>, bool) {
    let mut out = Vec::new();
    let Some(ray) = trace.rays.get(ray_idx) else {
        return (out, false);
    };
    out.push(Stretch { ray: ray_idx, n_events: ray.n_events as usize });
    let mut child: &RayRecord = ray;
    let mut complete = true;
    // A branch never has more ancestors than stored rays; the bound guards against a cycle.
    for _ in 0..trace.rays.len() {
        if child.parent == NONE {
            break;
        }
        let Some(p) = ray_position(trace, child.parent) else {
            complete = false;
            break;
        };
        let parent = &trace.rays[p];
        let split = trace.events_of(child).first();
        let events = trace.events_of(parent);
        // The branch starts where the parent met the same surface at the same point.
        let at = split.and_then(|s| {
            events.iter().position(|e| {
                e.point == s.point && e.object_slot == s.object_slot && e.edge == s.edge && !e.kind.is_end()
            })
        });
        let n = at.unwrap_or(events.len());
        out.push(Stretch { ray: p, n_events: n });
        child = parent;
    }
    out.reverse();
    (out, complete)
}

// ---------------------------------------------------------------------------------------
// The explanation.

/// What one event did to the ray.
#[derive(Clone, Debug, PartialEq)]
pub struct Step {
    pub kind: EventKind,
    pub point: Vec2,
    /// The id of the stored ray this event belongs to (a branch's events follow its parent's).
    pub ray_id: u32,
    /// The surface (`None` for the launch, an escape or the event limit).
    pub surface: Option<Surface>,
    /// Index on the arriving side and on the far side at the ray's wavelength.
    pub n1: f64,
    pub n2: f64,
    /// Angle of incidence from the surface normal, degrees (`None` without a surface).
    pub incidence_deg: Option<f64>,
    /// Refraction angle from Snell's law, degrees, where a transmitted ray exists.
    pub refraction_deg: Option<f64>,
    /// Critical angle, degrees, where light goes from a denser into a rarer medium.
    pub critical_deg: Option<f64>,
    /// Fresnel coefficients at an interface between different indices.
    pub fresnel: Option<Fresnel>,
    /// Power arriving and leaving along this path, W.
    pub power_before_w: f64,
    pub power_after_w: f64,
    /// Geometric and optical path length (Σ n·length) from the source to this event, mm.
    pub path_mm: f64,
    pub optical_path_mm: f64,
}

impl Step {
    /// The statement people read: what happened here and why.
    pub fn statement(&self) -> String {
        match (self.kind, self.incidence_deg, self.critical_deg, self.refraction_deg) {
            (EventKind::Tir, Some(i), Some(c), _) => {
                format!("total internal reflection: {i:.1}° exceeds the critical angle {c:.1}°")
            }
            (EventKind::Refract, Some(i), _, Some(r)) => format!("refracted: {i:.1}° → {r:.1}° (Snell)"),
            (EventKind::Reflect, Some(i), _, _) => match self.fresnel {
                Some(_) => format!("partially reflected at {i:.1}° (Fresnel)"),
                None => format!("reflected at {i:.1}°"),
            },
            (EventKind::Transmit, _, _, _) => "passed through without bending".to_owned(),
            (EventKind::Launch, _, _, _) => "launched".to_owned(),
            (EventKind::Absorb, _, _, _) => "absorbed".to_owned(),
            (EventKind::Detect, _, _, _) => "detected".to_owned(),
            (EventKind::Escape, _, _, _) => "escaped the scene".to_owned(),
            (EventKind::Limit, _, _, _) => "stopped by the event limit (trapped)".to_owned(),
            (EventKind::Dropped, _, _, _) => "dropped below the power threshold".to_owned(),
            (kind, _, _, _) => kind.word().to_owned(),
        }
    }
}

/// Every event along one ray's path from its source, explained.
#[derive(Clone, Debug, PartialEq)]
pub struct RayExplanation {
    /// Position of the explained ray in `trace.rays`, and its id.
    pub ray_idx: usize,
    pub ray_id: u32,
    pub wavelength_nm: f64,
    /// The source's id and name.
    pub source: Option<(u64, String)>,
    pub steps: Vec<Step>,
    /// False when part of the path was not stored (an ancestor branch is missing, or the
    /// event cap cut the trace).
    pub complete: bool,
}

/// Explains ray `ray_idx` (a position in `trace.rays`). A branch split off in tree mode is
/// explained from its source: its ancestors' events up to the split, then its own. Returns
/// `None` when there is no such stored ray.
pub fn explain_ray(scene: &Scene, trace: &Trace, ray_idx: usize) -> Option<RayExplanation> {
    let ray = trace.rays.get(ray_idx)?;
    let (stretches, complete) = path_stretches(trace, ray_idx);
    let mut steps = Vec::new();
    let (mut path_mm, mut optical_mm) = (0.0, 0.0);
    let mut last: Option<(Vec2, f64)> = None;
    for st in &stretches {
        let r = &trace.rays[st.ray];
        for e in trace.events_of(r).iter().take(st.n_events) {
            if let Some((p, n)) = last {
                let len = (e.point - p).norm();
                path_mm += len;
                optical_mm += n * len;
            }
            last = Some((e.point, index_after(e)));
            steps.push(step(trace, e, path_mm, optical_mm));
        }
    }
    let source = ray_source(scene, ray).map(|o| (o.id, o.name.clone()));
    Some(RayExplanation {
        ray_idx,
        ray_id: ray.id,
        wavelength_nm: ray.wavelength_nm,
        source,
        steps,
        complete: complete && !trace.events_truncated,
    })
}

fn step(trace: &Trace, e: &Event, path_mm: f64, optical_path_mm: f64) -> Step {
    let surface = event_surface(trace, e);
    let (n1, n2) = (f64::from(e.n1), f64::from(e.n2));
    let has_surface = surface.is_some() && e.kind != EventKind::Launch;
    let incidence_deg = has_surface.then_some(f64::from(e.incidence_deg));
    let interface =
        has_surface && n1 != n2 && matches!(e.kind, EventKind::Refract | EventKind::Reflect | EventKind::Tir);
    let f = incidence_deg.filter(|_| interface).map(|i| fresnel(n1, n2, i.to_radians().cos()));
    let refraction_deg = f.and_then(|f| f.cos_t).map(|c| c.clamp(-1.0, 1.0).acos().to_degrees());
    let critical_deg = if interface { critical_angle(n1, n2).map(f64::to_degrees) } else { None };
    Step {
        kind: e.kind,
        point: e.point,
        ray_id: e.ray,
        surface,
        n1,
        n2,
        incidence_deg,
        refraction_deg,
        critical_deg,
        fresnel: f,
        power_before_w: power_before(e),
        power_after_w: power_after(e),
        path_mm,
        optical_path_mm,
    }
}

impl fmt::Display for RayExplanation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let source =
            self.source.as_ref().map_or_else(|| "an unknown source".to_owned(), |(id, n)| format!("\"{n}\" (id {id})"));
        writeln!(f, "ray {} (id {}) at {} nm from {source}", self.ray_idx, self.ray_id, self.wavelength_nm)?;
        if !self.complete {
            writeln!(
                f,
                "note: part of this path was not stored (event cap or a missing branch); shown as far as it was"
            )?;
        }
        writeln!(
            f,
            "{:>3} {:<9} {:>21} {:<24} {:>15} {:>7} {:>7} {:>8} {:>8} {:>8} {:>8} {:>11} {:>11} {:>10}",
            "#",
            "event",
            "point (mm)",
            "surface",
            "n1 -> n2",
            "inc °",
            "out °",
            "Rs",
            "Rp",
            "Ts",
            "Tp",
            "before W",
            "after W",
            "OPL mm"
        )?;
        for (k, s) in self.steps.iter().enumerate() {
            let point = format!("({:.4}, {:.4})", s.point.x, s.point.y);
            let surface = s
                .surface
                .as_ref()
                .map_or_else(|| "-".to_owned(), |x| format!("{} #{} edge {}", x.object, x.object_id, x.edge));
            let angle = |a: Option<f64>| a.map_or_else(|| "-".to_owned(), |v| format!("{v:.2}"));
            let coef = |v: Option<f64>| v.map_or_else(|| "-".to_owned(), |v| format!("{v:.5}"));
            let fr = s.fresnel;
            writeln!(
                f,
                "{k:>3} {:<9} {point:>21} {surface:<24} {:>15} {:>7} {:>7} {:>8} {:>8} {:>8} {:>8} {:>11.4e} {:>11.4e} {:>10.4}",
                s.kind.word(),
                format!("{:.5} -> {:.5}", s.n1, s.n2),
                angle(s.incidence_deg),
                angle(s.refraction_deg),
                coef(fr.map(|f| f.rs)),
                coef(fr.map(|f| f.rp)),
                coef(fr.map(|f| f.ts)),
                coef(fr.map(|f| f.tp)),
                s.power_before_w,
                s.power_after_w,
                s.optical_path_mm,
            )?;
            if matches!(s.kind, EventKind::Tir | EventKind::Refract) || s.fresnel.is_some() {
                writeln!(f, "    {}", s.statement())?;
            }
        }
        Ok(())
    }
}
