//! Turns a [`Scene`] into what the tracer needs: one flat list of edges in a BVH, each with
//! its owner and role, the nesting of solids, and an index table per wavelength and medium.

use std::collections::HashMap;
use std::sync::Arc;

use crate::geom::{Aabb, BoxTree, Bvh, BvhHit, Edge, Outline, Vec2};
use crate::scene::validate::{GeometryChecks, Severity, validate_with};
use crate::scene::{ObjectKind, Scene, Shape};

/// What an edge does to light.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Role {
    /// Boundary of solid number `solid` (index into [`Compiled::solids`]).
    Solid {
        solid: u32,
    },
    Mirror {
        reflectance: f64,
        one_sided: bool,
    },
    Absorber,
    Splitter {
        reflectance: f64,
        transmittance: f64,
    },
    /// Detector number `detector` (index into [`Compiled::detectors`]); `along` is the length
    /// of the detector's path before this piece.
    Detector {
        detector: u32,
        along: f64,
    },
}

#[derive(Clone, Copy, Debug)]
pub struct EdgeInfo {
    pub edge: Edge,
    /// Index of the owning object in `scene.objects`.
    pub object: u32,
    /// Index of the edge within its object, in the order the file gives the edges (a free
    /// outline written clockwise is run the other way internally; see [`file_edge_order`]).
    pub index: u32,
    pub role: Role,
}

#[derive(Clone, Debug)]
pub struct SolidInfo {
    pub object: u32,
    /// Shared with the validation that checked it, and with later revisions while unchanged.
    pub outline: Arc<Outline>,
    /// A point strictly inside the outline, if one was found (looked for only when there
    /// are solids to nest).
    pub interior: Option<Vec2>,
    /// +1 if the outline runs counter-clockwise (outward = right normal), −1 otherwise.
    pub orient: f64,
    /// The smallest solid containing this one, if any.
    pub parent: Option<u32>,
    /// Number of solids containing this one.
    pub depth: u32,
    pub bbox: Aabb,
    pub area: f64,
}

#[derive(Clone, Debug)]
pub struct DetectorInfo {
    pub object: u32,
    pub name: String,
    pub length: f64,
}

/// Crossing one or more solid boundaries at a point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Crossing {
    pub medium_before: u32,
    pub medium_after: u32,
    /// The hit whose surface forms the interface: on the solid that decides the new medium,
    /// else the first solid edge crossed.
    pub hit: BvhHit,
}

/// The next interface along a ray: where, which surface, and the media on both sides.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interface {
    pub t: f64,
    pub point: Vec2,
    /// Unit right normal of the edge (see [`Edge`]).
    pub normal: Vec2,
    /// Object index in `scene.objects` and edge index within it.
    pub object: u32,
    pub edge: u32,
    pub role: Role,
    pub medium_before: u32,
    /// Equal to `medium_before` for thin elements, which do not change the medium.
    pub medium_after: u32,
}

/// Media are numbered 0 for the ambient medium and `k + 1` for solid `k`.
///
/// A compiled scene can follow later revisions of its scene with [`Compiled::update`],
/// which rebuilds only what changed: outlines equal to those compiled before are not
/// validated again, only pairs of solids involving a changed solid are checked again, the
/// BVH is kept when no edge moved and refitted when edges moved but their number did not,
/// and nesting is found again only when a solid changed.
#[derive(Clone, Debug, Default)]
pub struct Compiled {
    pub(crate) edges: Vec<EdgeInfo>,
    pub(crate) bvh: Bvh,
    pub(crate) solids: Vec<SolidInfo>,
    pub(crate) detectors: Vec<DetectorInfo>,
    /// Material name of each medium.
    pub(crate) medium_names: Vec<String>,
    /// Absorption coefficient of each medium, 1/mm.
    pub(crate) alpha: Vec<f64>,
    pub(crate) wavelengths: Vec<f64>,
    /// `index[w][m]`: refractive index (relative to standard air) at wavelength `w` in medium `m`.
    pub(crate) index: Vec<Vec<f64>>,
    /// Rays leaving this box escape: [`Compiled::content_bounds`] with the scene's margin.
    pub(crate) bounds: Aabb,
    /// The box around every edge and source, before any margin.
    pub(crate) content_bounds: Aabb,
    /// A length typical of the scene (bounding-box extent), for tolerances.
    pub(crate) scale: f64,
    pub(crate) warnings: Vec<String>,
    /// Ids of objects left out because of errors.
    pub(crate) excluded: Vec<u64>,
    /// The geometric checks of this revision, reused by the next update.
    checks: GeometryChecks,
    /// Boxes of the solids, for point queries.
    solid_boxes: BoxTree,
}

