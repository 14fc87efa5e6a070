//! The eye on the bench: what its retina gets (the blur there in µm and minutes of arc), whether it can
//! focus what the bench puts before it, and the spectacle or contact lens that corrects it.
//!
//! Projected from the one evaluation: the retina is one of the spot planes the analysis was asked for
//! (the eye's last vertex plus its vitreous to the retina), the light arriving at the cornea is the image
//! before the eye in the report, and the eye's own numbers come from `lumenrail_optics::eye`. Lumenrail
//! models a schematic eye for teaching; it tests no one's eyes (the eye caution says so).
//!
//! Vergences are in dioptres at the corneal vertex, positive for converging light. The eye focuses the
//! vergence K − A (refraction K, accommodation A); to focus light of vergence V it needs A = K − V, which it
//! can give when 0 ≤ A ≤ its amplitude. Blur: the geometric diameter that holds every traced ray on the
//! retina (exact trace over the pupil), and its angle seen from the eye's back nodal point; the paraxial
//! figure beside it is the entrance pupil's diameter times the defocus (the first-order blur angle of a
//! defocused eye, e.g. Bennett & Rabbetts, *Clinical Visual Optics*; recalled from memory).

use crate::drawer::Drawer;
use crate::model::{Bench, DEFAULT_VERTEX_MM, ObjectSpec, PartKind};
use crate::report::{Report, fixed};
use lumenrail_optics::eye::{EyeState, spectacle_power_d};
use lumenrail_optics::paraxial::FirstOrder;
use lumenrail_optics::spot::PlaneSpot;
use serde::Serialize;
use std::fmt::Write as _;

/// The caution every bench with an eye carries.
pub const EYE_CAUTION: &str = "caution: the eye here is a published schematic eye for teaching; Lumenrail tests no one's eyes and prescribes nothing. Never look at the sun, a laser or a bright lamp through any optic. For your own eyes and eyewear, see an eye-care professional.";

/// Dioptres within which the eye counts as focused (common practice: a quarter dioptre is the step of
/// spectacle prescriptions, and about what a normal depth of focus hides).
pub const FOCUS_TOLERANCE_D: f64 = 0.25;

/// Minutes of arc in a radian.
const ARCMIN_PER_RAD: f64 = 180.0 * 60.0 / std::f64::consts::PI;

/// What an eye part gets (JSON key `eye`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EyeFigures {
    /// The eye part.
    pub part: String,
    /// The schematic eye and its source.
    pub model: String,
    /// Pupil diameter, mm.
    pub pupil_mm: f64,
    /// The relaxed eye's refraction K (far point vergence), dioptres.
    pub refraction_d: f64,
    /// The far point, mm from the cornea (negative: in front; null: at infinity).
    pub far_point_mm: Option<f64>,
    /// The near point, mm from the cornea (negative: in front; null: at infinity).
    pub near_point_mm: Option<f64>,
    /// The accommodation in use, dioptres.
    pub accommodation_d: f64,
    /// The most it can accommodate, dioptres.
    pub amplitude_d: f64,
    /// Axial length (cornea to retina), mm.
    pub axial_length_mm: f64,
    /// The retina's rail position.
    pub retina_at_mm: f64,
    /// The eye's power in its state of use, dioptres (its own first order, alone in air).
    pub power_d: Option<f64>,
    /// The vergence of the light arriving at the cornea from the object through the parts before the eye.
    pub arriving_vergence_d: f64,
    /// The accommodation the eye needs to focus that light (K − V), dioptres.
    pub needed_accommodation_d: f64,
    /// Whether it can (0 ≤ needed ≤ amplitude, within [`FOCUS_TOLERANCE_D`]).
    pub can_focus: bool,
    /// The defocus as set: the arriving vergence minus the vergence the eye focuses, dioptres.
    pub defocus_d: f64,
    /// The blur on the retina: the diameter that holds every traced ray, µm.
    pub blur_diameter_um: Option<f64>,
    /// Twice the RMS radius on the retina, µm.
    pub rms_diameter_um: Option<f64>,
    /// The blur's angle seen from the eye's back nodal point, minutes of arc.
    pub blur_arcmin: Option<f64>,
    /// The first-order blur angle: entrance pupil diameter × |defocus|, minutes of arc.
    pub paraxial_blur_arcmin: Option<f64>,
    /// The spectacle plane's distance in front of the cornea, mm.
    pub vertex_mm: f64,
    /// The spectacle lens at that plane that corrects the eye for distance, K/(1 + dK), dioptres.
    pub spectacle_power_d: Option<f64>,
    /// The contact lens that does (d = 0): K itself, dioptres.
    pub contact_lens_power_d: f64,
    /// For a near object straight before the eye: the spectacle lens that lets the relaxed eye see it
    /// sharply, dioptres.
    pub near_spectacle_power_d: Option<f64>,
}

