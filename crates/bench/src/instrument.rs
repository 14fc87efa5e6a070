//! Instrument figures: what a person looking through the bench gets. A magnifier's magnifying power, a
//! microscope's overall magnification (objective × eyepiece), a telescope's angular magnification, the exit
//! pupil (where the eye goes) and the real and apparent field of view.
//!
//! Projected from the one [`Evaluation`](crate::evaluation::Evaluation) of a revision: its report (images,
//! stop, afocal figures, the image for viewing), each part's own first order and the primary wavelength's
//! paraxial chief and marginal rays. Nothing is compiled, traced or analysed here.
//!
//! The formulas (textbook first-order optics; e.g. E. Hecht, *Optics*, ch. 5–6; W. J. Smith, *Modern
//! Optical Engineering*, ch. 6–7):
//!
//! - magnifier: M = 250/f with the image at infinity (eye relaxed) and M = 250/f + 1 with the image at the
//!   250 mm near point and the eye at the lens. The 250 mm near-point distance is a convention (common
//!   practice), not a law of nature.
//! - microscope: M = m_o × (250/f_e) with m_o the objective's lateral magnification; with the intermediate
//!   image at the eyepiece's front focus m_o = −L/f_o (Newton), so M = −(L/f_o)(250/f_e), L the optical tube
//!   length from the objective's back focus to the eyepiece's front focus.
//! - telescope (afocal): M = −f_o/f_e, exit pupil diameter = entrance pupil diameter / |M|.
//! - field of view: the aperture other than the stop that first stops the paraxial chief ray is the field
//!   stop; its limit is the real field (the edge of the field is then half vignetted). The apparent field
//!   is the angle the chief ray leaves at: tan ω′ = |ū′| (for a telescope tan ω′ = |M| tan ω).
//!
//! "As arranged" figures use the bench as it stands, the eye at the exit pupil: the tangent of the angle the
//! final image subtends there over the tangent of the angle the object subtends at 250 mm from the eye.

use crate::model::{Bench, ObjectSpec};
use crate::report::{Report, fixed};
use lumenrail_optics::paraxial::FirstOrder;
use lumenrail_optics::pupil::{Pupils, StopAt};
use lumenrail_optics::system::Sequence;
use serde::Serialize;
use std::fmt::Write as _;

/// The conventional near-point distance, mm (common practice: the "least distance of distinct vision").
pub const NEAR_POINT_MM: f64 = 250.0;

/// What kind of instrument the bench is, for a viewer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum InstrumentKind {
    /// One imaging part forming a virtual image (or one at infinity) of a near object.
    Magnifier,
    /// An objective forming a real image that an eyepiece sends to the eye.
    Microscope,
    /// An afocal bench: parallel light in, parallel light out.
    Telescope,
}

impl InstrumentKind {
    /// The word for a person.
    pub fn word(self) -> &'static str {
        match self {
            InstrumentKind::Magnifier => "magnifier",
            InstrumentKind::Microscope => "microscope",
            InstrumentKind::Telescope => "telescope",
        }
    }
}

/// The field of view and what limits it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FieldOfView {
    /// The part whose rim stops the chief ray first (the field stop).
    pub field_stop: String,
    /// The real field's full angle seen from the entrance pupil, degrees (2ω).
    pub real_field_deg: Option<f64>,
    /// The real field's diameter in the object plane, mm (a near object only).
    pub real_field_mm: Option<f64>,
    /// The apparent field's full angle seen from the exit pupil, degrees (2ω′, tan ω′ = |ū′|).
    pub apparent_field_deg: Option<f64>,
}

