//! Following rays: one chunk of launched rays at a time, with every split branch traced
//! depth-first right after its parent so each ray's events are stored together.

use std::sync::atomic::{AtomicUsize, Ordering};

use super::compile::{Compiled, Role};
use super::launch::{Launch, Rng};
use super::{Budget, DetectorHit, Event, EventKind, NONE, RayRecord, TraceConfig};
use crate::geom::{Aabb, BvhHit, Vec2, cross};
use crate::optics::{fresnel, reflect, refract};
use crate::scene::TraceMode;

/// Where a chunk may keep its events.
#[derive(Clone, Copy, Debug)]
pub enum Storage<'s> {
    /// Keep none (the event cap is already reached).
    Off,
    /// Take room from an allowance shared with the chunks running beside this one, a block
    /// at a time; stop keeping events when it runs out.
    Shared(&'s AtomicUsize),
    /// Keep at most `room`; if `cut_first_ray`, a first ray longer than that keeps its
    /// first `room` events rather than none.
    Room { room: usize, cut_first_ray: bool },
}

/// Events a chunk takes from a shared allowance at a time.
const BLOCK: usize = 1024;

/// What one chunk produced; ray ids and event positions are local to the chunk.
pub struct ChunkResult {
    pub budget: Budget,
    pub hits: Vec<Vec<DetectorHit>>,
    /// The rays kept: complete rays, the first ones of the chunk.
    pub rays: Vec<RayRecord>,
    pub events: Vec<Event>,
    pub n_rays: u64,
    pub n_events: u64,
    /// Whether every ray of the chunk was kept (false if storage was off or ran out).
    pub all_stored: bool,
    /// Whether the first ray was kept cut short (see [`Storage::Room`]).
    pub first_ray_cut: bool,
    /// Tree branches not followed because a launched ray reached its branch limit.
    pub n_cut_branches: u64,
}

pub struct Tracer<'a> {
    c: &'a Compiled,
    /// Id of each object slot (as in the file).
    object_ids: &'a [u64],
    mode: TraceMode,
    threshold: f64,
    max_depth: u32,
    /// Tree mode: most branches split off one launched ray.
    max_branches: u64,
    /// Rays leaving this box escape (the scene's extent with the configured margin).
    bounds: Aabb,
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

/// Where a ray is and what it carries, changing at every event.
#[derive(Clone, Debug)]
struct Walk {
    origin: Vec2,
    dir: Vec2,
    s: f64,
    p: f64,
    medium: u32,
    depth: u32,
    /// Edges the ray starts on.
    on: OnEdges,
    rng: Rng,
}

impl Walk {
    fn power(&self) -> (f64, f64) {
        (self.s, self.p)
    }

    fn total(&self) -> f64 {
        self.s + self.p
    }

    fn set_power(&mut self, power: (f64, f64)) {
        (self.s, self.p) = power;
    }
}

/// A ray waiting to be followed.
struct Pending {
    parent: u32,
    /// Slot of the source object.
    source: u32,
    wavelength: u32,
    /// Power threshold for this ray's branches, W.
    floor: f64,
    first: Event,
    walk: Walk,
}

/// The ray being followed: its id in the chunk and what it was launched or split with.
struct Current<'r> {
    id: u32,
    ray: &'r Pending,
    wl: usize,
}

impl Current<'_> {
    /// A reflected branch split off this ray, starting with event `first`, to be followed
    /// after it.
    fn branch(&self, w: &Walk, dir: Vec2, power: (f64, f64), first: Event, next_on: OnEdges) -> Pending {
        let r = self.ray;
        Pending {
            parent: self.id,
            source: r.source,
            wavelength: r.wavelength,
            floor: r.floor,
            first,
            walk: Walk {
                origin: first.point,
                dir,
                s: power.0,
                p: power.1,
                medium: w.medium,
                depth: w.depth,
                on: next_on,
                rng: w.rng.clone(),
            },
        }
    }
}

