//! Writers for traced scenes: SVG pictures, CSV tables of detector data and events, and a
//! JSON power budget. Each returns text; the caller decides where it goes.

pub mod annotate;
pub mod csv;
pub mod json;
pub mod svg;
