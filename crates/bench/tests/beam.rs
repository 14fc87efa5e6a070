//! The laser on the bench: the file field, its validation, the beam figures in the report and their
//! warnings, checked against the closed forms the optics crate is held to (tests/beam.rs there).

use lumenrail_bench::file;
use lumenrail_bench::report::{Report, WarningKind};
use std::f64::consts::PI;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn bench_text(laser: &str, parts: &str) -> String {
    format!(
        "(\n    format: 1,\n    title: \"t\",\n    rail_length_mm: 1500.0,\n    wavelengths_nm: [632.8],\n    primary_wavelength: 0,\n    object: Distant(field_deg: 0.05, beam_diameter_mm: 0.8),\n    laser: {laser},\n    parts: [\n{parts}\n    ],\n)\n"
    )
}

const LASER: &str =
    "(at_mm: 20.0, wavelength_nm: 632.8, waist_diameter_mm: 0.8, waist_at_mm: 20.0, m_squared: 1.0, power_mw: 1.0)";

fn report_of(text: &str) -> Report {
    Report::of(&file::parse("t.bench.ron", text).unwrap().bench)
}

/// The demo's ×5 Keplerian expander multiplies the waist by 5 (an afocal system of ratio M multiplies w₀
/// by M whatever the input waist's place: ABCD with C = 0; Siegman, *Lasers*, 1986), and the beam on the
/// card follows free propagation from that waist, w(z) = w₀ √(1 + (z/z_R)²).
#[test]
fn the_demo_expander_widens_the_beam_five_times() {
    let demo = lumenrail_bench::demos::find("laser-expander").unwrap();
    let r = Report::of(&file::parse("demo", demo.text).unwrap().bench);
    let b = r.beam.as_ref().expect("beam figures");
    let (w_in, w_out) = (&b.waists[0], b.waists.last().unwrap());
    assert!(w_in.after_part.is_none() && (w_in.diameter_mm - 0.8).abs() < 1e-12);
    assert!(rel(w_out.diameter_mm, 4.0) < 1e-12, "{}", w_out.diameter_mm);
    assert!(rel(w_out.far_field_half_angle_mrad, w_in.far_field_half_angle_mrad / 5.0) < 1e-12);
    // The card: free propagation from the output waist.
    let w0 = 0.5 * w_out.diameter_mm;
    let zr = PI * w0 * w0 / 632.8e-6;
    let card = &b.screens[0];
    let expected = 2.0 * w0 * (1.0 + ((card.at_mm - w_out.at_mm) / zr).powi(2)).sqrt();
    assert!(rel(card.diameter_mm, expected) < 1e-12);
    // Peak irradiance at the laser's waist: 2P/(πw₀²) = 2 mW/(π 0.16 mm²) = 3.979 mW/mm² = 0.3979 W/cm².
    let peak = w_in.peak_irradiance_w_per_cm2.unwrap();
    assert!(rel(peak, 0.1 * 2.0 / (PI * 0.16)) < 1e-12);
    // Nothing clips; the laser caution is there, and says the program classifies nothing.
    assert!(r.warnings.iter().all(|w| w.kind != WarningKind::Clipping));
    let caution = r.warnings.iter().find(|w| w.kind == WarningKind::Caution).unwrap();
    assert!(caution.message.contains("IEC 60825-1") && caution.message.contains("classifies nothing"));
    let text = r.to_text();
    assert!(text.contains("Laser beam (632.8 nm") && text.contains("W/cm²"), "{text}");
    let json: serde_json::Value = serde_json::from_str(&r.to_json()).unwrap();
    assert!(json["beam"]["waists"].as_array().unwrap().len() == 3);
    assert_eq!(json["beam"]["irradiance_unit"], "W/cm²");
}

/// An iris of radius a passes 1 − exp(−2a²/w²) (direct integration); below 99 % the report warns of
/// clipping, naming the part. For M² > 1 the share is labelled an estimate.
#[test]
fn a_tight_iris_clips_and_is_named() {
    let parts = "        (name: \"Pinhole\", at_mm: 100.0, kind: Iris(diameter_mm: 0.8)),";
    let r = report_of(&bench_text(LASER, parts));
    let b = r.beam.as_ref().unwrap();
    let p = &b.parts[0];
    let w = 0.5 * p.diameter_mm;
    assert!(rel(p.passed_share, 1.0 - (-2.0 * 0.16 / (w * w)).exp()) < 1e-12);
    let clip = r.warnings.iter().find(|w| w.kind == WarningKind::Clipping).expect("a clipping warning");
    assert_eq!(clip.part.as_deref(), Some("Pinhole"));
    assert!(!clip.message.contains("estimate"));
    let laser_m2 = LASER.replace("m_squared: 1.0", "m_squared: 1.3");
    let r = report_of(&bench_text(&laser_m2, parts));
    assert!(r.beam.as_ref().unwrap().shares_are_estimates);
    assert!(r.warnings.iter().any(|w| w.kind == WarningKind::Clipping && w.message.contains("estimate")));
}

/// A bench without a laser has no `beam` key value and no laser caution; its file reads as before and
/// is written without a `laser` line.
#[test]
fn benches_without_a_laser_are_unchanged() {
    let demo = lumenrail_bench::demos::find("one-lens-screen").unwrap();
    let loaded = file::parse("demo", demo.text).unwrap();
    assert!(loaded.bench.laser.is_none());
    assert!(!file::to_text(&loaded.bench).contains("laser"));
    let r = Report::of(&loaded.bench);
    assert!(r.beam.is_none());
    assert!(!r.warnings.iter().any(|w| w.message.contains("laser")));
}

