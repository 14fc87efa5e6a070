//! The tolerance run against published formulas: image shifts of moved, decentred and tilted parts,
//! the plate formula, the Monte Carlo's spread against the RSS stack; and its promises: one evaluation,
//! the same result for the same seed on any number of threads, placed errors for bad limits.

#![allow(clippy::float_cmp)] // Limits read from the file are compared exactly: they are the numbers written.

use lumenrail_bench::arrange::Progress;
use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::{Evaluation, counters};
use lumenrail_bench::file::{parse, to_text};
use lumenrail_bench::model::{Bench, Pivot};
use lumenrail_bench::tolerance::{
    Distribution, MonteCarloOptions, PartErrors, Perturber, ToleranceRun, fixed, limits, monte_carlo,
};

fn bench(text: &str) -> Bench {
    parse("test", text).unwrap_or_else(|e| panic!("{e}")).bench
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn tolerance_run(b: &Bench) -> (ToleranceRun, Perturber) {
    ToleranceRun::of(&Evaluation::of(b)).unwrap_or_else(|e| panic!("{e}"))
}

/// A bench with an object point at 0 and the given parts (one per line, already spelled).
fn on_rail(parts: &str, tolerances: &str) -> String {
    format!(
        r#"(
    format: 1,
    title: "Tolerance check",
    rail_length_mm: 1500.0,
    wavelengths_nm: [587.5618],
    primary_wavelength: 0,
    object: Point(at_mm: 0.0, height_mm: 1.0),
    parts: [
{parts}
    ],{tolerances}
)"#
    )
}

const ONE_LENS: &str = r#"        (name: "L", at_mm: 300.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 30.0)),
        (name: "Screen", at_mm: 450.0, kind: Screen(diameter_mm: 40.0)),"#;

/// A thin lens moved along the axis (object fixed) shifts its image by (1 − m²) per unit move
/// (longitudinal magnification m²; E. Hecht, *Optics*); decentred by δ it moves the image of the on-axis
/// point by δ(1 − m) (prism effect; W. J. Smith, *Modern Optical Engineering*). Object 300 mm before a
/// 100 mm lens: image 150 mm after it, m = −0.5. Both are first-order figures: 1e-9 relative.
#[test]
fn thin_lens_moves_its_image_by_one_minus_m_squared_and_decentres_it_by_one_minus_m() {
    let (run, _) = tolerance_run(&bench(&on_rail(ONE_LENS, "")));
    let s = &run.sensitivities[0];
    let m = -0.5_f64;
    assert!(rel(s.axial_image_per_mm.unwrap(), 1.0 - m * m) < 1e-9, "{s:?}");
    // Per 0.1 mm of decentre, in µm.
    assert!(rel(s.decentre_image_um.unwrap(), 100.0 * (1.0 - m)) < 1e-9, "{s:?}");
    // An ideal lens images perfectly, decentred or not: the spot stays a point (to rounding).
    assert!(s.decentre_rms_growth_um.unwrap().abs() < 1e-9);
    // The limits are common shop practice when the file gives none.
    assert!(run.limits[0].common_practice && run.limits[0].position_mm == 0.1);
    // RSS of one term is that term: 0.75 × 0.1 mm, and the worst case equals it.
    assert!(rel(run.budget.rss_axial_mm, 0.075) < 1e-9 && rel(run.budget.worst_axial_mm, 0.075) < 1e-9);
}

/// A mirror moved by δ shifts its image by (1 + m²)δ, 2δ for a plane mirror (Hecht; the image of a
/// plane mirror lies as far behind it as the object is in front). Concave mirror, R = 200 mm (f = 100),
/// object 300 mm away: image 150 mm in front of it, m = −0.5, so 1.25.
#[test]
fn a_mirror_moves_its_image_by_one_plus_m_squared() {
    let concave = r#"        (name: "Screen", at_mm: 150.0, kind: Screen(diameter_mm: 40.0)),
        (name: "M", at_mm: 300.0, kind: Mirror(surface: Radius(-200.0), diameter_mm: 30.0)),"#;
    let (run, _) = tolerance_run(&bench(&on_rail(concave, "")));
    assert!(rel(run.sensitivities[0].axial_image_per_mm.unwrap(), 1.25) < 1e-9, "{:?}", run.sensitivities[0]);
    let plane = r#"        (name: "Screen", at_mm: 100.0, kind: Screen(diameter_mm: 40.0)),
        (name: "M", at_mm: 300.0, kind: Mirror(surface: Flat, diameter_mm: 30.0)),"#;
    let (run, _) = tolerance_run(&bench(&on_rail(plane, "")));
    assert!(rel(run.sensitivities[0].axial_image_per_mm.unwrap(), 2.0) < 1e-9, "{:?}", run.sensitivities[0]);
}

