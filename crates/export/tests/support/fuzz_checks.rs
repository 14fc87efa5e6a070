//! What every fuzz target (and the replay of its findings, `crates/export/tests/fuzz_regressions.rs`) checks once it has a valid bench: the one evaluation, the report as text and
//! JSON, every view and its CSV, the rail drawing, the mount sheet and its files, the tolerance run, and the
//! file round trip. Nothing may panic, and no NaN or infinity may reach a file or a screen's text.

use arbitrary::Arbitrary;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::model::{Bench, MaterialSpec, ObjectSpec, Part, PartKind, SurfaceSpec};
use lumenrail_bench::views::{ViewKind, ViewRequest, Views};

/// Panics (a finding) if `text` shows a non-finite number.
pub fn finite_text(what: &str, text: &str) {
    for bad in ["NaN", "inf"] {
        // "inf" inside words ("info", "infinity" in prose) is fine; a number printed as inf is not.
        let shows = text.match_indices(bad).any(|(i, _)| {
            let before = text[..i].chars().next_back();
            let after = text[i + bad.len()..].chars().next();
            !before.is_some_and(char::is_alphabetic) && !after.is_some_and(char::is_alphabetic)
        });
        assert!(!shows, "{what} shows {bad}:\n{text}");
    }
}

/// Evaluates a valid bench and checks everything projected from it.
pub fn check_bench(bench: &Bench) {
    let eval = Evaluation::of(bench);
    let report = &eval.report;
    // The user's own words may say "inf" or "NaN"; the numbers may not.
    let words_say = |t: &str| {
        let t = t.to_ascii_lowercase();
        t.contains("inf") || t.contains("nan")
    };
    let user_text = words_say(&bench.title) || bench.parts.iter().any(|p| words_say(&p.name));
    let finite_text = |what: &str, text: &str| {
        if !user_text {
            finite_text(what, text);
        }
    };
    finite_text("the report", &report.to_text());
    let json = report.to_json();
    assert!(serde_json::from_str::<serde_json::Value>(&json).is_ok(), "the JSON does not parse");
    let views = Views::of(&eval, &ViewRequest::default());
    for kind in ViewKind::ALL {
        if let Some(csv) = lumenrail_export::csv::view_csv(&views, kind) {
            finite_text("a view's CSV", &csv);
        }
    }
    let scene = lumenrail_export::scene::Scene::of(&eval);
    let svg = lumenrail_export::rail::rail_svg(&eval, &scene);
    finite_text("the rail SVG", &svg);
    let sheet = lumenrail_bench::mount::MountSheet::of(&eval, &Default::default());
    finite_text("the mount sheet", &sheet.to_text(false));
    if let Ok(csv) = lumenrail_export::mount::mount_csv(&sheet, false) {
        finite_text("the mount sheet's CSV", &csv);
    }
    // The tolerance run, with a short Monte Carlo: a typed error or finite figures.
    if let Ok((mut run, perturber)) = lumenrail_bench::tolerance::ToleranceRun::of(&eval) {
        let options = lumenrail_bench::tolerance::MonteCarloOptions { trials: 16, ..Default::default() };
        let progress = lumenrail_bench::arrange::Progress::default();
        run.monte_carlo = lumenrail_bench::tolerance::monte_carlo(&perturber, &run.limits, &options, &progress).ok();
        finite_text("the tolerance run", &run.to_text());
        assert!(serde_json::from_str::<serde_json::Value>(&run.to_json()).is_ok(), "the tolerance JSON does not parse");
    }
    // What is saved reads back as the same bench (parts in rail order).
    let text = lumenrail_bench::file::to_text(bench);
    let back = lumenrail_bench::file::parse("round trip", &text).expect("a saved valid bench loads");
    let mut sorted = bench.clone();
    sorted.parts = bench.rail_order().into_iter().map(|i| bench.parts[i].clone()).collect();
    assert_eq!(back.bench, sorted, "the bench changed through save and load");
}

