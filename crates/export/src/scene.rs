//! What the rail view draws, projected from the bench's evaluation: the exactly traced ray paths of the
//! on-axis and off-axis object points at the drawn wavelengths, and the images. Rebuilt whenever the bench
//! changes; it traces nothing itself.

use lumenrail_bench::evaluation::Evaluation;
use lumenrail_optics::paraxial::Object;

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
    /// Lateral magnification from the object (negative: inverted).
    pub magnification: Option<f64>,
}

impl DrawnImage {
    /// The image's short label on the rail: "image ×-0.50", "virtual image ×2.00" (the magnification to
    /// two decimals; the readout has it to five).
    pub fn label(&self) -> String {
        let kind = if self.real { "image" } else { "virtual image" };
        match self.magnification {
            Some(m) => format!("{kind} ×{}", lumenrail_bench::report::fixed(m, 2)),
            None => kind.to_string(),
        }
    }

    /// The image whole, for a tooltip: kind, place, magnification and height.
    pub fn description(&self) -> String {
        let kind = if self.real { "real image" } else { "virtual image" };
        let m = self.magnification.map_or_else(String::new, |m| format!(", magnification {m:.5}"));
        format!(
            "{kind} at {} mm{m}, height {} mm",
            lumenrail_bench::report::fixed(self.at_mm, 3),
            lumenrail_bench::report::fixed(self.height_mm, 3)
        )
    }
}

/// Everything the rail view draws besides the parts.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Scene {
    /// The traced rays.
    pub rays: Vec<DrawnRay>,
    /// The images, intermediate and final.
    pub images: Vec<DrawnImage>,
    /// A laser's 1/e² beam radius along the light path, as (rail position, radius) runs in mm, one run
    /// per space between surfaces (empty without a laser).
    pub beam: Vec<Vec<(f64, f64)>>,
    /// The foci of the strongest stray reflections on the rail (the report's stray-focus map), strongest
    /// first.
    pub stray: Vec<StrayMark>,
}

/// A stray focus marked on the rail.
#[derive(Debug, Clone, PartialEq)]
pub struct StrayMark {
    /// The reflection's rank in the map, from 1 (the readout's table numbers its rows alike).
    pub rank: usize,
    /// Rail position, mm.
    pub at_mm: f64,
    /// What it is: "stray focus 1: back reflection from L1 (front), 4.00% of the power".
    pub label: String,
}

/// Points of the drawn beam envelope in each space between surfaces (enough for a smooth waist).
pub const BEAM_SAMPLES_PER_SPACE: usize = 48;

impl Scene {
    /// What the rail draws of `evaluation`: its rail fans as polylines (ending at the last screen the light
    /// meets; without one, a little past a real final image ahead of the light, else 30% of the rail beyond
    /// the last surface) and its primary-wavelength images. Traces nothing. A bench that cannot be traced gives an empty scene (the readout says why).
    pub fn of(evaluation: &Evaluation) -> Scene {
        let mut scene = Scene::default();
        let (Some(compiled), Some(analysis)) = (evaluation.compiled(), evaluation.analysis()) else { return scene };
        let bench = &evaluation.bench;
        let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
        let dir = compiled.final_direction;
        scene.images = analysis
            .images()
            .iter()
            .filter_map(|i| {
                Some(DrawnImage {
                    at_mm: i.at_mm?,
                    height_mm: i.height_mm?,
                    real: i.real,
                    magnification: i.magnification,
                })
            })
            .collect();
        let last_screen = evaluation
            .screens
            .iter()
            .map(|&i| bench.parts[i].at_mm)
            .filter(|&z| (z - last_z) * dir >= 0.0)
            .max_by(|a, b| (a * dir).total_cmp(&(b * dir)));
        // The laser's envelope: from its waist to the last screen it meets, or the rail's end (its start
        // when the light returns).
        if let (Some(beam), Some(end)) = (
            evaluation.traced.as_ref().and_then(|t| t.beam.as_ref()),
            lumenrail_bench::views::envelope_end_mm(evaluation),
        ) {
            scene.beam = beam.envelope(f64::NEG_INFINITY, end, BEAM_SAMPLES_PER_SPACE);
        }
        if let Some(map) = &evaluation.report.stray {
            let on_rail = |z: &f64| (0.0..=bench.rail_length_mm).contains(z);
            scene.stray = map
                .marks()
                .into_iter()
                .filter(|(_, z, _)| on_rail(z))
                .map(|(rank, at_mm, what)| StrayMark { rank, at_mm, label: format!("stray focus {rank}: {what}") })
                .collect();
        }
        for fan in &evaluation.rail_fans {
            let Some(w) =
                analysis.wavelengths.iter().find(|w| w.seq.wavelength_nm.total_cmp(&fan.wavelength_nm).is_eq())
            else {
                continue;
            };
            let final_image = w.images.last().and_then(|i| i.at_mm.map(|z| (z, i.real)));
            // The last screen the light meets (a film or camera plane) stops it; screens before it are
            // see-through. Without one, the rays run a little past a real final image ahead, else 30% of
            // the rail beyond the last surface.
            let end_z = match (last_screen, final_image) {
                (Some(z), _) => z,
                (None, Some((z, true))) if (z - last_z) * dir > 0.0 => z + dir * 0.05 * bench.rail_length_mm,
                _ => last_z + dir * 0.3 * bench.rail_length_mm,
            };
            for path in &fan.paths {
                let ray = path.start;
                let start = match compiled.object {
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
                    wavelength_nm: fan.wavelength_nm,
                    off_axis: fan.off_axis,
                    blocked,
                });
            }
        }
        // A ray that missed the first surface has only its start: nothing to draw.
        scene.rays.retain(|r| r.points.len() >= 2);
        scene
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_demo_scene_has_fans_and_an_image() {
        let text = lumenrail_bench::demos::find("one-lens-screen").unwrap().text;
        let bench = lumenrail_bench::file::parse("demo", text).unwrap().bench;
        let scene = Scene::of(&Evaluation::of(&bench));
        assert_eq!(scene.rays.len(), 3 * 2 * lumenrail_bench::evaluation::RAIL_FAN_RAYS);
        // The screen at 450 mm stops the light: no drawn ray runs past it.
        for r in &scene.rays {
            let end = r.points.last().unwrap().0;
            assert!(end <= 450.0 + 1e-9, "{end}");
        }
        assert!(scene.rays.iter().any(|r| (r.points.last().unwrap().0 - 450.0).abs() < 1e-9));
        assert_eq!(scene.images.len(), 1);
        assert!((scene.images[0].at_mm - 450.0).abs() < 1e-9);
    }
}