/// A part inside a train: its own image shift times the longitudinal magnification m₂² of what follows
/// (Hecht). L1 (f 100) 150 mm from the object images at 450 mm with m₁ = −2, so its own shift is
/// 1 − 4 = −3 per mm; L2 (f 40) at 550 mm sees that image 100 mm before it and images it 66.67 mm after
/// it, m₂ = −2/3: L1 moves the final image by −3 · 4/9 = −4/3, L2 by 1 − 4/9 = 5/9.
#[test]
fn a_part_inside_a_train_is_scaled_by_the_longitudinal_magnification_after_it() {
    let train = r#"        (name: "L1", at_mm: 150.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 30.0)),
        (name: "L2", at_mm: 550.0, kind: ThinLens(focal_mm: 40.0, diameter_mm: 30.0)),
        (name: "Screen", at_mm: 616.6666666666666, kind: Screen(diameter_mm: 40.0)),"#;
    let (run, _) = tolerance_run(&bench(&on_rail(train, "")));
    assert!(rel(run.sensitivities[0].axial_image_per_mm.unwrap(), -4.0 / 3.0) < 1e-9, "{:?}", run.sensitivities);
    assert!(rel(run.sensitivities[1].axial_image_per_mm.unwrap(), 5.0 / 9.0) < 1e-9, "{:?}", run.sensitivities);
    // Decentres: δ(1 − m) for each lens's own image, carried to the final image by m₂ for L1:
    // L1: 0.1 · (1 − (−2)) · (−2/3) = −0.2 mm; L2: 0.1 · (1 + 2/3) mm (Smith's prism effect, chained).
    assert!(rel(run.sensitivities[0].decentre_image_um.unwrap(), -200.0) < 1e-9, "{:?}", run.sensitivities);
    assert!(rel(run.sensitivities[1].decentre_image_um.unwrap(), 100.0 * 5.0 / 3.0) < 1e-9);
}

/// A tilted plane-parallel plate shifts the collimated beam by t sin θ (1 − cos θ / √(n² − sin² θ))
/// (the plate formula; W. J. Smith, *Modern Optical Engineering*): exact at 10° in a trial (1e-12 mm),
/// and in the small-change limit t(1 − 1/n)θ per unit tilt in the sensitivities (1e-9 relative; the
/// symmetric difference's third-order term is below 1e-11 at its step).
#[test]
fn a_tilted_plate_shifts_the_image_by_the_plate_formula() {
    let text = r#"(
    format: 1,
    title: "A window in a collimated beam",
    rail_length_mm: 500.0,
    wavelengths_nm: [587.5618],
    primary_wavelength: 0,
    object: Distant(field_deg: 0.0, beam_diameter_mm: 10.0),
    parts: [
        (name: "Plate", at_mm: 100.0, kind: Singlet(front: Flat, back: Flat, thickness_mm: 8.0, diameter_mm: 30.0, material: Index(1.5168))),
        (name: "Screen", at_mm: 300.0, kind: Screen(diameter_mm: 40.0)),
    ],
)"#;
    let (t, n) = (8.0, 1.5168_f64);
    let (run, perturber) = tolerance_run(&bench(text));
    let per_step = run.sensitivities[0].tilt_image_um.unwrap();
    let small = -t * (1.0 - 1.0 / n) * 0.1_f64.to_radians() * 1e3;
    assert!(rel(per_step, small) < 1e-9, "{per_step} vs {small}");
    let theta = 10.0_f64.to_radians();
    let exact = t * theta.sin() * (1.0 - theta.cos() / (n * n - theta.sin().powi(2)).sqrt());
    let tilted = perturber.trial(&[PartErrors { tilt_x_deg: 10.0, ..PartErrors::default() }]).unwrap();
    assert!((tilted.centroid_mm.1 + exact).abs() < 1e-12, "{:?} vs {exact}", tilted.centroid_mm);
    // Every ray is shifted alike: the collimated beam keeps its size.
    assert!((tilted.rms_mm - perturber.nominal.rms_mm).abs() < 1e-12);
}

