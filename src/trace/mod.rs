//! The trace engine: `trace(&Scene, &TraceConfig) -> Trace`.
//!
//! Tracing never fails. Objects that cannot be traced are left out with a warning, and the
//! result always carries a closed power budget: every launched watt ends in exactly one sink.
//!
//! Work is split into fixed chunks of launched rays that are traced independently (in
//! parallel with rayon) and merged in order, so the result does not depend on the number of
//! threads. Chunks are run in fixed batches; between batches the caller's [`Control`] is
//! told the progress and asked whether to stop.

mod compile;
mod engine;
mod job;
mod launch;
pub mod pick;

use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};

use rayon::prelude::*;

pub use compile::{BvhUpdate, Compiled, Crossing, Interface, Role, UpdateReport};
pub use job::TraceJob;
pub use launch::{Launch, Launcher};

use crate::geom::Vec2;
use crate::scene::{Scene, TraceMode, TraceSettings};

/// Launched rays per chunk (the unit of parallel work).
const CHUNK: usize = 8;
/// Chunks per batch (the unit of progress, cancellation and the event cap).
const BATCH: usize = 64;

/// Default of [`TraceConfig::max_branches_per_ray`].
pub const DEFAULT_MAX_BRANCHES_PER_RAY: u32 = 100_000;

/// Everything one trace runs with: the scene's own settings (possibly changed, e.g. by the
/// command line) plus what only a run decides. [`TraceConfig::from_scene`] starts from the
/// scene file.
#[derive(Clone, Debug, PartialEq)]
pub struct TraceConfig {
    /// Mode, threshold, depth limit, seed, event cap and margin. The trace reads them here,
    /// never from the scene.
    pub settings: TraceSettings,
    /// Tree mode: most branches split off one launched ray. Beyond it a ray keeps only its
    /// transmitted part and the reflected part counts as below threshold (with a warning),
    /// so a trace stays bounded whatever the threshold and depth.
    pub max_branches_per_ray: u32,
    /// If set, every source launches this many rays per wavelength instead of its own count.
    pub rays: Option<u32>,
    /// Threads to use; `None` uses rayon's global pool.
    pub threads: Option<usize>,
}

impl TraceConfig {
    pub fn from_scene(scene: &Scene) -> Self {
        Self {
            settings: scene.settings.clone(),
            max_branches_per_ray: DEFAULT_MAX_BRANCHES_PER_RAY,
            rays: None,
            threads: None,
        }
    }
}

/// What happened at one point of a ray's path.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[repr(u8)]
pub enum EventKind {
    /// The ray leaves its source.
    Launch,
    /// Transmitted through an interface (possibly with a reflected sibling in tree mode).
    Refract,
    /// Reflected: a partial Fresnel reflection, a mirror or a beam splitter.
    Reflect,
    /// Totally internally reflected.
    Tir,
    /// Passed a beam splitter or an interface between equal indices without bending.
    Transmit,
    /// Absorbed by an absorber, a mirror's back or a beam splitter.
    Absorb,
    /// Absorbed by a detector and recorded.
    Detect,
    /// Left the scene's boundary.
    Escape,
    /// Stopped by the event limit (counted as trapped).
    Limit,
    /// Dropped below the power threshold.
    Dropped,
}

impl EventKind {
    pub fn word(self) -> &'static str {
        match self {
            Self::Launch => "launch",
            Self::Refract => "refract",
            Self::Reflect => "reflect",
            Self::Tir => "TIR",
            Self::Transmit => "transmit",
            Self::Absorb => "absorb",
            Self::Detect => "detect",
            Self::Escape => "escape",
            Self::Limit => "limit",
            Self::Dropped => "dropped",
        }
    }

    /// Whether the ray ends here.
    pub fn is_end(self) -> bool {
        matches!(self, Self::Absorb | Self::Detect | Self::Escape | Self::Limit | Self::Dropped)
    }
}

/// No object or edge.
pub const NONE: u32 = u32::MAX;

