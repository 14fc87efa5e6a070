//! Gaussian beams checked against published formulas.
//!
//! The formulas are recalled from memory of the sources named beside each check (not copied from the
//! texts); they agree with one another where they overlap (Self's waist law becomes free propagation as
//! f → ∞, the expander law follows from the ABCD law), which the checks below also exercise. Tolerances
//! are 1e-12 relative where the program and the closed form do the same arithmetic in a different order
//! (a few roundings of numbers of order 1), and looser only where a formula is itself an approximation, as
//! said beside it.

use lumenrail_optics::beam::{BeamParameter, BeamTrace, LaserSource, passed_share, peak_irradiance_mw_per_mm2};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::SystemMatrix;
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use std::f64::consts::PI;

const HENE_NM: f64 = 632.8;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn seq(surfaces: Vec<Surface>) -> Sequence {
    let surfaces = surfaces.into_iter().enumerate().map(|(i, s)| s.in_element(i)).collect();
    System { object_medium: Material::AIR, surfaces }.at(HENE_NM).unwrap()
}

fn source(w0: f64, at: f64, m2: f64) -> LaserSource {
    LaserSource { wavelength_nm: HENE_NM, waist_radius_mm: w0, waist_at_mm: at, m_squared: m2 }
}

/// z_R = π w₀² / (M² λ) (Siegman, *Lasers*, 1986, ch. 17), λ in mm.
fn rayleigh(w0: f64, m2: f64) -> f64 {
    PI * w0 * w0 / (m2 * HENE_NM * 1e-6)
}

/// Free propagation w(z) = w₀ √(1 + (z/z_R)²) (Siegman, *Lasers*, 1986; Saleh & Teich, *Fundamentals of
/// Photonics*, ch. 3), at irises that do not change the beam, and between them.
#[test]
fn free_propagation_follows_the_gaussian_law() {
    let (w0, m2) = (0.4, 1.0);
    let s = seq(vec![Surface::aperture(100.0, 10.0), Surface::aperture(800.0, 10.0), Surface::aperture(3000.0, 10.0)]);
    let b = BeamTrace::of(&s, source(w0, 20.0, m2)).unwrap();
    let zr = rayleigh(w0, m2);
    let law = |z: f64| w0 * (1.0 + ((z - 20.0) / zr).powi(2)).sqrt();
    for surf in &b.surfaces {
        assert!(rel(surf.radius_mm, law(surf.z_mm)) < 1e-12, "{} vs {}", surf.radius_mm, law(surf.z_mm));
    }
    for z in [20.0, 350.0, 2999.0, 5000.0] {
        let k = b.surfaces.iter().filter(|s| s.z_mm <= z).count();
        assert!(rel(b.radius_at(k, z), law(z)) < 1e-12);
    }
    // Irises do not form waists: only the source's is listed, with z_R and θ = λ/(π w₀) (Siegman).
    assert_eq!(b.waists.len(), 1);
    let w = b.waists[0];
    assert!(rel(w.rayleigh_range_mm, zr) < 1e-12);
    assert!(rel(w.far_field_half_angle_rad, HENE_NM * 1e-6 / (PI * w0)) < 1e-12);
}

/// The waist behind a thin lens in closed form (S. A. Self, "Focusing of spherical Gaussian beams",
/// Appl. Opt. 22, 658 (1983)): with the input waist s before the lens,
/// 1/(s + z_R²/(s − f)) + 1/s' = 1/f and w₀' = w₀ / √((1 − s/f)² + (z_R/f)²).
#[test]
fn a_thin_lens_focuses_by_selfs_law() {
    for (w0, s_in, f) in [(0.4, 0.0, 100.0), (0.2, 300.0, 80.0), (0.05, 50.0, 120.0), (1.0, 1500.0, -200.0)] {
        let lens_at = 2000.0;
        let sq = seq(vec![Surface::ideal_lens(lens_at, f)]);
        let b = BeamTrace::of(&sq, source(w0, lens_at - s_in, 1.0)).unwrap();
        let zr = rayleigh(w0, 1.0);
        let s_out = 1.0 / (1.0 / f - 1.0 / (s_in + zr * zr / (s_in - f)));
        let w_out = w0 / ((1.0 - s_in / f).powi(2) + (zr / f).powi(2)).sqrt();
        let waist = b.waists[1];
        assert!(rel(waist.at_mm - lens_at, s_out) < 1e-12, "f {f}: {} vs {s_out}", waist.at_mm - lens_at);
        assert!(rel(waist.radius_mm, w_out) < 1e-12);
        assert_eq!(waist.real, s_out > 0.0);
    }
}

