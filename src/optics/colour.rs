//! Display colour of a wavelength, for drawing rays.
//!
//! A piecewise-linear approximation of the visible spectrum (common practice for screen
//! display; not a colorimetric conversion). Wavelengths outside 380–780 nm are shown grey.

/// sRGB colour (0–255 per channel) for a wavelength in nm.
pub fn wavelength_rgb(nm: f64) -> [u8; 3] {
    if !(380.0..=780.0).contains(&nm) {
        return [160, 160, 160];
    }
    let (r, g, b) = if nm < 440.0 {
        (-(nm - 440.0) / 60.0, 0.0, 1.0)
    } else if nm < 490.0 {
        (0.0, (nm - 440.0) / 50.0, 1.0)
    } else if nm < 510.0 {
        (0.0, 1.0, -(nm - 510.0) / 20.0)
    } else if nm < 580.0 {
        ((nm - 510.0) / 70.0, 1.0, 0.0)
    } else if nm < 645.0 {
        (1.0, -(nm - 645.0) / 65.0, 0.0)
    } else {
        (1.0, 0.0, 0.0)
    };
    // Fade towards the ends of the visible range so deep red and violet stay visible but dim.
    let f = if nm < 420.0 {
        0.4 + 0.6 * (nm - 380.0) / 40.0
    } else if nm > 700.0 {
        0.4 + 0.6 * (780.0 - nm) / 80.0
    } else {
        1.0
    };
    let c = |v: f64| ((v * f).clamp(0.0, 1.0).powf(0.8) * 255.0).round() as u8;
    [c(r), c(g), c(b)]
}
