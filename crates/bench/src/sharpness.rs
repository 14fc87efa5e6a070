//! How sharp the image really is, diffraction included: each object point's wavefront error, Strehl ratio,
//! point spread function and MTF, computed once per revision in the evaluation (`Traced::sharpness`) and
//! projected into the report's `wavefront` and `mtf` keys, the wavefront view and the sharpness view.
//!
//! The physics is `lumenrail_optics::wavefront` and `lumenrail_optics::diffraction`; here the bench chooses
//! the points (on axis, and the off-axis point when the object has one), the wavelengths with their shares
//! of the light ([`Bench::shares`]) and the image plane: the primary wavelength's paraxial final image, or
//! (the views' plane choice) a screen or any rail position. Figures are for the wavefront referred to a
//! sphere centred on the chief ray's point on that plane.

use crate::model::{Bench, ObjectSpec};
use crate::report::fixed;
use crate::views::Point;
use lumenrail_optics::analysis::Analysis;
use lumenrail_optics::diffraction::{DEFAULT_PADDING, Mtf, Psf, strehl, undersampled};
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::wavefront::{MARECHAL_RMS_WAVES, Wavefront, WavefrontRequest};
use serde::Serialize;
use std::fmt::Write as _;

/// Pupil samples across the map in the evaluation of every revision: 32 keeps the whole evaluation live
/// while dragging (and the arranger's finalists cheap); the optics' own default (64) is for closer looks.
pub const EVALUATION_SAMPLES_ACROSS: usize = 32;

/// The padding of the PSF the sharpness view draws: four times, pixels λN/4 apart, so a diffraction-limited
/// core spans about ten pixels rather than five.
pub const SHOWN_PADDING: usize = 4;

/// Spatial frequencies at which the report gives the contrast, cycles (line pairs) per mm.
pub const REPORT_FREQUENCIES_PER_MM: [f64; 4] = [10.0, 20.0, 50.0, 100.0];

/// One wavelength's wavefront of one object point, with its share of the light.
#[derive(Debug, Clone, PartialEq)]
pub struct WaveAt {
    /// The wavelength's share of the bench's light (its weight, scaled to sum to 1).
    pub share: f64,
    /// The wavefront.
    pub wavefront: Wavefront,
    /// The exact Strehl ratio.
    pub strehl: f64,
}

/// Everything sharp about one object point.
#[derive(Debug, Clone, PartialEq)]
pub struct PointSharpness {
    /// Which point.
    pub point: Point,
    /// Each wavelength whose wavefront could be computed, in the bench's order.
    pub waves: Vec<WaveAt>,
    /// Index into `waves` of the primary wavelength (`None`: its wavefront could not be computed).
    pub primary: Option<usize>,
    /// Whether some wavelength's pupil is sampled too coarsely for its wavefront (more than half a wave
    /// between neighbouring samples).
    pub undersampled: bool,
    /// The polychromatic MTF with its diffraction limit.
    pub mtf: Option<Mtf>,
}

impl PointSharpness {
    /// The primary wavelength's wavefront and Strehl ratio.
    pub fn primary(&self) -> Option<&WaveAt> {
        self.primary.map(|i| &self.waves[i])
    }

    /// The polychromatic PSF, each wavelength's (FFT padded [`DEFAULT_PADDING`] times, the intensity's
    /// Nyquist rate) resampled onto the first one's grid and weighted by its share; computed when a view
    /// asks, not with every revision.
    pub fn psf(&self) -> Option<Psf> {
        self.psf_padded(DEFAULT_PADDING)
    }

    /// [`PointSharpness::psf`] with the FFT padded `padding` times: finer pixels over the same field (the
    /// sharpness view draws the PSF at [`SHOWN_PADDING`]).
    pub fn psf_padded(&self, padding: usize) -> Option<Psf> {
        let psfs: Vec<(f64, Psf)> =
            self.waves.iter().filter(|w| w.share > 0.0).map(|w| (w.share, Psf::of(&w.wavefront, padding))).collect();
        let parts: Vec<(f64, &Psf)> = psfs.iter().map(|(s, p)| (*s, p)).collect();
        Psf::polychromatic(&parts)
    }
}

