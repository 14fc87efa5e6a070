//! Gaussian laser beams through a sequence: the complex beam parameter, waists, beam sizes and the power an
//! aperture passes.
//!
//! A beam of quality M² is carried as its *embedded Gaussian* (Siegman, *Lasers*, 1986, and A. E. Siegman,
//! "New developments in laser resonators", Proc. SPIE 1224 (1990)): a real beam of radius W and M² follows
//! the same laws as a Gaussian of wavelength M²λ, so
//!
//! ```text
//! 1/q = 1/R − i M² λ / (π n w²)        (λ the wavelength in air, n the medium's index)
//! ```
//!
//! **Radius, not diameter.** Every formula here uses the 1/e² *radius* w, in mm. Files, screens and reports
//! give 1/e² *diameters* (2w); putting a diameter where the radius belongs is a 4× error in the Rayleigh
//! range z_R = π n w₀² / (M² λ). The far-field divergence θ = M² λ / (π n w₀) is the *half*-angle.
//!
//! **Reduced parameter.** The paraxial trace ([`crate::paraxial`]) works on the height y and the reduced
//! slope n·u with signed indices (negative while the light travels −z), and its matrices are the ones the
//! beam uses, surface by surface: thick lenses, doublets, mirrors and ideal lenses, along the light path
//! the sequence holds. In those variables the ABCD law (H. Kogelnik and T. Li, Appl. Opt. 5, 1550 (1966))
//! holds for the reduced beam parameter q̂ = q / n:
//!
//! ```text
//! q̂' = (A q̂ + B) / (C q̂ + D),     1/q̂ = n/R − i M² λ / (π w²)
//! ```
//!
//! so a transfer of d mm through index n adds d/n (the reduced distance), a surface of power φ subtracts φ
//! from 1/q̂, and w follows from Im(1/q̂) alone, whatever the index: w² = −M² λ / (π Im(1/q̂)).
//!
//! **Power through an aperture.** A centred circular aperture of radius a passes 1 − exp(−2a²/w²) of a
//! Gaussian's power (direct integration of the intensity 2P/(πw²)·exp(−2r²/w²) over the disc). That is
//! exact for a centred M² = 1 beam; for M² > 1 the same formula on the embedded Gaussian's w is an estimate
//! (the real beam's profile is not Gaussian), and [`BeamSurface::share_is_estimate`] says so.

use crate::paraxial::surface_power;
use crate::system::{Kind, Sequence};

/// The reduced complex beam parameter q̂ = q/n, mm: `re` is (minus) the reduced distance to the waist along
/// the light, `im` the reduced Rayleigh range (π w₀² / (M² λ) in any medium).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BeamParameter {
    /// Real part, mm: z/n from the waist to this plane along the light (negative before the waist).
    pub re_mm: f64,
    /// Imaginary part, mm: π w₀² / (M² λ), positive.
    pub im_mm: f64,
}

impl BeamParameter {
    /// The beam at its waist, of 1/e² radius `waist_radius_mm`, wavelength in air `wavelength_nm` and
    /// quality `m_squared` (≥ 1).
    pub fn at_waist(waist_radius_mm: f64, wavelength_nm: f64, m_squared: f64) -> BeamParameter {
        let lambda_mm = wavelength_nm * 1e-6;
        BeamParameter { re_mm: 0.0, im_mm: std::f64::consts::PI * waist_radius_mm.powi(2) / (m_squared * lambda_mm) }
    }

    /// The beam after a transfer of reduced distance `reduced_mm` (distance along the light over the
    /// index): q̂ + d/n.
    pub fn propagated(self, reduced_mm: f64) -> BeamParameter {
        BeamParameter { re_mm: self.re_mm + reduced_mm, im_mm: self.im_mm }
    }

    /// The ABCD law q̂' = (A q̂ + B)/(C q̂ + D) (Kogelnik and Li 1966), for a matrix acting on (y, n·u).
    pub fn transformed(self, a: f64, b: f64, c: f64, d: f64) -> BeamParameter {
        // Numerator N = (A re + B) + i A im, denominator M = (C re + D) + i C im; N/M = N·conj(M)/|M|².
        let (nr, ni) = (a * self.re_mm + b, a * self.im_mm);
        let (mr, mi) = (c * self.re_mm + d, c * self.im_mm);
        let den = mr * mr + mi * mi;
        BeamParameter { re_mm: (nr * mr + ni * mi) / den, im_mm: (ni * mr - nr * mi) / den }
    }