/// What happened to the BVH in an update.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum BvhUpdate {
    /// No edge changed: the tree was kept as it was.
    #[default]
    Kept,
    /// Edges moved but their number stayed: the boxes were refitted.
    Refitted,
    /// Built from scratch (edges added or removed, or a refitted tree had degraded).
    Rebuilt,
}

/// What [`Compiled::update`] (or a first compile) had to redo.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct UpdateReport {
    /// Solid outlines built and validated (unchanged ones are reused).
    pub outlines_checked: usize,
    /// Pairs of solids tested for crossing boundaries.
    pub pairs_checked: usize,
    pub bvh: BvhUpdate,
    /// Whether the nesting of solids was worked out again.
    pub nesting: bool,
}

impl Compiled {
    /// Builds everything the tracer needs. Objects with errors are left out, each with a
    /// warning; nothing here fails.
    pub fn new(scene: &Scene) -> Self {
        Self::build(scene, GeometryChecks::default(), None).0
    }

    /// [`Compiled::new`] reusing geometric checks already made on this scene, e.g. those
    /// kept by [`crate::scene::file::Loaded`], so that loading and compiling a file
    /// validates each outline once.
    pub fn with_checks(scene: &Scene, checks: GeometryChecks) -> Self {
        Self::build(scene, checks, None).0
    }

    /// Brings this compiled scene up to date with `scene`, a later revision of the scene it
    /// was compiled from (any edit, applied to a copy or in place: objects are matched by
    /// id and compared with what was compiled, so no record of the edit is needed). The
    /// result is the same as `Compiled::new(scene)` except that a refitted BVH may list
    /// the edges met at exactly the same distance in another order.
    pub fn update(&mut self, scene: &Scene) -> UpdateReport {
        let mut prev = std::mem::take(self);
        let checks = std::mem::take(&mut prev.checks);
        let (next, report) = Self::build(scene, checks, Some(prev));
        *self = next;
        report
    }

    /// The geometric checks of the compiled revision.
    pub fn checks(&self) -> &GeometryChecks {
        &self.checks
    }

    /// Every edge the tracer sees (solid boundaries and thin-element pieces), with owner and role.
    pub fn edges(&self) -> &[EdgeInfo] {
        &self.edges
    }

    pub fn bvh(&self) -> &Bvh {
        &self.bvh
    }

    /// The solids traced, in scene order, with their nesting.
    pub fn solids(&self) -> &[SolidInfo] {
        &self.solids
    }

    pub fn detectors(&self) -> &[DetectorInfo] {
        &self.detectors
    }

    /// Material name of each medium (0 the ambient, k + 1 solid k).
    pub fn medium_names(&self) -> &[String] {
        &self.medium_names
    }

    /// Absorption coefficient of each medium, 1/mm.
    pub fn alpha(&self) -> &[f64] {
        &self.alpha
    }

    pub fn wavelengths(&self) -> &[f64] {
        &self.wavelengths
    }

    /// `index()[w][m]`: refractive index at wavelength `w` in medium `m`.
    pub fn index(&self) -> &[Vec<f64>] {
        &self.index
    }

    /// Rays leaving this box escape.
    pub fn bounds(&self) -> Aabb {
        self.bounds
    }

