//! Checks a scene for everything that would make a trace meaningless, and says how to fix it.
//!
//! Problems are data: a severity, the object, the field at fault, what is wrong and what to
//! do. Text for people is made only by [`Problem`]'s `Display` and by the command line.
//!
//! Supported range (see docs/scene-format.md): every coordinate within
//! ±[`MAX_COORDINATE_MM`]; every solid and thin element at least [`MIN_RELATIVE_SIZE`] of the
//! scene's size; bulges within ±[`MAX_BULGE`]; a source's power at most
//! [`MAX_SOURCE_POWER_W`] and all sources together at most [`MAX_TOTAL_POWER_W`]. The engine's
//! tolerances scale with the scene's size, so outside this range small parts would be missed
//! or merged.

use std::collections::{HashMap, HashSet};
use std::fmt;
use std::sync::Arc;

use super::{
    Emission, MAX_DETECTOR_BINS, MAX_RAYS_PER_SOURCE, MAX_SPECTRUM_LINES, ObjectKind, Path, SCENE_VERSION, Scene, Shape,
};
use crate::geom::{Aabb, Outline, OutlineError, Vec2, crossing_pairs};
use crate::optics::Material;
use crate::optics::material::{Dispersion, IndexCheck, MAX_PLAUSIBLE_INDEX, MIN_PLAUSIBLE_INDEX, check_index};

/// Most points on one thin element.
pub const MAX_PATH_POINTS: usize = 100_000;
/// Largest |x| or |y| of any point of a scene, in mm (a kilometre).
pub const MAX_COORDINATE_MM: f64 = 1e6;
/// Smallest size of a solid or thin element as a fraction of the scene's size (the larger of
/// its extent and its largest coordinate). The engine probes 1e-7 of the scene's size beyond
/// a surface, so anything near that size is missed.
pub const MIN_RELATIVE_SIZE: f64 = 1e-6;
/// Largest |bulge| of an arc edge (an arc then closes to within a millionth of a circle).
pub const MAX_BULGE: f64 = 1e6;
/// Largest power of one source, in watts.
pub const MAX_SOURCE_POWER_W: f64 = 1e12;
/// Largest power of all sources together, in watts.
pub const MAX_TOTAL_POWER_W: f64 = 1e15;
/// Longest piece of user text (a name, a token) repeated in a message, in characters.
pub const MAX_ECHO_CHARS: usize = 60;

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
    /// The object concerned, by id and name; `None` for the scene as a whole (settings,
    /// materials, the ambient medium). See also [`Problem::object_id`].
    pub object: Option<(u64, String)>,
    /// The field at fault as a path from the object (`"shape.apex_deg"`,
    /// `"emission.spectrum[1].weight"`) or, without an object, from the top of the file
    /// (`"settings.threshold"`, `"materials[0].dispersion"`); `None` when no one field is
    /// at fault.
    pub field: Option<String>,
    /// What is wrong, as a sentence without the object's name.
    pub message: String,
    /// What to do about it, where there is something to say.
    pub hint: Option<String>,
    /// Line and column (from 1) of the object in the file it was read from, where known;
    /// filled in by [`super::file::from_str`].
    pub at: Option<(usize, usize)>,
}

impl Problem {
    /// The id of the object concerned.
    pub fn object_id(&self) -> Option<u64> {
        self.object.as_ref().map(|o| o.0)
    }

    /// The name of the object concerned.
    pub fn object_name(&self) -> Option<&str> {
        self.object.as_ref().map(|o| o.1.as_str())
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sev = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        match &self.object {
            Some((id, name)) => write!(f, "{sev}: object {id} \"{}\": {}", shorten(name), self.message)?,
            None => write!(f, "{sev}: {}", self.message)?,
        }
        if let Some(hint) = &self.hint {
            write!(f, "; {hint}")?;
        }
        Ok(())
    }
}

/// `text` cut to [`MAX_ECHO_CHARS`] characters with "…" when longer, so that a message never
/// repeats a huge token in full.
pub fn shorten(text: &str) -> std::borrow::Cow<'_, str> {
    match text.char_indices().nth(MAX_ECHO_CHARS) {
        None => std::borrow::Cow::Borrowed(text),
        Some((cut, _)) => std::borrow::Cow::Owned(format!("{}…", &text[..cut])),
    }
}

