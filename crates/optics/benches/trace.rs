//! Benchmarks of the exact trace: the batched meridional kernel (portable and AVX2 builds) on 10^6 rays
#![allow(missing_docs)] // criterion_group! generates undocumented items.
//! through 10 spherical surfaces, the batched skew kernel on the same, and the whole first-order + stop + spot evaluation of a 12-surface
//! system.

use criterion::{BatchSize, Criterion, Throughput, criterion_group, criterion_main};
use lumenrail_optics::analysis::{Request, analyse};
use lumenrail_optics::batch::{RayBatch, trace_batch, trace_batch_portable};
#[cfg(target_arch = "x86_64")]
use lumenrail_optics::batch::{trace_batch_avx2, trace_batch_avx512};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::skew::SkewRay;
use lumenrail_optics::skew_batch::{SkewBatch, trace_skew_batch, trace_skew_batch_par, trace_skew_batch_portable};
#[cfg(target_arch = "x86_64")]
use lumenrail_optics::skew_batch::{trace_skew_batch_avx2, trace_skew_batch_avx512};
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use lumenrail_optics::trace::Ray;
use std::hint::black_box;

const RAYS: usize = 1_000_000;

/// Five spherical singlets (10 surfaces), 25 mm clear aperture, indices 1.52 and 1.62.
fn ten_surfaces() -> Sequence {
    System { object_medium: Material::AIR, surfaces: ten_surface_list() }.at(587.5618).unwrap()
}

/// The surfaces of [`ten_surfaces`].
fn ten_surface_list() -> Vec<Surface> {
    let mut surfaces = Vec::new();
    for i in 0..5 {
        let z = 20.0 + 40.0 * i as f64;
        let n = if i % 2 == 0 { 1.52 } else { 1.62 };
        surfaces.push(Surface::refracting(z, Shape::sphere(80.0), Material::Constant(n)).with_semi_aperture(12.5));
        surfaces.push(Surface::refracting(z + 5.0, Shape::sphere(-120.0), Material::AIR).with_semi_aperture(12.5));
    }
    surfaces
}

/// Rays evenly spread over ±`half_height_mm` at the first surface (±6 mm: every ray passes the 12.5 mm
/// apertures; ±20 mm: 37% are blocked at the first surface).
fn fresh_batch(half_height_mm: f64) -> RayBatch {
    let mut b = RayBatch::with_capacity(RAYS);
    for i in 0..RAYS {
        let y = half_height_mm * (2.0 * (i as f64 / RAYS as f64) - 1.0);
        b.push(Ray::at_angle(y, 0.0, 0.002 * (i % 7) as f64));
    }
    b
}

fn batch_trace(c: &mut Criterion) {
    let seq = ten_surfaces();
    let template = fresh_batch(6.0);
    let partly_blocked = fresh_batch(20.0);
    let mut g = c.benchmark_group("meridional_batch");
    g.throughput(Throughput::Elements((RAYS * seq.steps.len()) as u64));
    g.sample_size(20);
    let fresh = || template.clone();
    g.bench_function("dispatched_1e6_rays_10_surfaces", |b| {
        b.iter_batched_ref(fresh, |work| trace_batch(&seq, black_box(work)), BatchSize::LargeInput)
    });
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma") {
        g.bench_function("avx2_1e6_rays_10_surfaces", |b| {
            // SAFETY: AVX2 and FMA were just detected.
            b.iter_batched_ref(fresh, |work| unsafe { trace_batch_avx2(&seq, black_box(work)) }, BatchSize::LargeInput)
        });
    }
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx512f") && std::arch::is_x86_feature_detected!("fma") {
        g.bench_function("avx512_1e6_rays_10_surfaces", |b| {
            // SAFETY: AVX-512 F and FMA were just detected (AVX2 comes with AVX-512 F).
            b.iter_batched_ref(
                fresh,
                |work| unsafe { trace_batch_avx512(&seq, black_box(work)) },
                BatchSize::LargeInput,
            )
        });
    }
    g.bench_function("dispatched_1e6_rays_10_surfaces_37pc_blocked", |b| {
        b.iter_batched_ref(|| partly_blocked.clone(), |work| trace_batch(&seq, black_box(work)), BatchSize::LargeInput)
    });
    g.bench_function("portable_1e6_rays_10_surfaces", |b| {
        b.iter_batched_ref(fresh, |work| trace_batch_portable(&seq, black_box(work)), BatchSize::LargeInput)
    });
    g.finish();
}

/// Skew rays from an off-axis point filling a 12 mm disk at the first surface. The 12.5 mm rims stop about
/// half of them on the way (48.2% get through, as in the C loop of `compare.sh`, which traces the same rays).
fn fresh_skew_batch() -> SkewBatch {
    let mut b = SkewBatch::with_capacity(RAYS);
    for i in 0..RAYS {
        let (r, phi) = (6.0 * (i as f64 / RAYS as f64).sqrt(), 2.399_963 * i as f64);
        b.push(SkewRay::towards([0.0, -3.0, 0.0], [r * phi.sin(), r * phi.cos(), 20.0]));
    }
    b
}

