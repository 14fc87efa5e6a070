//! The whole evaluation of a system for an object: first order, images, stop and pupils, on-axis spot,
//! aberrations, colour and vignetting, in one pass.
//!
//! This is what a bench's report is computed from. Every figure is a named field; what cannot be computed
//! is `None` beside a reason, never a NaN.

use crate::field::{chief_height_at, field_sample};
use crate::paraxial::{self, FirstOrder, Object, ParaxialImage};
use crate::pupil::{FieldPoint, PupilError, Pupils, meridional_transmission};
use crate::sampling::{SkewAimer, clipped_field_limit, pupil_transmission_settled, rim_clears_with, rim_clipper};
use crate::seidel::{Seidel, seidel};
use crate::spot::{AxialSpot, RadialMoments, SpotError, SpotFigures, spot_figures};
use crate::system::{Sequence, System, SystemError};

/// The first zero of J₁ divided by π: the Airy disk's first dark ring lies at this many λN
/// (G. B. Airy 1835; Born & Wolf, *Principles of Optics*, sec. 8.5.2), the "1.22 λN" of the trade.
pub const AIRY_FIRST_ZERO: f64 = 1.219_669_891_266_504_5;

/// A plane that the light crosses before its last surface (an intermediate screen): the figures there are
/// those of the light that has met only the first `surfaces` surfaces.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PartialPlane {
    /// How many surfaces the light has met when it crosses the plane.
    pub surfaces: usize,
    /// The plane's rail position, mm.
    pub at_mm: f64,
}

/// What to evaluate.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    /// The object.
    pub object: Object,
    /// Wavelengths, nm.
    pub wavelengths_nm: Vec<f64>,
    /// Index into `wavelengths_nm` of the primary wavelength.
    pub primary: usize,
    /// Relative weights of the wavelengths in the white-light figures (one per wavelength, not all zero);
    /// empty for equal weights.
    pub weights: Vec<f64>,
    /// Planes beyond the last surface (rail positions, mm) at which to give spot figures, such as screens.
    pub planes_mm: Vec<f64>,
    /// Planes crossed before the last surface, at which to give the figures of the light that reaches them.
    pub partial_planes: Vec<PartialPlane>,
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

/// The system at one of the asked wavelengths: its numbers, its stop and pupils, its paraxial images.
/// Evaluated once; every figure and view at that wavelength reads it.
#[derive(Debug, Clone, PartialEq)]
pub struct Wavelength {
    /// The sequence at this wavelength.
    pub seq: Sequence,
    /// Stop and pupils, or why there are none.
    pub pupils: Result<Pupils, PupilError>,
    /// Paraxial images after each imaging element; the last is the final image.
    pub images: Vec<ParaxialImage>,
}

impl Wavelength {
    /// Evaluates `system` at `wavelength_nm` for `object`.
    pub fn of(system: &System, object: &Object, wavelength_nm: f64) -> Result<Wavelength, SystemError> {
        Ok(Wavelength::from_sequence(system.at(wavelength_nm)?, object))
    }

    /// The stop, pupils and images of an evaluated sequence.
    pub fn from_sequence(seq: Sequence, object: &Object) -> Wavelength {
        let pupils = Pupils::find(&seq, object);
        let images = paraxial::images(&seq, object);
        Wavelength { seq, pupils, images }
    }

    /// The final paraxial image position (`None`: at infinity, or no imaging part).
    pub fn final_image_at_mm(&self) -> Option<f64> {
        self.images.last().and_then(|i| i.at_mm)
    }
}

/// Spot figures at a plane crossed before the last surface: the figures of the shorter system the light
/// has met by then, with its own stop and working f-number.
#[derive(Debug, Clone, PartialEq)]
pub struct PartialSpot {
    /// The spot at the plane (one entry in `planes`) and the shorter system's best focus.
    pub spot: SpotFigures,
    /// Airy disk radius for the shorter system's working f-number, µm.
    pub airy_radius_um: Option<f64>,
}

