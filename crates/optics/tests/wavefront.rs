//! Wavefront, PSF and MTF checks against exact cases and published formulas (issue 16).

use lumenrail_optics::diffraction::{Mtf, Psf, axis_otf, diffraction_mtf, psf_at, strehl};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::{FirstOrder, Object};
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::seidel::seidel;
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use lumenrail_optics::wavefront::{Wavefront, WavefrontRequest};

const WAVE_NM: f64 = 550.0;

/// An ideal lens of focal length `f` at z = 100 lit by an axial collimated beam of diameter `d`.
fn ideal(f: f64, d: f64) -> (Sequence, Object, Pupils) {
    let seq =
        System { object_medium: Material::AIR, surfaces: vec![Surface::ideal_lens(100.0, f)] }.at(WAVE_NM).unwrap();
    let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: d };
    let pupils = Pupils::find(&seq, &object).unwrap();
    (seq, object, pupils)
}

fn wavefront(seq: &Sequence, object: Object, pupils: &Pupils, image_at_mm: f64, across: usize) -> Wavefront {
    Wavefront::of(seq, object, pupils, &WavefrontRequest { fraction: 0.0, image_at_mm, samples_across: across })
        .unwrap()
}

/// Least-squares fit of W(ρ) = Σ c_k ρ^(2k), k = 0..=K, on the Gauss-rings samples (on axis W depends
/// on ρ only): the coefficients c_0 .. c_K.
#[allow(clippy::needless_range_loop)] // Gauss–Jordan reads two rows at once
fn radial_fit(wf: &Wavefront, k_max: usize) -> Vec<f64> {
    let n = k_max + 1;
    let mut g = vec![vec![0.0; n + 1]; n];
    for s in &wf.samples {
        let r2 = s.px * s.px + s.py * s.py;
        let basis: Vec<f64> = (0..n).map(|k| r2.powi(k as i32)).collect();
        for i in 0..n {
            for j in 0..n {
                g[i][j] += s.weight * basis[i] * basis[j];
            }
            g[i][n] += s.weight * basis[i] * s.waves;
        }
    }
    // Gauss–Jordan with partial pivoting.
    for c in 0..n {
        let p = (c..n).max_by(|&a, &b| g[a][c].abs().total_cmp(&g[b][c].abs())).unwrap();
        g.swap(c, p);
        for r in 0..n {
            if r != c {
                let f = g[r][c] / g[c][c];
                for k in c..=n {
                    g[r][k] -= f * g[c][k];
                }
            }
        }
    }
    (0..n).map(|i| g[i][n] / g[i][i]).collect()
}

/// A perfect imager gives no wavefront error: an ideal lens (tan u' = tan u − y/f with its path term,
/// DESIGN.md) and a paraboloidal mirror on axis (the paraboloid focuses a collimated axial beam exactly;
/// a conic with k = −1). 100 mm of path holds 1.8 × 10⁵ waves, so 1e-7 waves is a few ulps of the path.
#[test]
fn perfect_imagers_have_no_wavefront_error() {
    let (seq, object, pupils) = ideal(100.0, 20.0);
    let wf = wavefront(&seq, object, &pupils, 200.0, 32);
    assert!(wf.rms_waves < 1e-7 && wf.pv_waves < 1e-7, "ideal lens: {} {}", wf.rms_waves, wf.pv_waves);
    assert!(wf.samples.iter().all(|s| s.waves.abs() < 1e-7));
    assert!(wf.map.iter().flatten().all(|w| w.abs() < 1e-7));

    // A concave paraboloid, R = −400 mm (vertex at 300): focus at 300 − 200 = 100 mm.
    let seq =
        System { object_medium: Material::AIR, surfaces: vec![Surface::mirror(300.0, Shape::conic(-400.0, -1.0))] }
            .at(WAVE_NM)
            .unwrap();
    let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: 50.0 };
    let pupils = Pupils::find(&seq, &object).unwrap();
    let wf = wavefront(&seq, object, &pupils, 100.0, 32);
    assert!(wf.rms_waves < 1e-7 && wf.pv_waves < 1e-7, "paraboloid: {} {}", wf.rms_waves, wf.pv_waves);
    assert!(wf.zernike.iter().all(|z| z.abs() < 1e-7));
}

