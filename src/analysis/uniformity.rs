//! How even a detector's irradiance is: min/max, min/mean and the coefficient of variation
//! over the bins of its histogram.

use super::{Bin, detector_bins, irradiance};
use crate::scene::Scene;
use crate::trace::DetectorResult;

/// Uniformity figures of one histogram.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Uniformity {
    pub min: f64,
    pub max: f64,
    pub mean: f64,
    /// min/max (0…1; 1 is perfectly even).
    pub min_over_max: f64,
    /// min/mean.
    pub min_over_mean: f64,
    /// Coefficient of variation: population standard deviation over the mean (0 is even).
    pub cv: f64,
}

/// Uniformity over `bins`. `None` when there are no bins or the mean is not positive (no
/// light arrived).
pub fn uniformity(bins: &[Bin]) -> Option<Uniformity> {
    if bins.is_empty() {
        return None;
    }
    let n = bins.len() as f64;
    let mean = bins.iter().map(|b| b.density).sum::<f64>() / n;
    if !(mean > 0.0 && mean.is_finite()) {
        return None;
    }
    let min = bins.iter().map(|b| b.density).fold(f64::INFINITY, f64::min);
    let max = bins.iter().map(|b| b.density).fold(f64::NEG_INFINITY, f64::max);
    let var = bins.iter().map(|b| (b.density - mean).powi(2)).sum::<f64>() / n;
    Some(Uniformity { min, max, mean, min_over_max: min / max, min_over_mean: min / mean, cv: var.sqrt() / mean })
}

/// Uniformity of a detector's irradiance histogram with the bins the scene asks for.
pub fn detector_uniformity(scene: &Scene, det: &DetectorResult) -> Option<Uniformity> {
    let (bins, _) = detector_bins(scene, det);
    uniformity(&irradiance(det, bins))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bins(d: &[f64]) -> Vec<Bin> {
        d.iter().enumerate().map(|(k, &density)| Bin { centre: k as f64, density }).collect()
    }

    #[test]
    fn even_bins_are_perfectly_uniform() {
        let u = uniformity(&bins(&[2.0, 2.0, 2.0])).expect("light arrived");
        assert!((u.min_over_max - 1.0).abs() < 1e-15);
        assert!(u.cv.abs() < 1e-15);
    }

    #[test]
    fn figures_of_an_uneven_histogram() {
        // Values 1, 2, 3: mean 2, population standard deviation √(2/3) (common practice).
        let u = uniformity(&bins(&[1.0, 2.0, 3.0])).expect("light arrived");
        assert!((u.min_over_max - 1.0 / 3.0).abs() < 1e-15);
        assert!((u.min_over_mean - 0.5).abs() < 1e-15);
        assert!((u.cv - (2.0f64 / 3.0).sqrt() / 2.0).abs() < 1e-15);
    }

    #[test]
    fn no_light_gives_no_figures() {
        assert!(uniformity(&bins(&[0.0, 0.0])).is_none());
        assert!(uniformity(&[]).is_none());
    }
}
