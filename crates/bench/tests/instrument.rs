//! Instrument figures against the textbook formulas of magnifiers, microscopes and telescopes.

use lumenrail_bench::evaluation::{Evaluation, counters};
use lumenrail_bench::file::parse;
use lumenrail_bench::instrument::{InstrumentFigures, InstrumentKind};
use lumenrail_bench::report::Report;

fn report(text: &str) -> Report {
    let r = Report::of(&parse("test", text).unwrap_or_else(|e| panic!("{e}")).bench);
    assert!(r.traced(), "{:?}", r.trace_failure);
    r
}

fn instrument(text: &str) -> InstrumentFigures {
    report(text).instrument.expect("instrument figures")
}

fn near(object: &str, parts: &str) -> String {
    format!(
        r#"(format: 1, title: "t", rail_length_mm: 800.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: {object}, parts: [{parts}])"#
    )
}

/// First-order figures are held to 1e-9 relative (the project's rule); these are all closed forms.
fn close(a: Option<f64>, b: f64) {
    let a = a.expect("a figure");
    assert!((a - b).abs() <= 1e-9 * b.abs().max(1.0), "{a} vs {b}");
}

/// A magnifier of f = 40 mm: M = 250/f = 6.25 relaxed, 250/f + 1 = 7.25 with the image at the near point
/// (Hecht, *Optics*, sec. 5.7.4; the 250 mm near point is common practice). As arranged, with the object at
/// the front focus (image at infinity) the angle ratio is 250/f; with the object where the virtual image
/// lands 250 mm before the lens (the eye at the lens, which is the stop and so the exit pupil) it is
/// 250/f + 1.
#[test]
fn a_magnifier_gives_250_over_f_and_one_more_at_the_near_point() {
    let lens = r#"(name: "Loupe", at_mm: 300.0, kind: ThinLens(focal_mm: 40.0, diameter_mm: 30.0))"#;
    let relaxed = instrument(&near("Point(at_mm: 260.0, height_mm: 1.0)", lens));
    assert_eq!(relaxed.kind, InstrumentKind::Magnifier);
    close(relaxed.magnifying_power_relaxed, 6.25);
    close(relaxed.magnifying_power_near_point, 7.25);
    close(relaxed.magnifying_power_as_arranged, 6.25);
    // 1/s' − 1/s = 1/f with s' = −250: s = −1/(1/250 + 1/40) = −34.4827… mm.
    let s = 1.0 / (1.0 / 250.0 + 1.0 / 40.0);
    let at_near = instrument(&near(&format!("Point(at_mm: {}, height_mm: 1.0)", 300.0 - s), lens));
    close(at_near.magnifying_power_as_arranged, 7.25);
    close(at_near.eye_relief_mm, 0.0);
}

/// The teaching microscope (objective f_o = 16 mm, eyepiece f_e = 25 mm, tube length L = 128 mm, the
/// intermediate image at the eyepiece's front focus): M = −(L/f_o)(250/f_e) = −80 (Hecht, sec. 5.7.6;
/// Smith, *Modern Optical Engineering*, sec. 7.6). By Newton's equation the objective's own magnification
/// is then −L/f_o = −8 exactly, so the product and the formula agree.
#[test]
fn a_microscope_multiplies_objective_and_eyepiece() {
    let demo = lumenrail_bench::demos::find("microscope-model").unwrap();
    let f = instrument(demo.text);
    assert_eq!(f.kind, InstrumentKind::Microscope);
    close(f.objective_focal_mm, 16.0);
    close(f.eyepiece_focal_mm, 25.0);
    close(f.tube_length_mm, 128.0);
    close(f.objective_magnification, -8.0);
    close(f.eyepiece_power, 10.0);
    close(f.overall_magnification, -80.0);
    close(f.overall_magnification_formula, -(128.0 / 16.0) * (250.0 / 25.0));
    // The image leaves at infinity: the angle ratio as arranged is |M|.
    close(f.magnifying_power_as_arranged, 80.0);
}