/// The sharpness figures of a bench at one image plane.
#[derive(Debug, Clone, PartialEq)]
pub struct Sharpness {
    /// The image plane's rail position, mm.
    pub image_at_mm: f64,
    /// What the plane is, in words ("the paraxial image", "screen \"S\"", …).
    pub plane: String,
    /// Pupil samples across the square map.
    pub samples_across: usize,
    /// The points, on axis first.
    pub points: Vec<PointSharpness>,
    /// Why some figures are missing.
    pub notes: Vec<String>,
}

/// Whether the bench's object has an off-axis point.
pub(crate) fn has_off_axis(bench: &Bench) -> bool {
    match bench.object {
        ObjectSpec::Point { height_mm, .. } => height_mm != 0.0,
        ObjectSpec::Distant { field_deg, .. } => field_deg != 0.0,
    }
}

impl Sharpness {
    /// The figures of the evaluated wavelengths of `analysis` at the plane `image_at_mm`, for the points of
    /// `bench`'s object; reads the sequences and pupils, compiles and evaluates nothing.
    pub fn of(
        bench: &Bench,
        analysis: &Analysis,
        object: Object,
        image_at_mm: f64,
        plane: String,
        samples_across: usize,
    ) -> Sharpness {
        let shares = bench.shares();
        let points: &[Point] = if has_off_axis(bench) { &[Point::OnAxis, Point::OffAxis] } else { &[Point::OnAxis] };
        let mut notes = Vec::new();
        let mut out = Vec::new();
        for &point in points {
            let mut waves = Vec::new();
            let mut primary = None;
            for (k, w) in analysis.wavelengths.iter().enumerate() {
                let Ok(pupils) = &w.pupils else { continue };
                let request = WavefrontRequest { fraction: point.fraction(), image_at_mm, samples_across };
                match Wavefront::of(&w.seq, object, pupils, &request) {
                    Ok(wf) => {
                        if k == analysis.primary {
                            primary = Some(waves.len());
                        }
                        let strehl = strehl(&wf);
                        waves.push(WaveAt { share: shares.get(k).copied().unwrap_or(0.0), wavefront: wf, strehl });
                    }
                    Err(e) => notes.push(format!(
                        "no wavefront for the {} point at {} nm: {e}",
                        point.word(),
                        fixed(w.seq.wavelength_nm, 1)
                    )),
                }
            }
            if waves.is_empty() {
                continue;
            }
            let undersampled = waves.iter().any(|w| undersampled(&w.wavefront));
            let fronts: Vec<(f64, &Wavefront)> = waves.iter().map(|w| (w.share, &w.wavefront)).collect();
            let mtf = Mtf::of(&fronts);
            if undersampled {
                notes.push(format!(
                    "the {} point's wavefront changes by more than half a wave between pupil samples: its PSF and MTF are not to be trusted ({} samples across)",
                    point.word(),
                    samples_across
                ));
            }
            out.push(PointSharpness { point, waves, primary, undersampled, mtf });
        }
        Sharpness { image_at_mm, plane, samples_across, points: out, notes }
    }

    /// The figures at the primary wavelength's paraxial final image, when the bench has a real one; `None`
    /// otherwise (a virtual or distant final image has no plane to refer to).
    pub fn at_paraxial_image(bench: &Bench, analysis: &Analysis, object: Object) -> Option<Sharpness> {
        let primary = analysis.primary();
        let z = primary.final_image_at_mm()?;
        if !primary.images.last().is_some_and(|i| i.real) {
            return None;
        }
        let plane = format!("the paraxial image at {} mm", fixed(z, 3));
        Some(Sharpness::of(bench, analysis, object, z, plane, EVALUATION_SAMPLES_ACROSS))
    }
}

