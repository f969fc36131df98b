//! Where light can leave and where it did: the escape cone at a point on a solid's boundary,
//! and the escaped power broken down by the surface it last crossed.

use std::collections::HashMap;
use std::fmt;

use super::explain::{Surface, event_surface, is_crossing, path_stretches, power_before};
use crate::geom::Vec2;
use crate::scene::{ObjectKind, Scene};
use crate::trace::{Compiled, EventKind, Trace};

/// Why an escape cone could not be worked out.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum EscapeError {
    #[error("no object has id {0}; pick a solid's id from the scene")]
    NoObject(u64),
    #[error("object {0} is a {1}, not a solid; an escape cone needs a solid's boundary")]
    NotSolid(u64, &'static str),
    #[error("solid {id} cannot be built: {reason}")]
    BadShape { id: u64, reason: String },
    #[error("solid {id} has {n_edges} edges; edge {edge} does not exist (edges count from 0)")]
    NoEdge { id: u64, edge: u32, n_edges: usize },
    #[error("material \"{0}\" is not in the scene or the library")]
    NoMaterial(String),
    #[error("the index of \"{material}\" at {nm} nm is not a number; pick a wavelength inside its valid range")]
    NoIndex { material: String, nm: f64 },
}

/// The cone of directions inside a solid that leave through its boundary at one point.
#[derive(Clone, Debug, PartialEq)]
pub struct EscapeCone {
    /// The point on the edge nearest to the point asked about, mm.
    pub point: Vec2,
    /// Unit normal pointing out of the solid at `point`.
    pub outward_normal: Vec2,
    pub n_inside: f64,
    pub n_outside: f64,
    /// What is on the other side: a material name.
    pub outside: String,
    /// Half-angle of the cone about the normal (measured inside, from the inward normal
    /// line), degrees: the critical angle asin(n outside / n inside). `None` when
    /// n inside ≤ n outside: then every direction reaching the surface leaves.
    pub half_angle_deg: Option<f64>,
}

impl EscapeCone {
    /// Whether every direction reaching the surface from inside leaves.
    pub fn all_leave(&self) -> bool {
        self.half_angle_deg.is_none()
    }

    /// The share of an isotropic in-plane emitter's rays heading toward this face that fall in
    /// the cone: 2θc/π in 2D (1 when all leave).
    pub fn fraction_2d(&self) -> f64 {
        self.half_angle_deg.map_or(1.0, |c| 2.0 * c.to_radians() / std::f64::consts::PI)
    }
}

impl fmt::Display for EscapeCone {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.half_angle_deg {
            Some(c) => write!(
                f,
                "escape cone: ±{c:.2}° about the normal (n inside {:.5}, n outside {:.5} ({})); light arriving at a larger angle is totally internally reflected",
                self.n_inside, self.n_outside, self.outside
            ),
            None => write!(
                f,
                "no escape cone: n inside {:.5} ≤ n outside {:.5} ({}), so every direction reaching this surface leaves (partly reflected by Fresnel)",
                self.n_inside, self.n_outside, self.outside
            ),
        }
    }
}

/// The escape cone at `point` (mm, projected onto the edge) on edge `edge` of the solid with
/// id `object_id`, at `wavelength_nm`. The outside medium is what lies just beyond the edge
/// there: another solid touching it, the solid it is nested in, or the ambient medium.
pub fn escape_cone(
    scene: &Scene,
    object_id: u64,
    edge: u32,
    point: Vec2,
    wavelength_nm: f64,
) -> Result<EscapeCone, EscapeError> {
    escape_cone_with(scene, &Compiled::new(scene), object_id, edge, point, wavelength_nm)
}