    /// The beam after a surface of power `power_per_mm` (signed indices): 1/q̂' = 1/q̂ − φ.
    pub fn refracted(self, power_per_mm: f64) -> BeamParameter {
        self.transformed(1.0, 0.0, -power_per_mm, 1.0)
    }

    /// The same beam travelling the other way, q̂ → −q̂* (the phase conjugate: it retraces the beam).
    pub fn reversed(self) -> BeamParameter {
        BeamParameter { re_mm: -self.re_mm, im_mm: self.im_mm }
    }

    /// The 1/e² radius of the embedded Gaussian, mm: w² = M²λ|q̂|²/(π Im q̂).
    pub fn radius_mm(self, wavelength_nm: f64, m_squared: f64) -> f64 {
        let lambda_mm = wavelength_nm * 1e-6;
        (m_squared * lambda_mm * (self.re_mm.powi(2) + self.im_mm.powi(2)) / (std::f64::consts::PI * self.im_mm)).sqrt()
    }

    /// The waist's 1/e² radius, mm: w₀² = M² λ Im(q̂) / π.
    pub fn waist_radius_mm(self, wavelength_nm: f64, m_squared: f64) -> f64 {
        (m_squared * wavelength_nm * 1e-6 * self.im_mm / std::f64::consts::PI).sqrt()
    }

    /// The reduced distance from this plane to the waist along the light (negative: the waist lies behind).
    pub fn reduced_to_waist_mm(self) -> f64 {
        -self.re_mm
    }

    /// The wavefront's radius of curvature along the light (positive: diverging), mm, in a medium of
    /// absolute index `n`; `None` at the waist, where the wavefront is flat.
    pub fn curvature_radius_mm(self, n: f64) -> Option<f64> {
        (self.re_mm != 0.0).then(|| n * (self.re_mm + self.im_mm.powi(2) / self.re_mm))
    }
}

/// The power share that a centred circular aperture of radius `aperture_radius_mm` passes of a Gaussian
/// of 1/e² radius `beam_radius_mm`: 1 − exp(−2a²/w²) (1 for an unlimited aperture).
pub fn passed_share(aperture_radius_mm: f64, beam_radius_mm: f64) -> f64 {
    if aperture_radius_mm.is_infinite() {
        return 1.0;
    }
    -(-2.0 * (aperture_radius_mm / beam_radius_mm).powi(2)).exp_m1()
}

/// The peak (on-axis) irradiance of a Gaussian of power `power_mw` and 1/e² radius `radius_mm`:
/// 2P/(πw²), in mW/mm² (1 mW/mm² = 0.1 W/cm²).
pub fn peak_irradiance_mw_per_mm2(power_mw: f64, radius_mm: f64) -> f64 {
    2.0 * power_mw / (std::f64::consts::PI * radius_mm * radius_mm)
}

/// A laser source: its waist in object space, before the first surface, with the light travelling +z.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaserSource {
    /// Wavelength in air, nm.
    pub wavelength_nm: f64,
    /// The waist's 1/e² radius, mm (half the diameter a file gives).
    pub waist_radius_mm: f64,
    /// Rail position of the waist, mm, as it would lie in free space: it may lie behind the laser's exit
    /// (inside the laser) or beyond the first surface (a beam converging onto the optics).
    pub waist_at_mm: f64,
    /// Beam quality M² (1 for a perfect Gaussian).
    pub m_squared: f64,
}

/// The beam at one surface of the sequence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BeamSurface {
    /// The surface's index in the sequence.
    pub surface: usize,
    /// Its element tag (for a bench, the part).
    pub element: usize,
    /// Rail position of its vertex, mm.
    pub z_mm: f64,
    /// The beam's 1/e² radius at the vertex plane, mm.
    pub radius_mm: f64,
    /// Share of the power the surface's clear aperture passes (1 for an unlimited one).
    pub passed_share: f64,
    /// Whether the share is an estimate (M² > 1: the embedded Gaussian stands for the real profile).
    pub share_is_estimate: bool,
}

