//! Property tests: random valid systems give finite figures or a typed error, never a panic or a NaN.

use lumenrail_optics::analysis::{Request, analyse};
use lumenrail_optics::batch::{RayBatch, trace_batch_portable};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::system::{Shape, Surface, System};
use lumenrail_optics::trace::{Ray, trace_path};
use proptest::prelude::*;

#[derive(Debug, Clone)]
enum Part {
    Ideal(f64),
    Singlet { r1: f64, r2: f64, t: f64, n: f64 },
    Iris(f64),
    Mirror(f64),
}

fn part() -> impl Strategy<Value = Part> {
    prop_oneof![
        prop_oneof![-400.0..-10.0f64, 10.0..400.0f64].prop_map(Part::Ideal),
        (
            prop_oneof![-300.0..-15.0f64, 15.0..300.0f64],
            prop_oneof![-300.0..-15.0f64, 15.0..300.0f64],
            1.0..12.0f64,
            1.4..1.9f64
        )
            .prop_map(|(r1, r2, t, n)| Part::Singlet { r1, r2, t, n }),
        (0.5..15.0f64).prop_map(Part::Iris),
        prop_oneof![-600.0..-50.0f64, 50.0..600.0f64].prop_map(Part::Mirror),
    ]
}

fn build(parts: &[(Part, f64)], semi: f64) -> System {
    let mut z = 50.0;
    let mut surfaces = Vec::new();
    for (i, (p, gap)) in parts.iter().enumerate() {
        z += gap;
        match *p {
            Part::Ideal(f) => surfaces.push(Surface::ideal_lens(z, f).with_semi_aperture(semi).in_element(i)),
            Part::Singlet { r1, r2, t, n } => {
                surfaces.push(
                    Surface::refracting(z, Shape::sphere(r1), Material::Abbe { nd: n, vd: 50.0 })
                        .with_semi_aperture(semi)
                        .in_element(i),
                );
                z += t;
                surfaces.push(
                    Surface::refracting(z, Shape::sphere(r2), Material::AIR).with_semi_aperture(semi).in_element(i),
                );
            }
            Part::Iris(a) => surfaces.push(Surface::aperture(z, a).in_element(i)),
            Part::Mirror(r) => {
                surfaces.push(Surface::mirror(z, Shape::sphere(r)).with_semi_aperture(semi).in_element(i));
                break;
            }
        }
    }
    System { object_medium: Material::AIR, surfaces }
}

fn finite_or_none(v: Option<f64>) -> bool {
    v.is_none_or(f64::is_finite)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    #[test]
    fn random_systems_give_finite_figures(
        parts in prop::collection::vec((part(), 5.0..150.0f64), 1..6),
        semi in 2.0..20.0f64,
        distant in any::<bool>(),
        height in -20.0..20.0f64,
    ) {
        let system = build(&parts, semi);
        let object = if distant {
            Object::Distant { field_deg: height / 4.0, beam_diameter_mm: semi }
        } else {
            Object::Finite { z_mm: 0.0, height_mm: height }
        };
        let request = Request {
            object,
            wavelengths_nm: vec![486.1327, 587.5618, 656.2725],
            primary: 1,
            planes_mm: vec![700.0],
            partial_planes: Vec::new(),
            vignetting: true,
            weights: Vec::new(),
        };
        let a = analyse(&system, &request).unwrap();
        if let Some(f) = a.first_order {
            for v in [f.efl_mm, f.bfl_mm, f.ffl_mm, f.front_focus_at_mm, f.back_focus_at_mm,
                      f.front_principal_at_mm, f.back_principal_at_mm, f.angular_magnification] {
                prop_assert!(finite_or_none(v));
            }
        }
        for img in a.images() {
            prop_assert!(finite_or_none(img.at_mm) && finite_or_none(img.magnification) && finite_or_none(img.height_mm));
        }
        for v in [a.chromatic_focal_shift_mm, a.marginal_lsa_mm, a.working_f_number, a.f_number, a.image_na,
                  a.airy_radius_um, a.depth_of_focus_mm, a.off_axis_transmission, a.lagrange_invariant_mm] {
            prop_assert!(finite_or_none(v), "{v:?}");
        }
        if let Some(Ok(s)) = &a.spot {
            prop_assert!(finite_or_none(s.best_rms_mm) && finite_or_none(s.best_focus_at_mm) && finite_or_none(s.best_geometric_mm));
            for p in &s.planes {
                prop_assert!(p.at_mm.is_finite() && p.rms_mm.is_finite() && p.geometric_mm.is_finite());
            }
        }
        if let Ok(p) = a.pupils() {
            for v in [p.entrance_pupil_at_mm, p.entrance_pupil_diameter_mm, p.exit_pupil_at_mm, p.exit_pupil_diameter_mm] {
                prop_assert!(finite_or_none(v));
            }
        }
        if let Some(s) = &a.seidel {
            let t = s.total;
            for v in [t.spherical, t.coma, t.astigmatism, t.petzval, t.distortion, t.axial_colour, t.lateral_colour] {
                prop_assert!(v.is_finite());
            }
        }
    }

    #[test]
    fn any_ray_gives_a_finite_path_or_a_typed_error(
        parts in prop::collection::vec((part(), 5.0..150.0f64), 1..6),
        y in -30.0..30.0f64,
        angle in -1.5..1.5f64,
    ) {
        let seq = build(&parts, 10.0).at(550.0).unwrap();
        let path = trace_path(&seq, Ray::at_angle(y, 0.0, angle));
        if let Ok(r) = path.outcome {
            prop_assert!(r.y_mm.is_finite() && r.z_mm.is_finite() && r.opl_mm.is_finite());
            prop_assert!((r.m * r.m + r.l * r.l - 1.0).abs() < 1e-12);
        }
        let mut batch = RayBatch::with_capacity(1);
        batch.push(Ray::at_angle(y, 0.0, angle));
        trace_batch_portable(&seq, &mut batch);
        prop_assert_eq!(batch.outcome(0), path.outcome);
    }
}
