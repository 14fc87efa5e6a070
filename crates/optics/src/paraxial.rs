//! First-order optics: the paraxial y-nu trace, system matrices, focal and principal points, images.
//!
//! Signed indices carry mirrors: an index is negative while the light travels −z, so the refraction
//! equation n'u' = nu − yc(n' − n) covers reflection (n' = −n) unchanged. Slopes u are dy/dz in the rail
//! frame and `nu` is the reduced slope n·u.

use crate::system::{Kind, Sequence, Step};

/// A paraxial ray at one surface, after the surface has acted: height and reduced slope.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParaxialRay {
    /// Height at the surface's vertex plane, mm.
    pub y_mm: f64,
    /// Reduced slope n·u after the surface (signed index).
    pub nu: f64,
}

/// The paraxial power of a surface, 1/mm, with signed indices.
pub fn surface_power(step: &Step) -> f64 {
    match step.kind {
        Kind::Refract | Kind::Reflect => step.c * (step.signed_n_after() - step.signed_n_before()),
        Kind::Ideal(f) => step.n_before / f,
    }
}

/// Traces a paraxial ray that reaches the first surface's vertex plane at height `y1_mm` with reduced slope
/// `nu0` in object space; returns the ray after every surface.
pub fn trace(seq: &Sequence, y1_mm: f64, nu0: f64) -> Vec<ParaxialRay> {
    let mut out = Vec::with_capacity(seq.steps.len());
    let mut y = y1_mm;
    let mut nu = nu0;
    for (i, step) in seq.steps.iter().enumerate() {
        if i > 0 {
            let prev = &seq.steps[i - 1];
            y += (step.z_mm - prev.z_mm) * nu / prev.signed_n_after();
        }
        nu -= y * surface_power(step);
        out.push(ParaxialRay { y_mm: y, nu });
    }
    out
}

/// Where a paraxial ray leaving surface `i` with `ray` crosses the axis, or `None` when it leaves parallel.
pub fn axis_crossing_mm(seq: &Sequence, i: usize, ray: &ParaxialRay) -> Option<f64> {
    let step = &seq.steps[i];
    (ray.nu != 0.0).then(|| step.z_mm - ray.y_mm * step.signed_n_after() / ray.nu)
}

/// The 2×2 system matrix from the first vertex plane (object space) to the last vertex plane (image
/// space), acting on (y, nu): y' = A y + B nu, nu' = C y + D nu. B is a reduced distance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SystemMatrix {
    /// ∂y'/∂y.
    pub a: f64,
    /// ∂y'/∂nu, mm.
    pub b: f64,
    /// ∂nu'/∂y = −power, 1/mm.
    pub c: f64,
    /// ∂nu'/∂nu.
    pub d: f64,
}

impl SystemMatrix {
    /// The matrix of `seq`, from two paraxial rays; the identity when there are no surfaces.
    pub fn of(seq: &Sequence) -> SystemMatrix {
        let (Some(ra), Some(rb)) = (trace(seq, 1.0, 0.0).last().copied(), trace(seq, 0.0, 1.0).last().copied()) else {
            return SystemMatrix { a: 1.0, b: 0.0, c: 0.0, d: 1.0 };
        };
        SystemMatrix { a: ra.y_mm, b: rb.y_mm, c: ra.nu, d: rb.nu }
    }

    /// Determinant AD − BC, which is 1 for any system (a check on the trace).
    pub fn determinant(&self) -> f64 {
        self.a * self.d - self.b * self.c
    }
}