/// Defocus by Δz: W₀₂₀ = Δz/(8N²) and RMS W₀₂₀/(2√3) in the small-aperture limit (W. J. Smith, *Modern
/// Optical Engineering*, 4th ed., §11.8, from memory; also Mahajan, *Optical Imaging and Aberrations*),
/// and the Noll defocus term Z₄ = W₀₂₀/(2√3) (Z₄ = √3(2ρ² − 1), Noll 1976). N = f/D here, the
/// image-side working f-number of a collimated beam. The exact sphere-to-sphere path difference has
/// relative corrections of order 1/(16N²) and Δz/f; at N ≥ 25 and Δz = 0.05 mm they are below 1e-3, and
/// the Δz/f one halves with Δz (checked).
#[test]
fn defocus_gives_w020_of_delta_z_over_8n2() {
    let mut errors = Vec::new();
    for (n_f, dz) in [(25.0, 0.05), (50.0, 0.05), (50.0, 0.025)] {
        let f = 100.0;
        let (seq, object, pupils) = ideal(f, f / n_f);
        let wf = wavefront(&seq, object, &pupils, 200.0 + dz, 32);
        let w020_mm = dz / (8.0 * n_f * n_f);
        let w020 = w020_mm / (WAVE_NM * 1e-6);
        let c = radial_fit(&wf, 3);
        let rel = (c[1] - w020).abs() / w020;
        let rms_rel = (wf.rms_waves - w020 / (2.0 * 3f64.sqrt())).abs() / (w020 / (2.0 * 3f64.sqrt()));
        let z4_rel = (wf.zernike[3] - w020 / (2.0 * 3f64.sqrt())).abs() / (w020 / (2.0 * 3f64.sqrt()));
        assert!(rel < 1e-3 && rms_rel < 1e-3 && z4_rel < 1e-3, "N {n_f}: {rel} {rms_rel} {z4_rel}");
        // Focus removed, nothing is left but the tiny higher orders.
        assert!(wf.rms_focus_removed_waves < 1e-3 * wf.rms_waves);
        errors.push(rel);
    }
    // The leading correction is Δz/f (the sphere's radius is f + Δz): halving Δz halves the error.
    assert!((errors[1] / errors[2] - 2.0).abs() < 0.01, "no convergence: {errors:?}");
}

/// Spherical aberration of a plano-convex singlet (curved side to the collimated beam), referred to the
/// paraxial image: the ρ⁴ coefficient of the exact wavefront tends to W₀₄₀ = S_I/8 (Welford, *Aberrations
/// of Optical Systems*, 1986, §7.3 and eq. 8.13); S_I from the project's Seidel sums. Fitting the power
/// series in ρ² separates the higher orders, so the agreement holds at any aperture the fit can carry.
#[test]
fn singlet_spherical_matches_seidel_w040() {
    let glass = Material::Constant(1.5);
    let seq = System {
        object_medium: Material::AIR,
        surfaces: vec![
            Surface::refracting(100.0, Shape::sphere(51.5), glass),
            Surface::refracting(104.0, Shape::Flat, Material::AIR),
        ],
    }
    .at(WAVE_NM)
    .unwrap();
    let focus = FirstOrder::of(&seq).unwrap().back_focus_at_mm.unwrap();
    for d in [8.0, 4.0] {
        let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: d };
        let p = Pupils::find(&seq, &object).unwrap();
        let s = seidel(&seq, &p.marginal, p.marginal_start.nu, &p.chief, p.chief_start.nu, &seq, &seq);
        let w040 = s.total.spherical / 8.0 / (WAVE_NM * 1e-6);
        let wf = wavefront(&seq, object, &p, focus, 16);
        let c = radial_fit(&wf, 5);
        let rel = (c[2] - w040).abs() / w040.abs();
        assert!(w040 > 0.0 && c[2] > 0.0, "an under-corrected lens: W040 > 0 ({w040}, {})", c[2]);
        // The ρ² term is of fifth order too at the paraxial focus.
        assert!(c[1].abs() < 1e-2 * c[2].abs(), "{c:?}");
        // The ρ⁴ term of the exact wavefront's power series is the third-order term itself; the fit
        // (through ρ¹⁰, on exact Gauss rings) leaves only rounding and the truncated ρ¹² terms.
        assert!(rel < 1e-6, "D {d}: {rel}");
    }
}

