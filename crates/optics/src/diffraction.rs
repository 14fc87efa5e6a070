//! Diffraction figures from a [`Wavefront`]: the Strehl ratio, the point spread function by FFT of the
//! pupil function, and the MTF by autocorrelation of the pupil, monochromatic and polychromatic.
//!
//! **The pupil function** is the wavefront's square map: amplitude 1 on each cell whose centre lies inside the stop
//! and whose ray gets through, else 0, phase 2πW with W the wavefront error (piston and tilt
//! removed, so the PSF is centred on the best-tilt point). Neighbouring cells are δξ = 2·NA/across apart in
//! image-space direction cosine (NA from [`Wavefront::na_sagittal`] and [`Wavefront::na_tangential`]).
//!
//! **Sampling of the PSF.** The map is padded to `padding` × across points (padding ≥ 2) and transformed
//! (rustfft); the PSF's pixels are λ/(padding · across · δξ) = λN_w/padding apart (N_w = 1/(2NA) the
//! working f-number) and its field is across · λN_w wide. With padding 2 the intensity, whose spectrum
//! reaches the incoherent cutoff 1/(λN_w), is sampled at its Nyquist rate, so it is not aliased; the
//! pupil must itself be fine enough that the wavefront changes by less than half a wave from cell to cell
//! (the geometric spot inside the PSF's field), which [`Psf::pupil_undersampled`] reports.
//!
//! **The MTF** is the modulus of the pupil's autocorrelation (J. W. Goodman, *Introduction to Fourier
//! Optics*, §6.3) along the tangential (y) and sagittal (x) directions, normalised to 1 at zero frequency:
//! a shift of s cells is the spatial frequency s·δξ/λ in cycles per mm at the image plane (a line pair is
//! one cycle). Computed directly, it is exact for the sampled pupil and cannot alias. Tangential means
//! lines varying along y (the meridional direction), sagittal along x.
//!
//! **Polychromatic** figures weight each wavelength by its share of the light (the bench's weights) times
//! the share of its pupil that gets through. Each wavelength's PSF is resampled (bilinear, energy kept) onto
//! the first wavelength's grid, and each wavelength's OTF is interpolated onto one common frequency grid,
//! before they are summed. Each wavelength's PSF is centred on its own best-tilt point: lateral colour
//! (shown by the field view) is not folded in.

use crate::wavefront::{MARECHAL_RMS_WAVES, Wavefront};
use rustfft::FftPlanner;
use rustfft::num_complex::Complex;
use std::f64::consts::{FRAC_2_PI, TAU};

/// Default padding of the PSF's FFT: the Nyquist rate of the intensity.
pub const DEFAULT_PADDING: usize = 2;

/// The pupil function of a wavefront: complex amplitude on its square map, row by row (y), and its
/// amplitude sum.
fn pupil_function(wf: &Wavefront) -> Vec<Complex<f64>> {
    wf.map
        .iter()
        .zip(&wf.coverage)
        .map(|(w, &a)| match w {
            Some(w) if a > 0.0 => Complex::from_polar(a, TAU * w),
            _ => Complex::new(0.0, 0.0),
        })
        .collect()
}

/// The energy Σa² of the whole stop's circle on the wavefront's grid (no vignetting): the PSF's unit.
fn full_pupil_energy(wf: &Wavefront) -> f64 {
    let n = wf.across;
    let mut e = 0.0;
    for j in 0..n {
        let py = -1.0 + (2 * j + 1) as f64 / n as f64;
        for i in 0..n {
            let px = -1.0 + (2 * i + 1) as f64 / n as f64;
            e += crate::wavefront::cell_coverage(px, py);
        }
    }
    e
}

/// The exact Strehl ratio: the intensity at the best-tilt point relative to the same pupil without
/// aberration, |Σ a e^{2πiW}|² / (Σ a)² over the map (piston and tilt removed).
pub fn strehl(wf: &Wavefront) -> f64 {
    let p = pupil_function(wf);
    let sum: Complex<f64> = p.iter().sum();
    let amp: f64 = p.iter().map(|c| c.norm()).sum();
    if amp > 0.0 { sum.norm_sqr() / (amp * amp) } else { 0.0 }
}