/// Field figures of the off-axis object point, from real rays through the real stop.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct FieldFigures {
    /// Tangential focus of the thin bundle about the real chief ray, less the paraxial image, mm along
    /// the light (field curvature).
    pub tangential_focus_mm: f64,
    /// Sagittal focus less the paraxial image, mm along the light.
    pub sagittal_focus_mm: f64,
    /// Tangential less sagittal focus, mm (astigmatism).
    pub astigmatism_mm: f64,
    /// Real chief ray height at the paraxial image plane, mm.
    pub chief_height_mm: f64,
    /// (real − paraxial)/paraxial image height, %.
    pub distortion_percent: Option<f64>,
    /// Real chief ray height at the paraxial image plane at the longest wavelength less at the shortest,
    /// mm (lateral colour).
    pub lateral_colour_mm: Option<f64>,
}

/// The best focus for white light: the plane of least RMS spot radius of the on-axis point over every
/// wavelength together, each by its weight ([`Request::weights`]; equal when the bench gives none), about
/// the axis where the on-axis centroid lies.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct WhiteFocus {
    /// Rail position of the plane.
    pub at_mm: f64,
    /// The polychromatic RMS radius there, mm.
    pub rms_mm: f64,
}

/// A final image that is for viewing, not for a screen: a virtual image (the light leaves diverging, as
/// from a magnifier or an eyepiece) or one at infinity (the light leaves parallel, as from an eyepiece
/// focused for a relaxed eye), seen from the exit pupil, where the viewer's eye goes.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Viewing {
    /// Rail position of the virtual image (`None`: at infinity).
    pub image_at_mm: Option<f64>,
    /// Its distance from the exit pupil, mm, along the light (negative: behind the pupil, where a virtual
    /// image lies; `None` when the exit pupil is at infinity).
    pub from_exit_pupil_mm: Option<f64>,
    /// The angle the off-axis point's image subtends at the exit pupil's centre, degrees (`None` without an
    /// off-axis point or with the exit pupil at infinity). For an image at infinity, the angle of the
    /// paraxial chief ray leaving the last surface: every ray from that point leaves at it.
    pub angular_size_deg: Option<f64>,
}

/// Every figure of one evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    /// The system at every asked wavelength, in the order asked.
    pub wavelengths: Vec<Wavelength>,
    /// Index of the primary wavelength in `wavelengths`.
    pub primary: usize,
    /// First-order properties at the primary wavelength (`None` without a lens or mirror).
    pub first_order: Option<FirstOrder>,
    /// The Lagrange invariant, mm (object height × n × marginal slope form).
    pub lagrange_invariant_mm: Option<f64>,
    /// Final paraxial image position at every wavelength.
    pub colour: Vec<ColourFocus>,
    /// Paraxial image position at the longest wavelength minus that at the shortest, mm.
    pub chromatic_focal_shift_mm: Option<f64>,
    /// Spot figures at the asked planes, or why they cannot be computed.
    pub spot: Option<Result<SpotFigures, SpotError>>,
    /// Figures at each asked partial plane (`None`: the light that reaches it cannot be traced).
    pub partial_spots: Vec<Option<PartialSpot>>,
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
    /// Whether that share's integral settled; false: the share is approximate (see
    /// [`crate::sampling::pupil_transmission_settled`]).
    pub off_axis_area_settled: bool,
    /// Field curvature, astigmatism, distortion and lateral colour of the off-axis point (`None` without
    /// a final image or an off-axis point).
    pub field: Option<FieldFigures>,
    /// The best focus for white light (every wavelength together), for a real final image.
    pub white_light_focus: Option<WhiteFocus>,
    /// The first clear aperture (surface index) that clips the off-axis point's pupil (`None`: nothing
    /// does, or not asked).
    pub off_axis_clipped_by: Option<usize>,
    /// The largest share of the field whose pupil passes whole, 0 to 1 (`None` when not asked, or when even
    /// the axis is clipped; 1 when nothing clips the field).
    pub unclipped_field: Option<f64>,
    /// When the final image is virtual: where it is seen from the exit pupil (then there is no working
    /// f-number, Airy radius or depth of focus: no screen can catch the image).
    pub viewing: Option<Viewing>,
}

