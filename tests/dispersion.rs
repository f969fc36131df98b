//! Dispersion formulas, the air/vacuum convention and the built-in material library, checked
//! against published values and values computed from the published coefficients.
//!
//! Values marked "computed" were computed, independently of this code, from the coefficients
//! of the named source as the refractiveindex.info database gives them (Polyanskiy 2024,
//! "Refractiveindex.info database of optical constants", Sci. Data 11:94) and rounded to the
//! digits shown, so the tests check that the coefficients and formula forms were transcribed
//! correctly. Each material's `source` string names the same work as its test.

// Reference values are written exactly as published, so digit grouping would hide typos.
#![allow(clippy::unreadable_literal)]

use raydraft::optics::material::*;

/// Sodium D line (mean of D1 and D2), in nm.
const SODIUM_D_NM: f64 = 589.29;

/// Fetches a library material, failing the test with its name if it is missing.
fn mat(name: &str) -> Material {
    library_material(name).unwrap_or_else(|| panic!("library material {name:?} is missing"))
}

/// Checks the formula value of `m` at `wavelength_nm` against `expected` within `tol`.
fn check(m: &Material, wavelength_nm: f64, expected: f64, tol: f64) {
    let n = m.formula_index(wavelength_nm);
    assert!(
        (n - expected).abs() <= tol,
        "{} at {wavelength_nm} nm: got {n:.7}, expected {expected} ± {tol:e} (off by {:.2e})",
        m.name,
        n - expected
    );
}

/// Checks the index of `m` relative to air at `wavelength_nm` against `expected` within `tol`.
fn check_rel_air(m: &Material, wavelength_nm: f64, expected: f64, tol: f64) {
    let n = m.index_rel_air(wavelength_nm);
    assert!(
        (n - expected).abs() <= tol,
        "{} relative to air at {wavelength_nm} nm: got {n:.7}, expected {expected} ± {tol:e}",
        m.name
    );
}

/// Checks nF, nd and nC of a material in one go.
fn check_fdc(name: &str, [nf, nd, nc]: [f64; 3], tol: f64) {
    let m = mat(name);
    check(&m, LINE_F_NM, nf, tol);
    check(&m, LINE_D_NM, nd, tol);
    check(&m, LINE_C_NM, nc, tol);
}

/// Checks an Abbe number. The reference Abbe numbers were computed from the same coefficients
/// and rounded to two decimals, so half a unit in the last place (0.005) plus rounding noise in
/// the indices is all the tolerance needs to cover; 0.01 is used.
fn check_abbe(name: &str, expected: f64) {
    let v = abbe_number(&mat(name));
    assert!((v - expected).abs() <= 0.01, "{name}: Abbe number {v:.4}, expected {expected}");
}

#[test]
fn abbe_number_uses_the_f_d_and_c_lines() {
    // Vd = (nd − 1)/(nF − nC) at the hydrogen F (486.1327 nm), helium d (587.5618 nm) and
    // hydrogen C (656.2725 nm) lines (line wavelengths from memory). For a two-term Cauchy
    // material n = a + b/λ² the closed form is (a − 1 + b/λd²)/(b·(1/λF² − 1/λC²)), computed
    // here from the wavelengths written out, so a wrong line or a wrong formula both show.
    let (a, b) = (1.5, 0.004);
    let cauchy =
        Material { dispersion: Dispersion::Cauchy { a, b_um2: b, c_um4: 0.0 }, ..Material::constant("cauchy", 1.0) };
    let (f, d, c) = (0.4861327f64, 0.5875618f64, 0.6562725f64);
    let want = (a - 1.0 + b / (d * d)) / (b * (1.0 / (f * f) - 1.0 / (c * c)));
    let got = abbe_number(&cauchy);
    assert!((got - want).abs() < 1e-9 * want, "Vd {got} vs {want}");
    // The same material's index at each line is the formula at that wavelength.
    check(&cauchy, LINE_F_NM, a + b / (f * f), 1e-13);
    check(&cauchy, LINE_D_NM, a + b / (d * d), 1e-13);
    check(&cauchy, LINE_C_NM, a + b / (c * c), 1e-13);
}

#[test]
fn fused_silica_malitson_1965() {
    // Malitson 1965, JOSA 55:1205; nF/nd/nC computed from the database coefficients
    // (Polyanskiy 2024, Sci. Data 11:94), tolerance 2e-5 (rounding of the computed values;
    // common practice).
    check_fdc("fused-silica", [1.46313, 1.45846, 1.45637], 2e-5);
    // Malitson 1965, JOSA 55:1205; Vd computed from the same coefficients.
    check_abbe("fused-silica", 67.82);
}

