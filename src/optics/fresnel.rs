//! Snell's law in vector form and the Fresnel power coefficients for s and p polarisation.
//!
//! In a 2D scene the plane of incidence is always the drawing plane, so "s" (electric field
//! perpendicular to the plane of incidence) is the field along z, out of the drawing, and
//! "p" is the field in the drawing plane. Both are global, which lets every ray carry its s
//! and p power separately and exactly.

use crate::geom::Vec2;

/// Fresnel power coefficients at one interface for one angle of incidence.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fresnel {
    /// Reflectance for s and p.
    pub rs: f64,
    pub rp: f64,
    /// Transmittance for s and p, including the beam-width factor n₂cos θt / (n₁cos θi),
    /// so that `rs + ts == 1` and `rp + tp == 1` up to rounding.
    pub ts: f64,
    pub tp: f64,
    /// Cosine of the angle of incidence (≥ 0).
    pub cos_i: f64,
    /// Cosine of the refraction angle; `None` under total internal reflection.
    pub cos_t: Option<f64>,
}

impl Fresnel {
    /// Whether light is totally internally reflected.
    pub fn is_tir(&self) -> bool {
        self.cos_t.is_none()
    }
}

/// Fresnel coefficients for light going from index `n1` into index `n2` (both real and
/// positive) with `cos_i` the cosine of the angle of incidence (clamped to [0, 1]).
///
/// Formulas: Hecht, *Optics*, 5th ed. (2017), §4.6.2, eqs. 4.42–4.45 (amplitude
/// coefficients) and 4.56–4.64 (power coefficients), section and equation numbers from
/// memory; the sine and tangent form is Smith, *Modern Optical Engineering*, 4th ed. (2008),
/// eq. 11.1 (equation number from memory).
/// Under total internal reflection R = 1 and T = 0 for both polarisations; exactly at the
/// critical angle (sin θt = 1) counts as total internal reflection, as in [`refract`].
pub fn fresnel(n1: f64, n2: f64, cos_i: f64) -> Fresnel {
    let cos_i = cos_i.clamp(0.0, 1.0);
    let sin_i2 = (1.0 - cos_i * cos_i).max(0.0);
    let ratio = n1 / n2;
    let sin_t2 = ratio * ratio * sin_i2;
    if !(sin_t2 < 1.0) {
        return Fresnel { rs: 1.0, rp: 1.0, ts: 0.0, tp: 0.0, cos_i, cos_t: None };
    }
    let cos_t = (1.0 - sin_t2).sqrt();
    let (a, b) = (n1 * cos_i, n2 * cos_t);
    let (c, d) = (n2 * cos_i, n1 * cos_t);
    // Amplitude reflection coefficients; at normal incidence with n1 == n2 both vanish.
    let r_s = if a + b > 0.0 { (a - b) / (a + b) } else { 0.0 };
    let r_p = if c + d > 0.0 { (c - d) / (c + d) } else { 0.0 };
    let rs = r_s * r_s;
    let rp = r_p * r_p;
    // Transmittance from the transmission amplitude with the beam-width factor. Written this
    // way it equals 1 − R algebraically: 4ab/(a+b)² = 1 − ((a−b)/(a+b))².
    let ts = if a + b > 0.0 { 4.0 * a * b / ((a + b) * (a + b)) } else { 1.0 };
    let tp = if c + d > 0.0 { 4.0 * c * d / ((c + d) * (c + d)) } else { 1.0 };
    Fresnel { rs, rp, ts, tp, cos_i, cos_t: Some(cos_t) }
}

/// Mirror reflection of direction `d` about a surface with unit normal `n` (either side).
#[inline]
pub fn reflect(d: Vec2, n: Vec2) -> Vec2 {
    d - n * (2.0 * d.dot(&n))
}

/// Refraction of unit direction `d` at a surface with unit normal `n`, going from index `n1`
/// into `n2`, by the vector form of Snell's law. The normal may face either way. Returns
/// `None` under total internal reflection.
///
/// t = η d + (η cos θi − cos θt) n̂ with n̂ facing against `d`, η = n1/n2 (Hecht 2017, §4.4;
/// the vector form as in Glassner, *An Introduction to Ray Tracing*, 1989, ch. 6; section and
/// chapter numbers from memory).
#[inline]
pub fn refract(d: Vec2, n: Vec2, n1: f64, n2: f64) -> Option<Vec2> {
    let mut nn = n;
    let mut cos_i = -d.dot(&n);
    if cos_i < 0.0 {
        nn = -n;
        cos_i = -cos_i;
    }
    let eta = n1 / n2;
    let sin_t2 = eta * eta * (1.0 - cos_i * cos_i).max(0.0);
    if !(sin_t2 < 1.0) {
        return None;
    }
    let cos_t = (1.0 - sin_t2).sqrt();
    let t = d * eta + nn * (eta * cos_i - cos_t);
    let len = t.norm();
    (len > 0.0).then(|| t / len)
}

/// Critical angle in radians for light inside index `n1` meeting index `n2 < n1`; `None` if
/// there is none.
pub fn critical_angle(n1: f64, n2: f64) -> Option<f64> {
    (n2 < n1).then(|| (n2 / n1).asin())
}

/// Brewster's angle in radians for light going from `n1` into `n2`.
pub fn brewster_angle(n1: f64, n2: f64) -> f64 {
    (n2 / n1).atan()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn r_plus_t_is_one() {
        for k in 0..=90 {
            let c = f64::from(k).to_radians().cos();
            for (n1, n2) in [(1.0, 1.5), (1.5, 1.0), (1.33, 1.7), (1.0, 1.0)] {
                let f = fresnel(n1, n2, c);
                assert!((f.rs + f.ts - 1.0).abs() < 1e-15);
                assert!((f.rp + f.tp - 1.0).abs() < 1e-15);
            }
        }
    }

    #[test]
    fn refracted_direction_obeys_snell() {
        let d = crate::geom::unit((-60f64).to_radians());
        let n = Vec2::new(0.0, 1.0);
        let t = refract(d, n, 1.0, 1.5).expect("refracts");
        let sin_i = d.x.abs();
        let sin_t = t.x.abs();
        assert!((sin_i - 1.5 * sin_t).abs() < 1e-14);
        assert!(t.y < 0.0);
    }
}