/// `text` with every run of non-blank characters longer than [`MAX_ECHO_CHARS`] cut with "…".
pub fn shorten_words(text: &str) -> String {
    let mut out = String::with_capacity(text.len().min(4096));
    let mut run = 0usize;
    let mut cut = false;
    for ch in text.chars() {
        if ch.is_whitespace() {
            run = 0;
            cut = false;
            out.push(ch);
        } else {
            run += 1;
            if run <= MAX_ECHO_CHARS {
                out.push(ch);
            } else if !cut {
                out.push('…');
                cut = true;
            }
        }
    }
    out
}

/// A number as people read it: plain, or in exponent form when very large or very small.
fn show(v: f64) -> String {
    if v.is_finite() && v != 0.0 && !(1e-6..1e9).contains(&v.abs()) { format!("{v:e}") } else { format!("{v}") }
}

/// A computed number to four significant digits, shown as by [`show`].
fn show_approx(v: f64) -> String {
    show(format!("{v:.3e}").parse().unwrap_or(v))
}

struct Collector {
    problems: Vec<Problem>,
    current: Option<(u64, String)>,
}

impl Collector {
    /// A warning with no field or hint.
    fn warning(&mut self, message: impl Into<String>) {
        self.push(Severity::Warning, "", message, "");
    }
    /// An error about `field` (empty: none) with a hint (empty: none).
    fn err(&mut self, field: &str, message: impl Into<String>, hint: &str) {
        self.push(Severity::Error, field, message, hint);
    }
    fn warn(&mut self, field: &str, message: impl Into<String>, hint: &str) {
        self.push(Severity::Warning, field, message, hint);
    }
    fn push(&mut self, severity: Severity, field: &str, message: impl Into<String>, hint: &str) {
        self.problems.push(Problem {
            severity,
            object: self.current.clone(),
            field: (!field.is_empty()).then(|| field.to_owned()),
            message: message.into(),
            hint: (!hint.is_empty()).then(|| hint.to_owned()),
            at: None,
        });
    }
}

fn finite_point(p: (f64, f64)) -> bool {
    p.0.is_finite() && p.1.is_finite()
}

/// The field of a shape that a message from [`Shape::outline`] is about (`"shape.apex_deg"`),
/// found by the field's name or the words used for it; `"shape"` when none is named.
fn shape_field(message: &str) -> String {
    // Longer names first, so that "thickness_start" is not taken for "thickness".
    const NAMES: [(&str, &str); 26] = [
        ("thickness_start", "thickness_start"),
        ("thickness_end", "thickness_end"),
        ("notch_angle_deg", "notch_angle_deg"),
        ("notch angle", "notch_angle_deg"),
        ("notch_start", "notch_start"),
        ("notch_end", "notch_end"),
        ("notch depth", "notch_depth"),
        ("notches", "notches"),
        ("density_ratio", "density_ratio"),
        ("bend radius", "bend_radius"),
        ("bend_deg", "bend_deg"),
        ("length_in", "length_in"),
        ("length_out", "length_out"),
        ("apex angle", "apex_deg"),
        // A lens radius message also names the diameter it is compared with.
        ("r1", "r1"),
        ("r2", "r2"),
        ("diameter", "diameter"),
        ("thickness", "thickness"),
        ("bulge", "bulges"),
        ("position", "position"),
        ("height", "height"),
        ("length", "length"),
        ("radius", "radius"),
        ("width", "width"),
        ("side", "side"),
        ("points", "points"),
    ];
    NAMES
        .iter()
        .find(|(word, _)| message.contains(word))
        .map_or_else(|| "shape".to_owned(), |(_, f)| format!("shape.{f}"))
}

/// The largest |x| or |y| in a box (infinite for an empty one).
fn reach(b: &Aabb) -> f64 {
    b.min.x.abs().max(b.min.y.abs()).max(b.max.x.abs()).max(b.max.y.abs())
}