/// The figures a viewer gets (JSON key `instrument`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InstrumentFigures {
    /// What kind of instrument.
    pub kind: InstrumentKind,
    /// Magnifier: 250/f, image at infinity, eye relaxed.
    pub magnifying_power_relaxed: Option<f64>,
    /// Magnifier: 250/f + 1, image at the 250 mm near point, eye at the lens.
    pub magnifying_power_near_point: Option<f64>,
    /// Microscope: the objective's part name.
    pub objective: Option<String>,
    /// Microscope: the eyepiece's part name.
    pub eyepiece: Option<String>,
    /// Microscope: the objective's focal length, mm.
    pub objective_focal_mm: Option<f64>,
    /// Microscope: the eyepiece's focal length, mm.
    pub eyepiece_focal_mm: Option<f64>,
    /// Microscope: the optical tube length L, the objective's back focus to the eyepiece's front focus, mm.
    pub tube_length_mm: Option<f64>,
    /// Microscope: the objective's lateral magnification as arranged.
    pub objective_magnification: Option<f64>,
    /// Microscope: the eyepiece's magnifying power 250/f_e.
    pub eyepiece_power: Option<f64>,
    /// Microscope: the overall magnification m_o × 250/f_e (negative: inverted).
    pub overall_magnification: Option<f64>,
    /// Microscope: −(L/f_o)(250/f_e), the textbook figure with the intermediate image at the eyepiece's
    /// front focus.
    pub overall_magnification_formula: Option<f64>,
    /// Telescope: the angular magnification (negative: inverted view).
    pub angular_magnification: Option<f64>,
    /// The magnifying power as arranged, the eye at the exit pupil (null for a distant object).
    pub magnifying_power_as_arranged: Option<f64>,
    /// The exit pupil's diameter, mm.
    pub exit_pupil_diameter_mm: Option<f64>,
    /// The exit pupil's rail position (null: at infinity).
    pub exit_pupil_at_mm: Option<f64>,
    /// Eye relief: from the last vertex to the exit pupil along the light, mm (negative: inside the optics).
    pub eye_relief_mm: Option<f64>,
    /// The field of view (null when no rim other than the stop limits the chief ray).
    pub field_of_view: Option<FieldOfView>,
}

impl InstrumentFigures {
    fn empty(kind: InstrumentKind) -> InstrumentFigures {
        InstrumentFigures {
            kind,
            magnifying_power_relaxed: None,
            magnifying_power_near_point: None,
            objective: None,
            eyepiece: None,
            objective_focal_mm: None,
            eyepiece_focal_mm: None,
            tube_length_mm: None,
            objective_magnification: None,
            eyepiece_power: None,
            overall_magnification: None,
            overall_magnification_formula: None,
            angular_magnification: None,
            magnifying_power_as_arranged: None,
            exit_pupil_diameter_mm: None,
            exit_pupil_at_mm: None,
            eye_relief_mm: None,
            field_of_view: None,
        }
    }

