//! Schematic eyes: their published surfaces, our model of accommodation between the relaxed and the
//! accommodated state, refractive error by axial length, and the vergence arithmetic of eyeglass
//! correction.
//!
//! Two eyes are built in, both recalled from memory (not re-checked against the printed sources; the tests
//! cross-check the total power and focal lengths the sources quote):
//!
//! - **Gullstrand's exact schematic eye** (No. 1), A. Gullstrand, in H. von Helmholtz, *Handbuch der
//!   physiologischen Optik*, 3rd ed., vol. 1 (1909); also tabulated in A. G. Bennett & R. B. Rabbetts,
//!   *Clinical Visual Optics*. Six refracting surfaces (cornea front and back, the lens cortex and nucleus
//!   front and back) with constant indices, relaxed and in maximum accommodation. Relaxed: power 58.64 D,
//!   focal lengths −17.055 mm and +22.785 mm; accommodated: 70.57 D, −14.169 mm and +18.930 mm. At its own
//!   axial length of 24.0 mm the relaxed eye is about 1 D hyperopic; here the retina is placed wherever the
//!   chosen refractive error puts it.
//! - **Emsley's reduced eye**, H. H. Emsley, *Visual Optics*: one refracting surface of radius 50/9 mm into
//!   index 4/3, power 60 D, focal lengths −16.667 mm and +22.222 mm.
//!
//! **Accommodation is a model of ours.** A schematic eye is published in two states only. Between them we
//! move every surface's vertex position and curvature (1/R, not R) linearly in one parameter t from 0
//! (relaxed) to 1 (accommodated), indices unchanged; the accommodation of a state is the fall of the eye's
//! refraction (the vergence at the corneal vertex of the light it focuses on the retina) from the relaxed
//! state's, and t is found for a wanted accommodation by bisection (it rises with t). The reduced eye has
//! no published accommodated state: its surface power simply rises by the accommodation (so its
//! refraction falls by exactly that), up to the amplitude of Gullstrand's eye with the same refractive
//! error (our choice).
//!
//! Vergences are in dioptres (1/m), positive for converging light; distances in mm from the corneal vertex.
//! An ocular refraction K < 0 is a myope's (far point 1000/|K| mm in front of the cornea), K > 0 a
//! hyperope's (far point behind the eye).

/// A published schematic eye.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SchematicEye {
    /// Gullstrand's exact schematic eye (No. 1): six surfaces, relaxed and accommodated.
    GullstrandExact,
    /// Emsley's reduced eye: one surface, n = 4/3.
    EmsleyReduced,
}

/// One refracting surface of an eye: its vertex from the corneal vertex, its radius and the index after it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EyeSurface {
    /// Vertex position behind the corneal vertex, mm.
    pub at_mm: f64,
    /// Curvature 1/R, 1/mm (positive: centre behind the vertex).
    pub curvature_per_mm: f64,
    /// Refractive index after the surface.
    pub index_after: f64,
}

/// An eye's refracting surfaces and where its pupil lies, without a retina.
#[derive(Debug, Clone, PartialEq)]
pub struct EyeOptics {
    /// The surfaces in order, from the cornea.
    pub surfaces: Vec<EyeSurface>,
    /// The pupil's plane, mm behind the corneal vertex (the iris lies on the lens's front vertex plane;
    /// the reduced eye's pupil at its one surface).
    pub pupil_at_mm: f64,
}

fn s(at_mm: f64, radius_mm: f64, index_after: f64) -> EyeSurface {
    EyeSurface { at_mm, curvature_per_mm: 1.0 / radius_mm, index_after }
}

impl SchematicEye {
    /// Every built-in eye.
    pub const ALL: [SchematicEye; 2] = [SchematicEye::GullstrandExact, SchematicEye::EmsleyReduced];

    /// The eye's name and source, for a person.
    pub fn title(self) -> &'static str {
        match self {
            SchematicEye::GullstrandExact => "Gullstrand's exact schematic eye (No. 1)",
            SchematicEye::EmsleyReduced => "Emsley's reduced eye",
        }
    }

    /// The relaxed state as published.
    pub fn relaxed(self) -> EyeOptics {
        match self {
            SchematicEye::GullstrandExact => EyeOptics {
                surfaces: vec![
                    s(0.0, 7.7, 1.376),
                    s(0.5, 6.8, 1.336),
                    s(3.6, 10.0, 1.386),
                    s(4.146, 7.911, 1.406),
                    s(6.565, -5.76, 1.386),
                    s(7.2, -6.0, 1.336),
                ],
                pupil_at_mm: 3.6,
            },
            SchematicEye::EmsleyReduced => {
                EyeOptics { surfaces: vec![s(0.0, 50.0 / 9.0, 4.0 / 3.0)], pupil_at_mm: 0.0 }
            }
        }
    }

    /// The accommodated state as published (`None`: the eye has none).
    pub fn accommodated(self) -> Option<EyeOptics> {
        match self {
            SchematicEye::GullstrandExact => Some(EyeOptics {
                surfaces: vec![
                    s(0.0, 7.7, 1.376),
                    s(0.5, 6.8, 1.336),
                    s(3.2, 5.33, 1.386),
                    s(3.8725, 2.655, 1.406),
                    s(6.5275, -2.655, 1.386),
                    s(7.2, -5.33, 1.336),
                ],
                pupil_at_mm: 3.2,
            }),
            SchematicEye::EmsleyReduced => None,
        }
    }
}

