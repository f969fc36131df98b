//! Optical materials: dispersion formulas, the reference medium of an index, and a small
//! built-in library of common glasses, crystals, polymers, water and air.
//!
//! Conventions used throughout:
//!
//! - Wavelengths are passed in nanometres. The formulas themselves take micrometres, and the
//!   conversion happens inside this module. The wavelength is used as given; the difference
//!   between vacuum and air wavelengths (about 3 parts in 10⁴) is ignored, as it is in the
//!   published check values.
//! - The engine works with indices relative to standard air ([`Material::index_rel_air`]).
//!   Glass and polymer data are tabulated relative to air; water and air itself are tabulated
//!   relative to vacuum. [`IndexReference`] records which one a formula gives.
//! - Standard air is dry air at 15 °C, 101 325 Pa and 450 ppm CO₂, using the equation of
//!   Ciddor 1996 ([`air_index_abs`]).
//!
//! Nothing in this module returns an error or panics. Formulas evaluated at a pole, or at a
//! wavelength where n² would be negative, give an infinite or NaN index, which callers can test
//! with `f64::is_finite`.

use serde::{Deserialize, Serialize};

/// Fraunhofer F line (hydrogen), in nm.
pub const LINE_F_NM: f64 = 486.1327;
/// Fraunhofer d line (helium), in nm.
pub const LINE_D_NM: f64 = 587.5618;
/// Fraunhofer C line (hydrogen), in nm.
pub const LINE_C_NM: f64 = 656.2725;

/// The valid range given to materials built with [`Material::constant`], in nm.
const CONSTANT_VALID_NM: (f64, f64) = (200.0, 20_000.0);

/// Indices relative to air above this are taken for a mistake (a formula near its pole, a
/// coefficient typed wrong) and warned about; the densest common optical solids stay below 5.
pub const MAX_PLAUSIBLE_INDEX: f64 = 10.0;
/// Indices relative to air below this are warned about likewise (vacuum relative to air is
/// 0.99972, so gases and vacuum pass).
pub const MIN_PLAUSIBLE_INDEX: f64 = 0.99;

/// How usable a refractive index is for tracing; see [`check_index`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum IndexCheck {
    /// Finite, positive and between [`MIN_PLAUSIBLE_INDEX`] and [`MAX_PLAUSIBLE_INDEX`].
    Plausible,
    /// Finite and positive, but outside the plausible range.
    Implausible,
    /// Not finite or not positive: no ray can be traced through it.
    Unusable,
}

/// Sorts an index (relative to air) into usable, implausible or unusable. Scene validation
/// uses this for every material at every traced wavelength, so `check` and `trace` agree.
pub fn check_index(n: f64) -> IndexCheck {
    if !(n.is_finite() && n > 0.0) {
        IndexCheck::Unusable
    } else if (MIN_PLAUSIBLE_INDEX..=MAX_PLAUSIBLE_INDEX).contains(&n) {
        IndexCheck::Plausible
    } else {
        IndexCheck::Implausible
    }
}

/// What a material's tabulated index is measured against.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum IndexReference {
    /// The formula gives the absolute index.
    Vacuum,
    /// The formula gives the index relative to standard air at the same wavelength.
    Air,
}

/// A dispersion formula. Every coefficient is in the units named in the variant; wavelengths
/// inside the formulas are in µm.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum Dispersion {
    /// A constant index.
    Constant { n: f64 },
    /// n = a + b/λ² + c/λ⁴ with λ in µm.
    Cauchy { a: f64, b_um2: f64, c_um4: f64 },
    /// n² − 1 = c0 + Σ Bᵢ λ²/(λ² − Cᵢ²) with Cᵢ in µm. Each term is (Bᵢ, Cᵢ).
    SellmeierWavelength { c0: f64, terms: Vec<(f64, f64)> },
    /// n² − 1 = c0 + Σ Bᵢ λ²/(λ² − Cᵢ) with Cᵢ in µm². Each term is (Bᵢ, Cᵢ).
    SellmeierSquared { c0: f64, terms: Vec<(f64, f64)> },
    /// n² = Σ coefficient · λ^power, λ in µm (the Beadie 2015 PMMA form). Each term is
    /// (coefficient, power).
    PowerSeriesSquared { terms: Vec<(f64, i32)> },
    /// n − 1 = Σ Bᵢ/(Cᵢ − λ⁻²), λ in µm (the Ciddor 1996 gas form). Each term is (Bᵢ, Cᵢ),
    /// with Bᵢ and Cᵢ in µm⁻².
    Gas { terms: Vec<(f64, f64)> },
}

