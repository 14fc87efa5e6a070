//! The stray-focus map of a bench: reflectances (bare glass and coatings), the `coatings` field and its
//! placed errors, the report's `stray` key and text, and the warnings beside the laser caution.
//!
//! Sources: the Fresnel reflectance at normal incidence ((n₁ − n₂)/(n₁ + n₂))², 4.0 % for n = 1.5 against
//! air (E. Hecht, *Optics*, sec. 4.6, from memory); the mirror equation 1/s + 1/s' = 1/f with f = −R/2
//! (Hecht, sec. 5.4, from memory). The optics crate's tests/stray.rs holds the paths themselves to an
//! independent matrix product and to the exact trace.

use lumenrail_bench::file;
use lumenrail_bench::report::{Report, WarningKind};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn bench_text(object: &str, laser: Option<&str>, parts: &str) -> String {
    let laser = laser.map_or_else(String::new, |l| format!("    laser: {l},\n"));
    format!(
        "(\n    format: 1,\n    title: \"t\",\n    rail_length_mm: 1500.0,\n    wavelengths_nm: [632.8],\n    primary_wavelength: 0,\n    object: {object},\n{laser}    parts: [\n{parts}\n    ],\n)\n"
    )
}

const LASER: &str =
    "(at_mm: 20.0, wavelength_nm: 632.8, waist_diameter_mm: 0.8, waist_at_mm: 20.0, m_squared: 1.0, power_mw: 1.0)";
const BEAM: &str = "Distant(field_deg: 0.05, beam_diameter_mm: 0.8)";

fn report_of(text: &str) -> Report {
    Report::of(&file::parse("t.bench.ron", text).unwrap().bench)
}

/// Bare glass of n = 1.5 reflects 4.0 % at each face (Hecht); a coating of 0.5 % replaces the Fresnel
/// share on its face, and the back face's back-reflection carries the product (1 − 0.005) · 0.04 ·
/// (1 − 0.005) of the power.
#[test]
fn reflectances_are_fresnel_for_bare_glass_and_the_coating_where_one_is_set() {
    let singlet = |coatings: &str| {
        format!(
            "        (name: \"L\", at_mm: 300.0, kind: Singlet(front: Radius(-200.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5)){coatings}),"
        )
    };
    let bare = report_of(&bench_text(BEAM, None, &singlet(""))).stray.unwrap();
    assert_eq!(bare.surfaces.len(), 2);
    for s in &bare.surfaces {
        assert!(rel(s.reflectance_percent, 4.0) < 1e-12 && !s.coated, "{s:?}");
    }
    assert_eq!(bare.surfaces[0].surface, "L (front)");
    assert_eq!(bare.surfaces[1].surface, "L (back)");
    let coated = report_of(&bench_text(BEAM, None, &singlet(", coatings: [Percent(0.5), Bare]"))).stray.unwrap();
    assert!(coated.surfaces[0].coated && rel(coated.surfaces[0].reflectance_percent, 0.5) < 1e-12);
    assert!(!coated.surfaces[1].coated && rel(coated.surfaces[1].reflectance_percent, 4.0) < 1e-12);
    let back = coated.reflections.iter().find(|r| r.kind == "back" && r.surfaces == ["L (back)"]).unwrap();
    assert!(rel(back.power_share, 0.995 * 0.04 * 0.995) < 1e-12, "{}", back.power_share);
    let double = coated.reflections.iter().find(|r| r.kind == "double").unwrap();
    assert_eq!(double.surfaces, ["L (back)", "L (front)"]);
    assert!(rel(double.power_share, 0.995 * 0.04 * 0.005 * 0.96) < 1e-12);
    // The coatings are written back as they were read; a file without them writes none.
    let text = bench_text(BEAM, None, &singlet(", coatings: [Percent(0.5), Bare]"));
    let again = file::to_text(&file::parse("t", &text).unwrap().bench);
    assert!(again.contains("coatings: [Percent(0.5), Bare]"), "{again}");
    assert!(
        !file::to_text(&file::parse("t", &bench_text(BEAM, None, &singlet(""))).unwrap().bench).contains("coatings")
    );
}