/// A longer tube: the eyepiece moved 32 mm out and the object refocused so that the objective's image
/// sits at the eyepiece's front focus again. L = 160 mm, m_o = −L/f_o = −10 and M = −100 (Newton:
/// x' = L, x = f_o²/L before the front focus).
#[test]
fn the_tube_length_is_from_back_focus_to_front_focus() {
    let x = 16.0 * 16.0 / 160.0;
    let text = near(
        &format!("Point(at_mm: {}, height_mm: 0.2)", 100.0 - 16.0 - x),
        r#"(name: "Objective", at_mm: 100.0, kind: ThinLens(focal_mm: 16.0, diameter_mm: 10.0)),
           (name: "Eyepiece", at_mm: 301.0, kind: ThinLens(focal_mm: 25.0, diameter_mm: 20.0))"#,
    );
    let f = instrument(&text);
    close(f.tube_length_mm, 160.0);
    close(f.objective_magnification, -10.0);
    close(f.overall_magnification, -100.0);
    close(f.overall_magnification_formula, -100.0);
}

/// The schoolyard telescope (f_o = 200 mm, f_e = 25 mm, a 30 mm beam as the stop at the objective):
/// M = −f_o/f_e = −8 and the exit pupil is D/|M| = 3.75 mm (Hecht, sec. 5.7.7; Smith, sec. 7.5). The exit
/// pupil is the objective imaged by the eyepiece: 1/s' = 1/f_e − 1/(f_o + f_e), so the eye relief is
/// f_e(f_o + f_e)/f_o = 28.125 mm. The eyepiece's rim (10 mm semi-diameter, 225 mm from the objective
/// where the chief ray crosses the axis) is the field stop: tan ω = 10/225, and tan ω′ = |M| tan ω.
#[test]
fn a_telescope_gives_minus_fo_over_fe_its_exit_pupil_and_field() {
    let demo = lumenrail_bench::demos::find("keplerian-telescope").unwrap();
    let f = instrument(demo.text);
    assert_eq!(f.kind, InstrumentKind::Telescope);
    close(f.angular_magnification, -200.0 / 25.0);
    close(f.exit_pupil_diameter_mm, 30.0 / 8.0);
    close(f.eye_relief_mm, 25.0 * 225.0 / 200.0);
    let fov = f.field_of_view.expect("a field stop");
    assert_eq!(fov.field_stop, "Eyepiece");
    let tan_w: f64 = 10.0 / 225.0;
    close(fov.real_field_deg, 2.0 * tan_w.atan().to_degrees());
    close(fov.apparent_field_deg, 2.0 * (8.0 * tan_w).atan().to_degrees());
    assert!(fov.real_field_mm.is_none());
}

/// A bench whose image lands on a screen is not something a person looks through: no instrument figures.
#[test]
fn a_screen_bench_has_no_instrument_figures() {
    let demo = lumenrail_bench::demos::find("one-lens-screen").unwrap();
    assert!(report(demo.text).instrument.is_none());
}

/// The figures come from the one evaluation: one compilation and one analysis per revision.
#[test]
fn instrument_figures_cost_nothing_more() {
    let bench = parse("t", lumenrail_bench::demos::find("microscope-model").unwrap().text).unwrap().bench;
    let before = counters();
    let e = Evaluation::of(&bench);
    let after = counters();
    assert!(e.report.instrument.is_some());
    assert_eq!((after.compilations - before.compilations, after.analyses - before.analyses), (1, 1));
    let json: serde_json::Value = serde_json::from_str(&e.report.to_json()).unwrap();
    let m = json["instrument"]["overall_magnification"].as_f64().unwrap();
    assert!((m + 80.0).abs() < 1e-9, "{m}");
    assert!(e.report.to_text().contains("overall -80.000×"));
}