impl Dispersion {
    /// Evaluates the formula at `wavelength_nm`.
    ///
    /// A constant index is returned whatever the wavelength. Every other formula returns NaN
    /// when the wavelength is not positive and finite.
    pub fn index(&self, wavelength_nm: f64) -> f64 {
        let l = wavelength_nm * 1e-3;
        let l2 = l * l;
        let n = match self {
            Self::Constant { n } => return *n,
            Self::Cauchy { a, b_um2, c_um4 } => a + b_um2 / l2 + c_um4 / (l2 * l2),
            Self::SellmeierWavelength { c0, terms } => {
                let sum: f64 = terms.iter().map(|&(b, c)| b * l2 / (l2 - c * c)).sum();
                (1.0 + c0 + sum).sqrt()
            }
            Self::SellmeierSquared { c0, terms } => {
                let sum: f64 = terms.iter().map(|&(b, c)| b * l2 / (l2 - c)).sum();
                (1.0 + c0 + sum).sqrt()
            }
            Self::PowerSeriesSquared { terms } => {
                let n2: f64 = terms.iter().map(|&(a, p)| a * l.powi(p)).sum();
                n2.sqrt()
            }
            Self::Gas { terms } => {
                let sigma2 = 1.0 / l2;
                let sum: f64 = terms.iter().map(|&(b, c)| b / (c - sigma2)).sum();
                1.0 + sum
            }
        };
        if wavelength_nm.is_finite() && wavelength_nm > 0.0 { n } else { f64::NAN }
    }
}

/// An optical material: a dispersion formula, what it is measured against, absorption and
/// provenance.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Material {
    pub name: String,
    pub dispersion: Dispersion,
    pub reference: IndexReference,
    /// Beer–Lambert absorption coefficient α in 1/mm (intensity falls as e^(−α·L)).
    pub absorption_per_mm: f64,
    /// Wavelength range in nm over which the formula is valid (from the source).
    pub valid_nm: (f64, f64),
    /// Where the data come from (author, year, journal); empty for user materials.
    pub source: String,
}

impl Material {
    /// A non-dispersive material with index `n` relative to air, no absorption, valid from
    /// 200 nm to 20 µm and no source.
    pub fn constant(name: &str, n: f64) -> Self {
        Self {
            name: name.to_owned(),
            dispersion: Dispersion::Constant { n },
            reference: IndexReference::Air,
            absorption_per_mm: 0.0,
            valid_nm: CONSTANT_VALID_NM,
            source: String::new(),
        }
    }

    /// The formula's own value at `wavelength_nm` (relative to `self.reference`).
    ///
    /// The result is finite for positive finite wavelengths away from the formula's poles. It
    /// is NaN only where the formula itself breaks down (n² negative, or a wavelength that is
    /// not positive and finite).
    pub fn formula_index(&self, wavelength_nm: f64) -> f64 {
        self.dispersion.index(wavelength_nm)
    }

    /// Index relative to standard air at the same wavelength. This is the convention the
    /// whole engine uses. For reference `Air` it is the formula's value; for `Vacuum` it is the
    /// formula's value divided by [`air_index_abs`].
    pub fn index_rel_air(&self, wavelength_nm: f64) -> f64 {
        let n = self.formula_index(wavelength_nm);
        match self.reference {
            IndexReference::Air => n,
            IndexReference::Vacuum => n / air_index_abs(wavelength_nm),
        }
    }

    /// Absolute index (relative to vacuum).
    pub fn index_abs(&self, wavelength_nm: f64) -> f64 {
        let n = self.formula_index(wavelength_nm);
        match self.reference {
            IndexReference::Air => n * air_index_abs(wavelength_nm),
            IndexReference::Vacuum => n,
        }
    }

    /// Whether `wavelength_nm` lies inside the source's valid range (ends included).
    pub fn is_in_valid_range(&self, wavelength_nm: f64) -> bool {
        (self.valid_nm.0..=self.valid_nm.1).contains(&wavelength_nm)
    }
}

/// Ciddor 1996 coefficients for standard air in the gas form, (Bᵢ, Cᵢ) in µm⁻².
const CIDDOR_STANDARD_AIR: [(f64, f64); 2] = [(0.057_921_05, 238.0185), (0.001_679_17, 57.362)];