impl EyeFigures {
    /// The eye's figures on an evaluated bench: `retina` is the analysis's spot on the retina plane,
    /// `eye_first_order` the eye's own first order and `report` the same evaluation's report.
    pub fn of(
        bench: &Bench,
        index: usize,
        report: &Report,
        retina: Option<&PlaneSpot>,
        eye_first_order: Option<&FirstOrder>,
    ) -> Option<EyeFigures> {
        let part = bench.parts.get(index)?;
        let PartKind::Eye { model, pupil_mm, refraction_d, accommodation_d, vertex_mm, .. } = &part.kind else {
            return None;
        };
        let state: EyeState = part.kind.eye_state().ok()?;
        let cornea = part.at_mm;
        let arriving_vergence_d = arriving_vergence(bench, report, cornea);
        let needed = refraction_d - arriving_vergence_d;
        let can_focus = needed >= -FOCUS_TOLERANCE_D && needed <= state.amplitude_d + FOCUS_TOLERANCE_D;
        let defocus_d = arriving_vergence_d - state.focused_vergence_d();
        let nodal = eye_first_order.and_then(|f| f.back_nodal_at_mm);
        let retina_at_mm = cornea + state.retina_mm;
        let blur_mm = retina.map(|p| 2.0 * p.geometric_mm);
        let ep = report.stop.as_ref().filter(|s| s.part == part.name).and_then(|s| s.entrance_pupil_diameter_mm);
        let vertex = vertex_mm.unwrap_or(DEFAULT_VERTEX_MM);
        let near_spectacle_power_d = match bench.object {
            ObjectSpec::Point { at_mm, .. } if report.images.len() == 1 && at_mm < cornea - vertex => {
                // The object's vergence at the spectacle plane, and what must leave it to reach the cornea
                // with the far point's vergence.
                let arriving = 1000.0 / (at_mm - (cornea - vertex));
                spectacle_power_d(*refraction_d, vertex).map(|needed_out| needed_out - arriving)
            }
            _ => None,
        };
        Some(EyeFigures {
            part: part.name.clone(),
            model: model.schematic().title().to_string(),
            pupil_mm: *pupil_mm,
            refraction_d: *refraction_d,
            far_point_mm: state.far_point_mm(),
            near_point_mm: state.near_point_mm(),
            accommodation_d: *accommodation_d,
            amplitude_d: state.amplitude_d,
            axial_length_mm: state.retina_mm,
            retina_at_mm,
            power_d: eye_first_order.map(|f| 1000.0 * f.power_per_mm),
            arriving_vergence_d,
            needed_accommodation_d: needed,
            can_focus,
            defocus_d,
            blur_diameter_um: blur_mm.map(|b| 1e3 * b),
            rms_diameter_um: retina.map(|p| 2e3 * p.rms_mm),
            blur_arcmin: match (blur_mm, nodal) {
                (Some(b), Some(n)) if retina_at_mm > n => Some(b / (retina_at_mm - n) * ARCMIN_PER_RAD),
                _ => None,
            },
            paraxial_blur_arcmin: ep.map(|d| d / 1000.0 * defocus_d.abs() * ARCMIN_PER_RAD),
            vertex_mm: vertex,
            spectacle_power_d: spectacle_power_d(*refraction_d, vertex),
            contact_lens_power_d: *refraction_d,
            near_spectacle_power_d,
        })
    }

