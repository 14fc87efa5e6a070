//! Surfaces and the compiled surface sequence, in the order light meets them.
//!
//! A [`System`] holds surfaces with their materials; [`System::at`] evaluates every index at one
//! wavelength and gives a [`Sequence`], the numeric form that the traces read. Positions are absolute rail
//! positions in mm (the rail's datum is z = 0); after a mirror the light travels −z and meets surfaces at
//! smaller z, and a lens crossed twice appears twice.

use crate::material::{Material, MaterialError};

/// The shape of a surface, rotationally symmetric about the rail axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// A plane perpendicular to the axis.
    Flat,
    /// A sphere of curvature `c = 1/R` (1/mm), positive when the centre lies at +z of the vertex.
    Sphere {
        /// Curvature 1/R, 1/mm.
        curvature: f64,
    },
    /// A conicoid c(x² + y²) − 2z + c(1 + k)z² = 0 about its vertex: k = 0 sphere, −1 paraboloid,
    /// k < −1 hyperboloid, between −1 and 0 prolate ellipsoid, k > 0 oblate ellipsoid.
    Conic {
        /// Vertex curvature 1/R, 1/mm.
        curvature: f64,
        /// Conic constant k.
        conic: f64,
    },
}

impl Shape {
    /// A spherical surface of radius `radius_mm` (any finite non-zero radius).
    pub fn sphere(radius_mm: f64) -> Shape {
        Shape::Sphere { curvature: 1.0 / radius_mm }
    }

    /// A conicoid of vertex radius `radius_mm` and conic constant `conic`.
    pub fn conic(radius_mm: f64, conic: f64) -> Shape {
        Shape::Conic { curvature: 1.0 / radius_mm, conic }
    }

    /// Vertex curvature, 1/mm (0 for flat).
    pub fn curvature(&self) -> f64 {
        match *self {
            Shape::Flat => 0.0,
            Shape::Sphere { curvature } | Shape::Conic { curvature, .. } => curvature,
        }
    }

    /// Conic constant (0 for flat and spheres).
    pub fn conic_constant(&self) -> f64 {
        match *self {
            Shape::Conic { conic, .. } => conic,
            _ => 0.0,
        }
    }

    /// The sag z(ρ) at radial height `rho_mm`, measured from the vertex, or `None` where the surface does
    /// not reach that height. Uses the form cρ² / (1 + √(1 − (1 + k)c²ρ²)), which keeps its digits as the
    /// curvature goes to zero.
    pub fn sag_mm(&self, rho_mm: f64) -> Option<f64> {
        let c = self.curvature();
        let k = self.conic_constant();
        let arg = 1.0 - (1.0 + k) * c * c * rho_mm * rho_mm;
        (arg >= 0.0).then(|| c * rho_mm * rho_mm / (1.0 + arg.sqrt()))
    }
}

/// What a surface does to the light.
#[derive(Debug, Clone, PartialEq)]
pub enum Action {
    /// Refraction by Snell's law into the named medium.
    Refract {
        /// The medium after the surface.
        into: Material,
    },
    /// Reflection: the light turns back; the medium stays the same.
    Reflect,
    /// An ideal thin lens of focal length `focal_mm` in air: tan u' = tan u − y/f, which images every
    /// conjugate perfectly. Its plane is the surface's vertex plane (use [`Shape::Flat`]).
    IdealLens {
        /// Focal length, mm (negative for a diverging lens).
        focal_mm: f64,
    },
}

/// One surface of a system.
#[derive(Debug, Clone, PartialEq)]
pub struct Surface {
    /// Rail position of the vertex, mm.
    pub vertex_z_mm: f64,
    /// Shape about the vertex.
    pub shape: Shape,
    /// What the surface does.
    pub action: Action,
    /// Clear semi-aperture, mm; `None` for unlimited.
    pub semi_aperture_mm: Option<f64>,
    /// A caller's tag (for a bench, the index of the part the surface belongs to). Consecutive surfaces
    /// with the same tag form one imaging element, after which an intermediate image is reported.
    pub element: usize,
}

impl Surface {
    /// A refracting surface into `into`.
    pub fn refracting(vertex_z_mm: f64, shape: Shape, into: Material) -> Surface {
        Surface { vertex_z_mm, shape, action: Action::Refract { into }, semi_aperture_mm: None, element: 0 }
    }

    /// A mirror.
    pub fn mirror(vertex_z_mm: f64, shape: Shape) -> Surface {
        Surface { vertex_z_mm, shape, action: Action::Reflect, semi_aperture_mm: None, element: 0 }
    }