/// A beam waist.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Waist {
    /// The surface after which the beam has this waist (`None`: the source's own waist).
    pub after_surface: Option<usize>,
    /// That surface's element tag (`None` for the source).
    pub element: Option<usize>,
    /// Rail position, mm.
    pub at_mm: f64,
    /// The waist's 1/e² radius w₀, mm.
    pub radius_mm: f64,
    /// Rayleigh range z_R = π n w₀² / (M² λ), mm, in the medium of the space.
    pub rayleigh_range_mm: f64,
    /// Far-field divergence half-angle θ = M² λ / (π n w₀), radians.
    pub far_field_half_angle_rad: f64,
    /// Whether the beam really narrows to it: it lies ahead of the surface along the light (false: a
    /// virtual waist behind the surface, which the beam only appears to come from).
    pub real: bool,
    /// Whether the next surface meets the beam before it reaches the waist (`None` when it reaches it or
    /// the waist is virtual): the surface's index.
    pub intercepted_by: Option<usize>,
}

/// A Gaussian beam traced through a sequence: the parameter in every space, the beam at every surface and
/// the waist after every imaging element.
#[derive(Debug, Clone, PartialEq)]
pub struct BeamTrace {
    /// The source.
    pub source: LaserSource,
    /// The beam parameter at the source's waist plane (object space).
    pub start: BeamParameter,
    /// The beam parameter just after each surface, at its vertex plane.
    pub after: Vec<BeamParameter>,
    /// The beam at each surface.
    pub surfaces: Vec<BeamSurface>,
    /// The source's waist, then the waist after each imaging element (a lens or mirror; not an iris).
    pub waists: Vec<Waist>,
    /// Absolute index and direction (+1/−1) of object space, then of the space after each surface.
    spaces: Vec<(f64, f64)>,
}

/// Why a beam cannot be traced.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
pub enum BeamError {
    /// A number of the source is not usable.
    #[error("the laser's {0} must be a positive finite number (M² at least 1)")]
    Source(&'static str),
}

impl BeamTrace {
    /// Traces the beam of `source` through `seq` with each surface's paraxial matrix (the y-nu trace's).
    /// The sequence's wavelength is not read: the source's is used (give a sequence evaluated at it).
    pub fn of(seq: &Sequence, source: LaserSource) -> Result<BeamTrace, BeamError> {
        let ok = |v: f64| v.is_finite() && v > 0.0;
        if !ok(source.wavelength_nm) {
            return Err(BeamError::Source("wavelength"));
        }
        if !ok(source.waist_radius_mm) {
            return Err(BeamError::Source("waist diameter"));
        }
        if !(source.m_squared.is_finite() && source.m_squared >= 1.0) {
            return Err(BeamError::Source("beam quality M²"));
        }
        if !source.waist_at_mm.is_finite() {
            return Err(BeamError::Source("waist position"));
        }
        let (lambda, m2) = (source.wavelength_nm, source.m_squared);
        let start = BeamParameter::at_waist(source.waist_radius_mm, lambda, m2);
        let mut spaces = vec![(seq.n_object, 1.0)];
        let mut after = Vec::with_capacity(seq.steps.len());
        let mut surfaces = Vec::with_capacity(seq.steps.len());
        let mut q = start;
        let mut z_prev = source.waist_at_mm;
        let mut n_prev = seq.n_object;
        for (i, step) in seq.steps.iter().enumerate() {
            q = q.propagated((step.z_mm - z_prev) / n_prev);
            let radius = q.radius_mm(lambda, m2);
            surfaces.push(BeamSurface {
                surface: i,
                element: step.element,
                z_mm: step.z_mm,
                radius_mm: radius,
                passed_share: passed_share(step.semi_aperture_mm, radius),
                share_is_estimate: m2 > 1.0,
            });
            q = q.refracted(surface_power(step));
            after.push(q);
            spaces.push((step.n_after, step.dir_after));
            z_prev = step.z_mm;
            n_prev = step.signed_n_after();
        }
        let mut waists = vec![waist(&start, source, source.waist_at_mm, seq.n_object, 1.0, None, None)];
        for (i, q_after) in after.iter().enumerate() {
            let end_of_element = i + 1 == seq.steps.len() || seq.steps[i + 1].element != seq.steps[i].element;
            if end_of_element && element_bends(seq, i) {
                let step = &seq.steps[i];
                let next = seq.steps.get(i + 1).map(|s| (i + 1, s.z_mm));
                waists.push(waist(
                    q_after,
                    source,
                    step.z_mm,
                    step.n_after,
                    step.dir_after,
                    Some((i, step.element)),
                    next,
                ));
            }
        }
        Ok(BeamTrace { source, start, after, surfaces, waists, spaces })
    }

