//! Seidel (third-order) aberration sums per surface, from the paraxial marginal and chief rays.
//!
//! The forms are those of W. T. Welford, *Aberrations of Optical Systems* (Adam Hilger, 1986), chapter 8,
//! with A = n(u + yc) and Ā = n(ū + ȳc) the refraction invariants and H the Lagrange invariant:
//! S_I = −A² y Δ(u/n), S_II = −AĀ y Δ(u/n), S_III = −Ā² y Δ(u/n), S_IV = −H² c Δ(1/n),
//! S_V = (Ā/A)(S_III + S_IV) (written without the division, so it holds where A = 0),
//! C_I = A y Δ(δn/n), C_II = Ā y Δ(δn/n). Signed indices carry mirrors. An ideal thin lens images every
//! plane perfectly onto a plane, so it contributes nothing.

use crate::paraxial::ParaxialRay;
use crate::system::{Kind, Sequence};

/// The Seidel coefficients of one surface (or their sums), mm.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SeidelTerms {
    /// S_I, spherical aberration.
    pub spherical: f64,
    /// S_II, coma.
    pub coma: f64,
    /// S_III, astigmatism.
    pub astigmatism: f64,
    /// S_IV, Petzval curvature.
    pub petzval: f64,
    /// S_V, distortion.
    pub distortion: f64,
    /// C_I, axial colour.
    pub axial_colour: f64,
    /// C_II, lateral colour.
    pub lateral_colour: f64,
}

impl std::ops::Add for SeidelTerms {
    type Output = SeidelTerms;
    fn add(self, o: SeidelTerms) -> SeidelTerms {
        SeidelTerms {
            spherical: self.spherical + o.spherical,
            coma: self.coma + o.coma,
            astigmatism: self.astigmatism + o.astigmatism,
            petzval: self.petzval + o.petzval,
            distortion: self.distortion + o.distortion,
            axial_colour: self.axial_colour + o.axial_colour,
            lateral_colour: self.lateral_colour + o.lateral_colour,
        }
    }
}

/// Per-surface Seidel terms and their sums.
#[derive(Debug, Clone, PartialEq)]
pub struct Seidel {
    /// One entry per surface.
    pub surfaces: Vec<SeidelTerms>,
    /// The sums over the system.
    pub total: SeidelTerms,
}

/// Computes the Seidel terms of `seq` from its marginal and chief rays (after each surface) and their
/// object-space reduced slopes. `short` and `long` are the same system at the two wavelengths whose index
/// difference δn gives the colour terms (pass `seq` for both to leave colour out).
pub fn seidel(
    seq: &Sequence,
    marginal: &[ParaxialRay],
    marginal_nu0: f64,
    chief: &[ParaxialRay],
    chief_nu0: f64,
    short: &Sequence,
    long: &Sequence,
) -> Seidel {
    let mut surfaces = Vec::with_capacity(seq.steps.len());
    let n0 = seq.n_object;
    let h = {
        let (y, u, yb, ub) = (marginal[0].y_mm, marginal_nu0 / n0, chief[0].y_mm, chief_nu0 / n0);
        n0 * (ub * y - u * yb)
    };
    let mut nu_b = marginal_nu0;
    let mut nub_b = chief_nu0;
    for (i, step) in seq.steps.iter().enumerate() {
        let (n, n1) = (step.signed_n_before(), step.signed_n_after());
        let (y, yb) = (marginal[i].y_mm, chief[i].y_mm);
        let (u, ub) = (nu_b / n, nub_b / n);
        let u1 = marginal[i].nu / n1;
        nu_b = marginal[i].nu;
        nub_b = chief[i].nu;
        if matches!(step.kind, Kind::Ideal(_)) {
            surfaces.push(SeidelTerms::default());
            continue;
        }
        let c = step.c;
        let a = n * (u + y * c);
        let ab = n * (ub + yb * c);
        let d_u_n = u1 / n1 - u / n;
        let d_inv_n = 1.0 / n1 - 1.0 / n;
        let d_inv_n2 = 1.0 / (n1 * n1) - 1.0 / (n * n);
        let dn = |s: &Sequence, before: bool| {
            let st = &s.steps[i];
            if before { st.signed_n_before() } else { st.signed_n_after() }
        };
        let dn_b = dn(short, true) - dn(long, true);
        let dn_a = dn(short, false) - dn(long, false);
        let d_dn_n = dn_a / n1 - dn_b / n;
        surfaces.push(SeidelTerms {
            spherical: -a * a * y * d_u_n,
            coma: -a * ab * y * d_u_n,
            astigmatism: -ab * ab * y * d_u_n,
            petzval: -h * h * c * d_inv_n,
            distortion: -ab.powi(3) * y * d_inv_n2 + c * d_inv_n * yb * ab * (2.0 * ab * y - a * yb),
            axial_colour: a * y * d_dn_n,
            lateral_colour: ab * y * d_dn_n,
        });
    }
    let total = surfaces.iter().fold(SeidelTerms::default(), |s, t| s + *t);
    Seidel { surfaces, total }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::paraxial::{Object, lagrange_invariant};
    use crate::pupil::Pupils;
    use crate::system::{Shape, Surface, System};

    /// The division-free distortion term equals Welford's (Ā/A)(S_III + S_IV) wherever A ≠ 0.
    #[test]
    fn distortion_form_agrees_with_welfords() {
        let system = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::aperture(40.0, 4.0),
                Surface::refracting(50.0, Shape::sphere(60.0), Material::Constant(1.6)).with_semi_aperture(12.0),
                Surface::refracting(56.0, Shape::sphere(-150.0), Material::AIR).with_semi_aperture(12.0),
            ],
        };
        let seq = system.at(587.5618).unwrap();
        let object = Object::Finite { z_mm: 0.0, height_mm: 5.0 };
        let p = Pupils::find(&seq, &object).unwrap();
        let s = seidel(&seq, &p.marginal, p.marginal_start.nu, &p.chief, p.chief_start.nu, &seq, &seq);
        let mut nu_b = p.marginal_start.nu;
        let mut nub_b = p.chief_start.nu;
        for (i, st) in seq.steps.iter().enumerate() {
            let n = st.signed_n_before();
            let a = n * (nu_b / n + p.marginal[i].y_mm * st.c);
            let ab = n * (nub_b / n + p.chief[i].y_mm * st.c);
            nu_b = p.marginal[i].nu;
            nub_b = p.chief[i].nu;
            let t = s.surfaces[i];
            if a.abs() > 1e-9 {
                let welford = ab / a * (t.astigmatism + t.petzval);
                assert!((t.distortion - welford).abs() < 1e-12 * (1.0 + welford.abs()), "surface {i}");
            }
        }
        // The Lagrange invariant is the same in object and image space.
        let last = seq.steps.len() - 1;
        let n1 = seq.steps[last].signed_n_after();
        let h0 = lagrange_invariant(1.0, p.marginal[0].y_mm, p.marginal_start.nu, p.chief[0].y_mm, p.chief_start.nu);
        let h1 = lagrange_invariant(
            n1,
            p.marginal[last].y_mm,
            p.marginal[last].nu / n1,
            p.chief[last].y_mm,
            p.chief[last].nu / n1,
        );
        assert!((h0 - h1).abs() < 1e-13);
    }
}
