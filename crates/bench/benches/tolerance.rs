//! The tolerance run: every sensitivity of a six-lens bench (limits, the posed trials' set-up, the
//! cheap path's axial moves, the exact decentres and tilts, the budget), and 10 000 Monte Carlo trials
//! with the exact on-axis RMS spot on the screen, on the machine's rayon pool.
#![allow(missing_docs)] // criterion_group! generates undocumented items.

use criterion::{Criterion, criterion_group, criterion_main};
use lumenrail_bench::arrange::Progress;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::tolerance::{Distribution, MonteCarloOptions, ToleranceRun, monte_carlo};
use std::hint::black_box;

const SIX_LENSES: &str = include_str!("six-lens.bench.ron");

fn evaluation() -> Evaluation {
    let bench = lumenrail_bench::file::parse("six-lens", SIX_LENSES).unwrap().bench;
    Evaluation::of(&bench)
}

fn sensitivities(c: &mut Criterion) {
    let e = evaluation();
    let (run, _) = ToleranceRun::of(&e).unwrap();
    assert_eq!(run.limits.len(), 6, "six lenses to tolerance");
    c.bench_function("tolerance/all_sensitivities_six_lenses", |b| b.iter(|| black_box(ToleranceRun::of(&e).unwrap())));
}

fn trials(c: &mut Criterion) {
    let e = evaluation();
    let (run, perturber) = ToleranceRun::of(&e).unwrap();
    let mut g = c.benchmark_group("tolerance");
    g.sample_size(10);
    for (name, refocus) in [("monte_carlo_10000", false), ("monte_carlo_10000_refocus", true)] {
        let options = MonteCarloOptions { trials: 10_000, seed: 1, distribution: Distribution::Uniform, refocus };
        g.bench_function(name, |b| {
            b.iter(|| black_box(monte_carlo(&perturber, &run.limits, &options, &Progress::default()).unwrap()))
        });
    }
    g.finish();
}

criterion_group!(benches, sensitivities, trials);
criterion_main!(benches);
