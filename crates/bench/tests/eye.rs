//! The eye part on the bench: its retina, its focus, its correction, and its file errors.

use lumenrail_bench::evaluation::{Evaluation, counters};
use lumenrail_bench::file::parse;
use lumenrail_bench::report::Report;
use lumenrail_optics::eye::spectacle_power_d;

fn demo(name: &str) -> Evaluation {
    let text = lumenrail_bench::demos::find(name).unwrap().text;
    let e = Evaluation::of(&parse(name, text).unwrap_or_else(|e| panic!("{e}")).bench);
    assert!(e.report.traced(), "{:?}", e.report.trace_failure);
    e
}

/// The corrected myope: a thin lens of K/(1 + dK) at d = 12 mm before a −3 D eye (Bennett & Rabbetts,
/// *Clinical Visual Optics*, effectivity) puts the distant scene's paraxial image exactly on the retina.
/// The bench's own y-nu trace through the lens and the six surfaces of the eye agrees with the formula to
/// 1e-9 mm (first-order rule).
#[test]
fn the_spectacle_formula_focuses_the_bench_on_the_retina() {
    let e = demo("myopic-eye-corrected");
    let eye = e.report.eye.as_ref().expect("eye figures");
    let image = e.report.images.last().unwrap().at_mm.unwrap();
    assert!((image - eye.retina_at_mm).abs() < 1e-9, "image {image}, retina {}", eye.retina_at_mm);
    assert!((eye.arriving_vergence_d + 3.0).abs() < 1e-9, "{}", eye.arriving_vergence_d);
    assert!(eye.can_focus && eye.defocus_d.abs() < 1e-9);
    let f = spectacle_power_d(-3.0, 12.0).unwrap();
    assert!((eye.spectacle_power_d.unwrap() - f).abs() < 1e-12);
    assert!((1000.0 / -321.3333333333333 - f).abs() < 1e-9, "the demo's lens is the formula's");
}

/// Without its spectacles the −3 D myope focuses a distant scene 3 D too strongly: defocus +3 D (the
/// arriving vergence 0 minus the far point's −3 D) and a paraxial blur angle of entrance pupil × 3 D
/// (first-order defocus blur; recomputed here from the report's entrance pupil).
#[test]
fn the_uncorrected_myope_cannot_focus_far() {
    let e = demo("myopic-eye");
    let eye = e.report.eye.as_ref().unwrap();
    assert!(!eye.can_focus);
    assert!((eye.defocus_d - 3.0).abs() < 1e-12);
    assert!((eye.needed_accommodation_d + 3.0).abs() < 1e-12);
    let ep = e.report.stop.as_ref().unwrap().entrance_pupil_diameter_mm.unwrap();
    let want = ep / 1000.0 * 3.0 * (180.0 * 60.0 / std::f64::consts::PI);
    assert!((eye.paraxial_blur_arcmin.unwrap() - want).abs() < 1e-9 * want);
    // The exact blur on the retina is larger still (the all-spherical eye's spherical aberration adds).
    assert!(eye.blur_arcmin.unwrap() > eye.paraxial_blur_arcmin.unwrap());
    assert_eq!(e.report.stop.as_ref().unwrap().part, "Student eye", "the pupil is the stop");
    assert!(e.report.warnings.iter().any(|w| w.message.contains("eye-care professional")));
}

/// The +2 D hyperope with 2 D of accommodation reading at 40 cm: the card's vergence at the cornea is
/// 1000/−400 = −2.5 D, so focusing it needs K − V = 4.5 D, more than the eye has. The reading lens at
/// 12 mm that lets the relaxed eye see it: K/(1 + dK) minus the card's vergence at the spectacle plane,
/// 1000/−388 (vergence arithmetic, Bennett & Rabbetts).
#[test]
fn the_hyperope_cannot_read_at_40_cm() {
    let e = demo("hyperopic-reading");
    let eye = e.report.eye.as_ref().unwrap();
    assert!((eye.arriving_vergence_d + 2.5).abs() < 1e-12);
    assert!((eye.needed_accommodation_d - 4.5).abs() < 1e-12);
    assert!(!eye.can_focus);
    let near = spectacle_power_d(2.0, 12.0).unwrap() - 1000.0 / -388.0;
    assert!((eye.near_spectacle_power_d.unwrap() - near).abs() < 1e-12);
    assert!(e.report.to_text().contains("it cannot focus it: it can accommodate only 2.00 D"));
}