/// The Airy pattern's first zero lies at 1.21967 λN (Born & Wolf, *Principles of Optics*, §8.5.2:
/// the first zero of J₁(v)/v at v = 3.8317, r = v λ/(2π NA)). Found by bisection on the PSF's slope
/// along x, summed directly over a 128-cell pupil; the cell pattern's error is ~1/across² of the radius.
#[test]
fn psf_first_zero_is_at_the_airy_radius() {
    let (seq, object, pupils) = ideal(100.0, 4.0);
    let wf = wavefront(&seq, object, &pupils, 200.0, 128);
    let na = wf.na_sagittal;
    let n_w = 1.0 / (2.0 * na);
    let airy_mm = 1.219_669_891_266_504_5 * WAVE_NM * 1e-6 * n_w;
    // Minimise psf_at(x, 0) near the expected zero by golden-section search.
    let (mut a, mut b) = (0.8 * airy_mm, 1.2 * airy_mm);
    let g = 0.5 * (5f64.sqrt() - 1.0);
    for _ in 0..80 {
        let (c, d) = (b - g * (b - a), a + g * (b - a));
        if psf_at(&wf, c, 0.0) < psf_at(&wf, d, 0.0) {
            b = d;
        } else {
            a = c;
        }
    }
    let zero = 0.5 * (a + b);
    assert!((zero - airy_mm).abs() < 1e-3 * airy_mm, "{zero} vs {airy_mm}");
    assert!(psf_at(&wf, zero, 0.0) < 1e-5, "the minimum is a zero");
    assert!((psf_at(&wf, 0.0, 0.0) - 1.0).abs() < 1e-12, "the unaberrated peak is 1");
}

/// Parseval: the PSF's pixels sum to the transmitted share of the pupil to 1e-9, unvignetted (1) and
/// with a central obstruction cut out of the map by hand.
#[test]
fn psf_energy_is_the_transmitted_share() {
    let (seq, object, pupils) = ideal(100.0, 10.0);
    let mut wf = wavefront(&seq, object, &pupils, 200.02, 32);
    let psf = Psf::of(&wf, 2);
    assert!((psf.total() - 1.0).abs() < 1e-9, "{}", psf.total());
    let full: f64 = wf.coverage.iter().map(|a| a * a).sum();
    for (i, a) in wf.coverage.iter_mut().enumerate() {
        let (x, y) = (i % 32, i / 32);
        if (12..20).contains(&x) && (12..20).contains(&y) {
            *a = 0.0;
        }
    }
    let kept: f64 = wf.coverage.iter().map(|a| a * a).sum();
    let psf = Psf::of(&wf, 2);
    assert!((psf.total() - kept / full).abs() < 1e-9);
}

/// Strehl against Maréchal's exp(−(2πσ)²) (Born & Wolf, §9.1): within 1 % for σ ≤ λ/14, for defocus
/// and for spherical aberration.
#[test]
fn strehl_agrees_with_marechal_up_to_lambda_over_14() {
    let f = 100.0;
    for n_f in [10.0, 20.0] {
        let (seq, object, pupils) = ideal(f, f / n_f);
        // σ = W₀₂₀/(2√3) = Δz/(16√3 N²) set to 0.02λ … λ/14.
        for sigma in [0.02, 0.05, 1.0 / 14.0] {
            let dz = sigma * WAVE_NM * 1e-6 * 16.0 * 3f64.sqrt() * n_f * n_f;
            let wf = wavefront(&seq, object, &pupils, 200.0 + dz, 64);
            let (s, m) = (strehl(&wf), wf.strehl_marechal());
            assert!((s - m).abs() < 0.01 * s, "N {n_f} σ {sigma}: Strehl {s}, Maréchal {m}");
            assert_eq!(wf.diffraction_limited(), wf.rms_waves <= 1.0 / 14.0);
        }
    }
    // A plano-convex singlet at its paraxial focus: spherical aberration.
    let seq = System {
        object_medium: Material::AIR,
        surfaces: vec![
            Surface::refracting(100.0, Shape::sphere(51.5), Material::Constant(1.5)),
            Surface::refracting(104.0, Shape::Flat, Material::AIR),
        ],
    }
    .at(WAVE_NM)
    .unwrap();
    let focus = FirstOrder::of(&seq).unwrap().back_focus_at_mm.unwrap();
    let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: 8.5 };
    let pupils = Pupils::find(&seq, &object).unwrap();
    let wf = wavefront(&seq, object, &pupils, focus, 64);
    assert!(wf.rms_waves <= 1.0 / 14.0 && wf.rms_waves > 0.02, "{}", wf.rms_waves);
    let (s, m) = (strehl(&wf), wf.strehl_marechal());
    assert!((s - m).abs() < 0.01 * s, "spherical: Strehl {s}, Maréchal {m}");
}