impl Analysis {
    /// Fills in the off-axis point's vignetting figures (from [`Vignetting::of`], perhaps computed later
    /// and elsewhere for this same analysis).
    pub fn set_vignetting(&mut self, v: Vignetting) {
        self.off_axis_transmission = v.transmission;
        self.off_axis_area_transmission = v.area_transmission;
        self.off_axis_area_settled = v.area_settled;
        self.off_axis_clipped_by = v.clipped_by;
        self.unclipped_field = v.unclipped_field;
    }

    /// The primary wavelength's sequence and its pupils: what [`Vignetting::of`] needs beside the object,
    /// owned, so that it can run on another thread (`None` without pupils).
    pub fn vignetting_inputs(&self) -> Option<(Sequence, Pupils)> {
        let w = &self.wavelengths[self.primary];
        Some((w.seq.clone(), w.pupils.as_ref().ok()?.clone()))
    }

    /// The primary wavelength's system, stop and images.
    pub fn primary(&self) -> &Wavelength {
        &self.wavelengths[self.primary]
    }

    /// The primary wavelength's sequence.
    pub fn seq(&self) -> &Sequence {
        &self.primary().seq
    }

    /// The primary wavelength's stop and pupils.
    pub fn pupils(&self) -> &Result<Pupils, PupilError> {
        &self.primary().pupils
    }

    /// The primary wavelength's paraxial images; the last is the final image.
    pub fn images(&self) -> &[ParaxialImage] {
        &self.primary().images
    }

    /// Indices of the shortest and longest wavelengths.
    pub fn extreme_wavelengths(&self) -> (usize, usize) {
        let w = |i: &usize| self.wavelengths[*i].seq.wavelength_nm;
        let all = 0..self.wavelengths.len();
        let shortest = all.clone().min_by(|a, b| w(a).total_cmp(&w(b))).unwrap_or(0);
        let longest = all.max_by(|a, b| w(a).total_cmp(&w(b))).unwrap_or(0);
        (shortest, longest)
    }
}

/// Airy radius (µm) and depth of focus (± mm) of a sequence whose image-space paraxial marginal slope is
/// `u1`, at its wavelength: 1.21967 λ N_w and 2 λ N_w², with N_w = 1/(2|n'u'|).
fn diffraction_figures(seq: &Sequence, u1: f64) -> Option<(f64, f64, f64)> {
    let nu1 = (seq.steps.last()?.n_after * u1).abs();
    (nu1 > 0.0).then(|| {
        let nw = 1.0 / (2.0 * nu1);
        let wavelength_mm = seq.wavelength_nm * 1e-6;
        (nw, AIRY_FIRST_ZERO * wavelength_mm * nw * 1e3, 2.0 * wavelength_mm * nw * nw)
    })
}

/// Evaluates `system` for `request`: every wavelength once, then [`analyse_wavelengths`].
pub fn analyse(system: &System, request: &Request) -> Result<Analysis, AnalysisError> {
    let wavelengths = request
        .wavelengths_nm
        .iter()
        .map(|&wavelength_nm| {
            Wavelength::of(system, &request.object, wavelength_nm)
                .map_err(|source| AnalysisError::System { wavelength_nm, source })
        })
        .collect::<Result<Vec<_>, _>>()?;
    analyse_wavelengths(wavelengths, request)
}

