//! Snell's law, Fresnel coefficients, Brewster and critical angles against values computed
//! from the published formulas.
//!
//! The Fresnel equations in their sine and tangent form are Smith, *Modern Optical
//! Engineering*, 4th ed. (2008), eq. 11.1 (from memory); the same formulas are in Hecht,
//! *Optics*, 5th ed. (2017), ch. 4, and Born & Wolf, *Principles of Optics*, 7th ed. (1999),
//! §1.5 (chapter, section and equation numbers of these two from memory). Each "computed"
//! value was worked out from those formulas independently of this code and rounded to the
//! digits shown.

#![allow(clippy::unreadable_literal)]

use raydraft::geom::{Vec2, unit};
use raydraft::optics::fresnel::{brewster_angle, critical_angle};
use raydraft::optics::{fresnel, refract};

fn close(got: f64, want: f64, tol: f64, what: &str) {
    assert!((got - want).abs() <= tol, "{what}: got {got:.9}, expected {want} ± {tol:e}");
}

fn cos_deg(d: f64) -> f64 {
    d.to_radians().cos()
}

#[test]
fn normal_incidence_reflectance() {
    // R = ((n−1)/(n+1))²: 0.04000 for n = 1.5 and 0.02006 for n = 1.33 (computed; Hecht 2017
    // eq. 4.67, from memory).
    let f = fresnel(1.0, 1.5, 1.0);
    close(f.rs, 0.04, 1e-9, "Rs n=1.5");
    close(f.rp, 0.04, 1e-9, "Rp n=1.5");
    let f = fresnel(1.0, 1.33, 1.0);
    close(f.rs, 0.020059, 1e-6, "R n=1.33");
    close(f.rs, (0.33f64 / 2.33).powi(2), 1e-12, "R n=1.33 closed form");
}

#[test]
fn external_reflection_air_to_glass() {
    // Computed for air → 1.5 from the Fresnel equations (Smith 2008, eq. 11.1; Hecht 2017
    // eqs. 4.42–4.45, from memory).
    let f = fresnel(1.0, 1.5, cos_deg(45.0));
    close(f.rs, 0.09201, 1e-5, "Rs 45°");
    close(f.rp, 0.00847, 1e-5, "Rp 45°");
    close(f.rs.midpoint(f.rp), 0.05024, 1e-5, "mean 45°");
    close(f.ts, 0.90799, 1e-5, "Ts 45°");
    close(f.tp, 0.99153, 1e-5, "Tp 45°");
    for (deg, rs, rp) in [(30.0, 0.05780, 0.02525), (60.0, 0.17657, 0.00180), (80.0, 0.53859, 0.23681)] {
        let f = fresnel(1.0, 1.5, cos_deg(deg));
        close(f.rs, rs, 1e-5, &format!("Rs {deg}°"));
        close(f.rp, rp, 1e-5, &format!("Rp {deg}°"));
    }
}

#[test]
fn internal_reflection_glass_to_air() {
    // Computed for 1.5 → air from the same equations, away from the critical angle.
    for (deg, rs, rp) in [(30.0, 0.10577, 0.00461), (40.0, 0.39052, 0.10006), (41.0, 0.53098, 0.22853)] {
        let f = fresnel(1.5, 1.0, cos_deg(deg));
        close(f.rs, rs, 1e-5, &format!("Rs {deg}° inside"));
        close(f.rp, rp, 1e-5, &format!("Rp {deg}° inside"));
    }
    // Total internal reflection from θc = asin(1/1.5) = 41.8103° up: R = 1 (Hecht 2017 §4.7,
    // from memory).
    for deg in [41.82, 45.0, 60.0, 89.9] {
        let f = fresnel(1.5, 1.0, cos_deg(deg));
        assert!(f.is_tir(), "{deg}° should be TIR");
        close(f.rs, 1.0, 1e-12, "Rs TIR");
        close(f.rp, 1.0, 1e-12, "Rp TIR");
    }
}

