//! Turns a [`Scene`] into what the tracer needs: one flat list of edges in a BVH, each with
//! its owner and role, the nesting of solids, and an index table per wavelength and medium.

use crate::geom::{Aabb, Bvh, BvhHit, Edge, Outline, Vec2};
use crate::scene::{ObjectKind, Scene, Shape, validate};

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
    pub outline: Outline,
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
#[derive(Clone, Debug)]
pub struct Compiled {
    pub edges: Vec<EdgeInfo>,
    pub bvh: Bvh,
    pub solids: Vec<SolidInfo>,
    pub detectors: Vec<DetectorInfo>,
    /// Material name of each medium.
    pub medium_names: Vec<String>,
    /// Absorption coefficient of each medium, 1/mm.
    pub alpha: Vec<f64>,
    pub wavelengths: Vec<f64>,
    /// `index[w][m]`: refractive index (relative to standard air) at wavelength `w` in medium `m`.
    pub index: Vec<Vec<f64>>,
    /// Rays leaving this box escape: [`Compiled::content_bounds`] with the scene's margin.
    pub bounds: Aabb,
    /// The box around every edge and source, before any margin.
    pub content_bounds: Aabb,
    /// A length typical of the scene (bounding-box extent), for tolerances.
    pub scale: f64,
    pub warnings: Vec<String>,
    /// Ids of objects left out because of errors.
    pub excluded: Vec<u64>,
}

impl Compiled {
    /// Builds everything the tracer needs. Objects with errors are left out, each with a
    /// warning; nothing here fails.
    #[allow(clippy::too_many_lines)] // one arm per object kind
    pub fn new(scene: &Scene) -> Self {
        let mut warnings = Vec::new();
        let problems = validate(scene);
        let bad: Vec<u64> = problems
            .iter()
            .filter(|p| p.severity == crate::scene::validate::Severity::Error)
            .filter_map(|p| p.object.as_ref().map(|o| o.0))
            .collect();
        for p in &problems {
            if p.severity == crate::scene::validate::Severity::Error {
                warnings.push(format!("{p} (left out of the trace)"));
            } else {
                warnings.push(p.to_string());
            }
        }
        let ambient = scene.material(&scene.ambient).unwrap_or_else(|| crate::optics::Material::constant("air", 1.0));
        let wavelengths = crate::scene::validate::source_wavelengths(scene);
        let mut media = vec![ambient];
        let mut edges = Vec::new();
        let mut solids = Vec::new();
        let mut detectors = Vec::new();
        for (oi, o) in scene.objects.iter().enumerate() {
            if bad.contains(&o.id) {
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
                    let (Ok(outline), Some(material)) = (s.shape.outline(), scene.material(&s.material)) else {
                        continue;
                    };
                    let k = solids.len() as u32;
                    let file_edge = file_edge_order(&s.shape, outline.len());
                    for (i, e) in outline.edges().enumerate() {
                        let index = file_edge(i);
                        edges.push(EdgeInfo { edge: e, object: oi32, index, role: Role::Solid { solid: k } });
                    }
                    let area = outline.signed_area();
                    solids.push(SolidInfo {
                        object: oi32,
                        orient: if area >= 0.0 { 1.0 } else { -1.0 },
                        bbox: outline.aabb(),
                        area: area.abs(),
                        outline,
                        parent: None,
                        depth: 0,
                    });
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
        nest(&mut solids);
        let bvh_edges: Vec<Edge> = edges.iter().map(|e| e.edge).collect();
        let bvh = Bvh::build(&bvh_edges);
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
        Self {
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
        }
    }

    /// The escape box for a margin of `margin` mm (at least 1 % of the scene's size).
    pub fn bounds_with_margin(&self, margin: f64) -> Aabb {
        with_margin(self.content_bounds, self.scale, margin)
    }

    /// The medium at point `p`: the innermost solid containing it (as medium number), else 0.
    pub fn medium_at(&self, p: Vec2) -> u32 {
        let mut best: Option<(u32, u32)> = None; // (depth, solid)
        for (k, s) in self.solids.iter().enumerate() {
            if s.bbox.contains(p) && s.outline.contains(p) && best.is_none_or(|(d, _)| s.depth > d) {
                best = Some((s.depth, k as u32));
            }
        }
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
fn nest(solids: &mut [SolidInfo]) {
    let inner: Vec<Option<Vec2>> = solids.iter().map(|s| s.outline.interior_point()).collect();
    let n = solids.len();
    for k in 0..n {
        let Some(p) = inner[k] else { continue };
        let mut parent: Option<usize> = None;
        for j in 0..n {
            if j == k || solids[j].area < solids[k].area || (solids[j].area == solids[k].area && j > k) {
                continue;
            }
            if solids[j].bbox.contains(p)
                && solids[j].outline.contains(p)
                && parent.is_none_or(|q| solids[j].area < solids[q].area)
                && encloses(&solids[j], &solids[k])
            {
                parent = Some(j);
            }
        }
        solids[k].parent = parent.map(|j| j as u32);
    }
    for k in 0..n {
        let mut d = 0;
        let mut cur = solids[k].parent;
        while let Some(c) = cur {
            d += 1;
            if d > n {
                break;
            }
            cur = solids[c as usize].parent;
        }
        solids[k].depth = d as u32;
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
