//! The view CSVs read back by an independent CSV reader (the `csv` crate): every row has the header's
//! columns, every number parses and is finite, and the spot CSV's weighted rays give the view's RMS radius.

use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::views::{ViewKind, ViewRequest, Views};
use lumenrail_export::csv::view_csv;
use lumenrail_optics::sampling::Grid;

#[test]
fn every_view_csv_of_every_demo_reads_back() {
    for d in DEMOS {
        let b = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
        let views = Views::of(&Evaluation::of(&b), &ViewRequest::default());
        for kind in ViewKind::ALL {
            let Some(text) = view_csv(&views, kind) else { continue };
            let mut reader = csv::Reader::from_reader(text.as_bytes());
            let header = reader.headers().unwrap().clone();
            assert!(header.iter().all(|h| !h.is_empty()), "{} {kind:?}: {header:?}", d.name);
            let mut rows = 0;
            for record in reader.records() {
                let record = record.unwrap_or_else(|e| panic!("{} {kind:?}: {e}", d.name));
                assert_eq!(record.len(), header.len());
                for (h, field) in header.iter().zip(record.iter()) {
                    if h.ends_with("_mm") || h.ends_with("_nm") || h == "weight" || h.starts_with("pupil") {
                        // Empty means "none" (a focus at infinity, no distortion on axis).
                        if !field.is_empty() {
                            let v: f64 = field.parse().unwrap_or_else(|_| panic!("{} {kind:?} {h}: {field}", d.name));
                            assert!(v.is_finite(), "{} {kind:?} {h}: {field}", d.name);
                        }
                    }
                }
                rows += 1;
            }
            assert!(rows > 0, "{} {kind:?}", d.name);
        }
    }
}

/// With Gauss rings, the spot CSV's weights integrate over the pupil: the weighted mean square distance of
/// the on-axis primary rays from the axis is the square of the view's RMS radius (to 1e-9 relative).
#[test]
fn the_spot_csv_gives_back_the_rms_radius() {
    let d = lumenrail_bench::demos::find("plano-convex-flat-first").unwrap();
    let b = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
    let request = ViewRequest { grid: Grid::GaussRings { rings: 6, arms: 12 }, ..ViewRequest::default() };
    let views = Views::of(&Evaluation::of(&b), &request);
    let spot = views.spot.as_ref().unwrap();
    let primary = spot.series.iter().find(|s| s.wavelength_nm.total_cmp(&spot.primary_nm).is_eq()).unwrap();
    let text = view_csv(&views, ViewKind::Spot).unwrap();
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let (mut w, mut ms) = (0.0, 0.0);
    for r in reader.deserialize::<(String, f64, f64, f64, f64, f64, f64)>() {
        let (point, wl, x, y, _, _, weight) = r.unwrap();
        if point == "on-axis" && wl.total_cmp(&spot.primary_nm).is_eq() {
            w += weight;
            ms += weight * (x * x + y * y);
        }
    }
    let rms = (ms / w).sqrt();
    assert!((rms - primary.rms_mm).abs() <= 1e-9 * primary.rms_mm, "{rms} vs {}", primary.rms_mm);
}