    /// A length typical of the scene, for tolerances.
    pub fn scale(&self) -> f64 {
        self.scale
    }

    /// The scene's problems (objects left out say so).
    pub fn warnings(&self) -> &[String] {
        &self.warnings
    }

    /// Ids of objects left out because of errors.
    pub fn excluded(&self) -> &[u64] {
        &self.excluded
    }

    /// The work shared by [`Compiled::new`] and [`Compiled::update`]; `prev` is the
    /// compiled previous revision, whose parts are reused where nothing changed.
    #[allow(clippy::too_many_lines)] // one arm per object kind
    fn build(scene: &Scene, mut checks: GeometryChecks, prev: Option<Self>) -> (Self, UpdateReport) {
        let mut report = UpdateReport::default();
        let mut warnings = Vec::new();
        let problems = validate_with(scene, &mut checks);
        (report.outlines_checked, report.pairs_checked) = checks.last_counts();
        let mut bad: Vec<u64> = problems
            .iter()
            .filter(|p| p.severity == Severity::Error)
            .filter_map(|p| p.object.as_ref().map(|o| o.0))
            .collect();
        for p in &problems {
            if p.severity == Severity::Error {
                warnings.push(format!("{p} (left out of the trace)"));
            } else {
                warnings.push(p.to_string());
            }
        }
        bad.sort_unstable();
        bad.dedup();
        // Per-solid results of the previous revision, by outline (shared while unchanged).
        let (prev_solids, prev_edges, prev_bvh) = match prev {
            Some(p) => (p.solids, Some(p.edges), Some(p.bvh)),
            None => (Vec::new(), None, None),
        };
        let by_outline: HashMap<*const Outline, &SolidInfo> =
            prev_solids.iter().map(|s| (Arc::as_ptr(&s.outline), s)).collect();
        let ambient = scene.material(&scene.ambient).unwrap_or_else(|| crate::optics::Material::constant("air", 1.0));
        let wavelengths = crate::scene::validate::source_wavelengths(scene);
        let mut media = vec![ambient];
        let mut edges = Vec::with_capacity(prev_edges.as_ref().map_or(0, Vec::len));
        let mut solids = Vec::with_capacity(prev_solids.len());
        let mut detectors = Vec::new();
        for (oi, o) in scene.objects.iter().enumerate() {
            if bad.binary_search(&o.id).is_ok() {
                continue;
            }
            let oi32 = oi as u32;
            let push_path = |edges: &mut Vec<EdgeInfo>, path: &crate::scene::Path, role: &dyn Fn(f64) -> Role| {
                let mut along = 0.0;
                for (k, e) in path.edges().into_iter().enumerate() {
                    edges.push(EdgeInfo { edge: e, object: oi32, index: k as u32, role: role(along) });
                    along += e.length();
                }
            };
            match &o.kind {
                ObjectKind::Solid(s) => {
                    let (Some((outline, bbox)), Some(material)) =
                        (checks.outline_and_box(o.id), scene.material(&s.material))
                    else {
                        continue;
                    };
                    let k = solids.len() as u32;
                    let file_edge = file_edge_order(&s.shape, outline.len());
                    for (i, e) in outline.edges().enumerate() {
                        let index = file_edge(i);
                        edges.push(EdgeInfo { edge: e, object: oi32, index, role: Role::Solid { solid: k } });
                    }
                    let info = match by_outline.get(&Arc::as_ptr(outline)) {
                        Some(&old) => SolidInfo { object: oi32, parent: None, depth: 0, ..old.clone() },
                        None => {
                            let area = outline.signed_area();
                            SolidInfo {
                                object: oi32,
                                orient: if area >= 0.0 { 1.0 } else { -1.0 },
                                bbox,
                                area: area.abs(),
                                // Found by `nest` when there is another solid to nest with.
                                interior: None,
                                outline: Arc::clone(outline),
                                parent: None,
                                depth: 0,
                            }
                        }
                    };
                    solids.push(info);
                    media.push(material);
                }
                ObjectKind::Mirror(m) => push_path(&mut edges, &m.path, &|_| Role::Mirror {
                    reflectance: m.reflectance,
                    one_sided: m.one_sided,
                }),
                ObjectKind::Absorber(a) => push_path(&mut edges, &a.path, &|_| Role::Absorber),
                ObjectKind::Splitter(s) => push_path(&mut edges, &s.path, &|_| Role::Splitter {
                    reflectance: s.reflectance,
                    transmittance: s.transmittance,
                }),
                ObjectKind::Detector(d) => {
                    let det = detectors.len() as u32;
                    push_path(&mut edges, &d.path, &|along| Role::Detector { detector: det, along });
                    detectors.push(DetectorInfo {
                        object: oi32,
                        name: o.name.clone(),
                        length: d.path.edges().iter().map(Edge::length).sum(),
                    });
                }
                ObjectKind::PointSource(_) | ObjectKind::BeamSource(_) | ObjectKind::LambertianSource(_) => {}
            }
        }
        // The same solids in the same order nest as before.
        let same_solids = solids.len() == prev_solids.len()
            && solids.iter().zip(&prev_solids).all(|(a, b)| Arc::ptr_eq(&a.outline, &b.outline));
        if same_solids {
            for (a, b) in solids.iter_mut().zip(&prev_solids) {
                (a.parent, a.depth) = (b.parent, b.depth);
            }
        } else {
            report.nesting = true;
            nest(&mut solids);
        }
        let solid_boxes = BoxTree::build(solids.iter().map(|s| s.bbox).collect());
        let bvh_edges: Vec<Edge> = edges.iter().map(|e| e.edge).collect();
        let same_count = prev_edges.as_ref().is_some_and(|old| old.len() == edges.len());
        let unchanged =
            same_count && prev_edges.as_ref().is_some_and(|old| old.iter().zip(&edges).all(|(a, b)| a.edge == b.edge));
        let bvh = match prev_bvh {
            Some(bvh) if unchanged => bvh,
            mut prev => {
                if same_count && prev.as_mut().is_some_and(|b| b.refit(&bvh_edges)) {
                    report.bvh = BvhUpdate::Refitted;
                    prev.unwrap_or_default()
                } else {
                    report.bvh = BvhUpdate::Rebuilt;
                    Bvh::build(&bvh_edges)
                }
            }
        };
        let mut bounds = bvh.bounds();
        for o in &scene.objects {
            for p in source_points(&o.kind) {
                if p.0.is_finite() && p.1.is_finite() {
                    bounds.include(Vec2::new(p.0, p.1));
                }
            }
        }
        if bounds.is_empty() {
            bounds = Aabb::from_points([Vec2::new(0.0, 0.0)]);
        }
        let scale = bounds.extent().max(1e-3);
        let content_bounds = bounds;
        let bounds = with_margin(content_bounds, scale, scene.settings.margin);
        let index: Vec<Vec<f64>> =
            wavelengths.iter().map(|&nm| media.iter().map(|m| m.index_rel_air(nm)).collect()).collect();
        for (w, row) in index.iter().enumerate() {
            for (m, n) in row.iter().enumerate() {
                if !(n.is_finite() && *n > 0.0) {
                    warnings.push(format!(
                        "material \"{}\" has no usable index at {} nm (got {n}); rays there are treated as in air",
                        media[m].name, wavelengths[w]
                    ));
                }
            }
        }
        let index = index
            .into_iter()
            .map(|row| row.into_iter().map(|n| if n.is_finite() && n > 0.0 { n } else { 1.0 }).collect())
            .collect();
        let compiled = Self {
            edges,
            bvh,
            detectors,
            medium_names: media.iter().map(|m| m.name.clone()).collect(),
            alpha: media.iter().map(|m| m.absorption_per_mm.max(0.0)).collect(),
            solids,
            wavelengths,
            index,
            bounds,
            content_bounds,
            scale,
            warnings,
            excluded: bad,
            checks,
            solid_boxes,
        };
        (compiled, report)
    }