/// A laser bench round-trips through the file, with the laser written plainly.
#[test]
fn a_laser_bench_round_trips() {
    let demo = lumenrail_bench::demos::find("laser-expander").unwrap();
    let bench = file::parse("demo", demo.text).unwrap().bench;
    let text = file::to_text(&bench);
    assert!(text.contains("    laser: (at_mm: 20.0"), "{text}");
    assert_eq!(file::parse("again", &text).unwrap().bench, bench);
}

/// Bad laser numbers are refused with the place of the field and plain words.
#[test]
fn bad_laser_numbers_are_placed() {
    let parts = "        (name: \"L\", at_mm: 100.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 10.0)),";
    let cases = [
        ("waist_diameter_mm: 0.8", "waist_diameter_mm: -1.0", "waist_diameter_mm", "waist diameter"),
        ("m_squared: 1.0", "m_squared: 0.7", "m_squared", "at least 1"),
        ("wavelength_nm: 632.8", "wavelength_nm: 532.0", "wavelength_nm", "not one of the bench's wavelengths"),
        ("power_mw: 1.0", "power_mw: 0.0", "power_mw", "power"),
        ("(at_mm: 20.0", "(at_mm: 200.0", "laser", "must come before every part"),
    ];
    for (from, to, key, words) in cases {
        let text = bench_text(&LASER.replace(from, to), parts);
        let err = file::parse("t.bench.ron", &text).unwrap_err();
        let d = &err.diagnostics[0];
        let line = text.lines().position(|l| l.contains(&format!("{key}:"))).unwrap() + 1;
        assert_eq!(d.place.line, line, "{d}");
        let col = text.lines().nth(line - 1).unwrap().find(&format!("{key}:")).unwrap() + 1;
        assert_eq!(d.place.col, col, "{d}");
        assert!(d.message.contains(words), "{d}");
    }
}

/// The beam view projects the evaluation: its curve starts at the laser's waist and ends on the card at
/// the report's diameter there, follows free propagation w(z) = w₀√(1 + (z/z_R)²) from the laser to the
/// first lens (Siegman, *Lasers*, 1986), marks the report's real waists and every part, and computes
/// nothing (one compilation and one analysis per revision: the evaluation's own). A bench without a laser
/// has no beam view and says why.
#[test]
fn the_beam_view_projects_the_evaluation() {
    use lumenrail_bench::evaluation::{Evaluation, counters};
    use lumenrail_bench::views::{ViewKind, ViewRequest, Views};
    let demo = lumenrail_bench::demos::find("laser-pinhole").unwrap();
    let bench = file::parse("demo", demo.text).unwrap().bench;
    let e = Evaluation::of(&bench);
    let before = counters();
    let views = Views::only(&e, &ViewRequest::default(), &[ViewKind::Beam]);
    assert_eq!(counters(), before, "the view compiled or analysed again");
    let v = views.beam.as_ref().unwrap();
    assert!(views.notes.is_empty(), "{:?}", views.notes);
    let b = e.report.beam.as_ref().unwrap();
    let first = v.runs.first().and_then(|r| r.first()).unwrap();
    assert!((first.0 - 20.0).abs() < 1e-12 && rel(first.1, 0.8) < 1e-12);
    let zr = PI * 0.4 * 0.4 / 632.8e-6;
    for &(z, d) in &v.runs[0] {
        assert!(rel(d, 0.8 * (1.0 + ((z - 20.0) / zr).powi(2)).sqrt()) < 1e-12, "{z}: {d}");
    }
    let last = v.runs.last().and_then(|r| r.last()).unwrap();
    let card = &b.screens[0];
    assert!((last.0 - card.at_mm).abs() < 1e-12 && rel(last.1, card.diameter_mm) < 1e-12);
    let real: Vec<f64> = b.waists.iter().filter(|w| w.real).map(|w| w.at_mm).collect();
    let marked: Vec<f64> = v.waists.iter().map(|w| w.at_mm).collect();
    // The waist behind the collimator is not reached (the focusing lens meets the beam first).
    assert_eq!(marked, [real[0], real[1], real[3]], "{real:?}");
    assert_eq!(v.parts.len(), 4);
    let plain = file::parse("t", lumenrail_bench::demos::find("one-lens-screen").unwrap().text).unwrap().bench;
    let none = Views::only(&Evaluation::of(&plain), &ViewRequest::default(), &[ViewKind::Beam]);
    assert!(none.beam.is_none() && none.notes.iter().any(|n| n.contains("no laser on the bench")));
}

/// Found by fuzzing (bench_file, `inf` in the report): a waist 2e99 mm from the laser made the beam
/// overflow. A waist more than a kilometre from the laser is refused at `waist_at_mm`.
#[test]
fn a_waist_a_kilometre_away_is_refused() {
    let far = LASER.replace("waist_at_mm: 20.0", "waist_at_mm: 2e99");
    let text = lumenrail_bench::demos::find("laser-expander").unwrap().text.to_string();
    let start = text.find("laser: (").unwrap() + "laser: ".len();
    let end = start + text[start..].find("),").unwrap() + 1;
    let bad = format!("{}{far}{}", &text[..start], &text[end..]);
    let e = lumenrail_bench::file::parse("f", &bad).unwrap_err();
    assert!(e.diagnostics[0].message.contains("more than 1000000 mm (1 km) from the laser"), "{e}");
}