/// The paraxial matrix of an eye's optics from just before the cornea (in air) to just after its last
/// surface: y' = a y + b nu, nu' = c y + d nu (reduced slopes; mm).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EyeMatrix {
    /// ∂y'/∂y.
    pub a: f64,
    /// ∂y'/∂nu, mm.
    pub b: f64,
    /// ∂nu'/∂y = −power, 1/mm.
    pub c: f64,
    /// ∂nu'/∂nu.
    pub d: f64,
    /// Index after the last surface.
    pub n_after: f64,
    /// The last surface's vertex, mm from the cornea.
    pub last_at_mm: f64,
}

impl EyeOptics {
    /// The paraxial (y-nu) matrix of these surfaces, the eye in air.
    pub fn matrix(&self) -> EyeMatrix {
        let run = |y0: f64, nu0: f64| {
            let (mut y, mut nu, mut n, mut z) = (y0, nu0, 1.0, 0.0);
            for s in &self.surfaces {
                y += (s.at_mm - z) * nu / n;
                nu -= y * s.curvature_per_mm * (s.index_after - n);
                n = s.index_after;
                z = s.at_mm;
            }
            (y, nu)
        };
        let (a, c) = run(1.0, 0.0);
        let (b, d) = run(0.0, 1.0);
        EyeMatrix {
            a,
            b,
            c,
            d,
            n_after: self.surfaces.last().map_or(1.0, |s| s.index_after),
            last_at_mm: self.surfaces.last().map_or(0.0, |s| s.at_mm),
        }
    }

    /// Linear interpolation between two states of the same eye (our model): positions and curvatures.
    fn between(&self, other: &EyeOptics, t: f64) -> EyeOptics {
        let mix = |a: f64, b: f64| a + t * (b - a);
        EyeOptics {
            surfaces: self
                .surfaces
                .iter()
                .zip(&other.surfaces)
                .map(|(a, b)| EyeSurface {
                    at_mm: mix(a.at_mm, b.at_mm),
                    curvature_per_mm: mix(a.curvature_per_mm, b.curvature_per_mm),
                    index_after: a.index_after,
                })
                .collect(),
            pupil_at_mm: mix(self.pupil_at_mm, other.pupil_at_mm),
        }
    }
}

impl EyeMatrix {
    /// Total power, dioptres.
    pub fn power_d(&self) -> f64 {
        -1000.0 * self.c
    }

    /// Where the light of vergence `vergence_d` at the cornea comes to a point, mm from the cornea (`None`
    /// when it leaves parallel).
    pub fn image_at_mm(&self, vergence_d: f64) -> Option<f64> {
        // A ray at height 1 with nu = −V (V in 1/mm) heads from (or to) the point at vergence V.
        let nu0 = -vergence_d / 1000.0;
        let (y, nu) = (self.a + self.b * nu0, self.c + self.d * nu0);
        (nu != 0.0).then(|| self.last_at_mm - y * self.n_after / nu)
    }

    /// The vergence at the cornea of the light this eye brings to a point at `retina_mm` from the cornea:
    /// the eye's refraction when the retina lies there, dioptres.
    pub fn vergence_for(&self, retina_mm: f64) -> f64 {
        let l = (retina_mm - self.last_at_mm) / self.n_after;
        // y' + l nu' = 0 with y' = a + b nu0, nu' = c + d nu0.
        let nu0 = -(self.a + l * self.c) / (self.b + l * self.d);
        -1000.0 * nu0
    }
}

/// Why an eye cannot be set up as asked.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EyeError {
    /// The refractive error puts the retina nowhere behind the lens.
    #[error("a refractive error of {0} D puts the retina nowhere behind the eye's lens")]
    NoRetina(f64),
    /// The accommodation asked for is outside what the eye can do.
    #[error("accommodation of {asked} D is outside this eye's range, 0 to {amplitude:.2} D")]
    Accommodation {
        /// Asked, dioptres.
        asked: f64,
        /// The eye's amplitude, dioptres.
        amplitude: f64,
    },
}

