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

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// A focal distance belongs to the optics: an iris before or after a thin lens of f = 100 mm does not
/// change its FFL or BFL, both exactly f (Gaussian optics of a thin lens, Hecht, *Optics*, sec. 5.2).
#[test]
fn an_iris_before_or_after_a_lens_does_not_change_its_focal_distances() {
    for (iris, lens) in [(250.0, 300.0), (350.0, 300.0), (290.0, 300.0)] {
        let r = report(&format!(
            r#"(format: 1, title: "t", rail_length_mm: 800.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
                object: Distant(field_deg: 1.0, beam_diameter_mm: 20.0), parts: [
                (name: "Lens", at_mm: {lens}, kind: ThinLens(focal_mm: 100.0, diameter_mm: 40.0)),
                (name: "Iris", at_mm: {iris}, kind: Iris(diameter_mm: 10.0)),
                (name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))])"#
        ));
        let f = &r.first_order;
        assert!(rel(f.ffl_mm.unwrap(), 100.0) < 1e-12, "iris at {iris}: FFL {:?}", f.ffl_mm);
        assert!(rel(f.bfl_mm.unwrap(), 100.0) < 1e-12, "iris at {iris}: BFL {:?}", f.bfl_mm);
        assert!(rel(f.back_focus_at_mm.unwrap(), 400.0) < 1e-12);
        // One imaging part, one image: nothing is listed "after" the iris.
        assert_eq!(r.images.len(), 1, "{:?}", r.images);
        assert_eq!(r.images[0].after_part, "Lens");
    }
}

/// A concave mirror (R = −200 mm, f = 100 mm) 300 mm from the object images it 150 mm in front of itself,
/// real and inverted at m = −0.5 (mirror equation 1/s + 1/s′ = 2/R, Hecht, sec. 5.4), although the
/// returning light passes an iris before it converges: the image is listed once, as real.
#[test]
fn a_concave_mirror_image_stays_real_behind_an_iris_on_the_way_back() {
    let r = report(
        r#"(format: 1, title: "t", rail_length_mm: 800.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 200.0, height_mm: 2.0), parts: [
            (name: "Iris", at_mm: 420.0, kind: Iris(diameter_mm: 30.0)),
            (name: "Mirror", at_mm: 500.0, kind: Mirror(surface: Radius(-200.0), diameter_mm: 50.0))])"#,
    );
    assert_eq!(r.images.len(), 1, "{:?}", r.images);
    let img = &r.images[0];
    assert_eq!(img.after_part, "Mirror");
    assert!(img.real && !img.erect, "{img:?}");
    assert!((img.at_mm.unwrap() - 350.0).abs() < 1e-9, "{img:?}");
    assert!((img.magnification.unwrap() + 0.5).abs() < 1e-12, "{img:?}");
}

/// L1 (f = 50 mm, 100 mm from the object) would image it at 200 mm, but L2 (f = 100 mm) at 150 mm meets
/// the converging light first: the intermediate image is real and intercepted (a virtual object 50 mm
/// beyond L2), and L2 forms the final image at 150 + 1/(1/100 + 1/50) = 183.333 mm (Gaussian imaging,
/// Hecht, sec. 5.2).
#[test]
fn a_real_image_that_the_next_lens_intercepts_is_called_so() {
    let r = report(
        r#"(format: 1, title: "t", rail_length_mm: 800.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 0.0, height_mm: 2.0), parts: [
            (name: "L1", at_mm: 100.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 30.0)),
            (name: "L2", at_mm: 150.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 30.0))])"#,
    );
    assert_eq!(r.images.len(), 2);
    let first = &r.images[0];
    assert!(first.real, "{first:?}");
    assert_eq!(first.intercepted_by.as_deref(), Some("L2"));
    assert!(rel(first.at_mm.unwrap(), 200.0) < 1e-12);
    let last = &r.images[1];
    assert!(last.real && last.intercepted_by.is_none());
    assert!(rel(last.at_mm.unwrap(), 150.0 + 100.0 / 3.0) < 1e-12, "{last:?}");
    let text = r.to_text();
    assert!(text.contains("a real image that \"L2\" intercepts (a virtual object for it)"), "{text}");
}

/// The text report has no stray space before a comma.
#[test]
fn the_text_report_has_no_space_before_a_comma() {
    let r = report(&bench(FRONT));
    let text = r.to_text();
    assert!(text.contains("entrance pupil") && !text.contains(" ,"), "{text}");
}

/// Warnings are typed: kind, part and field travel with the message (JSON too).
#[test]
fn warnings_name_their_kind_and_part() {
    let r = report(&bench(
        r#"(name: "Lens", at_mm: 100.0, kind: ThinLens(focal_mm: 50.0, diameter_mm: 30.0), carrier_mm: 30.0),
           (name: "Screen", at_mm: 110.0, kind: Screen(diameter_mm: 40.0), carrier_mm: 30.0)"#,
    ));
    let w = r.warnings.iter().find(|w| w.kind == lumenrail_bench::report::WarningKind::Layout).expect("overlap");
    assert!(w.part.is_some() && w.field == Some("carrier_mm"), "{w:?}");
    let json: serde_json::Value = serde_json::from_str(&r.to_json()).unwrap();
    let first = &json["warnings"][0];
    assert_eq!(first["kind"], "layout");
    assert!(first["message"].as_str().unwrap().contains("overlap"), "{first}");
}

