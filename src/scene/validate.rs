//! Checks a scene for everything that would make a trace meaningless, and says how to fix it.

use std::collections::{HashMap, HashSet};
use std::fmt;
use std::sync::Arc;

use super::Shape;
use super::{
    Emission, MAX_DETECTOR_BINS, MAX_RAYS_PER_SOURCE, MAX_SPECTRUM_LINES, ObjectKind, Path, SCENE_VERSION, Scene,
};
use crate::geom::{Aabb, Outline, OutlineError, Vec2, crossing_pairs};
use crate::optics::material::Dispersion;

/// Most points on one thin element.
pub const MAX_PATH_POINTS: usize = 100_000;

/// How serious a problem is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Severity {
    /// The scene cannot be traced as it is.
    Error,
    /// The scene can be traced, but a result may mislead.
    Warning,
}

/// One thing wrong with a scene.
#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    pub severity: Severity,
    /// The object concerned, by id and name.
    pub object: Option<(u64, String)>,
    pub message: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sev = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        match &self.object {
            Some((id, name)) => write!(f, "{sev}: object {id} \"{name}\": {}", self.message),
            None => write!(f, "{sev}: {}", self.message),
        }
    }
}

struct Collector {
    problems: Vec<Problem>,
    current: Option<(u64, String)>,
}

impl Collector {
    fn error(&mut self, message: impl Into<String>) {
        self.problems.push(Problem {
            severity: Severity::Error,
            object: self.current.clone(),
            message: message.into(),
        });
    }
    fn warning(&mut self, message: impl Into<String>) {
        self.problems.push(Problem {
            severity: Severity::Warning,
            object: self.current.clone(),
            message: message.into(),
        });
    }
}

fn finite_point(p: (f64, f64)) -> bool {
    p.0.is_finite() && p.1.is_finite()
}

/// Every problem of the scene, errors first in object order, then warnings.
pub fn validate(scene: &Scene) -> Vec<Problem> {
    validate_with(scene, &mut GeometryChecks::default())
}

/// Why a solid's shape gives no usable outline.
#[derive(Clone, Debug, PartialEq)]
pub enum ShapeFault {
    /// The primitive's parameters cannot make an outline (the message says why).
    Build(String),
    /// The outline was built but cannot be traced (crossing edges, zero area, ...).
    Outline(OutlineError),
}

/// A solid's shape as last checked, and the outcome.
#[derive(Clone, Debug, PartialEq)]
struct CheckedShape {
    shape: Shape,
    /// The outline and its bounding box, if usable.
    outline: Result<(Arc<Outline>, Aabb), ShapeFault>,
}

/// The costly geometric checks of a scene's solids (building and validating each outline,
/// finding pairs of solids whose boundaries cross), kept from one revision of a scene to the
/// next so that [`validate_with`] checks again only what changed: a shape equal to the one
/// checked before under the same object id keeps its outline and verdict, and only pairs
/// involving a changed solid are tested again. A default value knows nothing yet.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct GeometryChecks {
    shapes: HashMap<u64, CheckedShape>,
    /// Usable solids of the last check, in scene order.
    last_usable: Vec<(u64, Arc<Outline>)>,
    /// Pairs of solids found crossing by the last check: ids (the earlier in scene order
    /// first) and a crossing point.
    last_pairs: Vec<(u64, u64, Vec2)>,
    /// What the last check did: outlines validated, solid pairs tested.
    counts: (usize, usize),
}

impl GeometryChecks {
    /// The validated outline of the solid `id`, if the last check found it usable.
    pub fn outline(&self, id: u64) -> Option<&Arc<Outline>> {
        self.shapes.get(&id).and_then(|c| c.outline.as_ref().ok()).map(|(o, _)| o)
    }

    /// The validated outline of the solid `id` with its bounding box.
    pub fn outline_and_box(&self, id: u64) -> Option<(&Arc<Outline>, Aabb)> {
        self.shapes.get(&id).and_then(|c| c.outline.as_ref().ok()).map(|(o, b)| (o, *b))
    }

