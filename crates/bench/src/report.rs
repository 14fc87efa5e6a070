//! The one report of a bench: every figure a person reads, computed from the document and never patched by
//! hand. It serialises to the JSON keys of DESIGN.md (more may follow) and renders as text; the GUI and
//! every export read this same type.

use crate::beam::{BeamFigures, LASER_CAUTION};
use crate::compile::{self, Compiled};
use crate::evaluation::{Evaluation, Traced};
use crate::model::{Bench, Laser, ObjectSpec};
use crate::validate::{Finding, Severity};
use lumenrail_optics::analysis::Analysis;
pub use lumenrail_optics::analysis::{FieldFigures, Viewing};
use lumenrail_optics::beam::BeamTrace;
use lumenrail_optics::pupil::{PupilError, StopAt};
use lumenrail_optics::seidel::SeidelTerms;
use lumenrail_optics::spot::SpotError;
use lumenrail_optics::trace::RayError;
use serde::Serialize;
use std::fmt::Write as _;

/// First-order figures. Positions are rail positions, mm.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct FirstOrderFigures {
    /// Effective focal length (null when afocal).
    pub efl_mm: Option<f64>,
    /// Back focal length, from the last lens or mirror vertex the light meets to the back focal point,
    /// along the light's final direction (an iris after the optics does not count).
    pub bfl_mm: Option<f64>,
    /// Front focal length, from the front focal point to the first lens or mirror vertex the light meets
    /// (an iris before the optics does not count).
    pub ffl_mm: Option<f64>,
    /// Front focal point.
    pub front_focus_at_mm: Option<f64>,
    /// Back focal point.
    pub back_focus_at_mm: Option<f64>,
    /// Front principal plane.
    pub front_principal_at_mm: Option<f64>,
    /// Back principal plane.
    pub back_principal_at_mm: Option<f64>,
    /// Front nodal point.
    pub front_nodal_at_mm: Option<f64>,
    /// Back nodal point.
    pub back_nodal_at_mm: Option<f64>,
    /// f-number: EFL over the entrance pupil diameter.
    pub f_number: Option<f64>,
    /// Lagrange invariant, mm (object height × index × marginal slope form).
    pub lagrange_invariant_mm: Option<f64>,
}

/// The aperture stop and the pupils.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StopFigures {
    /// The part that is the stop (or "input beam" for a distant object's beam).
    pub part: String,
    /// Stop diameter, mm.
    pub diameter_mm: f64,
    /// Entrance pupil position (null: at infinity).
    pub entrance_pupil_at_mm: Option<f64>,
    /// Entrance pupil diameter, mm.
    pub entrance_pupil_diameter_mm: Option<f64>,
    /// Exit pupil position (null: at infinity).
    pub exit_pupil_at_mm: Option<f64>,
    /// Exit pupil diameter, mm.
    pub exit_pupil_diameter_mm: Option<f64>,
}

/// An image formed after one imaging part.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImageFigures {
    /// The part after which the image forms.
    pub after_part: String,
    /// Rail position (null: at infinity).
    pub at_mm: Option<f64>,
    /// Whether the light converges to it in its direction of travel (irises and see-through screens on
    /// the way do not matter).
    pub real: bool,
    /// A real image that the next imaging part meets before the light converges: that part's name (the
    /// image is a virtual object for it).
    pub intercepted_by: Option<String>,
    /// Whether it is upright.
    pub erect: bool,
    /// Lateral magnification (null for a distant object or an image at infinity).
    pub magnification: Option<f64>,
    /// Height of the off-axis object point's image, mm.
    pub height_mm: Option<f64>,
}

/// Spot figures at a screen, for the on-axis object point at the primary wavelength.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScreenFigures {
    /// The screen.
    pub part: String,
    /// Its rail position.
    pub at_mm: f64,
    /// Whether the light reaches it after its last part (false: an intermediate screen, whose figures are
    /// those of the light that has crossed only the parts before it).
    pub after_last_part: bool,
    /// RMS spot radius, µm.
    pub rms_spot_um: Option<f64>,
    /// Radius that holds every ray, µm.
    pub geometric_spot_um: Option<f64>,
    /// Plane of least RMS radius.
    pub best_focus_at_mm: Option<f64>,
    /// RMS radius there, µm.
    pub best_rms_spot_um: Option<f64>,
    /// How far to move the screen to reach best focus, mm (signed, along the rail).
    pub move_to_best_focus_mm: Option<f64>,
    /// Spot radius over the Airy radius (below 1: the geometric blur is inside the Airy disk).
    pub rms_over_airy: Option<f64>,
}

