//! The colour view: the paraxial focus and the off-axis point's lateral colour against wavelength, over
//! the range every material of the bench is valid.

use crate::compile::Compiled;
use crate::evaluation::Evaluation;
use lumenrail_optics::analysis::{Analysis, ColourSample, colour_scan};
use lumenrail_optics::field::chief_height_at;
use lumenrail_optics::material::{ABBE_RANGE_NM, Material};
use lumenrail_optics::system::Action;

/// Wavelength samples of the colour view.
const COLOUR_POINTS: usize = 61;

/// The colour view.
#[derive(Debug, Clone, PartialEq)]
pub struct ColourView {
    /// The wavelength range every material of the bench is valid over (within 380–1000 nm), nm.
    pub range_nm: (f64, f64),
    /// The primary wavelength, nm.
    pub primary_nm: f64,
    /// The bench's own wavelengths, nm.
    pub bench_nm: Vec<f64>,
    /// Evenly spaced samples across the range (and the bench's wavelengths).
    pub samples: Vec<ColourSample>,
}

/// The wavelength range every medium of the compiled bench is valid over, within the project's working
/// range 380–1000 nm.
fn common_range(compiled: &Compiled) -> (f64, f64) {
    let mut range = ABBE_RANGE_NM;
    let mut take = |m: &Material| {
        let (lo, hi) = m.range_nm();
        range = (range.0.max(lo), range.1.min(hi));
    };
    take(&compiled.system.object_medium);
    for s in &compiled.system.surfaces {
        if let Action::Refract { into } = &s.action {
            take(into);
        }
    }
    range
}

/// The colour view: samples across the common range and at the bench's own wavelengths, each with its own
/// stop, lateral colour measured at the primary wavelength's paraxial image plane.
pub(super) fn colour_view(evaluation: &Evaluation, compiled: &Compiled, analysis: &Analysis) -> Option<ColourView> {
    let bench = &evaluation.bench;
    let (mut lo, mut hi) = common_range(compiled);
    for &w in &bench.wavelengths_nm {
        (lo, hi) = (lo.min(w), hi.max(w));
    }
    if hi <= lo {
        return None;
    }
    let object = compiled.object;
    let primary = analysis.primary();
    let plane = primary.final_image_at_mm();
    let reference = plane
        .zip(primary.pupils.as_ref().ok())
        .and_then(|(z, p)| chief_height_at(&primary.seq, object, p, 1.0, z).ok());
    let mut wavelengths: Vec<f64> =
        (0..COLOUR_POINTS).map(|j| lo + (hi - lo) * j as f64 / (COLOUR_POINTS - 1) as f64).collect();
    wavelengths.extend(&bench.wavelengths_nm);
    wavelengths.sort_by(f64::total_cmp);
    wavelengths.dedup();
    // The bench's own wavelengths are already evaluated: take their samples from the analysis.
    let own = |w: f64| analysis.wavelengths.iter().position(|x| x.seq.wavelength_nm.total_cmp(&w).is_eq());
    let scanned: Vec<f64> = wavelengths.iter().copied().filter(|&w| own(w).is_none()).collect();
    let mut samples = colour_scan(&compiled.system, object, &scanned, plane, reference);
    for k in 0..analysis.wavelengths.len() {
        let w = &analysis.wavelengths[k];
        let chief =
            plane.zip(w.pupils.as_ref().ok()).and_then(|(z, p)| chief_height_at(&w.seq, object, p, 1.0, z).ok());
        samples.push(ColourSample {
            wavelength_nm: w.seq.wavelength_nm,
            focus_at_mm: w.final_image_at_mm(),
            lateral_colour_mm: chief.zip(reference).map(|(a, b)| a - b),
        });
    }
    samples.sort_by(|a, b| a.wavelength_nm.total_cmp(&b.wavelength_nm));
    samples.dedup_by(|a, b| a.wavelength_nm.total_cmp(&b.wavelength_nm).is_eq());
    Some(ColourView {
        range_nm: (lo, hi),
        primary_nm: primary.seq.wavelength_nm,
        bench_nm: bench.wavelengths_nm.clone(),
        samples,
    })
}
