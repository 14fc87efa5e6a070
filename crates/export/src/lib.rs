//! Files for other programs and for print, from a bench's evaluation and views: each view as CSV (a header
//! row with units, one row per datum) and as a PNG picture that is the workbench's own drawing, made
//! without a window. egui runs headless here and its triangles are filled in software ([`picture`]), so the
//! command line exports on a machine with no display and no GPU. Nothing here depends on a windowing
//! crate, and nothing recomputes a figure: every number comes from [`lumenrail_bench::views::Views`], and
//! the mount sheet's files ([`mount`]: CSV, SVG drawing, ASCII DXF) from its
//! [`lumenrail_bench::mount::MountSheet`].

pub mod colour;
pub mod csv;
pub mod date;
pub mod icon;
pub mod lab;
pub mod mount;
pub mod picture;
pub mod plots;
pub mod rail;
pub mod scene;