impl ScreenFigures {
    /// Takes the spot at plane `k` of `s`, with the Airy radius of the light that forms it.
    fn fill(&mut self, s: &lumenrail_optics::spot::SpotFigures, k: usize, airy_um: Option<f64>) {
        let plane = s.planes[k];
        self.rms_spot_um = Some(um(plane.rms_mm));
        self.geometric_spot_um = Some(um(plane.geometric_mm));
        self.best_focus_at_mm = s.best_focus_at_mm;
        self.best_rms_spot_um = s.best_rms_mm.map(um);
        self.move_to_best_focus_mm = s.best_focus_at_mm.map(|z| z - self.at_mm);
        self.rms_over_airy = airy_um.filter(|a| *a > 0.0).map(|a| um(plane.rms_mm) / a);
    }
}

/// Aberration and image-quality figures.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Aberrations {
    /// Marginal ray axis crossing minus the paraxial image position, mm.
    pub marginal_lsa_mm: Option<f64>,
    /// Paraxial image position at the longest wavelength minus at the shortest, mm.
    pub chromatic_focal_shift_mm: Option<f64>,
    /// Airy disk radius at the primary wavelength, µm (1.21967 λ N_w).
    pub airy_radius_um: Option<f64>,
    /// Working f-number 1/(2|n'u'|).
    pub working_f_number: Option<f64>,
    /// Image-space numerical aperture of the real marginal ray.
    pub image_na: Option<f64>,
    /// Depth of focus, ± mm (±2λN_w², the quarter-wave rule, common practice).
    pub depth_of_focus_mm: Option<f64>,
    /// Seidel sums S_I..S_V, C_I, C_II (mm; Welford).
    pub seidel: Option<SeidelTerms>,
    /// Best focus for white light: the plane of least on-axis RMS radius over every wavelength together,
    /// each by its weight (`colour[k].weight`).
    pub white_light_focus_at_mm: Option<f64>,
    /// The white-light RMS radius there, µm.
    pub white_light_rms_spot_um: Option<f64>,
}

/// Figures of an afocal bench (telescope, beam expander).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Afocal {
    /// Angular magnification (negative: inverted view).
    pub angular_magnification: f64,
    /// Exit pupil diameter, mm.
    pub exit_pupil_diameter_mm: Option<f64>,
    /// Distance from the last vertex to the exit pupil, mm.
    pub eye_relief_mm: Option<f64>,
}

/// The paraxial image position at one wavelength.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ColourFocus {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Final image position (null: at infinity).
    pub image_at_mm: Option<f64>,
    /// The wavelength's share of the white light (the bench's weights, summing to 1; equal without them).
    pub weight: f64,
}

/// What a warning is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum WarningKind {
    /// The layout: carriers that overlap and other findings of validation.
    Layout,
    /// Mirrors send the light back and forth; it is followed for a limited number of reflections.
    Reflections,
    /// Nothing limits the light, or the stop cannot be placed.
    Stop,
    /// The off-axis point loses part of its pupil.
    Vignetting,
    /// Part of the on-axis light is blocked before the image.
    Blocked,
    /// The image does not fit its screen.
    ImageSize,
    /// A screen's figures cannot be given.
    Screen,
    /// A safety caution.
    Caution,
    /// A part's clear aperture passes less than 99 % of the laser beam's power.
    Clipping,
    /// A stray reflection focuses near a surface, at the laser or on the screen.
    StrayFocus,
}

/// Something in a bench that needs a look: what kind, which part and field it concerns, and what it says.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Warning {
    /// What the warning is about.
    pub kind: WarningKind,
    /// The part concerned, by name (`None`: the bench as a whole).
    pub part: Option<String>,
    /// The field concerned, as spelled in the bench file.
    pub field: Option<&'static str>,
    /// What it says, in plain words.
    pub message: String,
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)
    }
}

impl Warning {
    fn new(kind: WarningKind, part: Option<&str>, message: String) -> Warning {
        Warning { kind, part: part.map(str::to_string), field: None, message }
    }
}