/// A bench as the fuzzer chooses it: the object, the rail, the wavelengths and up to six parts.
#[derive(Debug, Arbitrary)]
pub struct Input {
    /// Chosen by the fuzzer.
    pub distant: bool,
    /// Chosen by the fuzzer.
    pub object_a: f64,
    /// Chosen by the fuzzer.
    pub object_b: f64,
    /// Chosen by the fuzzer.
    pub rail: f64,
    /// Chosen by the fuzzer.
    pub wavelengths: Vec<f64>,
    /// Chosen by the fuzzer.
    pub primary: u8,
    /// Chosen by the fuzzer.
    pub parts: Vec<PartIn>,
}

/// One part as the fuzzer chooses it: a kind and its numbers.
#[derive(Debug, Arbitrary)]
pub struct PartIn {
    /// Chosen by the fuzzer.
    pub kind: u8,
    /// Chosen by the fuzzer.
    pub at: f64,
    /// Chosen by the fuzzer.
    pub a: f64,
    /// Chosen by the fuzzer.
    pub b: f64,
    /// Chosen by the fuzzer.
    pub c: f64,
    /// Chosen by the fuzzer.
    pub d: f64,
    /// Chosen by the fuzzer.
    pub n: f64,
    /// Chosen by the fuzzer.
    pub carrier: Option<f64>,
}

fn surface(r: f64) -> SurfaceSpec {
    if r == 0.0 || !r.is_finite() { SurfaceSpec::Flat } else { SurfaceSpec::Radius(r) }
}

fn part(k: usize, p: &PartIn) -> Part {
    let kind = match p.kind % 6 {
        0 => PartKind::ThinLens { focal_mm: p.a, diameter_mm: p.d },
        1 => PartKind::Singlet {
            front: surface(p.a),
            back: surface(p.b),
            thickness_mm: p.c,
            diameter_mm: p.d,
            material: MaterialSpec::Index(p.n),
        },
        2 => PartKind::Doublet {
            front: surface(p.a),
            middle: surface(p.b),
            back: surface(-p.a),
            thickness1_mm: p.c,
            thickness2_mm: 0.5 * p.c,
            material1: MaterialSpec::Abbe { nd: p.n, vd: 60.0 },
            material2: MaterialSpec::Named("fused-silica".into()),
            diameter_mm: p.d,
        },
        3 => PartKind::Mirror { surface: surface(p.a), diameter_mm: p.d },
        4 => PartKind::Iris { diameter_mm: p.d },
        _ => PartKind::Screen { diameter_mm: p.d },
    };
    Part { name: format!("P{k}"), at_mm: p.at, kind, carrier_mm: p.carrier, from_drawer: None, coatings: Vec::new() }
}

impl Input {
    /// The bench the input describes, if it is small enough and valid.
    pub fn bench(&self) -> Option<Bench> {
        if self.parts.len() > 6 || self.wavelengths.len() > 4 {
            return None;
        }
        let bench = Bench {
            format: 1,
            title: "fuzz".into(),
            rail_length_mm: self.rail,
            wavelengths_nm: self.wavelengths.clone(),
            primary_wavelength: usize::from(self.primary),
            wavelength_weights: Vec::new(),
            object: if self.distant {
                ObjectSpec::Distant { field_deg: self.object_a, beam_diameter_mm: self.object_b }
            } else {
                ObjectSpec::Point { at_mm: self.object_a, height_mm: self.object_b }
            },
            parts: self.parts.iter().enumerate().map(|(k, p)| part(k, p)).collect(),
            aims: Vec::new(),
            laser: None,
            tolerances: Vec::new(),
        };
        let valid = lumenrail_bench::validate::validate(&bench)
            .iter()
            .all(|f| f.severity != lumenrail_bench::validate::Severity::Error);
        valid.then_some(bench)
    }
}
