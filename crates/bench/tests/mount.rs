//! The mount sheet against geometry worked out independently here: sags and edge thicknesses, positions
//! and spacings from the bench's own numbers, the datum's half-carrier shifts, and clear apertures of a
//! point's cone by similar triangles.
#![allow(clippy::float_cmp)] // Positions, spacings and inches are claimed exact (the same sums, one division): compared with ==.

use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::{Evaluation, counters};
use lumenrail_bench::file::parse;
use lumenrail_bench::model::Bench;
use lumenrail_bench::mount::{DEFAULT_MARGIN_MM, Datum, MM_PER_INCH, MountOptions, MountSheet, RIM_RAYS, length};

fn bench(text: &str) -> Bench {
    parse("test", text).unwrap_or_else(|e| panic!("{e}")).bench
}

fn sheet(b: &Bench, datum: Datum, margin_mm: f64) -> MountSheet {
    MountSheet::of(&Evaluation::of(b), &MountOptions { datum, margin_mm })
}

/// The conicoid's sag written out here, apart from the optics crate: z = c r² / (1 + √(1 − (1+k)c²r²)).
fn conic_sag(radius: f64, conic: f64, r: f64) -> f64 {
    let c = 1.0 / radius;
    c * r * r / (1.0 + (1.0 - (1.0 + conic) * c * c * r * r).sqrt())
}

/// A sphere's sag the schoolbook way, R − sgn(R)√(R² − r²) (geometry of a circle).
fn sphere_sag(radius: f64, r: f64) -> f64 {
    radius - radius.signum() * (radius * radius - r * r).sqrt()
}

const SEVERAL: &str = r#"(
    format: 1,
    title: "Workshop jig: four parts on a 700 mm rail",
    rail_length_mm: 700.0,
    wavelengths_nm: [486.1327, 587.5618, 656.2725],
    primary_wavelength: 1,
    object: Point(at_mm: 10.0, height_mm: 2.0),
    parts: [
        (name: "Field lens", at_mm: 110.0, kind: ThinLens(focal_mm: 80.0, diameter_mm: 30.0), carrier_mm: 18.0),
        (name: "Bi-x", at_mm: 230.0,
         kind: Singlet(front: Radius(60.0), back: Radius(-75.0), thickness_mm: 7.25, diameter_mm: 25.4,
                       material: Named("517642")), carrier_mm: 22.0),
        (name: "Pair", at_mm: 320.5,
         kind: Doublet(front: Conic(radius: 52.0, conic: -0.6), middle: Radius(-40.0), back: Flat,
                       thickness1_mm: 6.5, thickness2_mm: 2.75,
                       material1: Named("517642"), material2: Named("620364"), diameter_mm: 25.0)),
        (name: "Stop", at_mm: 380.0, kind: Iris(diameter_mm: 9.0), carrier_mm: 12.0),
        (name: "Card", at_mm: 620.0, kind: Screen(diameter_mm: 60.0)),
    ],
)"#;