    /// The readout's lines, appended to `t`.
    pub fn write_text(&self, t: &mut String) {
        let point = |v: Option<f64>| {
            v.map_or_else(
                || "at infinity".to_string(),
                |d| {
                    if d < 0.0 {
                        format!("{} mm in front", fixed(-d, 1))
                    } else {
                        format!("{} mm behind the cornea", fixed(d, 1))
                    }
                },
            )
        };
        let d = |v: f64| format!("{} D", fixed(v, 2));
        let _ = writeln!(t, "\nEye \"{}\" ({}, pupil {} mm)", self.part, self.model, fixed(self.pupil_mm, 2));
        let _ = writeln!(
            t,
            "  refraction {} (far point {}), near point {}, accommodation {} of {}",
            d(self.refraction_d),
            point(self.far_point_mm),
            point(self.near_point_mm),
            d(self.accommodation_d),
            d(self.amplitude_d)
        );
        let power = self.power_d.map_or_else(|| "—".into(), d);
        let _ = writeln!(
            t,
            "  axial length {} mm (retina at {} mm), power {power}",
            fixed(self.axial_length_mm, 3),
            fixed(self.retina_at_mm, 3)
        );
        let verdict = if !self.can_focus {
            if self.needed_accommodation_d < 0.0 {
                "it cannot focus it: the light is beyond its far point".to_string()
            } else {
                format!("it cannot focus it: it can accommodate only {}", d(self.amplitude_d))
            }
        } else if self.defocus_d.abs() <= FOCUS_TOLERANCE_D {
            "it can, and is focused on it".to_string()
        } else {
            format!("it can, with accommodation {}", d(self.needed_accommodation_d.max(0.0)))
        };
        let _ = writeln!(
            t,
            "  light arrives at the cornea with vergence {}; the eye needs {} of accommodation: {verdict}",
            d(self.arriving_vergence_d),
            d(self.needed_accommodation_d)
        );
        let um = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |x| format!("{} µm", fixed(x, 1)));
        let arcmin = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |x| format!("{} arcmin", fixed(x, 2)));
        let _ = writeln!(
            t,
            "  on the retina: blur {} across ({}; paraxial {}), RMS diameter {}, defocus {}",
            um(self.blur_diameter_um),
            arcmin(self.blur_arcmin),
            arcmin(self.paraxial_blur_arcmin),
            um(self.rms_diameter_um),
            d(self.defocus_d)
        );
        let spectacle = self.spectacle_power_d.map_or_else(|| "—".into(), d);
        let _ = writeln!(
            t,
            "  corrected for distance by a spectacle lens of {spectacle} at {} mm, or a contact lens of {}",
            fixed(self.vertex_mm, 1),
            d(self.contact_lens_power_d)
        );
        if let Some(n) = self.near_spectacle_power_d {
            let _ = writeln!(t, "  for this near object, the relaxed eye needs a spectacle lens of {}", d(n));
        }
    }
}

/// The vergence at the cornea of the light from the object through the parts before the eye: from the
/// image the parts before the eye form (the report's image before the eye's own), else the object itself.
fn arriving_vergence(bench: &Bench, report: &Report, cornea: f64) -> f64 {
    let before = report.images.len().checked_sub(2).map(|k| report.images[k].at_mm);
    let at = match before {
        Some(z) => z,
        None => match bench.object {
            ObjectSpec::Point { at_mm, .. } => Some(at_mm),
            ObjectSpec::Distant { .. } => None,
        },
    };
    at.filter(|z| (z - cornea).abs() > 0.0).map_or(0.0, |z| 1000.0 / (z - cornea))
}

/// A corrector from the drawer: the item whose power is nearest the wanted one, if within `within_d`
/// dioptres (its index in the drawer and its power at 587.6 nm, dioptres).
pub fn nearest_corrector(drawer: &Drawer, wanted_d: f64, within_d: f64) -> Option<(usize, f64)> {
    drawer
        .items
        .iter()
        .enumerate()
        .filter_map(|(k, item)| {
            let f = crate::drawer::first_order_alone(&item.part, lumenrail_optics::material::D_LINE_NM)?.efl_mm?;
            Some((k, 1000.0 / f))
        })
        .filter(|(_, p)| (p - wanted_d).abs() <= within_d)
        .min_by(|a, b| (a.1 - wanted_d).abs().total_cmp(&(b.1 - wanted_d).abs()))
}