/// What a chunk collects while it runs.
#[allow(clippy::struct_excessive_bools)] // independent flags of event storage, each set at its own point
struct Out<'s> {
    budget: Budget,
    hits: Vec<Vec<DetectorHit>>,
    rays: Vec<RayRecord>,
    events: Vec<Event>,
    n_rays: u64,
    n_events: u64,
    /// Whether events are still being kept.
    store: bool,
    /// Events that may be kept before asking `allowance` for more.
    limit: usize,
    allowance: Option<&'s AtomicUsize>,
    /// Whether an event of the current ray found no room.
    overflow: bool,
    all_stored: bool,
    /// Whether a first ray that does not fit keeps what fits.
    cut_first_ray: bool,
    first_ray_cut: bool,
    /// Branches the current launched ray may still split off (tree mode).
    branches_left: u64,
    n_cut_branches: u64,
}

impl<'s> Out<'s> {
    fn new(budget: Budget, n_detectors: usize, storage: Storage<'s>) -> Self {
        let (store, limit, allowance, cut_first_ray) = match storage {
            Storage::Off => (false, 0, None, false),
            Storage::Shared(a) => (true, 0, Some(a), false),
            Storage::Room { room, cut_first_ray } => (true, room, None, cut_first_ray),
        };
        Self {
            budget,
            hits: vec![Vec::new(); n_detectors],
            rays: Vec::new(),
            events: Vec::new(),
            n_rays: 0,
            n_events: 0,
            store,
            limit,
            allowance,
            overflow: false,
            all_stored: store,
            cut_first_ray,
            first_ray_cut: false,
            branches_left: 0,
            n_cut_branches: 0,
        }
    }

    /// Power absorbed by a thin element.
    fn absorbed_by(&mut self, object: usize, w: f64) {
        self.budget.absorbed += w;
        if let Some(a) = self.budget.absorbed_by_object.get_mut(object) {
            a.1 += w;
        }
    }

    fn event(&mut self, e: Event) {
        self.n_events += 1;
        if !self.store {
            return;
        }
        if self.events.len() >= self.limit && !self.reserve() {
            self.store = false;
            self.overflow = true;
            return;
        }
        self.events.push(e);
    }

    /// Takes up to [`BLOCK`] more events of room from the shared allowance.
    fn reserve(&mut self) -> bool {
        let Some(allowance) = self.allowance else { return false };
        match allowance
            .fetch_update(Ordering::Relaxed, Ordering::Relaxed, |left| (left > 0).then(|| left - left.min(BLOCK)))
        {
            Ok(left) => {
                self.limit += left.min(BLOCK);
                true
            }
            Err(_) => false,
        }
    }

    /// Closes a ray whose events start at `first_event`: keeps its record if all its events
    /// were kept, else drops the part kept and keeps no more (so the rays kept are complete
    /// and come first).
    fn end_ray(&mut self, record: RayRecord) {
        if self.overflow {
            self.overflow = false;
            self.all_stored = false;
            if self.cut_first_ray && record.first_event == 0 && !self.events.is_empty() {
                // Nothing fits whole: show the start of the first ray rather than nothing.
                self.first_ray_cut = true;
                self.rays.push(RayRecord { n_events: self.events.len() as u32, ..record });
            } else {
                self.events.truncate(record.first_event);
            }
        } else if self.store {
            self.rays.push(record);
        }
    }

    /// Tree mode: decides which parts of a split go on, counting the rest as below the
    /// threshold. A launched ray that has used up its branches keeps only the transmitted
    /// part; the reflected part is counted below the threshold and as a cut branch.
    fn tree_split(&mut self, reflected: (f64, f64), transmitted: (f64, f64), floor: f64) -> Split {
        let sum = |x: (f64, f64)| x.0 + x.1;
        let r_ok = sum(reflected) > floor && sum(reflected) > 0.0;
        let t_ok = sum(transmitted) > floor && sum(transmitted) > 0.0;
        if !r_ok {
            self.budget.below_threshold += sum(reflected);
        }
        if !t_ok {
            self.budget.below_threshold += sum(transmitted);
        }
        match (r_ok, t_ok) {
            (true, true) if self.branches_left == 0 => {
                self.budget.below_threshold += sum(reflected);
                self.n_cut_branches += 1;
                Split::Transmitted
            }
            (true, true) => {
                self.branches_left -= 1;
                Split::Both
            }
            (true, false) => Split::Reflected,
            (false, true) => Split::Transmitted,
            (false, false) => Split::Neither,
        }
    }

