//! Ray casts against edges checked against an independent reference: the textbook ray–circle
//! quadratic about the centre, with the arc picked by the angle of each root. Tiny named
//! cases for the edges where bugs hide (tangency, the ±180° branch cut, rays starting on an
//! arc, nearly straight and nearly full arcs), then fixed-seed loops over thousands of random
//! cases checking invariants: the hit is the reference's nearest root, it lies on the edge,
//! and nudged back or forward along the ray it lies on the side the normal says.

use std::f64::consts::{FRAC_1_SQRT_2, PI, TAU};

use super::{Edge, Vec2, angle_of, cross, right_normal, unit};
use crate::rng::Rng;

fn v(x: f64, y: f64) -> Vec2 {
    Vec2::new(x, y)
}

/// An arc given the way a textbook would: its circle and the angles it spans.
#[derive(Clone, Copy, Debug)]
struct Circular {
    center: Vec2,
    radius: f64,
    /// Angle of the start point from the centre, radians.
    from: f64,
    /// Signed included angle, counter-clockwise positive.
    sweep: f64,
}

/// What the reference expects of a cast.
#[derive(Debug, PartialEq)]
enum Expect {
    Hit(f64),
    Miss,
    /// Too close to an end of the arc, to tangency or to `t_min` for rounding to decide.
    Unclear,
}

/// Angular margin (radians) within which a root counts as at an end of the arc.
const END_MARGIN: f64 = 1e-6;

impl Circular {
    fn edge(&self) -> Edge {
        Edge {
            a: self.center + unit(self.from) * self.radius,
            b: self.center + unit(self.from + self.sweep) * self.radius,
            // bulge = tan(θ/4) (see `Edge`).
            bulge: (self.sweep / 4.0).tan(),
        }
    }

    /// Angle of `p` from the start, measured in the sense of the sweep, in [0, 2π).
    fn along(&self, p: Vec2) -> f64 {
        ((angle_of(p - self.center) - self.from) * self.sweep.signum()).rem_euclid(TAU)
    }

    /// Positive on the side the edge's right normal points to: outside the circle for a
    /// counter-clockwise arc, inside for a clockwise one.
    fn signed_distance(&self, p: Vec2) -> f64 {
        ((p - self.center).norm() - self.radius) * self.sweep.signum()
    }

    /// The outward radial unit vector at `p` turned into the right normal.
    fn normal(&self, p: Vec2) -> Vec2 {
        (p - self.center).normalize() * self.sweep.signum()
    }

    /// The nearest crossing beyond `t_min` of the ray `o + t·d` with the arc.
    /// |o + t·d − c|² = R² is t² + 2βt + γ = 0 with β = (o − c)·d, γ = |o − c|² − R²; its
    /// roots, in the cancellation-free form q = −β − sign(β)·√(β² − γ), t = q and γ/q (Press,
    /// Teukolsky, Vetterling & Flannery 2007, "Numerical Recipes", 3rd ed., eq. 5.6.4, from
    /// memory). A ray starting on the circle (`from_self`) has roots 0 and −2β; only −2β counts.
    fn expect(&self, o: Vec2, d: Vec2, t_min: f64, from_self: bool) -> Expect {
        let r = self.radius;
        let oc = o - self.center;
        let beta = oc.dot(&d);
        let gamma = oc.norm_squared() - r * r;
        let roots = if from_self {
            if (2.0 * beta).abs() < 1e-6 * r {
                return Expect::Unclear;
            }
            vec![-2.0 * beta]
        } else {
            let disc = beta * beta - gamma;
            if disc.abs() < 1e-9 * r * r {
                return Expect::Unclear;
            }
            if disc < 0.0 {
                return Expect::Miss;
            }
            let q = -beta - beta.signum() * disc.sqrt();
            let (t1, t2) = (q, gamma / q);
            vec![t1.min(t2), t1.max(t2)]
        };
        for t in roots {
            if (t - t_min).abs() < 1e-9 * r {
                return Expect::Unclear;
            }
            if t < t_min {
                continue;
            }
            let along = self.along(o + d * t);
            let span = self.sweep.abs();
            if along < END_MARGIN || (along - span).abs() < END_MARGIN || along > TAU - END_MARGIN {
                return Expect::Unclear;
            }
            if along < span {
                return Expect::Hit(t);
            }
        }
        Expect::Miss
    }
}

