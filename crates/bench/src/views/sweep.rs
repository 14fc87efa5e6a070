//! The sweep view: RMS spot radius through focus for each point and wavelength, with the depth of focus,
//! the Airy radius and the spot view's plane marked.

use super::{Bundle, Point};
use crate::report::Report;
use lumenrail_optics::analysis::Analysis;
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::spot::AxialSpot;
use lumenrail_optics::system::Sequence;

/// Plane samples of the sweep view.
const SWEEP_POINTS: usize = 121;

/// RMS spot radius through focus for one object point at one wavelength.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// (plane position, RMS radius mm).
    pub samples: Vec<(f64, f64)>,
    /// The plane of least RMS radius and that radius (exact: RMS² is quadratic in the plane's position).
    pub best: (f64, f64),
}

/// The sweep view.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepView {
    /// On-axis best focus at the primary wavelength (the report's figure).
    pub best_focus_at_mm: f64,
    /// Depth of focus, ± mm.
    pub depth_of_focus_mm: Option<f64>,
    /// Airy radius at the primary wavelength, mm.
    pub airy_radius_mm: Option<f64>,
    /// The spot view's plane, marked.
    pub plane_at_mm: f64,
    /// One series per point and wavelength.
    pub series: Vec<SweepSeries>,
}

/// The sweep view from each point's bundle at each wavelength.
pub(super) fn sweep_view(
    analysis: &Analysis,
    object: Object,
    report: &Report,
    best_focus_at_mm: f64,
    plane_at_mm: f64,
    bundles: &[(Point, usize, Bundle)],
) -> SweepView {
    let mut view = SweepView {
        best_focus_at_mm,
        depth_of_focus_mm: report.aberrations.depth_of_focus_mm,
        airy_radius_mm: report.aberrations.airy_radius_um.map(|u| u * 1e-3),
        plane_at_mm,
        series: Vec::new(),
    };
    let planes = sweep_planes(&view, report, analysis.primary().final_image_at_mm());
    for (point, k, bundle) in bundles {
        let w = &analysis.wavelengths[*k];
        let Ok(p) = &w.pupils else { continue };
        if let Some(s) = sweep_series(&w.seq, object, p, *point, &planes, plane_at_mm, bundle) {
            view.series.push(s);
        }
    }
    view
}

/// The planes of the sweep: a range about the best focus wide enough to show the depth of focus, the
/// spherical aberration and the colour, stretched to take in the spot view's plane; the best focus
/// itself is one of the planes.
fn sweep_planes(view: &SweepView, report: &Report, paraxial_at: Option<f64>) -> Vec<f64> {
    let centre = view.best_focus_at_mm;
    let mut half = view.depth_of_focus_mm.map_or(0.0, |d| 3.0 * d);
    if let Some(z) = paraxial_at {
        half = half.max(2.0 * (z - centre).abs());
    }
    if let Some(c) = report.aberrations.chromatic_focal_shift_mm {
        half = half.max(1.5 * c.abs());
    }
    if half <= 0.0 || !half.is_finite() {
        half = 1.0;
    }
    let (mut lo, mut hi) = (centre - half, centre + half);
    let p = view.plane_at_mm;
    if (p - centre).abs() <= 10.0 * half {
        lo = lo.min(p - 0.1 * half);
        hi = hi.max(p + 0.1 * half);
    }
    let mut planes: Vec<f64> =
        (0..SWEEP_POINTS).map(|j| lo + (hi - lo) * j as f64 / (SWEEP_POINTS - 1) as f64).collect();
    planes.push(centre);
    planes.sort_by(f64::total_cmp);
    planes
}

fn sweep_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    planes: &[f64],
    view_plane: f64,
    bundle: &Bundle,
) -> Option<SweepSeries> {
    let (samples, best) = match bundle {
        Bundle::OnAxis(figures) => {
            let spot = AxialSpot::trace(seq, object, pupils, figures.rings).ok()?;
            let samples = planes.iter().map(|&z| (z, spot.rms_radius_at(z))).collect();
            (samples, (figures.best_focus_at_mm?, figures.best_rms_mm?))
        }
        Bundle::OffAxis(spot) => {
            let m = spot.moments(view_plane);
            let samples = planes.iter().map(|&z| (z, m.rms_at(z))).collect();
            let z = m.best_focus()?;
            (samples, (z, m.rms_at(z)))
        }
    };
    Some(SweepSeries { point, wavelength_nm: seq.wavelength_nm, samples, best })
}