/// The PSF at a point (x, y) mm from the best-tilt point in the image plane, relative to the peak of the
/// same pupil without aberration, by direct summation over the map (any position, no padding).
pub fn psf_at(wf: &Wavefront, x_mm: f64, y_mm: f64) -> f64 {
    let n = wf.across;
    let wave_mm = wf.wavelength_nm * 1e-6;
    let mut sum = Complex::new(0.0, 0.0);
    let mut amp = 0.0;
    for (idx, (w, &a)) in wf.map.iter().zip(&wf.coverage).enumerate() {
        let Some(w) = w else { continue };
        if a <= 0.0 {
            continue;
        }
        let (i, j) = (idx % n, idx / n);
        let xi = wf.na_sagittal * (-1.0 + (2 * i + 1) as f64 / n as f64);
        let eta = wf.na_tangential * (-1.0 + (2 * j + 1) as f64 / n as f64);
        sum += Complex::from_polar(a, TAU * (w - (xi * x_mm + eta * y_mm) / wave_mm));
        amp += a;
    }
    if amp > 0.0 { sum.norm_sqr() / (amp * amp) } else { 0.0 }
}

/// The diffraction-limited MTF of a uniformly filled circular pupil, (2/π)(φ − cos φ sin φ) with
/// cos φ = ν/ν_c (Goodman, *Introduction to Fourier Optics*, §6.3); 0 beyond the cutoff.
pub fn diffraction_mtf(nu_over_cutoff: f64) -> f64 {
    let c = nu_over_cutoff.abs();
    if c >= 1.0 {
        return 0.0;
    }
    let phi = c.acos();
    FRAC_2_PI * (phi - c * phi.sin())
}

/// A point spread function on a square grid, centred at pixel (size/2, size/2).
#[derive(Debug, Clone, PartialEq)]
pub struct Psf {
    /// Wavelength, nm (the first wavelength's for a polychromatic PSF).
    pub wavelength_nm: f64,
    /// Pixels across.
    pub size: usize,
    /// Pixel spacing in x, mm.
    pub dx_mm: f64,
    /// Pixel spacing in y, mm.
    pub dy_mm: f64,
    /// Energy per pixel, row by row from −y to +y, in units of the whole unvignetted pupil's energy (the
    /// pixels sum to the transmitted share of the pupil).
    pub values: Vec<f64>,
    /// Whether the wavefront changes by more than half a wave between neighbouring cells somewhere (the
    /// pupil is then too coarsely sampled and the PSF wraps round its field).
    pub pupil_undersampled: bool,
    /// The same pupil without aberration or vignetting, as Airy patterns (one per wavelength of a
    /// polychromatic PSF, each weighted as its PSF is): the diffraction-limited reference.
    pub perfect: Vec<AiryTerm>,
}

/// One wavelength's diffraction-limited PSF along x, as a pixel value: `peak` · (2J₁(v)/v)² with
/// v = `v_per_mm` · x (Airy; Born & Wolf, *Principles of Optics*, §8.5.2).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AiryTerm {
    /// The centre pixel's value: |Σa|² of the whole stop's circle, lit and in phase, in the PSF's units.
    pub peak: f64,
    /// 2π·NA/λ along x, per mm.
    pub v_per_mm: f64,
}

/// The Bessel function J₁(x), by the trapezoidal rule on Bessel's integral
/// J₁(x) = (1/2π)∫₀^{2π} cos(τ − x sin τ) dτ, whose integrand is periodic and analytic, so the rule
/// converges geometrically once its points outnumber |x| (here 40 + 2|x| points: better than 1e-14 for
/// the |x| ≤ 200 a PSF's field needs, `tests` below).
pub fn bessel_j1(x: f64) -> f64 {
    let points = 40 + 2 * x.abs().min(1e4) as usize;
    let h = TAU / points as f64;
    let sum: f64 = (0..points).map(|k| (k as f64 * h - x * (k as f64 * h).sin()).cos()).sum();
    sum / points as f64
}

/// The first zero of J₁, j₁,₁ (Abramowitz & Stegun, Table 9.5): the Airy pattern's first dark ring is
/// at v = j₁,₁, r = j₁,₁ λ/(2π NA) = 1.22 λN.
pub const AIRY_FIRST_ZERO: f64 = 3.831_705_970_207_512;

/// The Airy pattern (2J₁(v)/v)², 1 at v = 0.
pub fn airy(v: f64) -> f64 {
    if v.abs() < 1e-8 {
        return 1.0;
    }
    let a = 2.0 * bessel_j1(v) / v;
    a * a
}

