//! The Lumenrail bench document: parts, object, wavelengths; its file format; validation; compiling it for
//! the optics core; and the one report that every view reads.
//!
//! ```
//! let text = lumenrail_bench::demos::find("one-lens-screen").unwrap().text;
//! let loaded = lumenrail_bench::file::parse("demo", text).unwrap();
//! let report = lumenrail_bench::report::Report::of(&loaded.bench);
//! assert!(report.images.last().unwrap().real);
//! ```

pub mod aims;
pub mod arrange;
pub mod beam;
pub mod compile;
pub mod demos;
pub mod drawer;
pub mod evaluation;
pub mod eye;
pub mod file;
pub mod instrument;
pub mod lab;
pub mod model;
pub mod mount;
mod reasons;
pub mod report;
pub mod sharpness;
pub mod stray;
pub mod tolerance;
pub mod validate;
pub mod views;