/// The diffraction MTF of a perfect lens: (2/π)(φ − cos φ sin φ), cos φ = ν/ν_c, ν_c = 1/(λN) with N the
/// image-side working f-number (Goodman, *Introduction to Fourier Optics*, §6.3), to 2e-3 at 128 pupil
/// samples across and converging as the sampling grows. Here N = 1/(2 sin u'), u' the marginal ray's
/// angle: f/25 (small NA, where the pupil fills direction-cosine space uniformly to 1e-3).
#[test]
fn perfect_lens_mtf_is_the_circular_pupil_formula() {
    let (f, d): (f64, f64) = (100.0, 4.0);
    let sin_u = (0.5 * d) / (0.5 * d).hypot(f);
    let nu_c = 2.0 * sin_u / (WAVE_NM * 1e-6);
    let mut worst = Vec::new();
    for across in [32, 64, 128] {
        let (seq, object, pupils) = ideal(f, d);
        let wf = wavefront(&seq, object, &pupils, 200.0, across);
        let mtf = Mtf::of(&[(1.0, &wf)]).unwrap();
        assert!((mtf.cutoff_per_mm - nu_c).abs() < 1e-9 * nu_c, "{} vs {nu_c}", mtf.cutoff_per_mm);
        let mut err: f64 = 0.0;
        for (i, &nu) in mtf.frequencies_per_mm.iter().enumerate() {
            let want = diffraction_mtf(nu / nu_c);
            err = err.max((mtf.tangential[i] - want).abs()).max((mtf.sagittal[i] - want).abs());
            assert!((mtf.limit_tangential[i] - want).abs() < 1e-12);
        }
        worst.push(err);
    }
    assert!(worst[2] < 2e-3, "{worst:?}");
    assert!(worst[2] < worst[1] && worst[1] < worst[0], "converging: {worst:?}");
}

/// No aliasing: the MTF taken back from the FFT PSF (its inverse transform) equals the direct
/// autocorrelation of the pupil at padding 2 and 4 to 1e-9, and doubling the padding moves the
/// encircled energy at 1, 2 and 3 Airy radii by less than 1 % of the energy (the pixel-centre rule of
/// the sum, not aliasing, is what changes: the pixels halve).
#[test]
fn padding_does_not_alias() {
    let (seq, object, pupils) = ideal(100.0, 10.0);
    let wf = wavefront(&seq, object, &pupils, 200.03, 32);
    let direct = axis_otf(&wf, false);
    for padding in [2, 4] {
        let psf = Psf::of(&wf, padding);
        let m = psf.size;
        // OTF(s cells) = Σ_x PSF(x) e^{+2πi s x/m} / Σ PSF along the row sum (x direction).
        let total = psf.total();
        for s in 0..=wf.across {
            let mut sum = rustfft_free_dft(&psf, s as f64 / m as f64);
            sum /= total;
            let want = direct.values[s].norm();
            assert!((sum - want).abs() < 1e-9, "padding {padding}, shift {s}: {sum} vs {want}");
        }
    }
    let (p2, p4) = (Psf::of(&wf, 2), Psf::of(&wf, 4));
    let airy_mm = 1.22 * WAVE_NM * 1e-6 / (2.0 * wf.na_sagittal);
    for k in [1.0, 2.0, 3.0] {
        let (a, b) = (p2.encircled_energy(k * airy_mm), p4.encircled_energy(k * airy_mm));
        assert!((a - b).abs() < 0.01, "{k} Airy radii: {a} vs {b}");
    }
}

/// |Σ_{x,y} PSF(x, y) e^{2πi f i_x}|: the OTF's modulus at a shift of f·m cells along x.
fn rustfft_free_dft(psf: &Psf, f: f64) -> f64 {
    let m = psf.size;
    let (mut re, mut im) = (0.0, 0.0);
    for j in 0..m {
        for i in 0..m {
            let v = psf.values[j * m + i];
            let ph = std::f64::consts::TAU * f * i as f64;
            re += v * ph.cos();
            im += v * ph.sin();
        }
    }
    re.hypot(im)
}

