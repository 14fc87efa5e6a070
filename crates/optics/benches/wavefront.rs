//! Benchmark of the sharpness figures: the whole MTF of one off-axis field point at 64 × 64 pupil samples
//! (aiming and tracing every sample through a cemented doublet and a singlet, the wavefront on its
//! reference sphere, the Zernike fit, both autocorrelations), and the PSF's FFT alone.
#![allow(missing_docs)] // criterion_group! generates undocumented items.

use criterion::{Criterion, criterion_group, criterion_main};
use lumenrail_optics::diffraction::{Mtf, Psf};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::{FirstOrder, Object};
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use lumenrail_optics::wavefront::{Wavefront, WavefrontRequest};
use std::hint::black_box;

/// A 100 mm doublet-like pair and a field lens: five surfaces, 20 mm apertures.
fn system() -> Sequence {
    System {
        object_medium: Material::AIR,
        surfaces: vec![
            Surface::refracting(50.0, Shape::sphere(61.0), Material::Constant(1.517)).with_semi_aperture(10.0),
            Surface::refracting(56.0, Shape::sphere(-44.0), Material::Constant(1.62)).with_semi_aperture(10.0),
            Surface::refracting(58.5, Shape::sphere(-130.0), Material::AIR).with_semi_aperture(10.0),
            Surface::refracting(90.0, Shape::sphere(200.0), Material::Constant(1.517)).with_semi_aperture(10.0),
            Surface::refracting(93.0, Shape::Flat, Material::AIR).with_semi_aperture(10.0),
        ],
    }
    .at(587.5618)
    .unwrap()
}

fn bench(c: &mut Criterion) {
    let seq = system();
    let object = Object::Distant { field_deg: 1.5, beam_diameter_mm: 10.0 };
    let pupils = Pupils::find(&seq, &object).unwrap();
    let image_at_mm = FirstOrder::of(&seq).unwrap().back_focus_at_mm.unwrap();
    let request = WavefrontRequest { fraction: 1.0, image_at_mm, samples_across: 64 };
    c.bench_function("mtf_one_field_point_64x64", |b| {
        b.iter(|| {
            let wf = Wavefront::of(&seq, object, &pupils, &request).unwrap();
            black_box(Mtf::of(&[(1.0, &wf)]).unwrap())
        })
    });
    let wf = Wavefront::of(&seq, object, &pupils, &request).unwrap();
    c.bench_function("psf_fft_64x64_padding_2", |b| b.iter(|| black_box(Psf::of(&wf, 2))));
}

criterion_group!(benches, bench);
criterion_main!(benches);
