//! Report figures that no single demo covers.

use lumenrail_bench::file::parse;
use lumenrail_bench::report::Report;

fn report(text: &str) -> Report {
    let r = Report::of(&parse("test", text).unwrap_or_else(|e| panic!("{e}")).bench);
    assert!(r.traced(), "{:?}", r.trace_failure);
    r
}

const FRONT: &str = r#"(name: "Objective", at_mm: 100.0,
      kind: Singlet(front: Radius(60.0), back: Radius(-200.0), thickness_mm: 5.0, diameter_mm: 30.0, material: Named("517642"))),
    (name: "Iris", at_mm: 90.0, kind: Iris(diameter_mm: 12.0)),
    (name: "Middle screen", at_mm: 240.0, kind: Screen(diameter_mm: 40.0)),"#;

fn bench(parts: &str) -> String {
    format!(
        r#"(format: 1, title: "t", rail_length_mm: 800.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 0.0, height_mm: 3.0), parts: [{parts}])"#
    )
}

/// A screen the light crosses before its last part shows the spot of the light that has met only the
/// parts before it: exactly the figures of the same screen on a bench that ends there (an identity: the
/// later parts cannot change light that has not reached them yet).
#[test]
fn an_intermediate_screen_shows_the_light_that_reaches_it() {
    let whole = report(&bench(&format!(
        r#"{FRONT}
    (name: "Relay", at_mm: 400.0, kind: ThinLens(focal_mm: 80.0, diameter_mm: 40.0)),
    (name: "End screen", at_mm: 600.0, kind: Screen(diameter_mm: 40.0)),"#
    )));
    let cut = report(&bench(FRONT));
    let (a, b) = (&whole.screens[0], &cut.screens[0]);
    assert_eq!(a.part, "Middle screen");
    assert!(!a.after_last_part && b.after_last_part);
    for (x, y) in [
        (a.rms_spot_um, b.rms_spot_um),
        (a.geometric_spot_um, b.geometric_spot_um),
        (a.best_focus_at_mm, b.best_focus_at_mm),
        (a.best_rms_spot_um, b.best_rms_spot_um),
        (a.rms_over_airy, b.rms_over_airy),
    ] {
        let (x, y) = (x.unwrap(), y.unwrap());
        assert!((x - y).abs() <= 1e-12 * y.abs(), "{x} vs {y}");
    }
    assert!(a.rms_spot_um.unwrap() > 1.0, "a real blur: {a:?}");
    assert!(!whole.warnings.iter().any(|w| w.message.contains("Middle screen")), "{:?}", whole.warnings);
    // The end screen still has its own figures, from the whole bench.
    assert!(whole.screens[1].after_last_part && whole.screens[1].rms_spot_um.is_some());
}