/// A collimated beam (waist at the lens) focuses short of the paraxial focus: the waist lies at
/// f / (1 + (f/z_R)²) (the focal shift, Self 1983 with s = 0), and in the far-field limit z_R ≫ f its
/// radius tends to λf/(π w) (Siegman, *Lasers*, 1986; Saleh & Teich).
#[test]
fn a_collimated_beam_focuses_short_of_the_focus() {
    let (w0, f) = (0.8, 100.0);
    let sq = seq(vec![Surface::ideal_lens(500.0, f)]);
    let b = BeamTrace::of(&sq, source(w0, 500.0, 1.0)).unwrap();
    let zr = rayleigh(w0, 1.0);
    let waist = b.waists[1];
    let shift = (waist.at_mm - 500.0) - f;
    assert!(shift < 0.0);
    assert!(rel(waist.at_mm - 500.0, f / (1.0 + (f / zr).powi(2))) < 1e-12);
    // w₀' = λf/(πw)/√(1 + (f/z_R)²): the far-field form is off by (f/z_R)²/2 ≈ 3e-5 here.
    let far_field = HENE_NM * 1e-6 * f / (PI * w0);
    assert!(rel(waist.radius_mm, far_field) < 0.6 * (f / zr).powi(2));
    assert!(rel(waist.radius_mm, far_field / (1.0 + (f / zr).powi(2)).sqrt()) < 1e-12);
}

/// The ABCD law q' = (Aq + B)/(Cq + D) for a whole thick system (H. Kogelnik and T. Li, "Laser beams and
/// resonators", Appl. Opt. 5, 1550 (1966)) agrees with the surface-by-surface trace: a cemented doublet
/// and a thick singlet with glass between, the system matrix from the y-nu trace.
#[test]
fn the_whole_matrix_and_the_steps_agree() {
    let glass1 = Material::Constant(1.62);
    let glass2 = Material::Constant(1.75);
    let surfaces = vec![
        Surface::refracting(200.0, Shape::sphere(61.0), glass1.clone()).in_element(0),
        Surface::refracting(206.0, Shape::sphere(-44.0), glass2).in_element(0),
        Surface::refracting(208.5, Shape::sphere(-130.0), Material::AIR).in_element(0),
        Surface::refracting(260.0, Shape::sphere(-35.0), glass1).in_element(1),
        Surface::refracting(265.0, Shape::Flat, Material::AIR).in_element(1),
    ];
    let sq = System { object_medium: Material::AIR, surfaces }.at(HENE_NM).unwrap();
    let src = source(0.3, 20.0, 1.3);
    let b = BeamTrace::of(&sq, src).unwrap();
    let m = SystemMatrix::of(&sq);
    let q1 = b.start.propagated(200.0 - 20.0);
    let whole = q1.transformed(m.a, m.b, m.c, m.d);
    let steps = *b.after.last().unwrap();
    assert!(rel(steps.re_mm, whole.re_mm) < 1e-12 && rel(steps.im_mm, whole.im_mm) < 1e-12, "{steps:?} {whole:?}");
}

/// A plane-parallel plate of thickness t and index n acts on a beam as free space of t/n (reduced
/// distance; Siegman, *Lasers*, 1986): the waist seen through it shifts by t(1 − 1/n), its size unchanged.
#[test]
fn a_plate_shifts_the_waist_by_the_reduced_thickness() {
    let (t, n) = (10.0, 1.5);
    let sq = seq(vec![
        Surface::refracting(100.0, Shape::Flat, Material::Constant(n)),
        Surface::refracting(100.0 + t, Shape::Flat, Material::AIR),
    ]);
    let b = BeamTrace::of(&sq, source(0.1, 0.0, 1.0)).unwrap();
    let q = b.after[1];
    let waist_at = 100.0 + t + q.reduced_to_waist_mm();
    assert!((waist_at - t * (1.0 - 1.0 / n)).abs() < 1e-12);
    assert!(rel(q.waist_radius_mm(HENE_NM, 1.0), 0.1) < 1e-12);
    // Inside the glass, the waist's Rayleigh range is n times longer (λ/n): z_R = π n w₀²/λ.
    assert!(rel(b.after[0].im_mm * n, n * rayleigh(0.1, 1.0)) < 1e-12);
}