    /// An ideal thin lens.
    pub fn ideal_lens(vertex_z_mm: f64, focal_mm: f64) -> Surface {
        Surface {
            vertex_z_mm,
            shape: Shape::Flat,
            action: Action::IdealLens { focal_mm },
            semi_aperture_mm: None,
            element: 0,
        }
    }

    /// A plain aperture (an iris): a flat surface that does not bend the light, into air.
    pub fn aperture(vertex_z_mm: f64, semi_aperture_mm: f64) -> Surface {
        Surface {
            vertex_z_mm,
            shape: Shape::Flat,
            action: Action::Refract { into: Material::AIR },
            semi_aperture_mm: Some(semi_aperture_mm),
            element: 0,
        }
    }

    /// The same surface with a clear semi-aperture.
    pub fn with_semi_aperture(mut self, semi_aperture_mm: f64) -> Surface {
        self.semi_aperture_mm = Some(semi_aperture_mm);
        self
    }

    /// The same surface with an element tag.
    pub fn in_element(mut self, element: usize) -> Surface {
        self.element = element;
        self
    }
}

/// A system: the medium the light starts in and the surfaces in the order light meets them.
#[derive(Debug, Clone, PartialEq)]
pub struct System {
    /// The medium the light leaves the object in (air on a bench).
    pub object_medium: Material,
    /// The surfaces, in the order light meets them.
    pub surfaces: Vec<Surface>,
}

/// Why a system cannot be evaluated at a wavelength.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SystemError {
    /// A material has no index at the wavelength.
    #[error("{}: {source}", medium_name(*.surface))]
    Material {
        /// Index of the surface whose following medium failed (`None`: the object medium).
        surface: Option<usize>,
        /// The material's complaint.
        source: MaterialError,
    },
    /// A number of the system is not usable.
    #[error("surface {surface}: {what}")]
    Invalid {
        /// The surface.
        surface: usize,
        /// What is wrong.
        what: String,
    },
}

fn medium_name(surface: Option<usize>) -> String {
    match surface {
        None => "object space".to_string(),
        Some(i) => format!("medium after surface {i}"),
    }
}

/// How a surface acts, in the numeric form the traces read.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    /// Refraction (including a plain aperture, where the indices are equal).
    Refract,
    /// Reflection.
    Reflect,
    /// Ideal thin lens with this focal length, mm.
    Ideal(f64),
}

/// One surface of a [`Sequence`]: everything a ray needs, at one wavelength.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    /// Vertex rail position, mm.
    pub z_mm: f64,
    /// Vertex curvature, 1/mm.
    pub c: f64,
    /// Conic constant.
    pub k: f64,
    /// Clear semi-aperture, mm (`f64::INFINITY` when unlimited).
    pub semi_aperture_mm: f64,
    /// What the surface does.
    pub kind: Kind,
    /// Absolute index before the surface.
    pub n_before: f64,
    /// Absolute index after the surface.
    pub n_after: f64,
    /// Direction of travel before the surface along z: +1 or −1.
    pub dir_before: f64,
    /// Direction of travel after the surface: flips at a mirror.
    pub dir_after: f64,
    /// The caller's element tag.
    pub element: usize,
}

impl Step {
    /// Signed index before the surface (negative when travelling −z), the convention that lets the
    /// paraxial equations cover mirrors unchanged.
    pub fn signed_n_before(&self) -> f64 {
        self.n_before * self.dir_before
    }

    /// Signed index after the surface.
    pub fn signed_n_after(&self) -> f64 {
        self.n_after * self.dir_after
    }

    /// Whether the surface has the exact spherical (or flat) form that the fast trace handles.
    pub fn is_spherical(&self) -> bool {
        self.k == 0.0
    }

    /// Whether the surface only limits the light: a flat plane between equal indices (an iris). Every
    /// other surface (a lens or mirror face, an ideal lens, a flat face of glass) belongs to the optics.
    pub fn is_aperture_only(&self) -> bool {
        // Equal indices from the same material evaluate to the same bits; an iris in air is exactly 1 = 1.
        #[allow(clippy::float_cmp)]
        let same_index = self.n_before == self.n_after;
        self.kind == Kind::Refract && self.c == 0.0 && same_index
    }
}

