//! What the rail view draws, computed from the bench: exactly traced ray paths for the on-axis and off-axis
//! object points at every wavelength, and the images. Rebuilt whenever the bench changes.

use lumenrail_bench::compile;
use lumenrail_bench::model::Bench;
use lumenrail_optics::paraxial::{self, Object};
use lumenrail_optics::pupil::{Aimer, FieldPoint, Pupils};
use lumenrail_optics::trace::trace_path;

/// One ray as drawn: rail positions and heights, mm.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawnRay {
    /// Points along the ray: start, every intercept, and the end of its last segment.
    pub points: Vec<(f64, f64)>,
    /// Where the final segment appears to come from, for a virtual image: the back-extension to draw
    /// dashed.
    pub virtual_from: Option<(f64, f64)>,
    /// Wavelength, nm (its physical colour is the ray's colour).
    pub wavelength_nm: f64,
    /// Whether the ray leaves the off-axis point (drawn dimmer).
    pub off_axis: bool,
    /// Whether the ray was stopped before the end.
    pub blocked: bool,
}

/// An image as drawn: an arrow at its place and size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DrawnImage {
    /// Rail position, mm.
    pub at_mm: f64,
    /// Height of the off-axis point's image, mm.
    pub height_mm: f64,
    /// Real (solid) or virtual (ghost).
    pub real: bool,
}

/// Everything the rail view draws besides the parts.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Scene {
    /// The traced rays.
    pub rays: Vec<DrawnRay>,
    /// The images, intermediate and final.
    pub images: Vec<DrawnImage>,
}

/// Rays per fan, across the stop's diameter.
pub const FAN_RAYS: usize = 7;

/// The most wavelengths drawn (the first, primary and last when a bench lists more).
const MAX_DRAWN_WAVELENGTHS: usize = 3;

impl Scene {
    /// Traces the fans of `bench` for drawing. A bench that cannot be traced gives an empty scene (the
    /// readout says why).
    pub fn of(bench: &Bench) -> Scene {
        let mut scene = Scene::default();
        let Ok(compiled) = compile::compile(bench) else { return scene };
        if compiled.system.surfaces.is_empty() {
            return scene;
        }
        let mut wavelengths: Vec<f64> = bench.wavelengths_nm.clone();
        if wavelengths.len() > MAX_DRAWN_WAVELENGTHS {
            let primary = bench.primary_wavelength_nm().unwrap_or(wavelengths[0]);
            wavelengths = vec![wavelengths[0], primary, *wavelengths.last().expect("non-empty")];
        }
        let object = compiled.object;
        let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
        let dir = compiled.final_direction;
        for &wl in &wavelengths {
            let Ok(seq) = compiled.system.at(wl) else { continue };
            let Ok(pupils) = Pupils::find(&seq, &object) else { continue };
            let images = paraxial::images(&seq, &object);
            if Some(wl) == bench.primary_wavelength_nm() {
                scene.images = images
                    .iter()
                    .filter_map(|i| Some(DrawnImage { at_mm: i.at_mm?, height_mm: i.height_mm?, real: i.real }))
                    .collect();
            }
            let final_image = images.last().and_then(|i| i.at_mm.map(|z| (z, i.real)));
            // Where the drawn rays end: the final real image if it lies ahead, else 30% of the rail further on.
            let end_z = match final_image {
                Some((z, true)) if (z - last_z) * dir > 0.0 => z + dir * 0.05 * bench.rail_length_mm,
                _ => last_z + dir * 0.3 * bench.rail_length_mm,
            };
            for field in [FieldPoint::OnAxis, FieldPoint::OffAxis] {
                let aimer = Aimer::new(&seq, object, &pupils, field);
                let mut guess = None;
                for k in 0..FAN_RAYS {
                    let rho = -1.0 + 2.0 * k as f64 / (FAN_RAYS - 1) as f64;
                    let h = rho * pupils.stop_semi_mm * (1.0 - 1e-9);
                    let Ok((ray, p)) = aimer.ray_for(h, guess) else { continue };
                    guess = Some(p);
                    let path = trace_path(&seq, ray);
                    let start = match object {
                        Object::Finite { .. } => (ray.z_mm, ray.y_mm),
                        // A distant object's rays come in from the rail's start.
                        Object::Distant { .. } => {
                            let z0 = 0.0_f64.min(ray.z_mm);
                            (z0, ray.height_at(z0))
                        }
                    };
                    let mut points = vec![start];
                    points.extend(path.intercepts.iter().map(|i| (i.z_mm, i.y_mm)));
                    let mut virtual_from = None;
                    let blocked = path.outcome.is_err();
                    if let Ok(out) = path.outcome {
                        points.push((end_z, out.height_at(end_z)));
                        if let Some((z, false)) = final_image {
                            virtual_from = Some((z, out.height_at(z)));
                        }
                    }
                    scene.rays.push(DrawnRay {
                        points,
                        virtual_from,
                        wavelength_nm: wl,
                        off_axis: field == FieldPoint::OffAxis,
                        blocked,
                    });
                }
            }
        }
        // A ray that missed the first surface has only its start: nothing to draw.
        scene.rays.retain(|r| r.points.len() >= 2);
        scene
    }
}

/// The physical colour of a wavelength as sRGB, by the piecewise-linear approximation of the visible
/// spectrum due to D. Bruton (1996), with the intensity falling off at the ends; outside 380–780 nm a dim
/// grey.
pub fn wavelength_rgb(wavelength_nm: f64) -> [u8; 3] {
    let w = wavelength_nm;
    let (r, g, b) = match w {
        w if (380.0..440.0).contains(&w) => (-(w - 440.0) / 60.0, 0.0, 1.0),
        w if (440.0..490.0).contains(&w) => (0.0, (w - 440.0) / 50.0, 1.0),
        w if (490.0..510.0).contains(&w) => (0.0, 1.0, -(w - 510.0) / 20.0),
        w if (510.0..580.0).contains(&w) => ((w - 510.0) / 70.0, 1.0, 0.0),
        w if (580.0..645.0).contains(&w) => (1.0, -(w - 645.0) / 65.0, 0.0),
        w if (645.0..=780.0).contains(&w) => (1.0, 0.0, 0.0),
        _ => return [140, 140, 140],
    };
    let fade = match w {
        w if w < 420.0 => 0.3 + 0.7 * (w - 380.0) / 40.0,
        w if w > 700.0 => 0.3 + 0.7 * (780.0 - w) / 80.0,
        _ => 1.0,
    };
    let c = |v: f64| ((v * fade).clamp(0.0, 1.0).powf(0.8) * 255.0).round() as u8;
    [c(r), c(g), c(b)]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colours_follow_the_spectrum() {
        assert_eq!(wavelength_rgb(656.2725), [255, 0, 0]);
        let green = wavelength_rgb(530.0);
        assert!(green[1] == 255 && green[2] == 0);
        let blue = wavelength_rgb(450.0);
        assert!(blue[2] == 255 && blue[0] == 0);
    }

    #[test]
    fn a_demo_scene_has_fans_and_an_image() {
        let text = lumenrail_bench::demos::find("one-lens-screen").unwrap().text;
        let bench = lumenrail_bench::file::parse("demo", text).unwrap().bench;
        let scene = Scene::of(&bench);
        assert_eq!(scene.rays.len(), 3 * 2 * FAN_RAYS);
        assert_eq!(scene.images.len(), 1);
        assert!((scene.images[0].at_mm - 450.0).abs() < 1e-9);
    }
}