    fn finish(self) -> ChunkResult {
        if let Some(allowance) = self.allowance {
            // Give back the room taken but not used.
            allowance.fetch_add(self.limit - self.events.len(), Ordering::Relaxed);
        }
        ChunkResult {
            budget: self.budget,
            hits: self.hits,
            rays: self.rays,
            events: self.events,
            n_rays: self.n_rays,
            n_events: self.n_events,
            all_stored: self.all_stored,
            first_ray_cut: self.first_ray_cut,
            n_cut_branches: self.n_cut_branches,
        }
    }
}

#[allow(clippy::too_many_arguments)] // the fields of an event
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

/// What handling an event leaves the ray with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Next {
    Continue,
    Stop,
}

/// What a thin element did with the ray.
enum Thin {
    /// The ray ends there.
    Stop,
    /// Reflected (or turned): go on from the element.
    Turned,
    /// Passed through a beam splitter: solids at the same point still act.
    Passed,
}

/// Tree mode: which parts of a split go on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Split {
    /// Both: the ray goes on transmitted, the reflected part is split off as a child ray.
    Both,
    Transmitted,
    Reflected,
    /// Neither is above the threshold.
    Neither,
}

impl<'a> Tracer<'a> {
    pub fn new(c: &'a Compiled, cfg: &TraceConfig, object_ids: &'a [u64]) -> Self {
        Self {
            c,
            object_ids,
            mode: cfg.settings.mode,
            threshold: if cfg.settings.threshold.is_finite() { cfg.settings.threshold.max(0.0) } else { 0.0 },
            max_depth: cfg.settings.max_depth.max(1),
            max_branches: u64::from(cfg.max_branches_per_ray),
            bounds: c.bounds_with_margin(cfg.settings.margin),
            t_min: 1e-10 * c.scale,
            group_eps: 1e-9 * c.scale,
            probe: 1e-7 * c.scale,
        }
    }

    pub fn trace_chunk(&self, launches: &[Launch], storage: Storage) -> ChunkResult {
        let budget = Budget::sized(self.c.alpha.len(), self.object_ids, self.c.detectors.len());
        let mut out = Out::new(budget, self.c.detectors.len(), storage);
        let mut stack: Vec<Pending> = Vec::new();
        let mut scratch = Vec::with_capacity(8);
        for l in launches {
            let total = l.power_s + l.power_p;
            out.budget.launched += total;
            out.branches_left = self.max_branches;
            let n = self.c.index[l.wavelength as usize][l.medium as usize];
            let power = (l.power_s, l.power_p);
            stack.push(Pending {
                parent: NONE,
                source: l.source,
                wavelength: l.wavelength,
                floor: if self.mode == TraceMode::Tree { self.threshold * total } else { 0.0 },
                first: ev(EventKind::Launch, l.origin, power, power, l.source, NONE, l.medium, (n, n), 0.0),
                walk: Walk {
                    origin: l.origin,
                    dir: l.dir,
                    s: l.power_s,
                    p: l.power_p,
                    medium: l.medium,
                    depth: 0,
                    on: OnEdges::default(),
                    rng: Rng::new(l.seed),
                },
            });
            while let Some(ray) = stack.pop() {
                self.follow(&ray, &mut out, &mut stack, &mut scratch);
            }
        }
        out.finish()
    }

