//! Raydraft: a 2D ray-trace sketchpad for prisms, light guides, windows and small lens stacks.
//!
//! The library holds everything but the window: plane geometry ([`geom`]), optics formulas
//! and materials ([`optics`]), the scene document and its file format ([`scene`]), the trace
//! engine ([`trace`]), analysis of results ([`analysis`]) and exporters ([`export`]). None of
//! these modules depend on a user interface. The egui editor lives in [`app`], on top of them.

pub mod analysis;
pub mod app;
pub mod export;
pub mod geom;
pub mod optics;
pub mod rng;
pub mod scene;
pub mod trace;