/// Where an object lies, for the range and size checks made once the whole scene is known.
struct Extent {
    id: u64,
    name: String,
    bbox: Aabb,
    /// Whether its size matters (solids and thin elements; not sources).
    sized: bool,
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
        c.err(
            "version",
            format!("the scene is version {}, this build reads versions 1 to {SCENE_VERSION}", scene.version),
            "use a newer build",
        );
    }
    let wavelengths = source_wavelengths(scene);
    match scene.material(&scene.ambient) {
        None => c.err(
            "ambient",
            format!("the ambient material \"{}\" is not defined", shorten(&scene.ambient)),
            &material_hint(),
        ),
        Some(m) => check_indices(&mut c, "ambient", &m, &wavelengths),
    }
    let s = &scene.settings;
    if !(s.threshold.is_finite() && (0.0..1.0).contains(&s.threshold)) {
        c.err(
            "settings.threshold",
            format!("settings.threshold must be at least 0 and below 1, it is {}", show(s.threshold)),
            "",
        );
    }
    if s.max_depth == 0 || s.max_depth > 100_000 {
        c.err("settings.max_depth", format!("settings.max_depth must be from 1 to 100000, it is {}", s.max_depth), "");
    }
    if !(s.margin.is_finite() && (0.0..=MAX_COORDINATE_MM).contains(&s.margin)) {
        c.err(
            "settings.margin",
            format!("settings.margin must be from 0 to {MAX_COORDINATE_MM} mm, it is {}", show(s.margin)),
            "",
        );
    }
    let mut names = HashSet::new();
    for (k, m) in scene.materials.iter().enumerate() {
        c.current = None;
        if !names.insert(m.name.as_str()) {
            c.err(
                &format!("materials[{k}].name"),
                format!("the material \"{}\" is defined twice", shorten(&m.name)),
                "rename or remove one of them",
            );
        }
        check_material(&mut c, k, m);
    }
    let mut ids = HashSet::new();
    let mut object_names = HashSet::new();
    // Once, not once per solid: a scene of many solids would check in quadratic time.
    let wavelengths = source_wavelengths(scene);
    // Usable solid outlines, for the overlap check at the end.
    let mut usable: Vec<(u64, &str, Arc<Outline>, Aabb)> = Vec::new();
    // Where each object lies, for the range and size checks, and each usable solid's outline
    // key, for the duplicate check.
    let mut extents: Vec<Extent> = Vec::new();
    let mut outline_keys: Vec<(u64, &str, &str, Arc<Outline>)> = Vec::new();
    let mut total_power_w = 0.0;
    for o in &scene.objects {
        c.current = Some((o.id, o.name.clone()));
        if !ids.insert(o.id) {
            c.err("id", format!("the id {} is used by more than one object", o.id), "give each object its own id");
        }
        if !object_names.insert(o.name.as_str()) {
            c.warn("name", "another object has the same name; results are reported by name", "rename one of them");
        }
        let mut extent = |bbox: Aabb, sized: bool| extents.push(Extent { id: o.id, name: o.name.clone(), bbox, sized });
        match &o.kind {
            ObjectKind::Solid(solid) => {
                match scene.material(&solid.material) {
                    None => c.err(
                        "material",
                        format!("the material \"{}\" is not defined", shorten(&solid.material)),
                        &material_hint(),
                    ),
                    Some(m) => {
                        for &nm in &wavelengths {
                            if !m.is_in_valid_range(nm) {
                                c.warn(
                                    "material",
                                    format!(
                                        "{nm} nm is outside the range where the data for \"{}\" are valid ({}–{} nm)",
                                        shorten(&m.name),
                                        m.valid_nm.0,
                                        m.valid_nm.1
                                    ),
                                    "",
                                );
                            }
                        }
                        check_indices(&mut c, "material", &m, &wavelengths);
                    }
                }
                if let Shape::Outline { bulges, .. } = &solid.shape {
                    check_bulges(&mut c, "shape.bulges", bulges);
                }
                match &checks.check_shape(&mut old_shapes, o.id, &solid.shape).outline {
                    Err(ShapeFault::Build(e)) => {
                        c.err(&shape_field(e), format!("the {} cannot be built: {e}", solid.shape.word()), "");
                    }
                    Err(ShapeFault::Outline(e)) => match solid.shape.outline() {
                        // Out of range, rounding spoils the outline checks; the range check says why.
                        Ok(outline) if !(reach(&outline.aabb()) <= MAX_COORDINATE_MM) => extent(outline.aabb(), true),
                        _ => c.err("shape", format!("the {} is not a usable outline: {e}", solid.shape.word()), ""),
                    },
                    Ok((outline, bb)) => {
                        extent(*bb, true);
                        outline_keys.push((o.id, o.name.as_str(), solid.material.as_str(), Arc::clone(outline)));
                        usable.push((o.id, o.name.as_str(), Arc::clone(outline), *bb));
                    }
                }
            }
            ObjectKind::Mirror(m) => {
                check_path(&mut c, &m.path, &mut extent);
                fraction(&mut c, "reflectance", m.reflectance);
            }
            ObjectKind::Absorber(a) => check_path(&mut c, &a.path, &mut extent),
            ObjectKind::Splitter(sp) => {
                check_path(&mut c, &sp.path, &mut extent);
                fraction(&mut c, "reflectance", sp.reflectance);
                fraction(&mut c, "transmittance", sp.transmittance);
                if sp.reflectance + sp.transmittance > 1.0 + 1e-12 {
                    c.err("reflectance", "reflectance + transmittance must not exceed 1", "");
                }
            }
            ObjectKind::Detector(d) => {
                check_path(&mut c, &d.path, &mut extent);
                for (name, v) in [("bins", d.bins), ("angle_bins", d.angle_bins)] {
                    if v == 0 || v > MAX_DETECTOR_BINS {
                        c.err(name, format!("{name} must be from 1 to {MAX_DETECTOR_BINS}, it is {v}"), "");
                    }
                }
            }
            ObjectKind::PointSource(p) => {
                if finite_point(p.position) {
                    extent(Aabb::from_points([super::to_vec(p.position)]), false);
                } else {
                    c.err("position", "the position must be finite", "");
                }
                if !(p.start_deg.is_finite() && p.end_deg.is_finite()) {
                    c.err("start_deg", "start_deg and end_deg must be finite", "");
                } else if p.end_deg <= p.start_deg || p.end_deg - p.start_deg > 360.0 {
                    c.err(
                        "end_deg",
                        format!("the angular range {}°…{}° is empty or wider than 360°", p.start_deg, p.end_deg),
                        "end_deg must exceed start_deg by at most 360",
                    );
                }
                total_power_w += check_emission(&mut c, &p.emission);
            }
            ObjectKind::BeamSource(b) => {
                if !finite_point(b.center) || !b.direction_deg.is_finite() {
                    c.err("center", "the centre and direction must be finite", "");
                }
                if !(b.width.is_finite() && b.width >= 0.0) {
                    c.err("width", format!("the width must be zero or positive, it is {}", show(b.width)), "");
                } else if finite_point(b.center) && b.direction_deg.is_finite() {
                    // The ends of the line the rays start from.
                    let (s, co) = b.direction_deg.to_radians().sin_cos();
                    let half = Vec2::new(-s, co) * (b.width / 2.0);
                    let centre = super::to_vec(b.center);
                    extent(Aabb::from_points([centre - half, centre + half]), false);
                }
                total_power_w += check_emission(&mut c, &b.emission);
            }
            ObjectKind::LambertianSource(l) => {
                if !finite_point(l.a) || !finite_point(l.b) {
                    c.err("a", "the end points must be finite", "");
                } else if (l.a.0 - l.b.0).hypot(l.a.1 - l.b.1) <= 0.0 {
                    c.err("b", "the emitter has zero length", "move one end");
                } else {
                    extent(Aabb::from_points([super::to_vec(l.a), super::to_vec(l.b)]), false);
                }
                total_power_w += check_emission(&mut c, &l.emission);
            }
        }
    }
    c.current = None;
    if !(total_power_w <= MAX_TOTAL_POWER_W) {
        c.err(
            "",
            format!(
                "the sources emit {total_power_w:e} W together, more than the {MAX_TOTAL_POWER_W:e} W a scene may have"
            ),
            "scale the powers down; the budget is reported in proportion, so only ratios matter",
        );
    }
    ranges_and_sizes(&mut c, &extents);
    duplicates(&mut c, &outline_keys);
    overlaps(&mut c, &usable, checks);
    if !scene.objects.iter().any(|o| o.kind.is_source()) {
        c.warning("the scene has no light source");
    }
    let mut problems = c.problems;
    problems.sort_by_key(|p| p.severity != Severity::Error);
    problems
}