/// Refractive index of standard air (Ciddor 1996: dry, 15 °C, 101 325 Pa, 450 ppm CO₂),
/// absolute.
pub fn air_index_abs(wavelength_nm: f64) -> f64 {
    Dispersion::Gas { terms: CIDDOR_STANDARD_AIR.to_vec() }.index(wavelength_nm)
}

/// The Edlén form (n − 1)·10⁸ = A + B/(130 − σ²) + C/(38.9 − σ²) with σ = 1/λ in µm⁻¹,
/// returning n. Returns NaN when the wavelength is not positive and finite.
fn edlen_form(wavelength_nm: f64, a: f64, b: f64, c: f64) -> f64 {
    if !(wavelength_nm.is_finite() && wavelength_nm > 0.0) {
        return f64::NAN;
    }
    let l = wavelength_nm * 1e-3;
    let sigma2 = 1.0 / (l * l);
    1.0 + (a + b / (130.0 - sigma2) + c / (38.9 - sigma2)) * 1e-8
}

/// Standard air by Edlén 1966 (Metrologia 2:71), returning n (absolute).
pub fn air_index_edlen_1966(wavelength_nm: f64) -> f64 {
    edlen_form(wavelength_nm, 8342.13, 2_406_030.0, 15997.0)
}

/// Standard air by Birch & Downs 1993 (Metrologia 30:155, corrected 1994, 31:315), returning
/// n (absolute).
pub fn air_index_birch_downs_1993(wavelength_nm: f64) -> f64 {
    edlen_form(wavelength_nm, 8342.54, 2_406_147.0, 15998.0)
}

/// Builds a library entry with no absorption.
fn entry(
    name: &str,
    dispersion: Dispersion,
    reference: IndexReference,
    valid_nm: (f64, f64),
    source: &str,
) -> Material {
    Material {
        name: name.to_owned(),
        dispersion,
        reference,
        absorption_per_mm: 0.0,
        valid_nm,
        source: source.to_owned(),
    }
}

/// The built-in library.
///
/// Names are lower case with hyphens: "air", "vacuum", "water", "fused-silica", "sapphire-o",
/// "calcium-fluoride", "calcium-fluoride-20c", "pmma", "pmma-sultanova", "polycarbonate" and
/// "polystyrene". Glass, crystal and polymer data are relative to air; air, vacuum and water
/// are relative to vacuum. The sources give the real index only, so every entry has zero
/// absorption.
pub fn library() -> Vec<Material> {
    let mut all = reference_media();
    all.extend(crystals_and_glasses());
    all.extend(polymers());
    all
}

// In the three functions below, the coefficients are written exactly as the sources print
// them, so that they can be checked digit by digit; digit grouping would hide that.

/// Air, vacuum and water, all tabulated relative to vacuum.
#[allow(clippy::unreadable_literal)]
fn reference_media() -> Vec<Material> {
    use IndexReference::Vacuum;
    vec![
        entry(
            "air",
            Dispersion::Gas { terms: CIDDOR_STANDARD_AIR.to_vec() },
            Vacuum,
            (230.0, 1690.0),
            "Ciddor 1996, Appl. Opt. 35:1566 (standard air: dry, 15 °C, 101 325 Pa, 450 ppm CO2)",
        ),
        entry("vacuum", Dispersion::Constant { n: 1.0 }, Vacuum, CONSTANT_VALID_NM, ""),
        entry(
            "water",
            Dispersion::SellmeierSquared {
                c0: 0.0,
                terms: vec![
                    (0.5684027565, 5.101829712e-3),
                    (0.1726177391, 1.821153936e-2),
                    (2.086189578e-2, 2.620722293e-2),
                    (0.1130748688, 10.69792721),
                ],
            },
            Vacuum,
            (182.0, 1129.0),
            "Daimon & Masumura 2007, Appl. Opt. 46:3811 (distilled water, 20 °C, absolute index)",
        ),
    ]
}