    /// Follows one ray (a launched ray or a branch) to its end, event by event.
    fn follow(&self, ray: &Pending, out: &mut Out, stack: &mut Vec<Pending>, group: &mut Vec<BvhHit>) {
        let cur = Current { id: out.n_rays as u32, ray, wl: ray.wavelength as usize };
        out.n_rays += 1;
        let first_event = out.events.len();
        out.event(Event { ray: cur.id, ..ray.first });
        let mut walk = ray.walk.clone();
        while self.step(&cur, &mut walk, out, stack, group) == Next::Continue {}
        out.end_ray(RayRecord {
            id: cur.id,
            parent: ray.parent,
            source: self.object_ids.get(ray.source as usize).copied().unwrap_or_default(),
            wavelength_nm: self.c.wavelengths[cur.wl],
            first_event,
            n_events: (out.events.len() - first_event) as u32,
        });
    }

    /// Takes the ray to its next event: the event limit, the scene's boundary, a thin
    /// element or an interface between media.
    fn step(
        &self,
        cur: &Current,
        w: &mut Walk,
        out: &mut Out,
        stack: &mut Vec<Pending>,
        group: &mut Vec<BvhHit>,
    ) -> Next {
        let n_here = self.c.index[cur.wl][w.medium as usize];
        // An event that ends the ray, with the power arriving.
        let end = |w: &Walk, kind: EventKind, point: Vec2| Event {
            ray: cur.id,
            ..ev(kind, point, w.power(), (0.0, 0.0), NONE, NONE, w.medium, (n_here, n_here), 0.0)
        };
        if w.depth >= self.max_depth {
            out.event(end(w, EventKind::Limit, w.origin));
            out.budget.trapped += w.total();
            return Next::Stop;
        }
        let t_exit = self.bounds.exit_distance(w.origin, w.dir);
        self.c.bvh.cast_group(w.origin, w.dir, self.t_min, t_exit, self.group_eps, w.on.as_slice(), group);
        self.absorb_along(w, group.first().map_or(t_exit, |h| h.t), out);
        let Some(&h0) = group.first() else {
            out.event(end(w, EventKind::Escape, w.origin + w.dir * t_exit));
            out.budget.escaped += w.total();
            return Next::Stop;
        };
        let point = h0.point;
        w.depth += 1;
        if self.mode == TraceMode::Tree && w.total() < cur.ray.floor {
            out.event(end(w, EventKind::Dropped, point));
            out.budget.below_threshold += w.total();
            return Next::Stop;
        }
        // The edges of this event: the next cast starts on them.
        let next_on = OnEdges::of(group);
        // Thin elements first: the nearest one in the group decides.
        let thin = group.iter().find(|h| !matches!(self.c.edges[h.id as usize].role, Role::Solid { .. })).copied();
        if let Some(h) = thin {
            match self.thin_element(cur, w, h, next_on, out, stack) {
                Thin::Stop => return Next::Stop,
                Thin::Turned => {
                    w.origin = point;
                    w.on = next_on;
                    return Next::Continue;
                }
                Thin::Passed => {}
            }
        }
        let next = self.cross_solids(cur, w, point, next_on, out, stack, group);
        w.origin = point;
        w.on = next_on;
        next
    }

    /// Beer–Lambert along a segment of length `t` in the ray's medium.
    fn absorb_along(&self, w: &mut Walk, t: f64, out: &mut Out) {
        let alpha = self.c.alpha[w.medium as usize];
        if alpha > 0.0 {
            let f = (-alpha * t).exp();
            let lost = w.total() * (1.0 - f);
            out.budget.absorbed += lost;
            out.budget.absorbed_in_media[w.medium as usize] += lost;
            w.s *= f;
            w.p *= f;
        }
    }