/// Every object within ±[`MAX_COORDINATE_MM`], and every solid and thin element at least
/// [`MIN_RELATIVE_SIZE`] of the scene's size.
fn ranges_and_sizes(c: &mut Collector, extents: &[Extent]) {
    // The scene's size counts only what lies in range, so one far-away object is reported
    // alone instead of making everything else look too small.
    let mut scene_box = Aabb::EMPTY;
    for e in extents.iter().filter(|e| reach(&e.bbox) <= MAX_COORDINATE_MM) {
        scene_box = scene_box.union(&e.bbox);
    }
    let scene_size = scene_box.extent().max(reach(&scene_box));
    let min_size = MIN_RELATIVE_SIZE * scene_size;
    for e in extents {
        c.current = Some((e.id, e.name.clone()));
        if !(reach(&e.bbox) <= MAX_COORDINATE_MM) {
            let far = if e.bbox.min.x.abs().max(e.bbox.min.y.abs()) > e.bbox.max.x.abs().max(e.bbox.max.y.abs()) {
                e.bbox.min
            } else {
                e.bbox.max
            };
            c.err(
                "",
                format!(
                    "it reaches ({}, {}) mm, outside the supported area of ±{MAX_COORDINATE_MM:e} mm around the origin",
                    show(far.x),
                    show(far.y)
                ),
                "move it nearer the origin, or draw the scene in larger units",
            );
        } else if e.sized && !(e.bbox.extent() >= min_size) {
            c.err(
                "",
                format!(
                    "it is {} mm across, less than {MIN_RELATIVE_SIZE:e} of the scene's size ({} mm), too small for the trace to resolve",
                    show_approx(e.bbox.extent()),
                    show_approx(scene_size)
                ),
                "make it larger, or move far-away objects nearer",
            );
        }
    }
    c.current = None;
}

