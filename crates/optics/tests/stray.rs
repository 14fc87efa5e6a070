//! Stray reflections checked against published formulas and an independent matrix product.
//!
//! Sources: the Fresnel reflectance at normal incidence ((n₁ − n₂)/(n₁ + n₂))² (E. Hecht, *Optics*,
//! sec. 4.6, recalled from memory); the mirror equation 1/s + 1/s' = 1/f with f = −R/2 for a surface
//! met by light travelling +z (Hecht, sec. 5.4, from memory); the ABCD matrices of refraction, transfer and
//! reflection on (y, n·u) (W. J. Smith, *Modern Optical Engineering*, ch. 4; Kogelnik & Li, Appl. Opt. 5,
//! 1550 (1966)), multiplied out here by hand in the unfolded frame, independently of the program's signed
//! indices; S. A. Self, Appl. Opt. 22, 658 (1983), for the waist a focusing element makes of a Gaussian
//! beam. Tolerances: 1e-12 relative where the program and the closed form do the same arithmetic in
//! another order; the exact trace is compared at heights where the third-order aberration is below
//! 1e-10 mm, with a 1e-9 mm tolerance (the project's rule for real-ray intercepts).

use lumenrail_optics::beam::LaserSource;
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::SystemMatrix;
use lumenrail_optics::stray::{
    Role, StrayKind, StrayPath, beam_foci, fresnel_reflectance, geometric_foci, reflects_stray,
};
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use lumenrail_optics::trace::{Ray, trace_range};

const HENE_NM: f64 = 632.8;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

/// One face of a test lens: vertex, radius (`None`: flat), index after it.
type Face = (f64, Option<f64>, f64);

fn seq(faces: &[Face]) -> Sequence {
    let surfaces = faces
        .iter()
        .enumerate()
        .map(|(i, &(z, r, n))| {
            let shape = r.map_or(Shape::Flat, Shape::sphere);
            Surface::refracting(z, shape, Material::Constant(n)).with_semi_aperture(12.7).in_element(i / 3)
        })
        .collect();
    System { object_medium: Material::AIR, surfaces }.at(HENE_NM).unwrap()
}

/// A cemented doublet (crown 1.5168 then flint 1.6727) and a biconvex singlet 1.5 behind it.
fn relay() -> Vec<Face> {
    vec![
        (100.0, Some(61.47), 1.5168),
        (106.0, Some(-44.64), 1.6727),
        (108.5, Some(-129.94), 1.0),
        (180.0, Some(80.0), 1.5),
        (185.0, Some(-120.0), 1.0),
    ]
}

/// The Fresnel reflectance at normal incidence (Hecht, *Optics*, sec. 4.6): 4.0 % for n = 1.5 against
/// air, 8.2 % for n = 1.8, about 1e-4 for crown glass against an optical cement of 1.55.
#[test]
fn fresnel_reflectance_at_normal_incidence() {
    assert!(rel(fresnel_reflectance(1.0, 1.5), 0.04) < 1e-15);
    assert!(rel(fresnel_reflectance(1.5, 1.0), 0.04) < 1e-15);
    // (0.8 / 2.8)² = 0.0816…, "8.2 %".
    assert!((fresnel_reflectance(1.0, 1.8) - 0.0816).abs() < 1e-4);
    // (0.03 / 3.07)² = 9.55e-5.
    let cemented = fresnel_reflectance(1.52, 1.55);
    assert!(rel(cemented, (0.03f64 / 3.07).powi(2)) < 1e-12 && cemented > 0.5e-4 && cemented < 2e-4);
}

/// The first surface's back-reflection focuses where a mirror of the same radius images the source: the
/// mirror equation 1/s + 1/s' = 1/f, f = −R/2 (Hecht, sec. 5.4). A point source 300 mm before a surface
/// of radius −200 mm (concave to the light, f = 100 mm): s' = 150 mm, back towards the source. A
/// collimated source: the focus at f.
#[test]
fn the_first_back_reflection_obeys_the_mirror_equation() {
    let s = seq(&[(100.0, Some(-200.0), 1.5), (105.0, None, 1.0)]);
    let path = StrayPath::back(&s, 0).unwrap();
    assert_eq!(path.seq.steps.len(), 1);
    // A ray of unit slope from the point 300 mm before the vertex reaches it at height 300.
    let (s_obj, f) = (300.0, 100.0);
    let s_img = 1.0 / (1.0 / f - 1.0 / s_obj);
    let foci = geometric_foci(&path, s_obj, 1.0);
    assert_eq!(foci.len(), 1);
    assert!(foci[0].final_space);
    assert!(rel(foci[0].at_mm, 100.0 - s_img) < 1e-12, "{:?} vs {}", foci[0], 100.0 - s_img);
    let collimated = geometric_foci(&path, 1.0, 0.0);
    assert!(rel(collimated[0].at_mm, 100.0 - f) < 1e-12);
    // A surface convex to the light (R = +200) is a convex mirror: the reflection only appears to come
    // from a point behind it, so no real focus.
    let convex = seq(&[(100.0, Some(200.0), 1.5), (105.0, None, 1.0)]);
    assert!(geometric_foci(&StrayPath::back(&convex, 0).unwrap(), 1.0, 0.0).is_empty());
}

