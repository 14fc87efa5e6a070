//! The arranger against closed forms of Gaussian imaging and the telescope relations, against an
//! exhaustive scan, and on the rules it must keep (carriers apart, the rail, quantities, impossible aims).

use lumenrail_bench::arrange::{Options, Progress, arrange};
use lumenrail_bench::drawer::{Drawer, DrawerItem, parse as parse_drawer};
use lumenrail_bench::file::parse;
use lumenrail_bench::model::{Aim, Bench, PartKind};

fn thin(label: &str, f: f64, quantity: u32) -> DrawerItem {
    DrawerItem {
        label: label.into(),
        quantity,
        mechanical_diameter_mm: 25.4,
        notes: String::new(),
        part: PartKind::ThinLens { focal_mm: f, diameter_mm: 22.0 },
    }
}

fn drawer(items: Vec<DrawerItem>) -> Drawer {
    Drawer { format: 1, title: "test".into(), items }
}

/// An object at 0 and a screen at 400 mm on a 500 mm rail.
fn relay_bench(aims: Vec<Aim>) -> Bench {
    let text = r#"(format: 1, title: "relay aim", rail_length_mm: 500.0, wavelengths_nm: [587.5618],
        primary_wavelength: 0, object: Point(at_mm: 0.0, height_mm: 1.0),
        parts: [(name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))])"#;
    let mut b = parse("t", text).unwrap().bench;
    b.aims = aims;
    b
}

fn unit_relay_aims() -> Vec<Aim> {
    vec![Aim::SharpOn { screen: "Screen".into(), rms_um: 1.0 }, Aim::Magnification { value: -1.0, tolerance: 1e-3 }]
}

/// One part, object to screen 400 mm, m = −1: the f = 100 mm thin lens at the middle, 200 mm from each
/// (Gaussian imaging: s = −2f, s′ = 2f; Hecht, sec. 5.2). The 50 and 150 mm lenses cannot: 4f ≠ 400.
#[test]
fn one_thin_lens_at_unit_magnification_sits_in_the_middle() {
    let bench = relay_bench(unit_relay_aims());
    let d = drawer(vec![thin("f50", 50.0, 1), thin("f100", 100.0, 1), thin("f150", 150.0, 1)]);
    let options = Options { min_parts: 1, max_parts: 1, ..Options::default() };
    let got = arrange(&bench, &d, &options, &Progress::default()).unwrap();
    let best = &got.candidates[0];
    assert!(best.meets_all(), "{best:?}");
    assert_eq!(best.parts.len(), 1);
    assert_eq!(best.parts[0].label, "f100");
    assert!((best.parts[0].at_mm - 200.0).abs() < 1e-9, "{}", best.parts[0].at_mm);
    assert!(got.candidates.iter().filter(|c| c.meets_all()).all(|c| c.parts[0].label == "f100"));
}

/// With a thick singlet the object-to-image distance at m = −1 is 4f plus the principal planes'
/// separation (thick-lens Gaussian imaging between principal planes; Hecht, sec. 6.1): the arranger's
/// placement puts the lens's front principal plane 2f from the object, to 1e-6 mm before the exact
/// refinement moves it by the spherical aberration's focus shift (bounded here by 0.5 mm).
#[test]
fn a_thick_lens_at_unit_magnification_spans_four_f_plus_its_principal_planes() {
    // An equiconvex singlet, f about 95 mm, for a 400 mm conjugate with its principal planes.
    let text = r#"(format: 1, title: "t", items: [
        (label: "biconvex", quantity: 1, mechanical_diameter_mm: 25.4,
         part: Singlet(front: Radius(100.0), back: Radius(-100.0), thickness_mm: 6.0, diameter_mm: 20.0, material: Index(1.5)))])"#;
    let d = parse_drawer("d", text).unwrap().drawer;
    // Thick lens: 1/f = (n−1)[2/R − (n−1)t/(nR²)], the principal planes t(n−1)/(nR)·R… from each vertex.
    let (n, r, t) = (1.5f64, 100.0f64, 6.0f64);
    let f = 1.0 / ((n - 1.0) * (2.0 / r - (n - 1.0) * t / (n * r * r)));
    let h = f * (n - 1.0) * t / (n * r); // each principal plane's distance inside its vertex
    let separation = t - 2.0 * h;
    let mut bench = relay_bench(vec![
        Aim::Magnification { value: -1.0, tolerance: 1e-2 },
        Aim::SharpOn { screen: "Screen".into(), rms_um: 1e3 },
    ]);
    bench.parts[0].at_mm = 4.0 * f + separation;
    let options = Options { min_parts: 1, max_parts: 1, ..Options::default() };
    let got = arrange(&bench, &d, &options, &Progress::default()).unwrap();
    let best = &got.candidates[0];
    assert!(best.meets_all(), "{best:?}");
    let front_principal = best.parts[0].at_mm + h;
    assert!((front_principal - 2.0 * f).abs() < 0.5, "H at {front_principal}, 2f = {}", 2.0 * f);
}

