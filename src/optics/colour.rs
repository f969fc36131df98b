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

/// The drawing palette shared by the editor's canvas and the SVG export, so that what the
/// user sees is what they export. Colours are sRGB on a light sheet.
pub mod palette {
    /// The drawing sheet.
    pub const SHEET: [u8; 3] = [250, 250, 247];
    /// Outline of a refracting solid.
    pub const SOLID_STROKE: [u8; 3] = [59, 106, 143];
    /// Opacity of a solid's tinted fill (0–1).
    pub const SOLID_FILL_OPACITY: f64 = 0.35;
    pub const MIRROR: [u8; 3] = [107, 107, 107];
    pub const ABSORBER: [u8; 3] = [17, 17, 17];
    pub const SPLITTER: [u8; 3] = [123, 79, 157];
    pub const DETECTOR: [u8; 3] = [26, 152, 80];
    pub const SOURCE_STROKE: [u8; 3] = [224, 130, 20];
    pub const SOURCE_FILL: [u8; 3] = [253, 184, 99];
    /// Points of total internal reflection.
    pub const TIR: [u8; 3] = [215, 48, 31];
    /// Ends of rays stopped by the event limit (trapped light).
    pub const TRAPPED: [u8; 3] = [197, 27, 125];
    /// Ends of branches dropped below the power threshold.
    pub const BELOW_THRESHOLD: [u8; 3] = [120, 120, 120];
    /// Surface normals drawn on demand.
    pub const NORMAL: [u8; 3] = [90, 90, 160];

    /// Soft fills for solids, picked by material name.
    const TINTS: [[u8; 3]; 8] = [
        [158, 202, 225],
        [161, 217, 155],
        [253, 208, 162],
        [188, 189, 220],
        [252, 187, 161],
        [199, 233, 192],
        [218, 218, 235],
        [254, 227, 145],
    ];

    /// The fill colour of a solid made of `material`: the same material always gets the same
    /// tint (a hash of its name picks one of eight soft colours).
    pub fn material_tint(material: &str) -> [u8; 3] {
        // FNV-1a: stable across runs and platforms, unlike the standard library's hasher.
        let mut h: u64 = 0xcbf2_9ce4_8422_2325;
        for b in material.bytes() {
            h ^= u64::from(b);
            h = h.wrapping_mul(0x0100_0000_01b3);
        }
        TINTS[(h % TINTS.len() as u64) as usize]
    }

    /// Orders of magnitude of relative power spread over the ray opacity range.
    pub const RAY_DECADES: f64 = 4.0;

    /// Opacity level 0–1 of a ray segment carrying `relative_power` of its launch power, on a
    /// log scale over [`RAY_DECADES`] decades, rounded to `levels` steps.
    pub fn ray_level(relative_power: f64, levels: f64) -> f64 {
        let l = if relative_power > 0.0 { (1.0 + relative_power.log10() / RAY_DECADES).clamp(0.0, 1.0) } else { 0.0 };
        (l * levels).round() / levels
    }

    /// Opacity of a segment at `level`, where `base` is the full opacity (which falls as more
    /// rays overlap). The cube keeps the main paths clearly stronger than faint branches.
    pub fn ray_opacity(level: f64, base: f64) -> f64 {
        if level <= 0.0 { 0.0 } else { base * (0.05 + 0.95 * level.powi(3)) }
    }

    /// Full ray opacity for `n_roots` launched rays drawn.
    pub fn ray_base_opacity(n_roots: usize) -> f64 {
        (40.0 / n_roots.max(1) as f64).sqrt().clamp(0.08, 0.9)
    }
}
