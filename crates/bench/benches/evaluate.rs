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

/// Files from anywhere, up to 10 MB: each loads (and is evaluated) or is refused, in well under a second.
/// A 10 MB file is refused at its size before it is read; a file just under the 4 MB limit, of 36 000 parts, is
/// read, parsed and refused at its part count; a 500-part bench (the most a bench may hold) loads and is evaluated.
fn large_files(c: &mut Criterion) {
    let dir = std::env::temp_dir().join(format!("lumenrail-large-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bench_text = |parts: usize, kind: &dyn Fn(usize) -> String| {
        let mut t = String::from(
            "(format: 1, title: \"large\", rail_length_mm: 10200.0, wavelengths_nm: [486.1327, 587.5618, 656.2725], \
             primary_wavelength: 1, object: Point(at_mm: 0.0, height_mm: 1.0), parts: [\n",
        );
        for i in 0..parts {
            t.push_str(&format!(
                "    (name: \"Part {i}\", at_mm: {:.2}, kind: {}, carrier_mm: 10.0),\n",
                100.0 + 20.0 * i as f64,
                kind(i)
            ));
        }
        t.push_str("])\n");
        t
    };
    let lens_or_screen = |i: usize| {
        if i.is_multiple_of(2) {
            "ThinLens(focal_mm: 100.0, diameter_mm: 25.0)".to_string()
        } else {
            "Screen(diameter_mm: 30.0)".to_string()
        }
    };
    let huge = dir.join("huge.bench.ron");
    std::fs::write(&huge, " ".repeat(10 * 1024 * 1024)).unwrap();
    let many = dir.join("many.bench.ron");
    let text = bench_text(36_000, &lens_or_screen);
    assert!(text.len() as u64 <= lumenrail_bench::file::MAX_FILE_BYTES && text.len() > 3_500_000, "{}", text.len());
    std::fs::write(&many, text).unwrap();
    let full = dir.join("full.bench.ron");
    std::fs::write(&full, bench_text(500, &lens_or_screen)).unwrap();
    let mut g = c.benchmark_group("large_files");
    g.bench_function("10 MB, refused at its size", |b| {
        b.iter(|| black_box(lumenrail_bench::file::load(&huge).is_err()))
    });
    g.bench_function("under 4 MB, 36000 parts, refused at the count", |b| {
        b.iter(|| black_box(lumenrail_bench::file::load(&many).is_err()))
    });
    g.bench_function("500 parts, loaded and evaluated", |b| {
        b.iter(|| black_box(Evaluation::of(&lumenrail_bench::file::load(&full).unwrap().bench)))
    });
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, placement, evaluation, stray_map, large_files);
criterion_main!(benches);