#[test]
fn sapphire_ordinary_malitson_dodge() {
    // Malitson & Dodge 1972, JOSA 62:1405, formula in Dodge 1986, Handbook of Laser Science and
    // Technology IV (ordinary ray, 20 °C); nF/nd/nC computed from the database coefficients,
    // tolerance 5e-5.
    check_fdc("sapphire-o", [1.77551, 1.76817, 1.76488], 5e-5);
    let m = mat("sapphire-o");
    // Malitson & Dodge 1972 / Dodge 1986, computed from the database coefficients.
    check(&m, 633.0, 1.76590, 5e-5);
    // Malitson & Dodge 1972 / Dodge 1986, computed from the database coefficients.
    check(&m, 1064.0, 1.75449, 5e-5);
    // Malitson & Dodge 1972 / Dodge 1986; Vd computed from the same coefficients.
    check_abbe("sapphire-o", 72.31);
}

#[test]
fn calcium_fluoride_malitson_1963() {
    // Malitson 1963, Appl. Opt. 2:1103 (24 °C); computed from the database coefficients.
    check_fdc("calcium-fluoride", [1.43703, 1.43385, 1.43246], 5e-5);
    // Malitson 1963, Appl. Opt. 2:1103; Vd computed from the same coefficients.
    check_abbe("calcium-fluoride", 95.00);
}

#[test]
fn calcium_fluoride_li_1980() {
    // Li 1980, J. Phys. Chem. Ref. Data 9:161 (20 °C); computed from the database
    // coefficients.
    check_fdc("calcium-fluoride-20c", [1.43705, 1.43388, 1.43249], 5e-5);
    // Li 1980, J. Phys. Chem. Ref. Data 9:161; Vd computed from the same coefficients.
    check_abbe("calcium-fluoride-20c", 95.31);
}

#[test]
fn water_daimon_masumura_2007() {
    let water = mat("water");
    assert_eq!(water.reference, IndexReference::Vacuum);
    // Daimon & Masumura 2007, Appl. Opt. 46:3811 (20 °C); absolute nF/nd/nC computed from the
    // database coefficients (nd is also read on the database page, marked absolute).
    check_fdc("water", [1.33749, 1.33340, 1.33151], 5e-5);
    // Daimon & Masumura 2007, Appl. Opt. 46:3811; absolute Vd read on the database page.
    check_abbe("water", 55.76);
    // Daimon & Masumura 2007, Appl. Opt. 46:3811; nD relative to air read on the database
    // page.
    check_rel_air(&water, SODIUM_D_NM, 1.33299, 5e-5);
    // The absolute index is the formula value for a vacuum-referenced material.
    assert!((water.index_abs(LINE_D_NM) - water.formula_index(LINE_D_NM)).abs() < 1e-15);
}

#[test]
fn pmma_beadie_2015() {
    // Beadie et al. 2015, Appl. Opt. 54:F139; computed from the database coefficients, with
    // the paper's stated absolute accuracy of 2e-4 as tolerance.
    check_fdc("pmma", [1.49836, 1.49253, 1.49007], 2e-4);
    // Beadie et al. 2015, Appl. Opt. 54:F139; Vd computed from the same coefficients. This
    // checks only that the coefficients were copied correctly: an index uncertainty of 2e-4
    // would allow Vd to move by several units.
    check_abbe("pmma", 59.37);
}

