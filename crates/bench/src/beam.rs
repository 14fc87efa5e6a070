//! The laser beam's figures in the report: its 1/e² diameter at every part, the share of power each clear
//! aperture passes, every waist, the diameter at each screen and, with a power, the peak irradiances.
//!
//! Projected from the evaluation's [`BeamTrace`] (computed once per revision by
//! `lumenrail_optics::beam`); nothing is traced here. Diameters are 1/e² diameters (twice the radius the
//! formulas use). Irradiances are in W/cm² (1 W/cm² = 10 mW/mm²), the peak 2P/(πw²) of the full power P:
//! an upper figure, since neither clipping upstream nor surface losses are taken off.
//!
//! The program classifies nothing: a laser's hazard class, the applicable standard (IEC 60825-1, ANSI
//! Z136) and the laser safety officer decide; every laser bench carries that caution.

use crate::compile::Compiled;
use crate::model::{Bench, Laser};
use crate::report::fixed;
use lumenrail_optics::beam::{BeamTrace, peak_irradiance_mw_per_mm2};
use serde::Serialize;

/// A positive figure with four significant digits, for irradiances and powers that span decades.
fn sig(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let digits = (3 - v.abs().log10().floor() as i64).max(0) as usize;
    fixed(v, digits)
}

/// Below this share of power passed by a part, the report warns of clipping.
pub const CLIPPING_SHARE: f64 = 0.99;

/// The caution every laser bench carries.
pub const LASER_CAUTION: &str = "caution: laser on the bench. A laser beam and its stray reflections can injure eyes; keep the beam below eye level and block it at the end of the rail. Lumenrail classifies nothing: the laser's class, the applicable standard (IEC 60825-1, ANSI Z136) and your laser safety officer decide what protection is needed.";

/// The beam at one crossing of a part.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BeamAtPart {
    /// The part.
    pub part: String,
    /// Rail position of the first surface the beam meets there, mm.
    pub at_mm: f64,
    /// The beam's 1/e² diameter there, mm.
    pub diameter_mm: f64,
    /// The part's clear diameter, mm.
    pub clear_diameter_mm: f64,
    /// Share of the power its clear aperture passes, 0 to 1 (an estimate when M² > 1).
    pub passed_share: f64,
    /// Peak irradiance 2P/(πw²) there, W/cm² (null without a power).
    pub peak_irradiance_w_per_cm2: Option<f64>,
}

/// The beam at one surface.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BeamAtSurface {
    /// The part the surface belongs to.
    pub part: String,
    /// Rail position of its vertex, mm.
    pub at_mm: f64,
    /// The beam's 1/e² diameter there, mm.
    pub diameter_mm: f64,
    /// Peak irradiance 2P/(πw²) there, W/cm² (null without a power).
    pub peak_irradiance_w_per_cm2: Option<f64>,
}

/// A waist of the beam.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BeamWaist {
    /// The part after which the beam has this waist (null: the laser's own waist).
    pub after_part: Option<String>,
    /// Rail position, mm.
    pub at_mm: f64,
    /// The waist's 1/e² diameter 2w₀, mm.
    pub diameter_mm: f64,
    /// Rayleigh range z_R = π n w₀²/(M²λ), mm.
    pub rayleigh_range_mm: f64,
    /// Far-field divergence half-angle θ = M²λ/(π n w₀), mrad.
    pub far_field_half_angle_mrad: f64,
    /// Whether the beam narrows to it ahead of the part (false: a virtual waist behind it).
    pub real: bool,
    /// The part that meets the beam before it reaches this waist (null: it reaches it, or it is virtual).
    pub intercepted_by: Option<String>,
    /// Peak irradiance 2P/(πw₀²) at the waist, W/cm² (null without a power, or for a waist the beam does
    /// not reach).
    pub peak_irradiance_w_per_cm2: Option<f64>,
}

/// The beam at a screen.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BeamAtScreen {
    /// The screen.
    pub part: String,
    /// Its rail position, mm.
    pub at_mm: f64,
    /// The beam's 1/e² diameter there (its last crossing), mm.
    pub diameter_mm: f64,
    /// Peak irradiance 2P/(πw²) there, W/cm² (null without a power).
    pub peak_irradiance_w_per_cm2: Option<f64>,
}

/// The laser beam's figures (the report's `beam` key).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BeamFigures {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Beam quality M².
    pub m_squared: f64,
    /// The laser's power, mW (null when not given).
    pub power_mw: Option<f64>,
    /// Whether the passed shares are estimates (M² > 1: the embedded Gaussian stands for the real profile;
    /// for M² = 1 they are exact for a centred beam).
    pub shares_are_estimates: bool,
    /// The beam at each crossing of each part that has an aperture or bends the light, in path order.
    pub parts: Vec<BeamAtPart>,
    /// The beam at every surface, in path order.
    pub surfaces: Vec<BeamAtSurface>,
    /// The laser's waist, then the waist after each lens or mirror.
    pub waists: Vec<BeamWaist>,
    /// The beam at each screen, in rail order.
    pub screens: Vec<BeamAtScreen>,
    /// The share of the power that passes every aperture (the product of the parts' shares; an estimate).
    pub passed_share_total: f64,
    /// The unit of the irradiances: "W/cm²".
    pub irradiance_unit: &'static str,
}

