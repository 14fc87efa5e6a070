//! Lab sheets' answer keys against the published methods, and against the bench's own trace with the lens
//! moved to the positions the key gives.

use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::file::parse;
use lumenrail_bench::lab::{Key, Lab, LabError, LabSheet};
use lumenrail_bench::model::Bench;

fn bench(text: &str) -> Bench {
    parse("t", text).unwrap_or_else(|e| panic!("{e}")).bench
}

fn displacement_bench(lens: &str) -> Bench {
    bench(&format!(
        r#"(format: 1, title: "Bessel bench", rail_length_mm: 1000.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 50.0, height_mm: 5.0),
            parts: [(name: "Lens", at_mm: 300.0, kind: {lens}),
                    (name: "Screen", at_mm: 650.0, kind: Screen(diameter_mm: 100.0))])"#
    ))
}

fn displacement_key(b: &Bench) -> lumenrail_bench::lab::DisplacementKey {
    match LabSheet::of(&Evaluation::of(b), Lab::Displacement).unwrap().key {
        Key::Displacement(k) => k,
        other => panic!("{other:?}"),
    }
}

/// The lens moved to `at_mm`: where the bench's own paraxial trace puts the final image.
fn image_with_lens_at(b: &Bench, at_mm: f64) -> f64 {
    let mut moved = b.clone();
    moved.parts[0].at_mm = at_mm;
    let e = Evaluation::of(&moved);
    e.report.images.last().unwrap().at_mm.unwrap()
}

/// A thin lens f = 100 mm, D = 600 mm: the positions are ½(D ± √(D² − 4Df)) from the object (Bessel), here
/// 300 ∓ 100√3 mm, and (D² − d²)/(4D) gives f exactly (h = 0, no systematic error).
#[test]
fn a_thin_lens_gives_bessels_positions_and_f_exactly() {
    let b = displacement_bench("ThinLens(focal_mm: 100.0, diameter_mm: 40.0)");
    let k = displacement_key(&b);
    let (dd, f) = (600.0_f64, 100.0);
    let root = (dd * dd - 4.0 * dd * f).sqrt();
    assert!((k.first_at_mm - (50.0 + 0.5 * (dd - root))).abs() < 1e-9);
    assert!((k.second_at_mm - (50.0 + 0.5 * (dd + root))).abs() < 1e-9);
    assert!((k.displacement_mm - root).abs() < 1e-9);
    assert!((k.simple_focal_mm - f).abs() < 1e-9 && k.systematic_error_mm.abs() < 1e-9);
    // The magnifications are reciprocal: m₁m₂ = 1 (the two conjugates swap).
    assert!((k.first_magnification * k.second_magnification - 1.0).abs() < 1e-12);
}

/// A thick biconvex lens (R = ±60 mm, 14 mm thick, n = 1.5168): its principal planes lie h apart, the
/// simple formula's answer exceeds the true f by exactly (h/4)(1 + d²/(D(D − h))) (derived from
/// f = ((D − h)² − d²)/(4(D − h))), and with the lens moved to either position the bench's own y-nu trace
/// puts the image on the screen (1e-9 mm: first order).
#[test]
fn a_thick_lens_has_the_systematic_error_of_the_formula() {
    let b = displacement_bench(
        "Singlet(front: Radius(60.0), back: Radius(-60.0), thickness_mm: 14.0, diameter_mm: 30.0, material: Index(1.5168))",
    );
    let k = displacement_key(&b);
    let (dd, h, d) = (k.distance_mm, k.principal_separation_mm, k.displacement_mm);
    assert!(h.abs() > 1.0, "a thick lens: h = {h}");
    let expected = h / 4.0 * (1.0 + d * d / (dd * (dd - h)));
    assert!(
        (k.systematic_error_mm - expected).abs() < 1e-9 * expected.abs(),
        "{} vs {expected}",
        k.systematic_error_mm
    );
    // Lensmaker for a thick lens (Hecht): 1/f = (n − 1)[1/R₁ − 1/R₂ + (n − 1)t/(n R₁ R₂)].
    let n: f64 = 1.5168;
    let power = (n - 1.0) * (2.0 / 60.0 - (n - 1.0) * 14.0 / (n * 3600.0));
    assert!((k.focal_mm - 1.0 / power).abs() < 1e-9 * k.focal_mm);
    for at in [k.first_at_mm, k.second_at_mm] {
        let image = image_with_lens_at(&b, at);
        assert!((image - 650.0).abs() < 1e-9, "lens at {at}: image at {image}");
    }
    let text = LabSheet::of(&Evaluation::of(&b), Lab::Displacement).unwrap();
    assert!(text.answers.iter().any(|a| a.label.starts_with("systematic error")));
}