    /// The escape box for a margin of `margin` mm (at least 1 % of the scene's size).
    pub fn bounds_with_margin(&self, margin: f64) -> Aabb {
        with_margin(self.content_bounds, self.scale, margin)
    }

    /// The medium at point `p`: the innermost solid containing it (as medium number), else 0.
    pub fn medium_at(&self, p: Vec2) -> u32 {
        let mut best: Option<(u32, u32)> = None; // (depth, solid)
        // Candidates come from the tree in any order: the deepest wins, the first solid on ties.
        self.solid_boxes.overlapping(&Aabb::from_points([p]), |k| {
            let s = &self.solids[k as usize];
            if s.bbox.contains(p)
                && best.is_none_or(|(d, j)| s.depth > d || (s.depth == d && k < j))
                && s.outline.contains(p)
            {
                best = Some((s.depth, k));
            }
            false
        });
        best.map_or(0, |(_, k)| k + 1)
    }

    /// Which medium a ray in `medium` travelling along `dir` is in after the solid edges in
    /// `group` (hits at `point`, as returned by [`Bvh::cast_group`]); `None` if it crosses no
    /// solid boundary there (other kinds of edge are ignored).
    ///
    /// Each solid is counted once. A solid hit on one edge is entered if the ray runs against
    /// its outward normal; a solid hit on several edges at once (a vertex) is entered or left
    /// according to the side a point `probe` beyond lies on, and ignored if that side does not
    /// change. The new medium is the deepest solid entered, else the parent of the shallowest
    /// solid left.
    pub fn crossing(&self, point: Vec2, dir: Vec2, medium: u32, group: &[BvhHit], probe: f64) -> Option<Crossing> {
        let solid_of = |h: &BvhHit| match self.edges[h.id as usize].role {
            Role::Solid { solid } => Some(solid),
            _ => None,
        };
        let depth_of = |k: u32| self.solids[k as usize].depth;
        // (solid, hit) of the deepest solid entered (the last on ties) and of the shallowest
        // left (the first on ties), and the first solid crossed at all.
        let mut entered: Option<(u32, BvhHit)> = None;
        let mut left: Option<u32> = None;
        let mut first: Option<BvhHit> = None;
        for (i, h) in group.iter().enumerate() {
            let Some(solid) = solid_of(h) else { continue };
            if group[..i].iter().any(|g| solid_of(g) == Some(solid)) {
                continue;
            }
            let info = &self.solids[solid as usize];
            let same = group[i..].iter().filter(|g| solid_of(g) == Some(solid)).count();
            let entering = if same == 1 {
                dir.dot(&(h.normal * info.orient)) < 0.0
            } else {
                let inside_before = self.solid_in_chain(solid, medium);
                let inside_after = info.outline.contains(point + dir * probe);
                if inside_before == inside_after {
                    continue;
                }
                inside_after
            };
            first.get_or_insert(*h);
            if entering {
                if entered.is_none_or(|(k, _)| depth_of(solid) >= depth_of(k)) {
                    entered = Some((solid, *h));
                }
            } else if left.is_none_or(|k| depth_of(solid) < depth_of(k)) {
                left = Some(solid);
            }
        }
        let first = first?;
        let (medium_after, hit) = match (entered, left) {
            (Some((k, h)), _) => (k + 1, h),
            (None, Some(k)) => (self.solids[k as usize].parent.map_or(0, |q| q + 1), first),
            (None, None) => return None,
        };
        Some(Crossing { medium_before: medium, medium_after, hit })
    }