/// Emsley's reduced eye (60 D, n' = 4/3) with a 1 mm pupil at its one surface, 8 D myopic, looking far:
/// the first-order blur angle is pupil × defocus = 8 mrad (recomputed here exactly). On the retina, by
/// similar triangles from the pupil to the focus n'/F and on to the retina n'/(F + K), the paraxial blur is
/// p|K|/(F + K) = 8/52 mm (derived); the exact trace gives 1.8 % more, the single sphere's spherical
/// aberration at the pupil's edge, so the check allows 2.5 %. The blur's angle is its size over the
/// retina's distance from the nodal point (the centre of curvature, 50/9 mm behind the vertex).
#[test]
fn the_reduced_eye_blur_follows_the_pupil_and_the_defocus() {
    let text = r#"(format: 1, title: "t", rail_length_mm: 200.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
        object: Distant(field_deg: 0.5, beam_diameter_mm: 6.0),
        parts: [(name: "Eye", at_mm: 100.0, kind: Eye(model: Reduced, pupil_mm: 1.0, refraction_d: -8.0))])"#;
    let r = Report::of(&parse("t", text).unwrap().bench);
    let eye = r.eye.unwrap();
    let arcmin_per_rad = 180.0 * 60.0 / std::f64::consts::PI;
    let want = 8.0e-3 * arcmin_per_rad;
    assert!((eye.paraxial_blur_arcmin.unwrap() - want).abs() < 1e-9 * want, "{:?}", eye.paraxial_blur_arcmin);
    let paraxial_um = 1e3 * 8.0 / 52.0;
    let um = eye.blur_diameter_um.unwrap();
    assert!(um > paraxial_um && (um - paraxial_um) < 0.025 * paraxial_um, "exact {um} µm vs {paraxial_um}");
    let retina = 4000.0 / 3.0 / 52.0;
    assert!((eye.axial_length_mm - retina).abs() < 1e-9);
    let angle = um / 1e3 / (retina - 50.0 / 9.0) * arcmin_per_rad;
    assert!((eye.blur_arcmin.unwrap() - angle).abs() < 1e-9 * angle);
}

/// An eye's numbers are checked where they stand: a pupil out of range, an accommodation beyond the eye's
/// range, a part behind the cornea.
#[test]
fn eye_errors_are_placed() {
    let bench = |kind: &str, extra: &str| {
        format!(
            "(format: 1, title: \"t\", rail_length_mm: 300.0, wavelengths_nm: [587.5618], primary_wavelength: 0,\n object: Distant(field_deg: 0.5, beam_diameter_mm: 6.0),\n parts: [\n  (name: \"Eye\", at_mm: 100.0, kind: {kind}),{extra}\n ])"
        )
    };
    let err = |text: String| parse("b.bench.ron", &text).map(|_| ()).expect_err("an error").to_string();
    let e = err(bench("Eye(model: Gullstrand, pupil_mm: 12.0)", ""));
    assert!(e.starts_with("b.bench.ron:4:") && e.contains("pupil of 12 mm"), "{e}");
    let e = err(bench("Eye(model: Gullstrand, pupil_mm: 4.0, accommodation_d: 30.0)", ""));
    assert!(e.starts_with("b.bench.ron:4:") && e.contains("accommodation of 30 D"), "{e}");
    let e = err(bench(
        "Eye(model: Reduced, pupil_mm: 4.0)",
        "\n  (name: \"Card\", at_mm: 150.0, kind: Screen(diameter_mm: 20.0)),",
    ));
    assert!(e.starts_with("b.bench.ron:5:") && e.contains("the eye must be the last part"), "{e}");
    let e = err(bench("Eye(model: Gullstrand, pupil_mm: 4.0, refraction_d: 90.0)", ""));
    assert!(e.contains("refractive error of 90 D"), "{e}");
    // Optional fields left out read as before; the bench saves and loads back the same.
    let ok = parse("b", &bench("Eye(model: Reduced, pupil_mm: 4.0)", "")).unwrap().bench;
    let again = parse("b", &lumenrail_bench::file::to_text(&ok)).unwrap().bench;
    assert_eq!(ok, again);
}

/// The eye's figures come from the one evaluation: one compilation and one analysis.
#[test]
fn the_eye_costs_one_evaluation() {
    let text = lumenrail_bench::demos::find("myopic-eye").unwrap().text;
    let bench = parse("t", text).unwrap().bench;
    let before = counters();
    let e = Evaluation::of(&bench);
    let after = counters();
    assert!(e.report.eye.is_some());
    assert_eq!((after.compilations - before.compilations, after.analyses - before.analyses), (1, 1));
    let json: serde_json::Value = serde_json::from_str(&e.report.to_json()).unwrap();
    assert_eq!(json["eye"]["can_focus"], serde_json::Value::Bool(false));
}