/// One event of one ray: 64 bytes, so a million fit in 64 MB.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Event {
    pub point: Vec2,
    /// Power in s and p leaving the event along this ray, W.
    pub after_s: f32,
    pub after_p: f32,
    /// Power in s and p arriving at the event, W.
    pub before_s: f32,
    pub before_p: f32,
    pub ray: u32,
    /// The object's slot in [`Trace::objects`] (the source at a launch; [`NONE`] where no
    /// object is involved: escape, limit, a branch dropped between surfaces); its id is
    /// [`Trace::object_id_of`]. A slot, not an id, so that an event stays 64 bytes.
    pub object_slot: u32,
    /// Edge number within the object, in the order the file gives the edges ([`NONE`] where
    /// no edge is involved).
    pub edge: u32,
    /// The medium the ray travels in after this event (0 ambient, k + 1 solid k).
    pub medium: u32,
    /// Indices on the arriving and the far side (equal to `n1` where nothing is crossed).
    pub n1: f32,
    pub n2: f32,
    /// Angle of incidence in degrees (0 where not applicable).
    pub incidence_deg: f32,
    pub kind: EventKind,
}

impl Event {
    /// Fresnel coefficients at this event, recomputed from its indices and angle.
    pub fn fresnel(&self) -> crate::optics::Fresnel {
        crate::optics::fresnel(f64::from(self.n1), f64::from(self.n2), f64::from(self.incidence_deg).to_radians().cos())
    }
}

/// One ray: a launched ray or a branch split off another.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RayRecord {
    pub id: u32,
    /// The ray this one split off from ([`NONE`] for a launched ray).
    pub parent: u32,
    /// Id of the source object (as in the file).
    pub source: u64,
    pub wavelength_nm: f64,
    /// Index of the first stored event and number stored.
    pub first_event: usize,
    pub n_events: u32,
}

/// Where the power went, in watts.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Budget {
    pub launched: f64,
    pub escaped: f64,
    /// Absorbed anywhere (media, absorbers, mirror and splitter losses).
    pub absorbed: f64,
    /// Absorbed inside the media, per medium (0 ambient, k + 1 solid k).
    pub absorbed_in_media: Vec<f64>,
    /// Absorbed by thin elements: (object id, W) for every object of the scene, in scene order.
    pub absorbed_by_object: Vec<(u64, f64)>,
    pub trapped: f64,
    pub below_threshold: f64,
    /// Per detector (same order as [`Trace::detectors`]).
    pub detected: Vec<f64>,
}

impl Budget {
    fn sized(media: usize, object_ids: &[u64], detectors: usize) -> Self {
        Self {
            absorbed_in_media: vec![0.0; media],
            absorbed_by_object: object_ids.iter().map(|&id| (id, 0.0)).collect(),
            detected: vec![0.0; detectors],
            ..Self::default()
        }
    }

    fn add(&mut self, o: &Budget) {
        self.launched += o.launched;
        self.escaped += o.escaped;
        self.absorbed += o.absorbed;
        self.trapped += o.trapped;
        self.below_threshold += o.below_threshold;
        for (a, b) in self.absorbed_in_media.iter_mut().zip(&o.absorbed_in_media) {
            *a += b;
        }
        for (a, b) in self.absorbed_by_object.iter_mut().zip(&o.absorbed_by_object) {
            a.1 += b.1;
        }
        for (a, b) in self.detected.iter_mut().zip(&o.detected) {
            *a += b;
        }
    }

    /// Power absorbed by the thin element with id `object_id`.
    pub fn absorbed_by(&self, object_id: u64) -> f64 {
        self.absorbed_by_object.iter().filter(|(id, _)| *id == object_id).map(|(_, w)| w).sum()
    }

    pub fn detected_total(&self) -> f64 {
        self.detected.iter().sum()
    }

    /// Sum of all sinks.
    pub fn accounted(&self) -> f64 {
        self.escaped + self.absorbed + self.trapped + self.below_threshold + self.detected_total()
    }