/// The first surface's back-reflection of a point source 300 mm before a surface of radius −200 mm
/// focuses where the mirror equation puts it (f = 100 mm, s' = 150 mm, back towards the source: at
/// 150 mm on the rail), named by part and face.
#[test]
fn the_first_back_reflection_focuses_where_the_mirror_equation_says() {
    let parts = "        (name: \"L\", at_mm: 300.0, kind: Singlet(front: Radius(-200.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5))),";
    let r = report_of(&bench_text("Point(at_mm: 0.0, height_mm: 1.0)", None, parts));
    let map = r.stray.clone().unwrap();
    let first = map.reflections.iter().find(|r| r.kind == "back" && r.surfaces == ["L (front)"]).unwrap();
    assert_eq!(first.foci.len(), 1);
    let f = &first.foci[0];
    assert!(rel(f.at_mm, 300.0 - 1.0 / (1.0 / 100.0 - 1.0 / 300.0)) < 1e-12, "{f:?}");
    assert_eq!(f.place, "towards the source");
    assert!(f.diameter_mm.is_none(), "a geometric focus is a point");
    // Without a laser nothing is warned about, but the text lists the reflection.
    assert!(!r.warnings.iter().any(|w| w.kind == WarningKind::StrayFocus));
    assert!(r.to_text().contains("back reflection from L (front): 4.00% of the power"), "{}", r.to_text());
}

/// A laser 100 mm before a surface of radius −200 mm (a mirror of f = 100 mm for its reflection) gets
/// its own back-reflection focused close to its exit: warned about beside the laser caution, with a
/// finite waist and peak irradiance (the stray beam's own beam parameter). A coating of 0.0001 % leaves
/// the same focus below the share warned about (1e-5 of the power).
#[test]
fn a_back_reflection_focused_onto_the_laser_is_warned_about() {
    let parts = |coatings: &str| {
        format!(
            "        (name: \"L\", at_mm: 120.0, kind: Singlet(front: Radius(-200.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5)){coatings}),"
        )
    };
    let r = report_of(&bench_text(BEAM, Some(LASER), &parts("")));
    let stray: Vec<_> = r.warnings.iter().filter(|w| w.kind == WarningKind::StrayFocus).collect();
    assert!(stray.iter().any(|w| w.message.contains("the laser's exit")), "{:#?}", r.warnings);
    let caution = r.warnings.iter().position(|w| w.kind == WarningKind::Caution).unwrap();
    assert!(r.warnings.iter().position(|w| w.kind == WarningKind::StrayFocus).unwrap() < caution);
    let map = r.stray.as_ref().unwrap();
    assert!(map.laser);
    let first = map.reflections.iter().find(|x| x.kind == "back" && x.surfaces == ["L (front)"]).unwrap();
    let f = &first.foci[0];
    // The laser's waist lies at the equivalent mirror's focus (100 mm before it), so the stray waist lies
    // at that focus too, whatever the Rayleigh range (S. A. Self, Appl. Opt. 22, 658 (1983): s = f gives
    // s' = f): back on the laser's exit at 20 mm.
    assert!((f.at_mm - 20.0).abs() < 1e-9, "{f:?}");
    let (d, p) = (f.diameter_mm.unwrap(), f.peak_irradiance_w_per_cm2.unwrap());
    assert!(d > 0.0 && d.is_finite() && p > 0.0 && p.is_finite());
    // 2P/(πw₀²) of the reflection's share of 1 mW, in W/cm² (1 mW/mm² = 0.1 W/cm²).
    let w0 = 0.5 * d;
    assert!(rel(p, 0.1 * 2.0 * first.power_share / (std::f64::consts::PI * w0 * w0)) < 1e-12);
    let json = serde_json::to_string(&r).unwrap();
    assert!(json.contains("\"stray\":{") && !json.contains("NaN") && !json.contains("inf"));
    let weak = report_of(&bench_text(BEAM, Some(LASER), &parts(", coatings: [Percent(0.0001), Percent(0.0001)]")));
    assert!(!weak.warnings.iter().any(|w| w.kind == WarningKind::StrayFocus), "{:#?}", weak.warnings);
}