    /// The next interface met by a ray in `medium` from `origin` along unit `dir`, with the
    /// media on both sides; `on` lists the edges the ray starts on (skipped). `hits` is scratch
    /// space. Solid boundaries that the ray only grazes at a vertex are passed over.
    pub fn next_interface(
        &self,
        origin: Vec2,
        dir: Vec2,
        medium: u32,
        on: &[u32],
        hits: &mut Vec<BvhHit>,
    ) -> Option<Interface> {
        let t_min = 1e-10 * self.scale;
        let eps = 1e-9 * self.scale;
        let probe = 1e-7 * self.scale;
        let mut origin = origin;
        let mut on_buf: Vec<u32> = on.to_vec();
        let mut travelled = 0.0;
        for _ in 0..64 {
            let t_max = self.bounds.exit_distance(origin, dir);
            self.bvh.cast_group(origin, dir, t_min, t_max, eps, &on_buf, hits);
            let h0 = *hits.first()?;
            let make = |h: BvhHit, after: u32| {
                let e = &self.edges[h.id as usize];
                Interface {
                    t: travelled + h.t,
                    point: h.point,
                    normal: h.normal,
                    object: e.object,
                    edge: e.index,
                    role: e.role,
                    medium_before: medium,
                    medium_after: after,
                }
            };
            if let Some(thin) = hits.iter().find(|h| !matches!(self.edges[h.id as usize].role, Role::Solid { .. })) {
                return Some(make(*thin, medium));
            }
            if let Some(c) = self.crossing(h0.point, dir, medium, hits, probe) {
                return Some(make(c.hit, c.medium_after));
            }
            // Only a graze at a vertex: carry on from there.
            travelled += h0.t;
            origin = h0.point;
            on_buf.clear();
            on_buf.extend(hits.iter().map(|h| h.id));
        }
        None
    }

