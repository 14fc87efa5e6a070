//! The per-frame work while a part is dragged: the bench's one evaluation and the rail scene projected from
//! it, the five analysis views recomputed, for every demo bench; and whole headless frames.
#![allow(missing_docs)] // criterion_group! generates undocumented items.

use criterion::{Criterion, criterion_group, criterion_main};
use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_workbench::Workbench;
use lumenrail_workbench::scene::Scene;
use std::hint::black_box;

fn drag_recompute(c: &mut Criterion) {
    let mut g = c.benchmark_group("drag_recompute");
    for d in DEMOS {
        let mut bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
        g.bench_function(d.name, |b| {
            let mut k = 0u32;
            b.iter(|| {
                // Move the first part by a hair each frame, as a drag does.
                k = k.wrapping_add(1);
                bench.parts[0].at_mm += if k.is_multiple_of(2) { 0.01 } else { -0.01 };
                let evaluation = Evaluation::of(&bench);
                black_box(Scene::of(&evaluation));
                black_box(evaluation)
            })
        });
    }
    g.finish();
}

/// The analysis views (spot, fan, sweep, colour, field, every point and wavelength) recomputed for a
/// moved part, as the views panel does each frame of a drag.
fn views_recompute(c: &mut Criterion) {
    use lumenrail_bench::views::{ViewRequest, Views};
    let mut g = c.benchmark_group("views_recompute");
    for d in DEMOS {
        let mut bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
        let request = ViewRequest::default();
        g.bench_function(d.name, |b| {
            let mut k = 0u32;
            b.iter(|| {
                k = k.wrapping_add(1);
                bench.parts[0].at_mm += if k.is_multiple_of(2) { 0.01 } else { -0.01 };
                black_box(Views::of(&Evaluation::of(&bench), &request))
            })
        });
    }
    g.finish();
}

/// A whole frame of the workbench (layout, rail drawing, readout, the views panel when shown; egui's CPU
/// work, headless) while the first part is moved each frame.
fn whole_frame(c: &mut Criterion) {
    for (group, views) in [("whole_frame", true), ("whole_frame_views_hidden", false)] {
        let mut g = c.benchmark_group(group);
        for name in ["one-lens-screen", "colour-achromat", "unit-relay", "camera-meniscus"] {
            let mut wb = Workbench::demo(name);
            wb.views.shown = views;
            let mut h = egui_kittest::Harness::builder()
                .with_size(egui::vec2(1400.0, 860.0))
                .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
            h.run();
            let mut k = 0u32;
            g.bench_function(name, |b| {
                b.iter(|| {
                    k = k.wrapping_add(1);
                    let at = h.state().bench.parts[0].at_mm + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
                    h.state_mut().apply(lumenrail_workbench::Edit::Move { index: 0, at_mm: at }, Some("bench"));
                    h.step();
                })
            });
        }
        g.finish();
    }
}

/// A whole frame while the arranger searches in the background (every three-lens arrangement of the
/// starter drawer for a relay, restarted whenever it finishes): the window must keep drawing in ≤ 16 ms.
fn frame_while_arranging(c: &mut Criterion) {
    let text = r#"(format: 1, title: "relay", rail_length_mm: 500.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
        object: Point(at_mm: 0.0, height_mm: 1.0),
        parts: [(name: "L", at_mm: 150.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 25.0)),
                (name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))],
        aims: [Magnification(value: -1.0, tolerance: 0.01)])"#;
    let bench = lumenrail_bench::file::parse("relay", text).unwrap().bench;
    let mut wb = Workbench::new(bench, None);
    wb.left = lumenrail_workbench::LeftPage::Aims;
    wb.arranger.max_parts = 3;
    let mut h = egui_kittest::Harness::builder()
        .with_size(egui::vec2(1400.0, 860.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
    h.step();
    let mut g = c.benchmark_group("whole_frame_while_arranging");
    g.bench_function("unit-relay aim, 3 lenses from the starter drawer", |b| {
        b.iter(|| {
            if !h.state().arranger.running() {
                h.state_mut().start_arranger();
            }
            h.step();
        })
    });
    g.finish();
    h.state_mut().cancel_arranger();
}

/// A whole frame of the stress bench (`demos::heavy_train_text`: 60 parts, 12 wavelengths, a 30° field
/// that the train vignettes, so its vignetting is integrated) while its objective is dragged, views panel
/// open on the spot view and hidden. The target is 16 ms.
fn whole_frame_heavy(c: &mut Criterion) {
    let text = lumenrail_bench::demos::heavy_train_text();
    let bench = lumenrail_bench::file::parse("heavy", &text).unwrap().bench;
    let objective = bench.parts.iter().position(|p| p.name == "Objective").unwrap();
    let mut g = c.benchmark_group("whole_frame_heavy");
    for (name, views) in [("60 parts, 12 wavelengths, 30 deg, views open", true), ("the same, views hidden", false)] {
        let mut wb = Workbench::new(bench.clone(), None);
        wb.views.shown = views;
        // As the window does: slow work goes to background threads.
        wb.offload_slow_work(true);
        let mut h = egui_kittest::Harness::builder()
            .with_size(egui::vec2(1400.0, 860.0))
            .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
        h.run();
        let mut k = 0u32;
        g.bench_function(name, |b| {
            b.iter(|| {
                k = k.wrapping_add(1);
                let at = h.state().bench.parts[objective].at_mm + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
                h.state_mut().apply(lumenrail_workbench::Edit::Move { index: objective, at_mm: at }, Some("bench"));
                h.step();
            })
        });
    }
    g.finish();
}

criterion_group!(benches, drag_recompute, views_recompute, whole_frame, frame_while_arranging, whole_frame_heavy);
criterion_main!(benches);