/// A collimated ×5 expander: a Keplerian pair f₁ = 20, f₂ = 100 spaced f₁ + f₂ = 120 mm, and a Galilean
/// pair with the negative lens first, f₁ = −20, f₂ = 100, spaced f₂ − |f₁| = 80 mm (afocal condition:
/// the spacing is the sum of the signed focal lengths; telescope relations, Hecht sec. 5.7).
#[test]
fn five_times_expanders_are_keplerian_and_galilean_pairs_at_the_telescope_spacings() {
    let text = r#"(format: 1, title: "beam", rail_length_mm: 600.0, wavelengths_nm: [632.8], primary_wavelength: 0,
        object: Distant(field_deg: 0.0, beam_diameter_mm: 2.0), parts: [])"#;
    let mut bench = parse("t", text).unwrap().bench;
    bench.aims = vec![Aim::BeamExpansion { ratio: 5.0, tolerance: 1e-6 }];
    let d = drawer(vec![thin("f20", 20.0, 1), thin("f-20", -20.0, 1), thin("f100", 100.0, 1), thin("f50", 50.0, 1)]);
    let options = Options { min_parts: 2, max_parts: 2, top: 50, ..Options::default() };
    let got = arrange(&bench, &d, &options, &Progress::default()).unwrap();
    let met: Vec<_> = got.candidates.iter().filter(|c| c.meets_all()).collect();
    let spacing = |labels: [&str; 2]| {
        met.iter()
            .find(|c| c.parts[0].label == labels[0] && c.parts[1].label == labels[1])
            .map(|c| c.parts[1].at_mm - c.parts[0].at_mm)
    };
    let kepler = spacing(["f20", "f100"]).expect("a Keplerian pair");
    let galileo = spacing(["f-20", "f100"]).expect("a Galilean pair");
    assert!((kepler - 120.0).abs() < 1e-9, "{kepler}");
    assert!((galileo - 80.0).abs() < 1e-9, "{galileo}");
    // The other orders or pairs widen by 1/5 or 2.5: none meets the aim.
    assert_eq!(met.len(), 2, "{met:?}");
    // The Galilean pair is shorter and ranks first.
    assert_eq!(met[0].parts[0].label, "f-20");
}