#[test]
fn sultanova_2009_polymers() {
    // As the materials' source says: one-term Sellmeier fits of the measurements of Sultanova,
    // Kasarova & Nikolov 2009 (Acta Phys. Pol. A 116:585) made by the refractiveindex.info
    // database (Polyanskiy 2024, Sci. Data 11:94); nF/nd/nC computed from the database's fit
    // coefficients. The values are rounded to five decimals, so 1e-5 covers rounding of both
    // values and coefficients.
    // PMMA fit: nF/nd/nC computed from the Sultanova 2009 one-term fit.
    check_fdc("pmma-sultanova", [1.49710, 1.49062, 1.48788], 1e-5);
    // Polycarbonate fit: nF/nd/nC computed from the Sultanova 2009 one-term fit.
    check_fdc("polycarbonate", [1.59960, 1.58476, 1.57861], 1e-5);
    // Polystyrene fit: nF/nd/nC computed from the Sultanova 2009 one-term fit.
    check_fdc("polystyrene", [1.60578, 1.59163, 1.58575], 1e-5);

    // Paper values, Sultanova, Kasarova & Nikolov 2009, Acta Phys. Pol. A 116:585, seen only as
    // a quote of its table; the paper's measurement accuracy is 1e-3. The Abbe numbers of the
    // one-term fits are not tested: the fits do not reproduce the paper's Abbe numbers.
    let pmma = mat("pmma-sultanova");
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PMMA nF = 1.497.
    check(&pmma, LINE_F_NM, 1.497, 1e-3);
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PMMA nd = 1.491.
    check(&pmma, LINE_D_NM, 1.491, 1e-3);
    let pc = mat("polycarbonate");
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PC nF = 1.599.
    check(&pc, LINE_F_NM, 1.599, 1e-3);
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PC nd = 1.585.
    check(&pc, LINE_D_NM, 1.585, 1e-3);
    let ps = mat("polystyrene");
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PS nF = 1.606.
    check(&ps, LINE_F_NM, 1.606, 1e-3);
    // Sultanova et al. 2009, Acta Phys. Pol. A 116:585: PS nd = 1.592.
    check(&ps, LINE_D_NM, 1.592, 1e-3);
}

/// Checks an air equation against a value of (n − 1)·10⁸ within 2e-8 in n.
fn check_air(label: &str, f: fn(f64) -> f64, wavelength_nm: f64, n_minus_1_e8: f64) {
    let n = f(wavelength_nm);
    let expected = 1.0 + n_minus_1_e8 * 1e-8;
    assert!(
        (n - expected).abs() <= 2e-8,
        "{label} at {wavelength_nm} nm: (n-1)·1e8 = {:.2}, expected {n_minus_1_e8}",
        (n - 1.0) * 1e8
    );
}

#[test]
fn standard_air_three_equations() {
    // Ciddor 1996, Appl. Opt. 35:1566; computed (n − 1)·1e8 at F.
    check_air("Ciddor", air_index_abs, LINE_F_NM, 27935.6);
    // Ciddor 1996, Appl. Opt. 35:1566; computed at d.
    check_air("Ciddor", air_index_abs, LINE_D_NM, 27717.5);
    // Ciddor 1996, Appl. Opt. 35:1566; computed at C.
    check_air("Ciddor", air_index_abs, LINE_C_NM, 27625.2);
    // Edlén 1966, Metrologia 2:71; computed at F.
    check_air("Edlen", air_index_edlen_1966, LINE_F_NM, 27934.2);
    // Edlén 1966, Metrologia 2:71; computed at d.
    check_air("Edlen", air_index_edlen_1966, LINE_D_NM, 27716.2);
    // Edlén 1966, Metrologia 2:71; computed at C.
    check_air("Edlen", air_index_edlen_1966, LINE_C_NM, 27624.0);
    // Birch & Downs 1993, Metrologia 30:155 (corrected 1994, 31:315); computed at F.
    check_air("Birch-Downs", air_index_birch_downs_1993, LINE_F_NM, 27935.6);
    // Birch & Downs 1993, Metrologia 30:155 (corrected 1994, 31:315); computed at d.
    check_air("Birch-Downs", air_index_birch_downs_1993, LINE_D_NM, 27717.5);
    // Birch & Downs 1993, Metrologia 30:155 (corrected 1994, 31:315); computed at C.
    check_air("Birch-Downs", air_index_birch_downs_1993, LINE_C_NM, 27625.3);

    // The library's air is the same Ciddor equation, tabulated relative to vacuum.
    let air = mat("air");
    assert_eq!(air.reference, IndexReference::Vacuum);
    // Ciddor 1996, Appl. Opt. 35:1566; computed at d.
    check(&air, LINE_D_NM, 1.0 + 27717.5e-8, 2e-8);
}

#[test]
fn air_relative_to_air_is_one() {
    let air = mat("air");
    for nm in [230.0, LINE_F_NM, LINE_D_NM, LINE_C_NM, 1064.0, 1690.0] {
        check_rel_air(&air, nm, 1.0, 1e-15);
    }
}

#[test]
fn vacuum_is_one_absolute_and_below_one_relative_to_air() {
    let vacuum = mat("vacuum");
    check(&vacuum, LINE_D_NM, 1.0, 0.0);
    let rel = vacuum.index_rel_air(LINE_D_NM);
    assert!((rel * air_index_abs(LINE_D_NM) - 1.0).abs() < 1e-15);
    assert!(rel < 1.0);
}