/// Polychromatic MTF: two wavelengths of a perfect lens with shares ¼ and ¾ give the shares' mixture
/// of the two formulas, each at its own cutoff 2NA/λ (the MTF of a sum of incoherent PSFs is the
/// weighted sum of their OTFs, Goodman §6.1), to the sampling's 2e-3.
#[test]
fn polychromatic_mtf_weights_each_wavelength() {
    let system = System { object_medium: Material::AIR, surfaces: vec![Surface::ideal_lens(100.0, 100.0)] };
    let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: 4.0 };
    let fronts: Vec<Wavefront> = [450.0, 650.0]
        .iter()
        .map(|&l| {
            let seq = system.at(l).unwrap();
            let p = Pupils::find(&seq, &object).unwrap();
            Wavefront::of(
                &seq,
                object,
                &p,
                &WavefrontRequest { fraction: 0.0, image_at_mm: 200.0, samples_across: 128 },
            )
            .unwrap()
        })
        .collect();
    let mtf = Mtf::of(&[(0.25, &fronts[0]), (0.75, &fronts[1])]).unwrap();
    let sin_u = 2.0 / 2f64.hypot(100.0);
    for (i, &nu) in mtf.frequencies_per_mm.iter().enumerate() {
        let want =
            0.25 * diffraction_mtf(nu * 450e-6 / (2.0 * sin_u)) + 0.75 * diffraction_mtf(nu * 650e-6 / (2.0 * sin_u));
        assert!((mtf.tangential[i] - want).abs() < 2e-3, "{nu}: {} vs {want}", mtf.tangential[i]);
    }
    let fifty = mtf.falls_to(&mtf.tangential, 0.5).unwrap();
    let ten = mtf.falls_to(&mtf.tangential, 0.1).unwrap();
    assert!(fifty < ten && ten < mtf.cutoff_per_mm);
    // A polychromatic PSF keeps the energy of its parts, to the 2 % that bilinear resampling of a PSF
    // sampled at its Nyquist rate (padding 2) allows.
    let (a, b) = (Psf::of(&fronts[0], 2), Psf::of(&fronts[1], 2));
    let poly = Psf::polychromatic(&[(0.25, &a), (0.75, &b)]).unwrap();
    assert!((poly.total() - 1.0).abs() < 0.02, "{}", poly.total());
}

/// An ideal lens images every point of every plane perfectly, so its wavefront error is zero at any
/// conjugate, on axis and off it (Fermat's principle: every ray from a point to its perfect image has the
/// same optical path; Born & Wolf, *Principles of Optics*, §3.3.2). Cases: a real object at 300 mm giving
/// m = −0.5; a point off axis of it; a distant point 3° off axis (the plane wave's path); and two lenses,
/// the second imaging the first's converging light, a virtual object, into a real image. Within 1e-7
/// waves, as for the on-axis plane wave above.
#[test]
fn ideal_lenses_are_perfect_at_every_conjugate() {
    // An iris just in front of the first lens is the stop.
    let one = System {
        object_medium: Material::AIR,
        surfaces: vec![Surface::aperture(299.0, 12.0), Surface::ideal_lens(300.0, 100.0)],
    }
    .at(WAVE_NM)
    .unwrap();
    let two = System {
        object_medium: Material::AIR,
        surfaces: vec![
            Surface::aperture(299.0, 12.0),
            Surface::ideal_lens(300.0, 100.0),
            Surface::ideal_lens(380.0, -60.0),
        ],
    }
    .at(WAVE_NM)
    .unwrap();
    let cases = [
        (&one, Object::Finite { z_mm: 0.0, height_mm: 10.0 }, "real object, m = −0.5"),
        (&one, Object::Distant { field_deg: 3.0, beam_diameter_mm: 30.0 }, "distant point off axis"),
        (&two, Object::Finite { z_mm: 0.0, height_mm: 5.0 }, "virtual object for the second lens"),
    ];
    for (seq, object, what) in cases {
        let pupils = Pupils::find(seq, &object).unwrap();
        let image = lumenrail_optics::paraxial::images(seq, &object).last().unwrap().at_mm.unwrap();
        for fraction in [0.0, 1.0] {
            let wf = Wavefront::of(
                seq,
                object,
                &pupils,
                &WavefrontRequest { fraction, image_at_mm: image, samples_across: 32 },
            )
            .unwrap();
            let worst = wf.samples.iter().map(|s| s.waves.abs()).fold(0.0, f64::max);
            assert!(
                wf.rms_waves < 1e-7 && worst < 1e-7,
                "{what}, field {fraction}: RMS {} worst {worst}",
                wf.rms_waves
            );
        }
    }
}