/// 2 × 2 matrices on (y, n·u), multiplied by hand.
#[derive(Clone, Copy, Debug)]
struct M([f64; 4]);

impl M {
    fn then(self, next: M) -> M {
        let [a, b, c, d] = self.0;
        let [e, f, g, h] = next.0;
        M([e * a + f * c, e * b + f * d, g * a + h * c, g * b + h * d])
    }
}

/// Transfer over `d` mm in index `n` (unfolded: d > 0, n > 0).
fn transfer(d: f64, n: f64) -> M {
    M([1.0, d / n, 0.0, 1.0])
}

/// A surface of power φ.
fn power(phi: f64) -> M {
    M([1.0, 0.0, -phi, 1.0])
}

/// The back-reflection from surface k of the relay is surfaces 1 … k−1, a mirror of radius R_k, then
/// k−1 … 1 the other way (the check, with surfaces counted from 1). In the unfolded frame a
/// refracting surface has power (n' − n)/R both ways and a mirror in index n has power −2n/R (Smith,
/// ch. 4); the program's matrix of the path and its focus agree with that product.
#[test]
fn the_back_reflection_of_surface_k_is_the_matrix_product() {
    let faces = relay();
    let s = seq(&faces);
    let index_before = |m: usize| if m == 0 { 1.0 } else { faces[m - 1].2 };
    for k in 0..faces.len() {
        let mut mx = M([1.0, 0.0, 0.0, 1.0]);
        for m in 0..k {
            let (z, r, n_after) = faces[m];
            mx = mx.then(power((n_after - index_before(m)) / r.unwrap()));
            mx = mx.then(transfer(faces[m + 1].0 - z, n_after));
        }
        mx = mx.then(power(-2.0 * index_before(k) / faces[k].1.unwrap()));
        for m in (0..k).rev() {
            mx = mx.then(transfer(faces[m + 1].0 - faces[m].0, faces[m].2));
            let (_, r, n_after) = faces[m];
            mx = mx.then(power((n_after - index_before(m)) / r.unwrap()));
        }
        let path = StrayPath::back(&s, k).unwrap();
        let program = SystemMatrix::of(&path.seq);
        let [a, b, c, d] = mx.0;
        for (got, want) in [(program.a, a), (program.b, b), (program.c, c), (program.d, d)] {
            assert!((got - want).abs() < 1e-12 * (1.0 + want.abs()), "surface {k}: {got} vs {want}");
        }
        // A collimated input: (1, 0) leaves as (A, C); it crosses the axis −A·n/C beyond the first vertex,
        // travelling −z (n = 1: the light is back in air).
        let unfolded = -a / c;
        let foci = geometric_foci(&path, 1.0, 0.0);
        match foci.iter().find(|f| f.final_space) {
            Some(f) => assert!(rel(f.at_mm, faces[0].0 - unfolded) < 1e-12, "surface {k}"),
            None => assert!(unfolded <= 0.0, "surface {k}: a real focus {unfolded} mm out was missed"),
        }
    }
}