/// A biconvex lens's edge thickness is its centre thickness minus the two sags at its diameter (front
/// sag minus back sag, with signs; geometry), with each sag from the formula written out here, to 1e-12
/// mm; the sphere's sag agrees with R − √(R² − r²) and the conicoid's with its own formula.
#[test]
fn edge_thickness_is_centre_thickness_minus_the_sags() {
    let s = sheet(&bench(SEVERAL), Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    let lens = s.parts.iter().find(|p| p.name == "Bi-x").unwrap();
    let r = 0.5 * 25.4;
    let (front, back) = (conic_sag(60.0, 0.0, r), conic_sag(-75.0, 0.0, r));
    assert!((front - sphere_sag(60.0, r)).abs() < 1e-12 && (back - sphere_sag(-75.0, r)).abs() < 1e-12);
    assert!(front > 0.0 && back < 0.0, "a biconvex lens bulges both ways");
    let et = 7.25 - front + back;
    assert!((lens.edge_thickness_mm.unwrap() - et).abs() < 1e-12, "{:?} vs {et}", lens.edge_thickness_mm);
    assert!(et < 7.25);
    assert_eq!(lens.centre_thickness_mm, Some(7.25));
    assert!((lens.surfaces[0].sag_at_diameter_mm.unwrap() - front).abs() < 1e-12);
    assert!((lens.surfaces[1].sag_at_diameter_mm.unwrap() - back).abs() < 1e-12);
    assert_eq!(lens.elements.len(), 1);
    // The sag at the clear aperture is the same formula at half the clear aperture.
    for surf in &lens.surfaces {
        let ca = surf.clear_aperture_mm.unwrap();
        let radius = match surf.shape {
            lumenrail_bench::model::SurfaceSpec::Radius(r) => r,
            _ => unreachable!(),
        };
        assert!((surf.sag_at_clear_aperture_mm.unwrap() - conic_sag(radius, 0.0, 0.5 * ca)).abs() < 1e-12);
    }
    // The doublet: a conic front, a cemented sphere, a flat back; each element and the whole.
    let pair = s.parts.iter().find(|p| p.name == "Pair").unwrap();
    let r = 12.5;
    let (f, m) = (conic_sag(52.0, -0.6, r), conic_sag(-40.0, 0.0, r));
    let e1 = 6.5 - f + m;
    let e2 = 2.75 - m;
    assert!((pair.elements[0].edge_thickness_mm.unwrap() - e1).abs() < 1e-12);
    assert!((pair.elements[1].edge_thickness_mm.unwrap() - e2).abs() < 1e-12);
    assert!((pair.edge_thickness_mm.unwrap() - (9.25 - f)).abs() < 1e-12);
    assert_eq!(pair.surfaces[2].sag_at_diameter_mm, Some(0.0));
}

/// Vertex positions are the bench's at_mm plus the thicknesses, and the spacings their differences, to
/// the last bit (the same sums); choosing the carrier's left or right edge as the datum moves each
/// reference position by minus or plus half its carrier (a part without a carrier: half its glass).
#[test]
fn positions_spacings_and_the_datum() {
    let b = bench(SEVERAL);
    let centre = sheet(&b, Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    let names: Vec<&str> = centre.parts.iter().map(|p| p.name.as_str()).collect();
    assert_eq!(names, ["Field lens", "Bi-x", "Pair", "Stop", "Card"], "rail order");
    let v: Vec<Vec<f64>> = centre.parts.iter().map(|p| p.vertices_mm.clone()).collect();
    assert_eq!(v[0], [110.0]);
    assert_eq!(v[1], [230.0, 230.0 + 7.25]);
    assert_eq!(v[2], [320.5, 320.5 + 6.5, 320.5 + 6.5 + 2.75]);
    assert_eq!(v[3], [380.0]);
    assert_eq!(v[4], [620.0]);
    let spacing: Vec<Option<f64>> = centre.parts.iter().map(|p| p.vertex_spacing_mm).collect();
    assert_eq!(
        spacing,
        [
            None,
            Some(230.0 - 110.0),
            Some(320.5 - (230.0 + 7.25)),
            Some(380.0 - (320.5 + 6.5 + 2.75)),
            Some(620.0 - 380.0)
        ]
    );
    // Centre references: the middle of the glass (the carrier is centred on it).
    let mids = [110.0, 0.5 * (230.0 + (230.0 + 7.25)), 0.5 * (320.5 + (320.5 + 6.5 + 2.75)), 380.0, 620.0];
    for (p, m) in centre.parts.iter().zip(mids) {
        assert_eq!(p.reference_mm, m, "{}", p.name);
    }
    for w in centre.parts.windows(2) {
        assert_eq!(w[1].reference_spacing_mm, Some(w[1].reference_mm - w[0].reference_mm));
    }
    // Half carriers: given ones, or half the glass (doublet 9.25 mm), or nothing (a screen without one).
    let half = [9.0, 11.0, 0.5 * 9.25, 6.0, 0.0];
    for (datum, sign) in [(Datum::CarrierLeftEdge, -1.0), (Datum::CarrierRightEdge, 1.0)] {
        let moved = sheet(&b, datum, DEFAULT_MARGIN_MM);
        for ((p, c), h) in moved.parts.iter().zip(&centre.parts).zip(half) {
            assert!((p.reference_mm - (c.reference_mm + sign * h)).abs() < 1e-12, "{datum:?} {}", p.name);
            assert_eq!(p.vertices_mm, c.vertices_mm, "vertices do not depend on the datum");
        }
    }
    // Overall length: first vertex to last vertex (screens aside) and object to the last screen.
    assert_eq!(centre.vertex_length_mm, Some(380.0 - 110.0));
    assert_eq!(centre.object_to_last_screen_mm, Some(620.0 - 10.0));
}

/// An on-axis point 100 mm before a thin lens (f 50 mm) that is the stop: the marginal ray reaches the
/// lens's rim, so its clear aperture (no margin) is the stop's diameter; the cone converges to the image
/// at 200 mm, so on a screen at 150 mm it is D·(200 − 150)/100 wide and on one at 260 mm D·60/100
/// (similar triangles; the ideal thin lens images the point perfectly), to 1e-9 mm. With the margin, the
/// clear aperture grows by twice the margin, and a lens that is the stop warns that its seat would clip.
#[test]
fn clear_apertures_of_an_on_axis_cone() {
    let text = |screen_at: f64| {
        format!(
            r#"(
    format: 1,
    title: "Classroom cone",
    rail_length_mm: 400.0,
    wavelengths_nm: [550.0],
    primary_wavelength: 0,
    object: Point(at_mm: 0.0, height_mm: 4.0),
    parts: [
        (name: "Lens", at_mm: 100.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 20.0)),
        (name: "Card", at_mm: {screen_at}, kind: Screen(diameter_mm: 60.0)),
    ],
)"#
        )
    };
    for (screen_at, width) in [(150.0, 20.0 * 50.0 / 100.0), (260.0, 20.0 * 60.0 / 100.0)] {
        let b = bench(&text(screen_at));
        let s = sheet(&b, Datum::CarrierCentre, 0.0);
        let lens = &s.parts[0].surfaces[0];
        assert!((lens.clear_aperture_mm.unwrap() - 20.0).abs() < 1e-9, "{lens:?}");
        assert!((2.0 * lens.light_radius_on_axis_mm.unwrap() - 20.0).abs() < 1e-9);
        let card = &s.parts[1].surfaces[0];
        let on_axis = 2.0 * card.light_radius_on_axis_mm.unwrap();
        assert!((on_axis - width).abs() < 1e-9, "screen at {screen_at}: {on_axis} vs {width}");
        // The full-field bundle is the same cone about the chief ray, which passes the lens's centre and
        // meets the screen at h·(z − 100)/100 below the axis (magnification −1 at the image).
        let chief = 4.0 * (screen_at - 100.0) / 100.0;
        let full = card.light_radius_full_field_mm.unwrap();
        assert!((full - (chief + 0.5 * width)).abs() < 1e-9, "{full} vs {}", chief + 0.5 * width);
        assert!((card.clear_aperture_mm.unwrap() - 2.0 * full).abs() < 1e-12);

        let with_margin = sheet(&b, Datum::CarrierCentre, 0.5);
        assert!((with_margin.parts[0].surfaces[0].clear_aperture_mm.unwrap() - 21.0).abs() < 1e-9);
        assert!(with_margin.warnings.iter().any(|w| w.part.as_deref() == Some("Lens") && w.message.contains("margin")));
        assert!(s.warnings.iter().all(|w| w.part.as_deref() != Some("Card")), "{:?}", s.warnings);
    }
}