/// Coatings are checked where they stand: only lens surfaces take them, one per surface, 0 to 100 %;
/// each error names the file, line and column of the `coatings` field.
#[test]
fn bad_coatings_are_refused_at_their_place() {
    let cases = [
        (
            "(name: \"I\", at_mm: 300.0, kind: Iris(diameter_mm: 5.0), coatings: [Bare])",
            "only the surfaces of a singlet or a doublet",
        ),
        (
            "(name: \"T\", at_mm: 300.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 5.0), coatings: [Bare])",
            "an ideal thin lens has no surfaces",
        ),
        (
            "(name: \"L\", at_mm: 300.0, kind: Singlet(front: Radius(50.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5)), coatings: [Bare])",
            "1 coatings for its 2 surfaces",
        ),
        (
            "(name: \"L\", at_mm: 300.0, kind: Singlet(front: Radius(50.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5)), coatings: [Bare, Percent(150.0)])",
            "coating 2 reflects 150 %",
        ),
    ];
    for (part, message) in cases {
        let text = bench_text(BEAM, None, &format!("        {part},"));
        let err = file::parse("t.bench.ron", &text).unwrap_err();
        let d = err.diagnostics.iter().find(|d| d.message.contains(message)).unwrap_or_else(|| panic!("{err}"));
        let line = text.lines().position(|l| l.contains("coatings:")).unwrap() + 1;
        let col = text.lines().nth(line - 1).unwrap().find("coatings:").unwrap() + 1;
        assert_eq!((d.place.line, d.place.col), (line, col), "{d}");
        assert!(d.to_string().starts_with(&format!("t.bench.ron:{line}:{col}: ")), "{d}");
    }
    // A misspelt coating is refused by the reader, placed too.
    let text = bench_text(
        BEAM,
        None,
        "        (name: \"L\", at_mm: 300.0, kind: Singlet(front: Radius(50.0), back: Flat, thickness_mm: 4.0, diameter_mm: 25.4, material: Index(1.5)), coatings: [Bare, Percnt(1.0)]),",
    );
    assert!(file::parse("t.bench.ron", &text).is_err());
}

/// Every demo still loads, and a bench of thin lenses only has no stray-focus map (an ideal lens has
/// no surfaces to reflect).
#[test]
fn thin_lenses_reflect_nothing_and_demos_load_unchanged() {
    for d in lumenrail_bench::demos::DEMOS {
        let loaded = file::parse(d.name, d.text).unwrap();
        assert!(loaded.bench.parts.iter().all(|p| p.coatings.is_empty() || p.kind.surface_count() > 0));
    }
    let demo = lumenrail_bench::demos::find("laser-expander").unwrap();
    assert!(report_of(demo.text).stray.is_none());
}

/// A bench of 25 singlets (50 reflecting surfaces) follows the first 40: their 40 back-reflections and
/// 40 · 39 / 2 = 780 pairs, and says so.
#[test]
fn a_long_bench_follows_the_first_forty_surfaces_and_says_so() {
    let parts: Vec<String> = (0..25)
        .map(|k| {
            format!(
                "        (name: \"L{k}\", at_mm: {}, kind: Singlet(front: Radius(80.0), back: Radius(-80.0), thickness_mm: 3.0, diameter_mm: 12.0, material: Index(1.5))),",
                100.0 + 40.0 * k as f64
            )
        })
        .collect();
    let map = report_of(&bench_text(BEAM, None, &parts.join("\n"))).stray.unwrap();
    assert_eq!(map.surfaces.len(), 50);
    assert_eq!(map.reflections.len(), 40 + 780);
    assert!(map.note.as_deref().is_some_and(|n| n.contains("first 40 of the 50")), "{:?}", map.note);
}