    /// Outlines built and validated, and pairs of solids tested for crossing boundaries, by
    /// the last check (for tests and benchmarks of the incremental path).
    pub fn last_counts(&self) -> (usize, usize) {
        self.counts
    }

    /// The outline of `shape` for object `id` and whether it is usable, from the previous
    /// check if the shape is unchanged.
    fn check_shape(&mut self, old: &mut HashMap<u64, CheckedShape>, id: u64, shape: &Shape) -> &CheckedShape {
        let entry = match old.remove(&id) {
            Some(c) if c.shape == *shape => c,
            before => {
                self.counts.0 += 1;
                let outline = match shape.outline() {
                    Err(e) => Err(ShapeFault::Build(e)),
                    Ok(o) => {
                        // A valid outline moved at a few vertices: test only the edges that moved.
                        let before = before.as_ref().and_then(|c| c.outline.as_ref().ok());
                        match before.and_then(|(b, bb)| o.validate_edited(b, bb)) {
                            Some(bb) => Ok((Arc::new(o), bb)),
                            None => o.validate_with_box().map(|bb| (Arc::new(o), bb)).map_err(ShapeFault::Outline),
                        }
                    }
                };
                CheckedShape { shape: shape.clone(), outline }
            }
        };
        self.shapes.entry(id).insert_entry(entry).into_mut()
    }
}