/// An iris that clips the full field's bundle: its clear aperture is larger than its opening, which the
/// sheet warns about, and the light it clips counts no further (the clear aperture after it is smaller
/// than without it).
#[test]
fn a_clear_aperture_beyond_the_part_is_a_warning() {
    let with_iris = |iris: &str| {
        bench(&format!(
            r#"(
    format: 1,
    title: "Test jig with a field iris",
    rail_length_mm: 500.0,
    wavelengths_nm: [550.0],
    primary_wavelength: 0,
    object: Point(at_mm: 0.0, height_mm: 10.0),
    parts: [
        (name: "Lens", at_mm: 100.0, kind: ThinLens(focal_mm: 60.0, diameter_mm: 20.0)),
        {iris}
        (name: "Relay", at_mm: 300.0, kind: ThinLens(focal_mm: 60.0, diameter_mm: 80.0)),
    ],
)"#
        ))
    };
    let clipped = sheet(
        &with_iris(r#"(name: "Field iris", at_mm: 240.0, kind: Iris(diameter_mm: 8.0)),"#),
        Datum::CarrierCentre,
        0.0,
    );
    let open = sheet(&with_iris(""), Datum::CarrierCentre, 0.0);
    let iris = clipped.parts.iter().find(|p| p.name == "Field iris").unwrap();
    assert!(iris.surfaces[0].clear_aperture_mm.unwrap() > 8.0, "{}", clipped.to_text(false));
    assert!(clipped.warnings.iter().any(|w| w.part.as_deref() == Some("Field iris") && w.message.contains("clips")));
    let relay =
        |s: &MountSheet| s.parts.iter().find(|p| p.name == "Relay").unwrap().surfaces[0].clear_aperture_mm.unwrap();
    assert!(relay(&clipped) < relay(&open), "{} vs {}", relay(&clipped), relay(&open));
}