/// The first-order (Gaussian) properties of a sequence. Positions are rail positions, mm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirstOrder {
    /// System power Φ = −C, 1/mm.
    pub power_per_mm: f64,
    /// Whether the system is afocal (|Φ| below 1e-9 of the sum of the surface powers).
    pub afocal: bool,
    /// Effective focal length 1/Φ, mm (`None` when afocal).
    pub efl_mm: Option<f64>,
    /// Back focal length: from the last vertex to the back focal point, along the light's final direction.
    pub bfl_mm: Option<f64>,
    /// Front focal length: from the front focal point to the first vertex, along +z (positive when the
    /// front focus lies before the first surface).
    pub ffl_mm: Option<f64>,
    /// Rail position of the front focal point.
    pub front_focus_at_mm: Option<f64>,
    /// Rail position of the back focal point.
    pub back_focus_at_mm: Option<f64>,
    /// Rail position of the front principal plane.
    pub front_principal_at_mm: Option<f64>,
    /// Rail position of the back principal plane.
    pub back_principal_at_mm: Option<f64>,
    /// Rail position of the front nodal point.
    pub front_nodal_at_mm: Option<f64>,
    /// Rail position of the back nodal point.
    pub back_nodal_at_mm: Option<f64>,
    /// Angular magnification, for an afocal system (travel-frame slopes out over in).
    pub angular_magnification: Option<f64>,
    /// The system matrix the figures come from.
    pub matrix: SystemMatrix,
}

impl FirstOrder {
    /// First-order properties of `seq`; `None` when it has no surface.
    ///
    /// The focal distances belong to the optics: the FFL is measured from the first and the BFL from the
    /// last lens or mirror vertex the light meets, never from an iris before or after them. A sequence of
    /// irises only has no first order (`None`).
    pub fn of(seq: &Sequence) -> Option<FirstOrder> {
        let first = &seq.steps[seq.first_optic()?];
        let last = &seq.steps[seq.last_optic()?];
        let exit = seq.steps.last()?;
        let mx = SystemMatrix::of(seq);
        let n = seq.n_object;
        let n1 = exit.signed_n_after();
        let power = -mx.c;
        let scale: f64 = seq.steps.iter().map(|s| surface_power(s).abs()).sum();
        let afocal = power.abs() <= 1e-9 * scale || power == 0.0;
        if afocal {
            return Some(FirstOrder {
                power_per_mm: power,
                afocal: true,
                efl_mm: None,
                bfl_mm: None,
                ffl_mm: None,
                front_focus_at_mm: None,
                back_focus_at_mm: None,
                front_principal_at_mm: None,
                back_principal_at_mm: None,
                front_nodal_at_mm: None,
                back_nodal_at_mm: None,
                angular_magnification: Some(mx.d * n.abs() / n1.abs()),
                matrix: mx,
            });
        }
        // The matrix runs from the first to the last vertex of the sequence (an iris there only adds a
        // transfer), so the points are placed from those vertices.
        let (z_in, z_out) = (seq.steps[0].z_mm, exit.z_mm);
        let back_focus = z_out - n1 * mx.a / mx.c;
        let front_focus = z_in + n * mx.d / mx.c;
        let back_principal = z_out + n1 * (1.0 - mx.a) / mx.c;
        let front_principal = z_in + n * (mx.d - 1.0) / mx.c;
        let nodal_shift = (n1 - n) / power;
        Some(FirstOrder {
            power_per_mm: power,
            afocal: false,
            efl_mm: Some(1.0 / power),
            bfl_mm: Some((back_focus - last.z_mm) * last.dir_after),
            ffl_mm: Some(first.z_mm - front_focus),
            front_focus_at_mm: Some(front_focus),
            back_focus_at_mm: Some(back_focus),
            front_principal_at_mm: Some(front_principal),
            back_principal_at_mm: Some(back_principal),
            front_nodal_at_mm: Some(front_principal + nodal_shift),
            back_nodal_at_mm: Some(back_principal + nodal_shift),
            angular_magnification: None,
            matrix: mx,
        })
    }
}

/// The object the light comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Object {
    /// A point object at a rail position: the on-axis point and an off-axis point `height_mm` above it.
    Finite {
        /// Rail position, mm.
        z_mm: f64,
        /// Height of the off-axis point, mm.
        height_mm: f64,
    },
    /// An object at infinity: the on-axis point and an off-axis point `field_deg` above the axis (its
    /// rays travel downward), lit by a collimated beam of the given diameter, centred on the axis at the
    /// first surface.
    Distant {
        /// Field angle of the off-axis point, degrees.
        field_deg: f64,
        /// Beam diameter at the first surface, mm.
        beam_diameter_mm: f64,
    },
}