    /// A mirror, absorber, beam splitter or detector at hit `h`.
    fn thin_element(
        &self,
        cur: &Current,
        w: &mut Walk,
        h: BvhHit,
        next_on: OnEdges,
        out: &mut Out,
        stack: &mut Vec<Pending>,
    ) -> Thin {
        let info = self.c.edges[h.id as usize];
        let slot = info.object as usize;
        let point = h.point;
        let before = w.power();
        let n_here = self.c.index[cur.wl][w.medium as usize];
        let inc = incidence_deg(w.dir, h.normal);
        // An event at this thin element with the given kind and outgoing power.
        let here = |kind: EventKind, after: (f64, f64), medium: u32| Event {
            ray: cur.id,
            ..ev(kind, point, before, after, info.object, info.index, medium, (n_here, n_here), inc)
        };
        match info.role {
            Role::Absorber => {
                out.event(here(EventKind::Absorb, (0.0, 0.0), w.medium));
                out.absorbed_by(slot, w.total());
                Thin::Stop
            }
            Role::Detector { detector, along } => {
                out.event(here(EventKind::Detect, (0.0, 0.0), w.medium));
                out.budget.detected[detector as usize] += w.total();
                let n_face = if w.dir.dot(&h.normal) < 0.0 { h.normal } else { -h.normal };
                let back = -w.dir;
                let angle = cross(n_face, back).atan2(n_face.dot(&back)).to_degrees();
                let u = info.edge.param_of(point);
                out.hits[detector as usize].push(DetectorHit {
                    along: along + info.edge.length() * u,
                    angle_deg: angle,
                    power: w.total(),
                    wavelength_nm: self.c.wavelengths[cur.wl],
                });
                Thin::Stop
            }
            Role::Mirror { reflectance, one_sided } => {
                if one_sided && w.dir.dot(&h.normal) < 0.0 {
                    // Light reaching the back of a one-sided mirror is absorbed.
                    out.event(here(EventKind::Absorb, (0.0, 0.0), w.medium));
                    out.absorbed_by(slot, w.total());
                    return Thin::Stop;
                }
                out.absorbed_by(slot, w.total() * (1.0 - reflectance));
                w.s *= reflectance;
                w.p *= reflectance;
                w.dir = reflect(w.dir, h.normal).normalize();
                out.event(here(EventKind::Reflect, w.power(), w.medium));
                Thin::Turned
            }
            Role::Splitter { reflectance: r, transmittance: tr } => {
                let refl_dir = reflect(w.dir, h.normal).normalize();
                let reflected = (w.s * r, w.p * r);
                let transmitted = (w.s * tr, w.p * tr);
                let sum = |x: (f64, f64)| x.0 + x.1;
                // Which way this ray goes on, and with what power (the other branch, if any,
                // is split off as a child ray or dropped).
                let reflect_ray = match self.mode {
                    // One path: the larger share, the rest absorbed.
                    TraceMode::Principal => {
                        let reflect_ray = tr < r;
                        let kept = if reflect_ray { reflected } else { transmitted };
                        out.absorbed_by(slot, w.total() - sum(kept));
                        w.set_power(kept);
                        reflect_ray
                    }
                    // Choose by the coefficients and keep the ray's power: the choice itself
                    // carries the probability.
                    TraceMode::MonteCarlo => {
                        let u = w.rng.uniform();
                        if u >= r + tr {
                            out.event(here(EventKind::Absorb, (0.0, 0.0), w.medium));
                            out.absorbed_by(slot, w.total());
                            return Thin::Stop;
                        }
                        u < r
                    }
                    TraceMode::Tree => {
                        out.absorbed_by(slot, w.total() * (1.0 - r - tr).max(0.0));
                        let split = out.tree_split(reflected, transmitted, cur.ray.floor);
                        if split == Split::Neither {
                            out.event(here(EventKind::Dropped, (0.0, 0.0), w.medium));
                            return Thin::Stop;
                        }
                        if split == Split::Both {
                            let first = here(EventKind::Reflect, reflected, w.medium);
                            stack.push(cur.branch(w, refl_dir, reflected, first, next_on));
                        }
                        w.set_power(if split == Split::Reflected { reflected } else { transmitted });
                        split == Split::Reflected
                    }
                };
                if reflect_ray {
                    w.dir = refl_dir;
                    out.event(here(EventKind::Reflect, w.power(), w.medium));
                    Thin::Turned
                } else {
                    out.event(here(EventKind::Transmit, w.power(), w.medium));
                    Thin::Passed
                }
            }
            Role::Solid { .. } => Thin::Passed,
        }
    }

