//! Optics without geometry: materials and dispersion, Snell's law, Fresnel coefficients and
//! the display colour of a wavelength. Pure functions; nothing here knows about scenes.

pub mod colour;
pub mod fresnel;
pub mod material;

pub use fresnel::{Fresnel, fresnel, reflect, refract};
pub use material::{Material, library, library_material};
