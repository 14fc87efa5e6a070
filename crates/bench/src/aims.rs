//! Aims: what the user wants of a bench, checked against its report. Each aim gives the value the bench
//! reaches, whether that is within the aim's tolerance, and by how much it misses in units of the
//! tolerance (0 when met), so that the report, the workbench and the arranger all judge aims the same way.

use crate::model::{Aim, Bench, ObjectSpec, PartKind};
use crate::report::{Report, fixed};
use serde::Serialize;

/// One aim as the bench meets it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AimStatus {
    /// The aim in words, with its target: "magnification -1 ± 0.01".
    pub aim: String,
    /// What the bench reaches (null: the figure does not exist here, e.g. no final image).
    pub value: Option<f64>,
    /// The value's unit ("" for a ratio).
    pub unit: &'static str,
    /// Whether the value is within the aim's tolerance.
    pub met: bool,
    /// How far outside the tolerance the value lies, in tolerances (0 when met; 1e3 when there is no
    /// value at all), for ranking.
    pub miss: f64,
    /// Why there is no value, or what to look at (empty when there is nothing to say).
    pub note: String,
}

impl AimStatus {
    /// The aim as a line for a person: "met   magnification -1.0000 ± 0.0100: -1.00000".
    pub fn line(&self) -> String {
        let mark = if self.met { "met    " } else { "missed " };
        let value = self.value.map_or_else(|| "—".to_string(), |v| format!("{} {}", fixed(v, 5), self.unit));
        let note = if self.note.is_empty() { String::new() } else { format!(" ({})", self.note) };
        format!("{mark}{}: {}{note}", self.aim, value.trim_end())
    }
}

/// The miss of an aim with no value: large, so that any value ranks before none.
pub const NO_VALUE_MISS: f64 = 1e3;

/// The bench's length as [`Aim::TotalLength`] counts it: from the object (a distant object: the first
/// part) to the farthest part end or real final image.
pub fn total_length_mm(bench: &Bench, report: &Report) -> Option<f64> {
    let start = match bench.object {
        ObjectSpec::Point { at_mm, .. } => Some(at_mm),
        ObjectSpec::Distant { .. } => bench.parts.iter().map(|p| p.at_mm).reduce(f64::min),
    }?;
    let parts_end = bench.parts.iter().map(|p| p.end_mm()).fold(start, f64::max);
    let image = report.images.last().filter(|i| i.real).and_then(|i| i.at_mm).unwrap_or(start);
    Some(parts_end.max(image) - start)
}

/// The smallest gap between neighbouring parts' carriers (or glass, without a carrier), mm; `None`
/// with fewer than two parts. Negative when two overlap.
pub fn smallest_carrier_gap_mm(bench: &Bench) -> Option<f64> {
    let mut spans: Vec<(f64, f64)> =
        bench.parts.iter().map(|p| p.carrier_span_mm().unwrap_or((p.at_mm, p.end_mm()))).collect();
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    spans.windows(2).map(|w| w[1].0 - w[0].1).reduce(f64::min)
}

/// Each of the bench's aims as its report says the bench meets them.
pub fn assess(bench: &Bench, report: &Report) -> Vec<AimStatus> {
    bench.aims.iter().map(|aim| assess_one(bench, report, aim)).collect()
}

/// Within `value ± tolerance`: the miss in tolerances (a zero tolerance counts a miss in units of 1e-9
/// of the target, or of 1e-9 when the target is 0).
fn within(aim: String, value: Option<f64>, unit: &'static str, target: f64, tolerance: f64, none: &str) -> AimStatus {
    match value {
        Some(v) => {
            let off = (v - target).abs();
            let scale = if tolerance > 0.0 { tolerance } else { 1e-9 * target.abs().max(1.0) };
            let met = off <= tolerance;
            AimStatus {
                aim,
                value: Some(v),
                unit,
                met,
                miss: if met { 0.0 } else { (off - tolerance) / scale },
                note: String::new(),
            }
        }
        None => AimStatus { aim, value: None, unit, met: false, miss: NO_VALUE_MISS, note: none.into() },
    }
}

/// At most `limit`: the miss in units of the limit.
fn at_most(aim: String, value: Option<f64>, unit: &'static str, limit: f64, none: &str) -> AimStatus {
    match value {
        Some(v) => {
            let met = v <= limit;
            let miss = if met { 0.0 } else { (v - limit) / limit.abs().max(1e-12) };
            AimStatus { aim, value: Some(v), unit, met, miss, note: String::new() }
        }
        None => AimStatus { aim, value: None, unit, met: false, miss: NO_VALUE_MISS, note: none.into() },
    }
}