/// No error at all gives the nominal figures exactly, and the tolerance run's own on-axis bundle (Gauss
/// rings turned about the axis) gives the report's RMS spot on the screen to 1e-12 relative (the same
/// rings and weights; the azimuths only add rounding). The run compiles and analyses nothing.
#[test]
fn the_nominal_trial_is_the_reports_spot_and_the_run_reads_the_one_evaluation() {
    for name in ["camera-meniscus", "unit-relay", "colour-achromat", "one-lens-screen"] {
        let demo = DEMOS.iter().find(|d| d.name == name).unwrap();
        let b = parse(name, demo.text).unwrap().bench;
        let evaluation = Evaluation::of(&b);
        let before = counters();
        let (run, perturber) = ToleranceRun::of(&evaluation).unwrap();
        assert_eq!(counters(), before, "{name}: the run compiled or analysed");
        let screen = evaluation.report.screens.last().unwrap();
        let report_rms = screen.rms_spot_um.unwrap();
        // Where the spot is a point (ideal lenses), rounding of coordinates some 400 mm from the datum leaves
        // ~1e-13 mm: 1e-9 µm absolute then.
        let close = rel(run.nominal_rms_um, report_rms) < 1e-12 || (run.nominal_rms_um - report_rms).abs() < 1e-9;
        assert!(close, "{name}: {} vs {report_rms}", run.nominal_rms_um);
        let zero = vec![PartErrors::default(); run.limits.len()];
        assert_eq!(perturber.trial(&zero), Some(perturber.nominal), "{name}");
        // Every sensitivity is found on these benches.
        assert!(run.budget.missing.is_empty(), "{name}: {:?}", run.budget.missing);
    }
}

/// For small uniform tolerances the Monte Carlo's standard deviation of image position converges to
/// √Σ(sᵢaᵢ/√3)² = RSS/√3 (the σ of a uniform ±a is a/√3; the variance of a sum of independent terms is
/// the sum of their variances). 4000 trials: the sample σ's own standard error is σ/√(2N) ≈ 1.1 %, so
/// 5 % holds it at 4.5 standard errors.
#[test]
fn monte_carlo_sigma_of_image_position_is_rss_over_root_three() {
    let train = r#"        (name: "L1", at_mm: 150.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 30.0)),
        (name: "L2", at_mm: 550.0, kind: ThinLens(focal_mm: 40.0, diameter_mm: 30.0)),
        (name: "Screen", at_mm: 616.6666666666666, kind: Screen(diameter_mm: 40.0)),"#;
    let tolerances = r#"
    tolerances: [
        (part: "L1", position_mm: 0.01, decentre_mm: 0.0, tilt_deg: 0.0),
        (part: "L2", position_mm: 0.02, decentre_mm: 0.0, tilt_deg: 0.0),
    ],"#;
    let (run, perturber) = tolerance_run(&bench(&on_rail(train, tolerances)));
    let options = MonteCarloOptions { trials: 4000, seed: 7, distribution: Distribution::Uniform, refocus: false };
    let mc = monte_carlo(&perturber, &run.limits, &options, &Progress::default()).unwrap();
    let expected = run.budget.rss_axial_mm / 3.0_f64.sqrt();
    assert!(rel(mc.axial_sigma_mm, expected) < 0.05, "{} vs {expected}", mc.axial_sigma_mm);
    assert_eq!(mc.trials, 4000);
    assert_eq!(mc.histogram.counts.iter().sum::<usize>(), 4000);
}

/// The same seed gives the same result, on one thread or two; another seed gives another.
#[test]
fn monte_carlo_is_the_same_for_the_same_seed_on_any_number_of_threads() {
    let demo = DEMOS.iter().find(|d| d.name == "camera-meniscus").unwrap();
    let (run, perturber) = tolerance_run(&parse("camera", demo.text).unwrap().bench);
    for distribution in [Distribution::Uniform, Distribution::NORMAL] {
        let options = MonteCarloOptions { trials: 300, seed: 42, distribution, refocus: true };
        let on = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            pool.install(|| monte_carlo(&perturber, &run.limits, &options, &Progress::default()).unwrap())
        };
        let one = on(1);
        assert_eq!(one, on(2));
        assert_eq!(one, on(1));
        let other = MonteCarloOptions { seed: 43, ..options };
        let another = monte_carlo(&perturber, &run.limits, &other, &Progress::default()).unwrap();
        assert_ne!(one.rms_um, another.rms_um);
        // Refocusing never leaves a spot larger than the fixed screen gives, so the 98 % value is above
        // the nominal best-focus spot and the refocus moves are reported.
        assert!(one.refocus_mm.is_some() && one.rms_um.p50 <= one.rms_um.p98);
    }
}

/// A cancelled run says so and returns no figures.
#[test]
fn a_cancelled_monte_carlo_returns_nothing() {
    let (run, perturber) = tolerance_run(&bench(&on_rail(ONE_LENS, "")));
    let progress = Progress::default();
    progress.cancel.store(true, std::sync::atomic::Ordering::Relaxed);
    let options = MonteCarloOptions { trials: 500, ..MonteCarloOptions::default() };
    assert!(monte_carlo(&perturber, &run.limits, &options, &progress).is_err());
}