/// A random arc: centre within 10 mm of the origin, radius 0.01 to 100 mm, shallow, medium or
/// nearly full, either sense; a third of them straddle the ±180° branch cut.
fn random_circular(rng: &mut Rng, case: usize) -> Circular {
    let radius = 10f64.powf(rng.range(-2.0, 2.0));
    let center = v(rng.range(-10.0, 10.0), rng.range(-10.0, 10.0));
    let magnitude = match case % 3 {
        0 => rng.range(0.01, 1.0),
        1 => rng.range(1.0, 5.0),
        _ => TAU - rng.range(1e-4, 0.1),
    };
    let sweep = if rng.uniform() < 0.5 { magnitude } else { -magnitude };
    let from = if case % 7 < 3 {
        // Starts before π (in the sense of the sweep) and runs past it.
        (PI - sweep * rng.range(0.05, 0.95)).rem_euclid(TAU) - PI
    } else {
        rng.range(-PI, PI)
    };
    Circular { center, radius, from, sweep }
}

/// Checks a cast against the reference and, for a hit, the invariants of the hit. Returns
/// whether the reference decided (so that callers can count decided cases).
fn check_cast(arc: &Circular, o: Vec2, d: Vec2, t_min: f64, from_self: bool) -> Option<bool> {
    let e = arc.edge();
    let got = if from_self { e.cast_from_self(o, d, t_min, f64::INFINITY) } else { e.cast(o, d, t_min, f64::INFINITY) };
    let scale = arc.radius + arc.center.norm() + (o - arc.center).norm();
    let tol = 1e-9 * scale;
    let what = format!("{arc:?} from {o:?} along {d:?} (from self {from_self})");
    match (arc.expect(o, d, t_min, from_self), got) {
        (Expect::Unclear, _) => None,
        (Expect::Miss, None) => Some(false),
        (Expect::Hit(t), Some(hit)) => {
            assert!((hit.t - t).abs() < tol, "{what}: t {} expected {t}", hit.t);
            assert!((hit.point - (o + d * hit.t)).norm() < tol, "{what}");
            // On the edge: on its circle, and the edge's own nearest point is the hit.
            assert!(((hit.point - arc.center).norm() - arc.radius).abs() < tol, "{what}");
            assert!(e.distance_to(hit.point) < tol, "{what}");
            assert!((hit.normal - arc.normal(hit.point)).norm() < 1e-9 * scale / arc.radius, "{what}");
            let cos = d.dot(&hit.normal);
            if cos.abs() > 1e-3 {
                // Nudged back along the ray it is on the side it comes from, forward on the other.
                let step = 1e-7 * arc.radius;
                let before = arc.signed_distance(hit.point - d * step);
                let after = arc.signed_distance(hit.point + d * step);
                assert!(before * cos < 0.0 && after * cos > 0.0, "{what}: {before} {after} {cos}");
            }
            Some(true)
        }
        (expected, got) => panic!("{what}: expected {expected:?}, got {got:?}"),
    }
}

// --- Named cases --------------------------------------------------------------------------

/// The left half of the circle of radius 5 about the origin, counter-clockwise from (0, 5)
/// to (0, −5) (bulge 1): it passes through (−5, 0), where the angle jumps from π to −π. Every
/// number below is exact in binary.
fn left_half() -> Edge {
    Edge { a: v(0.0, 5.0), b: v(0.0, -5.0), bulge: 1.0 }
}

#[test]
fn ray_tangent_at_the_branch_cut_touches_the_arc_once() {
    let hit = left_half().cast(v(-5.0, 10.0), v(0.0, -1.0), 0.0, f64::INFINITY).expect("a touch");
    assert_eq!((hit.t, hit.point), (10.0, v(-5.0, 0.0)));
    // Counter-clockwise: the right normal is outward.
    assert_eq!(hit.normal, v(-1.0, 0.0));
    // Run backwards (clockwise) the same point has the inward normal.
    let hit = left_half().reversed().cast(v(-5.0, 10.0), v(0.0, -1.0), 0.0, f64::INFINITY).expect("a touch");
    assert_eq!((hit.t, hit.normal), (10.0, v(1.0, 0.0)));
}