#[test]
fn glass_absolute_index_includes_air() {
    let silica = mat("fused-silica");
    let rel = silica.index_rel_air(LINE_D_NM);
    let abs = silica.index_abs(LINE_D_NM);
    assert!((abs - rel * air_index_abs(LINE_D_NM)).abs() < 1e-15);
    // The difference is n·(n_air − 1) ≈ 1.458 × 2.77e-4 ≈ 4.04e-4 (Ciddor 1996 for n_air).
    assert!((abs - rel - 4.04e-4).abs() < 1e-5, "abs - rel = {}", abs - rel);
}

#[test]
fn constant_material() {
    let glass = Material::constant("my glass", 1.5);
    assert_eq!(glass.reference, IndexReference::Air);
    assert!(glass.source.is_empty());
    assert!(glass.absorption_per_mm.abs() < f64::MIN_POSITIVE);
    assert!(glass.is_in_valid_range(200.0) && glass.is_in_valid_range(20_000.0));
    assert!(!glass.is_in_valid_range(199.0));
    for nm in [200.0, 450.0, LINE_D_NM, 1550.0, 20_000.0] {
        check_rel_air(&glass, nm, 1.5, 0.0);
    }
    // A non-dispersive material has an infinite Abbe number.
    assert!(abbe_number(&glass).is_infinite());
}

#[test]
fn formula_forms_and_invalid_wavelengths() {
    // n = a + b/λ² + c/λ⁴ at λ = 0.5 µm: 1.5 + 0.004/0.25 + 0.0001/0.0625 = 1.5176.
    let cauchy = Material {
        dispersion: Dispersion::Cauchy { a: 1.5, b_um2: 0.004, c_um4: 0.0001 },
        ..Material::constant("cauchy", 1.0)
    };
    check(&cauchy, 500.0, 1.5176, 1e-12);
    for bad in [0.0, -500.0, f64::NAN, f64::INFINITY] {
        assert!(cauchy.formula_index(bad).is_nan(), "wavelength {bad}");
    }
    // Both Sellmeier conventions agree when Cᵢ(S2) = Cᵢ(S1)².
    let s1 = Dispersion::SellmeierWavelength { c0: 0.1, terms: vec![(0.7, 0.07), (0.9, 9.9)] };
    let s2 = Dispersion::SellmeierSquared { c0: 0.1, terms: vec![(0.7, 0.07 * 0.07), (0.9, 9.9 * 9.9)] };
    for nm in [300.0, 600.0, 1200.0] {
        assert!((s1.index(nm) - s2.index(nm)).abs() < 1e-14);
    }
}

#[test]
fn library_names_resolve_and_lookup_is_forgiving() {
    let names = [
        "air",
        "vacuum",
        "water",
        "fused-silica",
        "sapphire-o",
        "calcium-fluoride",
        "calcium-fluoride-20c",
        "pmma",
        "pmma-sultanova",
        "polycarbonate",
        "polystyrene",
    ];
    let lib = library();
    assert_eq!(lib.len(), names.len());
    for name in names {
        assert_eq!(mat(name).name, name);
        assert!(lib.iter().any(|m| m.name == name));
    }
    assert_eq!(mat("Fused_Silica").name, "fused-silica");
    assert_eq!(mat("FUSED SILICA").name, "fused-silica");
    assert_eq!(mat("  Calcium Fluoride 20C ").name, "calcium-fluoride-20c");
    assert_eq!(mat("PMMA").name, "pmma");
    assert!(library_material("unobtainium").is_none());

    for m in &lib {
        if m.name != "vacuum" {
            assert!(!m.source.is_empty(), "{} has no source", m.name);
        }
        let expected = match m.name.as_str() {
            "air" | "vacuum" | "water" => IndexReference::Vacuum,
            _ => IndexReference::Air,
        };
        assert_eq!(m.reference, expected, "{}", m.name);
    }
}

#[test]
fn library_serde_round_trip() {
    for m in library() {
        let text = serde_json::to_string(&m).unwrap_or_else(|e| panic!("{}: {e}", m.name));
        let back: Material = serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", m.name));
        assert_eq!(back, m);
    }
}