#[test]
fn agrees_with_the_sine_and_tangent_forms() {
    // Rs = sin²(θi−θt)/sin²(θi+θt), Rp = tan²(θi−θt)/tan²(θi+θt): Smith, *Modern Optical
    // Engineering*, 4th ed. (2008), eq. 11.1 (from memory). An independent form of the same physics.
    for n in [1.33, 1.5, 1.9, 2.4] {
        for k in 1..90 {
            let ti = f64::from(k).to_radians();
            let tt = (ti.sin() / n).asin();
            let rs = ((ti - tt).sin() / (ti + tt).sin()).powi(2);
            let rp = ((ti - tt).tan() / (ti + tt).tan()).powi(2);
            let f = fresnel(1.0, n, ti.cos());
            close(f.rs, rs, 1e-12, "Rs vs sine form");
            close(f.rp, rp, 1e-12, "Rp vs tangent form");
        }
    }
}

#[test]
fn brewster_angles() {
    // tan θB = n₂/n₁: 56.3099° air → 1.5 and 33.6901° 1.5 → air (computed; formula from the
    // IUPAC Compendium of Chemical Terminology, the "Gold Book", entry "Brewster angle").
    close(brewster_angle(1.0, 1.5).to_degrees(), 56.3099, 1e-4, "Brewster air→glass");
    close(brewster_angle(1.5, 1.0).to_degrees(), 33.6901, 1e-4, "Brewster glass→air");
    // The two are complementary: θB + θB' = 90° (a consequence of tan θB = n₂/n₁).
    close((brewster_angle(1.0, 1.5) + brewster_angle(1.5, 1.0)).to_degrees(), 90.0, 1e-12, "complementary");
    // At Brewster: Rs 0.14793, Rp 0 (computed from Smith 2008, eq. 11.1, from memory).
    let f = fresnel(1.0, 1.5, brewster_angle(1.0, 1.5).cos());
    close(f.rs, 0.14793, 1e-5, "Rs at Brewster");
    close(f.rp, 0.0, 1e-9, "Rp at Brewster");
}

#[test]
fn critical_angles() {
    // θc = asin(1/n): 41.8103°, 48.7535°, 48.6066° (computed; Hecht 2017 §4.7, from memory).
    for (n, want) in [(1.5, 41.8103), (1.33, 48.7535), (1.333, 48.6066)] {
        let c = critical_angle(n, 1.0).expect("critical angle exists").to_degrees();
        close(c, want, 1e-4, &format!("θc n={n}"));
        // Just inside: refraction; just beyond: none.
        let inside = fresnel(n, 1.0, (c - 0.01).to_radians().cos());
        let beyond = fresnel(n, 1.0, (c + 0.01).to_radians().cos());
        assert!(!inside.is_tir() && beyond.is_tir());
    }
    assert!(critical_angle(1.0, 1.5).is_none());
    // Equal indices: no interface, so no critical angle (not 90°).
    assert!(critical_angle(1.5, 1.5).is_none());
}

#[test]
fn snell_angles_from_the_vector_form() {
    // Air → 1.5 at 30 / 45 / 60°: 19.4712 / 28.1255 / 35.2644° (computed from
    // n₁ sin θ₁ = n₂ sin θ₂; Hecht 2017 §4.4, from memory).
    for (deg, want) in [(30.0, 19.4712), (45.0, 28.1255), (60.0, 35.2644)] {
        // A ray going down onto a horizontal surface whose normal points up.
        let d = unit((-90.0f64 + deg).to_radians());
        let t = refract(d, Vec2::new(0.0, 1.0), 1.0, 1.5).expect("refracts");
        let out = t.x.atan2(-t.y).to_degrees();
        close(out, want, 1e-4, &format!("θt at {deg}°"));
        close(t.norm(), 1.0, 1e-15, "unit length");
    }
    // Beyond the critical angle the vector form has no transmitted ray.
    let d = unit((-90.0f64 + 45.0).to_radians());
    assert!(refract(d, Vec2::new(0.0, 1.0), 1.5, 1.0).is_none());
}

#[test]
fn power_is_conserved_at_every_angle() {
    // R + T = 1 with the beam-width factor n₂cos θt/(n₁cos θi) in T (Hecht 2017 eq. 4.65,
    // from memory).
    for k in 0..=900 {
        let c = (f64::from(k) / 10.0).to_radians().cos();
        for (n1, n2) in [(1.0, 1.5), (1.5, 1.0), (1.33, 1.52), (2.4, 1.0)] {
            let f = fresnel(n1, n2, c);
            close(f.rs + f.ts, 1.0, 1e-15, "s");
            close(f.rp + f.tp, 1.0, 1e-15, "p");
        }
    }
}

