//! Following rays: one chunk of launched rays at a time, with every split branch traced
//! depth-first right after its parent so each ray's events are stored together.

use super::compile::{Compiled, Role};
use super::launch::{Launch, Rng};
use super::{Budget, DetectorHit, Event, EventKind, NONE, RayRecord, TraceConfig};
use crate::geom::{BvhHit, Vec2, cross};
use crate::optics::{fresnel, reflect, refract};
use crate::scene::{Scene, TraceMode};

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
    mode: TraceMode,
    threshold: f64,
    max_depth: u32,
    n_objects: usize,
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

/// Angle of incidence in degrees between direction `d` and unit normal `n` (either side),
/// from the sine and cosine together so it is accurate at every angle. Computed in single
/// precision, which is what events store.
#[inline]
fn incidence_deg(d: Vec2, n: Vec2) -> f64 {
    let c = d.dot(&n).abs() as f32;
    let s = cross(d, n).abs() as f32;
    f64::from(s.atan2(c).to_degrees())
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
        object,
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
    pub fn new(scene: &Scene, c: &'a Compiled, cfg: &TraceConfig) -> Self {
        Self {
            c,
            mode: cfg.mode,
            threshold: if cfg.threshold.is_finite() { cfg.threshold.max(0.0) } else { 0.0 },
            max_depth: cfg.max_depth.max(1),
            n_objects: c.edges.iter().map(|e| e.object as usize + 1).max().unwrap_or(0).max(scene.objects.len()),
            t_min: 1e-10 * c.scale,
            group_eps: 1e-9 * c.scale,
            probe: 1e-7 * c.scale,
        }
    }

    pub fn trace_chunk(&self, launches: &[Launch], store: bool) -> ChunkResult {
        let mut budget = Budget::sized(self.c.alpha.len(), self.n_objects, self.c.detectors.len());
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
                let inc = incidence_deg(dir, h.normal);
                let nn = (n_here, n_here);
                match info.role {
                    Role::Absorber => {
                        emit(
                            out,
                            ev(EventKind::Absorb, point, before, (0.0, 0.0), info.object, info.index, medium, nn, inc),
                        );
                        out.budget.absorbed += s + p;
                        out.budget.absorbed_by_object[info.object as usize] += s + p;
                        break;
                    }
                    Role::Detector { detector, along } => {
                        emit(
                            out,
                            ev(EventKind::Detect, point, before, (0.0, 0.0), info.object, info.index, medium, nn, inc),
                        );
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
                            emit(
                                out,
                                ev(
                                    EventKind::Absorb,
                                    point,
                                    before,
                                    (0.0, 0.0),
                                    info.object,
                                    info.index,
                                    medium,
                                    nn,
                                    inc,
                                ),
                            );
                            out.budget.absorbed += s + p;
                            out.budget.absorbed_by_object[info.object as usize] += s + p;
                            break;
                        }
                        let lost = (s + p) * (1.0 - reflectance);
                        out.budget.absorbed += lost;
                        out.budget.absorbed_by_object[info.object as usize] += lost;
                        s *= reflectance;
                        p *= reflectance;
                        dir = reflect(dir, h.normal).normalize();
                        emit(
                            out,
                            ev(EventKind::Reflect, point, before, (s, p), info.object, info.index, medium, nn, inc),
                        );
                    }
                    Role::Splitter { reflectance: r, transmittance: tr } => {
                        let lost = (s + p) * (1.0 - r - tr).max(0.0);
                        let refl_dir = reflect(dir, h.normal).normalize();
                        let (rs_, rp_) = (s * r, p * r);
                        let (ts_, tp_) = (s * tr, p * tr);
                        let reflect_ray = match self.mode {
                            TraceMode::Principal => {
                                out.budget.absorbed += (s + p) - if tr >= r { ts_ + tp_ } else { rs_ + rp_ };
                                out.budget.absorbed_by_object[info.object as usize] +=
                                    (s + p) - if tr >= r { ts_ + tp_ } else { rs_ + rp_ };
                                tr < r
                            }
                            TraceMode::MonteCarlo => {
                                let u = rng.uniform();
                                let total = s + p;
                                if u < r {
                                    true
                                } else if u < r + tr {
                                    false
                                } else {
                                    emit(
                                        out,
                                        ev(
                                            EventKind::Absorb,
                                            point,
                                            before,
                                            (0.0, 0.0),
                                            info.object,
                                            info.index,
                                            medium,
                                            nn,
                                            inc,
                                        ),
                                    );
                                    out.budget.absorbed += total;
                                    out.budget.absorbed_by_object[info.object as usize] += total;
                                    break;
                                }
                            }
                            TraceMode::Tree => {
                                out.budget.absorbed += lost;
                                out.budget.absorbed_by_object[info.object as usize] += lost;
                                let r_ok = rs_ + rp_ > ray.floor && rs_ + rp_ > 0.0;
                                let t_ok = ts_ + tp_ > ray.floor && ts_ + tp_ > 0.0;
                                if !r_ok {
                                    out.budget.below_threshold += rs_ + rp_;
                                }
                                if !t_ok {
                                    out.budget.below_threshold += ts_ + tp_;
                                }
                                match (r_ok, t_ok) {
                                    (true, true) => {
                                        stack.push(Pending {
                                            parent: id,
                                            source: ray.source,
                                            origin: point,
                                            dir: refl_dir,
                                            s: rs_,
                                            p: rp_,
                                            wavelength: ray.wavelength,
                                            medium,
                                            depth,
                                            floor: ray.floor,
                                            on: next_on,
                                            first: ev(
                                                EventKind::Reflect,
                                                point,
                                                before,
                                                (rs_, rp_),
                                                info.object,
                                                info.index,
                                                medium,
                                                nn,
                                                inc,
                                            ),
                                            rng: rng.clone(),
                                        });
                                        false
                                    }
                                    (true, false) => true,
                                    (false, true) => false,
                                    (false, false) => {
                                        emit(
                                            out,
                                            ev(
                                                EventKind::Dropped,
                                                point,
                                                before,
                                                (0.0, 0.0),
                                                info.object,
                                                info.index,
                                                medium,
                                                nn,
                                                inc,
                                            ),
                                        );
                                        break;
                                    }
                                }
                            }
                        };
                        if reflect_ray {
                            if self.mode == TraceMode::MonteCarlo {
                                // Keep the ray's power: the choice itself carries the probability.
                            } else {
                                s = rs_;
                                p = rp_;
                            }
                            dir = refl_dir;
                            emit(
                                out,
                                ev(EventKind::Reflect, point, before, (s, p), info.object, info.index, medium, nn, inc),
                            );
                        } else {
                            if self.mode != TraceMode::MonteCarlo {
                                s = ts_;
                                p = tp_;
                            }
                            emit(
                                out,
                                ev(
                                    EventKind::Transmit,
                                    point,
                                    before,
                                    (s, p),
                                    info.object,
                                    info.index,
                                    medium,
                                    nn,
                                    inc,
                                ),
                            );
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
                source: ray.source,
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
        let (obj, eidx) = (edge.object, edge.index);
        let n1 = self.c.index[wl][*medium as usize];
        let n2 = self.c.index[wl][new_medium as usize];
        let before = (*s, *p);
        let cos_i = dir.dot(&h.normal).abs().min(1.0);
        let inc = incidence_deg(*dir, h.normal);
        if n1 == n2 {
            *medium = new_medium;
            out.event(Event {
                ray: id,
                ..ev(EventKind::Transmit, point, before, before, obj, eidx, new_medium, (n1, n2), inc)
            });
            return Next::Continue;
        }
        let f = fresnel(n1, n2, cos_i);
        let refracted = refract(*dir, h.normal, n1, n2);
        let Some(tdir) = refracted.filter(|_| !f.is_tir()) else {
            *dir = reflect(*dir, h.normal).normalize();
            out.event(Event {
                ray: id,
                ..ev(EventKind::Tir, point, before, before, obj, eidx, *medium, (n1, n2), inc)
            });
            return Next::Continue;
        };
        let rdir = reflect(*dir, h.normal).normalize();
        match self.mode {
            TraceMode::Principal => {
                *dir = tdir;
                *medium = new_medium;
                out.event(Event {
                    ray: id,
                    ..ev(EventKind::Refract, point, before, before, obj, eidx, new_medium, (n1, n2), inc)
                });
            }
            TraceMode::MonteCarlo => {
                let total = *s + *p;
                let r_pow = *s * f.rs + *p * f.rp;
                let pr = if total > 0.0 { r_pow / total } else { 0.0 };
                if rng.uniform() < pr {
                    let rs_ = *s * f.rs;
                    *s = total * rs_ / r_pow;
                    *p = total - *s;
                    *dir = rdir;
                    out.event(Event {
                        ray: id,
                        ..ev(EventKind::Reflect, point, before, (*s, *p), obj, eidx, *medium, (n1, n2), inc)
                    });
                } else {
                    let t_pow = *s * f.ts + *p * f.tp;
                    let ts_ = *s * f.ts;
                    *s = if t_pow > 0.0 { total * ts_ / t_pow } else { 0.0 };
                    *p = total - *s;
                    *dir = tdir;
                    *medium = new_medium;
                    out.event(Event {
                        ray: id,
                        ..ev(EventKind::Refract, point, before, (*s, *p), obj, eidx, new_medium, (n1, n2), inc)
                    });
                }
            }
            TraceMode::Tree => {
                let (rs_, rp_) = (*s * f.rs, *p * f.rp);
                let (ts_, tp_) = (*s - rs_, *p - rp_);
                let r_ok = rs_ + rp_ > ray.floor && rs_ + rp_ > 0.0;
                let t_ok = ts_ + tp_ > ray.floor && ts_ + tp_ > 0.0;
                if !r_ok {
                    out.budget.below_threshold += rs_ + rp_;
                }
                if !t_ok {
                    out.budget.below_threshold += ts_ + tp_;
                }
                match (t_ok, r_ok) {
                    (true, r_ok) => {
                        if r_ok {
                            stack.push(Pending {
                                parent: id,
                                source: ray.source,
                                origin: point,
                                dir: rdir,
                                s: rs_,
                                p: rp_,
                                wavelength: ray.wavelength,
                                medium: *medium,
                                depth,
                                floor: ray.floor,
                                on: next_on,
                                first: ev(
                                    EventKind::Reflect,
                                    point,
                                    before,
                                    (rs_, rp_),
                                    obj,
                                    eidx,
                                    *medium,
                                    (n1, n2),
                                    inc,
                                ),
                                rng: rng.clone(),
                            });
                        }
                        *s = ts_;
                        *p = tp_;
                        *dir = tdir;
                        *medium = new_medium;
                        out.event(Event {
                            ray: id,
                            ..ev(EventKind::Refract, point, before, (*s, *p), obj, eidx, new_medium, (n1, n2), inc)
                        });
                    }
                    (false, true) => {
                        *s = rs_;
                        *p = rp_;
                        *dir = rdir;
                        out.event(Event {
                            ray: id,
                            ..ev(EventKind::Reflect, point, before, (*s, *p), obj, eidx, *medium, (n1, n2), inc)
                        });
                    }
                    (false, false) => {
                        out.event(Event {
                            ray: id,
                            ..ev(EventKind::Dropped, point, before, (0.0, 0.0), obj, eidx, *medium, (n1, n2), inc)
                        });
                        return Next::Stop;
                    }
                }
            }
        }
        Next::Continue
    }
}