/// One eye as set on the bench: its model, refractive error and accommodation, with its optics and retina.
#[derive(Debug, Clone, PartialEq)]
pub struct EyeState {
    /// The schematic eye.
    pub model: SchematicEye,
    /// The relaxed eye's refraction (its far point's vergence at the cornea), dioptres.
    pub refraction_d: f64,
    /// The accommodation in use, dioptres.
    pub accommodation_d: f64,
    /// The most the eye can accommodate, dioptres.
    pub amplitude_d: f64,
    /// The optics in the state in use.
    pub optics: EyeOptics,
    /// The retina's distance behind the corneal vertex (the axial length), mm.
    pub retina_mm: f64,
}

/// Bisection steps for the interpolation parameter (2⁻⁶⁰ of its range: below f64's resolution of t).
const BISECTION_STEPS: usize = 60;

impl EyeState {
    /// The eye `model` with refraction `refraction_d` (far point vergence, dioptres; the retina is placed
    /// to give it) accommodating by `accommodation_d` dioptres.
    pub fn new(model: SchematicEye, refraction_d: f64, accommodation_d: f64) -> Result<EyeState, EyeError> {
        let relaxed = model.relaxed();
        let m0 = relaxed.matrix();
        let retina_mm = m0
            .image_at_mm(refraction_d)
            .filter(|z| z.is_finite() && *z > m0.last_at_mm)
            .ok_or(EyeError::NoRetina(refraction_d))?;
        let refraction_at = |optics: &EyeOptics| optics.matrix().vergence_for(retina_mm);
        let published = SchematicEye::GullstrandExact;
        let (full, amplitude_d) = match model.accommodated() {
            Some(acc) => {
                let a = refraction_d - refraction_at(&acc);
                (Some(acc), a)
            }
            None => {
                // Borrow the amplitude of Gullstrand's eye with the same refraction.
                let g = EyeState::new(published, refraction_d, 0.0)?;
                (None, g.amplitude_d)
            }
        };
        if !(0.0..=amplitude_d + 1e-9).contains(&accommodation_d) {
            return Err(EyeError::Accommodation { asked: accommodation_d, amplitude: amplitude_d });
        }
        let optics = match &full {
            Some(acc) => {
                let (mut lo, mut hi) = (0.0, 1.0);
                for _ in 0..BISECTION_STEPS {
                    let mid = 0.5 * (lo + hi);
                    if refraction_d - refraction_at(&relaxed.between(acc, mid)) < accommodation_d {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                relaxed.between(acc, 0.5 * (lo + hi))
            }
            None => {
                let mut o = relaxed.clone();
                let first = &mut o.surfaces[0];
                first.curvature_per_mm += accommodation_d / 1000.0 / (first.index_after - 1.0);
                o
            }
        };
        Ok(EyeState { model, refraction_d, accommodation_d, amplitude_d, optics, retina_mm })
    }

    /// The far point's distance from the cornea, mm (negative: in front; `None`: at infinity).
    pub fn far_point_mm(&self) -> Option<f64> {
        distance_for(self.refraction_d)
    }

    /// The near point's distance from the cornea, mm (negative: in front; `None`: at infinity).
    pub fn near_point_mm(&self) -> Option<f64> {
        distance_for(self.refraction_d - self.amplitude_d)
    }

    /// The vergence at the cornea the eye focuses in its state of use, dioptres.
    pub fn focused_vergence_d(&self) -> f64 {
        self.refraction_d - self.accommodation_d
    }
}

/// The distance from the cornea of the point at vergence `vergence_d`, mm (`None` at zero vergence).
pub fn distance_for(vergence_d: f64) -> Option<f64> {
    (vergence_d != 0.0).then(|| 1000.0 / vergence_d)
}

/// A lens of power `power_d` (dioptres) at `vertex_mm` in front of the cornea acts at the cornea with the
/// effective power F / (1 − dF), d in metres (the common ophthalmic effectivity formula; e.g. Bennett &
/// Rabbetts, *Clinical Visual Optics*). `None` when the lens's focus lies at the cornea.
pub fn effective_power_d(power_d: f64, vertex_mm: f64) -> Option<f64> {
    let den = 1.0 - vertex_mm / 1000.0 * power_d;
    (den != 0.0).then(|| power_d / den)
}

/// The spectacle lens power that corrects an ocular refraction `refraction_d` from `vertex_mm` in front of
/// the cornea: K / (1 + dK), d in metres (the same source). A contact lens is the case d = 0. `None` when
/// the far point lies at the spectacle plane.
pub fn spectacle_power_d(refraction_d: f64, vertex_mm: f64) -> Option<f64> {
    let den = 1.0 + vertex_mm / 1000.0 * refraction_d;
    (den != 0.0).then(|| refraction_d / den)
}