/// Every figure of a bench.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Report {
    /// The bench's title.
    pub title: String,
    /// Primary wavelength, nm.
    pub primary_wavelength_nm: f64,
    /// First-order figures.
    pub first_order: FirstOrderFigures,
    /// Stop and pupils (null when nothing limits the light).
    pub stop: Option<StopFigures>,
    /// Images after each imaging part; the last is the final image.
    pub images: Vec<ImageFigures>,
    /// Spot figures at each screen.
    pub screens: Vec<ScreenFigures>,
    /// Aberrations and image quality.
    pub aberrations: Aberrations,
    /// Afocal figures (null unless afocal).
    pub afocal: Option<Afocal>,
    /// Share of the off-axis point's meridional pupil that passes every aperture (1: no vignetting).
    pub off_axis_transmission: Option<f64>,
    /// Share of the off-axis point's pupil area that passes every aperture (1: no vignetting).
    pub off_axis_area_transmission: Option<f64>,
    /// Whether that share settled; false: it is approximate, the arms traced across the pupil disagreeing
    /// from one to the next (a pinhole far smaller than the beam).
    pub off_axis_area_settled: bool,
    /// The part whose clear aperture first clips the off-axis point's pupil (null: nothing clips it).
    pub off_axis_clipped_by: Option<String>,
    /// The largest off-axis point (object height in mm, or field angle in degrees) whose whole pupil gets
    /// through (null when not found).
    pub unclipped_field: Option<f64>,
    /// Whether the vignetting figures above are still being computed (a live evaluation in the workbench
    /// while a heavily vignetted bench is dragged; never in the command line's report, and left out of
    /// its JSON).
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub vignetting_pending: bool,
    /// Whether the sharpness figures (`wavefront`, `mtf`) and the stray-focus map (`stray`) are still
    /// being computed (as above).
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub sharpness_pending: bool,
    /// Field curvature, astigmatism, distortion and lateral colour of the off-axis point (null without a
    /// final image or an off-axis point).
    pub field: Option<FieldFigures>,
    /// Final paraxial image position at every wavelength.
    pub colour: Vec<ColourFocus>,
    /// When the final image is virtual, for viewing: where it is seen from the exit pupil (then the report
    /// gives no f-number, Airy radius, depth of focus or best focus: no screen can catch that image).
    pub viewing: Option<Viewing>,
    /// The laser beam's figures (null without a laser on the bench).
    pub beam: Option<BeamFigures>,
    /// The stray-focus map: where the light lens surfaces reflect comes to a focus (null without a lens
    /// surface).
    pub stray: Option<crate::stray::StrayFigures>,
    /// Wavefront error, Strehl ratio and Zernike terms of each object point at the primary wavelength
    /// (empty without a real final image).
    pub wavefront: Vec<crate::sharpness::WavefrontFigures>,
    /// Polychromatic MTF of each object point: where it falls to 50 % and 10 %, contrast at 10–100 /mm.
    pub mtf: Vec<crate::sharpness::MtfFigures>,
    /// What a viewer gets: magnifying power, magnification, exit pupil, field of view (null unless the
    /// bench is afocal or forms an image for viewing).
    pub instrument: Option<crate::instrument::InstrumentFigures>,
    /// What the eye part gets: its retina's blur, whether it can focus, its correction (null without an
    /// eye on the bench).
    pub eye: Option<crate::eye::EyeFigures>,
    /// Each of the bench's aims: its target, the value reached, met or not.
    pub aims: Vec<crate::aims::AimStatus>,
    /// Everything that needs a look.
    pub warnings: Vec<Warning>,
    /// Why the bench cannot be traced as asked (null when it can).
    pub trace_failure: Option<String>,
}

/// How a person reads a [`Viewing`].
pub trait ViewingWords {
    /// "The image is for viewing: virtual, at … mm, … mm behind the exit pupil, … degrees tall seen from
    /// there."
    fn words(&self) -> String;
}

impl ViewingWords for Viewing {
    fn words(&self) -> String {
        let mut w = match self.image_at_mm {
            Some(z) => format!("The image is for viewing, not for a screen: virtual, at {} mm", fixed(z, 3)),
            None => {
                "The image is for viewing, not for a screen: at infinity (the light leaves parallel, for a relaxed eye)"
                    .to_string()
            }
        };
        if let Some(d) = self.from_exit_pupil_mm {
            let side = if d < 0.0 { "behind" } else { "beyond" };
            let _ = write!(w, ", {} mm {side} the exit pupil (where the eye goes)", fixed(d.abs(), 3));
        }
        if let Some(a) = self.angular_size_deg {
            let _ = write!(w, "; the off-axis point's image is {}° from the axis seen from there", fixed(a, 3));
        }
        w
    }
}