/// Every figure of the already evaluated `wavelengths` (one per `request.wavelengths_nm`, in order).
pub fn analyse_wavelengths(wavelengths: Vec<Wavelength>, request: &Request) -> Result<Analysis, AnalysisError> {
    let count = wavelengths.len();
    if request.primary >= count {
        return Err(AnalysisError::Primary { primary: request.primary, count });
    }
    let object = request.object;
    let colour: Vec<ColourFocus> = wavelengths
        .iter()
        .map(|w| ColourFocus { wavelength_nm: w.seq.wavelength_nm, image_at_mm: w.final_image_at_mm() })
        .collect();
    let mut analysis = Analysis {
        first_order: FirstOrder::of(&wavelengths[request.primary].seq),
        wavelengths,
        primary: request.primary,
        lagrange_invariant_mm: None,
        colour,
        chromatic_focal_shift_mm: None,
        spot: None,
        partial_spots: Vec::new(),
        marginal_lsa_mm: None,
        working_f_number: None,
        f_number: None,
        image_na: None,
        airy_radius_um: None,
        depth_of_focus_mm: None,
        seidel: None,
        off_axis_transmission: None,
        off_axis_area_transmission: None,
        off_axis_area_settled: true,
        field: None,
        off_axis_clipped_by: None,
        unclipped_field: None,
        white_light_focus: None,
        viewing: None,
    };
    let (shortest, longest) = analysis.extreme_wavelengths();
    if count > 1 {
        analysis.chromatic_focal_shift_mm =
            match (analysis.colour[longest].image_at_mm, analysis.colour[shortest].image_at_mm) {
                (Some(zl), Some(zs)) => Some(zl - zs),
                _ => None,
            };
    }
    let primary = &analysis.wavelengths[request.primary];
    let seq = &primary.seq;
    let final_image = primary.final_image_at_mm();
    let Ok(p) = &primary.pupils else {
        return Ok(analysis);
    };
    let n0 = seq.n_object;
    analysis.lagrange_invariant_mm = Some(paraxial::lagrange_invariant(
        n0,
        p.marginal[0].y_mm,
        p.marginal_start.nu / n0,
        p.chief[0].y_mm,
        p.chief_start.nu / n0,
    ));
    let last = seq.steps.last().expect("pupils imply surfaces");
    let final_real = primary.images.last().is_some_and(|i| i.real);
    if let Some(image) = primary.images.last()
        && !final_real
    {
        analysis.viewing = Some(match final_image {
            Some(z) => {
                let from_exit_pupil_mm = p.exit_pupil_at_mm.map(|e| (z - e) * last.dir_after);
                let angular_size_deg = from_exit_pupil_mm
                    .filter(|d| *d != 0.0)
                    .zip(image.height_mm)
                    .map(|(d, h)| (h.abs() / d.abs()).atan().to_degrees());
                Viewing { image_at_mm: Some(z), from_exit_pupil_mm, angular_size_deg }
            }
            None => {
                let slope = p.chief.last().map(|c| (c.nu / last.n_after).abs());
                let has_field = p.chief_start.nu != 0.0 || p.chief_start.y_mm != 0.0;
                let angular_size_deg = slope.filter(|_| has_field).map(|u| u.atan().to_degrees());
                Viewing { image_at_mm: None, from_exit_pupil_mm: None, angular_size_deg }
            }
        });
    }
    if final_image.is_some()
        && final_real
        && let Some((nw, airy_um, dof_mm)) = diffraction_figures(seq, p.image_space_marginal_slope(seq))
    {
        analysis.working_f_number = Some(nw);
        analysis.airy_radius_um = Some(airy_um);
        analysis.depth_of_focus_mm = Some(dof_mm);
    }
    if let (Some(efl), Some(d)) = (analysis.first_order.and_then(|f| f.efl_mm), p.entrance_pupil_diameter_mm)
        && d > 0.0
    {
        analysis.f_number = Some(efl.abs() / d);
    }
    let (short, long) = (&analysis.wavelengths[shortest].seq, &analysis.wavelengths[longest].seq);
    analysis.seidel = Some(seidel(seq, &p.marginal, p.marginal_start.nu, &p.chief, p.chief_start.nu, short, long));

    let mut planes = request.planes_mm.clone();
    if let Some(z) = final_image {
        planes.push(z);
    }
    let spot = spot_figures(seq, object, p, &planes);
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
    if final_real && let Some(Ok(s)) = &analysis.spot {
        // The weighted mean of each wavelength's moments about one plane (the primary's are known): each
        // wavelength's moments are already means over its own rays, so its weight is its share of the light.
        let z_ref = s.moments.z_ref;
        let moments: Vec<RadialMoments> = analysis
            .wavelengths
            .iter()
            .enumerate()
            .filter_map(|(k, w)| {
                if k == request.primary {
                    return Some(s.moments);
                }
                let spot = AxialSpot::trace(&w.seq, object, w.pupils.as_ref().ok()?, s.rings).ok()?;
                Some(RadialMoments::of(&spot, z_ref))
            })
            .collect();
        let weights: Vec<f64> =
            if request.weights.len() == moments.len() { request.weights.clone() } else { vec![1.0; moments.len()] };
        let total: f64 = weights.iter().sum();
        if moments.len() == analysis.wavelengths.len() && total > 0.0 && total.is_finite() {
            let mean_of =
                |f: fn(&RadialMoments) -> f64| moments.iter().zip(&weights).map(|(m, w)| w * f(m)).sum::<f64>() / total;
            let mean = RadialMoments { z_ref, a: mean_of(|m| m.a), b: mean_of(|m| m.b), c: mean_of(|m| m.c) };
            analysis.white_light_focus = mean.best().map(|(at_mm, rms_mm)| WhiteFocus { at_mm, rms_mm });
        }
    }
    analysis.partial_spots = request.partial_planes.iter().map(|plane| partial_spot(seq, object, *plane)).collect();
    if request.vignetting {
        analysis.set_vignetting(Vignetting::of(seq, object, p));
    }
    analysis.field = field_figures(&analysis, object);
    Ok(analysis)
}