    /// Whether solid `k` is the medium `m` or one of its ancestors.
    pub fn solid_in_chain(&self, k: u32, m: u32) -> bool {
        let mut cur = if m == 0 { None } else { Some(m - 1) };
        while let Some(c) = cur {
            if c == k {
                return true;
            }
            cur = self.solids[c as usize].parent;
        }
        false
    }
}

/// Maps the position of an edge in a solid's counter-clockwise outline (as
/// [`Shape::outline`] gives it) to its number in the file: a free outline written clockwise
/// is reversed, new edge k being old edge (n − k − 1) mod n. Primitives are generated
/// counter-clockwise and keep their numbers.
pub fn file_edge_order(shape: &Shape, n: usize) -> impl Fn(usize) -> u32 + use<> {
    let reversed = match shape {
        Shape::Outline { points, bulges } => {
            let bulges = if bulges.len() == points.len() { bulges.clone() } else { vec![0.0; points.len()] };
            Outline { vertices: points.iter().map(|&p| crate::scene::to_vec(p)).collect(), bulges }.signed_area() < 0.0
        }
        _ => false,
    };
    move |k| if reversed && n > 0 { ((2 * n - k - 1) % n) as u32 } else { k as u32 }
}

fn with_margin(content: Aabb, scale: f64, margin: f64) -> Aabb {
    let margin = if margin.is_finite() { margin.max(0.0) } else { 0.0 };
    content.expanded(margin.max(0.01 * scale))
}

fn source_points(kind: &ObjectKind) -> Vec<(f64, f64)> {
    match kind {
        ObjectKind::PointSource(p) => vec![p.position],
        ObjectKind::BeamSource(b) => {
            let d = b.direction_deg.to_radians();
            let (s, c) = d.sin_cos();
            let h = b.width / 2.0;
            vec![(b.center.0 - s * h, b.center.1 + c * h), (b.center.0 + s * h, b.center.1 - c * h)]
        }
        ObjectKind::LambertianSource(l) => vec![l.a, l.b],
        _ => Vec::new(),
    }
}

