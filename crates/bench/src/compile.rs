//! Compiling a bench into the optics core's surface sequence, along the light path.
//!
//! Light leaves the object travelling +z and meets the parts in rail order. A mirror turns it back; it then
//! meets, in reverse rail order, the parts it passes on the way back (a lens between the object and a
//! mirror is crossed twice). Screens do not block light: they add no surface. Each surface keeps the index
//! of the part it came from, so that every figure can be told by part name.

use crate::model::{Bench, MaterialSpec, ObjectSpec, PartKind, SurfaceSpec};
use lumenrail_optics::library;
use lumenrail_optics::material::{ABBE_RANGE_NM, Material};
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::system::{Shape, Surface, System};

/// The most mirror reflections followed before the light path is cut short (two facing mirrors would
/// otherwise reflect for ever).
pub const MAX_REFLECTIONS: usize = 8;

/// A bench compiled for the optics core.
#[derive(Debug, Clone, PartialEq)]
pub struct Compiled {
    /// The surfaces in the order light meets them; each surface's `element` is the index of its part in
    /// `bench.parts`.
    pub system: System,
    /// The object for the optics core.
    pub object: Object,
    /// Whether the light path was cut short after [`MAX_REFLECTIONS`] reflections.
    pub truncated: bool,
    /// The direction of travel in the final space: +1 or −1.
    pub final_direction: f64,
    /// Each time the light crosses a screen, in path order.
    pub screen_crossings: Vec<ScreenCrossing>,
    /// Each surface's face within its part, counted in rail order from the part's front (0), whichever
    /// way the light crosses it: what a part's `coatings` list is indexed by.
    pub face_of: Vec<usize>,
}

/// One crossing of a screen's plane by the light.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ScreenCrossing {
    /// The screen's index in `bench.parts`.
    pub part: usize,
    /// How many surfaces the light has met before it.
    pub surfaces_before: usize,
}

impl Compiled {
    /// How many surfaces the light has met when it crosses screen `part` for the last time (`None`: it
    /// never does).
    pub fn last_crossing(&self, part: usize) -> Option<usize> {
        self.screen_crossings.iter().rev().find(|c| c.part == part).map(|c| c.surfaces_before)
    }
}

/// A material name that is not in the library, with the nearest names.
#[derive(Debug, Clone, PartialEq)]
pub struct UnknownMaterial {
    /// The name as written.
    pub name: String,
    /// Nearest library names.
    pub suggestions: Vec<&'static str>,
}

/// Resolves a material spelled in a bench.
pub fn material(spec: &MaterialSpec) -> Result<Material, UnknownMaterial> {
    match spec {
        MaterialSpec::Named(name) => library::find(name)
            .map(|e| e.material)
            .ok_or_else(|| UnknownMaterial { name: name.clone(), suggestions: library::nearest_names(name) }),
        MaterialSpec::Index(n) => Ok(Material::Constant(*n)),
        MaterialSpec::Abbe { nd, vd } => Ok(Material::Abbe { nd: *nd, vd: *vd }),
        MaterialSpec::Sellmeier { b, c } => {
            Ok(Material::Sellmeier { b: b.clone(), c_um2: c.clone(), range_nm: ABBE_RANGE_NM })
        }
    }
}

/// The optics core's shape for a surface spelled in a bench.
pub fn shape(spec: &SurfaceSpec) -> Shape {
    match *spec {
        SurfaceSpec::Flat => Shape::Flat,
        SurfaceSpec::Radius(r) => Shape::sphere(r),
        SurfaceSpec::Conic { radius, conic } => Shape::conic(radius, conic),
    }
}

/// The object for the optics core.
pub fn object(spec: &ObjectSpec) -> Object {
    match *spec {
        ObjectSpec::Point { at_mm, height_mm } => Object::Finite { z_mm: at_mm, height_mm },
        ObjectSpec::Distant { field_deg, beam_diameter_mm } => Object::Distant { field_deg, beam_diameter_mm },
    }
}

/// One part's surfaces as the light meets them travelling +z: (vertex, shape, medium after or mirror).
enum Face {
    Refract(f64, Shape, Material),
    Mirror(f64, Shape),
    Ideal(f64, f64),
    /// An eye's refracting surface: no rim of its own (the pupil limits the light).
    Open(f64, Shape, Material),
    /// An eye's pupil: an aperture of this semi-diameter in the medium of this index.
    Pupil(f64, f64, f64),
}

/// An eye's faces: its refracting surfaces from the cornea, with the pupil on its plane (before the surface
/// that lies there). Refused numbers give no faces (validation has said why).
fn eye_faces(kind: &PartKind, at_mm: f64) -> Vec<Face> {
    let (Ok(state), PartKind::Eye { pupil_mm, .. }) = (kind.eye_state(), kind) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let mut pupil = Some(0.5 * pupil_mm);
    let mut index = 1.0;
    let pupil_at = at_mm + state.optics.pupil_at_mm;
    for s in &state.optics.surfaces {
        if s.at_mm >= state.optics.pupil_at_mm
            && let Some(semi) = pupil.take()
        {
            out.push(Face::Pupil(pupil_at, semi, index));
        }
        index = s.index_after;
        let shape = if s.curvature_per_mm == 0.0 { Shape::Flat } else { Shape::sphere(1.0 / s.curvature_per_mm) };
        out.push(Face::Open(at_mm + s.at_mm, shape, Material::Constant(s.index_after)));
    }
    out.extend(pupil.map(|semi| Face::Pupil(pupil_at, semi, index)));
    out
}