/// The white-light best focus: with one wavelength it is the report's own best focus (the same rings);
/// with the singlet's F, d and C lines, polychromatic RMS² is a quadratic in the plane's position (straight
/// rays), so the plane found is its minimum: the RMS computed independently from each wavelength's own
/// spot figures (mean of the squares) is larger a millimetre either side, and the plane lies between the
/// F and C foci (longitudinal colour of a crown singlet: F focuses first, Hecht sec. 6.3.2).
#[test]
fn the_white_light_focus_is_the_least_polychromatic_spot() {
    let best = lumenrail_bench::evaluation::Evaluation::of(
        &parse("t", lumenrail_bench::demos::find("colour-singlet").unwrap().text).unwrap().bench,
    );
    let r = &best.report;
    let a = best.analysis().unwrap();
    let zw = r.aberrations.white_light_focus_at_mm.unwrap();
    let poly = |z: f64| -> f64 {
        let ms: f64 = a
            .wavelengths
            .iter()
            .map(|w| {
                let p = w.pupils.as_ref().unwrap();
                let s = lumenrail_optics::spot::spot_figures(&w.seq, best.compiled().unwrap().object, p, &[z]).unwrap();
                s.planes[0].rms_mm.powi(2)
            })
            .sum::<f64>()
            / a.wavelengths.len() as f64;
        ms.sqrt()
    };
    let at = poly(zw);
    assert!(((at * 1e3) - r.aberrations.white_light_rms_spot_um.unwrap()).abs() < 1e-6 * at * 1e3);
    assert!(poly(zw - 1.0) > at && poly(zw + 1.0) > at);
    let (f, c) = (r.colour[0].image_at_mm.unwrap(), r.colour[2].image_at_mm.unwrap());
    assert!(f < zw && zw < c, "{f} {zw} {c}");
    // One wavelength: the white-light focus is the ordinary best focus.
    let mut b = parse("t", lumenrail_bench::demos::find("plano-convex-flat-first").unwrap().text).unwrap().bench;
    b.wavelengths_nm = vec![587.5618];
    b.primary_wavelength = 0;
    let single = lumenrail_bench::evaluation::Evaluation::of(&b);
    let s = single.analysis().unwrap().spot.clone().unwrap().unwrap();
    let w = single.report.aberrations.white_light_focus_at_mm.unwrap();
    assert!((w - s.best_focus_at_mm.unwrap()).abs() < 1e-9, "{w} vs {:?}", s.best_focus_at_mm);
}

/// The wavelengths' weights: polychromatic RMS² is the weighted mean of each wavelength's RMS² about one
/// plane, so all the weight on one line puts the white-light focus at that line's own least-RMS plane
/// (the same quadrature rings), and weights 1 : 2 : 1 give the minimum of the weighted quadratic, checked
/// against each wavelength's own spot figures. The report names the shares.
#[test]
fn the_white_light_focus_follows_the_wavelengths_weights() {
    let base = parse("t", lumenrail_bench::demos::find("colour-singlet").unwrap().text).unwrap().bench;
    for k in 0..3 {
        let mut b = base.clone();
        b.wavelength_weights = (0..3).map(|j| if j == k { 1.0 } else { 0.0 }).collect();
        let e = lumenrail_bench::evaluation::Evaluation::of(&b);
        let w = e.report.aberrations.white_light_focus_at_mm.unwrap();
        // The line's own best focus: its moments' minimum, from its own axial spot on the same rings.
        let a = e.analysis().unwrap();
        let rings = a.spot.as_ref().unwrap().as_ref().unwrap().rings;
        let wl = &a.wavelengths[k];
        let spot = lumenrail_optics::spot::AxialSpot::trace(
            &wl.seq,
            e.compiled().unwrap().object,
            wl.pupils.as_ref().unwrap(),
            rings,
        )
        .unwrap();
        let (own, _) = lumenrail_optics::spot::RadialMoments::of(&spot, w).best().unwrap();
        assert!((w - own).abs() < 1e-9, "line {k}: white {w} vs own {own}");
        assert!((e.report.colour[k].weight - 1.0).abs() < 1e-15);
    }
    let mut b = base.clone();
    b.wavelength_weights = vec![1.0, 2.0, 1.0];
    let e = lumenrail_bench::evaluation::Evaluation::of(&b);
    let a = e.analysis().unwrap();
    let zw = e.report.aberrations.white_light_focus_at_mm.unwrap();
    let poly = |z: f64| -> f64 {
        let ms: f64 = a
            .wavelengths
            .iter()
            .zip([0.25, 0.5, 0.25])
            .map(|(w, share)| {
                let p = w.pupils.as_ref().unwrap();
                let s = lumenrail_optics::spot::spot_figures(&w.seq, e.compiled().unwrap().object, p, &[z]).unwrap();
                share * s.planes[0].rms_mm.powi(2)
            })
            .sum();
        ms.sqrt()
    };
    let at = poly(zw);
    assert!((at * 1e3 - e.report.aberrations.white_light_rms_spot_um.unwrap()).abs() < 1e-6 * at * 1e3);
    assert!(poly(zw - 0.5) > at && poly(zw + 0.5) > at);
    let equal = lumenrail_bench::evaluation::Evaluation::of(&base).report.aberrations.white_light_focus_at_mm.unwrap();
    assert!((zw - equal).abs() > 1e-3, "the weights move the focus: {zw} vs {equal}");
    assert!(e.report.to_text().contains("weighted 25% : 50% : 25%"), "{}", e.report.to_text());
}