/// A solid's outline with its vertices and bulges rounded to about a billionth of its own
/// size and started at its smallest vertex, so equal outlines give equal keys.
/// The rounding step (as a power of two) and the rounded vertices and bulges.
type OutlineKey = (i32, Vec<(i64, i64, i64)>);

fn outline_key(o: &Outline) -> OutlineKey {
    // A power of two, so that outlines of nearly the same size share it; it is part of the
    // key, so a copy scaled by a power of two (concentric balls of radius 1 and 2) does not
    // round to the same key.
    let exponent = (1e-9 * o.aabb().extent()).max(f64::MIN_POSITIVE).log2().ceil();
    let quantum = exponent.exp2();
    let mut key: Vec<(i64, i64, i64)> = o
        .vertices
        .iter()
        .zip(&o.bulges)
        .map(|(v, b)| ((v.x / quantum).round() as i64, (v.y / quantum).round() as i64, (b * 1e9).round() as i64))
        .collect();
    if let Some(start) = (0..key.len()).min_by_key(|&i| (key[i].0, key[i].1)) {
        key.rotate_left(start);
    }
    (exponent as i32, key)
}

/// Warns about solids with the same outline as an earlier one (a paste too many): where two
/// solids coincide, only one of them takes effect. Hashing keeps this linear.
fn duplicates(c: &mut Collector, solids: &[(u64, &str, &str, Arc<Outline>)]) {
    // Equal outlines have as many vertices: only solids that share their vertex count with
    // another need a key (a scene of one large outline then costs nothing here).
    let mut by_count: HashMap<usize, usize> = HashMap::new();
    for s in solids {
        *by_count.entry(s.3.vertices.len()).or_insert(0) += 1;
    }
    let keys: Vec<(u64, &str, &str, OutlineKey)> = solids
        .iter()
        .filter(|s| by_count.get(&s.3.vertices.len()).is_some_and(|&n| n > 1))
        .map(|(id, name, material, o)| (*id, *name, *material, outline_key(o)))
        .collect();
    let mut seen: HashMap<&OutlineKey, (u64, &str, &str)> = HashMap::new();
    for (id, name, material, key) in &keys {
        match seen.get(key) {
            None => {
                seen.insert(key, (*id, *name, *material));
            }
            Some(&(first_id, first_name, first_material)) => {
                c.current = Some((*id, (*name).to_owned()));
                let materials = if first_material == *material {
                    String::new()
                } else {
                    format!(" (of \"{}\", it of \"{}\")", shorten(first_material), shorten(material))
                };
                c.warn(
                    "shape",
                    format!(
                        "it has the same outline as solid {first_id} \"{}\"{materials}; where solids coincide only one of them takes effect",
                        shorten(first_name)
                    ),
                    "delete one of them or move it",
                );
            }
        }
    }
    c.current = None;
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

fn check_material(c: &mut Collector, k: usize, m: &Material) {
    let coeffs_ok = match &m.dispersion {
        Dispersion::Constant { n } => n.is_finite() && *n > 0.0,
        Dispersion::Cauchy { a, b_um2, c_um4 } => [a, b_um2, c_um4].iter().all(|v| v.is_finite()),
        Dispersion::SellmeierWavelength { c0, terms } | Dispersion::SellmeierSquared { c0, terms } => {
            c0.is_finite() && terms.iter().all(|(b, cc)| b.is_finite() && cc.is_finite())
        }
        Dispersion::PowerSeriesSquared { terms } => terms.iter().all(|(a, _)| a.is_finite()),
        Dispersion::Gas { terms } => terms.iter().all(|(b, cc)| b.is_finite() && cc.is_finite()),
    };
    let name = shorten(&m.name);
    if !coeffs_ok {
        c.err(
            &format!("materials[{k}].dispersion"),
            format!("material \"{name}\": every coefficient must be a finite number (and a constant index positive)"),
            "",
        );
    }
    if !(m.absorption_per_mm.is_finite() && m.absorption_per_mm >= 0.0) {
        c.err(
            &format!("materials[{k}].absorption_per_mm"),
            format!(
                "material \"{name}\": absorption_per_mm must be zero or positive, it is {}",
                show(m.absorption_per_mm)
            ),
            "",
        );
    }
    if !(m.valid_nm.0.is_finite() && m.valid_nm.1.is_finite() && m.valid_nm.0 < m.valid_nm.1) {
        c.err(
            &format!("materials[{k}].valid_nm"),
            format!("material \"{name}\": valid_nm must be a range (low, high) of wavelengths in nm"),
            "",
        );
    }
}

/// Checks the index of `m` (relative to air) at every traced wavelength with
/// [`check_index`]: an error where it is not finite or not positive (a formula at its pole,
/// n² < 0), a warning where it is implausible. The trace leaves out what fails here.
fn check_indices(c: &mut Collector, field: &str, m: &Material, wavelengths: &[f64]) {
    for &nm in wavelengths {
        let n = m.index_rel_air(nm);
        match check_index(n) {
            IndexCheck::Plausible => {}
            IndexCheck::Unusable => c.err(
                field,
                format!("the material \"{}\" gives no usable index at {nm} nm (n = {n})", shorten(&m.name)),
                "check its coefficients: at this wavelength the formula is at a pole or gives n² < 0",
            ),
            IndexCheck::Implausible => c.warn(
                field,
                format!(
                    "the material \"{}\" gives n = {n:.6e} at {nm} nm, outside {MIN_PLAUSIBLE_INDEX}–{MAX_PLAUSIBLE_INDEX}",
                    shorten(&m.name)
                ),
                "check its coefficients: the formula may be near a pole",
            ),
        }
    }
}

fn fraction(c: &mut Collector, name: &str, v: f64) {
    if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
        c.err(name, format!("{name} must be between 0 and 1, it is {}", show(v)), "");
    }
}