/// An afocal Keplerian expander of ratio M = f₂/f₁ multiplies the waist by M and divides the far-field
/// divergence by M, wherever the input waist lies (ABCD with C = 0: q' = M² q + M B; Siegman).
#[test]
fn a_keplerian_expander_widens_the_waist_by_its_ratio() {
    let (f1, f2) = (20.0, 100.0);
    for waist_at in [0.0, 45.0, -300.0] {
        let sq = seq(vec![Surface::ideal_lens(50.0, f1), Surface::ideal_lens(50.0 + f1 + f2, f2)]);
        let b = BeamTrace::of(&sq, source(0.4, waist_at, 1.0)).unwrap();
        let (w_in, w_out) = (b.waists[0], *b.waists.last().unwrap());
        assert!(rel(w_out.radius_mm, 5.0 * w_in.radius_mm) < 1e-12);
        assert!(rel(w_out.far_field_half_angle_rad, w_in.far_field_half_angle_rad / 5.0) < 1e-12);
        assert!(rel(w_out.rayleigh_range_mm, 25.0 * w_in.rayleigh_range_mm) < 1e-12);
    }
}

/// Reversibility: the output beam conjugated (q → −q*, the same beam travelling back) and sent back
/// through the reversed bench returns as −q₀*, the source's own waist (Kogelnik and Li 1966; Siegman).
#[test]
fn the_reversed_beam_returns_to_the_source_waist() {
    let (f1, f2, l) = (20.0, 100.0, 1000.0);
    let forward = seq(vec![Surface::ideal_lens(50.0, f1), Surface::ideal_lens(175.0, f2)]);
    let src = source(0.4, 10.0, 1.0);
    let b = BeamTrace::of(&forward, src).unwrap();
    // At a plane z = 600 after the last lens, reversed; the bench reflected about z = l/2 so that the
    // reversed light travels +z: a point z maps to l − z.
    let q_out = b.parameter_at(2, 600.0).reversed();
    let backward = seq(vec![Surface::ideal_lens(l - 175.0, f2), Surface::ideal_lens(l - 50.0, f1)]);
    let m = SystemMatrix::of(&backward);
    // From l − 600 to the first vertex at l − 175, through the reversed bench, on to the source at l − 10.
    let q = q_out.propagated(600.0 - 175.0).transformed(m.a, m.b, m.c, m.d).propagated(50.0 - 10.0);
    let q0 = b.start.reversed();
    assert!(q.re_mm.abs() < 1e-12 * q0.im_mm, "{q:?}");
    assert!(rel(q.im_mm, q0.im_mm) < 1e-12);
}

/// A concave mirror of radius R focuses like a thin lens of f = R/2 and the light returns along −z
/// (Self's law with f = |R|/2): the signed indices carry the turn.
#[test]
fn a_concave_mirror_focuses_the_beam_back() {
    let sq = seq(vec![Surface::mirror(1000.0, Shape::sphere(-400.0))]);
    let (w0, s_in, f) = (0.5, 600.0, 200.0);
    let b = BeamTrace::of(&sq, source(w0, 1000.0 - s_in, 1.0)).unwrap();
    let zr = rayleigh(w0, 1.0);
    let s_out = 1.0 / (1.0 / f - 1.0 / (s_in + zr * zr / (s_in - f)));
    let waist = b.waists[1];
    assert!(rel(1000.0 - waist.at_mm, s_out) < 1e-12);
    assert!(rel(waist.radius_mm, w0 / ((1.0 - s_in / f).powi(2) + (zr / f).powi(2)).sqrt()) < 1e-12);
    // Half way back to the waist the beam is wider than at it.
    assert!(b.radius_at(1, 1000.0 - 0.5 * s_out) > waist.radius_mm);
}