impl Psf {
    /// The PSF of `wf` by FFT of its pupil function padded to `padding` × across points (at least 2).
    pub fn of(wf: &Wavefront, padding: usize) -> Psf {
        let n = wf.across;
        let m = n * padding.max(2);
        let p = pupil_function(wf);
        let mut field = vec![Complex::new(0.0, 0.0); m * m];
        for j in 0..n {
            field[j * m..j * m + n].copy_from_slice(&p[j * n..j * n + n]);
        }
        fft2(&mut field, m);
        let full = full_pupil_energy(wf);
        let unit = full * (m * m) as f64;
        let mut values = vec![0.0; m * m];
        for j in 0..m {
            let jj = (j + m / 2) % m;
            for i in 0..m {
                let ii = (i + m / 2) % m;
                values[j * m + i] = field[jj * m + ii].norm_sqr() / unit;
            }
        }
        let wave_mm = wf.wavelength_nm * 1e-6;
        Psf {
            wavelength_nm: wf.wavelength_nm,
            size: m,
            dx_mm: wave_mm * n as f64 / (2.0 * wf.na_sagittal * m as f64),
            dy_mm: wave_mm * n as f64 / (2.0 * wf.na_tangential * m as f64),
            values,
            pupil_undersampled: undersampled(wf),
            // |Σa|² / unit with every cell of the circle lit and in phase.
            perfect: vec![AiryTerm { peak: full / (m * m) as f64, v_per_mm: TAU * wf.na_sagittal / wave_mm }],
        }
    }

    /// The weighted sum of several PSFs (each with its weight), each resampled onto the first one's grid
    /// by bilinear interpolation with its energy kept. `None` when `parts` is empty.
    pub fn polychromatic(parts: &[(f64, &Psf)]) -> Option<Psf> {
        let (_, first) = parts.first()?;
        let (m, dx, dy) = (first.size, first.dx_mm, first.dy_mm);
        let mut values = vec![0.0; m * m];
        let mut perfect = Vec::new();
        for &(weight, psf) in parts {
            let scale = weight * (dx * dy) / (psf.dx_mm * psf.dy_mm);
            perfect.extend(psf.perfect.iter().map(|t| AiryTerm { peak: scale * t.peak, ..*t }));
            for j in 0..m {
                let y = (j as f64 - (m / 2) as f64) * dy;
                for i in 0..m {
                    let x = (i as f64 - (m / 2) as f64) * dx;
                    values[j * m + i] += scale * psf.density_at(x, y);
                }
            }
        }
        Some(Psf {
            wavelength_nm: first.wavelength_nm,
            size: m,
            dx_mm: dx,
            dy_mm: dy,
            values,
            pupil_undersampled: parts.iter().any(|(_, p)| p.pupil_undersampled),
            perfect,
        })
    }

    /// The pixel value interpolated bilinearly at (x, y) mm from the centre (0 outside the grid).
    pub fn density_at(&self, x_mm: f64, y_mm: f64) -> f64 {
        let m = self.size;
        let fx = x_mm / self.dx_mm + (m / 2) as f64;
        let fy = y_mm / self.dy_mm + (m / 2) as f64;
        let last = (m - 1) as f64;
        if fx.is_nan() || fy.is_nan() || fx < 0.0 || fy < 0.0 || fx > last || fy > last {
            return 0.0;
        }
        let (i0, j0) = (fx.floor() as usize, fy.floor() as usize);
        let (i1, j1) = ((i0 + 1).min(m - 1), (j0 + 1).min(m - 1));
        let (tx, ty) = (fx - i0 as f64, fy - j0 as f64);
        let v = |i: usize, j: usize| self.values[j * m + i];
        (1.0 - ty) * ((1.0 - tx) * v(i0, j0) + tx * v(i1, j0)) + ty * ((1.0 - tx) * v(i0, j1) + tx * v(i1, j1))
    }

    /// The sum of every pixel: the transmitted share of the pupil (Parseval).
    pub fn total(&self) -> f64 {
        self.values.iter().sum()
    }

    /// The energy within `radius_mm` of the centre (pixels whose centres lie inside), as a share of the
    /// whole unvignetted pupil's.
    pub fn encircled_energy(&self, radius_mm: f64) -> f64 {
        let m = self.size;
        let mut e = 0.0;
        for j in 0..m {
            let y = (j as f64 - (m / 2) as f64) * self.dy_mm;
            for i in 0..m {
                let x = (i as f64 - (m / 2) as f64) * self.dx_mm;
                if x * x + y * y <= radius_mm * radius_mm {
                    e += self.values[j * m + i];
                }
            }
        }
        e
    }

    /// The diffraction-limited peak pixel value: the sum of [`Psf::perfect`]'s peaks.
    pub fn perfect_peak(&self) -> f64 {
        self.perfect.iter().map(|t| t.peak).sum()
    }