fn check_bulges(c: &mut Collector, field: &str, bulges: &[f64]) {
    if let Some((k, b)) = bulges.iter().enumerate().find(|(_, b)| b.is_finite() && b.abs() > MAX_BULGE) {
        c.err(
            &format!("{field}[{k}]"),
            format!("a bulge of {b:e} is beyond ±{MAX_BULGE:e}"),
            "a bulge is tan(angle/4): 1 is a half circle; use a smaller value",
        );
    }
}

fn check_path(c: &mut Collector, p: &Path, extent: &mut impl FnMut(Aabb, bool)) {
    if p.points.len() < 2 {
        c.err("path.points", format!("a thin element needs at least 2 points, it has {}", p.points.len()), "");
    }
    if p.points.len() > MAX_PATH_POINTS {
        c.err(
            "path.points",
            format!("a thin element may have at most {MAX_PATH_POINTS} points, it has {}", p.points.len()),
            "",
        );
    }
    if !p.points.iter().all(|&q| finite_point(q)) || !p.bulges.iter().all(|b| b.is_finite()) {
        c.err("path", "every point and bulge must be a finite number", "");
        return;
    }
    if !p.bulges.is_empty() && p.bulges.len() + 1 != p.points.len() {
        c.err(
            "path.bulges",
            format!("there are {} points but {} bulges", p.points.len(), p.bulges.len()),
            &format!("give one bulge per piece ({}) or none", p.points.len().saturating_sub(1)),
        );
        return;
    }
    check_bulges(c, "path.bulges", &p.bulges);
    let mut bbox = Aabb::EMPTY;
    for (k, e) in p.edges().iter().enumerate() {
        if e.chord_length() <= 0.0 {
            c.err(
                &format!("path.points[{}]", k + 1),
                format!("piece {} has zero length: points {k} and {} are the same", k + 1, k + 1),
                "remove the repeated point",
            );
            return;
        }
        bbox = bbox.union(&e.aabb());
    }
    if p.points.len() >= 2 && p.points.len() <= MAX_PATH_POINTS {
        extent(bbox, true);
    }
}