/// Paraxial stray foci agree with an exact real-ray trace of the same reflection path near the axis: a
/// collimated ray 1e-6 mm from the axis, traced by Snell's law and the law of reflection through every
/// step of the path, crosses the axis within 1e-9 mm of the paraxial focus (the longitudinal aberration
/// grows as the square of the height: about 1e-6 mm at 1e-4 mm for the slowest path here, whose focus
/// lies 2 m out, so below 1e-10 mm at 1e-6 mm; the ray at 1e-3 mm shows it, so the check can fail).
#[test]
fn paraxial_stray_foci_agree_with_the_exact_trace_near_the_axis() {
    let s = seq(&relay());
    let paths = StrayPath::all(&s);
    // Five reflecting surfaces: 5 back-reflections and 10 pairs.
    assert_eq!(paths.len(), 5 + 10);
    let (mut checked, mut largest_far) = (0, 0.0_f64);
    for path in &paths {
        for focus in geometric_foci(path, 1.0, 0.0) {
            let crossing = |h: f64| {
                let ray = trace_range(&path.seq, Ray::at_angle(h, 0.0, 0.0), 0..focus.after_step + 1, false).unwrap();
                ray.axis_crossing_mm().unwrap()
            };
            let (near, far) = (crossing(1e-6), crossing(1e-3));
            assert!((near - focus.at_mm).abs() < 1e-9, "{:?}: exact {near} vs paraxial {}", path.kind, focus.at_mm);
            largest_far = largest_far.max((far - focus.at_mm).abs());
            checked += 1;
        }
    }
    assert!(checked >= 8, "only {checked} foci checked");
    // At 1e-3 mm the aberration (1e6 times that at 1e-6 mm) shows: the comparison above can fail.
    assert!(largest_far > 1e-8, "{largest_far}");
}

/// A double reflection travels on towards the screen, and its relative power is the product of the two
/// reflectances and the transmissions it crosses: from the singlet's back face back to its front face,
/// R₁·R₂ · T₁ (in) · T₁ (out), each 1.5/air face 4 % (Hecht).
#[test]
fn a_double_reflection_goes_on_and_carries_the_product_of_reflectances_and_transmissions() {
    let s = seq(&[(100.0, Some(50.0), 1.5), (105.0, Some(-50.0), 1.0)]);
    let r = |i: usize| fresnel_reflectance(s.steps[i].n_before, s.steps[i].n_after);
    let path = StrayPath::double(&s, 1, 0).unwrap();
    assert_eq!(path.kind, StrayKind::Double { later: 1, earlier: 0 });
    assert_eq!(path.origin, vec![(0, Role::Pass), (1, Role::Reflect), (0, Role::Reflect), (1, Role::Pass)]);
    assert!(path.seq.dir_image() > 0.0, "travels on towards the screen");
    assert!(rel(path.power_share(&s, r), 0.04 * 0.04 * 0.96 * 0.96) < 1e-12);
    let back = StrayPath::back(&s, 1).unwrap();
    assert!(back.seq.dir_image() < 0.0, "travels back towards the source");
    assert!(rel(back.power_share(&s, r), 0.96 * 0.04 * 0.96) < 1e-12);
    assert!(StrayPath::double(&s, 0, 1).is_none());
    // An iris reflects nothing.
    let iris =
        System { object_medium: Material::AIR, surfaces: vec![Surface::aperture(10.0, 3.0)] }.at(HENE_NM).unwrap();
    assert!(!reflects_stray(&iris.steps[0]) && StrayPath::all(&iris).is_empty());
}

/// A laser's own beam along a stray path comes to a finite waist where S. A. Self's law puts it (Appl.
/// Opt. 22, 658 (1983)): a collimated beam, waist w₀ at the reflecting surface (s = 0), focused by the
/// equivalent mirror of focal length f = |R|/2, has its waist s' = f / (1 + (f/z_R)²) from it, of radius
/// w₀' = w₀ / √(1 + (z_R/f)²).
#[test]
fn a_laser_stray_focus_is_a_finite_waist_where_self_puts_it() {
    let s = seq(&[(100.0, Some(-400.0), 1.5), (104.0, None, 1.0)]);
    let path = StrayPath::back(&s, 0).unwrap();
    let (w0, f) = (0.4, 200.0);
    let z_r = std::f64::consts::PI * w0 * w0 / (HENE_NM * 1e-6);
    let source = LaserSource { wavelength_nm: HENE_NM, waist_radius_mm: w0, waist_at_mm: 100.0, m_squared: 1.0 };
    let (_, foci) = beam_foci(&path, source).unwrap();
    assert_eq!(foci.len(), 1);
    let want_at = 100.0 - f / (1.0 + (f / z_r).powi(2));
    let want_w = w0 / (1.0 + (z_r / f).powi(2)).sqrt();
    assert!(rel(foci[0].at_mm, want_at) < 1e-12, "{:?} vs {want_at}", foci[0]);
    assert!(rel(foci[0].waist_radius_mm.unwrap(), want_w) < 1e-12);
    assert!(foci[0].waist_radius_mm.unwrap() > 0.0);
}