/// Too short a bench: D = 350 mm is less than 4f = 400 mm, and the sheet says so rather than inventing
/// positions.
#[test]
fn too_short_a_bench_is_refused_with_a_reason() {
    let mut b = displacement_bench("ThinLens(focal_mm: 100.0, diameter_mm: 40.0)");
    b.parts[1].at_mm = 400.0;
    b.parts[0].at_mm = 200.0;
    let err = LabSheet::of(&Evaluation::of(&b), Lab::Displacement).unwrap_err();
    assert!(matches!(&err, LabError::Impossible(m) if m.contains("not more than 4f + h")), "{err}");
}

/// Autocollimation with the demo's thin lens f = 150 mm: the lens vertex 150 mm from the crosshair; with a
/// thick plano-convex lens (curved side first, R = 51.5 mm, 8 mm, n = 1.5) the reading is the front focal
/// length f − (H − V), and with the lens there the bench's trace returns the image to the crosshair's plane.
#[test]
fn autocollimation_reads_the_front_focal_length() {
    let demo = lumenrail_bench::demos::find("autocollimation").unwrap();
    let e = Evaluation::of(&bench(demo.text));
    let Key::Autocollimation(k) = LabSheet::of(&e, Lab::Autocollimation).unwrap().key else { panic!() };
    assert!((k.reading_mm - 150.0).abs() < 1e-9 && (k.lens_at_mm - 170.0).abs() < 1e-9);
    let thick = bench(
        r#"(format: 1, title: "t", rail_length_mm: 600.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 20.0, height_mm: 3.0),
            parts: [(name: "Lens", at_mm: 150.0, kind: Singlet(front: Radius(51.5), back: Flat, thickness_mm: 8.0, diameter_mm: 25.0, material: Index(1.5))),
                    (name: "Mirror", at_mm: 250.0, kind: Mirror(surface: Flat, diameter_mm: 40.0))])"#,
    );
    let Key::Autocollimation(k) = LabSheet::of(&Evaluation::of(&thick), Lab::Autocollimation).unwrap().key else {
        panic!()
    };
    // Plano-convex, curved side first: f = R/(n − 1) = 103 mm, H at the curved vertex (H − V = 0), so the
    // reading is f itself; the back principal plane is t/n inside (lensmaker, REFERENCES.md).
    assert!((k.focal_mm - 103.0).abs() < 1e-9 && k.systematic_error_mm.abs() < 1e-9);
    let mut flipped = thick.clone();
    flipped.parts[0].kind = flipped.parts[0].kind.turned();
    let Key::Autocollimation(k) = LabSheet::of(&Evaluation::of(&flipped), Lab::Autocollimation).unwrap().key else {
        panic!()
    };
    // Flat side first: H lies t/n = 5.333 mm behind the flat vertex, so the reading is short by that.
    assert!((k.systematic_error_mm - 8.0 / 1.5).abs() < 1e-9, "{}", k.systematic_error_mm);
    flipped.parts[0].at_mm = k.lens_at_mm;
    let image = Evaluation::of(&flipped).report.images.last().unwrap().at_mm.unwrap();
    assert!((image - 20.0).abs() < 1e-9, "returned image at {image}");
}

/// The magnification lab reads the report's final image: the projector demo's half-size inverted image.
#[test]
fn the_magnification_key_is_the_reports() {
    let demo = lumenrail_bench::demos::find("one-lens-screen").unwrap();
    let e = Evaluation::of(&bench(demo.text));
    let Key::Magnification(k) = LabSheet::of(&e, Lab::Magnification).unwrap().key else { panic!() };
    assert!((k.magnification.unwrap() + 0.5).abs() < 1e-9 && (k.image_at_mm.unwrap() - 450.0).abs() < 1e-9);
    let magnifier = lumenrail_bench::demos::find("magnifier").unwrap();
    let e = Evaluation::of(&bench(magnifier.text));
    let sheet = LabSheet::of(&e, Lab::Magnification).unwrap();
    assert!(sheet.answers.iter().any(|a| a.label.contains("250/f") && a.value == "5.000x"), "{:?}", sheet.answers);
}
