//! Measuring on a scene: the optical path length along a straight line between two points,
//! piece by piece through the media it crosses.

use std::fmt;

use crate::geom::Vec2;
use crate::scene::{ObjectKind, Scene};
use crate::trace::Compiled;

/// One stretch of a straight line inside one medium.
#[derive(Clone, Debug, PartialEq)]
pub struct PathPiece {
    /// The medium's material name.
    pub material: String,
    /// Its refractive index at the wavelength asked about.
    pub n: f64,
    pub length_mm: f64,
}

/// The optical path length Σ n·length along the straight line from one point to another.
#[derive(Clone, Debug, PartialEq)]
pub struct OpticalPath {
    pub wavelength_nm: f64,
    /// Geometric length, mm.
    pub length_mm: f64,
    /// Optical path length, mm (relative to standard air, like the indices).
    pub optical_mm: f64,
    /// The media crossed, in order from the first point; neighbours differ in material.
    pub pieces: Vec<PathPiece>,
}

impl fmt::Display for OpticalPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "optical path {:.4} mm over {:.4} mm at {} nm:",
            self.optical_mm, self.length_mm, self.wavelength_nm
        )?;
        for p in &self.pieces {
            write!(f, " {} (n {:.5}) {:.4} mm;", p.material, p.n, p.length_mm)?;
        }
        Ok(())
    }
}

/// The optical path length along the straight line from `a` to `b` at `wavelength_nm`,
/// with `compiled` the compiled form of `scene`. The line is cut where it crosses a solid's
/// boundary and each piece takes the medium at its middle (nesting and touching solids as
/// the tracer sees them). Errors name a material without a usable index there.
pub fn optical_path(
    scene: &Scene,
    compiled: &Compiled,
    a: Vec2,
    b: Vec2,
    wavelength_nm: f64,
) -> Result<OpticalPath, String> {
    let length_mm = (b - a).norm();
    if !(length_mm.is_finite() && length_mm > 0.0) {
        return Ok(OpticalPath { wavelength_nm, length_mm: 0.0, optical_mm: 0.0, pieces: Vec::new() });
    }
    let dir = (b - a) / length_mm;
    let mut cuts = vec![0.0, length_mm];
    for o in &scene.objects {
        let ObjectKind::Solid(s) = &o.kind else { continue };
        let Ok(outline) = s.shape.outline() else { continue };
        for k in 0..outline.len() {
            let e = outline.edge(k);
            // An arc can cross the line twice: look again past each crossing.
            let mut t_min = 0.0;
            for _ in 0..2 {
                match e.cast(a, dir, t_min, length_mm) {
                    Some(hit) => {
                        cuts.push(hit.t);
                        t_min = hit.t + 1e-9 * length_mm;
                    }
                    None => break,
                }
            }
        }
    }
    cuts.sort_by(f64::total_cmp);
    cuts.dedup_by(|x, y| (*x - *y).abs() <= 1e-12 * length_mm);
    let mut pieces: Vec<PathPiece> = Vec::new();
    for w in cuts.windows(2) {
        let len = w[1] - w[0];
        if len <= 0.0 {
            continue;
        }
        let mid = a + dir * (0.5 * (w[0] + w[1]));
        let medium = compiled.medium_at(mid) as usize;
        let material = compiled.medium_names().get(medium).cloned().unwrap_or_else(|| scene.ambient.clone());
        match pieces.last_mut() {
            Some(last) if last.material == material => last.length_mm += len,
            _ => {
                let n = scene
                    .material(&material)
                    .map(|m| m.index_rel_air(wavelength_nm))
                    .filter(|n| n.is_finite() && *n > 0.0)
                    .ok_or_else(|| format!("material \"{material}\" has no usable index at {wavelength_nm} nm"))?;
                pieces.push(PathPiece { material, n, length_mm: len });
            }
        }
    }
    let optical_mm = pieces.iter().map(|p| p.n * p.length_mm).sum();
    Ok(OpticalPath { wavelength_nm, length_mm, optical_mm, pieces })
}

/// The angle at `corner` between the arms to `a` and `b`, degrees in [0, 180] (NaN when an
/// arm has no length).
pub fn angle_deg(corner: Vec2, a: Vec2, b: Vec2) -> f64 {
    let (u, v) = (a - corner, b - corner);
    if u.norm() == 0.0 || v.norm() == 0.0 {
        return f64::NAN;
    }
    crate::geom::cross(u, v).atan2(u.dot(&v)).abs().to_degrees()
}
