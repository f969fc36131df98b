//! Following rays: one chunk of launched rays at a time, with every split branch traced
//! depth-first right after its parent so each ray's events are stored together.

use super::compile::{Compiled, Role};
use super::launch::{Launch, Rng};
use super::{Budget, DetectorHit, Event, EventKind, NONE, RayRecord, TraceConfig};
use crate::geom::{BvhHit, Vec2, cross};
use crate::optics::{fresnel, reflect, refract};
use crate::scene::TraceMode;

/// What one chunk produced; ray ids and event positions are local to the chunk.
pub struct ChunkResult {
    pub budget: Budget,
    pub hits: Vec<Vec<DetectorHit>>,
    pub rays: Vec<RayRecord>,
    pub events: Vec<Event>,
    pub n_rays: u64,
    pub n_events: u64,
}

pub struct Tracer<'a> {
    c: &'a Compiled,
    /// Id of each object slot (as in the file).
    object_ids: &'a [u64],
    mode: TraceMode,
    threshold: f64,
    max_depth: u32,
    /// Smallest distance a ray must travel before it can hit anything.
    t_min: f64,
    /// Hits closer together than this along a ray are one event (a vertex, touching faces).
    group_eps: f64,
    /// Step used to probe which side of a vertex a ray ends up on.
    probe: f64,
}

/// The edges a ray starts on (those of the event it leaves), kept inline: a group rarely
/// holds more than two or three edges. Beyond [`OnEdges::CAP`] the rest are not listed, which
/// is harmless: a straight edge through the start point is also excluded by the minimum hit
/// distance.
#[derive(Clone, Copy, Debug, Default)]
struct OnEdges {
    ids: [u32; OnEdges::CAP],
    len: usize,
}

impl OnEdges {
    const CAP: usize = 8;

    fn of(group: &[BvhHit]) -> Self {
        let mut s = Self::default();
        for h in group.iter().take(Self::CAP) {
            s.ids[s.len] = h.id;
            s.len += 1;
        }
        s
    }

    fn as_slice(&self) -> &[u32] {
        &self.ids[..self.len]
    }
}

/// Angle of incidence in degrees between direction `d` and unit normal `n` (either side).
/// Double-precision `acos` resolves angles near normal incidence to about 1e-8 rad, well
/// inside what an event stores.
#[inline]
fn incidence_deg(d: Vec2, n: Vec2) -> f64 {
    d.dot(&n).abs().min(1.0).acos().to_degrees()
}

/// A ray waiting to be followed.
struct Pending {
    parent: u32,
    source: u32,
    origin: Vec2,
    dir: Vec2,
    s: f64,
    p: f64,
    wavelength: u32,
    medium: u32,
    depth: u32,
    /// Power threshold for this ray's branches, W.
    floor: f64,
    /// Edges the ray starts on.
    on: OnEdges,
    first: Event,
    rng: Rng,
}

impl Pending {
    /// A branch split off this ray at `point` (the reflected part in tree mode), to be traced
    /// after it; `first` is its first event.
    #[allow(clippy::too_many_arguments)] // the state of the new branch, field by field
    fn child(
        &self,
        parent: u32,
        point: Vec2,
        dir: Vec2,
        power: (f64, f64),
        medium: u32,
        depth: u32,
        on: OnEdges,
        first: Event,
        rng: &Rng,
    ) -> Pending {
        Pending {
            parent,
            source: self.source,
            origin: point,
            dir,
            s: power.0,
            p: power.1,
            wavelength: self.wavelength,
            medium,
            depth,
            floor: self.floor,
            on,
            first,
            rng: rng.clone(),
        }
    }
}

struct Out<'o> {
    budget: &'o mut Budget,
    hits: &'o mut Vec<Vec<DetectorHit>>,
    rays: &'o mut Vec<RayRecord>,
    events: &'o mut Vec<Event>,
    n_rays: &'o mut u64,
    n_events: &'o mut u64,
    store: bool,
}