/// Finds for each solid the smallest solid that encloses it. (Solids that overlap without
/// one enclosing the other are reported by `scene::validate`.)
///
/// Candidates come from a tree over the solids' boxes, smallest area first, so each solid
/// tests about as many candidates as there are near misses, not every other solid: near
/// n log n in the number of solids however deep they nest.
fn nest(solids: &mut [SolidInfo]) {
    let n = solids.len();
    if n < 2 {
        return;
    }
    for s in solids.iter_mut().filter(|s| s.interior.is_none()) {
        s.interior = s.outline.interior_point();
    }
    let tol = 1e-9 * solids.iter().map(|s| s.bbox.extent()).fold(0.0, f64::max);
    let tree = ContainerTree::build(solids);
    for k in 0..n {
        let Some(p) = solids[k].interior else { continue };
        let mut after = (solids[k].area, None);
        let mut parent: Option<usize> = None;
        // Candidates in increasing (area, index); a candidate of the same area must come
        // earlier in the list. The first that holds the solid is the smallest that does.
        while let Some(j) = tree.next_container(&solids[k].bbox, tol, after) {
            after = (solids[j].area, Some(j));
            if j == k || (solids[j].area == solids[k].area && j > k) {
                continue;
            }
            if solids[j].bbox.contains(p) && solids[j].outline.contains(p) && encloses(&solids[j], &solids[k]) {
                parent = Some(j);
                break;
            }
        }
        solids[k].parent = parent.map(|j| j as u32);
    }
    // A parent has a larger area than its child, or the same area and a smaller index, so
    // going through the solids by decreasing area (increasing index on ties) each parent's
    // depth is known before its children's: O(n log n) rather than walking every chain of
    // ancestors.
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| solids[b].area.total_cmp(&solids[a].area).then(a.cmp(&b)));
    for k in order {
        solids[k].depth = solids[k].parent.map_or(0, |p| solids[p as usize].depth + 1);
    }
}

/// A k-d tree over the solids' boxes seen as points `(min x, min y, max x, max y)`, finding
/// the box of least area that holds a given box.
struct ContainerTree {
    nodes: Vec<ContainerNode>,
    /// Solid indices in tree order.
    items: Vec<usize>,
    corners: Vec<[f64; 4]>,
    areas: Vec<f64>,
}

struct ContainerNode {
    /// Componentwise least and greatest corner coordinates below this node.
    lo: [f64; 4],
    hi: [f64; 4],
    /// Least area below this node.
    min_area: f64,
    first: usize,
    /// Items of a leaf; 0 for an inner node (children at `first` and `first + 1`).
    count: usize,
}

impl ContainerTree {
    fn build(solids: &[SolidInfo]) -> Self {
        let corners: Vec<[f64; 4]> =
            solids.iter().map(|s| [s.bbox.min.x, s.bbox.min.y, s.bbox.max.x, s.bbox.max.y]).collect();
        let areas: Vec<f64> = solids.iter().map(|s| s.area).collect();
        let mut items: Vec<usize> = (0..solids.len()).collect();
        let mut nodes = Vec::new();
        let summary = |items: &[usize], first: usize| {
            let mut node = ContainerNode {
                lo: [f64::INFINITY; 4],
                hi: [f64::NEG_INFINITY; 4],
                min_area: f64::INFINITY,
                first,
                count: items.len(),
            };
            for &i in items {
                for (a, &c) in corners[i].iter().enumerate() {
                    node.lo[a] = node.lo[a].min(c);
                    node.hi[a] = node.hi[a].max(c);
                }
                node.min_area = node.min_area.min(areas[i]);
            }
            node
        };
        if !items.is_empty() {
            nodes.push(summary(&items, 0));
            let mut todo = vec![0usize];
            while let Some(ni) = todo.pop() {
                let (first, count) = (nodes[ni].first, nodes[ni].count);
                if count <= 4 {
                    continue;
                }
                let spread = |a: usize| nodes[ni].hi[a] - nodes[ni].lo[a];
                let axis = (0..4).max_by(|&a, &b| spread(a).total_cmp(&spread(b))).unwrap_or(0);
                let mid = count / 2;
                items[first..first + count].select_nth_unstable_by(mid, |&a, &b| {
                    corners[a][axis].total_cmp(&corners[b][axis]).then(a.cmp(&b))
                });
                let child = nodes.len();
                nodes.push(summary(&items[first..first + mid], first));
                nodes.push(summary(&items[first + mid..first + count], first + mid));
                nodes[ni].first = child;
                nodes[ni].count = 0;
                todo.push(child);
                todo.push(child + 1);
            }
        }
        Self { nodes, items, corners, areas }
    }

