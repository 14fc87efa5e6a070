//! The whole evaluation of a system for an object: first order, images, stop and pupils, on-axis spot,
//! aberrations, colour and vignetting, in one pass.
//!
//! This is what a bench's report is computed from. Every figure is a named field; what cannot be computed
//! is `None` beside a reason, never a NaN.

use crate::paraxial::{self, FirstOrder, Object, ParaxialImage};
use crate::pupil::{FieldPoint, PupilError, Pupils, meridional_transmission};
use crate::sampling::pupil_transmission;
use crate::seidel::{Seidel, seidel};
use crate::spot::{SpotError, SpotFigures, spot_figures};
use crate::system::{Sequence, System, SystemError};

/// The first zero of J₁ divided by π: the Airy disk's first dark ring lies at this many λN
/// (G. B. Airy 1835; Born & Wolf, *Principles of Optics*, sec. 8.5.2), the "1.22 λN" of the trade.
pub const AIRY_FIRST_ZERO: f64 = 1.219_669_891_266_504_5;

/// What to evaluate.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    /// The object.
    pub object: Object,
    /// Wavelengths, nm.
    pub wavelengths_nm: Vec<f64>,
    /// Index into `wavelengths_nm` of the primary wavelength.
    pub primary: usize,
    /// Planes (rail positions, mm) at which to give spot figures, such as screens.
    pub planes_mm: Vec<f64>,
    /// Whether to compute the off-axis point's vignetting, meridional and by area (a few hundred traces).
    pub vignetting: bool,
}

/// Why nothing at all can be evaluated.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AnalysisError {
    /// The primary wavelength index is out of range, or there are no wavelengths.
    #[error("primary wavelength {primary} is not one of the {count} wavelengths")]
    Primary {
        /// The index asked for.
        primary: usize,
        /// How many wavelengths there are.
        count: usize,
    },
    /// The system cannot be evaluated at one of the wavelengths.
    #[error("at {wavelength_nm} nm: {source}")]
    System {
        /// The wavelength.
        wavelength_nm: f64,
        /// What went wrong.
        source: SystemError,
    },
}

/// The paraxial image position at one wavelength.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColourFocus {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Final paraxial image position (`None`: at infinity).
    pub image_at_mm: Option<f64>,
}

/// Every figure of one evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    /// The system at the primary wavelength.
    pub primary: Sequence,
    /// First-order properties (`None` without surfaces).
    pub first_order: Option<FirstOrder>,
    /// Paraxial images after each imaging element; the last is the final image.
    pub images: Vec<ParaxialImage>,
    /// Stop and pupils, or why there are none.
    pub pupils: Result<Pupils, PupilError>,
    /// The Lagrange invariant, mm (object height × n × marginal slope form).
    pub lagrange_invariant_mm: Option<f64>,
    /// Final paraxial image position at every wavelength.
    pub colour: Vec<ColourFocus>,
    /// Paraxial image position at the longest wavelength minus that at the shortest, mm.
    pub chromatic_focal_shift_mm: Option<f64>,
    /// Spot figures at the asked planes, or why they cannot be computed.
    pub spot: Option<Result<SpotFigures, SpotError>>,
    /// Marginal ray axis crossing minus the paraxial image position, mm.
    pub marginal_lsa_mm: Option<f64>,
    /// Working f-number 1/(2|n'u'|) from the paraxial marginal ray in image space.
    pub working_f_number: Option<f64>,
    /// f-number EFL / entrance pupil diameter.
    pub f_number: Option<f64>,
    /// Image-space numerical aperture of the real marginal ray, n'|sin U'|.
    pub image_na: Option<f64>,
    /// Airy disk radius at the primary wavelength, µm: 1.21967 λ N_w.
    pub airy_radius_um: Option<f64>,
    /// Depth of focus ±2λN_w², mm (common practice: the quarter-wave criterion applied to defocus).
    pub depth_of_focus_mm: Option<f64>,
    /// Seidel sums, with colour from the shortest and longest wavelengths.
    pub seidel: Option<Seidel>,
    /// Share of the off-axis point's meridional pupil that passes every aperture (`None` if not asked).
    pub off_axis_transmission: Option<f64>,
    /// Share of the off-axis point's pupil area that passes every aperture, from skew rays
    /// ([`crate::sampling::pupil_transmission`]; `None` if not asked or its chief ray cannot be aimed).
    pub off_axis_area_transmission: Option<f64>,
}

