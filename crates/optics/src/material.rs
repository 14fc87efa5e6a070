//! Optical media: the refractive index of a material at a wavelength.
//!
//! Indices are relative to the air around the bench, which has index 1 (DESIGN.md). A model is valid over
//! a stated wavelength range; asking outside it is an error, never a silent extrapolation.

use std::fmt;

/// Wavelength of the helium d line, nm (the reference for nd; REFERENCES.md, section 1).
pub const D_LINE_NM: f64 = 587.5618;
/// Wavelength of the hydrogen F line, nm.
pub const F_LINE_NM: f64 = 486.1327;
/// Wavelength of the hydrogen C line, nm.
pub const C_LINE_NM: f64 = 656.2725;

/// The highest refractive index a material may have. Optical materials reach about 4 (germanium in the
/// infrared, recalled from handbook tables); a larger number is a typing slip, and one of 1e70 overflows
/// the trace's arithmetic.
pub const MAX_INDEX: f64 = 5.0;

/// The wavelength range over which an nd/Vd (two-term Cauchy) material is accepted, nm.
///
/// Project convention: the fit is anchored at F, d and C, so it is trusted from the near ultraviolet to the
/// near infrared (380–1000 nm) and refused outside.
pub const ABBE_RANGE_NM: (f64, f64) = (380.0, 1000.0);

/// What can go wrong when asking a material for its index.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MaterialError {
    /// The wavelength lies outside the range over which the model was published or fitted.
    #[error("{wavelength_nm} nm is outside the valid range of {material} ({min_nm}–{max_nm} nm)")]
    OutOfRange {
        /// The material's description.
        material: String,
        /// The wavelength asked for.
        wavelength_nm: f64,
        /// Shortest valid wavelength.
        min_nm: f64,
        /// Longest valid wavelength.
        max_nm: f64,
    },
    /// The model's parameters do not describe a usable medium (non-finite, index below 1, …).
    #[error("{0}")]
    Invalid(String),
}

/// A dispersion model: how a medium's refractive index varies with wavelength.
#[derive(Debug, Clone, PartialEq)]
pub enum Material {
    /// The same index at every wavelength (air is `Constant(1.0)`).
    Constant(f64),
    /// The Sellmeier formula n² = 1 + Σ Bᵢ λ² / (λ² − Cᵢ), λ in µm and Cᵢ in µm².
    Sellmeier {
        /// The Bᵢ coefficients (dimensionless).
        b: Vec<f64>,
        /// The Cᵢ coefficients, µm².
        c_um2: Vec<f64>,
        /// The wavelength range over which the formula holds, nm.
        range_nm: (f64, f64),
    },
    /// A glass given by its d-line index and Abbe number, modelled by the two-term Cauchy formula
    /// n(λ) = A + B/λ² with n(d) = nd and n(F) − n(C) = (nd − 1)/Vd exactly (DESIGN.md).
    Abbe {
        /// Index at the d line, 587.5618 nm.
        nd: f64,
        /// Abbe number Vd = (nd − 1)/(nF − nC).
        vd: f64,
    },
}

impl Material {
    /// Air, index 1 at every wavelength.
    pub const AIR: Material = Material::Constant(1.0);

    /// The wavelength range, in nm, over which this model may be used.
    pub fn range_nm(&self) -> (f64, f64) {
        match self {
            Material::Constant(_) => (0.0, f64::INFINITY),
            Material::Sellmeier { range_nm, .. } => *range_nm,
            Material::Abbe { .. } => ABBE_RANGE_NM,
        }
    }