impl Object {
    /// The same object with its off-axis point moved to `fraction` of the way out: `fraction` of the
    /// object height, or of the field angle (0 is the on-axis point, 1 the off-axis point).
    pub fn at_field(&self, fraction: f64) -> Object {
        match *self {
            Object::Finite { z_mm, height_mm } => Object::Finite { z_mm, height_mm: fraction * height_mm },
            Object::Distant { field_deg, beam_diameter_mm } => {
                Object::Distant { field_deg: fraction * field_deg, beam_diameter_mm }
            }
        }
    }

    /// The paraxial axial ray from the on-axis object point at the first vertex plane (y, nu): for a
    /// finite object a ray of unit slope from the object point; for a distant one a unit-height ray
    /// parallel to the axis.
    pub fn axial_ray_start(&self, seq: &Sequence) -> (f64, f64) {
        match *self {
            Object::Finite { z_mm, .. } => {
                let z1 = seq.steps.first().map_or(z_mm, |s| s.z_mm);
                (z1 - z_mm, seq.n_object)
            }
            Object::Distant { .. } => (1.0, 0.0),
        }
    }

    /// A paraxial ray from the off-axis object point (unit object height, or unit slope for a distant
    /// object with slope −1 meaning "above the axis"), at the first vertex plane (y, nu).
    pub fn field_ray_start(&self, seq: &Sequence) -> (f64, f64) {
        match *self {
            Object::Finite { .. } => (1.0, 0.0),
            Object::Distant { .. } => (0.0, -seq.n_object),
        }
    }
}

/// A paraxial image formed after one imaging element.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParaxialImage {
    /// Index of the last surface of the element.
    pub after_surface: usize,
    /// The element tag of that surface.
    pub element: usize,
    /// Rail position of the image (`None`: at infinity).
    pub at_mm: Option<f64>,
    /// Lateral magnification from the object (`None` for a distant object or an image at infinity).
    pub magnification: Option<f64>,
    /// Image height of the off-axis object point, mm (`None` at infinity).
    pub height_mm: Option<f64>,
    /// Whether the light converges to the image in its direction of travel (a real image), whatever
    /// irises it passes on the way; false for a virtual image, which the light only appears to come from.
    pub real: bool,
    /// For a real image, the surface of the next imaging element when that element meets the light
    /// before it converges: the image is real but intercepted, a virtual object for that element.
    pub intercepted_by: Option<usize>,
    /// Whether the image is upright relative to the object.
    pub erect: bool,
}

/// The paraxial images after each imaging element (a run of surfaces with the same element tag that bends
/// the light: a lens or a mirror, never an iris); the last is the final image.
pub fn images(seq: &Sequence, object: &Object) -> Vec<ParaxialImage> {
    let (ya, nua) = object.axial_ray_start(seq);
    let (yb, nub) = object.field_ray_start(seq);
    let a = trace(seq, ya, nua);
    let b = trace(seq, yb, nub);
    let ends: Vec<usize> = (0..seq.steps.len())
        .filter(|&i| {
            let end_of_element = i + 1 == seq.steps.len() || seq.steps[i + 1].element != seq.steps[i].element;
            end_of_element && element_has_power(seq, i)
        })
        .collect();
    ends.iter()
        .enumerate()
        .map(|(k, &i)| {
            // The first surface of the next imaging element, if any.
            let next = ends.get(k + 1).map(|&j| {
                let tag = seq.steps[j].element;
                (0..=j).rev().take_while(|&s| seq.steps[s].element == tag).last().unwrap_or(j)
            });
            image_after(seq, object, i, next, &a[i], &b[i], nua)
        })
        .collect()
}

/// Whether the element ending at surface `i` images: it bends the light or is a mirror (a flat mirror
/// images too). Irises and screens do not image.
fn element_has_power(seq: &Sequence, i: usize) -> bool {
    let tag = seq.steps[i].element;
    seq.steps[..=i]
        .iter()
        .rev()
        .take_while(|s| s.element == tag)
        .any(|s| surface_power(s) != 0.0 || s.kind == crate::system::Kind::Reflect)
}