/// [`validate`], reusing and updating the geometric checks kept in `checks` from an
/// earlier revision of the scene (see [`GeometryChecks`]). Gives exactly what [`validate`]
/// gives.
#[allow(clippy::too_many_lines)] // one arm per object kind
pub fn validate_with(scene: &Scene, checks: &mut GeometryChecks) -> Vec<Problem> {
    let mut old_shapes = std::mem::take(&mut checks.shapes);
    checks.counts = (0, 0);
    let mut c = Collector { problems: Vec::new(), current: None };
    if scene.version == 0 || scene.version > SCENE_VERSION {
        c.error(format!(
            "the scene is version {}, this build reads versions 1 to {SCENE_VERSION}; use a newer build",
            scene.version
        ));
    }
    if scene.material(&scene.ambient).is_none() {
        c.error(format!("the ambient material \"{}\" is not defined; {}", scene.ambient, material_hint()));
    }
    let s = &scene.settings;
    if !(s.threshold.is_finite() && (0.0..1.0).contains(&s.threshold)) {
        c.error(format!("settings.threshold must be at least 0 and below 1, it is {}", s.threshold));
    }
    if s.max_depth == 0 || s.max_depth > 100_000 {
        c.error(format!("settings.max_depth must be from 1 to 100000, it is {}", s.max_depth));
    }
    if !(s.margin.is_finite() && s.margin >= 0.0) {
        c.error(format!("settings.margin must be zero or positive, it is {}", s.margin));
    }
    let mut names = HashSet::new();
    for m in &scene.materials {
        c.current = None;
        if !names.insert(m.name.as_str()) {
            c.error(format!("the material \"{}\" is defined twice", m.name));
        }
        check_material(&mut c, m);
    }
    let mut ids = HashSet::new();
    let mut object_names = HashSet::new();
    // Once, not once per solid: a scene of many solids would check in quadratic time.
    let wavelengths = source_wavelengths(scene);
    // Usable solid outlines, for the overlap check at the end.
    let mut usable: Vec<(u64, &str, Arc<Outline>, Aabb)> = Vec::new();
    for o in &scene.objects {
        c.current = Some((o.id, o.name.clone()));
        if !ids.insert(o.id) {
            c.error(format!("the id {} is used by more than one object; give each object its own id", o.id));
        }
        if !object_names.insert(o.name.as_str()) {
            c.warning("another object has the same name; results are reported by name");
        }
        match &o.kind {
            ObjectKind::Solid(solid) => {
                match scene.material(&solid.material) {
                    None => c.error(format!("the material \"{}\" is not defined; {}", solid.material, material_hint())),
                    Some(m) => {
                        for &nm in &wavelengths {
                            if !m.is_in_valid_range(nm) {
                                c.warning(format!(
                                    "{nm} nm is outside the range where the data for \"{}\" are valid ({}–{} nm)",
                                    m.name, m.valid_nm.0, m.valid_nm.1
                                ));
                            }
                        }
                    }
                }
                match &checks.check_shape(&mut old_shapes, o.id, &solid.shape).outline {
                    Err(ShapeFault::Build(e)) => c.error(format!("the {} cannot be built: {e}", solid.shape.word())),
                    Err(ShapeFault::Outline(e)) => {
                        c.error(format!("the {} is not a usable outline: {e}", solid.shape.word()));
                    }
                    Ok((outline, bb)) => usable.push((o.id, o.name.as_str(), Arc::clone(outline), *bb)),
                }
            }
            ObjectKind::Mirror(m) => {
                check_path(&mut c, &m.path);
                fraction(&mut c, "reflectance", m.reflectance);
            }
            ObjectKind::Absorber(a) => check_path(&mut c, &a.path),
            ObjectKind::Splitter(sp) => {
                check_path(&mut c, &sp.path);
                fraction(&mut c, "reflectance", sp.reflectance);
                fraction(&mut c, "transmittance", sp.transmittance);
                if sp.reflectance + sp.transmittance > 1.0 + 1e-12 {
                    c.error("reflectance + transmittance must not exceed 1");
                }
            }
            ObjectKind::Detector(d) => {
                check_path(&mut c, &d.path);
                for (name, v) in [("bins", d.bins), ("angle_bins", d.angle_bins)] {
                    if v == 0 || v > MAX_DETECTOR_BINS {
                        c.error(format!("{name} must be from 1 to {MAX_DETECTOR_BINS}, it is {v}"));
                    }
                }
            }
            ObjectKind::PointSource(p) => {
                if !finite_point(p.position) {
                    c.error("the position must be finite");
                }
                if !(p.start_deg.is_finite() && p.end_deg.is_finite()) {
                    c.error("start_deg and end_deg must be finite");
                } else if p.end_deg <= p.start_deg || p.end_deg - p.start_deg > 360.0 {
                    c.error(format!(
                        "the angular range {}°…{}° is empty or wider than 360°; end_deg must exceed start_deg by at most 360",
                        p.start_deg, p.end_deg
                    ));
                }
                check_emission(&mut c, &p.emission);
            }
            ObjectKind::BeamSource(b) => {
                if !finite_point(b.center) || !b.direction_deg.is_finite() {
                    c.error("the centre and direction must be finite");
                }
                if !(b.width.is_finite() && b.width >= 0.0) {
                    c.error(format!("the width must be zero or positive, it is {}", b.width));
                }
                check_emission(&mut c, &b.emission);
            }
            ObjectKind::LambertianSource(l) => {
                if !finite_point(l.a) || !finite_point(l.b) {
                    c.error("the end points must be finite");
                } else if (l.a.0 - l.b.0).hypot(l.a.1 - l.b.1) <= 0.0 {
                    c.error("the emitter has zero length; move one end");
                }
                check_emission(&mut c, &l.emission);
            }
        }
    }
    c.current = None;
    overlaps(&mut c, &usable, checks);
    if !scene.objects.iter().any(|o| o.kind.is_source()) {
        c.warning("the scene has no light source");
    }
    let mut problems = c.problems;
    problems.sort_by_key(|p| p.severity != Severity::Error);
    problems
}