/// Evaluates `system` for `request`.
pub fn analyse(system: &System, request: &Request) -> Result<Analysis, AnalysisError> {
    let count = request.wavelengths_nm.len();
    if request.primary >= count {
        return Err(AnalysisError::Primary { primary: request.primary, count });
    }
    let at =
        |wavelength_nm: f64| system.at(wavelength_nm).map_err(|source| AnalysisError::System { wavelength_nm, source });
    let seqs: Vec<Sequence> = request.wavelengths_nm.iter().map(|&w| at(w)).collect::<Result<_, _>>()?;
    let seq = seqs[request.primary].clone();
    let object = request.object;
    let first_order = FirstOrder::of(&seq);
    let images = paraxial::images(&seq, &object);
    let pupils = Pupils::find(&seq, &object);

    let colour: Vec<ColourFocus> = seqs
        .iter()
        .map(|s| ColourFocus {
            wavelength_nm: s.wavelength_nm,
            image_at_mm: paraxial::images(s, &object).last().and_then(|i| i.at_mm),
        })
        .collect();
    let shortest = (0..count).min_by(|&a, &b| request.wavelengths_nm[a].total_cmp(&request.wavelengths_nm[b]));
    let longest = (0..count).max_by(|&a, &b| request.wavelengths_nm[a].total_cmp(&request.wavelengths_nm[b]));
    let chromatic_focal_shift_mm = match (shortest, longest) {
        (Some(s), Some(l)) if count > 1 => match (colour[l].image_at_mm, colour[s].image_at_mm) {
            (Some(zl), Some(zs)) => Some(zl - zs),
            _ => None,
        },
        _ => None,
    };

    let final_image = images.last().and_then(|i| i.at_mm);
    let mut analysis = Analysis {
        primary: seq.clone(),
        first_order,
        images,
        pupils: pupils.clone(),
        lagrange_invariant_mm: None,
        colour,
        chromatic_focal_shift_mm,
        spot: None,
        marginal_lsa_mm: None,
        working_f_number: None,
        f_number: None,
        image_na: None,
        airy_radius_um: None,
        depth_of_focus_mm: None,
        seidel: None,
        off_axis_transmission: None,
        off_axis_area_transmission: None,
    };
    let Ok(p) = pupils else {
        return Ok(analysis);
    };
    let n0 = seq.n_object;
    analysis.lagrange_invariant_mm = Some(paraxial::lagrange_invariant(
        n0,
        p.marginal[0].y_mm,
        p.marginal_start.1 / n0,
        p.chief[0].y_mm,
        p.chief_start.1 / n0,
    ));
    let last = seq.steps.last().expect("pupils imply surfaces");
    let u1 = p.image_space_marginal_slope(&seq);
    let nu1 = (last.n_after * u1).abs();
    if nu1 > 0.0 && final_image.is_some() {
        let nw = 1.0 / (2.0 * nu1);
        let wavelength_mm = seq.wavelength_nm * 1e-6;
        analysis.working_f_number = Some(nw);
        analysis.airy_radius_um = Some(AIRY_FIRST_ZERO * wavelength_mm * nw * 1e3);
        analysis.depth_of_focus_mm = Some(2.0 * wavelength_mm * nw * nw);
    }
    if let (Some(efl), Some(d)) = (first_order.and_then(|f| f.efl_mm), p.entrance_pupil_diameter_mm)
        && d > 0.0
    {
        analysis.f_number = Some(efl.abs() / d);
    }
    let (short, long) = (&seqs[shortest.unwrap_or(0)], &seqs[longest.unwrap_or(0)]);
    analysis.seidel = Some(seidel(&seq, &p.marginal, p.marginal_start.1, &p.chief, p.chief_start.1, short, long));

    let mut planes = request.planes_mm.clone();
    if let Some(z) = final_image {
        planes.push(z);
    }
    let spot = spot_figures(&seq, object, &p, &planes);
    if let Ok(s) = &spot {
        analysis.image_na = Some(last.n_after * s.marginal.m.abs());
        if let (Some(zm), Some(zi)) = (s.marginal.axis_crossing_mm(), final_image) {
            analysis.marginal_lsa_mm = Some(zm - zi);
        }
    }
    analysis.spot = Some(spot.map(|mut s| {
        if final_image.is_some() {
            s.planes.pop();
        }
        s
    }));
    if request.vignetting {
        analysis.off_axis_transmission = Some(meridional_transmission(&seq, object, &p, FieldPoint::OffAxis));
        analysis.off_axis_area_transmission = pupil_transmission(&seq, object, &p, 1.0).ok();
    }
    Ok(analysis)
}