#[test]
fn ray_tangent_to_the_circle_off_the_arc_misses() {
    // The tangent at (5, 0) touches the circle on its missing right half.
    assert_eq!(left_half().cast(v(5.0, 10.0), v(0.0, -1.0), 0.0, f64::INFINITY), None);
}

#[test]
fn ray_tangent_at_an_end_point_touches_it() {
    for (o, d) in [(v(-10.0, 5.0), v(1.0, 0.0)), (v(10.0, 5.0), v(-1.0, 0.0)), (v(7.0, -5.0), v(-1.0, 0.0))] {
        let hit = left_half().cast(o, d, 0.0, f64::INFINITY).expect("a touch");
        assert_eq!(hit.t, (o.x).abs(), "{o:?}");
    }
}

#[test]
fn ray_through_the_centre_meets_the_arc_at_angle_pi_only() {
    // From the right it passes (5, 0), off the arc, then meets the arc at (−5, 0).
    let hit = left_half().cast(v(10.0, 0.0), v(-1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
    assert_eq!((hit.t, hit.point, hit.normal), (15.0, v(-5.0, 0.0), v(-1.0, 0.0)));
    let hit = left_half().cast(v(-10.0, 0.0), v(1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
    assert_eq!((hit.t, hit.normal), (5.0, v(-1.0, 0.0)));
    // Starting at (−5, 0) on the arc, heading in: the far crossing (5, 0) is off the arc.
    assert_eq!(left_half().cast_from_self(v(-5.0, 0.0), v(1.0, 0.0), 1e-9, f64::INFINITY), None);
    // Heading in along (1, 1)/√2 it meets the arc again at its end point (0, 5).
    let d = v(1.0, 1.0) / 2f64.sqrt();
    let hit = left_half().cast_from_self(v(-5.0, 0.0), d, 1e-9, f64::INFINITY).expect("a hit");
    assert!((hit.t - 50f64.sqrt()).abs() < 1e-14 && (hit.point - v(0.0, 5.0)).norm() < 1e-14);
}

#[test]
fn rays_starting_beside_an_arc_inside_and_outside_heading_in_and_out() {
    let e = left_half();
    let gap = 1e-6;
    let t_of = |o: Vec2, d: Vec2| e.cast(o, d, 0.0, f64::INFINITY).map(|h| h.t);
    // Outside, heading in: crosses after the gap.
    assert!((t_of(v(-5.0 - gap, 0.0), v(1.0, 0.0)).expect("a hit") - gap).abs() < 1e-15);
    // Outside, heading out: never.
    assert_eq!(t_of(v(-5.0 - gap, 0.0), v(-1.0, 0.0)), None);
    // Inside, heading out: crosses after the gap.
    assert!((t_of(v(-5.0 + gap, 0.0), v(-1.0, 0.0)).expect("a hit") - gap).abs() < 1e-15);
    // Inside, heading in: the far side of the circle (5, 0) is off the arc.
    assert_eq!(t_of(v(-5.0 + gap, 0.0), v(1.0, 0.0)), None);
    // Inside, straight up: from (−3, 0) it meets the arc at (−3, 4); from (3, 0) the circle
    // at (3, 4), off the arc.
    let hit = e.cast(v(-3.0, 0.0), v(0.0, 1.0), 0.0, f64::INFINITY).expect("a hit");
    assert_eq!((hit.t, hit.point), (4.0, v(-3.0, 4.0)));
    assert!((hit.normal - v(-0.6, 0.8)).norm() < 1e-15);
    assert_eq!(e.cast(v(3.0, 0.0), v(0.0, 1.0), 0.0, f64::INFINITY), None);
}

#[test]
fn length_and_normal_of_a_quarter_circle_are_the_closed_forms() {
    // Radius 3 about (1, 2), from angle 0 to π/2: length = R·θ = 3π/2.
    let c = v(1.0, 2.0);
    let quarter = Edge { a: c + v(3.0, 0.0), b: c + v(0.0, 3.0), bulge: (PI / 8.0).tan() };
    assert!((quarter.length() - 1.5 * PI).abs() < 1e-14);
    assert!((quarter.reversed().length() - 1.5 * PI).abs() < 1e-14);
    // Counter-clockwise: outward radial normals, (1, 0), (1, 1)/√2, (0, 1).
    for (u, n) in [(0.0, v(1.0, 0.0)), (0.5, v(FRAC_1_SQRT_2, FRAC_1_SQRT_2)), (1.0, v(0.0, 1.0))] {
        assert!((quarter.normal_at(u) - n).norm() < 1e-15, "u {u}");
        assert!((quarter.reversed().normal_at(1.0 - u) + n).norm() < 1e-15, "u {u}");
    }
    // Three quarters the other way round (clockwise from angle 0 to π/2 through π):
    // length 9π/2, normals inward.
    let three = Edge { bulge: -(3.0 * PI / 8.0).tan(), ..quarter };
    assert!((three.length() - 4.5 * PI).abs() < 1e-13);
    for (u, n) in [(0.0, v(-1.0, 0.0)), (1.0 / 3.0, v(0.0, 1.0)), (2.0 / 3.0, v(1.0, 0.0)), (1.0, v(0.0, -1.0))] {
        assert!((three.normal_at(u) - n).norm() < 1e-14, "u {u}: {:?}", three.normal_at(u));
    }
    // A segment: its length and its right normal everywhere.
    let s = Edge::segment(v(1.0, 1.0), v(4.0, 5.0));
    assert_eq!(s.length(), 5.0);
    for u in [0.0, 0.5, 1.0] {
        assert_eq!(s.normal_at(u), v(0.8, -0.6));
    }
}

#[test]
fn nearly_full_arc_length_is_radius_times_angle() {
    // A circle of radius 2 missing 10⁻³ rad: R·θ = 2·(2π − 10⁻³).
    let arc = Circular { center: v(-3.0, 4.0), radius: 2.0, from: 2.5, sweep: -(TAU - 1e-3) };
    let e = arc.edge();
    assert!((e.length() - 2.0 * (TAU - 1e-3)).abs() < 1e-9);
    assert!((e.arc().expect("an arc").center - arc.center).norm() < 1e-9);
    // The ray through the gap's middle, from the centre, leaves without a hit; the one
    // opposite meets the arc after R.
    let gap_dir = unit(2.5 + 5e-4);
    assert_eq!(e.cast(arc.center, gap_dir, 0.0, f64::INFINITY), None);
    let hit = e.cast(arc.center, -gap_dir, 0.0, f64::INFINITY).expect("a hit");
    assert!((hit.t - 2.0).abs() < 1e-12);
    // Clockwise arc: the right normal points inward, back at the centre.
    assert!((hit.normal - gap_dir).norm() < 1e-9);
}

#[test]
fn degenerate_arcs_have_no_circle() {
    // A bulge with coincident end points, an end point at infinity, or an infinite bulge: no
    // circle is defined, so the edge is not treated as an arc (and never hit as one).
    let cases = [
        Edge { a: v(1.0, 2.0), b: v(1.0, 2.0), bulge: 0.5 },
        Edge { a: v(0.0, 0.0), b: v(f64::INFINITY, 0.0), bulge: 0.5 },
        Edge { a: v(0.0, 0.0), b: v(3.0, 0.0), bulge: f64::INFINITY },
    ];
    for e in cases {
        assert_eq!(e.arc(), None, "{e:?}");
        assert_eq!(e.arc_ray(), None, "{e:?}");
    }
    // A zero-length edge is never hit, whatever its bulge.
    let point = cases[0];
    assert_eq!(point.length(), 0.0);
    assert_eq!(point.cast(v(1.0, 0.0), v(0.0, 1.0), 0.0, f64::INFINITY), None);
}

#[test]
fn segment_area_is_half_r_squared_times_theta_minus_sin_theta() {
    // Area between a chord and its arc: R²(θ − sin θ)/2 (the circular segment, from memory).
    // The reference sums the Taylor series θ − sin θ = Σ (−1)^(k+1) θ^(2k+1)/(2k+1)!, k ≥ 1
    // (Abramowitz & Stegun 1964, "Handbook of Mathematical Functions", eq. 4.3.65, from
    // memory), to rounding; the chord is exactly (0, 0)–(1, 0), so R = 1/(2 sin(θ/2)) is
    // known to a few units in the last place and shallow arcs can be checked to 10⁻¹⁴.
    fn theta_minus_sin(theta: f64) -> f64 {
        let (mut term, mut sum) = (theta, 0.0);
        for k in 1..30 {
            let n = f64::from(2 * k);
            term *= -theta * theta / (n * (n + 1.0));
            sum -= term;
        }
        sum
    }
    for theta in [1e-4f64, 5e-4, 9.9e-4, 1.01e-3, 0.01, 0.5, 2.0, 5.0, 6.2] {
        for sign in [1.0, -1.0] {
            let bulge = sign * (theta / 4.0).tan();
            let e = Edge { a: v(0.0, 0.0), b: v(1.0, 0.0), bulge };
            let theta_of_edge = 4.0 * bulge.abs().atan();
            let r = 1.0 / (2.0 * (0.5 * theta_of_edge).sin());
            let want = sign * 0.5 * r * r * theta_minus_sin(theta_of_edge);
            // The direct form θ − sin θ loses digits to cancellation for small θ: above 10⁻³
            // (where the code switches to it) allow for that, about 6ε/θ² relative.
            let tol = if theta < 1e-3 { 2e-14 } else { 1e-14 + 2e-15 / (theta * theta) };
            let got = e.segment_area();
            assert!((got - want).abs() <= tol * want.abs(), "θ {theta} sign {sign}: {got} vs {want}");
        }
    }
}

// --- Random cases -------------------------------------------------------------------------

/// Random arcs against random rays, rays aimed at the circle, rays starting on the arc, and
/// rays starting just inside or outside it, against the reference.
#[test]
fn arc_cast_matches_the_textbook_intersection_on_random_rays() {
    let mut rng = Rng::new(0xA7C);
    let (mut n_hits, mut n_misses, mut n_self_hits, mut n_cut_hits, mut n_beside_hits) = (0, 0, 0, 0, 0);
    for case in 0..6000 {
        let arc = random_circular(&mut rng, case);
        let e = arc.edge();
        let r = arc.radius;
        let (o, d, from_self) = match case % 4 {
            0 => (arc.center + v(rng.range(-3.0, 3.0), rng.range(-3.0, 3.0)) * r, unit(rng.range(-PI, PI)), false),
            1 => {
                let o = arc.center + unit(rng.range(-PI, PI)) * r * rng.range(1.2, 4.0);
                let target = arc.center + unit(rng.range(-PI, PI)) * r * rng.range(0.0, 1.0);
                (o, (target - o).normalize(), false)
            }
            2 => (e.point_at(rng.range(0.02, 0.98)), unit(rng.range(-PI, PI)), true),
            _ => {
                // Just inside or just outside the arc, heading anywhere.
                let p = e.point_at(rng.range(0.02, 0.98));
                let radial = (p - arc.center).normalize();
                let off = if rng.uniform() < 0.5 { 1e-6 } else { -1e-6 };
                (p + radial * off * r, unit(rng.range(-PI, PI)), false)
            }
        };
        let t_min = if from_self { 1e-9 * r } else { 0.0 };
        match check_cast(&arc, o, d, t_min, from_self) {
            Some(true) => {
                n_hits += 1;
                let hit = if from_self {
                    e.cast_from_self(o, d, t_min, f64::INFINITY)
                } else {
                    e.cast(o, d, t_min, f64::INFINITY)
                };
                let p = hit.expect("checked").point;
                n_self_hits += usize::from(from_self);
                n_beside_hits += usize::from(case % 4 == 3);
                n_cut_hits += usize::from((p - arc.center).x < 0.0 && (p - arc.center).y.abs() < 0.3 * r);
            }
            Some(false) => n_misses += 1,
            None => {}
        }
    }
    // Enough of each kind to mean something.
    assert!(n_hits > 2000 && n_misses > 1000, "{n_hits} hits, {n_misses} misses");
    assert!(n_self_hits > 300 && n_beside_hits > 500 && n_cut_hits > 100, "{n_self_hits} {n_beside_hits} {n_cut_hits}");
}

/// A ray grazing an arc: shifted towards the centre by δ = 10⁻⁷ R it crosses the arc twice close
/// to the tangent point, 2·√(2Rδ − δ²) apart; shifted away it misses. (The arc's circle is
/// known only to rounding of its end points, up to 10⁻¹² mm for the nearly full ones here,
/// hence the 1 % tolerance on the half chord.)
#[test]
fn grazing_rays_hit_just_inside_and_miss_just_outside() {
    let mut rng = Rng::new(0x6A2E);
    for case in 0..3000 {
        let mut arc = random_circular(&mut rng, case);
        arc.sweep = arc.sweep.signum() * arc.sweep.abs().max(0.1);
        let e = arc.edge();
        let r = arc.radius;
        let theta = arc.from + arc.sweep * rng.range(0.05, 0.95);
        let touch = arc.center + unit(theta) * r;
        let tangent = v(-theta.sin(), theta.cos()) * if rng.uniform() < 0.5 { 1.0 } else { -1.0 };
        let run = r * rng.range(0.5, 3.0);
        let delta = 1e-7 * r;
        let inward = unit(theta) * -delta;
        let hit = e.cast(touch - tangent * run + inward, tangent, 0.0, f64::INFINITY).expect("a grazing hit");
        let half_chord = (2.0 * r * delta - delta * delta).sqrt();
        assert!((hit.t - (run - half_chord)).abs() < 1e-2 * half_chord, "case {case}: {arc:?} t {}", hit.t);
        // The normal there is nearly perpendicular to the ray.
        assert!(hit.normal.dot(&tangent).abs() < 1e-3, "case {case}");
        assert_eq!(e.cast(touch - tangent * run - inward, tangent, 0.0, f64::INFINITY), None, "case {case}: {arc:?}");
    }
}

/// Nearly straight arcs (bulge 10⁻⁸·⁹ to 10⁻⁵) against their chord: the arc's hit is the
/// chord's, moved along the ray by the arc's height over the chord there, h(s) = 4·sagitta·s(1 − s)
/// to first order in the bulge, divided by the sine of the ray's angle to the chord; earlier
/// when the ray comes from the side the arc bows to. The normals differ by at most half the
/// included angle, and the length is the chord·(θ/2)/sin(θ/2).
#[test]
fn nearly_straight_arcs_agree_with_their_chord() {
    let mut rng = Rng::new(0x57AA);
    for case in 0..4000 {
        let a = v(rng.range(-50.0, 50.0), rng.range(-50.0, 50.0));
        let b = a + unit(rng.range(-PI, PI)) * rng.range(1.0, 20.0);
        let magnitude = 10f64.powf(rng.range(-8.9, -5.0));
        let bulge = if rng.uniform() < 0.5 { magnitude } else { -magnitude };
        let arc = Edge { a, b, bulge };
        let chord = Edge::segment(a, b);
        let c = chord.length();
        let theta = 4.0 * magnitude.atan();
        let expected_length = c * (0.5 * theta) / (0.5 * theta).sin();
        assert!((arc.length() - expected_length).abs() < 1e-14 * c, "case {case}");

        let s = rng.range(0.01, 0.99);
        let on_chord = a + (b - a) * s;
        let beta = rng.range(0.1, PI - 0.1) * if rng.uniform() < 0.5 { 1.0 } else { -1.0 };
        let d = unit(angle_of(b - a) + beta);
        let o = on_chord - d * rng.range(1.0, 20.0);
        let hs = chord.cast(o, d, 0.0, f64::INFINITY).expect("the chord is crossed");
        let ha = arc.cast(o, d, 0.0, f64::INFINITY).expect("the arc is crossed");
        let n = right_normal(b - a);
        assert_eq!(hs.normal, n);
        let sin_beta = d.dot(&n).abs();
        let height = 4.0 * (0.5 * bulge.abs() * c) * s * (1.0 - s);
        // The arc bows towards the right normal for a positive bulge; a ray arriving from that
        // side (d·n < 0) meets it first.
        let from_bulge_side = d.dot(&n) * bulge < 0.0;
        let shift = height / sin_beta;
        let expected_t = if from_bulge_side { hs.t - shift } else { hs.t + shift };
        let scale = a.norm() + c + (o - a).norm();
        assert!(
            (ha.t - expected_t).abs() < 1e-3 * shift + 1e-13 * scale,
            "case {case}: arc {} chord {} expected {expected_t}",
            ha.t,
            hs.t
        );
        assert!((ha.normal - n).norm() <= 0.5 * theta * 1.001 + 1e-12, "case {case}");
        assert!(arc.distance_to(ha.point) < 1e-12 * scale, "case {case}");
        assert!(cross(b - a, ha.point - a) * bulge <= 1e-12 * scale * c, "case {case}: bows the wrong way");
    }
}