impl BeamFigures {
    /// Projects `beam` (traced for `laser`) onto the bench's parts and screens.
    pub fn of(bench: &Bench, laser: &Laser, compiled: &Compiled, beam: &BeamTrace, screens: &[usize]) -> BeamFigures {
        let irradiance = |radius_mm: f64| laser.power_mw.map(|p| 0.1 * peak_irradiance_mw_per_mm2(p, radius_mm));
        let name = |element: usize| bench.parts[element].name.clone();
        let mut parts: Vec<BeamAtPart> = Vec::new();
        let mut prev: Option<usize> = None;
        for s in &beam.surfaces {
            if prev == Some(s.element) {
                if let Some(last) = parts.last_mut() {
                    last.passed_share *= s.passed_share;
                }
                continue;
            }
            prev = Some(s.element);
            parts.push(BeamAtPart {
                part: name(s.element),
                at_mm: s.z_mm,
                diameter_mm: 2.0 * s.radius_mm,
                clear_diameter_mm: bench.parts[s.element].kind.diameter_mm(),
                passed_share: s.passed_share,
                peak_irradiance_w_per_cm2: irradiance(s.radius_mm),
            });
        }
        let surfaces = beam
            .surfaces
            .iter()
            .map(|s| BeamAtSurface {
                part: name(s.element),
                at_mm: s.z_mm,
                diameter_mm: 2.0 * s.radius_mm,
                peak_irradiance_w_per_cm2: irradiance(s.radius_mm),
            })
            .collect();
        let waists = beam
            .waists
            .iter()
            .map(|w| BeamWaist {
                after_part: w.element.map(name),
                at_mm: w.at_mm,
                diameter_mm: 2.0 * w.radius_mm,
                rayleigh_range_mm: w.rayleigh_range_mm,
                far_field_half_angle_mrad: 1e3 * w.far_field_half_angle_rad,
                real: w.real,
                intercepted_by: w.intercepted_by.map(|k| name(beam.surfaces[k].element)),
                peak_irradiance_w_per_cm2: (w.real && w.intercepted_by.is_none())
                    .then(|| irradiance(w.radius_mm))
                    .flatten(),
            })
            .collect();
        let screens = screens
            .iter()
            .filter_map(|&i| {
                let p = &bench.parts[i];
                let k = compiled.last_crossing(i)?;
                let r = beam.radius_at(k, p.at_mm);
                Some(BeamAtScreen {
                    part: p.name.clone(),
                    at_mm: p.at_mm,
                    diameter_mm: 2.0 * r,
                    peak_irradiance_w_per_cm2: irradiance(r),
                })
            })
            .collect();
        BeamFigures {
            wavelength_nm: laser.wavelength_nm,
            m_squared: laser.m_squared,
            power_mw: laser.power_mw,
            shares_are_estimates: laser.m_squared > 1.0,
            passed_share_total: parts.iter().map(|p| p.passed_share).product(),
            parts,
            surfaces,
            waists,
            screens,
            irradiance_unit: "W/cm²",
        }
    }

    /// The beam's lines in the text report.
    pub fn write_text(&self, t: &mut String) {
        use std::fmt::Write as _;
        let irr = |v: Option<f64>| v.map_or_else(String::new, |v| format!(", peak {} W/cm²", sig(v)));
        let _ = writeln!(
            t,
            "\nLaser beam ({} nm, M² {}; 1/e² diameters){}",
            self.wavelength_nm,
            fixed(self.m_squared, 2),
            self.power_mw.map_or_else(String::new, |p| format!(", {} mW", sig(p)))
        );
        let share_word = if self.shares_are_estimates { "passes (estimate, M² > 1)" } else { "passes" };
        for p in &self.parts {
            let _ = writeln!(
                t,
                "  at {:<16} {:>10} mm: beam {} mm across, {} clear; {share_word} {}%{}",
                p.part,
                fixed(p.at_mm, 3),
                fixed(p.diameter_mm, 3),
                fixed(p.clear_diameter_mm, 2),
                fixed(100.0 * p.passed_share, 2),
                irr(p.peak_irradiance_w_per_cm2)
            );
        }
        for w in &self.waists {
            let after = w.after_part.as_ref().map_or_else(|| "the laser".to_string(), |p| format!("\"{p}\""));
            let kind = match (&w.intercepted_by, w.real) {
                (_, false) => " (virtual: behind the part)".to_string(),
                (Some(by), true) => format!(" (not reached: \"{by}\" meets the beam first)"),
                _ => String::new(),
            };
            let _ = writeln!(
                t,
                "  waist after {after}: at {} mm, {} mm across, Rayleigh range {} mm, far-field half-angle {} mrad{kind}{}",
                fixed(w.at_mm, 3),
                fixed(w.diameter_mm, 4),
                fixed(w.rayleigh_range_mm, 2),
                fixed(w.far_field_half_angle_mrad, 4),
                irr(w.peak_irradiance_w_per_cm2)
            );
        }
        for s in &self.screens {
            let _ = writeln!(
                t,
                "  on screen {} at {} mm: beam {} mm across{}",
                s.part,
                fixed(s.at_mm, 3),
                fixed(s.diameter_mm, 3),
                irr(s.peak_irradiance_w_per_cm2)
            );
        }
        if self.power_mw.is_some() {
            let _ = writeln!(
                t,
                "  (peak irradiance 2P/(πw²) of the full power, in W/cm²; clipping and surface losses not taken off)"
            );
        }
    }

    /// The parts that pass less than [`CLIPPING_SHARE`] of the power, with their shares.
    pub fn clipping(&self) -> impl Iterator<Item = &BeamAtPart> {
        self.parts.iter().filter(|p| p.passed_share < CLIPPING_SHARE)
    }
}