    /// The beam parameter at rail position `z_mm` in the space after `surfaces_before` surfaces (0: object
    /// space, measured from the source's waist).
    pub fn parameter_at(&self, surfaces_before: usize, z_mm: f64) -> BeamParameter {
        let k = surfaces_before.min(self.after.len());
        let (n, dir) = self.spaces[k];
        if k == 0 {
            self.start.propagated((z_mm - self.source.waist_at_mm) / n)
        } else {
            self.after[k - 1].propagated((z_mm - self.surfaces[k - 1].z_mm) / (n * dir))
        }
    }

    /// The 1/e² radius, mm, at rail position `z_mm` in the space after `surfaces_before` surfaces.
    pub fn radius_at(&self, surfaces_before: usize, z_mm: f64) -> f64 {
        self.parameter_at(surfaces_before, z_mm).radius_mm(self.source.wavelength_nm, self.source.m_squared)
    }

    /// The beam's 1/e² radius along its path as (rail position, radius) points, mm: `per_space` points in
    /// every space from the source's waist (or `from_mm`, when later) to each surface, and in the final
    /// space up to `end_mm`. Each space is sampled evenly; its samples start a new run (`Vec` per space).
    pub fn envelope(&self, from_mm: f64, end_mm: f64, per_space: usize) -> Vec<Vec<(f64, f64)>> {
        let per = per_space.max(2);
        let mut runs = Vec::with_capacity(self.surfaces.len() + 1);
        let mut z0 = from_mm.max(self.source.waist_at_mm);
        for k in 0..=self.surfaces.len() {
            let z1 = if k < self.surfaces.len() { self.surfaces[k].z_mm } else { end_mm };
            let mut run = Vec::with_capacity(per);
            for j in 0..per {
                let z = z0 + (z1 - z0) * j as f64 / (per - 1) as f64;
                run.push((z, self.radius_at(k, z)));
            }
            runs.push(run);
            z0 = z1;
        }
        runs
    }

    /// The product of every surface's passed share: the power that gets through all of them, as a share
    /// (an estimate: each aperture is taken to meet a whole Gaussian).
    pub fn total_passed_share(&self) -> f64 {
        self.surfaces.iter().map(|s| s.passed_share).product()
    }
}

/// Whether the element ending at surface `i` changes the beam: some surface of it has power or reflects.
fn element_bends(seq: &Sequence, i: usize) -> bool {
    let tag = seq.steps[i].element;
    seq.steps[..=i]
        .iter()
        .rev()
        .take_while(|s| s.element == tag)
        .any(|s| surface_power(s) != 0.0 || s.kind == Kind::Reflect)
}

/// The waist of the beam `q` found at a plane `z_mm` in a space of absolute index `n` and direction `dir`.
fn waist(
    q: &BeamParameter,
    source: LaserSource,
    z_mm: f64,
    n: f64,
    dir: f64,
    after: Option<(usize, usize)>,
    next: Option<(usize, f64)>,
) -> Waist {
    let (lambda, m2) = (source.wavelength_nm, source.m_squared);
    let w0 = q.waist_radius_mm(lambda, m2);
    let along = q.reduced_to_waist_mm() * n;
    let at_mm = z_mm + dir * along;
    let real = after.is_none() || along >= 0.0;
    let intercepted_by = match next {
        Some((j, z_next)) if real && (at_mm - z_next) * dir > 0.0 => Some(j),
        _ => None,
    };
    Waist {
        after_surface: after.map(|a| a.0),
        element: after.map(|a| a.1),
        at_mm,
        radius_mm: w0,
        rayleigh_range_mm: n * q.im_mm,
        far_field_half_angle_rad: m2 * lambda * 1e-6 / (std::f64::consts::PI * n * w0),
        real,
        intercepted_by,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn abcd_of_identity_is_identity() {
        let q = BeamParameter { re_mm: 3.0, im_mm: 7.0 };
        assert_eq!(q.transformed(1.0, 0.0, 0.0, 1.0), q);
    }

    #[test]
    // An unlimited aperture returns exactly 1 by construction.
    #[allow(clippy::float_cmp)]
    fn an_unlimited_aperture_passes_everything() {
        assert_eq!(passed_share(f64::INFINITY, 1.0), 1.0);
        // a = w: 1 − e⁻² = 0.8647 (direct integration).
        assert!((passed_share(1.0, 1.0) - (1.0 - (-2.0f64).exp())).abs() < 1e-15);
    }
}