    /// |launched − accounted| / launched (0 when nothing was launched).
    pub fn closure_error(&self) -> f64 {
        if self.launched > 0.0 { (self.launched - self.accounted()).abs() / self.launched } else { 0.0 }
    }
}

/// One ray arriving at a detector.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DetectorHit {
    /// Distance along the detector from its first point, mm.
    pub along: f64,
    /// Angle of the arriving ray from the detector's normal on the side it came from,
    /// degrees in −90…90 (positive counter-clockwise).
    pub angle_deg: f64,
    pub power: f64,
    pub wavelength_nm: f64,
}

/// Everything one detector saw.
#[derive(Clone, Debug, PartialEq)]
pub struct DetectorResult {
    /// Id of the detector object (as in the file) and its name.
    pub object: u64,
    pub name: String,
    pub length: f64,
    pub hits: Vec<DetectorHit>,
}

/// An object of the traced scene as the trace saw it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TracedObject {
    /// Its id in the file.
    pub id: u64,
    pub name: String,
    /// Its kind in words ("solid", "absorber", …).
    pub kind: &'static str,
}

/// The result of a trace.
#[derive(Clone, Debug)]
pub struct Trace {
    pub mode: TraceMode,
    /// The scene's revision when it was traced; see [`Trace::is_stale`].
    pub revision: u64,
    /// Every object of the scene in scene order; [`Event::object_slot`] indexes this.
    pub objects: Vec<TracedObject>,
    pub rays: Vec<RayRecord>,
    pub events: Vec<Event>,
    pub budget: Budget,
    pub detectors: Vec<DetectorResult>,
    /// Names of the media, 0 the ambient.
    pub medium_names: Vec<String>,
    /// The object each medium belongs to: `None` for medium 0 (the ambient), then the id of
    /// the solid of each medium k + 1.
    pub medium_objects: Vec<Option<u64>>,
    pub wavelengths: Vec<f64>,
    /// Rays traced (launched and split), including those whose events were not stored.
    pub n_rays: u64,
    /// Events produced, including those not stored.
    pub n_events: u64,
    /// Whether the event cap was reached.
    pub events_truncated: bool,
    /// Most events held at once by the unmerged chunk results of one batch (with a chunk
    /// traced again at the cap): at most twice `max_stored_events`, however many events the
    /// rays make.
    pub events_held_peak: usize,
    /// Whether the trace was stopped early; the budget then covers only the rays traced.
    pub cancelled: bool,
    pub warnings: Vec<String>,
}

impl Trace {
    /// The stored events of a ray.
    pub fn events_of(&self, ray: &RayRecord) -> &[Event] {
        &self.events[ray.first_event..ray.first_event + ray.n_events as usize]
    }

    /// The object an event happened at, if any.
    pub fn object_of(&self, event: &Event) -> Option<&TracedObject> {
        self.objects.get(event.object_slot as usize)
    }

    /// The id (as in the file) of the object an event happened at, if any.
    pub fn object_id_of(&self, event: &Event) -> Option<u64> {
        self.object_of(event).map(|o| o.id)
    }

    /// The traced object with id `id`.
    pub fn object(&self, id: u64) -> Option<&TracedObject> {
        self.objects.iter().find(|o| o.id == id)
    }

    /// Whether `scene` has changed since this trace was made from it (by its revision).
    pub fn is_stale(&self, scene: &Scene) -> bool {
        scene.revision != self.revision
    }
}

/// Progress reporting and cancellation, shared with another thread.
#[derive(Debug, Default)]
pub struct Control {
    cancel: AtomicBool,
    done: AtomicU64,
    total: AtomicU64,
}

impl Control {
    pub fn new() -> Self {
        Self::default()
    }

    /// Asks the trace to stop at the next chunk.
    pub fn cancel(&self) {
        self.cancel.store(true, Ordering::Relaxed);
    }