    /// The diffraction-limited reference at `x_mm` along x, relative to its own peak (1 at the centre).
    pub fn perfect_at(&self, x_mm: f64) -> f64 {
        let peak = self.perfect_peak();
        if peak <= 0.0 {
            return 0.0;
        }
        self.perfect.iter().map(|t| t.peak * airy(t.v_per_mm * x_mm)).sum::<f64>() / peak
    }

    /// The cut through the centre along x: (x mm, intensity relative to the diffraction-limited peak,
    /// [`Psf::perfect_peak`]): a monochromatic PSF's centre reads its Strehl ratio.
    pub fn cut_x_of_perfect(&self) -> Vec<(f64, f64)> {
        let m = self.size;
        let row = &self.values[(m / 2) * m..(m / 2) * m + m];
        let peak = self.perfect_peak();
        let unit = if peak > 0.0 { 1.0 / peak } else { 0.0 };
        row.iter().enumerate().map(|(i, v)| ((i as f64 - (m / 2) as f64) * self.dx_mm, v * unit)).collect()
    }

    /// The half-width, mm, of the smallest centred square (in whole pixels, at least `least_mm`) that
    /// holds `share` of the PSF's energy: the part of the field worth showing.
    pub fn half_width_holding(&self, share: f64, least_mm: f64) -> f64 {
        let m = self.size;
        let c = m / 2;
        let total = self.total();
        let pitch = self.dx_mm.max(self.dy_mm);
        let least = (least_mm / pitch).ceil() as usize;
        for k in least.min(c)..c {
            let (lo, hi) = (c - k, (c + k).min(m - 1));
            let mut e = 0.0;
            for j in lo..=hi {
                e += self.values[j * m + lo..=j * m + hi].iter().sum::<f64>();
            }
            if e >= share * total {
                return k as f64 * pitch;
            }
        }
        c as f64 * pitch
    }

    /// The cut through the centre along x: (x mm, value relative to the peak pixel).
    pub fn cut_x(&self) -> Vec<(f64, f64)> {
        let m = self.size;
        let peak = self.values.iter().copied().fold(0.0, f64::max);
        let row = &self.values[(m / 2) * m..(m / 2) * m + m];
        row.iter()
            .enumerate()
            .map(|(i, v)| ((i as f64 - (m / 2) as f64) * self.dx_mm, if peak > 0.0 { v / peak } else { 0.0 }))
            .collect()
    }
}

/// Whether the map's wavefront changes by more than half a wave between neighbouring passing cells (the
/// pupil is then sampled too coarsely for its PSF and MTF to be trusted).
pub fn undersampled(wf: &Wavefront) -> bool {
    let n = wf.across;
    let at = |i: usize, j: usize| wf.map[j * n + i].filter(|_| wf.coverage[j * n + i] > 0.0);
    for j in 0..n {
        for i in 0..n {
            let Some(w) = at(i, j) else { continue };
            let right = if i + 1 < n { at(i + 1, j) } else { None };
            let up = if j + 1 < n { at(i, j + 1) } else { None };
            if right.is_some_and(|r| (r - w).abs() > 0.5) || up.is_some_and(|u| (u - w).abs() > 0.5) {
                return true;
            }
        }
    }
    false
}

/// In-place 2-D forward FFT of an m × m row-major array.
fn fft2(data: &mut [Complex<f64>], m: usize) {
    let mut planner = FftPlanner::<f64>::new();
    let fft = planner.plan_fft_forward(m);
    let mut scratch = vec![Complex::new(0.0, 0.0); fft.get_inplace_scratch_len()];
    // Only the first rows hold the pupil; the others are zero and stay zero.
    for row in data.chunks_exact_mut(m) {
        if row.iter().any(|c| c.re != 0.0 || c.im != 0.0) {
            fft.process_with_scratch(row, &mut scratch);
        }
    }
    let mut column = vec![Complex::new(0.0, 0.0); m];
    for i in 0..m {
        for j in 0..m {
            column[j] = data[j * m + i];
        }
        fft.process_with_scratch(&mut column, &mut scratch);
        for j in 0..m {
            data[j * m + i] = column[j];
        }
    }
}

/// The optical transfer function of one wavelength along one direction: complex values at shifts of
/// 0..=across cells, `spacing_per_mm` apart in frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct AxisOtf {
    /// Spatial frequency step, cycles per mm.
    pub spacing_per_mm: f64,
    /// OTF at 0, 1, … steps (1 at zero frequency).
    pub values: Vec<Complex<f64>>,
}