fn image_after(
    seq: &Sequence,
    object: &Object,
    i: usize,
    next_imaging: Option<usize>,
    a: &ParaxialRay,
    b: &ParaxialRay,
    nu0: f64,
) -> ParaxialImage {
    let step = &seq.steps[i];
    let n1 = step.signed_n_after();
    // An image "at infinity" when the axial ray leaves parallel to within rounding.
    let parallel = a.nu.abs() <= 1e-14 * (nu0.abs() + a.y_mm.abs() * surface_power(step).abs()).max(f64::MIN_POSITIVE);
    let at = if parallel { None } else { axis_crossing_mm(seq, i, a) };
    let field_scale = match *object {
        Object::Finite { height_mm, .. } => height_mm,
        Object::Distant { field_deg, .. } => field_deg.to_radians().tan(),
    };
    let height = at.map(|z| field_scale * (b.y_mm + (z - step.z_mm) * b.nu / n1));
    let magnification = match (object, at) {
        (Object::Finite { .. }, Some(_)) => Some(nu0 / a.nu),
        _ => None,
    };
    // Real when the light converges to it: the image lies ahead of the element along the light.
    let real = at.is_some_and(|z| (z - step.z_mm) * step.dir_after > 0.0);
    let intercepted_by = match (at, next_imaging) {
        (Some(z), Some(j)) if real && (z - seq.steps[j].z_mm) * step.dir_after > 0.0 => Some(j),
        _ => None,
    };
    // Seen from the image side, an erect image of an object above the axis lies above it: its rays travel
    // downward towards the viewer when the image is at infinity.
    let reference_slope = -field_scale;
    let erect = match (object, magnification, height) {
        (_, Some(m), _) => m > 0.0,
        (Object::Distant { .. }, None, Some(h)) => h * field_scale > 0.0,
        _ => b.nu / n1.abs() * step.dir_after * reference_slope > 0.0,
    };
    ParaxialImage {
        after_surface: i,
        element: step.element,
        at_mm: at,
        magnification,
        height_mm: height,
        real,
        intercepted_by,
        erect,
    }
}

/// The Lagrange invariant H = n(ū y − u ȳ) of a marginal ray (y, u) and a chief ray (ȳ, ū) in a space of
/// index n (signed), which is the same in every space of a system (Welford, *Aberrations of Optical
/// Systems*).
pub fn lagrange_invariant(n: f64, y: f64, u: f64, y_bar: f64, u_bar: f64) -> f64 {
    n * (u_bar * y - u * y_bar)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Surface, System};

    fn thin(f: &[(f64, f64)]) -> Sequence {
        let surfaces = f.iter().enumerate().map(|(i, &(z, f))| Surface::ideal_lens(z, f).in_element(i)).collect();
        System { object_medium: Material::AIR, surfaces }.at(550.0).unwrap()
    }

    #[test]
    fn determinant_is_one() {
        let s = thin(&[(10.0, 50.0), (40.0, -30.0), (90.0, 70.0)]);
        assert!((SystemMatrix::of(&s).determinant() - 1.0).abs() < 1e-14);
    }

    #[test]
    fn a_thin_lens_images_by_gauss() {
        // 1/s' − 1/s = 1/f with s = −300, f = 100: s' = 150, m = s'/s = −0.5 (Hecht, Optics).
        let s = thin(&[(300.0, 100.0)]);
        let img = images(&s, &Object::Finite { z_mm: 0.0, height_mm: 2.0 });
        assert_eq!(img.len(), 1);
        assert!((img[0].at_mm.unwrap() - 450.0).abs() < 1e-12);
        assert!((img[0].magnification.unwrap() + 0.5).abs() < 1e-15);
        assert!((img[0].height_mm.unwrap() + 1.0).abs() < 1e-14);
        assert!(img[0].real && !img[0].erect);
    }
}
