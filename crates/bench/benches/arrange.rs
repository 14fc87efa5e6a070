//! The arranger on a 60-item drawer (the starter drawer and seven thin lenses): every 2-part
//! arrangement, both ways round, for a unit-magnification relay onto a screen 400 mm from the object,
//! searched and ranked (target ≤ 1 s on a 2-core machine); and every 3-part arrangement (≤ 20 s).
#![allow(missing_docs)] // criterion_group! generates undocumented items.

use criterion::{Criterion, criterion_group, criterion_main};
use lumenrail_bench::arrange::{Options, Progress, arrange};
use lumenrail_bench::drawer::{Drawer, DrawerItem, starter};
use lumenrail_bench::model::{Bench, PartKind};
use std::hint::black_box;

/// The starter drawer with thin lenses of ±40, 60, 80, 120, 160 and 240 mm: 60 items.
fn sixty() -> Drawer {
    let mut d = starter();
    for f in [40.0, -40.0, 60.0, 80.0, 120.0, 160.0, 240.0] {
        d.items.push(DrawerItem {
            label: format!("thin f{f}"),
            quantity: 2,
            mechanical_diameter_mm: 25.4,
            notes: String::new(),
            part: PartKind::ThinLens { focal_mm: f, diameter_mm: 22.86 },
        });
    }
    d.items.truncate(60);
    assert_eq!(d.items.len(), 60);
    d
}

fn relay() -> Bench {
    let text = r#"(format: 1, title: "relay aim", rail_length_mm: 500.0, wavelengths_nm: [486.1327, 587.5618, 656.2725],
        primary_wavelength: 1, object: Point(at_mm: 0.0, height_mm: 2.0),
        parts: [(name: "Camera plane", at_mm: 400.0, kind: Screen(diameter_mm: 30.0))],
        aims: [SharpOn(screen: "Camera plane", rms_um: 20.0), Magnification(value: -1.0, tolerance: 0.01)])"#;
    lumenrail_bench::file::parse("relay", text).unwrap().bench
}

fn arranger(c: &mut Criterion) {
    let (bench, drawer) = (relay(), sixty());
    let mut g = c.benchmark_group("arrange");
    g.sample_size(10);
    for parts in [1, 2, 3] {
        let options = Options { min_parts: parts, max_parts: parts, ..Options::default() };
        g.bench_function(format!("{parts}-part relay, 60-item drawer"), |b| {
            b.iter(|| black_box(arrange(&bench, &drawer, &options, &Progress::default()).unwrap()))
        });
    }
    g.finish();
}

criterion_group!(benches, arranger);
criterion_main!(benches);
