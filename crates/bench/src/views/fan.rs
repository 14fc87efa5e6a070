//! The fan view: transverse ray error against pupil coordinate, tangential and sagittal, measured from the
//! primary wavelength's chief ray (so lateral colour shows as an offset).

use super::Point;
use lumenrail_optics::analysis::Analysis;
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::sampling::{PupilSample, SkewAimer, trace_grid};
use lumenrail_optics::system::Sequence;

/// Points across the tangential fan (odd, so the chief ray is one of them).
const FAN_POINTS: usize = 41;

/// The ray fans of one object point at one wavelength: transverse error against pupil coordinate.
#[derive(Debug, Clone, PartialEq)]
pub struct FanSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Tangential fan: (py, y error mm) from the primary wavelength's chief ray.
    pub tangential: Vec<(f64, f64)>,
    /// Sagittal fan: (px, x error mm).
    pub sagittal: Vec<(f64, f64)>,
}

/// The fan view.
#[derive(Debug, Clone, PartialEq)]
pub struct FanView {
    /// The plane's rail position.
    pub plane_at_mm: f64,
    /// One series per point and wavelength.
    pub series: Vec<FanSeries>,
}

/// The fans of every point at every wavelength at the plane `plane_at_mm`.
pub(super) fn fan_view(analysis: &Analysis, object: Object, points: &[Point], plane_at_mm: f64) -> FanView {
    let primary = analysis.primary();
    let chief_reference = |point: Point| -> Option<f64> {
        let p = primary.pupils.as_ref().ok()?;
        SkewAimer::new(&primary.seq, object, p, point.fraction())
            .ok()
            .and_then(|a| lumenrail_optics::skew::trace_with(&primary.seq, a.chief_ray(), false).ok())
            .map(|r| r.at_plane(plane_at_mm).1)
    };
    let mut view = FanView { plane_at_mm, series: Vec::new() };
    for &point in points {
        let reference = chief_reference(point).unwrap_or(0.0);
        for w in &analysis.wavelengths {
            let Ok(p) = &w.pupils else { continue };
            if let Some(f) = fan_series(&w.seq, object, p, point, plane_at_mm, reference) {
                view.series.push(f);
            }
        }
    }
    view
}

fn fan_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    z: f64,
    reference_y: f64,
) -> Option<FanSeries> {
    let half = (FAN_POINTS - 1) / 2;
    let coords: Vec<f64> = (0..FAN_POINTS).map(|j| (j as f64 - half as f64) / half as f64).collect();
    let tangential: Vec<PupilSample> = coords.iter().map(|&py| PupilSample { px: 0.0, py, weight: 1.0 }).collect();
    let sagittal: Vec<PupilSample> = coords.iter().map(|&px| PupilSample { px, py: 0.0, weight: 1.0 }).collect();
    let t = trace_grid(seq, object, pupils, point.fraction(), &tangential).ok()?;
    let s = trace_grid(seq, object, pupils, point.fraction(), &sagittal).ok()?;
    Some(FanSeries {
        point,
        wavelength_nm: seq.wavelength_nm,
        tangential: t.rays.iter().map(|(p, r)| (p.py, r.at_plane(z).1 - reference_y)).collect(),
        sagittal: s.rays.iter().map(|(p, r)| (p.px, r.at_plane(z).0)).collect(),
    })
}
