//! The evaluation stage: the cheap path after one part moved (first order, stop and the on-axis RMS spot
//! on the last screen), the whole evaluation (everything the readout and the rail show), and the whole
//! evaluation with the spot view the panel opens on, for every demo bench; the stray-focus map alone.
#![allow(missing_docs)] // criterion_group! generates undocumented items.

use criterion::{Criterion, criterion_group, criterion_main};
use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::{Evaluation, Placer};
use lumenrail_bench::model::PartKind;
use lumenrail_bench::views::{ViewKind, ViewRequest, Views};
use std::hint::black_box;

/// The part a drag moves: the first lens (or mirror) on the rail, and a step small enough to keep the order.
fn moved_part(bench: &lumenrail_bench::model::Bench) -> usize {
    bench
        .rail_order()
        .into_iter()
        .find(|&i| !matches!(bench.parts[i].kind, PartKind::Screen { .. } | PartKind::Iris { .. }))
        .unwrap_or(0)
}

fn placement(c: &mut Criterion) {
    let mut g = c.benchmark_group("placement");
    for d in DEMOS {
        let bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
        let evaluation = Evaluation::of(&bench);
        let Ok(mut placer) = Placer::new(&evaluation) else { continue };
        let i = moved_part(&bench);
        let at = bench.parts[i].at_mm;
        g.bench_function(d.name, |b| {
            let mut k = 0u32;
            b.iter(|| {
                k = k.wrapping_add(1);
                let _ = placer.place(i, at + if k.is_multiple_of(2) { 0.01 } else { -0.01 });
                black_box(placer.figures())
            })
        });
    }
    g.finish();
}

fn evaluation(c: &mut Criterion) {
    for (group, view) in [("evaluation", None), ("evaluation_with_spot_view", Some(ViewKind::Spot))] {
        let mut g = c.benchmark_group(group);
        for d in DEMOS {
            let mut bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
            let i = moved_part(&bench);
            let request = ViewRequest::default();
            g.bench_function(d.name, |b| {
                let mut k = 0u32;
                b.iter(|| {
                    k = k.wrapping_add(1);
                    bench.parts[i].at_mm += if k.is_multiple_of(2) { 0.01 } else { -0.01 };
                    let e = Evaluation::of(&bench);
                    if let Some(v) = view {
                        black_box(Views::only(&e, &request, &[v]));
                    }
                    black_box(e)
                })
            });
        }
        g.finish();
    }
}

/// The stray-focus map alone, from an evaluated bench: every back-reflection and double reflection of the
/// spatial-filter demo (6 glass surfaces, 21 paths), each with its laser beam carried along.
fn stray_map(c: &mut Criterion) {
    let d = lumenrail_bench::demos::find("laser-pinhole").unwrap();
    let bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
    let e = Evaluation::of(&bench);
    let traced = e.traced.as_ref().unwrap();
    c.bench_function("stray_map/laser-pinhole", |b| {
        b.iter(|| black_box(lumenrail_bench::stray::StrayFigures::of(&bench, traced, &e.screens)))
    });
}

criterion_group!(benches, placement, evaluation, stray_map);
criterion_main!(benches);
