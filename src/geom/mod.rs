//! Plane geometry: straight and circular-arc edges, closed outlines, bounding boxes, a
//! bounding-volume hierarchy and ray casting.
//!
//! Conventions: all lengths are in millimetres, all angles in radians, Y points up. An edge
//! runs from `a` to `b`; its *right normal* points to the right of that direction, which is
//! outward for a counter-clockwise outline. Nothing here knows about optics.

mod aabb;
mod boxtree;
mod bvh;
mod edge;
#[cfg(test)]
mod edge_tests;
mod outline;
mod point_edge;
mod ray_arc;
mod ray_segment;

pub use aabb::Aabb;
pub use boxtree::BoxTree;
pub use bvh::{Bvh, BvhHit};
pub use edge::{ArcGeom, Edge, EdgeHit};
pub use outline::{Outline, OutlineError, crossing_pairs};
pub use point_edge::{EdgeProjection, project_point_on_edge};
pub use ray_arc::{ArcRay, ray_arc};
pub use ray_segment::{ray_segment, right_normal};

/// A point or a direction in the plane, in millimetres.
pub type Vec2 = nalgebra::Vector2<f64>;

/// The z component of the cross product of two plane vectors.
#[inline]
pub fn cross(a: Vec2, b: Vec2) -> f64 {
    a.x * b.y - a.y * b.x
}

/// `v` rotated by +90° (counter-clockwise).
#[inline]
pub fn perp(v: Vec2) -> Vec2 {
    Vec2::new(-v.y, v.x)
}

/// The unit vector at `angle_rad` from the +x axis.
#[inline]
pub fn unit(angle_rad: f64) -> Vec2 {
    Vec2::new(angle_rad.cos(), angle_rad.sin())
}

/// Angle of `v` from the +x axis, in (−π, π].
#[inline]
pub fn angle_of(v: Vec2) -> f64 {
    v.y.atan2(v.x)
}

/// Whether both components are finite.
#[inline]
pub fn is_finite(v: Vec2) -> bool {
    v.x.is_finite() && v.y.is_finite()
}
