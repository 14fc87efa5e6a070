//! A heavily vignetted 60-part bench dragged in the workbench: the frames do not wait for the vignetting
//! integration or the views, the readout and the views panel say what is being computed, and the figures
//! that arrive are the whole evaluation's.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_workbench::{Edit, Workbench};
use std::time::{Duration, Instant};

#[test]
fn dragging_a_vignetted_heavy_bench_integrates_off_the_frame() {
    let bench = lumenrail_bench::file::parse("heavy", &lumenrail_bench::demos::heavy_train_text()).unwrap().bench;
    let objective = bench.parts.iter().position(|p| p.name == "Objective").unwrap();
    let mut h =
        Harness::builder().with_size(egui::vec2(1400.0, 860.0)).build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), {
            let mut wb = Workbench::new(bench, None);
            // As the window does.
            wb.offload_slow_work(true);
            wb
        });
    h.step();
    // Drag the objective a few steps: once one integration has outlasted its share of a frame (it takes
    // tens of ms here; a debug build more), the next are left to the background thread.
    let mut pending_seen = false;
    let mut views_seen = false;
    for k in 1..=4 {
        let at = 100.0 + 0.25 * f64::from(k);
        h.state_mut().apply(Edit::Move { index: objective, at_mm: at }, Some("drag"));
        // The edit returns at once with the vignetting left pending (the rays, images and spots are
        // already there); the frame draws while the thread integrates.
        pending_seen |= h.state().vignetting_pending();
        h.step();
        if h.state().vignetting_pending() {
            assert!(h.query_all_by_label_contains("being computed").next().is_some(), "the readout says so");
        }
        views_seen |= h.state().views_computing();
    }
    assert!(pending_seen, "a drag over the heavy bench left its vignetting to the background");
    assert!(views_seen, "the spot view of 12 wavelengths went to the background");
    let started = Instant::now();
    while h.state().vignetting_pending() {
        assert!(started.elapsed() < Duration::from_secs(120), "the integration never arrived");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    // The views panel (open, on the spot view) computes off the frame too once a view has been slow; when
    // it is done the panel shows the view of the bench on screen.
    let started = Instant::now();
    while h.state().views_computing() {
        assert!(started.elapsed() < Duration::from_secs(120), "the view never arrived");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.step();
    assert!(h.query_by_label_contains("computing").is_none());
    let whole = Evaluation::of(&h.state().bench);
    assert_eq!(h.state().evaluation.report.to_json(), whole.report.to_json());
    assert!(h.query_all_by_label_contains("being computed").next().is_none());
}