/// [`escape_cone`] with the scene already compiled (the editor keeps one per revision).
pub fn escape_cone_with(
    scene: &Scene,
    compiled: &Compiled,
    object_id: u64,
    edge: u32,
    point: Vec2,
    wavelength_nm: f64,
) -> Result<EscapeCone, EscapeError> {
    let index = scene.object_index(object_id).ok_or(EscapeError::NoObject(object_id))?;
    let object = &scene.objects[index];
    let ObjectKind::Solid(solid) = &object.kind else {
        return Err(EscapeError::NotSolid(object_id, object.kind.word()));
    };
    let outline = solid.shape.outline().map_err(|reason| EscapeError::BadShape { id: object_id, reason })?;
    let k = edge as usize;
    if k >= outline.len() {
        return Err(EscapeError::NoEdge { id: object_id, edge, n_edges: outline.len() });
    }
    let e = outline.edge(k);
    let u = e.param_of(point);
    let on = e.point_at(u);
    let right = e.normal_at(u);
    // The right normal points out of a counter-clockwise outline.
    let outward = if outline.orientation() > 0.0 { right } else { -right };
    let n_of = |material: &str| -> Result<f64, EscapeError> {
        let m = scene.material(material).ok_or_else(|| EscapeError::NoMaterial(material.to_owned()))?;
        let n = m.index_rel_air(wavelength_nm);
        if n.is_finite() && n > 0.0 {
            Ok(n)
        } else {
            Err(EscapeError::NoIndex { material: material.to_owned(), nm: wavelength_nm })
        }
    };
    let n_inside = n_of(&solid.material)?;
    let probe = 1e-6 * compiled.scale.max(1.0);
    let medium = compiled.medium_at(on + outward * probe);
    let outside = match medium.checked_sub(1).and_then(|s| compiled.solids.get(s as usize)) {
        Some(s) => match scene.objects.get(s.object as usize).map(|o| &o.kind) {
            Some(ObjectKind::Solid(other)) => other.material.clone(),
            _ => scene.ambient.clone(),
        },
        None => scene.ambient.clone(),
    };
    let n_outside = n_of(&outside)?;
    let half_angle_deg = (n_outside < n_inside).then(|| (n_outside / n_inside).asin().to_degrees());
    Ok(EscapeCone { point: on, outward_normal: outward, n_inside, n_outside, outside, half_angle_deg })
}

/// Escaped power that last crossed one surface.
#[derive(Clone, Debug, PartialEq)]
pub struct EdgeShare {
    /// The surface; `None` for light that escaped without crossing any (straight from its
    /// source).
    pub surface: Option<Surface>,
    pub w: f64,
}

impl EdgeShare {
    /// A label for tables and JSON: `name (id 3) edge 2`, or `no surface`.
    pub fn label(&self) -> String {
        self.surface
            .as_ref()
            .map_or_else(|| "no surface".to_owned(), |s| format!("{} (id {}) edge {}", s.object, s.object_id, s.edge))
    }
}

/// Escaped power by the surface it left through.
#[derive(Clone, Debug, PartialEq)]
pub struct EscapedByEdge {
    /// Largest first.
    pub shares: Vec<EdgeShare>,
    /// Escaped power found in the stored events, W.
    pub stored_w: f64,
    /// Escaped power in the budget (all rays), W.
    pub budget_w: f64,
    /// True when the event cap cut the stored events (or the trace was stopped), so the
    /// shares cover only part of the escaped power.
    pub truncated: bool,
}

/// Escaped light broken down by object and edge. An escape event names no surface, so each
/// escape is put on the last interface its path crossed (refracted or passed through) before
/// it left, following a branch back to its parent; light that escaped without crossing any
/// is "no surface". Computed from stored events: see [`EscapedByEdge::truncated`].
pub fn escaped_by_edge(trace: &Trace) -> EscapedByEdge {
    let mut by: HashMap<Option<Surface>, f64> = HashMap::new();
    let mut stored_w = 0.0;
    for (k, ray) in trace.rays.iter().enumerate() {
        let events = trace.events_of(ray);
        let Some(last) = events.last().filter(|e| e.kind == EventKind::Escape) else {
            continue;
        };
        let w = power_before(last);
        stored_w += w;
        // Most escapes crossed a surface on their own ray; only the others need their parents.
        let own = events.iter().rev().find(|e| is_crossing(e));
        let crossed = own.or_else(|| {
            let (stretches, _) = path_stretches(trace, k);
            stretches.iter().rev().find_map(|st| {
                trace.events_of(&trace.rays[st.ray])[..st.n_events].iter().rev().find(|e| is_crossing(e))
            })
        });
        let surface = crossed.and_then(|e| event_surface(trace, e));
        *by.entry(surface).or_insert(0.0) += w;
    }
    let mut shares: Vec<EdgeShare> = by.into_iter().map(|(surface, w)| EdgeShare { surface, w }).collect();
    shares.sort_by(|a, b| b.w.total_cmp(&a.w).then_with(|| a.label().cmp(&b.label())));
    EscapedByEdge {
        shares,
        stored_w,
        budget_w: trace.budget.escaped,
        truncated: trace.events_truncated || trace.cancelled,
    }
}