    /// The instrument figures of an evaluated bench, or `None` when it is not something a person looks
    /// through (a final image on a screen). `seq` and `pupils` are the primary wavelength's, `part_first_order`
    /// each part's own first order, all from the same evaluation as `report`.
    pub fn of(
        bench: &Bench,
        report: &Report,
        seq: &Sequence,
        pupils: &Pupils,
        part_first_order: &[Option<FirstOrder>],
    ) -> Option<InstrumentFigures> {
        let kind = if report.afocal.is_some() {
            InstrumentKind::Telescope
        } else if report.viewing.is_some() && matches!(bench.object, ObjectSpec::Point { .. }) {
            match report.images.len() {
                0 => return None,
                1 => InstrumentKind::Magnifier,
                _ => InstrumentKind::Microscope,
            }
        } else {
            return None;
        };
        let mut f = InstrumentFigures::empty(kind);
        let last_vertex = seq.steps.last()?.z_mm;
        f.exit_pupil_diameter_mm = pupils.exit_pupil_diameter_mm;
        f.exit_pupil_at_mm = pupils.exit_pupil_at_mm;
        f.eye_relief_mm = pupils.exit_pupil_at_mm.map(|z| (z - last_vertex) * seq.dir_image());
        match kind {
            InstrumentKind::Telescope => {
                f.angular_magnification = report.afocal.as_ref().map(|a| a.angular_magnification)
            }
            InstrumentKind::Magnifier => {
                let efl = report.first_order.efl_mm.filter(|e| *e > 0.0);
                f.magnifying_power_relaxed = efl.map(|e| NEAR_POINT_MM / e);
                f.magnifying_power_near_point = efl.map(|e| NEAR_POINT_MM / e + 1.0);
            }
            InstrumentKind::Microscope => {
                let index = |name: &str| bench.parts.iter().position(|p| p.name == name);
                let (first, last) = (report.images.first()?, report.images.last()?);
                let (o, e) = (index(&first.after_part)?, index(&last.after_part)?);
                let (fo, fe) = (part_first_order.get(o)?.as_ref(), part_first_order.get(e)?.as_ref());
                f.objective = Some(first.after_part.clone());
                f.eyepiece = Some(last.after_part.clone());
                f.objective_focal_mm = fo.and_then(|x| x.efl_mm);
                f.eyepiece_focal_mm = fe.and_then(|x| x.efl_mm);
                f.tube_length_mm = match (fo.and_then(|x| x.back_focus_at_mm), fe.and_then(|x| x.front_focus_at_mm)) {
                    (Some(b), Some(ff)) => Some(ff - b),
                    _ => None,
                };
                f.objective_magnification = first.magnification;
                f.eyepiece_power = f.eyepiece_focal_mm.filter(|x| *x > 0.0).map(|x| NEAR_POINT_MM / x);
                f.overall_magnification = match (f.objective_magnification, f.eyepiece_power) {
                    (Some(m), Some(p)) => Some(m * p),
                    _ => None,
                };
                f.overall_magnification_formula = match (f.tube_length_mm, f.objective_focal_mm, f.eyepiece_power) {
                    (Some(l), Some(fo), Some(p)) if fo != 0.0 => Some(-(l / fo) * p),
                    _ => None,
                };
            }
        }
        if let (ObjectSpec::Point { height_mm, .. }, Some(v)) = (bench.object, &report.viewing) {
            // The object's angle at the near point; a height so small that it rounds to no angle there
            // (a subnormal) has nothing to compare with, and gets no figure rather than 0/0.
            let seen_at_near_point = height_mm.abs() / NEAR_POINT_MM;
            f.magnifying_power_as_arranged = v
                .angular_size_deg
                .map(|a| a.to_radians().tan() / seen_at_near_point)
                .filter(|m| seen_at_near_point > 0.0 && m.is_finite());
        }
        f.field_of_view = field_of_view(bench, seq, pupils);
        Some(f)
    }

