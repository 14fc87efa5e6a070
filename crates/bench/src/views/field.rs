//! The field view: tangential and sagittal focus about the real chief ray, and distortion, across the
//! field from the axis to the off-axis point.

use crate::evaluation::Evaluation;
use lumenrail_optics::analysis::Analysis;
use lumenrail_optics::field::{FieldSample, field_curves};
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::pupil::Pupils;

/// Points across the field view.
pub(super) const FIELD_POINTS: usize = 11;

/// One object point of the field view.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FieldPointFigures {
    /// Object height (mm) or field angle (degrees) of the point.
    pub field: f64,
    /// Tangential focus minus the paraxial image, mm along the light.
    pub tangential_mm: f64,
    /// Sagittal focus minus the paraxial image, mm along the light.
    pub sagittal_mm: f64,
    /// Distortion, % (`None` on axis).
    pub distortion_percent: Option<f64>,
}

/// The field view.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldView {
    /// "object height, mm" or "field angle, °".
    pub field_label: &'static str,
    /// Points from the axis to the off-axis point.
    pub points: Vec<FieldPointFigures>,
}

/// The field view at the primary wavelength.
pub(super) fn field_view(
    evaluation: &Evaluation,
    analysis: &Analysis,
    object: Object,
    pupils: &Pupils,
) -> Option<FieldView> {
    let seq = analysis.seq();
    let (full, field_label) = match evaluation.bench.object {
        crate::model::ObjectSpec::Point { height_mm, .. } => (height_mm, "object height, mm"),
        crate::model::ObjectSpec::Distant { field_deg, .. } => (field_deg, "field angle, deg"),
    };
    if full == 0.0 {
        return None;
    }
    let points: Vec<FieldPointFigures> = field_curves(seq, object, pupils, FIELD_POINTS)
        .into_iter()
        .map(|s: FieldSample| FieldPointFigures {
            // The first point stands for the axis (its foci are found at a vanishing field).
            field: if s.fraction < 1e-5 { 0.0 } else { s.fraction * full },
            tangential_mm: s.tangential_mm,
            sagittal_mm: s.sagittal_mm,
            distortion_percent: s.distortion.filter(|_| s.fraction >= 1e-5).map(|d| 100.0 * d),
        })
        .collect();
    (!points.is_empty()).then_some(FieldView { field_label, points })
}