    pub fn is_cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }

    /// Launched rays finished so far and in all.
    pub fn progress(&self) -> (u64, u64) {
        (self.done.load(Ordering::Relaxed), self.total.load(Ordering::Relaxed))
    }
}

/// Traces `scene` with `config`.
pub fn trace(scene: &Scene, config: &TraceConfig) -> Trace {
    trace_with(scene, config, &Control::new())
}

/// Traces `scene`, reporting progress to and obeying cancellation from `control`.
pub fn trace_with(scene: &Scene, config: &TraceConfig, control: &Control) -> Trace {
    let compiled = Compiled::new(scene);
    trace_compiled(scene, &compiled, config, control)
}

/// The trace put together so far, chunk by chunk in launch order.
struct Merged {
    budget: Budget,
    detectors: Vec<DetectorResult>,
    rays: Vec<RayRecord>,
    events: Vec<Event>,
    n_rays: u64,
    n_events: u64,
    n_cut_branches: u64,
    truncated: bool,
    /// Whether the first ray alone was longer than the cap and was kept cut short.
    first_ray_cut: bool,
    cancelled: bool,
    max_stored_events: usize,
    /// Most events held at once by the unmerged results of one batch (re-traced chunks
    /// included).
    held_peak: usize,
}

/// What one chunk of a batch gave: its launched-ray range and result (`None` if it was
/// stopped by cancellation).
type ChunkOutcome = ((u64, u64), Option<engine::ChunkResult>);

impl Merged {
    fn new(compiled: &Compiled, object_ids: &[u64], max_stored_events: usize) -> Self {
        Self {
            budget: Budget::sized(compiled.alpha.len(), object_ids, compiled.detectors.len()),
            detectors: compiled
                .detectors
                .iter()
                .map(|d| DetectorResult {
                    object: object_ids.get(d.object as usize).copied().unwrap_or_default(),
                    name: d.name.clone(),
                    length: d.length,
                    hits: Vec::new(),
                })
                .collect(),
            rays: Vec::new(),
            events: Vec::new(),
            n_rays: 0,
            n_events: 0,
            n_cut_branches: 0,
            truncated: false,
            first_ray_cut: false,
            cancelled: false,
            max_stored_events,
            held_peak: 0,
        }
    }

    /// Appends a batch of chunk results (`store`: whether their events may be kept), keeping
    /// complete rays in launch order while they fit under the cap. A chunk that stopped
    /// keeping events early (its share of the room ran out while other chunks ran) is traced
    /// again by `retrace` with exactly the room left, so the events kept do not depend on
    /// timing or the number of threads. Returns whether to go on (false once a chunk was
    /// stopped by cancellation).
    fn add(
        &mut self,
        results: Vec<ChunkOutcome>,
        store: bool,
        retrace: &dyn Fn((u64, u64), usize) -> engine::ChunkResult,
    ) -> bool {
        let held: usize = results.iter().filter_map(|(_, r)| r.as_ref()).map(|r| r.events.len()).sum();
        self.held_peak = self.held_peak.max(held);
        for (range, r) in results {
            let Some(r) = r else {
                self.cancelled = true;
                continue;
            };
            self.budget.add(&r.budget);
            for (d, h) in self.detectors.iter_mut().zip(r.hits) {
                d.hits.extend(h);
            }
            self.n_events += r.n_events;
            self.n_cut_branches += r.n_cut_branches;
            let ray_base = self.n_rays as u32;
            self.n_rays += r.n_rays;
            if self.truncated || !store {
                continue;
            }
            let room = self.max_stored_events.saturating_sub(self.events.len());
            let (rays, events, all_stored) = if r.all_stored {
                (r.rays, r.events, true)
            } else {
                drop(r.events);
                let again = retrace(range, room);
                self.held_peak = self.held_peak.max(held + again.events.len());
                self.first_ray_cut |= again.first_ray_cut;
                (again.rays, again.events, again.all_stored)
            };
            // The rays whose events all fit.
            let fit = rays.partition_point(|ray| ray.first_event + ray.n_events as usize <= room);
            let n_events_kept = rays[..fit].last().map_or(0, |ray| ray.first_event + ray.n_events as usize);
            if fit < rays.len() || !all_stored {
                self.truncated = true;
            }
            let event_base = self.events.len();
            self.rays.extend(rays.into_iter().take(fit).map(|mut ray| {
                ray.id += ray_base;
                if ray.parent != NONE {
                    ray.parent += ray_base;
                }
                ray.first_event += event_base;
                ray
            }));
            self.events.extend(events.into_iter().take(n_events_kept).map(|mut e| {
                e.ray += ray_base;
                e
            }));
        }
        !self.cancelled
    }