/// `v` with `digits` decimals, never "-0.000" for a value that rounds to zero (every view formats figures
/// with it).
pub fn fixed(v: f64, digits: usize) -> String {
    let s = format!("{v:.digits$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') { s[1..].to_string() } else { s }
}

fn um(mm: f64) -> f64 {
    mm * 1e3
}

impl Report {
    /// The screens beyond the last part that the on-axis light reaches, in rail order: the planes a view
    /// can look at.
    pub fn viewable_screens(&self) -> impl Iterator<Item = &ScreenFigures> {
        self.screens.iter().filter(|s| s.after_last_part && s.rms_spot_um.is_some())
    }

    /// The report of a bench: its [`Evaluation`]'s projection (use the evaluation when the views or the
    /// rail are wanted too, so that nothing is evaluated twice).
    pub fn of(bench: &Bench) -> Report {
        Evaluation::of(bench).report
    }

    /// Projects an evaluation's figures into the report; computes nothing.
    pub(crate) fn project(
        bench: &Bench,
        findings: &[Finding],
        traced: Option<&Traced>,
        screens: &[usize],
        failure: Option<String>,
    ) -> Report {
        let mut report = Report {
            title: bench.title.clone(),
            primary_wavelength_nm: bench.primary_wavelength_nm().filter(|w| w.is_finite()).unwrap_or(0.0),
            first_order: FirstOrderFigures::default(),
            stop: None,
            images: Vec::new(),
            screens: Vec::new(),
            aberrations: Aberrations::default(),
            afocal: None,
            off_axis_transmission: None,
            off_axis_area_transmission: None,
            off_axis_area_settled: true,
            off_axis_clipped_by: None,
            unclipped_field: None,
            vignetting_pending: false,
            sharpness_pending: false,
            field: None,
            colour: Vec::new(),
            viewing: None,
            beam: None,
            stray: None,
            wavefront: Vec::new(),
            mtf: Vec::new(),
            instrument: None,
            eye: None,
            aims: Vec::new(),
            warnings: Vec::new(),
            trace_failure: failure,
        };
        report.warnings.extend(findings.iter().filter(|f| f.severity == Severity::Warning).map(|f| Warning {
            kind: WarningKind::Layout,
            part: f.part.map(|i| bench.parts[i].name.clone()),
            field: f.field,
            message: f.message.clone(),
        }));
        if let Some(t) = traced {
            if t.compiled.truncated {
                report.warnings.push(Warning::new(
                    WarningKind::Reflections,
                    None,
                    format!(
                        "the light is reflected back and forth between mirrors; it is followed for {} reflections only",
                        compile::MAX_REFLECTIONS
                    ),
                ));
            }
            report.fill(bench, &t.compiled, &t.analysis, screens);
            if let (Some(laser), Some(beam)) = (&bench.laser, &t.beam) {
                report.fill_beam(bench, laser, &t.compiled, beam, screens);
            }
            report.fill_stray(t);
            if let Some(s) = &t.sharpness {
                report.wavefront = s.wavefront_figures();
                report.mtf = s.mtf_figures();
            }
        }
        if bench.laser.is_some() {
            report.warnings.push(Warning::new(WarningKind::Caution, None, LASER_CAUTION.into()));
        }
        report.aims = crate::aims::assess(bench, &report);
        report
    }

    /// The beam's figures and its clipping warnings.
    fn fill_beam(&mut self, bench: &Bench, laser: &Laser, compiled: &Compiled, beam: &BeamTrace, screens: &[usize]) {
        let figures = BeamFigures::of(bench, laser, compiled, beam, screens);
        let estimate = if figures.shares_are_estimates { " (an estimate: M² > 1)" } else { "" };
        for p in figures.clipping() {
            self.warnings.push(Warning::new(
                WarningKind::Clipping,
                Some(&p.part),
                format!(
                    "clipping: \"{}\" ({} mm clear) passes {}% of the laser beam's power{estimate}; the beam is {} mm across (1/e²) there",
                    p.part,
                    fixed(p.clear_diameter_mm, 2),
                    fixed(100.0 * p.passed_share, 2),
                    fixed(p.diameter_mm, 3)
                ),
            ));
        }
        self.beam = Some(figures);
    }

    /// The stray-focus map and its warnings.
    fn fill_stray(&mut self, traced: &Traced) {
        let Some(map) = traced.stray.clone() else { return };
        for (part, message) in map.warnings() {
            self.warnings.push(Warning::new(WarningKind::StrayFocus, part.as_deref(), message));
        }
        self.stray = Some(map);
    }

    fn part_name(bench: &Bench, compiled: &Compiled, surface: usize) -> String {
        compiled.system.surfaces.get(surface).map_or_else(|| "?".into(), |s| bench.parts[s.element].name.clone())
    }

    fn ray_words(bench: &Bench, compiled: &Compiled, e: &RayError) -> String {
        let name = |s: usize| Self::part_name(bench, compiled, s);
        match *e {
            RayError::Missed { surface } => format!("the ray misses a surface of \"{}\"", name(surface)),
            RayError::Blocked { surface, height_mm } => {
                format!("the ray is blocked by \"{}\" ({height_mm:.3} mm from the axis)", name(surface))
            }
            RayError::TotalInternalReflection { surface } => {
                format!("total internal reflection inside \"{}\"", name(surface))
            }
            RayError::NonFinite { surface } => match surface {
                Some(s) => format!("the ray cannot be followed through \"{}\"", name(s)),
                None => "the ray cannot be started".into(),
            },
        }
    }

    fn fill(&mut self, bench: &Bench, compiled: &Compiled, a: &Analysis, screens: &[usize]) {
        let surfaces = &compiled.system.surfaces;
        if let Some(f) = a.first_order {
            self.first_order = FirstOrderFigures {
                efl_mm: f.efl_mm,
                bfl_mm: f.bfl_mm,
                ffl_mm: f.ffl_mm,
                front_focus_at_mm: f.front_focus_at_mm,
                back_focus_at_mm: f.back_focus_at_mm,
                front_principal_at_mm: f.front_principal_at_mm,
                back_principal_at_mm: f.back_principal_at_mm,
                front_nodal_at_mm: f.front_nodal_at_mm,
                back_nodal_at_mm: f.back_nodal_at_mm,
                // An image for viewing has no f-number that means anything to the viewer.
                f_number: a.f_number.filter(|_| a.viewing.is_none()),
                lagrange_invariant_mm: a.lagrange_invariant_mm,
            };
        }
        for img in a.images() {
            self.images.push(ImageFigures {
                after_part: bench.parts[img.element].name.clone(),
                at_mm: img.at_mm,
                real: img.real,
                intercepted_by: img.intercepted_by.map(|s| Self::part_name(bench, compiled, s)),
                erect: img.erect,
                magnification: img.magnification,
                height_mm: img.height_mm,
            });
        }
        self.colour = a
            .colour
            .iter()
            .zip(bench.shares())
            .map(|(c, weight)| ColourFocus { wavelength_nm: c.wavelength_nm, image_at_mm: c.image_at_mm, weight })
            .collect();
        match a.pupils() {
            Ok(p) => {
                let part = match p.stop {
                    StopAt::Beam => "input beam".to_string(),
                    StopAt::Surface(s) => Self::part_name(bench, compiled, s),
                };
                self.stop = Some(StopFigures {
                    part,
                    diameter_mm: 2.0 * p.stop_semi_mm,
                    entrance_pupil_at_mm: p.entrance_pupil_at_mm,
                    entrance_pupil_diameter_mm: p.entrance_pupil_diameter_mm,
                    exit_pupil_at_mm: p.exit_pupil_at_mm,
                    exit_pupil_diameter_mm: p.exit_pupil_diameter_mm,
                });
                if let Some(f) = a.first_order.filter(|f| f.afocal) {
                    let last = surfaces.last().expect("a traced bench has surfaces");
                    self.afocal = Some(Afocal {
                        angular_magnification: f.angular_magnification.unwrap_or(1.0),
                        exit_pupil_diameter_mm: p.exit_pupil_diameter_mm,
                        eye_relief_mm: p.exit_pupil_at_mm.map(|z| (z - last.vertex_z_mm) * compiled.final_direction),
                    });
                }
            }
            Err(PupilError::Unbounded) => {
                self.warnings.push(Warning::new(WarningKind::Stop, None, "no aperture limits the light".into()))
            }
            Err(e) => self.warnings.push(Warning::new(WarningKind::Stop, None, e.to_string())),
        }
        let airy_um = a.airy_radius_um;
        self.aberrations = Aberrations {
            marginal_lsa_mm: a.marginal_lsa_mm,
            chromatic_focal_shift_mm: a.chromatic_focal_shift_mm,
            airy_radius_um: airy_um,
            working_f_number: a.working_f_number,
            image_na: a.image_na,
            depth_of_focus_mm: a.depth_of_focus_mm,
            seidel: a.seidel.as_ref().map(|s| s.total),
            white_light_focus_at_mm: a.white_light_focus.map(|w| w.at_mm),
            white_light_rms_spot_um: a.white_light_focus.map(|w| um(w.rms_mm)),
        };
        self.off_axis_transmission = a.off_axis_transmission;
        self.off_axis_area_transmission = a.off_axis_area_transmission;
        self.off_axis_area_settled = a.off_axis_area_settled;
        let (line, area) = (a.off_axis_transmission.unwrap_or(1.0), a.off_axis_area_transmission.unwrap_or(1.0));
        let full_field = match bench.object {
            ObjectSpec::Point { height_mm, .. } => height_mm,
            ObjectSpec::Distant { field_deg, .. } => field_deg,
        };
        self.off_axis_clipped_by = a.off_axis_clipped_by.map(|k| Self::part_name(bench, compiled, k));
        self.unclipped_field = a.unclipped_field.map(|f| f * full_field);
        if line < 1.0 - 1e-6 || area < 1.0 - 1e-6 {
            let (off_axis, unit) = match bench.object {
                ObjectSpec::Point { height_mm, .. } => (format!("the object point {height_mm} mm off axis"), " mm"),
                ObjectSpec::Distant { field_deg, .. } => (format!("the field point {field_deg}° off axis"), "°"),
            };
            let about = if self.off_axis_area_settled { "" } else { "about " };
            let area = a
                .off_axis_area_transmission
                .map_or_else(String::new, |t| format!("{}{}% of its pupil's area and ", about, fixed(100.0 * t, 1)));
            let by =
                self.off_axis_clipped_by.as_ref().map_or_else(String::new, |n| format!("; \"{n}\" clips it first"));
            let whole = self
                .unclipped_field
                .map_or_else(String::new, |f| format!("; the field passes whole up to {}{unit}", fixed(f, 3)));
            let unsettled = if self.off_axis_area_settled {
                ""
            } else {
                " (the area share is approximate: the rays traced across its pupil pass in stretches too narrow \
                 for them to agree from one direction to the next)"
            };
            self.warnings.push(Warning {
                kind: WarningKind::Vignetting,
                part: self.off_axis_clipped_by.clone(),
                field: None,
                message: format!(
                    "vignetting: {off_axis} keeps {area}{}% of its meridional pupil{by}{whole}{unsettled}",
                    fixed(100.0 * line, 1)
                ),
            });
        }
        // Screens: figures for the light's last crossing, which the final rays give when the screen lies in
        // the final space (beyond the last surface, along the final direction).
        let last = surfaces.last().expect("a traced bench has surfaces");
        let spot = match &a.spot {
            Some(Ok(s)) => Some(s),
            Some(Err(e)) => {
                let why = match e {
                    SpotError::Marginal(r) | SpotError::AllBlocked(r) => Self::ray_words(bench, compiled, r),
                };
                self.trace_failure = Some(format!("the on-axis light does not reach the image: {why}"));
                None
            }
            None => None,
        };
        if let Some(s) = spot
            && s.blocked_share > 0.0
        {
            self.warnings.push(Warning::new(
                WarningKind::Blocked,
                None,
                format!("{:.1}% of the on-axis light is blocked before the image", 100.0 * s.blocked_share),
            ));
        }
        let (mut final_k, mut partial_k) = (0, 0);
        for &i in screens {
            let p = &bench.parts[i];
            let in_final_space = (p.at_mm - last.vertex_z_mm) * compiled.final_direction >= 0.0;
            let mut fig = ScreenFigures {
                part: p.name.clone(),
                at_mm: p.at_mm,
                after_last_part: in_final_space,
                rms_spot_um: None,
                geometric_spot_um: None,
                best_focus_at_mm: None,
                best_rms_spot_um: None,
                move_to_best_focus_mm: None,
                rms_over_airy: None,
            };
            if !in_final_space {
                let partial = a.partial_spots.get(partial_k).and_then(Option::as_ref);
                partial_k += 1;
                if compiled.last_crossing(i).is_none_or(|k| k == 0) {
                    self.warnings.push(Warning::new(
                        WarningKind::Screen,
                        Some(&p.name),
                        format!("screen \"{}\" is crossed before the light meets any part", p.name),
                    ));
                } else if let Some(ps) = partial {
                    fig.fill(&ps.spot, 0, ps.airy_radius_um);
                } else {
                    self.warnings.push(Warning::new(
                        WarningKind::Screen,
                        Some(&p.name),
                        format!("screen \"{}\": the light that reaches it cannot be traced", p.name),
                    ));
                }
            } else if let Some(s) = spot {
                fig.fill(s, final_k, airy_um);
                let half = 0.5 * p.kind.diameter_mm();
                if let Some(h) = self.images.last().and_then(|img| img.height_mm).filter(|h| h.abs() > half)
                    && self.images.last().and_then(|img| img.at_mm).is_some_and(|z| (z - p.at_mm).abs() < 1.0)
                {
                    self.warnings.push(Warning::new(
                        WarningKind::ImageSize,
                        Some(&p.name),
                        format!(
                            "the image ({:.1} mm tall) does not fit screen \"{}\" ({:.1} mm across)",
                            2.0 * h.abs(),
                            p.name,
                            p.kind.diameter_mm()
                        ),
                    ));
                }
            }
            if in_final_space {
                final_k += 1;
            }
            self.screens.push(fig);
        }
        self.field = a.field;
        self.viewing = a.viewing;
        if self.viewing.is_some() {
            // The light leaves diverging: a best focus found behind the last surface is not a place to
            // put a screen.
            for s in &mut self.screens {
                if s.best_focus_at_mm.is_some_and(|z| (z - last.vertex_z_mm) * compiled.final_direction < 0.0) {
                    s.best_focus_at_mm = None;
                    s.best_rms_spot_um = None;
                    s.move_to_best_focus_mm = None;
                }
            }
        }
        if matches!(bench.object, ObjectSpec::Distant { .. }) && a.first_order.is_some_and(|f| f.power_per_mm > 0.0) {
            self.warnings.push(Warning::new(WarningKind::Caution, None, "caution: a converging bench aimed at the sun or a strong lamp focuses enough light to burn skin and eyes and to start fires".into()));
        }
    }

    /// Whether the bench traced as asked (no `trace_failure`).
    pub fn traced(&self) -> bool {
        self.trace_failure.is_none()
    }

    /// The report as JSON text (pretty, keys as DESIGN.md lists them).
    pub fn to_json(&self) -> String {
        let mut value = serde_json::to_value(self).expect("a report always serialises");
        crate::reasons::annotate(&mut value, self);
        serde_json::to_string_pretty(&value).expect("a JSON value always serialises")
    }

    /// The report as a text table for a person.
    pub fn to_text(&self) -> String {
        let mut t = String::new();
        let mm = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{} mm", fixed(v, 3)));
        let at = |v: Option<f64>| v.map_or_else(|| "at infinity".to_string(), |v| format!("{} mm", fixed(v, 3)));
        let _ = writeln!(t, "{}", self.title);
        let _ = writeln!(t, "primary wavelength {} nm", self.primary_wavelength_nm);
        if let Some(f) = &self.trace_failure {
            let _ = writeln!(t, "\nCANNOT TRACE AS ASKED: {f}");
        }
        let f = &self.first_order;
        let _ = writeln!(t, "\nFirst order (positions on the rail)");
        let _ = writeln!(t, "  EFL {}   BFL {}   FFL {}", mm(f.efl_mm), mm(f.bfl_mm), mm(f.ffl_mm));
        let _ = writeln!(t, "  (BFL and FFL from the last and first lens or mirror vertex the light meets)");
        let _ = writeln!(t, "  front focus {}   back focus {}", mm(f.front_focus_at_mm), mm(f.back_focus_at_mm));
        let _ = writeln!(t, "  principal planes {} / {}", mm(f.front_principal_at_mm), mm(f.back_principal_at_mm));
        if self.afocal.is_some() {
            let _ = writeln!(
                t,
                "  (afocal: parallel light leaves parallel, so there is no focal length, focal point or principal plane)"
            );
        }
        if let Some(n) = f.f_number {
            let _ = writeln!(t, "  f-number {n:.2}");
        }
        if let Some(s) = &self.stop {
            let _ = writeln!(t, "\nAperture stop: {} ({:.3} mm)", s.part, s.diameter_mm);
            let _ = writeln!(
                t,
                "  entrance pupil {}, {} across",
                at(s.entrance_pupil_at_mm),
                mm(s.entrance_pupil_diameter_mm)
            );
            let _ = writeln!(t, "  exit pupil     {}, {} across", at(s.exit_pupil_at_mm), mm(s.exit_pupil_diameter_mm));
        }
        if !self.images.is_empty() {
            let _ = writeln!(t, "\nImages");
            let _ = writeln!(
                t,
                "  {:<16} {:>14}  {:<8} {:<9} {:>14}",
                "after part", "at", "kind", "way up", "magnification"
            );
            for (k, img) in self.images.iter().enumerate() {
                let last = if k + 1 == self.images.len() { " (final)".to_string() } else { String::new() };
                let last = match &img.intercepted_by {
                    Some(by) => format!("{last}; a real image that \"{by}\" intercepts (a virtual object for it)"),
                    None => last,
                };
                let m = img.magnification.map_or_else(|| "—".to_string(), |m| format!("{m:.5}"));
                let _ = writeln!(
                    t,
                    "  {:<16} {:>14}  {:<8} {:<9} {:>14}{last}",
                    img.after_part,
                    at(img.at_mm),
                    if img.real { "real" } else { "virtual" },
                    if img.erect { "erect" } else { "inverted" },
                    m
                );
            }
            if self.images.iter().any(|i| i.magnification.is_none()) {
                let _ = writeln!(
                    t,
                    "  (— : no magnification where the object or the image is at infinity; sizes there are angles)"
                );
            }
        }
        if let Some(v) = &self.viewing {
            let _ = writeln!(t, "\n{}", v.words());
        }
        if let Some(af) = &self.afocal {
            let _ = writeln!(t, "\nAfocal: angular magnification {:.4}", af.angular_magnification);
            let _ = writeln!(
                t,
                "  exit pupil {} across, eye relief {}",
                mm(af.exit_pupil_diameter_mm),
                mm(af.eye_relief_mm)
            );
        }
        if let Some(i) = &self.instrument {
            i.write_text(&mut t);
        }
        if let Some(e) = &self.eye {
            e.write_text(&mut t);
        }
        if !self.screens.is_empty() {
            let _ = writeln!(t, "\nScreens (on-axis point, primary wavelength)");
            let um = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{v:.2} µm"));
            for s in &self.screens {
                let _ = writeln!(
                    t,
                    "  {} at {:.3} mm: RMS {}, geometric {}; best focus {} (RMS {}), move {}",
                    s.part,
                    s.at_mm,
                    um(s.rms_spot_um),
                    um(s.geometric_spot_um),
                    mm(s.best_focus_at_mm),
                    um(s.best_rms_spot_um),
                    mm(s.move_to_best_focus_mm)
                );
            }
        }
        if let Some(b) = &self.beam {
            b.write_text(&mut t);
        }
        if let Some(s) = &self.stray {
            s.write_text(&mut t);
        }
        let ab = &self.aberrations;
        let _ = writeln!(t, "\nImage quality");
        let _ = writeln!(
            t,
            "  marginal LSA {}   chromatic focal shift {}",
            mm(ab.marginal_lsa_mm),
            mm(ab.chromatic_focal_shift_mm)
        );
        if let (Some(n), Some(r)) = (ab.working_f_number, ab.airy_radius_um) {
            let _ = writeln!(
                t,
                "  working f-number {n:.3}   Airy radius {r:.2} µm   depth of focus ±{}",
                mm(ab.depth_of_focus_mm)
            );
        }
        if let (Some(z), Some(r)) = (ab.white_light_focus_at_mm, ab.white_light_rms_spot_um)
            && self.colour.len() > 1
        {
            let first = self.colour.first().map_or(0.0, |c| c.weight);
            let weights = if self.colour.iter().all(|c| (c.weight - first).abs() < 1e-12) {
                "equal weights".to_string()
            } else {
                let shares: Vec<String> = self.colour.iter().map(|c| format!("{:.0}%", 100.0 * c.weight)).collect();
                format!("weighted {}", shares.join(" : "))
            };
            let _ = writeln!(
                t,
                "  best focus for white light (every wavelength, {weights}) {} mm, RMS {r:.2} µm",
                fixed(z, 3)
            );
        }
        if self.vignetting_pending {
            let _ = writeln!(t, "  off-axis point's vignetting: being computed");
        }
        if self.sharpness_pending {
            let _ = writeln!(t, "  sharpness (wavefront, MTF) and the stray-focus map: being computed");
        }
        if let Some(v) = self.off_axis_transmission {
            let area = self.off_axis_area_transmission.map_or_else(String::new, |a| {
                let about = if self.off_axis_area_settled { "" } else { "about " };
                format!("{about}{}% of its pupil's area, ", fixed(100.0 * a, 1))
            });
            let _ = writeln!(t, "  off-axis point keeps {area}{}% of its meridional pupil", fixed(100.0 * v, 1));
        }
        if let Some(f) = &self.field {
            let _ = writeln!(
                t,
                "  off-axis foci from the paraxial image: tangential {}, sagittal {} (astigmatism {})",
                mm(Some(f.tangential_focus_mm)),
                mm(Some(f.sagittal_focus_mm)),
                mm(Some(f.astigmatism_mm))
            );
            let pc = f.distortion_percent.map_or_else(|| "—".to_string(), |d| format!("{}%", fixed(d, 4)));
            let _ = writeln!(t, "  distortion {pc}   lateral colour {}", mm(f.lateral_colour_mm));
        }
        crate::sharpness::write_text(&mut t, &self.wavefront, &self.mtf);
        if !self.aims.is_empty() {
            let met = self.aims.iter().filter(|a| a.met).count();
            let _ = writeln!(t, "\nAims ({met} of {} met)", self.aims.len());
            for a in &self.aims {
                let _ = writeln!(t, "  {}", a.line());
            }
        }
        if !self.warnings.is_empty() {
            let _ = writeln!(t, "\nWarnings");
            for w in &self.warnings {
                let _ = writeln!(t, "  - {}", w.message);
            }
        }
        t
    }
}