/// Glasses and crystals, tabulated relative to air.
#[allow(clippy::unreadable_literal)]
fn crystals_and_glasses() -> Vec<Material> {
    use IndexReference::Air;
    vec![
        entry(
            "fused-silica",
            Dispersion::SellmeierWavelength {
                c0: 0.0,
                terms: vec![(0.6961663, 0.0684043), (0.4079426, 0.1162414), (0.8974794, 9.896161)],
            },
            Air,
            (210.0, 6700.0),
            "Malitson 1965, JOSA 55:1205",
        ),
        entry(
            "sapphire-o",
            Dispersion::SellmeierWavelength {
                c0: 0.0,
                terms: vec![(1.4313493, 0.0726631), (0.65054713, 0.1193242), (5.3414021, 18.028251)],
            },
            Air,
            (200.0, 5500.0),
            "Malitson & Dodge 1972, JOSA 62:1405; formula in Dodge 1986, Handbook of Laser \
             Science and Technology IV (ordinary ray, 20 °C)",
        ),
        entry(
            "calcium-fluoride",
            Dispersion::SellmeierWavelength {
                c0: 0.0,
                terms: vec![(0.5675888, 0.050263605), (0.4710914, 0.1003909), (3.8484723, 34.649040)],
            },
            Air,
            (230.0, 9700.0),
            "Malitson 1963, Appl. Opt. 2:1103 (24 °C)",
        ),
        // The range of Li's fit was not confirmed from the source, so the conservative range
        // of Malitson's measurements on the same crystal is used instead.
        entry(
            "calcium-fluoride-20c",
            Dispersion::SellmeierWavelength {
                c0: 0.33973,
                terms: vec![(0.69913, 0.09374), (0.11994, 21.18), (4.35181, 38.46)],
            },
            Air,
            (230.0, 9700.0),
            "Li 1980, J. Phys. Chem. Ref. Data 9:161 (20 °C)",
        ),
    ]
}

/// Polymers, tabulated relative to air.
#[allow(clippy::unreadable_literal)]
fn polymers() -> Vec<Material> {
    use IndexReference::Air;

    // Sultanova et al. 2009 one-term fits share a source note and a measured range.
    let sultanova_source = "Sultanova, Kasarova & Nikolov 2009, Acta Phys. Pol. A 116:585; \
                            one-term Sellmeier fit from the refractiveindex.info database \
                            (Polyanskiy 2024, Sci. Data 11:94)";
    let sultanova_nm = (437.0, 1052.0);

    vec![
        // Like the other polymer data, Beadie's index is taken as relative to air.
        entry(
            "pmma",
            Dispersion::PowerSeriesSquared {
                terms: vec![
                    (2.1778, 0),
                    (6.1209e-3, 2),
                    (-1.5004e-3, 4),
                    (2.3678e-2, -2),
                    (-4.2137e-3, -4),
                    (7.3417e-4, -6),
                    (-4.5042e-5, -8),
                ],
            },
            Air,
            (420.0, 1620.0),
            "Beadie et al. 2015, Appl. Opt. 54:F139 (20.1 °C)",
        ),
        entry(
            "pmma-sultanova",
            Dispersion::SellmeierSquared { c0: 0.0, terms: vec![(1.1819, 0.011313)] },
            Air,
            sultanova_nm,
            sultanova_source,
        ),
        entry(
            "polycarbonate",
            Dispersion::SellmeierSquared { c0: 0.0, terms: vec![(1.4182, 0.021304)] },
            Air,
            sultanova_nm,
            sultanova_source,
        ),
        entry(
            "polystyrene",
            Dispersion::SellmeierSquared { c0: 0.0, terms: vec![(1.4435, 0.020216)] },
            Air,
            sultanova_nm,
            sultanova_source,
        ),
    ]
}

/// Puts a material name into library form: trimmed, lower case, with '_' and ' ' read as '-'.
fn normalise_name(name: &str) -> String {
    name.trim()
        .chars()
        .map(|c| match c {
            '_' | ' ' => '-',
            other => other.to_ascii_lowercase(),
        })
        .collect()
}

/// Looks up a library material by name. Case is ignored, and '_' or ' ' may stand for '-'.
pub fn library_material(name: &str) -> Option<Material> {
    let wanted = normalise_name(name);
    library().into_iter().find(|m| m.name == wanted)
}

/// Abbe number Vd = (nd − 1)/(nF − nC) at the Fraunhofer d, F and C lines, computed from
/// [`Material::formula_index`].
///
/// For materials tabulated relative to air this is the index relative to air; for materials
/// tabulated relative to vacuum (water) it is the absolute index, which is how their Abbe
/// numbers are published. A non-dispersive material gives infinity (or NaN when n = 1).
pub fn abbe_number(m: &Material) -> f64 {
    let nd = m.formula_index(LINE_D_NM);
    let nf = m.formula_index(LINE_F_NM);
    let nc = m.formula_index(LINE_C_NM);
    (nd - 1.0) / (nf - nc)
}