    /// The solid of least `(area, index)` beyond `after` whose box holds `inner` (within
    /// `tol`). `after.1 == None` stands before every index of that area.
    fn next_container(&self, inner: &Aabb, tol: f64, after: (f64, Option<usize>)) -> Option<usize> {
        let q = [inner.min.x + tol, inner.min.y + tol, inner.max.x - tol, inner.max.y - tol];
        let beyond = |area: f64, i: usize| area > after.0 || (area == after.0 && after.1.is_none_or(|j| i > j));
        let holds = |c: &[f64; 4]| c[0] <= q[0] && c[1] <= q[1] && c[2] >= q[2] && c[3] >= q[3];
        let mut best: Option<(f64, usize)> = None;
        let mut stack = Vec::new();
        if !self.nodes.is_empty() {
            stack.push(0usize);
        }
        while let Some(ni) = stack.pop() {
            let n = &self.nodes[ni];
            // Nothing below can hold `inner`, or nothing below can beat the best so far.
            if !holds(&[n.lo[0], n.lo[1], n.hi[2], n.hi[3]]) || best.is_some_and(|(a, _)| n.min_area > a) {
                continue;
            }
            if n.count > 0 {
                for &i in &self.items[n.first..n.first + n.count] {
                    let area = self.areas[i];
                    if beyond(area, i)
                        && holds(&self.corners[i])
                        && best.is_none_or(|(a, j)| area < a || (area == a && i < j))
                    {
                        best = Some((area, i));
                    }
                }
            } else {
                // The child with the smaller least area goes last, so it is visited first.
                let (a, b) = (n.first, n.first + 1);
                let (near, far) = if self.nodes[a].min_area <= self.nodes[b].min_area { (a, b) } else { (b, a) };
                stack.push(far);
                stack.push(near);
            }
        }
        best.map(|(_, i)| i)
    }
}

/// Whether `outer` holds all of `inner` (checked on up to about 400 of its vertices and
/// edge midpoints; points on the boundary count as inside, so touching faces are allowed).
fn encloses(outer: &SolidInfo, inner: &SolidInfo) -> bool {
    if !(outer.bbox.expanded(1e-9 * outer.bbox.extent()).contains(inner.bbox.min)
        && outer.bbox.expanded(1e-9 * outer.bbox.extent()).contains(inner.bbox.max))
    {
        return false;
    }
    let n = inner.outline.len();
    let step = n.div_ceil(200).max(1);
    let tol = 1e-9 * outer.bbox.extent();
    (0..n).step_by(step).all(|i| {
        let e = inner.outline.edge(i);
        [e.a, e.point_at(0.5)].iter().all(|&q| outer.outline.contains(q) || near_boundary(&outer.outline, q, tol))
    })
}

fn near_boundary(o: &Outline, q: Vec2, tol: f64) -> bool {
    o.edges().any(|e| e.aabb().expanded(tol).contains(q) && (e.point_at(e.param_of(q)) - q).norm() <= tol)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::{Object, Solid};

    #[test]
    fn concentric_balls_nest_with_points_on_their_chords_inside() {
        let mut s = Scene::new("t");
        for k in 0..3 {
            s.objects.push(Object {
                id: k + 1,
                name: format!("b{k}"),
                kind: ObjectKind::Solid(Solid {
                    shape: crate::scene::Shape::Ball { position: (0.0, 0.0), radius: 1.0 + k as f64 },
                    material: "pmma".into(),
                }),
            });
        }
        let c = Compiled::new(&s);
        let got: Vec<_> = c.solids.iter().map(|s| (s.parent, s.depth)).collect();
        assert_eq!(got, [(Some(1), 2), (Some(2), 1), (None, 0)]);
        // On the balls' common chord line: inside the innermost.
        assert_eq!(c.medium_at(Vec2::new(0.5, 0.0)), 1);
    }
}