/// The report's `wavefront` entry for one object point (primary wavelength; every wavelength's RMS and
/// Strehl beside).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WavefrontFigures {
    /// `on-axis` or `off-axis`.
    pub point: &'static str,
    /// The plane the reference sphere is centred on, in words.
    pub reference: String,
    /// That plane's rail position, mm.
    pub image_at_mm: f64,
    /// Wavelength of the figures below, nm.
    pub wavelength_nm: f64,
    /// RMS wavefront error with piston and tilt removed, waves.
    pub rms_waves: f64,
    /// Peak-to-valley with piston and tilt removed, waves.
    pub pv_waves: f64,
    /// RMS with piston, tilt and focus removed, waves.
    pub rms_focus_removed_waves: f64,
    /// Peak-to-valley with piston, tilt and focus removed, waves.
    pub pv_focus_removed_waves: f64,
    /// Exact Strehl ratio.
    pub strehl: f64,
    /// Maréchal's exp(−(2πσ)²).
    pub strehl_marechal: f64,
    /// RMS ≤ λ/14 (Maréchal criterion).
    pub diffraction_limited: bool,
    /// Zernike coefficients in waves, Noll ordering (J. Opt. Soc. Am. 66, 207 (1976)), j = 1 first.
    pub zernike_noll_waves: Vec<f64>,
    /// Each wavelength: RMS (piston and tilt removed) and Strehl.
    pub wavelengths: Vec<WaveBrief>,
}

/// One wavelength's wavefront in brief.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WaveBrief {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// RMS wavefront error, piston and tilt removed, waves.
    pub rms_waves: f64,
    /// Exact Strehl ratio.
    pub strehl: f64,
}

/// The contrast at one spatial frequency.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ContrastAt {
    /// Cycles (line pairs) per mm at the image plane.
    pub per_mm: f64,
    /// Tangential MTF.
    pub tangential: f64,
    /// Sagittal MTF.
    pub sagittal: f64,
    /// The diffraction limit (tangential).
    pub limit: f64,
}

/// The report's `mtf` entry for one object point (polychromatic, by the bench's wavelength weights).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MtfFigures {
    /// `on-axis` or `off-axis`.
    pub point: &'static str,
    /// The incoherent cutoff 2NA/λ, cycles per mm (the highest over the wavelengths).
    pub cutoff_per_mm: f64,
    /// Where the tangential MTF falls to 50 %, cycles per mm (null: it stays above).
    pub tangential_50_per_mm: Option<f64>,
    /// Where the tangential MTF falls to 10 %.
    pub tangential_10_per_mm: Option<f64>,
    /// Where the sagittal MTF falls to 50 %.
    pub sagittal_50_per_mm: Option<f64>,
    /// Where the sagittal MTF falls to 10 %.
    pub sagittal_10_per_mm: Option<f64>,
    /// The contrast at 10, 20, 50 and 100 cycles per mm (those below the cutoff).
    pub contrast: Vec<ContrastAt>,
}

/// Linear interpolation of `curve` over `freqs` at `nu`.
fn interpolate(freqs: &[f64], curve: &[f64], nu: f64) -> f64 {
    for i in 1..freqs.len().min(curve.len()) {
        if nu <= freqs[i] {
            let t = (nu - freqs[i - 1]) / (freqs[i] - freqs[i - 1]);
            return curve[i - 1] + t * (curve[i] - curve[i - 1]);
        }
    }
    0.0
}

impl Sharpness {
    /// The report's `wavefront` entries.
    pub fn wavefront_figures(&self) -> Vec<WavefrontFigures> {
        self.points
            .iter()
            .filter_map(|p| {
                let w = p.primary()?;
                let wf = &w.wavefront;
                Some(WavefrontFigures {
                    point: p.point.word(),
                    reference: self.plane.clone(),
                    image_at_mm: self.image_at_mm,
                    wavelength_nm: wf.wavelength_nm,
                    rms_waves: wf.rms_waves,
                    pv_waves: wf.pv_waves,
                    rms_focus_removed_waves: wf.rms_focus_removed_waves,
                    pv_focus_removed_waves: wf.pv_focus_removed_waves,
                    strehl: w.strehl,
                    strehl_marechal: wf.strehl_marechal(),
                    diffraction_limited: wf.rms_waves <= MARECHAL_RMS_WAVES,
                    zernike_noll_waves: wf.zernike.clone(),
                    wavelengths: p
                        .waves
                        .iter()
                        .map(|w| WaveBrief {
                            wavelength_nm: w.wavefront.wavelength_nm,
                            rms_waves: w.wavefront.rms_waves,
                            strehl: w.strehl,
                        })
                        .collect(),
                })
            })
            .collect()
    }