impl AxisOtf {
    /// The OTF interpolated linearly at `nu_per_mm` (0 beyond the last sample).
    pub fn at(&self, nu_per_mm: f64) -> Complex<f64> {
        let f = nu_per_mm / self.spacing_per_mm;
        if f.is_nan() || f < 0.0 || f >= (self.values.len() - 1) as f64 {
            return Complex::new(0.0, 0.0);
        }
        let i = f.floor() as usize;
        let t = f - i as f64;
        self.values[i] * (1.0 - t) + self.values[i + 1] * t
    }

    /// The incoherent cutoff, cycles per mm.
    pub fn cutoff_per_mm(&self) -> f64 {
        self.spacing_per_mm * (self.values.len() - 1) as f64
    }
}

/// The OTF of `wf` along x (sagittal, `along_y` false) or y (tangential): the pupil function's
/// autocorrelation at shifts of whole cells, normalised by its energy.
pub fn axis_otf(wf: &Wavefront, along_y: bool) -> AxisOtf {
    let n = wf.across;
    let p = pupil_function(wf);
    // Shifts along x are shifts of the transposed map's rows: both directions correlate whole rows.
    let at = |r: usize, c: usize| if along_y { p[r * n + c] } else { p[c * n + r] };
    let re: Vec<f64> = (0..n * n).map(|k| at(k / n, k % n).re).collect();
    let im: Vec<f64> = (0..n * n).map(|k| at(k / n, k % n).im).collect();
    let energy: f64 = re.iter().zip(&im).map(|(a, b)| a * a + b * b).sum();
    // Each row's cells outside [lo, hi) are dark: only the rows' lit overlaps are summed.
    let extent: Vec<(usize, usize)> = (0..n)
        .map(|r| {
            let lit = |c: &usize| re[r * n + c] != 0.0 || im[r * n + c] != 0.0;
            let lo = (0..n).find(lit).unwrap_or(n);
            let hi = (0..n).rev().find(lit).map_or(lo, |c| c + 1);
            (lo, hi)
        })
        .collect();
    let mut values = Vec::with_capacity(n + 1);
    for s in 0..=n {
        let mut sum = Complex::new(0.0, 0.0);
        for r in 0..n.saturating_sub(s) {
            let (a, b) = (r + s, r);
            let (lo, hi) = (extent[a].0.max(extent[b].0), extent[a].1.min(extent[b].1));
            if lo < hi {
                let (ar, ai) = (&re[a * n + lo..a * n + hi], &im[a * n + lo..a * n + hi]);
                let (br, bi) = (&re[b * n + lo..b * n + hi], &im[b * n + lo..b * n + hi]);
                sum += row_dot(ar, ai, br, bi);
            }
        }
        values.push(if energy > 0.0 { sum / energy } else { Complex::new(0.0, 0.0) });
    }
    let na = if along_y { wf.na_tangential } else { wf.na_sagittal };
    let wave_mm = wf.wavelength_nm * 1e-6;
    AxisOtf { spacing_per_mm: 2.0 * na / (n as f64 * wave_mm), values }
}

/// Σ a·conj(b) over two rows given as real and imaginary parts, in four fixed running sums (so the
/// compiler can keep them in one vector register; the order, and so the result, is fixed).
fn row_dot(ar: &[f64], ai: &[f64], br: &[f64], bi: &[f64]) -> Complex<f64> {
    let (mut sr, mut si) = ([0.0; 4], [0.0; 4]);
    let whole = ar.len() / 4 * 4;
    for k in (0..whole).step_by(4) {
        for l in 0..4 {
            sr[l] += ar[k + l] * br[k + l] + ai[k + l] * bi[k + l];
            si[l] += ai[k + l] * br[k + l] - ar[k + l] * bi[k + l];
        }
    }
    for k in whole..ar.len() {
        sr[0] += ar[k] * br[k] + ai[k] * bi[k];
        si[0] += ai[k] * br[k] - ar[k] * bi[k];
    }
    Complex::new((sr[0] + sr[1]) + (sr[2] + sr[3]), (si[0] + si[1]) + (si[2] + si[3]))
}