/// The off-axis point's vignetting: the figures of the same names on [`Analysis`], computed together.
/// Either the rim certificate vouches for the whole field in a few dozen traces ([`Vignetting::certified`]),
/// or the shares are integrated, which takes thousands (hundreds of µs to tens of ms): the workbench can
/// leave that part to a background thread ([`Analysis::set_vignetting`] fills it in afterwards).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Vignetting {
    /// Share of the meridional pupil that passes.
    pub transmission: Option<f64>,
    /// Share of the pupil's area that passes.
    pub area_transmission: Option<f64>,
    /// Whether that share's integral settled (false: approximate).
    pub area_settled: bool,
    /// The first surface that clips the pupil.
    pub clipped_by: Option<usize>,
    /// The largest share of the field whose pupil passes whole.
    pub unclipped_field: Option<f64>,
}

impl Vignetting {
    /// A field whose rim clears every aperture passes whole: both shares are exactly 1.
    pub const WHOLE: Vignetting = Vignetting {
        transmission: Some(1.0),
        area_transmission: Some(1.0),
        area_settled: true,
        clipped_by: None,
        unclipped_field: Some(1.0),
    };

    /// [`Vignetting::WHOLE`] when the rim certificate shows the whole field passes; `None` when the shares
    /// must be integrated ([`Vignetting::of`]).
    pub fn certified(seq: &Sequence, object: Object, pupils: &Pupils) -> Option<Vignetting> {
        let aimer = SkewAimer::new(seq, object, pupils, 1.0);
        aimer.as_ref().is_ok_and(|a| rim_clears_with(seq, a, pupils)).then_some(Vignetting::WHOLE)
    }