fn assess_one(bench: &Bench, report: &Report, aim: &Aim) -> AimStatus {
    let last = report.images.last();
    let no_image = "the bench forms no final image at a finite distance";
    match aim {
        Aim::SharpOn { screen, rms_um } => {
            let words = format!("sharp image on \"{screen}\": RMS spot at most {} µm", fixed(*rms_um, 2));
            let fig = report.screens.iter().find(|s| &s.part == screen);
            let value = fig.and_then(|s| s.rms_spot_um);
            let mut status =
                at_most(words, value, "µm", *rms_um, "no light reaches the screen, or it is not on the bench");
            if let Some(m) = fig.and_then(|s| s.move_to_best_focus_mm).filter(|_| !status.met) {
                status.note = format!("its best focus is {} mm away", fixed(m, 3));
            }
            status
        }
        Aim::Magnification { value, tolerance } => within(
            format!("magnification {} ± {}", fixed(*value, 4), fixed(*tolerance, 4)),
            last.and_then(|i| i.magnification),
            "",
            *value,
            *tolerance,
            no_image,
        ),
        Aim::ObjectToImage { distance_mm, tolerance_mm } => {
            let object = match bench.object {
                ObjectSpec::Point { at_mm, .. } => Some(at_mm),
                ObjectSpec::Distant { .. } => None,
            };
            let value = last.and_then(|i| i.at_mm).zip(object).map(|(z, o)| z - o);
            within(
                format!("object to image {} ± {} mm", fixed(*distance_mm, 3), fixed(*tolerance_mm, 3)),
                value,
                "mm",
                *distance_mm,
                *tolerance_mm,
                no_image,
            )
        }
        Aim::TotalLength { at_most_mm } => at_most(
            format!("total length at most {} mm", fixed(*at_most_mm, 3)),
            total_length_mm(bench, report),
            "mm",
            *at_most_mm,
            "the bench has no parts",
        ),
        Aim::AngularMagnification { value, tolerance } => within(
            format!("afocal, angular magnification {} ± {}", fixed(*value, 4), fixed(*tolerance, 4)),
            report.afocal.as_ref().map(|a| a.angular_magnification),
            "",
            *value,
            *tolerance,
            "the bench is not afocal (parallel light in does not leave parallel)",
        ),
        Aim::BeamExpansion { ratio, tolerance } => within(
            format!("afocal, beam widened {} ± {} times", fixed(*ratio, 4), fixed(*tolerance, 4)),
            report.afocal.as_ref().map(|a| 1.0 / a.angular_magnification.abs()),
            "",
            *ratio,
            *tolerance,
            "the bench is not afocal (parallel light in does not leave parallel)",
        ),
        Aim::ImageHeight { height_mm, tolerance_mm } => within(
            format!("image height {} ± {} mm", fixed(*height_mm, 3), fixed(*tolerance_mm, 3)),
            last.and_then(|i| i.height_mm),
            "mm",
            *height_mm,
            *tolerance_mm,
            no_image,
        ),
        Aim::WorkingFNumber { min, max } => {
            let words = format!("working f-number from {} to {}", fixed(*min, 2), fixed(*max, 2));
            let value = report.aberrations.working_f_number;
            let mid = 0.5 * (min + max);
            within(words, value, "", mid, 0.5 * (max - min), "the bench forms no real image to give one")
        }
        Aim::CarrierGap { at_least_mm } => {
            let words = format!("carriers at least {} mm apart", fixed(*at_least_mm, 3));
            let value = smallest_carrier_gap_mm(bench);
            match value {
                Some(g) => {
                    let met = g >= *at_least_mm;
                    let miss = if met { 0.0 } else { (at_least_mm - g) / at_least_mm.max(1.0) };
                    AimStatus { aim: words, value: Some(g), unit: "mm", met, miss, note: String::new() }
                }
                None => AimStatus {
                    aim: words,
                    value: None,
                    unit: "mm",
                    met: true,
                    miss: 0.0,
                    note: "fewer than two parts".into(),
                },
            }
        }
    }
}

/// Whether `kind` can be placed by the arranger (lenses: thin lenses, singlets and doublets).
pub fn placeable(kind: &PartKind) -> bool {
    matches!(kind, PartKind::ThinLens { .. } | PartKind::Singlet { .. } | PartKind::Doublet { .. })
}