#[test]
fn grazing_incidence_reflects_everything() {
    // At θi = 90° (cos θi = 0) both amplitude coefficients are −1 in the formulas above, so
    // Rs = Rp = 1 and Ts = Tp = 0, going into a denser or a rarer medium (Hecht, *Optics*,
    // 5th ed., 2017, §4.6.2, from memory: "R → 1 as θi → 90°" for both polarisations).
    for (n1, n2) in [(1.0, 1.5), (1.0, 1.33), (1.33, 1.52), (1.5, 1.0)] {
        let f = fresnel(n1, n2, 0.0);
        close(f.rs, 1.0, 1e-15, &format!("Rs grazing {n1}→{n2}"));
        close(f.rp, 1.0, 1e-15, &format!("Rp grazing {n1}→{n2}"));
        close(f.ts, 0.0, 1e-15, &format!("Ts grazing {n1}→{n2}"));
        close(f.tp, 0.0, 1e-15, &format!("Tp grazing {n1}→{n2}"));
    }
    // Into a denser medium a transmitted ray still exists at grazing incidence, at the
    // critical angle: cos θt = √(1 − (n₁/n₂)²) (Snell's law).
    let f = fresnel(1.0, 1.5, 0.0);
    assert!(!f.is_tir());
    close(f.cos_t.expect("transmitted"), (1.0 - 1.0 / 2.25f64).sqrt(), 1e-15, "cos θt at grazing");
    // Cosines a hair outside [0, 1] (rounding in a dot product) are clamped, not turned into
    // NaN: the same numbers as at the ends of the range.
    assert_eq!(fresnel(1.0, 1.5, -1e-17), fresnel(1.0, 1.5, 0.0));
    assert_eq!(fresnel(1.0, 1.5, 1.0 + 1e-15), fresnel(1.0, 1.5, 1.0));
}

#[test]
fn equal_indices_pass_everything() {
    // No index step, no reflection: R = 0 and T = 1 at every angle, up to grazing (at
    // exactly 90° sin²θt = 1 and the grazing case above applies; the engine never asks, as it
    // passes rays straight on where the indices are equal).
    for k in 0..90 {
        let f = fresnel(1.5, 1.5, cos_deg(f64::from(k)));
        close(f.rs, 0.0, 1e-15, "Rs equal indices");
        close(f.rp, 0.0, 1e-15, "Rp equal indices");
        close(f.ts, 1.0, 1e-15, "Ts equal indices");
        close(f.tp, 1.0, 1e-15, "Tp equal indices");
    }
}

#[test]
fn exactly_at_the_critical_angle_both_routines_report_total_reflection() {
    // n = 1.25 into air: sin θc = 0.8, so cos θc = 0.6 (a 3-4-5 triangle) and
    // (n₁/n₂)² sin²θ = 1.5625 · 0.64 is exactly 1 in floating point. At θc the transmitted
    // ray would run along the surface with T = 0 (Hecht 2017 §4.7, from memory); both routines
    // count it as total reflection, so the engine, which asks both, sees one answer.
    let f = fresnel(1.25, 1.0, 0.6);
    assert!(f.is_tir(), "{f:?}");
    close(f.rs, 1.0, 0.0, "Rs at θc");
    close(f.rp, 1.0, 0.0, "Rp at θc");
    let d = Vec2::new(0.8, -0.6);
    assert!(refract(d, Vec2::new(0.0, 1.0), 1.25, 1.0).is_none());
    assert!(refract(d, Vec2::new(0.0, -1.0), 1.25, 1.0).is_none(), "either normal");
    // A hair inside the critical angle both refract.
    let inside = 0.6 + 1e-12;
    assert!(!fresnel(1.25, 1.0, inside).is_tir());
    let d = Vec2::new((1.0 - inside * inside).sqrt(), -inside);
    assert!(refract(d, Vec2::new(0.0, 1.0), 1.25, 1.0).is_some());
}
