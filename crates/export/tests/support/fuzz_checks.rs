//! What every fuzz target (and the replay of its findings, `crates/export/tests/fuzz_regressions.rs`) checks once it has a valid bench: the one evaluation, the report as text and
//! JSON, every view and its CSV, the rail drawing, the mount sheet and its files, and the file round
//! trip. Nothing may panic, and no NaN or infinity may reach a file or a screen's text.

use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::model::Bench;
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
    finite_text("the report", &report.to_text());
    let json = report.to_json();
    assert!(serde_json::from_str::<serde_json::Value>(&json).is_ok(), "the JSON does not parse");
    let views = Views::of(&eval, &ViewRequest::default());
    for kind in [ViewKind::Spot, ViewKind::Fan, ViewKind::Sweep, ViewKind::Colour, ViewKind::Field] {
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
    // What is saved reads back as the same bench (parts in rail order).
    let text = lumenrail_bench::file::to_text(bench);
    let back = lumenrail_bench::file::parse("round trip", &text).expect("a saved valid bench loads");
    let mut sorted = bench.clone();
    sorted.parts = bench.rail_order().into_iter().map(|i| bench.parts[i].clone()).collect();
    assert_eq!(back.bench, sorted, "the bench changed through save and load");
}