/// Checks a source's emission and returns its power (0 when it is not usable).
fn check_emission(c: &mut Collector, e: &Emission) -> f64 {
    if e.rays == 0 || e.rays > MAX_RAYS_PER_SOURCE {
        c.err("emission.rays", format!("rays must be from 1 to {MAX_RAYS_PER_SOURCE}, it is {}", e.rays), "");
    }
    let power_ok = e.power_w.is_finite() && (0.0..=MAX_SOURCE_POWER_W).contains(&e.power_w);
    if !power_ok {
        c.err(
            "emission.power_w",
            format!("power_w must be from 0 to {MAX_SOURCE_POWER_W:e} W, it is {}", show(e.power_w)),
            "only ratios of powers matter for the budget, so scale them down",
        );
    }
    if e.spectrum.is_empty() || e.spectrum.len() > MAX_SPECTRUM_LINES {
        c.err(
            "emission.spectrum",
            format!("the spectrum needs 1 to {MAX_SPECTRUM_LINES} lines, it has {}", e.spectrum.len()),
            "",
        );
    }
    let mut weights_ok = true;
    for (k, l) in e.spectrum.iter().enumerate() {
        if !(l.nm.is_finite() && (100.0..=20_000.0).contains(&l.nm)) {
            c.err(
                &format!("emission.spectrum[{k}].nm"),
                format!("a wavelength of {} nm is outside 100–20000 nm", show(l.nm)),
                "",
            );
        }
        if !(l.weight.is_finite() && l.weight >= 0.0) {
            weights_ok = false;
            c.err(
                &format!("emission.spectrum[{k}].weight"),
                format!("a spectral weight must be zero or positive, it is {}", show(l.weight)),
                "",
            );
        }
    }
    if weights_ok && !e.spectrum.is_empty() {
        let sum = e.spectrum.iter().map(|l| l.weight).sum::<f64>();
        if sum <= 0.0 {
            c.err(
                "emission.spectrum",
                "the spectral weights add up to zero",
                "give at least one line a positive weight",
            );
        } else if !sum.is_finite() {
            c.err(
                "emission.spectrum",
                "the spectral weights add up to more than the largest number",
                "weights are relative: scale them down, e.g. so that they add up to 1",
            );
        }
    }
    if power_ok { e.power_w } else { 0.0 }
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_runs_are_cut_and_short_ones_kept() {
        let long = "y".repeat(100);
        assert_eq!(shorten_words(&format!("field `{long}` here")), format!("field `{}… here", "y".repeat(59)));
        assert_eq!(shorten_words("short words stay"), "short words stay");
        assert_eq!(shorten(&"é".repeat(61)), format!("{}…", "é".repeat(60)));
        assert_eq!(shorten("name"), "name");
    }

    #[test]
    fn numbers_are_shown_plainly_unless_extreme() {
        assert_eq!(show(1.5), "1.5");
        assert_eq!(show(1e308), "1e308");
        assert_eq!(show(-2e-9), "-2e-9");
        assert_eq!(show(0.0), "0");
        assert_eq!(show_approx(65.000_000_000_000_5), "65");
    }

    #[test]
    fn shape_messages_name_their_field() {
        let field = |shape: Shape| shape.outline().map_or_else(|e| shape_field(&e), |_| "built".to_owned());
        let prism = Shape::Prism { position: (0.0, 0.0), apex_deg: 200.0, side: 3.0, rotation_deg: 0.0 };
        assert_eq!(field(prism), "shape.apex_deg");
        let wedge = Shape::Wedge {
            position: (0.0, 0.0),
            length: -1.0,
            thickness_start: 1.0,
            thickness_end: 1.0,
            rotation_deg: 0.0,
        };
        assert_eq!(field(wedge), "shape.length");
        let lens =
            Shape::Lens { position: (0.0, 0.0), diameter: 10.0, thickness: 1.0, r1: 2.0, r2: 0.0, rotation_deg: 0.0 };
        assert_eq!(field(lens), "shape.r1");
        assert_eq!(field(Shape::Ball { position: (0.0, 0.0), radius: -1.0 }), "shape.radius");
    }
}