/// J₁ by Bessel's integral against tabulated values (Abramowitz & Stegun, *Handbook of Mathematical
/// Functions*, Table 9.1, to the 10 digits it prints: J₁(1) = 0.4400505857, J₁(2) = 0.5767248078,
/// J₁(10) = 0.0434727462; values recalled from memory) and its first zero j₁,₁ = 3.8317059702 (A&S
/// Table 9.5).
#[test]
fn bessel_j1_matches_the_tables() {
    use lumenrail_optics::diffraction::{airy, bessel_j1};
    for (x, j1) in [(1.0, 0.440_050_585_7), (2.0, 0.576_724_807_8), (10.0, 0.043_472_746_2)] {
        assert!((bessel_j1(x) - j1).abs() < 6e-11, "J1({x}) = {}", bessel_j1(x));
    }
    assert!(bessel_j1(3.831_705_970_2).abs() < 1e-10);
    assert!((bessel_j1(-2.0) + bessel_j1(2.0)).abs() < 1e-15, "J1 is odd");
    assert!((airy(0.0) - 1.0).abs() < 1e-15);
    assert!(airy(3.831_705_970_2) < 1e-19);
}

/// The PSF's cut relative to the diffraction-limited peak: an ideal lens reads 1 at the centre (its
/// Strehl ratio), and the sampled pupil's cut follows the Airy pattern of the same aperture to within the
/// cell pattern's error (measured 3.3e-3 of the peak at 32 samples across, 6.7e-4 at 128: it falls
/// about as 1/across); a defocused one's centre reads its exact Strehl ratio.
#[test]
fn the_psf_cut_follows_the_airy_pattern() {
    let (seq, object, pupils) = ideal(100.0, 4.0);
    for (across, tol) in [(32, 5e-3), (128, 1e-3)] {
        let wf = wavefront(&seq, object, &pupils, 200.0, across);
        let psf = Psf::of(&wf, 2);
        let cut = psf.cut_x_of_perfect();
        let centre = cut[psf.size / 2];
        assert!(centre.0.abs() < 1e-15, "the middle pixel is the centre");
        assert!((centre.1 - 1.0).abs() < 1e-12, "{}", centre.1);
        let worst = cut.iter().map(|&(x, v)| (v - psf.perfect_at(x)).abs()).fold(0.0, f64::max);
        assert!(worst < tol, "{across} across: {worst}");
    }
    let wf = wavefront(&seq, object, &pupils, 200.3, 64);
    let psf = Psf::of(&wf, 2);
    let centre = psf.cut_x_of_perfect()[psf.size / 2].1;
    assert!((centre - strehl(&wf)).abs() < 1e-12, "{centre} vs {}", strehl(&wf));
}

/// The square shown of a PSF holds the share of its energy asked for, and no smaller square does.
#[test]
fn the_shown_square_holds_the_share_asked_for() {
    let (seq, object, pupils) = ideal(100.0, 4.0);
    let psf = Psf::of(&wavefront(&seq, object, &pupils, 200.5, 32), 2);
    let energy_within = |h: f64| {
        let m = psf.size;
        let k = (h / psf.dx_mm).round() as usize;
        let (lo, hi) = (m / 2 - k, m / 2 + k);
        (lo..=hi).map(|j| psf.values[j * m + lo..=j * m + hi].iter().sum::<f64>()).sum::<f64>()
    };
    let h = psf.half_width_holding(0.95, 0.0);
    assert!(energy_within(h) >= 0.95 * psf.total());
    assert!(energy_within(h - psf.dx_mm) < 0.95 * psf.total());
    assert!(psf.half_width_holding(0.95, 20.0 * psf.dx_mm) >= 20.0 * psf.dx_mm);
}