/// A system evaluated at one wavelength: the numeric sequence that traces read.
#[derive(Debug, Clone, PartialEq)]
pub struct Sequence {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Absolute index of the object space.
    pub n_object: f64,
    /// The surfaces in order.
    pub steps: Vec<Step>,
}

impl Sequence {
    /// Index of image space (after the last surface), absolute.
    pub fn n_image(&self) -> f64 {
        self.steps.last().map_or(self.n_object, |s| s.n_after)
    }

    /// Direction of travel in image space: +1 or −1.
    pub fn dir_image(&self) -> f64 {
        self.steps.last().map_or(1.0, |s| s.dir_after)
    }

    /// The first `count` surfaces as a sequence of their own (the light that has met only those), with
    /// the same numbers: nothing is evaluated again.
    pub fn prefix(&self, count: usize) -> Sequence {
        Sequence {
            wavelength_nm: self.wavelength_nm,
            n_object: self.n_object,
            steps: self.steps[..count.min(self.steps.len())].to_vec(),
        }
    }

    /// Index of the first surface that belongs to the optics (not an iris; see [`Step::is_aperture_only`]).
    pub fn first_optic(&self) -> Option<usize> {
        self.steps.iter().position(|s| !s.is_aperture_only())
    }

    /// Index of the last surface that belongs to the optics.
    pub fn last_optic(&self) -> Option<usize> {
        self.steps.iter().rposition(|s| !s.is_aperture_only())
    }
}

impl System {
    /// Evaluates every medium at `wavelength_nm` and checks every number.
    pub fn at(&self, wavelength_nm: f64) -> Result<Sequence, SystemError> {
        let n_object = self
            .object_medium
            .index_at(wavelength_nm)
            .map_err(|source| SystemError::Material { surface: None, source })?;
        let mut n = n_object;
        let mut dir = 1.0;
        let mut steps = Vec::with_capacity(self.surfaces.len());
        for (i, s) in self.surfaces.iter().enumerate() {
            let invalid = |what: String| SystemError::Invalid { surface: i, what };
            let c = s.shape.curvature();
            let k = s.shape.conic_constant();
            if !c.is_finite() || !k.is_finite() || !s.vertex_z_mm.is_finite() {
                return Err(invalid("position, curvature and conic constant must be finite".into()));
            }
            let semi = s.semi_aperture_mm.unwrap_or(f64::INFINITY);
            if semi.is_nan() || semi <= 0.0 {
                return Err(invalid(format!("clear semi-aperture {semi} mm must be positive")));
            }
            let (kind, n_after, dir_after) = match &s.action {
                Action::Refract { into } => {
                    let n_after = into
                        .index_at(wavelength_nm)
                        .map_err(|source| SystemError::Material { surface: Some(i), source })?;
                    (Kind::Refract, n_after, dir)
                }
                Action::Reflect => (Kind::Reflect, n, -dir),
                Action::IdealLens { focal_mm } => {
                    if !focal_mm.is_finite() || *focal_mm == 0.0 {
                        return Err(invalid(format!("focal length {focal_mm} mm must be finite and non-zero")));
                    }
                    if c != 0.0 {
                        return Err(invalid("an ideal thin lens lies in a plane".into()));
                    }
                    (Kind::Ideal(*focal_mm), n, dir)
                }
            };
            steps.push(Step {
                z_mm: s.vertex_z_mm,
                c,
                k,
                semi_aperture_mm: semi,
                kind,
                n_before: n,
                n_after,
                dir_before: dir,
                dir_after,
                element: s.element,
            });
            n = n_after;
            dir = dir_after;
        }
        Ok(Sequence { wavelength_nm, n_object, steps })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sag_of_a_sphere_is_exact() {
        // A sphere of radius 50 at height 30: sag = R − √(R² − ρ²) = 50 − 40 = 10.
        let s = Shape::sphere(50.0);
        assert!((s.sag_mm(30.0).unwrap() - 10.0).abs() < 1e-12);
        assert!(s.sag_mm(51.0).is_none());
        assert_eq!(Shape::Flat.sag_mm(1e6), Some(0.0));
    }

    #[test]
    fn a_mirror_turns_the_direction() {
        let system = System {
            object_medium: Material::AIR,
            surfaces: vec![Surface::mirror(100.0, Shape::Flat), Surface::ideal_lens(50.0, 20.0)],
        };
        let seq = system.at(550.0).unwrap();
        assert!(seq.steps[0].dir_after < 0.0);
        assert!(seq.steps[1].dir_before < 0.0);
        assert!(seq.dir_image() < 0.0);
    }
}