fn faces(kind: &PartKind, at_mm: f64) -> Result<Vec<Face>, UnknownMaterial> {
    Ok(match kind {
        PartKind::ThinLens { focal_mm, .. } => vec![Face::Ideal(at_mm, *focal_mm)],
        PartKind::Singlet { front, back, thickness_mm, material: glass, .. } => vec![
            Face::Refract(at_mm, shape(front), material(glass)?),
            Face::Refract(at_mm + thickness_mm, shape(back), Material::AIR),
        ],
        PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, material1, material2, .. } => vec![
            Face::Refract(at_mm, shape(front), material(material1)?),
            Face::Refract(at_mm + thickness1_mm, shape(middle), material(material2)?),
            Face::Refract(at_mm + thickness1_mm + thickness2_mm, shape(back), Material::AIR),
        ],
        PartKind::Mirror { surface, .. } => vec![Face::Mirror(at_mm, shape(surface))],
        PartKind::Iris { .. } => vec![Face::Refract(at_mm, Shape::Flat, Material::AIR)],
        PartKind::Screen { .. } => vec![],
        PartKind::Eye { .. } => eye_faces(kind, at_mm),
    })
}

/// Compiles `bench` along its light path. Fails only on an unknown material name; every other check is
/// [`crate::validate`]'s.
pub fn compile(bench: &Bench) -> Result<Compiled, UnknownMaterial> {
    crate::evaluation::count_compilation();
    let order = bench.rail_order();
    let mut surfaces = Vec::new();
    let start_mm = match bench.object {
        ObjectSpec::Point { at_mm, .. } => at_mm,
        ObjectSpec::Distant { .. } => f64::NEG_INFINITY,
    };
    // The light's position and direction; parts strictly beyond the position in the direction of travel
    // are met next (the first pass takes parts at the object's own position too).
    let mut from = start_mm;
    let mut dir = 1.0;
    let mut reflections = 0;
    let mut truncated = false;
    let mut first_pass = true;
    let mut screen_crossings = Vec::new();
    let mut face_of = Vec::new();
    loop {
        let ahead: Vec<usize> = if dir > 0.0 {
            order
                .iter()
                .copied()
                .filter(|&i| bench.parts[i].at_mm > from || first_pass && bench.parts[i].at_mm >= from)
                .collect()
        } else {
            order.iter().rev().copied().filter(|&i| bench.parts[i].end_mm() < from).collect()
        };
        first_pass = false;
        let mut turned = None;
        for i in ahead {
            let part = &bench.parts[i];
            if matches!(part.kind, PartKind::Screen { .. }) {
                screen_crossings.push(ScreenCrossing { part: i, surfaces_before: surfaces.len() });
            }
            let semi = 0.5 * part.kind.diameter_mm();
            let mut part_faces = faces(&part.kind, part.at_mm)?;
            let count = part_faces.len();
            if dir < 0.0 {
                // Crossed the other way: surfaces in reverse, each leading into the medium before it.
                part_faces = reverse(part_faces);
                face_of.extend((0..count).rev());
            } else {
                face_of.extend(0..count);
            }
            for face in part_faces {
                let s = match face {
                    Face::Refract(z, shape, into) => Surface::refracting(z, shape, into).with_semi_aperture(semi),
                    Face::Mirror(z, shape) => Surface::mirror(z, shape).with_semi_aperture(semi),
                    Face::Ideal(z, f) => Surface::ideal_lens(z, f).with_semi_aperture(semi),
                    Face::Open(z, shape, into) => Surface::refracting(z, shape, into),
                    Face::Pupil(z, pupil_semi, n) => {
                        Surface::refracting(z, Shape::Flat, Material::Constant(n)).with_semi_aperture(pupil_semi)
                    }
                };
                surfaces.push(s.in_element(i));
            }
            if matches!(part.kind, PartKind::Mirror { .. }) {
                turned = Some(part.at_mm);
                break;
            }
        }
        match turned {
            Some(z) if reflections < MAX_REFLECTIONS => {
                reflections += 1;
                from = z;
                dir = -dir;
            }
            Some(_) => {
                truncated = true;
                dir = -dir;
                break;
            }
            None => break,
        }
    }
    Ok(Compiled {
        system: System { object_medium: Material::AIR, surfaces },
        object: object(&bench.object),
        truncated,
        final_direction: dir,
        screen_crossings,
        face_of,
    })
}

/// A part's faces for light travelling −z: the same vertices and shapes in reverse order, each refracting
/// into the medium that lay before it in the forward direction.
fn reverse(forward: Vec<Face>) -> Vec<Face> {
    let n = forward.len();
    let media: Vec<Option<Material>> = forward
        .iter()
        .map(|f| match f {
            Face::Refract(_, _, m) | Face::Open(_, _, m) => Some(m.clone()),
            _ => None,
        })
        .collect();
    let mut out = Vec::with_capacity(n);
    for (k, face) in forward.into_iter().enumerate().rev() {
        out.push(match face {
            Face::Refract(z, shape, _) => {
                let before = if k == 0 { Material::AIR } else { media[k - 1].clone().unwrap_or(Material::AIR) };
                Face::Refract(z, shape, before)
            }
            Face::Open(z, shape, _) => {
                let before = if k == 0 { Material::AIR } else { media[k - 1].clone().unwrap_or(Material::AIR) };
                Face::Open(z, shape, before)
            }
            other => other,
        });
    }
    out
}