    /// The finished trace, with warnings about what was cut or stopped.
    fn into_trace(self, scene: &Scene, compiled: &Compiled, config: &TraceConfig) -> Trace {
        let mut warnings = compiled.warnings.clone();
        let object_ids: Vec<u64> = scene.objects.iter().map(|o| o.id).collect();
        let Merged {
            budget,
            detectors,
            rays,
            events,
            n_rays,
            n_events,
            n_cut_branches,
            truncated,
            first_ray_cut,
            cancelled,
            held_peak,
            ..
        } = self;
        let cap = config.settings.max_stored_events;
        if first_ray_cut {
            warnings.push(format!(
                "the first ray alone has more events than settings.max_stored_events = {cap}: only its first {} of {n_events} events were kept; the budget covers all rays",
                events.len()
            ));
        } else if truncated {
            warnings.push(format!(
                "only the first {} of {n_events} events were kept, as {} whole rays (the limit is settings.max_stored_events = {cap}); the budget covers all rays",
                events.len(),
                rays.len()
            ));
        }
        if n_cut_branches > 0 {
            warnings.push(format!(
                "{n_cut_branches} reflected branches were not followed because a launched ray reached the limit of {} branches; their power is counted as below threshold",
                config.max_branches_per_ray
            ));
        }
        if cancelled {
            warnings.push("the trace was stopped before all rays were traced".to_owned());
        }
        let err = budget.closure_error();
        if err > 1e-9 {
            warnings.push(format!("the power budget closes only to {err:.2e} relative"));
        }
        let objects = scene
            .objects
            .iter()
            .map(|o| TracedObject { id: o.id, name: o.name.clone(), kind: o.kind.word() })
            .collect();
        let medium_objects = std::iter::once(None)
            .chain(compiled.solids.iter().map(|s| object_ids.get(s.object as usize).copied()))
            .collect();
        Trace {
            mode: config.settings.mode,
            revision: scene.revision,
            objects,
            rays,
            events,
            budget,
            detectors,
            medium_names: compiled.medium_names.clone(),
            medium_objects,
            wavelengths: compiled.wavelengths.clone(),
            n_rays,
            n_events,
            events_truncated: truncated,
            events_held_peak: held_peak,
            cancelled,
            warnings,
        }
    }
}

/// A thread pool of `threads` threads, made on first use and kept for later traces (making
/// a pool per trace costs more than a short retrace). `None` if the pool cannot be made;
/// the global pool is used then.
fn pool_of(threads: usize) -> Option<std::sync::Arc<rayon::ThreadPool>> {
    use std::collections::HashMap;
    use std::sync::{Arc, Mutex, OnceLock};
    static POOLS: OnceLock<Mutex<HashMap<usize, Arc<rayon::ThreadPool>>>> = OnceLock::new();
    let threads = threads.max(1);
    let mut pools =
        POOLS.get_or_init(|| Mutex::new(HashMap::new())).lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    if let Some(p) = pools.get(&threads) {
        return Some(Arc::clone(p));
    }
    let pool = Arc::new(rayon::ThreadPoolBuilder::new().num_threads(threads).build().ok()?);
    pools.insert(threads, Arc::clone(&pool));
    Some(pool)
}

