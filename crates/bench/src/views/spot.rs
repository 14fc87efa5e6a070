//! The spot view: where each ray of a pupil grid meets the view's plane, per point and wavelength, with
//! the RMS and geometric radius about the centroid and the Airy disk to the same scale.

use super::{Bundle, Plane, Point, ViewRequest};
use crate::evaluation::Evaluation;
use crate::report::Report;
use lumenrail_optics::analysis::Analysis;
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::sampling::{PupilSample, pupil_transmission, trace_grid};
use lumenrail_optics::system::Sequence;

/// One ray of a spot diagram.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpotRay {
    /// Normalised pupil coordinates (px, py) at the real stop.
    pub pupil: (f64, f64),
    /// The sample's share of the pupil's area in its grid (quadrature weights for the Gauss polar grid).
    pub weight: f64,
    /// Intercept x in the plane, mm from the axis.
    pub x_mm: f64,
    /// Intercept y in the plane, mm from the axis.
    pub y_mm: f64,
}

/// The spot of one object point at one wavelength.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// One per ray that got through.
    pub rays: Vec<SpotRay>,
    /// Rays of the grid that did not get through.
    pub lost: usize,
    /// Centroid (x, y), mm (area-weighted over the pupil).
    pub centroid: (f64, f64),
    /// RMS radius about the centroid, mm (area-weighted over the pupil).
    pub rms_mm: f64,
    /// Radius about the centroid that holds every ray of the grid, mm.
    pub geometric_mm: f64,
    /// Share of the real stop's area whose rays get through every aperture (computed at the primary
    /// wavelength; `None` at the others).
    pub transmission: Option<f64>,
}

/// The spot view.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotView {
    /// The plane's rail position.
    pub plane_at_mm: f64,
    /// What the plane is ("screen \"…\"", "best focus", …).
    pub plane_label: String,
    /// Airy disk radius at the primary wavelength, mm.
    pub airy_radius_mm: Option<f64>,
    /// The primary wavelength, nm (each point's spot is drawn about its centroid at this wavelength).
    pub primary_nm: f64,
    /// One series per point and wavelength.
    pub series: Vec<SpotSeries>,
}

/// The rail position and label of the spot and fan views' plane.
pub(super) fn choose_plane(evaluation: &Evaluation, plane: &Plane, best: f64) -> (f64, String) {
    let report = &evaluation.report;
    let screen_after = |name: &str| report.viewable_screens().find(|s| s.part == name).map(|s| s.at_mm);
    match plane {
        Plane::Screen(name) => {
            if let Some(z) = screen_after(name) {
                return (z, format!("screen \"{name}\""));
            }
        }
        Plane::At(z) if z.is_finite() => return (*z, format!("plane at {z} mm")),
        Plane::BestFocus => return (best, "best focus".into()),
        _ => {}
    }
    // The report lists the screens in rail order: the first one after the last part.
    match report.screens.iter().find(|s| s.after_last_part) {
        Some(s) => (s.at_mm, format!("screen \"{}\"", s.part)),
        None => (best, "best focus".into()),
    }
}

/// The spot view at `plane_at_mm` from each point's bundle at each wavelength.
pub(super) fn spot_view(
    analysis: &Analysis,
    object: Object,
    request: &ViewRequest,
    plane_at_mm: f64,
    plane_label: String,
    report: &Report,
    bundles: &[(Point, usize, Bundle)],
) -> SpotView {
    let airy_radius_mm = report.aberrations.airy_radius_um.map(|u| u * 1e-3);
    let primary = analysis.primary;
    let mut view = SpotView {
        plane_at_mm,
        plane_label,
        airy_radius_mm,
        primary_nm: analysis.primary().seq.wavelength_nm,
        series: Vec::new(),
    };
    let grid = request.grid.samples();
    for (point, k, bundle) in bundles {
        let w = &analysis.wavelengths[*k];
        let Ok(p) = &w.pupils else { continue };
        if let Some(mut s) = spot_series(&w.seq, object, p, *point, &grid, plane_at_mm, bundle) {
            if *k == primary {
                // The off-axis share is the report's; the on-axis one is a single arm's.
                s.transmission = match point {
                    Point::OffAxis => report.off_axis_area_transmission,
                    Point::OnAxis => pupil_transmission(&w.seq, object, p, 0.0).ok(),
                };
            }
            view.series.push(s);
        }
    }
    view
}

fn spot_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    grid: &[PupilSample],
    z: f64,
    bundle: &Bundle,
) -> Option<SpotSeries> {
    let traced = trace_grid(seq, object, pupils, point.fraction(), grid).ok()?;
    let rays: Vec<SpotRay> = traced
        .rays
        .iter()
        .map(|(p, r)| {
            let (x_mm, y_mm) = r.at_plane(z);
            SpotRay { pupil: (p.px, p.py), weight: p.weight, x_mm, y_mm }
        })
        .collect();
    let (centroid, rms_mm, geometric_mm) = match bundle {
        // On axis the centroid is on the axis, and the figures are the report's rings'.
        Bundle::OnAxis(f) => ((0.0, 0.0), f.planes[0].rms_mm, f.planes[0].geometric_mm),
        Bundle::OffAxis(quad) => {
            let at = quad.at_plane(z);
            let (cx, cy) = (at.centroid_x_mm, at.centroid_y_mm);
            let geometric = rays.iter().map(|r| (r.x_mm - cx).hypot(r.y_mm - cy)).fold(0.0, f64::max);
            ((cx, cy), at.rms_mm, geometric)
        }
    };
    Some(SpotSeries {
        point,
        wavelength_nm: seq.wavelength_nm,
        rays,
        lost: traced.lost,
        centroid,
        rms_mm,
        geometric_mm,
        transmission: None,
    })
}
