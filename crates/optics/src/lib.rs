//! Lumenrail's physics: materials, surfaces, exact and paraxial tracing, stop and pupils, image figures.
//!
//! No GUI and no file I/O live here.
pub mod batch;
pub mod library;
pub mod material;
pub mod paraxial;
pub mod pupil;
pub mod system;
pub mod trace;