    /// Every vignetting figure: the certificate's when it holds, else integrated.
    pub fn of(seq: &Sequence, object: Object, pupils: &Pupils) -> Vignetting {
        let aimer = SkewAimer::new(seq, object, pupils, 1.0);
        if aimer.as_ref().is_ok_and(|a| rim_clears_with(seq, a, pupils)) {
            return Vignetting::WHOLE;
        }
        let area = aimer.ok().and_then(|a| pupil_transmission_settled(seq, &a, 1.0).ok());
        Vignetting {
            clipped_by: rim_clipper(seq, object, pupils, 1.0),
            unclipped_field: clipped_field_limit(seq, object, pupils),
            transmission: Some(meridional_transmission(seq, object, pupils, FieldPoint::OffAxis)),
            area_transmission: area.map(|(share, _)| share),
            area_settled: area.is_none_or(|(_, settled)| settled),
        }
    }
}

/// The figures of the light that has met only the first `plane.surfaces` surfaces, at the plane.
fn partial_spot(seq: &Sequence, object: Object, plane: PartialPlane) -> Option<PartialSpot> {
    if plane.surfaces == 0 {
        return None;
    }
    let sub = seq.prefix(plane.surfaces);
    let pupils = Pupils::find(&sub, &object).ok()?;
    let spot = spot_figures(&sub, object, &pupils, &[plane.at_mm]).ok()?;
    let airy_radius_um = diffraction_figures(&sub, pupils.image_space_marginal_slope(&sub)).map(|(_, a, _)| a);
    Some(PartialSpot { spot, airy_radius_um })
}

/// The off-axis point's field figures at the primary wavelength's final image, with lateral colour from
/// the shortest and longest wavelengths' own stops.
fn field_figures(a: &Analysis, object: Object) -> Option<FieldFigures> {
    let image = a.images().last()?;
    let (at, height) = (image.at_mm?, image.height_mm?);
    let p = a.pupils().as_ref().ok()?;
    let off_axis = match object {
        Object::Finite { height_mm, .. } => height_mm,
        Object::Distant { field_deg, .. } => field_deg,
    };
    if off_axis == 0.0 {
        return None;
    }
    let s = field_sample(a.seq(), object, p, 1.0, at, height).ok()?;
    let (shortest, longest) = a.extreme_wavelengths();
    let chief_at = |k: usize| -> Option<f64> {
        let w = &a.wavelengths[k];
        chief_height_at(&w.seq, object, w.pupils.as_ref().ok()?, 1.0, at).ok()
    };
    let lateral_colour_mm =
        (shortest != longest).then(|| chief_at(longest).zip(chief_at(shortest)).map(|(l, s)| l - s)).flatten();
    Some(FieldFigures {
        tangential_focus_mm: s.tangential_mm,
        sagittal_focus_mm: s.sagittal_mm,
        astigmatism_mm: s.tangential_mm - s.sagittal_mm,
        chief_height_mm: s.chief_height_mm,
        distortion_percent: s.distortion.map(|d| 100.0 * d),
        lateral_colour_mm,
    })
}

/// One wavelength of a colour scan.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColourSample {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Final paraxial image position.
    pub focus_at_mm: Option<f64>,
    /// Off-axis real chief ray height at `plane_mm`, less the reference height, mm.
    pub lateral_colour_mm: Option<f64>,
}

/// The paraxial focus and the off-axis point's real chief ray height at the plane `plane_mm` (less
/// `reference_mm`) at each of `wavelengths_nm`, each wavelength with its own stop. Wavelengths at which
/// the system cannot be evaluated are left out.
pub fn colour_scan(
    system: &System,
    object: Object,
    wavelengths_nm: &[f64],
    plane_mm: Option<f64>,
    reference_mm: Option<f64>,
) -> Vec<ColourSample> {
    wavelengths_nm
        .iter()
        .filter_map(|&w| {
            let at = Wavelength::of(system, &object, w).ok()?;
            let chief = plane_mm.and_then(|z| chief_height_at(&at.seq, object, at.pupils.as_ref().ok()?, 1.0, z).ok());
            Some(ColourSample {
                wavelength_nm: w,
                focus_at_mm: at.final_image_at_mm(),
                lateral_colour_mm: chief.zip(reference_mm).map(|(a, b)| a - b),
            })
        })
        .collect()
}
