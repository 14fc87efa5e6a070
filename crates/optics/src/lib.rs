//! Lumenrail's physics: materials, surfaces, exact and paraxial tracing, stop and pupils, image figures.
//!
//! No GUI and no file I/O live here. Lengths are in millimetres, wavelengths in nanometres; the rail runs
//! along +z and heights y are positive upward (DESIGN.md, Conventions).
//!
//! ```
//! use lumenrail_optics::material::Material;
//! use lumenrail_optics::system::{Shape, Surface, System};
//! use lumenrail_optics::{paraxial::FirstOrder, trace::{trace, Ray}};
//!
//! // A plano-convex lens, curved side first: R = 51.5 mm, 4 mm thick, index 1.5.
//! let glass = Material::Constant(1.5);
//! let lens = System {
//!     object_medium: Material::AIR,
//!     surfaces: vec![
//!         Surface::refracting(100.0, Shape::sphere(51.5), glass),
//!         Surface::refracting(104.0, Shape::Flat, Material::AIR),
//!     ],
//! };
//! let seq = lens.at(587.5618).unwrap();
//! let first = FirstOrder::of(&seq).unwrap();
//! // Lensmaker: f = R/(n − 1) = 103 mm; BFL = f − t/n.
//! assert!((first.efl_mm.unwrap() - 103.0).abs() < 1e-9);
//! assert!((first.bfl_mm.unwrap() - (103.0 - 4.0 / 1.5)).abs() < 1e-9);
//!
//! // A real ray 0.1 mm above the axis crosses it 1.1e-4 mm short of the paraxial focus (spherical
//! // aberration grows as the square of the height).
//! let out = trace(&seq, Ray::at_angle(0.1, 0.0, 0.0)).unwrap();
//! let focus = first.back_focus_at_mm.unwrap();
//! let lsa = out.axis_crossing_mm().unwrap() - focus;
//! assert!(lsa < 0.0 && lsa > -2e-4);
//! ```
//!
//! The pipeline: a [`system::System`] (surfaces with materials) is evaluated at a wavelength into a
//! [`system::Sequence`]; [`trace`] and [`batch`] trace real rays through it, [`paraxial`] gives first-order
//! figures, [`pupil`] finds the stop and pupils and aims real rays, [`spot`] integrates the on-axis spot
//! over the pupil, [`seidel`] sums third-order aberrations, [`beam`] carries a laser's Gaussian beam,
//! [`stray`] follows the light that lens surfaces reflect, and [`analysis`] runs the image figures at once.

pub mod analysis;
pub mod batch;
pub mod beam;
mod block;
pub mod diffraction;
pub mod eye;
pub mod field;
pub mod library;
pub mod material;
pub mod paraxial;
pub mod pose;
pub mod pupil;
pub mod quadrature;
pub mod sampling;
pub mod seidel;
mod simd;
pub mod skew;
pub mod skew_batch;
pub mod spot;
pub mod stray;
pub mod system;
pub mod trace;
pub mod wavefront;