/// Traces an already compiled scene (lets a caller reuse the BVH between traces). The
/// scene must be the revision `compiled` was made or last updated from.
pub fn trace_compiled(scene: &Scene, compiled: &Compiled, config: &TraceConfig, control: &Control) -> Trace {
    let launcher = launch::Launcher::new(scene, compiled, config);
    control.total.store(launcher.len(), Ordering::Relaxed);
    control.done.store(0, Ordering::Relaxed);
    let object_ids: Vec<u64> = scene.objects.iter().map(|o| o.id).collect();
    let tracer = engine::Tracer::new(compiled, config, &object_ids);
    let n_chunks = launcher.len().div_ceil(CHUNK as u64);
    let chunks: Vec<(u64, u64)> = (0..n_chunks).map(|k| (k * CHUNK as u64, (k + 1) * CHUNK as u64)).collect();
    let mut m = Merged::new(compiled, &object_ids, config.settings.max_stored_events);
    // Room for events not yet taken by any chunk: what chunks take from it (merged or not)
    // never exceeds the cap, and a chunk traced again at the merge takes at most the room
    // left, so memory follows the cap however many events the rays make.
    let cap = config.settings.max_stored_events;
    let allowance = AtomicUsize::new(cap);
    let run_batch = |batch: &[(u64, u64)], store: bool| -> Vec<ChunkOutcome> {
        batch
            .par_iter()
            .map(|&(start, end)| {
                if control.is_cancelled() {
                    return ((start, end), None);
                }
                let launches = launcher.range(start, end);
                let storage = if store { engine::Storage::Shared(&allowance) } else { engine::Storage::Off };
                let r = tracer.trace_chunk(&launches, storage);
                control.done.fetch_add(launches.len() as u64, Ordering::Relaxed);
                ((start, end), Some(r))
            })
            .collect()
    };
    let retrace = |(start, end): (u64, u64), room: usize| {
        // Only when nothing is kept yet (the very first ray) may a ray be kept cut short.
        tracer.trace_chunk(&launcher.range(start, end), engine::Storage::Room { room, cut_first_ray: room == cap })
    };
    let pool = config.threads.and_then(pool_of);
    // Merging one batch (serial: it appends to the single event list) runs beside the
    // tracing of the next, inside the same pool, so with two or more threads the merge no
    // longer leaves the other threads idle. With one thread both run on it in turn.
    // The merge sees results in batch order, exactly as before. A batch may be traced with
    // events stored just as the previous merge reaches the event cap; its events are then
    // skipped, as they would have been.
    let mut batches = chunks.chunks(BATCH);
    let mut traced: Option<(Vec<ChunkOutcome>, bool)> = None;
    loop {
        let go_on = !control.is_cancelled();
        let next = if go_on { batches.next() } else { None };
        if next.is_none() && traced.is_none() {
            m.cancelled |= !go_on;
            break;
        }
        // `m.truncated` may still turn true while `traced` is merged; see above.
        let store = !m.truncated;
        let prev = traced.take();
        let m_ref = &mut m;
        let (allowance, retrace) = (&allowance, &retrace);
        let step = move || {
            rayon::join(
                move || {
                    prev.is_none_or(|(results, store)| {
                        let go_on = m_ref.add(results, store, retrace);
                        if m_ref.truncated {
                            // Nothing more will be kept: stop chunks under way from keeping events.
                            allowance.store(0, Ordering::Relaxed);
                        }
                        go_on
                    })
                },
                || next.map(|batch| (run_batch(batch, store), store)),
            )
        };
        let (keep_going, results) = match pool.as_deref() {
            Some(p) => p.install(step),
            None => step(),
        };
        traced = results;
        if !keep_going {
            // Cancelled while merging: keep what the batch already under way produced (its
            // chunks stop early) and start nothing new.
            if let Some((results, store)) = traced.take() {
                m.add(results, store, &retrace);
            }
            break;
        }
        if !go_on {
            m.cancelled = true;
        }
    }
    m.into_trace(scene, compiled, config)
}