fn skew_batch_trace(c: &mut Criterion) {
    let seq = ten_surfaces();
    let template = fresh_skew_batch();
    let mut g = c.benchmark_group("skew_batch");
    g.throughput(Throughput::Elements((RAYS * seq.steps.len()) as u64));
    g.sample_size(20);
    let fresh = || template.clone();
    g.bench_function("dispatched_1e6_rays_10_surfaces", |b| {
        b.iter_batched_ref(fresh, |work| trace_skew_batch(&seq, black_box(work)), BatchSize::LargeInput)
    });
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma") {
        g.bench_function("avx2_1e6_rays_10_surfaces", |b| {
            // SAFETY: AVX2 and FMA were just detected.
            b.iter_batched_ref(
                fresh,
                |work| unsafe { trace_skew_batch_avx2(&seq, black_box(work)) },
                BatchSize::LargeInput,
            )
        });
    }
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx512f") && std::arch::is_x86_feature_detected!("fma") {
        g.bench_function("avx512_1e6_rays_10_surfaces", |b| {
            // SAFETY: AVX-512 F and FMA were just detected (AVX2 comes with AVX-512 F).
            b.iter_batched_ref(
                fresh,
                |work| unsafe { trace_skew_batch_avx512(&seq, black_box(work)) },
                BatchSize::LargeInput,
            )
        });
    }
    g.bench_function("portable_1e6_rays_10_surfaces", |b| {
        b.iter_batched_ref(fresh, |work| trace_skew_batch_portable(&seq, black_box(work)), BatchSize::LargeInput)
    });
    g.finish();
}

/// A spot of 10^7 skew rays (the 1e6-ray bundle's pattern, ten times as dense) through the ten surfaces
/// to a screen, and its RMS radius: traced by `trace_skew_batch_par` in fixed pieces and summed in fixed
/// blocks, on one thread and on two (one per core here).
fn large_spot(c: &mut Criterion) {
    let mut surfaces = ten_surface_list();
    surfaces.push(Surface::aperture(260.0, 60.0));
    let seq = System { object_medium: Material::AIR, surfaces }.at(587.5618).unwrap();
    let n = 10 * RAYS;
    let mut template = SkewBatch::with_capacity(n);
    for i in 0..n {
        let (r, phi) = (6.0 * (i as f64 / n as f64).sqrt(), 2.399_963 * i as f64);
        template.push(SkewRay::towards([0.0, -3.0, 0.0], [r * phi.sin(), r * phi.cos(), 20.0]));
    }
    let mut g = c.benchmark_group("spot_1e7_skew_rays_11_surfaces");
    g.throughput(Throughput::Elements((n * seq.steps.len()) as u64));
    g.sample_size(10);
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
        g.bench_function(format!("{threads}_threads"), |b| {
            b.iter_batched_ref(
                || template.clone(),
                |work| {
                    pool.install(|| {
                        trace_skew_batch_par(&seq, black_box(work));
                        black_box(work.rms_radius_mm())
                    })
                },
                BatchSize::LargeInput,
            )
        });
    }
    g.finish();
}

/// A 12-surface system: an iris and a doublet-like stack of singlets, finite object.
fn twelve_surfaces() -> System {
    let mut surfaces = vec![Surface::aperture(95.0, 6.0).in_element(0)];
    let radii = [(60.0, -45.0), (-40.0, 200.0), (90.0, -70.0), (45.0, 120.0), (-60.0, -150.0)];
    for (i, (r1, r2)) in radii.iter().enumerate() {
        let z = 100.0 + 18.0 * i as f64;
        let glass =
            if i % 2 == 0 { Material::Abbe { nd: 1.517, vd: 64.2 } } else { Material::Abbe { nd: 1.62, vd: 36.4 } };
        surfaces.push(Surface::refracting(z, Shape::sphere(*r1), glass).with_semi_aperture(12.0).in_element(i + 1));
        surfaces.push(
            Surface::refracting(z + 4.0, Shape::sphere(*r2), Material::AIR).with_semi_aperture(12.0).in_element(i + 1),
        );
    }
    surfaces.push(Surface::aperture(300.0, 20.0).in_element(6));
    System { object_medium: Material::AIR, surfaces }
}

fn whole_evaluation(c: &mut Criterion) {
    let system = twelve_surfaces();
    assert_eq!(system.surfaces.len(), 12);
    let request = Request {
        object: Object::Finite { z_mm: 0.0, height_mm: 2.0 },
        wavelengths_nm: vec![587.5618],
        primary: 0,
        planes_mm: vec![400.0],
        partial_planes: Vec::new(),
        vignetting: false,
        weights: Vec::new(),
    };
    c.bench_function("first_order_stop_spot_12_surfaces", |b| {
        b.iter(|| analyse(black_box(&system), black_box(&request)).unwrap())
    });
}

criterion_group!(benches, batch_trace, skew_batch_trace, large_spot, whole_evaluation);
criterion_main!(benches);