/// Where the light never arrives, the clear aperture is null with the reason: a lens beyond a mirror,
/// and every surface of a bench that cannot be traced (whose positions are still on the sheet).
#[test]
fn no_light_no_clear_aperture() {
    let b = bench(
        r#"(
    format: 1,
    title: "Fold-back demo",
    rail_length_mm: 500.0,
    wavelengths_nm: [550.0],
    primary_wavelength: 0,
    object: Point(at_mm: 0.0, height_mm: 2.0),
    parts: [
        (name: "Lens", at_mm: 100.0, kind: ThinLens(focal_mm: 80.0, diameter_mm: 25.0)),
        (name: "Mirror", at_mm: 200.0, kind: Mirror(surface: Flat, diameter_mm: 30.0)),
        (name: "Behind", at_mm: 300.0, kind: ThinLens(focal_mm: 80.0, diameter_mm: 25.0)),
    ],
)"#,
    );
    let s = sheet(&b, Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    let behind = &s.parts[2].surfaces[0];
    assert_eq!(behind.clear_aperture_mm, None);
    assert!(behind.no_light.as_deref().unwrap().contains("mirror"), "{behind:?}");
    // The lens is crossed twice: its clear aperture covers both crossings, the wider way back.
    let lens = &s.parts[0].surfaces[0];
    assert!(lens.clear_aperture_mm.is_some() && lens.no_light.is_none());
    assert!(s.parts[1].surfaces[0].clear_aperture_mm.is_some());

    let mut untraceable = b.clone();
    untraceable.parts.retain(|p| p.name != "Lens" && p.name != "Mirror");
    untraceable.parts[0].kind = lumenrail_bench::model::PartKind::Singlet {
        front: lumenrail_bench::model::SurfaceSpec::Radius(50.0),
        back: lumenrail_bench::model::SurfaceSpec::Flat,
        thickness_mm: 5.0,
        diameter_mm: 25.0,
        material: lumenrail_bench::model::MaterialSpec::Named("no-such-glass".into()),
    };
    let s = sheet(&untraceable, Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    assert_eq!(s.parts[0].vertices_mm, [300.0, 305.0]);
    for surf in &s.parts[0].surfaces {
        assert_eq!(surf.clear_aperture_mm, None);
        assert!(surf.no_light.as_deref().unwrap().contains("cannot be traced"), "{surf:?}");
    }
}

/// The sheet is a projection of the one evaluation: making it for every demo compiles and analyses
/// nothing again, gives every light-carrying surface of every demo a clear aperture (each at least twice
/// the margin), and its JSON carries the numbers in mm.
#[test]
fn every_demo_projects_without_evaluating_again() {
    for d in DEMOS {
        let b = bench(d.text);
        let e = Evaluation::of(&b);
        let before = counters();
        let s = MountSheet::of(&e, &MountOptions::default());
        assert_eq!(counters(), before, "{}: the mount sheet compiled or analysed again", d.name);
        assert_eq!(s.rim_rays, RIM_RAYS);
        assert_eq!(s.parts.len(), b.parts.len());
        for p in &s.parts {
            for surf in &p.surfaces {
                if let Some(ca) = surf.clear_aperture_mm {
                    assert!(ca >= 2.0 * DEFAULT_MARGIN_MM && ca.is_finite(), "{}: {}", d.name, p.name);
                }
            }
        }
        let v: serde_json::Value = serde_json::from_str(&s.to_json()).unwrap();
        assert_eq!(v["parts"].as_array().unwrap().len(), b.parts.len());
        assert_eq!(v["parts"][0]["reference_mm"].as_f64(), Some(s.parts[0].reference_mm));
        assert_eq!(v["datum"], "carrier-centre");
        let text = s.to_text(false);
        assert!(text.contains(&b.title) && text.contains("Lengths in mm"), "{text}");
    }
}

/// Inches: 25.4 mm each, exactly; the text in inches shows the sheet's mm divided by 25.4.
#[test]
fn inches_divide_by_25_4() {
    assert_eq!(MM_PER_INCH, 25.4);
    assert_eq!(length(50.8, true), 2.0);
    assert_eq!(length(123.456, true), 123.456 / 25.4);
    assert_eq!(length(123.456, false), 123.456);
    let s = sheet(&bench(SEVERAL), Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    let text = s.to_text(true);
    assert!(text.contains("Lengths in in"), "{text}");
    assert!(text.contains(&format!("{:.4}", 620.0 / 25.4)), "{text}");
}

/// A warning's lengths follow the display's unit too: in inches, the margin warning of a thin lens that
/// is the stop gives its diameter 20 mm as 0.7874 in.
#[test]
fn warnings_speak_the_display_unit() {
    let b = bench(
        r#"(
    format: 1,
    title: "Classroom cone",
    rail_length_mm: 400.0,
    wavelengths_nm: [550.0],
    primary_wavelength: 0,
    object: Point(at_mm: 0.0, height_mm: 4.0),
    parts: [(name: "Lens", at_mm: 100.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 20.0))],
)"#,
    );
    let s = sheet(&b, Datum::CarrierCentre, DEFAULT_MARGIN_MM);
    let w = s.warnings.iter().find(|w| w.part.as_deref() == Some("Lens")).unwrap();
    assert_eq!(w.message, w.words(false));
    assert!(w.words(false).contains("diameter 20.000 mm"), "{}", w.message);
    assert!(w.words(true).contains(&format!("diameter {:.4} in", 20.0 / 25.4)), "{}", w.words(true));
    assert!(s.to_text(true).contains(&w.words(true)));
}