impl Out<'_> {
    /// Power absorbed by a thin element.
    fn absorbed_by(&mut self, object: usize, w: f64) {
        self.budget.absorbed += w;
        if let Some(a) = self.budget.absorbed_by_object.get_mut(object) {
            a.1 += w;
        }
    }

    fn event(&mut self, e: Event) {
        *self.n_events += 1;
        if self.store {
            self.events.push(e);
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn ev(
    kind: EventKind,
    point: Vec2,
    before: (f64, f64),
    after: (f64, f64),
    object: u32,
    edge: u32,
    medium: u32,
    n: (f64, f64),
    incidence_deg: f64,
) -> Event {
    Event {
        point,
        after_s: after.0 as f32,
        after_p: after.1 as f32,
        before_s: before.0 as f32,
        before_p: before.1 as f32,
        ray: 0,
        object_slot: object,
        edge,
        medium,
        n1: n.0 as f32,
        n2: n.1 as f32,
        incidence_deg: incidence_deg as f32,
        kind,
    }
}

/// What handling a group of hits leaves the ray with.
enum Next {
    Continue,
    Stop,
}

impl<'a> Tracer<'a> {
    pub fn new(c: &'a Compiled, cfg: &TraceConfig, object_ids: &'a [u64]) -> Self {
        Self {
            c,
            object_ids,
            mode: cfg.mode,
            threshold: if cfg.threshold.is_finite() { cfg.threshold.max(0.0) } else { 0.0 },
            max_depth: cfg.max_depth.max(1),
            t_min: 1e-10 * c.scale,
            group_eps: 1e-9 * c.scale,
            probe: 1e-7 * c.scale,
        }
    }

    pub fn trace_chunk(&self, launches: &[Launch], store: bool) -> ChunkResult {
        let mut budget = Budget::sized(self.c.alpha.len(), self.object_ids, self.c.detectors.len());
        let mut hits = vec![Vec::new(); self.c.detectors.len()];
        let mut rays = Vec::new();
        let mut events = Vec::new();
        let (mut n_rays, mut n_events) = (0u64, 0u64);
        let mut out = Out {
            budget: &mut budget,
            hits: &mut hits,
            rays: &mut rays,
            events: &mut events,
            n_rays: &mut n_rays,
            n_events: &mut n_events,
            store,
        };
        let mut stack: Vec<Pending> = Vec::new();
        let mut scratch = Vec::with_capacity(8);
        for l in launches {
            let total = l.power_s + l.power_p;
            out.budget.launched += total;
            let n = self.c.index[l.wavelength as usize][l.medium as usize];
            stack.push(Pending {
                parent: NONE,
                source: l.source,
                origin: l.origin,
                dir: l.dir,
                s: l.power_s,
                p: l.power_p,
                wavelength: l.wavelength,
                medium: l.medium,
                depth: 0,
                floor: if self.mode == TraceMode::Tree { self.threshold * total } else { 0.0 },
                on: OnEdges::default(),
                first: ev(
                    EventKind::Launch,
                    l.origin,
                    (l.power_s, l.power_p),
                    (l.power_s, l.power_p),
                    l.source,
                    NONE,
                    l.medium,
                    (n, n),
                    0.0,
                ),
                rng: Rng::new(l.seed),
            });
            while let Some(ray) = stack.pop() {
                self.follow(&ray, &mut out, &mut stack, &mut scratch);
            }
        }
        ChunkResult { budget, hits, rays, events, n_rays, n_events }
    }

    #[allow(clippy::too_many_lines)]
    fn follow(&self, ray: &Pending, out: &mut Out, stack: &mut Vec<Pending>, group: &mut Vec<BvhHit>) {
        let id = *out.n_rays as u32;
        *out.n_rays += 1;
        let first_event = out.events.len();
        let mut first = ray.first;
        first.ray = id;
        out.event(first);
        let wl = ray.wavelength as usize;
        let (mut origin, mut dir, mut s, mut p, mut medium, mut depth) =
            (ray.origin, ray.dir, ray.s, ray.p, ray.medium, ray.depth);
        let mut on = ray.on;
        let mut rng = ray.rng.clone();
        let emit = |out: &mut Out, mut e: Event| {
            e.ray = id;
            out.event(e);
        };
        loop {
            let n_here = self.c.index[wl][medium as usize];
            if depth >= self.max_depth {
                emit(out, ev(EventKind::Limit, origin, (s, p), (0.0, 0.0), NONE, NONE, medium, (n_here, n_here), 0.0));
                out.budget.trapped += s + p;
                break;
            }
            let t_exit = self.c.bounds.exit_distance(origin, dir);
            self.c.bvh.cast_group(origin, dir, self.t_min, t_exit, self.group_eps, on.as_slice(), group);
            let t = group.first().map_or(t_exit, |h| h.t);
            // Beer–Lambert along the segment.
            let alpha = self.c.alpha[medium as usize];
            if alpha > 0.0 {
                let f = (-alpha * t).exp();
                let lost = (s + p) * (1.0 - f);
                out.budget.absorbed += lost;
                out.budget.absorbed_in_media[medium as usize] += lost;
                s *= f;
                p *= f;
            }
            let Some(&h0) = group.first() else {
                let end = origin + dir * t_exit;
                emit(out, ev(EventKind::Escape, end, (s, p), (0.0, 0.0), NONE, NONE, medium, (n_here, n_here), 0.0));
                out.budget.escaped += s + p;
                break;
            };
            let point = h0.point;
            depth += 1;
            if self.mode == TraceMode::Tree && s + p < ray.floor {
                emit(out, ev(EventKind::Dropped, point, (s, p), (0.0, 0.0), NONE, NONE, medium, (n_here, n_here), 0.0));
                out.budget.below_threshold += s + p;
                break;
            }
            let before = (s, p);
            // The edges of this event: the next cast starts on them.
            let next_on = OnEdges::of(group);
            // Thin elements first: the nearest one in the group decides.
            let thin = group.iter().find(|h| !matches!(self.c.edges[h.id as usize].role, Role::Solid { .. })).copied();
            let mut transmitted_through_splitter = false;
            if let Some(h) = thin {
                let info = self.c.edges[h.id as usize];
                let (obj, object_index) = (info.object, info.object as usize);
                let inc = incidence_deg(dir, h.normal);
                // An event at this thin element with the given kind and outgoing power.
                let here = |kind: EventKind, after: (f64, f64)| {
                    ev(kind, point, before, after, obj, info.index, medium, (n_here, n_here), inc)
                };
                match info.role {
                    Role::Absorber => {
                        emit(out, here(EventKind::Absorb, (0.0, 0.0)));
                        out.absorbed_by(object_index, s + p);
                        break;
                    }
                    Role::Detector { detector, along } => {
                        emit(out, here(EventKind::Detect, (0.0, 0.0)));
                        out.budget.detected[detector as usize] += s + p;
                        let n_face = if dir.dot(&h.normal) < 0.0 { h.normal } else { -h.normal };
                        let back = -dir;
                        let angle = cross(n_face, back).atan2(n_face.dot(&back)).to_degrees();
                        let u = info.edge.param_of(point);
                        out.hits[detector as usize].push(DetectorHit {
                            along: along + info.edge.length() * u,
                            angle_deg: angle,
                            power: s + p,
                            wavelength_nm: self.c.wavelengths[wl],
                        });
                        break;
                    }
                    Role::Mirror { reflectance, one_sided } => {
                        if one_sided && dir.dot(&h.normal) < 0.0 {
                            // Light reaching the back of a one-sided mirror is absorbed.
                            emit(out, here(EventKind::Absorb, (0.0, 0.0)));
                            out.absorbed_by(object_index, s + p);
                            break;
                        }
                        out.absorbed_by(object_index, (s + p) * (1.0 - reflectance));
                        s *= reflectance;
                        p *= reflectance;
                        dir = reflect(dir, h.normal).normalize();
                        emit(out, here(EventKind::Reflect, (s, p)));
                    }
                    Role::Splitter { reflectance: r, transmittance: tr } => {
                        let refl_dir = reflect(dir, h.normal).normalize();
                        let reflected = (s * r, p * r);
                        let transmitted = (s * tr, p * tr);
                        let sum = |x: (f64, f64)| x.0 + x.1;
                        // Which way this ray goes on, and with what power (the other branch,
                        // if any, is split off as a child ray or dropped).
                        let reflect_ray = match self.mode {
                            // One path: the larger share, the rest absorbed.
                            TraceMode::Principal => {
                                let reflect_ray = tr < r;
                                let kept = if reflect_ray { reflected } else { transmitted };
                                out.absorbed_by(object_index, (s + p) - sum(kept));
                                (s, p) = kept;
                                reflect_ray
                            }
                            // Choose by the coefficients and keep the ray's power: the choice
                            // itself carries the probability.
                            TraceMode::MonteCarlo => {
                                let u = rng.uniform();
                                if u >= r + tr {
                                    emit(out, here(EventKind::Absorb, (0.0, 0.0)));
                                    out.absorbed_by(object_index, s + p);
                                    break;
                                }
                                u < r
                            }
                            TraceMode::Tree => {
                                out.absorbed_by(object_index, (s + p) * (1.0 - r - tr).max(0.0));
                                let r_ok = sum(reflected) > ray.floor && sum(reflected) > 0.0;
                                let t_ok = sum(transmitted) > ray.floor && sum(transmitted) > 0.0;
                                if !r_ok {
                                    out.budget.below_threshold += sum(reflected);
                                }
                                if !t_ok {
                                    out.budget.below_threshold += sum(transmitted);
                                }
                                if !r_ok && !t_ok {
                                    emit(out, here(EventKind::Dropped, (0.0, 0.0)));
                                    break;
                                }
                                if r_ok && t_ok {
                                    stack.push(ray.child(
                                        id,
                                        point,
                                        refl_dir,
                                        reflected,
                                        medium,
                                        depth,
                                        next_on,
                                        here(EventKind::Reflect, reflected),
                                        &rng,
                                    ));
                                }
                                (s, p) = if t_ok { transmitted } else { reflected };
                                !t_ok
                            }
                        };
                        if reflect_ray {
                            dir = refl_dir;
                            emit(out, here(EventKind::Reflect, (s, p)));
                        } else {
                            emit(out, here(EventKind::Transmit, (s, p)));
                            transmitted_through_splitter = true;
                        }
                    }
                    Role::Solid { .. } => {}
                }
                if !transmitted_through_splitter {
                    origin = point;
                    on = next_on;
                    continue;
                }
            }
            // Interfaces between solids and media.
            match self.cross_solids(
                id,
                point,
                &mut dir,
                &mut s,
                &mut p,
                &mut medium,
                depth,
                wl,
                ray,
                next_on,
                &mut rng,
                out,
                stack,
                group,
            ) {
                Next::Continue => {}
                Next::Stop => break,
            }
            origin = point;
            on = next_on;
        }
        if out.store {
            out.rays.push(RayRecord {
                id,
                parent: ray.parent,
                source: self.object_ids.get(ray.source as usize).copied().unwrap_or_default(),
                wavelength_nm: self.c.wavelengths[wl],
                first_event,
                n_events: (out.events.len() - first_event) as u32,
            });
        }
    }

    /// Works out which solids the ray enters and leaves at `point`, then refracts, reflects
    /// or splits it.
    #[allow(clippy::too_many_arguments, clippy::too_many_lines)]
    fn cross_solids(
        &self,
        id: u32,
        point: Vec2,
        dir: &mut Vec2,
        s: &mut f64,
        p: &mut f64,
        medium: &mut u32,
        depth: u32,
        wl: usize,
        ray: &Pending,
        next_on: OnEdges,
        rng: &mut Rng,
        out: &mut Out,
        stack: &mut Vec<Pending>,
        group: &[BvhHit],
    ) -> Next {
        let Some(crossing) = self.c.crossing(point, *dir, *medium, group, self.probe) else {
            return Next::Continue;
        };
        let (new_medium, h) = (crossing.medium_after, crossing.hit);
        let edge = self.c.edges[h.id as usize];
        let n1 = self.c.index[wl][*medium as usize];
        let n2 = self.c.index[wl][new_medium as usize];
        let before = (*s, *p);
        let cos_i = dir.dot(&h.normal).abs().min(1.0);
        let inc = incidence_deg(*dir, h.normal);
        // An event at this interface: kind, outgoing power, medium after.
        let here = |kind: EventKind, after: (f64, f64), medium_after: u32| Event {
            ray: id,
            ..ev(kind, point, before, after, edge.object, edge.index, medium_after, (n1, n2), inc)
        };
        if n1 == n2 {
            *medium = new_medium;
            out.event(here(EventKind::Transmit, before, new_medium));
            return Next::Continue;
        }
        let f = fresnel(n1, n2, cos_i);
        let refracted = refract(*dir, h.normal, n1, n2);
        let Some(tdir) = refracted.filter(|_| !f.is_tir()) else {
            *dir = reflect(*dir, h.normal).normalize();
            out.event(here(EventKind::Tir, before, *medium));
            return Next::Continue;
        };
        let rdir = reflect(*dir, h.normal).normalize();
        let reflected = (*s * f.rs, *p * f.rp);
        // Tree mode transmits exactly what is not reflected, so the budget closes.
        let transmitted = (*s - reflected.0, *p - reflected.1);
        // Whether the ray goes on reflected (else refracted), and with what power.
        let (go_reflected, power) = match self.mode {
            TraceMode::Principal => (false, before),
            TraceMode::MonteCarlo => {
                // Choose with the Fresnel probability for this ray's mix of s and p, then
                // rescale so the ray keeps its power (the choice carries the probability).
                let total = *s + *p;
                let r_pow = reflected.0 + reflected.1;
                let pr = if total > 0.0 { r_pow / total } else { 0.0 };
                if rng.uniform() < pr {
                    let s_new = total * reflected.0 / r_pow;
                    (true, (s_new, total - s_new))
                } else {
                    let t_pow = *s * f.ts + *p * f.tp;
                    let s_new = if t_pow > 0.0 { total * (*s * f.ts) / t_pow } else { 0.0 };
                    (false, (s_new, total - s_new))
                }
            }
            TraceMode::Tree => {
                let sum = |x: (f64, f64)| x.0 + x.1;
                let r_ok = sum(reflected) > ray.floor && sum(reflected) > 0.0;
                let t_ok = sum(transmitted) > ray.floor && sum(transmitted) > 0.0;
                if !r_ok {
                    out.budget.below_threshold += sum(reflected);
                }
                if !t_ok {
                    out.budget.below_threshold += sum(transmitted);
                }
                if !r_ok && !t_ok {
                    out.event(here(EventKind::Dropped, (0.0, 0.0), *medium));
                    return Next::Stop;
                }
                if r_ok && t_ok {
                    let first = here(EventKind::Reflect, reflected, *medium);
                    stack.push(ray.child(id, point, rdir, reflected, *medium, depth, next_on, first, rng));
                }
                if t_ok { (false, transmitted) } else { (true, reflected) }
            }
        };
        (*s, *p) = power;
        if go_reflected {
            *dir = rdir;
            out.event(here(EventKind::Reflect, power, *medium));
        } else {
            *dir = tdir;
            *medium = new_medium;
            out.event(here(EventKind::Refract, power, new_medium));
        }
        Next::Continue
    }
}