/// Limits in the bench file: read, kept through a save, and format-1 files without them read as before;
/// bad limits are refused with the file, line and column of the field.
#[test]
fn tolerances_in_the_bench_file_are_read_saved_and_checked_in_place() {
    let tolerances = r#"
    tolerances: [
        (part: "L", position_mm: 0.2, pivot: Carrier(below_axis_mm: 40.0)),
    ],"#;
    let b = bench(&on_rail(ONE_LENS, tolerances));
    let l = &limits(&b)[0];
    assert_eq!((l.position_mm, l.decentre_mm, l.tilt_deg), (0.2, 0.05, 0.1));
    assert_eq!(l.pivot, Pivot::Carrier { below_axis_mm: 40.0 });
    assert!(!l.common_practice);
    assert_eq!(bench(&to_text(&b)), b);
    assert!(!to_text(&bench(&on_rail(ONE_LENS, ""))).contains("tolerances"));
    let cases = [
        (r#"(part: "L", decentre_mm: -0.1)"#, "decentre_mm", "decentre limit"),
        (r#"(part: "Nope")"#, "part", "no part named \"Nope\""),
        (r#"(part: "Screen")"#, "part", "only lenses and mirrors"),
        (r#"(part: "L", tilt_deg: 45.0)"#, "tilt_deg", "tilt limit"),
        (r#"(part: "L", pivot: Carrier(below_axis_mm: -3.0))"#, "below_axis_mm", "below the axis"),
    ];
    for (entry, field, words) in cases {
        let text = on_rail(ONE_LENS, &format!("\n    tolerances: [\n        (part: \"L\"),\n        {entry},\n    ],"));
        let text = if entry.contains("\"L\"") { text.replacen("(part: \"L\"),\n", "", 1) } else { text };
        let e = parse("bench.ron", &text).unwrap_err();
        let d = &e.diagnostics[0];
        assert!(d.message.contains(words), "{e}");
        let line = text.lines().nth(d.place.line - 1).unwrap();
        let at = &line[line.char_indices().nth(d.place.col - 1).unwrap().0..];
        assert!(at.starts_with(field), "{entry}: placed at {}:{} `{at}`", d.place.line, d.place.col);
    }
    // The same part twice.
    let twice = on_rail(ONE_LENS, "\n    tolerances: [\n        (part: \"L\"),\n        (part: \"L\"),\n    ],");
    let e = parse("bench.ron", &twice).unwrap_err();
    assert!(e.to_string().contains("listed twice"), "{e}");
}

/// Figures that round to zero are written without a minus sign.
#[test]
fn numbers_that_round_to_zero_have_no_sign() {
    assert_eq!(fixed(-0.001, 2), "0.00");
    assert_eq!(fixed(-0.01, 2), "-0.01");
    assert_eq!(fixed(0.004, 2), "0.00");
    assert_eq!(fixed(-12.5, 1), "-12.5");
}

/// A tilt about a pivot P is the same tilt about the part's centre C followed by the shift
/// R(C − P) − (C − P) (a rigid motion's decomposition; elementary geometry): for a carrier mount L below
/// the axis and a tilt α about x, (0, L(cos α − 1), L sin α). The trial with the carrier pivot equals the
/// trial tilted about the centre and moved so, to 1e-12 mm.
#[test]
fn a_tilt_about_the_carrier_mount_is_a_tilt_about_the_centre_and_a_swing() {
    let singlet = r#"        (name: "L", at_mm: 300.0, kind: Singlet(front: Radius(80.0), back: Radius(-80.0), thickness_mm: 6.0, diameter_mm: 30.0, material: Index(1.6))),
        (name: "Screen", at_mm: 450.0, kind: Screen(diameter_mm: 40.0)),"#;
    let carrier = "\n    tolerances: [(part: \"L\", pivot: Carrier(below_axis_mm: 40.0))],";
    let (_, on_carrier) = tolerance_run(&bench(&on_rail(singlet, carrier)));
    let (_, centred) = tolerance_run(&bench(&on_rail(singlet, "")));
    let (alpha_deg, l) = (0.3_f64, 40.0);
    let a = alpha_deg.to_radians();
    let swung = on_carrier.trial(&[PartErrors { tilt_x_deg: alpha_deg, ..PartErrors::default() }]).unwrap();
    let same = centred
        .trial(&[PartErrors {
            tilt_x_deg: alpha_deg,
            dy_mm: l * (a.cos() - 1.0),
            dz_mm: l * a.sin(),
            ..PartErrors::default()
        }])
        .unwrap();
    assert!((swung.centroid_mm.1 - same.centroid_mm.1).abs() < 1e-12, "{swung:?} vs {same:?}");
    assert!((swung.rms_mm - same.rms_mm).abs() < 1e-12);
    // And the swing matters: without it the spot lands elsewhere.
    let unswung = centred.trial(&[PartErrors { tilt_x_deg: alpha_deg, ..PartErrors::default() }]).unwrap();
    assert!((unswung.rms_mm - swung.rms_mm).abs() > 1e-6);
}