    /// The readout's lines, appended to `t` (the report's text and the workbench read the same lines).
    pub fn write_text(&self, t: &mut String) {
        let num = |v: Option<f64>, d: usize| v.map_or_else(|| "—".to_string(), |v| fixed(v, d));
        let _ = writeln!(t, "\nInstrument figures ({}; what a viewer gets)", self.kind.word());
        match self.kind {
            InstrumentKind::Magnifier => {
                let _ = writeln!(
                    t,
                    "  magnifying power {}× with the eye relaxed (image at infinity, 250/f), {}× with the image at the 250 mm near point (250/f + 1)",
                    num(self.magnifying_power_relaxed, 3),
                    num(self.magnifying_power_near_point, 3)
                );
            }
            InstrumentKind::Microscope => {
                let _ = writeln!(
                    t,
                    "  objective \"{}\" (f {} mm) magnifies {}×, eyepiece \"{}\" (f {} mm) {}× (250/f): overall {}×",
                    self.objective.as_deref().unwrap_or("?"),
                    num(self.objective_focal_mm, 3),
                    num(self.objective_magnification, 4),
                    self.eyepiece.as_deref().unwrap_or("?"),
                    num(self.eyepiece_focal_mm, 3),
                    num(self.eyepiece_power, 3),
                    num(self.overall_magnification, 3)
                );
                let _ = writeln!(
                    t,
                    "  optical tube length {} mm; -(L/f_o)(250/f_e) = {}×",
                    num(self.tube_length_mm, 3),
                    num(self.overall_magnification_formula, 3)
                );
            }
            InstrumentKind::Telescope => {
                let _ = writeln!(t, "  angular magnification {}×", num(self.angular_magnification, 4));
            }
        }
        if let Some(m) = self.magnifying_power_as_arranged {
            let _ =
                writeln!(t, "  as arranged, eye at the exit pupil: {}× against the object seen at 250 mm", fixed(m, 3));
        }
        let pupil_at =
            self.exit_pupil_at_mm.map_or_else(|| "at infinity".to_string(), |z| format!("at {} mm", fixed(z, 3)));
        let _ = writeln!(
            t,
            "  exit pupil {} mm across, {pupil_at}; eye relief {} mm",
            num(self.exit_pupil_diameter_mm, 3),
            num(self.eye_relief_mm, 3)
        );
        match &self.field_of_view {
            Some(fov) => {
                let real = match (fov.real_field_mm, fov.real_field_deg) {
                    (Some(mm), _) => format!("{} mm of the object", fixed(mm, 3)),
                    (None, Some(d)) => format!("{}°", fixed(d, 3)),
                    _ => "—".into(),
                };
                let _ = writeln!(
                    t,
                    "  field of view: real {real}, apparent {}° (field stop \"{}\", the field's edge half vignetted)",
                    num(fov.apparent_field_deg, 3),
                    fov.field_stop
                );
            }
            None => {
                let _ = writeln!(t, "  field of view: no rim but the stop limits it (the eye's own pupil will)");
            }
        }
    }
}

/// The field stop and the field it lets through, from the paraxial chief and marginal rays the pupils hold.
fn field_of_view(bench: &Bench, seq: &Sequence, p: &Pupils) -> Option<FieldOfView> {
    let stop = match p.stop {
        StopAt::Surface(i) => Some(i),
        StopAt::Beam => None,
    };
    // The share of the bench's off-axis field at which each rim stops the chief ray.
    let (k, share) = seq
        .steps
        .iter()
        .zip(&p.chief)
        .enumerate()
        .filter(|(i, (s, c))| Some(*i) != stop && s.semi_aperture_mm.is_finite() && c.y_mm != 0.0)
        .map(|(i, (s, c))| (i, s.semi_aperture_mm / c.y_mm.abs()))
        // A chief ray so low (a subnormal field) that a rim's share overflows says nothing of a field stop.
        .filter(|(_, share)| share.is_finite())
        .min_by(|a, b| a.1.total_cmp(&b.1))?;
    let last = p.chief.last()?;
    let apparent = (last.nu / seq.n_image()).abs() * share;
    let mut fov = FieldOfView {
        field_stop: bench.parts[seq.steps[k].element].name.clone(),
        real_field_deg: None,
        real_field_mm: None,
        apparent_field_deg: Some(2.0 * apparent.atan().to_degrees()),
    };
    match bench.object {
        ObjectSpec::Point { at_mm, height_mm } => {
            fov.real_field_mm = Some(2.0 * (share * height_mm).abs()).filter(|mm| mm.is_finite());
            fov.real_field_deg = p
                .entrance_pupil_at_mm
                .filter(|z| (z - at_mm).abs() > 0.0)
                .map(|z| 2.0 * (share * height_mm / (z - at_mm)).abs().atan().to_degrees());
        }
        ObjectSpec::Distant { field_deg, .. } => {
            fov.real_field_deg = Some(2.0 * (share * field_deg.to_radians().tan()).abs().atan().to_degrees());
        }
    }
    Some(fov)
}
