//! The beam view: the laser beam's 1/e² diameter along the rail, with its waists and the parts it meets
//! marked. Read from the evaluation's one [`BeamTrace`] and the report's beam figures; nothing is traced
//! again.

use crate::evaluation::Evaluation;
use lumenrail_optics::beam::BeamTrace;

/// Points of the beam view's curve in each space between surfaces (enough for a smooth waist).
pub const BEAM_VIEW_SAMPLES_PER_SPACE: usize = 96;

/// A waist marked in the beam view.
#[derive(Debug, Clone, PartialEq)]
pub struct BeamViewWaist {
    /// "the laser" or the part after which the beam narrows to it.
    pub after: String,
    /// Rail position, mm.
    pub at_mm: f64,
    /// The waist's 1/e² diameter 2w₀, mm.
    pub diameter_mm: f64,
    /// Rayleigh range, mm.
    pub rayleigh_range_mm: f64,
}

/// A part marked in the beam view: where the beam meets it, and how wide the beam is there.
#[derive(Debug, Clone, PartialEq)]
pub struct BeamViewPart {
    /// The part's name.
    pub part: String,
    /// Rail position of the first surface the beam meets there, mm.
    pub at_mm: f64,
    /// The beam's 1/e² diameter there, mm.
    pub diameter_mm: f64,
    /// The part's clear diameter, mm.
    pub clear_diameter_mm: f64,
}

/// The beam view.
#[derive(Debug, Clone, PartialEq)]
pub struct BeamView {
    /// The laser's wavelength, nm.
    pub wavelength_nm: f64,
    /// Its beam quality M².
    pub m_squared: f64,
    /// The 1/e² diameter along the light path as (rail position, diameter) runs in mm, one run per space
    /// between surfaces, from the laser's waist (or exit, when later) to the last screen the light meets.
    pub runs: Vec<Vec<(f64, f64)>>,
    /// The waists the beam really narrows to (real, and not met first by a lens or mirror), the laser's own
    /// first.
    pub waists: Vec<BeamViewWaist>,
    /// Every crossing of a part, in path order.
    pub parts: Vec<BeamViewPart>,
}

/// Where the drawn beam ends: the last screen beyond the last surface along the light, else the rail's
/// end the light travels towards. The rail's envelope and the beam view both stop there.
pub fn envelope_end_mm(evaluation: &Evaluation) -> Option<f64> {
    let compiled = evaluation.compiled()?;
    let bench = &evaluation.bench;
    let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
    let dir = compiled.final_direction;
    let last_screen = evaluation
        .screens
        .iter()
        .map(|&i| bench.parts[i].at_mm)
        .filter(|&z| (z - last_z) * dir >= 0.0)
        .max_by(|a, b| (a * dir).total_cmp(&(b * dir)));
    Some(last_screen.unwrap_or(if dir > 0.0 { bench.rail_length_mm } else { 0.0 }))
}

/// The beam view of the evaluated bench (`None` without a laser, or when its beam cannot be traced).
pub(super) fn beam_view(evaluation: &Evaluation) -> Option<BeamView> {
    let beam: &BeamTrace = evaluation.traced.as_ref()?.beam.as_ref()?;
    let figures = evaluation.report.beam.as_ref()?;
    let laser = evaluation.bench.laser.as_ref()?;
    let end = envelope_end_mm(evaluation)?;
    let runs = beam
        .envelope(laser.at_mm, end, BEAM_VIEW_SAMPLES_PER_SPACE)
        .into_iter()
        .map(|run| run.into_iter().map(|(z, r)| (z, 2.0 * r)).collect())
        .collect();
    let waists = figures
        .waists
        .iter()
        // The laser's own waist may lie inside the laser, behind its exit: not on the drawn path. An iris
        // met just before a waist does not change the beam, which still narrows to it.
        .filter(|w| {
            let reached = w.intercepted_by.as_ref().is_none_or(|p| {
                evaluation.bench.part(p).is_some_and(|p| matches!(p.kind, crate::model::PartKind::Iris { .. }))
            });
            w.real && reached && (w.after_part.is_some() || w.at_mm >= laser.at_mm)
        })
        .map(|w| BeamViewWaist {
            after: w.after_part.clone().unwrap_or_else(|| "the laser".into()),
            at_mm: w.at_mm,
            diameter_mm: w.diameter_mm,
            rayleigh_range_mm: w.rayleigh_range_mm,
        })
        .collect();
    let parts = figures
        .parts
        .iter()
        .map(|p| BeamViewPart {
            part: p.part.clone(),
            at_mm: p.at_mm,
            diameter_mm: p.diameter_mm,
            clear_diameter_mm: p.clear_diameter_mm,
        })
        .collect();
    Some(BeamView { wavelength_nm: figures.wavelength_nm, m_squared: figures.m_squared, runs, waists, parts })
}