/// Warns about pairs of solids whose boundaries cross: where they overlap, the medium is
/// ambiguous. Nested solids (one inside the other) and solids touching along a face are fine.
/// `solids`: id, name, outline and its box of every solid with a usable outline.
///
/// With few solids changed since the last check in `checks`, only pairs involving a changed
/// solid are tested (against the solids whose boxes meet its box); otherwise one tree over
/// the edges of all solids finds the crossing pairs, so nesting and crowding stay near
/// n log n. Either way each crossing pair's point comes from [`Outline::crossing_with`] with
/// the earlier solid first, so both ways give the same warnings.
fn overlaps(c: &mut Collector, solids: &[(u64, &str, Arc<Outline>, Aabb)], checks: &mut GeometryChecks) {
    let before: HashMap<u64, &Arc<Outline>> = checks.last_usable.iter().map(|(id, o)| (*id, o)).collect();
    let changed: Vec<bool> = solids.iter().map(|s| before.get(&s.0).is_none_or(|o| !Arc::ptr_eq(o, &s.2))).collect();
    let n_changed = changed.iter().filter(|&&x| x).count();
    let position: HashMap<u64, usize> = solids.iter().enumerate().map(|(i, s)| (s.0, i)).collect();
    let mut pairs: Vec<(usize, usize)> = Vec::new();
    let mut points: HashMap<(usize, usize), Vec2> = HashMap::new();
    let unique_ids = position.len() == solids.len();
    if unique_ids && (n_changed == 0 || (!checks.last_usable.is_empty() && n_changed <= 8.max(solids.len() / 8))) {
        // Keep the pairs of unchanged solids that still come in the same order.
        for &(a, b, p) in &checks.last_pairs {
            if let (Some(&i), Some(&j)) = (position.get(&a), position.get(&b)) {
                if !changed[i] && !changed[j] && i < j {
                    pairs.push((i, j));
                    points.insert((i, j), p);
                }
            }
        }
        for (i, s) in solids.iter().enumerate() {
            if !changed[i] {
                continue;
            }
            for (j, t) in solids.iter().enumerate() {
                // A pair of two changed solids is tested once, from the earlier.
                if j == i || (changed[j] && j < i) || !s.3.overlaps(&t.3) {
                    continue;
                }
                checks.counts.1 += 1;
                let (a, b) = (i.min(j), i.max(j));
                if let Some(p) = solids[a].2.crossing_with(&solids[b].2) {
                    pairs.push((a, b));
                    points.insert((a, b), p);
                }
            }
        }
    } else if solids.len() > 1 {
        let outlines: Vec<&Outline> = solids.iter().map(|s| s.2.as_ref()).collect();
        for (a, b) in crossing_pairs(&outlines) {
            checks.counts.1 += 1;
            if let Some(p) = outlines[a].crossing_with(outlines[b]) {
                pairs.push((a, b));
                points.insert((a, b), p);
            }
        }
    }
    pairs.sort_unstable();
    checks.last_pairs.clear();
    for (i, j) in pairs {
        let (a, b, p) = (&solids[i], &solids[j], points[&(i, j)]);
        checks.last_pairs.push((a.0, b.0, p));
        c.current = Some((a.0, a.1.to_owned()));
        c.warning(format!(
            "it overlaps solid {} \"{}\" near ({:.4}, {:.4}) mm without one containing the other; the medium there is ambiguous, so move one or make one fit inside the other",
            b.0, b.1, p.x, p.y
        ));
    }
    checks.last_usable = solids.iter().map(|s| (s.0, Arc::clone(&s.2))).collect();
    c.current = None;
}

fn material_hint() -> String {
    let names: Vec<String> = crate::optics::library().into_iter().map(|m| m.name).collect();
    format!("use one of the library materials ({}) or define it under `materials`", names.join(", "))
}