    /// Works out which solids the ray enters and leaves at `point`, then refracts, reflects
    /// or splits it.
    #[allow(clippy::too_many_arguments)] // the ray, where it is, and where its results go
    fn cross_solids(
        &self,
        cur: &Current,
        w: &mut Walk,
        point: Vec2,
        next_on: OnEdges,
        out: &mut Out,
        stack: &mut Vec<Pending>,
        group: &[BvhHit],
    ) -> Next {
        let Some(crossing) = self.c.crossing(point, w.dir, w.medium, group, self.probe) else {
            return Next::Continue;
        };
        let (new_medium, h) = (crossing.medium_after, crossing.hit);
        let edge = self.c.edges[h.id as usize];
        let n1 = self.c.index[cur.wl][w.medium as usize];
        let n2 = self.c.index[cur.wl][new_medium as usize];
        let before = w.power();
        let cos_i = w.dir.dot(&h.normal).abs().min(1.0);
        let inc = incidence_deg(w.dir, h.normal);
        // An event at this interface: kind, outgoing power, medium after.
        let here = |kind: EventKind, after: (f64, f64), medium_after: u32| Event {
            ray: cur.id,
            ..ev(kind, point, before, after, edge.object, edge.index, medium_after, (n1, n2), inc)
        };
        if n1 == n2 {
            w.medium = new_medium;
            out.event(here(EventKind::Transmit, before, new_medium));
            return Next::Continue;
        }
        let f = fresnel(n1, n2, cos_i);
        let refracted = refract(w.dir, h.normal, n1, n2);
        let Some(tdir) = refracted.filter(|_| !f.is_tir()) else {
            w.dir = reflect(w.dir, h.normal).normalize();
            out.event(here(EventKind::Tir, before, w.medium));
            return Next::Continue;
        };
        let rdir = reflect(w.dir, h.normal).normalize();
        let (s, p) = before;
        let reflected = (s * f.rs, p * f.rp);
        // Tree mode transmits exactly what is not reflected, so the budget closes.
        let transmitted = (s - reflected.0, p - reflected.1);
        // Whether the ray goes on reflected (else refracted), and with what power.
        let (go_reflected, power) = match self.mode {
            TraceMode::Principal => (false, before),
            TraceMode::MonteCarlo => {
                // Choose with the Fresnel probability for this ray's mix of s and p, then
                // rescale so the ray keeps its power (the choice carries the probability).
                let total = s + p;
                let r_pow = reflected.0 + reflected.1;
                let pr = if total > 0.0 { r_pow / total } else { 0.0 };
                if w.rng.uniform() < pr {
                    let s_new = total * reflected.0 / r_pow;
                    (true, (s_new, total - s_new))
                } else {
                    let t_pow = s * f.ts + p * f.tp;
                    let s_new = if t_pow > 0.0 { total * (s * f.ts) / t_pow } else { 0.0 };
                    (false, (s_new, total - s_new))
                }
            }
            TraceMode::Tree => match out.tree_split(reflected, transmitted, cur.ray.floor) {
                Split::Neither => {
                    out.event(here(EventKind::Dropped, (0.0, 0.0), w.medium));
                    return Next::Stop;
                }
                Split::Both => {
                    let first = here(EventKind::Reflect, reflected, w.medium);
                    stack.push(cur.branch(w, rdir, reflected, first, next_on));
                    (false, transmitted)
                }
                Split::Transmitted => (false, transmitted),
                Split::Reflected => (true, reflected),
            },
        };
        w.set_power(power);
        if go_reflected {
            w.dir = rdir;
            out.event(here(EventKind::Reflect, power, w.medium));
        } else {
            w.dir = tdir;
            w.medium = new_medium;
            out.event(here(EventKind::Refract, power, new_medium));
        }
        Next::Continue
    }
}