    /// The report's `mtf` entries.
    pub fn mtf_figures(&self) -> Vec<MtfFigures> {
        self.points
            .iter()
            .filter_map(|p| {
                let m = p.mtf.as_ref()?;
                let f = &m.frequencies_per_mm;
                let contrast = REPORT_FREQUENCIES_PER_MM
                    .iter()
                    .filter(|&&nu| nu < m.cutoff_per_mm)
                    .map(|&nu| ContrastAt {
                        per_mm: nu,
                        tangential: interpolate(f, &m.tangential, nu),
                        sagittal: interpolate(f, &m.sagittal, nu),
                        limit: interpolate(f, &m.limit_tangential, nu),
                    })
                    .collect();
                Some(MtfFigures {
                    point: p.point.word(),
                    cutoff_per_mm: m.cutoff_per_mm,
                    tangential_50_per_mm: m.falls_to(&m.tangential, 0.5),
                    tangential_10_per_mm: m.falls_to(&m.tangential, 0.1),
                    sagittal_50_per_mm: m.falls_to(&m.sagittal, 0.5),
                    sagittal_10_per_mm: m.falls_to(&m.sagittal, 0.1),
                    contrast,
                })
            })
            .collect()
    }
}

/// The report's text lines for the wavefront and MTF entries.
pub fn write_text(t: &mut String, wavefront: &[WavefrontFigures], mtf: &[MtfFigures]) {
    if wavefront.is_empty() && mtf.is_empty() {
        return;
    }
    let _ = writeln!(t, "\nSharpness (diffraction included)");
    if let Some(w) = wavefront.first() {
        let _ = writeln!(t, "  wavefront referred to a sphere centred on the chief ray's point on {}", w.reference);
    }
    for w in wavefront {
        let verdict = if w.diffraction_limited {
            "diffraction-limited (RMS at most λ/14, Maréchal)"
        } else {
            "not diffraction-limited (RMS above λ/14, Maréchal)"
        };
        let _ = writeln!(
            t,
            "  {} at {} nm: RMS {} waves, PV {} (piston and tilt removed); RMS {}, PV {} with focus removed too",
            w.point,
            fixed(w.wavelength_nm, 1),
            fixed(w.rms_waves, 4),
            fixed(w.pv_waves, 4),
            fixed(w.rms_focus_removed_waves, 4),
            fixed(w.pv_focus_removed_waves, 4)
        );
        let _ = writeln!(t, "    Strehl {} (Maréchal {}): {verdict}", fixed(w.strehl, 3), fixed(w.strehl_marechal, 3));
    }
    let at = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{}/mm", fixed(v, 1)));
    for m in mtf {
        let _ = writeln!(
            t,
            "  MTF {} (all wavelengths by weight): falls to 50% at {} tangential, {} sagittal; to 10% at {}, {}; cutoff {}/mm",
            m.point,
            at(m.tangential_50_per_mm),
            at(m.sagittal_50_per_mm),
            at(m.tangential_10_per_mm),
            at(m.sagittal_10_per_mm),
            fixed(m.cutoff_per_mm, 1)
        );
        if !m.contrast.is_empty() {
            let cells: Vec<String> = m
                .contrast
                .iter()
                .map(|c| {
                    format!(
                        "{}/mm {}% T, {}% S (limit {}%)",
                        fixed(c.per_mm, 0),
                        fixed(100.0 * c.tangential, 1),
                        fixed(100.0 * c.sagittal, 1),
                        fixed(100.0 * c.limit, 1)
                    )
                })
                .collect();
            let _ = writeln!(t, "    contrast: {}", cells.join("; "));
        }
    }
}