fn check_material(c: &mut Collector, m: &crate::optics::Material) {
    let coeffs_ok = match &m.dispersion {
        Dispersion::Constant { n } => n.is_finite() && *n > 0.0,
        Dispersion::Cauchy { a, b_um2, c_um4 } => [a, b_um2, c_um4].iter().all(|v| v.is_finite()),
        Dispersion::SellmeierWavelength { c0, terms } | Dispersion::SellmeierSquared { c0, terms } => {
            c0.is_finite() && terms.iter().all(|(b, cc)| b.is_finite() && cc.is_finite())
        }
        Dispersion::PowerSeriesSquared { terms } => terms.iter().all(|(a, _)| a.is_finite()),
        Dispersion::Gas { terms } => terms.iter().all(|(b, cc)| b.is_finite() && cc.is_finite()),
    };
    let prefix = format!("material \"{}\"", m.name);
    if !coeffs_ok {
        c.error(format!("{prefix}: every coefficient must be a finite number (and a constant index positive)"));
    }
    if !(m.absorption_per_mm.is_finite() && m.absorption_per_mm >= 0.0) {
        c.error(format!("{prefix}: absorption_per_mm must be zero or positive, it is {}", m.absorption_per_mm));
    }
    if !(m.valid_nm.0.is_finite() && m.valid_nm.1.is_finite() && m.valid_nm.0 < m.valid_nm.1) {
        c.error(format!("{prefix}: valid_nm must be a range (low, high) of wavelengths in nm"));
    }
}

fn fraction(c: &mut Collector, name: &str, v: f64) {
    if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
        c.error(format!("{name} must be between 0 and 1, it is {v}"));
    }
}

fn check_path(c: &mut Collector, p: &Path) {
    if p.points.len() < 2 {
        c.error(format!("a thin element needs at least 2 points, it has {}", p.points.len()));
    }
    if p.points.len() > MAX_PATH_POINTS {
        c.error(format!("a thin element may have at most {MAX_PATH_POINTS} points, it has {}", p.points.len()));
    }
    if !p.points.iter().all(|&q| finite_point(q)) || !p.bulges.iter().all(|b| b.is_finite()) {
        c.error("every point and bulge must be a finite number");
    }
    if !p.bulges.is_empty() && p.bulges.len() + 1 != p.points.len() {
        c.error(format!(
            "there are {} points but {} bulges; give one bulge per piece ({}) or none",
            p.points.len(),
            p.bulges.len(),
            p.points.len().saturating_sub(1)
        ));
    }
}

fn check_emission(c: &mut Collector, e: &Emission) {
    if e.rays == 0 || e.rays > MAX_RAYS_PER_SOURCE {
        c.error(format!("rays must be from 1 to {MAX_RAYS_PER_SOURCE}, it is {}", e.rays));
    }
    if !(e.power_w.is_finite() && e.power_w >= 0.0) {
        c.error(format!("power_w must be zero or positive, it is {}", e.power_w));
    }
    if e.spectrum.is_empty() || e.spectrum.len() > MAX_SPECTRUM_LINES {
        c.error(format!("the spectrum needs 1 to {MAX_SPECTRUM_LINES} lines, it has {}", e.spectrum.len()));
    }
    for l in &e.spectrum {
        if !(l.nm.is_finite() && (100.0..=20_000.0).contains(&l.nm)) {
            c.error(format!("a wavelength of {} nm is outside 100–20000 nm", l.nm));
        }
        if !(l.weight.is_finite() && l.weight >= 0.0) {
            c.error(format!("a spectral weight must be zero or positive, it is {}", l.weight));
        }
    }
    if !e.spectrum.is_empty() && e.spectrum.iter().map(|l| l.weight).sum::<f64>() <= 0.0 {
        c.error("the spectral weights add up to zero");
    }
}

/// Every wavelength any source emits.
pub fn source_wavelengths(scene: &Scene) -> Vec<f64> {
    let mut v: Vec<f64> = Vec::new();
    for o in &scene.objects {
        let e = match &o.kind {
            ObjectKind::PointSource(p) => &p.emission,
            ObjectKind::BeamSource(b) => &b.emission,
            ObjectKind::LambertianSource(l) => &l.emission,
            _ => continue,
        };
        for l in &e.spectrum {
            if !v.contains(&l.nm) {
                v.push(l.nm);
            }
        }
    }
    v
}