#[test]
fn library_indices_are_sane_over_valid_range() {
    for m in library() {
        let (lo, hi) = m.valid_nm;
        assert!(lo > 0.0 && lo < hi, "{}: bad range {lo}..{hi}", m.name);
        let mut nm = lo;
        while nm <= hi {
            assert!(m.is_in_valid_range(nm));
            let n = m.formula_index(nm);
            assert!(n.is_finite(), "{} at {nm} nm: {n}", m.name);
            if m.name == "vacuum" {
                // Vacuum is exactly 1 by definition.
                assert!((n - 1.0).abs() < f64::EPSILON, "vacuum at {nm} nm: {n}");
            } else {
                assert!(n > 1.0 && n < 2.0, "{} at {nm} nm: {n}", m.name);
            }
            nm += 10.0;
        }
    }
}

#[test]
fn indices_are_sorted_into_usable_implausible_and_unusable() {
    // The plausible range is [0.99, 10] relative to air, ends included (vacuum relative to air
    // is 0.99972, from Ciddor 1996 above; the densest common optical solids stay below 5,
    // common practice).
    for n in [MIN_PLAUSIBLE_INDEX, 0.99972, 1.0, 1.5, 4.0, MAX_PLAUSIBLE_INDEX] {
        assert_eq!(check_index(n), IndexCheck::Plausible, "n = {n}");
    }
    for n in [0.5, 0.989, 10.01, 1e6, f64::MIN_POSITIVE] {
        assert_eq!(check_index(n), IndexCheck::Implausible, "n = {n}");
    }
    for n in [0.0, -0.0, -1.5, f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
        assert_eq!(check_index(n), IndexCheck::Unusable, "n = {n}");
    }
}

#[test]
fn air_equations_reject_wavelengths_that_are_not_positive_and_finite() {
    for bad in [0.0, -587.5618, f64::NAN, f64::INFINITY] {
        assert!(air_index_edlen_1966(bad).is_nan(), "Edlén at {bad}");
        assert!(air_index_birch_downs_1993(bad).is_nan(), "Birch & Downs at {bad}");
        assert!(air_index_abs(bad).is_nan(), "Ciddor at {bad}");
    }
}

#[test]
fn every_formula_form_matches_its_closed_form() {
    // Each form written out by hand at λ = 0.6 µm (the forms as documented on Dispersion),
    // so a sign or a power changed in one of them shows.
    let l: f64 = 0.6;
    let l2 = l * l;
    let cases = [
        (Dispersion::Cauchy { a: 1.5, b_um2: 0.004, c_um4: 0.0001 }, 1.5 + 0.004 / l2 + 0.0001 / (l2 * l2)),
        (
            Dispersion::SellmeierWavelength { c0: 0.1, terms: vec![(0.7, 0.07), (0.9, 9.9)] },
            (1.1 + 0.7 * l2 / (l2 - 0.0049) + 0.9 * l2 / (l2 - 98.01)).sqrt(),
        ),
        (Dispersion::SellmeierSquared { c0: 0.2, terms: vec![(1.1, 0.011)] }, (1.2 + 1.1 * l2 / (l2 - 0.011)).sqrt()),
        (
            Dispersion::PowerSeriesSquared { terms: vec![(2.2, 0), (0.01, 2), (0.02, -2), (-0.001, -4)] },
            (2.2 + 0.01 * l2 + 0.02 / l2 - 0.001 / (l2 * l2)).sqrt(),
        ),
        (
            Dispersion::Gas { terms: vec![(0.05, 238.0), (0.0017, 57.0)] },
            1.0 + 0.05 / (238.0 - 1.0 / l2) + 0.0017 / (57.0 - 1.0 / l2),
        ),
        (Dispersion::Constant { n: 1.7 }, 1.7),
    ];
    for (d, want) in cases {
        let got = d.index(600.0);
        assert!((got - want).abs() < 1e-14, "{d:?}: {got} vs {want}");
    }
}

#[test]
fn vacuum_referenced_and_air_referenced_indices_convert_both_ways() {
    // n_abs = n_rel_air · n_air for an air-referenced material; n_rel_air = n_abs / n_air for
    // a vacuum-referenced one (definition of a relative index; Ciddor 1996 for n_air).
    let nm = 500.0;
    let n_air = air_index_abs(nm);
    let glass = Material { reference: IndexReference::Air, ..Material::constant("g", 1.6) };
    assert!((glass.index_abs(nm) - 1.6 * n_air).abs() < 1e-15);
    assert!((glass.index_rel_air(nm) - 1.6).abs() < 1e-15);
    let liquid = Material { reference: IndexReference::Vacuum, ..Material::constant("l", 1.6) };
    assert!((liquid.index_abs(nm) - 1.6).abs() < 1e-15);
    assert!((liquid.index_rel_air(nm) - 1.6 / n_air).abs() < 1e-15);
}
