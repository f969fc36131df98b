//! Rays leaving the sources.
//!
//! In principal-path and tree modes rays are spread evenly (stratified at the centres of
//! equal intervals); in Monte Carlo mode each ray's position and direction are drawn from
//! its own random stream, seeded from (seed, source, line, ray), so results do not depend on
//! how work is split across threads.

use super::{Compiled, TraceConfig};
use crate::geom::{Vec2, unit};
pub use crate::rng::Rng;
use crate::scene::{Emission, ObjectKind, Polarization, Scene, TraceMode};

/// A ray ready to trace.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Launch {
    /// Slot of the source: its position in `scene.objects` (see `Trace::objects`).
    pub source: u32,
    pub origin: Vec2,
    pub dir: Vec2,
    pub power_s: f64,
    pub power_p: f64,
    /// Index into [`Compiled::wavelengths`].
    pub wavelength: u32,
    /// Medium at the start (on a face: the medium on the side the ray heads into).
    pub medium: u32,
    /// Seed of this ray's random stream (Monte Carlo).
    pub seed: u64,
}

/// Mixes several numbers into one seed.
pub fn mix(parts: &[u64]) -> u64 {
    let mut r = Rng::new(0x5EED_F1A9_E000_0001);
    let mut h = 0u64;
    for &p in parts {
        r.stir(p.wrapping_add(h));
        h = r.next_u64();
    }
    h
}

/// One wavelength line of one source: a run of launched rays.
#[derive(Clone, Debug)]
struct Run {
    /// Object index of the source.
    source: u32,
    /// Index of the line within the source's spectrum.
    line: u32,
    wavelength: u32,
    rays: u32,
    power_s: f64,
    power_p: f64,
    /// Global index of this run's first ray.
    start: u64,
}

/// Produces launched rays on demand, by global index, so that no list of all rays is ever
/// held in memory: ray `i` is the same whichever chunk or thread asks for it.
pub struct Launcher<'a> {
    scene: &'a Scene,
    compiled: &'a Compiled,
    runs: Vec<Run>,
    total: u64,
    mc: bool,
    seed: u64,
    delta: f64,
}

impl<'a> Launcher<'a> {
    pub fn new(scene: &'a Scene, compiled: &'a Compiled, config: &TraceConfig) -> Self {
        let mut runs = Vec::new();
        let mut total = 0u64;
        for (oi, o) in scene.objects.iter().enumerate() {
            let emission: &Emission = match &o.kind {
                ObjectKind::PointSource(p) => &p.emission,
                ObjectKind::BeamSource(b) => &b.emission,
                ObjectKind::LambertianSource(l) => &l.emission,
                _ => continue,
            };
            if compiled.excluded.contains(&o.id) {
                continue;
            }
            let n = config.rays.unwrap_or(emission.rays).max(1);
            let total_weight: f64 = emission.spectrum.iter().map(|l| l.weight).sum();
            for (li, line) in emission.spectrum.iter().enumerate() {
                let Some(w) = compiled.wavelengths.iter().position(|&x| x == line.nm) else { continue };
                // The share first: weight × power could overflow where the share cannot (weight ≤ total).
                let per_ray = emission.power_w * (line.weight / total_weight) / f64::from(n);
                let (s, p) = match emission.polarization {
                    Polarization::Unpolarized => (per_ray / 2.0, per_ray / 2.0),
                    Polarization::S => (per_ray, 0.0),
                    Polarization::P => (0.0, per_ray),
                };
                runs.push(Run {
                    source: oi as u32,
                    line: li as u32,
                    wavelength: w as u32,
                    rays: n,
                    power_s: s,
                    power_p: p,
                    start: total,
                });
                total += u64::from(n);
            }
        }
        Self {
            scene,
            compiled,
            runs,
            total,
            mc: config.settings.mode == TraceMode::MonteCarlo,
            seed: config.settings.seed,
            delta: 1e-9 * compiled.scale,
        }
    }

    /// Number of launched rays.
    pub fn len(&self) -> u64 {
        self.total
    }

    pub fn is_empty(&self) -> bool {
        self.total == 0
    }

    /// Launched rays `start..end` (global indices, clamped to the total).
    pub fn range(&self, start: u64, end: u64) -> Vec<Launch> {
        (start..end.min(self.total)).filter_map(|g| self.get(g)).collect()
    }

    /// Launched ray number `g`, in object, line and ray order.
    pub fn get(&self, g: u64) -> Option<Launch> {
        let k = self.runs.partition_point(|r| r.start <= g).checked_sub(1)?;
        let run = &self.runs[k];
        let i = u32::try_from(g - run.start).ok().filter(|&i| i < run.rays)?;
        let n = run.rays;
        let seed = mix(&[self.seed, u64::from(run.source), u64::from(run.line), u64::from(i)]);
        let mut rng = Rng::new(seed);
        let strat = (f64::from(i) + 0.5) / f64::from(n);
        let mc = self.mc;
        let (origin, dir) = match &self.scene.objects[run.source as usize].kind {
            ObjectKind::PointSource(ps) => {
                let u = if mc { rng.uniform() } else { strat };
                let ang = ps.start_deg + (ps.end_deg - ps.start_deg) * u;
                (Vec2::new(ps.position.0, ps.position.1), unit(ang.to_radians()))
            }
            ObjectKind::BeamSource(b) => {
                let u = if mc { rng.uniform() } else { strat };
                let d = unit(b.direction_deg.to_radians());
                let across = Vec2::new(-d.y, d.x);
                (Vec2::new(b.center.0, b.center.1) + across * (b.width * (u - 0.5)), d)
            }
            ObjectKind::LambertianSource(l) => {
                let a = Vec2::new(l.a.0, l.a.1);
                let b = Vec2::new(l.b.0, l.b.1);
                let along = b - a;
                let len = along.norm().max(1e-300);
                let t = along / len;
                let normal = Vec2::new(-t.y, t.x);
                // Position: a golden-ratio sequence paired with stratified angles covers the
                // (position, angle) square evenly; Monte Carlo draws both.
                let (u_pos, u_ang) = if mc {
                    (rng.uniform(), rng.uniform())
                } else {
                    ((f64::from(i) * 0.618_033_988_749_894_9 + 0.5).fract(), strat)
                };
                // Intensity ∝ cos θ: the cumulative distribution is (1 + sin θ)/2.
                let theta = (2.0 * u_ang - 1.0).clamp(-1.0, 1.0).asin();
                let dir = normal * theta.cos() + t * theta.sin();
                (a + along * u_pos, dir)
            }
            _ => return None,
        };
        let medium = self.compiled.medium_at(origin + dir * self.delta);
        Some(Launch {
            source: run.source,
            origin,
            dir,
            power_s: run.power_s,
            power_p: run.power_p,
            wavelength: run.wavelength,
            medium,
            seed,
        })
    }
}
