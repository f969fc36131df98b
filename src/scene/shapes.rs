//! Shapes of solids: a free outline, or a primitive kept by its parameters.
//!
//! Every primitive is built in its own frame, rotated by `rotation_deg` counter-clockwise
//! about its reference point and moved so that the reference point lands on `position`.
//! The reference point of each primitive is given beside it. Outlines always come out
//! counter-clockwise.

use serde::{Deserialize, Serialize};

use super::{Point, to_vec};
use crate::geom::{Outline, Vec2};

/// Most notches on one plate.
pub const MAX_NOTCHES: u32 = 50_000;

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum Shape {
    /// A free outline: vertices in order, joined back to the first. One bulge per edge (the
    /// edge from vertex i to i + 1), or none for straight edges.
    Outline {
        points: Vec<Point>,
        #[serde(default)]
        bulges: Vec<f64>,
    },
    /// A rectangular slab; reference point: its centre.
    Rectangle {
        position: Point,
        width: f64,
        height: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
    /// A wedge (or tapered slab): flat bottom of `length`, thickness changing linearly from
    /// `thickness_start` at the left end to `thickness_end` at the right. Reference point: the
    /// bottom-left corner.
    Wedge {
        position: Point,
        length: f64,
        thickness_start: f64,
        thickness_end: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
    /// An isosceles prism with its apex angle between two faces of length `side`, apex up.
    /// 60° gives an equilateral prism, 90° a right-angle prism with the hypotenuse as base.
    /// Reference point: the middle of the base.
    Prism {
        position: Point,
        apex_deg: f64,
        side: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
    /// A lens with its axis along +x before rotation. Radii follow the usual sign rule: positive
    /// when the centre of curvature lies to the right (+x) of the surface; 0 means flat. A
    /// biconvex lens has `r1 > 0`, `r2 < 0`. Reference point: the middle of the axis.
    Lens {
        position: Point,
        diameter: f64,
        /// Thickness on the axis.
        thickness: f64,
        r1: f64,
        r2: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
    /// A ball (a circle in 2D); reference point: its centre.
    Ball { position: Point, radius: f64 },
    /// A light pipe of constant `width`: a straight run, a bend of `bend_deg` (positive turns
    /// left) with centre-line radius `bend_radius`, and a second straight run. Before
    /// rotation it starts at its reference point heading +x.
    Pipe {
        position: Point,
        width: f64,
        length_in: f64,
        bend_radius: f64,
        bend_deg: f64,
        length_out: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
    /// An edge-lit plate with V-notches cut into its bottom face to send light out of the top.
    /// Notches run from `notch_start` to `notch_end` (mm from the left end); their density
    /// changes linearly so that it is `density_ratio` times higher at `notch_end` than at
    /// `notch_start`. Reference point: the bottom-left corner.
    NotchedPlate {
        position: Point,
        length: f64,
        thickness: f64,
        notches: u32,
        notch_depth: f64,
        /// Included angle of each V.
        notch_angle_deg: f64,
        notch_start: f64,
        notch_end: f64,
        #[serde(default = "one")]
        density_ratio: f64,
        #[serde(default)]
        rotation_deg: f64,
    },
}

fn one() -> f64 {
    1.0
}

impl Shape {
    /// A short word for the shape, for messages.
    pub fn word(&self) -> &'static str {
        match self {
            Self::Outline { .. } => "outline",
            Self::Rectangle { .. } => "rectangle",
            Self::Wedge { .. } => "wedge",
            Self::Prism { .. } => "prism",
            Self::Lens { .. } => "lens",
            Self::Ball { .. } => "ball",
            Self::Pipe { .. } => "pipe",
            Self::NotchedPlate { .. } => "notched plate",
        }
    }

    /// The closed outline of the shape, counter-clockwise, or what is wrong with the
    /// parameters. The outline is not checked for crossing edges here; see
    /// [`Outline::validate`].
    #[allow(clippy::too_many_lines)] // one arm per primitive
    pub fn outline(&self) -> Result<Outline, String> {
        let (verts, bulges, position, rotation_deg) = match self {
            Self::Outline { points, bulges } => {
                if !bulges.is_empty() && bulges.len() != points.len() {
                    return Err(format!(
                        "the outline has {} points but {} bulges; give one bulge per edge (as many as points) or none",
                        points.len(),
                        bulges.len()
                    ));
                }
                let b = if bulges.is_empty() { vec![0.0; points.len()] } else { bulges.clone() };
                (points.iter().map(|&p| to_vec(p)).collect(), b, (0.0, 0.0), 0.0)
            }
            Self::Rectangle { position, width, height, rotation_deg } => {
                positive(&[("width", *width), ("height", *height)])?;
                let (w, h) = (width / 2.0, height / 2.0);
                let v = vec![Vec2::new(-w, -h), Vec2::new(w, -h), Vec2::new(w, h), Vec2::new(-w, h)];
                (v, vec![0.0; 4], *position, *rotation_deg)
            }
            Self::Wedge { position, length, thickness_start, thickness_end, rotation_deg } => {
                positive(&[("length", *length)])?;
                if !(*thickness_start >= 0.0 && *thickness_end >= 0.0 && thickness_start + thickness_end > 0.0) {
                    return Err("a wedge needs thicknesses that are not negative and not both zero".into());
                }
                let mut v = vec![Vec2::new(0.0, 0.0), Vec2::new(*length, 0.0)];
                if *thickness_end > 0.0 {
                    v.push(Vec2::new(*length, *thickness_end));
                }
                if *thickness_start > 0.0 {
                    v.push(Vec2::new(0.0, *thickness_start));
                }
                let n = v.len();
                (v, vec![0.0; n], *position, *rotation_deg)
            }
            Self::Prism { position, apex_deg, side, rotation_deg } => {
                positive(&[("side", *side)])?;
                if !(*apex_deg > 0.0 && *apex_deg < 180.0) {
                    return Err(format!("the apex angle must be between 0° and 180°, it is {apex_deg}°"));
                }
                let half = apex_deg.to_radians() / 2.0;
                let (b, h) = (side * half.sin(), side * half.cos());
                (vec![Vec2::new(-b, 0.0), Vec2::new(b, 0.0), Vec2::new(0.0, h)], vec![0.0; 3], *position, *rotation_deg)
            }
            Self::Lens { position, diameter, thickness, r1, r2, rotation_deg } => {
                let (v, b) = lens(*diameter, *thickness, *r1, *r2)?;
                (v, b, *position, *rotation_deg)
            }
            Self::Ball { position, radius } => {
                positive(&[("radius", *radius)])?;
                (vec![Vec2::new(-radius, 0.0), Vec2::new(*radius, 0.0)], vec![1.0, 1.0], *position, 0.0)
            }
            Self::Pipe { position, width, length_in, bend_radius, bend_deg, length_out, rotation_deg } => {
                let (v, b) = pipe(*width, *length_in, *bend_radius, *bend_deg, *length_out)?;
                (v, b, *position, *rotation_deg)
            }
            Self::NotchedPlate {
                position,
                length,
                thickness,
                notches,
                notch_depth,
                notch_angle_deg,
                notch_start,
                notch_end,
                density_ratio,
                rotation_deg,
            } => {
                let v = notched_plate(
                    *length,
                    *thickness,
                    *notches,
                    *notch_depth,
                    *notch_angle_deg,
                    *notch_start,
                    *notch_end,
                    *density_ratio,
                )?;
                let n = v.len();
                (v, vec![0.0; n], *position, *rotation_deg)
            }
        };
        if !position.0.is_finite() || !position.1.is_finite() || !rotation_deg.is_finite() {
            return Err("the position and rotation must be finite numbers".into());
        }
        let (s, c) = rotation_deg.to_radians().sin_cos();
        let p = to_vec(position);
        let vertices = verts.iter().map(|v| Vec2::new(c * v.x - s * v.y, s * v.x + c * v.y) + p).collect();
        let mut o = Outline { vertices, bulges };
        if o.signed_area() < 0.0 {
            o = reversed(&o);
        }
        Ok(o)
    }

    /// The same solid as a free outline (a primitive loses its parameters).
    pub fn to_free(&self) -> Result<Shape, String> {
        let o = self.outline()?;
        Ok(Shape::Outline { points: o.vertices.iter().map(|v| (v.x, v.y)).collect(), bulges: o.bulges })
    }

    /// The reference point (where the shape sits), for moving it.
    pub fn position(&self) -> Option<Point> {
        match self {
            Self::Outline { .. } => None,
            Self::Rectangle { position, .. }
            | Self::Wedge { position, .. }
            | Self::Prism { position, .. }
            | Self::Lens { position, .. }
            | Self::Ball { position, .. }
            | Self::Pipe { position, .. }
            | Self::NotchedPlate { position, .. } => Some(*position),
        }
    }

    /// Moves the shape by `(dx, dy)` mm.
    pub fn translate(&mut self, dx: f64, dy: f64) {
        match self {
            Self::Outline { points, .. } => {
                for p in points {
                    p.0 += dx;
                    p.1 += dy;
                }
            }
            Self::Rectangle { position, .. }
            | Self::Wedge { position, .. }
            | Self::Prism { position, .. }
            | Self::Lens { position, .. }
            | Self::Ball { position, .. }
            | Self::Pipe { position, .. }
            | Self::NotchedPlate { position, .. } => {
                position.0 += dx;
                position.1 += dy;
            }
        }
    }
}

fn positive(values: &[(&str, f64)]) -> Result<(), String> {
    for (name, v) in values {
        if !(v.is_finite() && *v > 0.0) {
            return Err(format!("the {name} must be a positive number, it is {v}"));
        }
    }
    Ok(())
}

/// The outline run the other way round.
fn reversed(o: &Outline) -> Outline {
    let n = o.vertices.len();
    let vertices: Vec<Vec2> = (0..n).map(|k| o.vertices[(n - k) % n]).collect();
    // New edge k runs from old vertex (n−k)%n to old vertex (n−k−1)%n: old edge (n−k−1)%n reversed.
    let bulges = (0..n).map(|k| -o.bulges[(2 * n - k - 1) % n]).collect();
    Outline { vertices, bulges }
}

/// Sag of a spherical surface of radius `r` (signed) at height `h`: how far the surface at
/// that height lies to the right of its vertex.
fn sag(r: f64, h: f64) -> f64 {
    if r == 0.0 { 0.0 } else { r - r.signum() * (r * r - h * h).sqrt() }
}

fn lens(diameter: f64, thickness: f64, r1: f64, r2: f64) -> Result<(Vec<Vec2>, Vec<f64>), String> {
    positive(&[("diameter", diameter), ("thickness", thickness)])?;
    let h = diameter / 2.0;
    for (name, r) in [("r1", r1), ("r2", r2)] {
        if !r.is_finite() {
            return Err(format!("{name} must be a finite number (0 for a flat surface)"));
        }
        if r != 0.0 && r.abs() < h {
            return Err(format!(
                "|{name}| = {} mm is smaller than half the diameter ({h} mm); the surface cannot reach the rim",
                r.abs()
            ));
        }
    }
    let x1 = -thickness / 2.0 + sag(r1, h);
    let x2 = thickness / 2.0 + sag(r2, h);
    if x2 - x1 <= 1e-9 * diameter {
        return Err(format!(
            "the surfaces cross before the rim (edge thickness {:.4} mm); make the lens thicker or the radii longer",
            x2 - x1
        ));
    }
    let quarter = |r: f64| if r == 0.0 { 0.0 } else { ((h / r.abs()).asin() / 2.0).tan() };
    let b1 = r1.signum() * quarter(r1);
    let b2 = -r2.signum() * quarter(r2);
    let v = vec![Vec2::new(x1, h), Vec2::new(x1, -h), Vec2::new(x2, -h), Vec2::new(x2, h)];
    Ok((v, vec![b1, 0.0, b2, 0.0]))
}

fn pipe(
    width: f64,
    length_in: f64,
    bend_radius: f64,
    bend_deg: f64,
    length_out: f64,
) -> Result<(Vec<Vec2>, Vec<f64>), String> {
    positive(&[("width", width)])?;
    for (name, v) in [("length_in", length_in), ("length_out", length_out)] {
        if !(v.is_finite() && v >= 0.0) {
            return Err(format!("{name} must be zero or positive, it is {v}"));
        }
    }
    if !(bend_deg.is_finite() && bend_deg.abs() < 360.0) {
        return Err(format!("bend_deg must be between −360° and 360°, it is {bend_deg}"));
    }
    let theta = bend_deg.abs().to_radians();
    if theta > 0.0 && !(bend_radius.is_finite() && bend_radius > width / 2.0) {
        return Err(format!("the bend radius must exceed half the width ({} mm), it is {bend_radius}", width / 2.0));
    }
    if theta == 0.0 && length_in + length_out <= 0.0 {
        return Err("a straight pipe needs some length".into());
    }
    let w = width / 2.0;
    let (v, b) = if theta == 0.0 {
        let l = length_in + length_out;
        (vec![Vec2::new(0.0, -w), Vec2::new(l, -w), Vec2::new(l, w), Vec2::new(0.0, w)], vec![0.0; 4])
    } else {
        // Turning left around the centre (length_in, bend_radius).
        let c = Vec2::new(length_in, bend_radius);
        let dir_out = Vec2::new(theta.cos(), theta.sin());
        let radial = |r: f64, ang: f64| c + Vec2::new(ang.sin(), -ang.cos()) * r;
        let (ro, ri) = (bend_radius + w, bend_radius - w);
        let q = (theta / 4.0).tan();
        let mut v = Vec::new();
        let mut b = Vec::new();
        let mut push = |p: Vec2, bulge: f64| {
            v.push(p);
            b.push(bulge);
        };
        push(Vec2::new(0.0, -w), 0.0);
        push(radial(ro, 0.0), q);
        let oe = radial(ro, theta);
        push(oe, 0.0);
        push(oe + dir_out * length_out, 0.0);
        let ie = radial(ri, theta);
        push(ie + dir_out * length_out, 0.0);
        push(ie, -q);
        push(radial(ri, 0.0), 0.0);
        push(Vec2::new(0.0, w), 0.0);
        // Drop repeated points of zero-length runs.
        dedup(&v, &b)
    };
    if bend_deg < 0.0 {
        // Mirror in y; the caller turns the outline back to counter-clockwise.
        Ok((v.iter().map(|p| Vec2::new(p.x, -p.y)).collect(), b.iter().map(|x| -x).collect()))
    } else {
        Ok((v, b))
    }
}

fn dedup(v: &[Vec2], b: &[f64]) -> (Vec<Vec2>, Vec<f64>) {
    let n = v.len();
    let mut ov = Vec::with_capacity(n);
    let mut ob = Vec::with_capacity(n);
    for i in 0..n {
        let next = v[(i + 1) % n];
        if (next - v[i]).norm() <= 1e-12 {
            continue;
        }
        ov.push(v[i]);
        ob.push(b[i]);
    }
    (ov, ob)
}

/// Centres of the notches, evenly spread in cumulative density.
pub fn notch_centres(notches: u32, start: f64, end: f64, density_ratio: f64) -> Vec<f64> {
    let d = end - start;
    let r = density_ratio;
    let a = (r - 1.0) / (2.0 * d);
    let total = d * (1.0 + r) / 2.0;
    (0..notches)
        .map(|k| {
            let f = (f64::from(k) + 0.5) / f64::from(notches) * total;
            let u = if a.abs() < 1e-15 { f } else { (-1.0 + (1.0 + 4.0 * a * f).max(0.0).sqrt()) / (2.0 * a) };
            start + u
        })
        .collect()
}

#[allow(clippy::too_many_arguments)]
fn notched_plate(
    length: f64,
    thickness: f64,
    notches: u32,
    depth: f64,
    angle_deg: f64,
    start: f64,
    end: f64,
    ratio: f64,
) -> Result<Vec<Vec2>, String> {
    positive(&[("length", length), ("thickness", thickness), ("density_ratio", ratio)])?;
    if notches > MAX_NOTCHES {
        return Err(format!("at most {MAX_NOTCHES} notches are allowed, there are {notches}"));
    }
    let mut v = vec![Vec2::new(0.0, 0.0)];
    let mut last = 0.0;
    if notches > 0 {
        positive(&[("notch_depth", depth)])?;
        if depth >= thickness {
            return Err(format!("the notch depth ({depth} mm) must be less than the thickness ({thickness} mm)"));
        }
        if !(angle_deg > 0.0 && angle_deg < 180.0) {
            return Err(format!("the notch angle must be between 0° and 180°, it is {angle_deg}°"));
        }
        if !(start.is_finite() && end.is_finite() && 0.0 <= start && start < end && end <= length) {
            return Err(format!("the notches must lie along the plate: need 0 ≤ notch_start < notch_end ≤ {length}"));
        }
        let half = depth * (angle_deg.to_radians() / 2.0).tan();
        let centres = notch_centres(notches, start, end, ratio);
        for (k, &x) in centres.iter().enumerate() {
            if x - half < last - 1e-12 || x + half > length {
                return Err(format!(
                    "notch {} (at {x:.4} mm, {:.4} mm wide) overlaps its neighbour or the plate's end; use fewer, shallower or narrower notches",
                    k + 1,
                    2.0 * half
                ));
            }
            if x - half > last + 1e-12 {
                v.push(Vec2::new(x - half, 0.0));
            }
            v.push(Vec2::new(x, depth));
            v.push(Vec2::new(x + half, 0.0));
            last = x + half;
        }
    }
    if v.last().is_none_or(|l| l.x < length - 1e-12) {
        v.push(Vec2::new(length, 0.0));
    }
    v.push(Vec2::new(length, thickness));
    v.push(Vec2::new(0.0, thickness));
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn all_primitives_make_valid_ccw_outlines() {
        let shapes = [
            Shape::Rectangle { position: (1.0, 2.0), width: 10.0, height: 3.0, rotation_deg: 30.0 },
            Shape::Wedge {
                position: (0.0, 0.0),
                length: 10.0,
                thickness_start: 2.0,
                thickness_end: 0.0,
                rotation_deg: 0.0,
            },
            Shape::Prism { position: (0.0, 0.0), apex_deg: 60.0, side: 20.0, rotation_deg: 10.0 },
            Shape::Lens {
                position: (0.0, 0.0),
                diameter: 20.0,
                thickness: 5.0,
                r1: 30.0,
                r2: -30.0,
                rotation_deg: 0.0,
            },
            Shape::Lens {
                position: (0.0, 0.0),
                diameter: 20.0,
                thickness: 2.0,
                r1: -40.0,
                r2: 40.0,
                rotation_deg: 0.0,
            },
            Shape::Ball { position: (3.0, 3.0), radius: 2.0 },
            Shape::Pipe {
                position: (0.0, 0.0),
                width: 3.0,
                length_in: 10.0,
                bend_radius: 6.0,
                bend_deg: -90.0,
                length_out: 5.0,
                rotation_deg: 0.0,
            },
            Shape::NotchedPlate {
                position: (0.0, 0.0),
                length: 100.0,
                thickness: 3.0,
                notches: 100,
                notch_depth: 0.2,
                notch_angle_deg: 90.0,
                notch_start: 5.0,
                notch_end: 95.0,
                density_ratio: 2.0,
                rotation_deg: 0.0,
            },
        ];
        for s in &shapes {
            let o = s.outline().unwrap_or_else(|e| panic!("{}: {e}", s.word()));
            assert!(o.signed_area() > 0.0, "{} is not counter-clockwise", s.word());
            o.validate().unwrap_or_else(|e| panic!("{}: {e}", s.word()));
        }
    }

    #[test]
    fn lens_area_matches_geometry() {
        // A plano-convex lens: flat front, back radius −R; area = rectangle + circular segment.
        let (d, t, r) = (20.0f64, 4.0f64, 25.0f64);
        let o = Shape::Lens { position: (0.0, 0.0), diameter: d, thickness: t, r1: 0.0, r2: -r, rotation_deg: 0.0 }
            .outline()
            .expect("lens");
        let h = d / 2.0;
        let sag = r - (r * r - h * h).sqrt();
        let theta = 2.0 * (h / r).asin();
        let segment = 0.5 * r * r * (theta - theta.sin());
        let expected = d * (t - sag) + segment;
        assert!((o.signed_area() - expected).abs() < 1e-9, "{} vs {expected}", o.signed_area());
        // The vertex of the curved face sits at x = t/2.
        assert!(o.contains(Vec2::new(t / 2.0 - 1e-6, 0.0)));
        assert!(!o.contains(Vec2::new(t / 2.0 + 1e-6, 0.0)));
    }

    #[test]
    fn graded_notches_get_denser() {
        let c = notch_centres(10, 0.0, 90.0, 3.0);
        let first_gap = c[1] - c[0];
        let last_gap = c[9] - c[8];
        assert!(last_gap < first_gap / 2.0);
    }
}