/// On a small drawer, an exhaustive scan of every pair and a fine position grid finds no arrangement
/// meeting the aims with a smaller RMS spot than the arranger's best (to 1e-3 relative).
#[test]
fn an_exhaustive_scan_finds_nothing_better_than_the_arrangers_best() {
    let bench = relay_bench(vec![
        Aim::SharpOn { screen: "Screen".into(), rms_um: 1e4 },
        Aim::Magnification { value: -2.0, tolerance: 0.02 },
    ]);
    let text = r#"(format: 1, title: "t", items: [
        (label: "A", quantity: 1, mechanical_diameter_mm: 25.4, part: Singlet(front: Radius(51.7), back: Flat, thickness_mm: 4.0, diameter_mm: 20.0, material: Abbe(nd: 1.517, vd: 64.2))),
        (label: "B", quantity: 1, mechanical_diameter_mm: 25.4, part: Singlet(front: Radius(77.55), back: Flat, thickness_mm: 4.0, diameter_mm: 20.0, material: Abbe(nd: 1.517, vd: 64.2)))])"#;
    let d = parse_drawer("d", text).unwrap().drawer;
    let options = Options { min_parts: 1, max_parts: 2, top: 5, ..Options::default() };
    let got = arrange(&bench, &d, &options, &Progress::default()).unwrap();
    let best = got.candidates.iter().find(|c| c.meets_all()).expect("some arrangement meets the aims");
    let best_rms = best.rms_on_axis_um.unwrap();
    // The scan: each item either way round alone, on a 0.25 mm grid; met aims judged by the report.
    let mut scanned = 0;
    for k in 0..2 {
        for turned in [false, true] {
            let mut kind = d.items[k].part.clone();
            if turned {
                kind = kind.turned();
            }
            for step in 0..1560 {
                let x = 5.0 + 0.25 * step as f64;
                let mut b = bench.clone();
                b.parts.push(lumenrail_bench::model::Part {
                    name: "L".into(),
                    at_mm: x,
                    kind: kind.clone(),
                    carrier_mm: None,
                    from_drawer: None,
                    coatings: Vec::new(),
                });
                let r = lumenrail_bench::report::Report::of(&b);
                scanned += 1;
                if r.aims.iter().all(|a| a.met) {
                    let rms = r.screens.iter().find(|s| s.part == "Screen").and_then(|s| s.rms_spot_um).unwrap();
                    assert!(rms >= best_rms * (1.0 - 1e-3), "{x} mm, turned {turned}: {rms} µm < {best_rms} µm");
                }
            }
        }
    }
    assert!(scanned > 6000);
}

/// The rules: candidates stay on the rail between the object and the screen, never overlap the bench's
/// parts or each other (with the gap), a quantity-1 item is never used twice, the same input ranks the
/// same on 1 and 2 threads, and an impossible aim gives ranked nearest misses, not a panic.
#[test]
fn candidates_keep_the_rules_and_rank_the_same_on_any_thread_count() {
    let mut bench = relay_bench(unit_relay_aims());
    // A fixed iris in the way at 195–197 mm.
    bench.parts.push(lumenrail_bench::model::Part {
        name: "Iris".into(),
        at_mm: 150.0,
        kind: PartKind::Iris { diameter_mm: 20.0 },
        carrier_mm: Some(2.0),
        from_drawer: None,
        coatings: Vec::new(),
    });
    let d = drawer(vec![thin("f100", 100.0, 1), thin("f50", 50.0, 2), thin("f75", 75.0, 1), thin("f-50", -50.0, 1)]);
    let options = Options { min_parts: 1, max_parts: 2, top: 40, gap_mm: 3.0 };
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().unwrap();
    let two = rayon::ThreadPoolBuilder::new().num_threads(2).build().unwrap();
    let a = one.install(|| arrange(&bench, &d, &options, &Progress::default()).unwrap());
    let b = two.install(|| arrange(&bench, &d, &options, &Progress::default()).unwrap());
    assert_eq!(a, b, "the ranking depends on the thread count");
    assert!(!a.candidates.is_empty());
    for c in &a.candidates {
        let mut xs: Vec<f64> = c.parts.iter().map(|p| p.at_mm).collect();
        xs.push(150.0);
        xs.sort_by(f64::total_cmp);
        assert!(xs.windows(2).all(|w| w[1] - w[0] >= 3.0 - 1e-9), "{c:?}");
        assert!(c.parts.iter().all(|p| p.at_mm > 0.0 && p.at_mm < 400.0), "{c:?}");
        for k in [0, 2, 3] {
            assert!(c.parts.iter().filter(|p| p.item == k).count() <= 1, "{c:?}");
        }
    }
    // Impossible: m = −1 at 400 mm needs f = 100 mm, and no lens of the drawer can.
    let none = drawer(vec![thin("f30", 30.0, 1)]);
    let got = arrange(&bench, &none, &Options { min_parts: 1, max_parts: 1, ..options }, &Progress::default()).unwrap();
    assert!(got.candidates.iter().all(|c| !c.meets_all()));
}

/// Cancelling stops the search and says so.
#[test]
fn a_cancelled_search_says_so() {
    let bench = relay_bench(unit_relay_aims());
    let d = lumenrail_bench::drawer::starter();
    let progress = Progress::default();
    progress.cancel.store(true, std::sync::atomic::Ordering::Relaxed);
    let got = arrange(&bench, &d, &Options::default(), &progress).unwrap();
    assert!(got.cancelled && got.candidates.is_empty());
}