/// M² scaling, the embedded Gaussian (A. E. Siegman, Proc. SPIE 1224, 2 (1990); recalled from memory): a
/// beam of quality M² and waist W₀ spreads as a Gaussian of wavelength M²λ: z_R = π W₀²/(M²λ),
/// θ = M²λ/(π W₀), W(z) = W₀ √(1 + (z/z_R)²); its aperture shares are marked as estimates.
#[test]
fn m_squared_scales_as_an_embedded_gaussian() {
    let m2 = 3.0;
    let sq = seq(vec![Surface::aperture(400.0, 1.0), Surface::ideal_lens(600.0, 150.0)]);
    let real = BeamTrace::of(&sq, source(0.5, 0.0, m2)).unwrap();
    let embedded = BeamTrace::of(
        &sq,
        LaserSource { wavelength_nm: m2 * HENE_NM, waist_radius_mm: 0.5, waist_at_mm: 0.0, m_squared: 1.0 },
    )
    .unwrap();
    for (a, b) in real.surfaces.iter().zip(&embedded.surfaces) {
        assert!(rel(a.radius_mm, b.radius_mm) < 1e-12);
        assert!(a.share_is_estimate && !b.share_is_estimate);
    }
    let (wa, wb) = (real.waists[1], embedded.waists[1]);
    assert!(rel(wa.at_mm, wb.at_mm) < 1e-12 && rel(wa.radius_mm, wb.radius_mm) < 1e-12);
    assert!(rel(real.waists[0].rayleigh_range_mm, rayleigh(0.5, m2)) < 1e-12);
    assert!(rel(real.waists[0].far_field_half_angle_rad, m2 * HENE_NM * 1e-6 / (PI * 0.5)) < 1e-12);
    let zr = rayleigh(0.5, m2);
    assert!(rel(real.surfaces[0].radius_mm, 0.5 * (1.0 + (400.0 / zr).powi(2)).sqrt()) < 1e-12);
}

/// A centred circular aperture of radius a passes 1 − exp(−2a²/w²) of a Gaussian's power: direct
/// integration of 2P/(πw²)·exp(−2r²/w²)·2πr over the disc (Simpson's rule, 4000 intervals: its error,
/// of order h⁴, is below 1e-13 here). The peak irradiance is 2P/(πw²) (Siegman).
#[test]
fn an_aperture_passes_the_integrated_share() {
    let w = 1.3;
    let intensity = |r: f64| 2.0 / (PI * w * w) * (-2.0 * r * r / (w * w)).exp() * 2.0 * PI * r;
    for a in [0.2, 0.65, 1.3, 2.0, 3.5] {
        let n = 4000;
        let h = a / n as f64;
        let mut sum = intensity(0.0) + intensity(a);
        for k in 1..n {
            sum += intensity(k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
        }
        let integral = sum * h / 3.0;
        assert!((passed_share(a, w) - integral).abs() < 1e-12, "a {a}: {} vs {integral}", passed_share(a, w));
    }
    // The classic figures: a = w passes 86.47 %, a = 1.5 w passes 98.89 %.
    assert!((passed_share(1.0, 1.0) - 0.864_664_716_763_387).abs() < 1e-15);
    assert!((passed_share(1.5, 1.0) - 0.988_891_003_461_758).abs() < 1e-15);
    assert!(rel(peak_irradiance_mw_per_mm2(1.0, 0.4), 2.0 / (PI * 0.16)) < 1e-15);
}

/// The beam at a waist is flat (no curvature); a beam parameter's curvature radius is R = z + z_R²/z.
#[test]
fn the_wavefront_radius_follows_the_gaussian_law() {
    let q = BeamParameter::at_waist(0.4, HENE_NM, 1.0);
    assert_eq!(q.curvature_radius_mm(1.0), None);
    let zr = rayleigh(0.4, 1.0);
    let z = 300.0;
    assert!(rel(q.propagated(z).curvature_radius_mm(1.0).unwrap(), z + zr * zr / z) < 1e-12);
}
