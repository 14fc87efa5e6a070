//! Structured benches (`arbitrary`): every number of the object and of up to six parts chosen by the
//! fuzzer, so the numeric paths are explored past the parser. Benches that validation refuses are fine;
//! a valid one goes through everything downstream.
#![no_main]

use arbitrary::Arbitrary;
use libfuzzer_sys::fuzz_target;
use lumenrail_bench::model::{Bench, MaterialSpec, ObjectSpec, Part, PartKind, SurfaceSpec};

#[derive(Debug, Arbitrary)]
struct Input {
    distant: bool,
    object_a: f64,
    object_b: f64,
    rail: f64,
    wavelengths: Vec<f64>,
    primary: u8,
    parts: Vec<PartIn>,
}

#[derive(Debug, Arbitrary)]
struct PartIn {
    kind: u8,
    at: f64,
    a: f64,
    b: f64,
    c: f64,
    d: f64,
    n: f64,
    carrier: Option<f64>,
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
    Part { name: format!("P{k}"), at_mm: p.at, kind, carrier_mm: p.carrier, from_drawer: None }
}

fuzz_target!(|input: Input| {
    if input.parts.len() > 6 || input.wavelengths.len() > 4 {
        return;
    }
    let bench = Bench {
        format: 1,
        title: "fuzz".into(),
        rail_length_mm: input.rail,
        wavelengths_nm: input.wavelengths.clone(),
        primary_wavelength: usize::from(input.primary),
        wavelength_weights: Vec::new(),
        object: if input.distant {
            ObjectSpec::Distant { field_deg: input.object_a, beam_diameter_mm: input.object_b }
        } else {
            ObjectSpec::Point { at_mm: input.object_a, height_mm: input.object_b }
        },
        parts: input.parts.iter().enumerate().map(|(k, p)| part(k, p)).collect(),
        aims: Vec::new(),
        laser: None,
    };
    let valid =
        lumenrail_bench::validate::validate(&bench).iter().all(|f| f.severity != lumenrail_bench::validate::Severity::Error);
    if valid {
        lumenrail_fuzz::check_bench(&bench);
    }
});