    /// Checks that the parameters describe a real medium: finite numbers, index at least 1, a positive Abbe
    /// number, matching Sellmeier lists.
    pub fn validate(&self) -> Result<(), MaterialError> {
        let bad = |what: String| Err(MaterialError::Invalid(what));
        match self {
            Material::Constant(n) => {
                if !(1.0..=MAX_INDEX).contains(n) {
                    return bad(format!("index {n} must be a number from 1 to {MAX_INDEX}"));
                }
            }
            Material::Abbe { nd, vd } => {
                if !(1.0..=MAX_INDEX).contains(nd) {
                    return bad(format!("nd {nd} must be a number from 1 to {MAX_INDEX}"));
                }
                if !vd.is_finite() || *vd <= 0.0 {
                    return bad(format!("Abbe number {vd} must be finite and positive"));
                }
            }
            Material::Sellmeier { b, c_um2, range_nm } => {
                if b.is_empty() || b.len() != c_um2.len() {
                    return bad(format!(
                        "a Sellmeier formula needs as many b as c coefficients, and at least one (got {} and {})",
                        b.len(),
                        c_um2.len()
                    ));
                }
                if b.iter().chain(c_um2.iter()).any(|v| !v.is_finite()) {
                    return bad("Sellmeier coefficients must be finite numbers".into());
                }
                let (lo, hi) = *range_nm;
                if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
                    return bad(format!("wavelength range {lo}–{hi} nm is not a range"));
                }
            }
        }
        Ok(())
    }

    /// The refractive index at `wavelength_nm`, relative to the bench's air.
    pub fn index_at(&self, wavelength_nm: f64) -> Result<f64, MaterialError> {
        self.validate()?;
        let (lo, hi) = self.range_nm();
        if !(wavelength_nm.is_finite() && wavelength_nm >= lo && wavelength_nm <= hi) {
            return Err(MaterialError::OutOfRange {
                material: self.to_string(),
                wavelength_nm,
                min_nm: lo,
                max_nm: hi,
            });
        }
        let n = match self {
            Material::Constant(n) => *n,
            Material::Abbe { nd, vd } => {
                let (a, b) = cauchy_from_abbe(*nd, *vd);
                a + b / (wavelength_nm * wavelength_nm)
            }
            Material::Sellmeier { b, c_um2, .. } => {
                let l2 = (wavelength_nm * 1e-3).powi(2);
                let n2 = 1.0 + b.iter().zip(c_um2).map(|(bi, ci)| bi * l2 / (l2 - ci)).sum::<f64>();
                if !(1.0..=MAX_INDEX * MAX_INDEX).contains(&n2) {
                    return Err(MaterialError::Invalid(format!(
                        "the Sellmeier formula gives n² = {n2} at {wavelength_nm} nm, outside 1 to {} (a resonance or an absorbing band)",
                        MAX_INDEX * MAX_INDEX
                    )));
                }
                n2.sqrt()
            }
        };
        Ok(n)
    }

    /// The Abbe number Vd = (nd − 1)/(nF − nC) of this model, where F, d and C lie in its range.
    pub fn abbe_number(&self) -> Result<f64, MaterialError> {
        let nd = self.index_at(D_LINE_NM)?;
        let dn = self.index_at(F_LINE_NM)? - self.index_at(C_LINE_NM)?;
        Ok(if dn == 0.0 { f64::INFINITY } else { (nd - 1.0) / dn })
    }
}

/// The Cauchy coefficients (A, B in nm²) of an nd/Vd glass: B = (nd − 1)/(Vd (1/λF² − 1/λC²)),
/// A = nd − B/λd².
pub fn cauchy_from_abbe(nd: f64, vd: f64) -> (f64, f64) {
    let b = (nd - 1.0) / (vd * (F_LINE_NM.powi(-2) - C_LINE_NM.powi(-2)));
    (nd - b / (D_LINE_NM * D_LINE_NM), b)
}

impl fmt::Display for Material {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Material::Constant(n) => write!(f, "index {n}"),
            Material::Abbe { nd, vd } => write!(f, "nd {nd} / Vd {vd} glass"),
            Material::Sellmeier { b, .. } => write!(f, "{}-term Sellmeier medium", b.len()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// DESIGN.md's definition of the nd/Vd model: n(d) = nd and nF − nC = (nd − 1)/Vd exactly.
    #[test]
    fn abbe_model_meets_its_definition() {
        let glass = Material::Abbe { nd: 1.5168, vd: 64.17 };
        let nd = glass.index_at(D_LINE_NM).unwrap();
        let dn = glass.index_at(F_LINE_NM).unwrap() - glass.index_at(C_LINE_NM).unwrap();
        assert!((nd - 1.5168).abs() < 1e-14);
        assert!((dn - 0.5168 / 64.17).abs() < 1e-15);
        assert!((glass.abbe_number().unwrap() - 64.17).abs() < 1e-9);
    }

    /// Found by fuzzing (bench_file: nd = 7.8e70 made the laser beam's sizes NaN): an index above
    /// [`MAX_INDEX`] is refused, for every kind of material.
    #[test]
    fn an_index_above_the_highest_is_an_error() {
        assert!(Material::Abbe { nd: 7.8e70, vd: 64.17 }.validate().is_err());
        assert!(Material::Constant(5.01).validate().is_err());
        assert!(Material::Constant(4.0).validate().is_ok());
        let s = Material::Sellmeier { b: vec![30.0], c_um2: vec![0.0], range_nm: (400.0, 700.0) };
        assert!(s.index_at(550.0).is_err());
    }

    #[test]
    fn out_of_range_is_an_error() {
        let glass = Material::Abbe { nd: 1.5, vd: 60.0 };
        assert!(matches!(glass.index_at(200.0), Err(MaterialError::OutOfRange { .. })));
        assert!(matches!(glass.index_at(f64::NAN), Err(MaterialError::OutOfRange { .. })));
    }

    #[test]
    fn bad_parameters_are_refused() {
        assert!(Material::Constant(0.5).validate().is_err());
        assert!(Material::Constant(f64::NAN).validate().is_err());
        assert!(Material::Abbe { nd: 1.5, vd: 0.0 }.validate().is_err());
        let s = Material::Sellmeier { b: vec![1.0], c_um2: vec![], range_nm: (400.0, 700.0) };
        assert!(s.validate().is_err());
    }
}