/// The tangential and sagittal MTF of one object point, over its wavelengths, with the diffraction limit.
#[derive(Debug, Clone, PartialEq)]
pub struct Mtf {
    /// The common frequency grid, cycles per mm at the image plane (a line pair is one cycle).
    pub frequencies_per_mm: Vec<f64>,
    /// Tangential MTF at each frequency.
    pub tangential: Vec<f64>,
    /// Sagittal MTF at each frequency.
    pub sagittal: Vec<f64>,
    /// The diffraction limit of the tangential MTF (the same pupil without aberration, each wavelength's
    /// (2/π)(φ − cos φ sin φ) weighted as the MTF is).
    pub limit_tangential: Vec<f64>,
    /// The diffraction limit of the sagittal MTF.
    pub limit_sagittal: Vec<f64>,
    /// The highest incoherent cutoff 2NA/λ over the wavelengths and directions, cycles per mm.
    pub cutoff_per_mm: f64,
}

/// The tangential or the sagittal OTF of an entry of [`Mtf::of`].
fn pick(o: &(f64, AxisOtf, AxisOtf), tangential: bool) -> &AxisOtf {
    if tangential { &o.1 } else { &o.2 }
}

/// Points of the common frequency grid of [`Mtf::of`], 0 to the cutoff.
pub const MTF_POINTS: usize = 65;

impl Mtf {
    /// The MTF of one object point from its wavefronts, each with its share of the light; each share is
    /// multiplied by the part of the pupil that wavelength gets through. `None` without wavefronts or light.
    pub fn of(parts: &[(f64, &Wavefront)]) -> Option<Mtf> {
        let otfs: Vec<(f64, AxisOtf, AxisOtf)> = parts
            .iter()
            .map(|&(share, wf)| (share * wf.transmitted, axis_otf(wf, true), axis_otf(wf, false)))
            .filter(|(w, ..)| *w > 0.0 && w.is_finite())
            .collect();
        let total: f64 = otfs.iter().map(|o| o.0).sum();
        if otfs.is_empty() || total <= 0.0 {
            return None;
        }
        let cutoff = otfs.iter().map(|(_, t, s)| t.cutoff_per_mm().max(s.cutoff_per_mm())).fold(0.0, f64::max);
        if cutoff.is_nan() || cutoff <= 0.0 || cutoff.is_infinite() {
            return None;
        }
        let frequencies_per_mm: Vec<f64> =
            (0..MTF_POINTS).map(|i| cutoff * i as f64 / (MTF_POINTS - 1) as f64).collect();
        let curve = |tangential: bool| -> Vec<f64> {
            frequencies_per_mm
                .iter()
                .map(|&nu| {
                    let sum: Complex<f64> = otfs.iter().map(|o| pick(o, tangential).at(nu) * o.0).sum();
                    (sum / total).norm()
                })
                .collect()
        };
        let limit = |tangential: bool| -> Vec<f64> {
            frequencies_per_mm
                .iter()
                .map(|&nu| {
                    let sum: f64 =
                        otfs.iter().map(|o| o.0 * diffraction_mtf(nu / pick(o, tangential).cutoff_per_mm())).sum();
                    sum / total
                })
                .collect()
        };
        Some(Mtf {
            tangential: curve(true),
            sagittal: curve(false),
            limit_tangential: limit(true),
            limit_sagittal: limit(false),
            frequencies_per_mm,
            cutoff_per_mm: cutoff,
        })
    }

    /// The lowest frequency at which `curve` (one of this MTF's) falls to `level` (e.g. 0.5), by linear
    /// interpolation between grid points; `None` when it never falls that far.
    pub fn falls_to(&self, curve: &[f64], level: f64) -> Option<f64> {
        let f = &self.frequencies_per_mm;
        for i in 1..curve.len().min(f.len()) {
            let (a, b) = (curve[i - 1], curve[i]);
            if a > level && b <= level {
                return Some(f[i - 1] + (f[i] - f[i - 1]) * (a - level) / (a - b));
            }
        }
        None
    }
}

/// The sharpness figures of one object point at one wavelength, in brief.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StrehlFigures {
    /// Exact Strehl ratio ([`strehl`]).
    pub strehl: f64,
    /// Maréchal's exp(−(2πσ)²).
    pub strehl_marechal: f64,
    /// RMS ≤ λ/14 ([`MARECHAL_RMS_WAVES`]).
    pub diffraction_limited: bool,
}

impl StrehlFigures {
    /// The figures of a wavefront.
    pub fn of(wf: &Wavefront) -> StrehlFigures {
        StrehlFigures {
            strehl: strehl(wf),
            strehl_marechal: wf.strehl_marechal(),
            diffraction_limited: wf.rms_waves <= MARECHAL_RMS_WAVES,
        }
    }
}
