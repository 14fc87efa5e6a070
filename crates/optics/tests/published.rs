//! The optics core checked against published formulas and exact analytic cases.
//!
//! Each test names its source. Tolerances: first-order figures to 1e-9 relative or better, real-ray
//! intercepts to 1e-9 mm, unless a comment says why not.

use lumenrail_optics::analysis::{AIRY_FIRST_ZERO, Request, analyse};
use lumenrail_optics::material::Material;
use lumenrail_optics::paraxial::{self, FirstOrder, Object, lagrange_invariant};
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::seidel::seidel;
use lumenrail_optics::system::{Sequence, Shape, Surface, System};
use lumenrail_optics::trace::{Ray, RayError, trace};

const D_NM: f64 = 587.5618;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn seq(surfaces: Vec<Surface>) -> Sequence {
    System { object_medium: Material::AIR, surfaces }.at(D_NM).unwrap()
}

/// A singlet of index n: front radius r1 at z, thickness t, back radius r2 (`None` = flat).
fn singlet(z: f64, r1: Option<f64>, r2: Option<f64>, t: f64, n: f64) -> Vec<Surface> {
    let shape = |r: Option<f64>| r.map_or(Shape::Flat, Shape::sphere);
    vec![Surface::refracting(z, shape(r1), Material::Constant(n)), Surface::refracting(z + t, shape(r2), Material::AIR)]
}

/// Ball lens: EFL = nD/(4(n − 1)), principal planes at the centre, BFL = EFL − D/2 (Hecht, *Optics*;
/// also the thick-lens equation with R₂ = −R₁ = −D/2, t = D).
#[test]
fn ball_lens() {
    let (n, d) = (1.5168, 10.0);
    let s = seq(singlet(50.0, Some(5.0), Some(-5.0), d, n));
    let f = FirstOrder::of(&s).unwrap();
    let efl = n * d / (4.0 * (n - 1.0));
    assert!(rel(f.efl_mm.unwrap(), efl) < 1e-12);
    assert!(rel(f.bfl_mm.unwrap(), efl - d / 2.0) < 1e-12);
    assert!((f.front_principal_at_mm.unwrap() - 55.0).abs() < 1e-12);
    assert!((f.back_principal_at_mm.unwrap() - 55.0).abs() < 1e-12);
}

/// Plano-convex: EFL = R/(n − 1); BFL = f − t/n curved side first, = f flat side first (lensmaker's
/// equation with one flat surface).
#[test]
fn plano_convex_both_ways() {
    let (r, t, n) = (25.84, 5.3, 1.5168);
    let f_expected = r / (n - 1.0);
    let curved_first = FirstOrder::of(&seq(singlet(0.0, Some(r), None, t, n))).unwrap();
    assert!(rel(curved_first.efl_mm.unwrap(), f_expected) < 1e-12);
    assert!(rel(curved_first.bfl_mm.unwrap(), f_expected - t / n) < 1e-12);
    let flat_first = FirstOrder::of(&seq(singlet(0.0, None, Some(-r), t, n))).unwrap();
    assert!(rel(flat_first.efl_mm.unwrap(), f_expected) < 1e-12);
    assert!(rel(flat_first.bfl_mm.unwrap(), f_expected) < 1e-12);
}

/// The thick-lens lensmaker's equation 1/f = (n−1)[1/R₁ − 1/R₂ + (n−1)d/(nR₁R₂)] and the principal
/// planes h' = −f(n−1)d/(nR₁) from the back vertex, h = −f(n−1)d/(nR₂) from the front vertex (Hecht).
#[test]
fn thick_lens_lensmaker() {
    for &(r1, r2, d, n) in
        &[(40.0, -60.0, 8.0, 1.62), (30.0, 80.0, 5.0, 1.5), (-50.0, -20.0, 6.0, 1.75), (100.0, -100.0, 12.0, 1.4585)]
    {
        let z0 = 200.0;
        let s = seq(singlet(z0, Some(r1), Some(r2), d, n));
        let fo = FirstOrder::of(&s).unwrap();
        let f = 1.0 / ((n - 1.0) * (1.0 / r1 - 1.0 / r2 + (n - 1.0) * d / (n * r1 * r2)));
        assert!(rel(fo.efl_mm.unwrap(), f) < 1e-12, "f {r1} {r2}");
        let h_back = -f * (n - 1.0) * d / (n * r1);
        let h_front = -f * (n - 1.0) * d / (n * r2);
        assert!((fo.back_principal_at_mm.unwrap() - (z0 + d + h_back)).abs() < 1e-9 * f.abs());
        assert!((fo.front_principal_at_mm.unwrap() - (z0 + h_front)).abs() < 1e-9 * f.abs());
        // In air the nodal points coincide with the principal points.
        assert!((fo.front_nodal_at_mm.unwrap() - fo.front_principal_at_mm.unwrap()).abs() < 1e-12);
    }
}

/// A more strongly curved lens has a shorter focal length (plain consequence of the lensmaker's
/// equation).
#[test]
fn stronger_curvature_shorter_focus() {
    let f = |r: f64| FirstOrder::of(&seq(singlet(0.0, Some(r), Some(-r), 3.0, 1.5))).unwrap().efl_mm.unwrap();
    assert!(f(20.0) < f(40.0) && f(40.0) < f(80.0));
}

/// Gullstrand's two-lens formula 1/f = 1/f₁ + 1/f₂ − d/(f₁f₂) for thin lenses d apart.
#[test]
fn two_lens_formula() {
    for &(f1, f2, d) in &[(100.0, 50.0, 30.0), (200.0, -75.0, 60.0), (-40.0, 80.0, 10.0)] {
        let s =
            seq(vec![Surface::ideal_lens(100.0, f1).in_element(0), Surface::ideal_lens(100.0 + d, f2).in_element(1)]);
        let f = 1.0 / (1.0 / f1 + 1.0 / f2 - d / (f1 * f2));
        assert!(rel(FirstOrder::of(&s).unwrap().efl_mm.unwrap(), f) < 1e-13);
    }
}

/// Newton's imaging equation x x' = −f² (object and image distances from their focal points, in air;
/// Hecht), for a thick lens and several object positions.
#[test]
fn newtons_equation() {
    let s = seq(singlet(300.0, Some(60.0), Some(-90.0), 7.0, 1.6));
    let fo = FirstOrder::of(&s).unwrap();
    let f = fo.efl_mm.unwrap();
    for z_obj in [0.0, 100.0, 180.0, 250.0] {
        let img = paraxial::images(&s, &Object::Finite { z_mm: z_obj, height_mm: 1.0 });
        let x = z_obj - fo.front_focus_at_mm.unwrap();
        let x1 = img.last().unwrap().at_mm.unwrap() - fo.back_focus_at_mm.unwrap();
        assert!(rel(x * x1, -f * f) < 1e-11, "object at {z_obj}");
        // Magnification m = f/x = −x'/f (Cartesian form of Hecht's M = −x_o/f).
        assert!(rel(img.last().unwrap().magnification.unwrap(), f / x) < 1e-11);
        assert!(rel(img.last().unwrap().magnification.unwrap(), -x1 / f) < 1e-11);
    }
}

/// The aplanatic points of a refracting sphere: an axial point in glass at R·n'/n from the centre is
/// imaged free of spherical aberration of every order to R·n/n' from it, on the same side (Young,
/// Weierstrass; Born & Wolf, *Principles of Optics*, sec. 4.2.3). Every real ray must appear to diverge
/// from one point.
#[test]
fn aplanatic_points_of_a_sphere() {
    let (n, r) = (1.5, 10.0);
    // Vertex at 0, centre at −10 (R = −10: the surface bulges toward +z, towards the air).
    let system = System {
        object_medium: Material::Constant(n),
        surfaces: vec![Surface::refracting(0.0, Shape::sphere(-r), Material::AIR)],
    };
    let s = system.at(D_NM).unwrap();
    let centre = -r;
    let object = centre - r / n;
    let image = centre - r * n;
    // Up to 45°: steeper rays meet the far hemisphere, which a lens surface does not have.
    for deg in [0.5, 5.0, 15.0, 30.0, 40.0, 45.0] {
        let out = trace(&s, Ray::at_angle(0.0, object, f64::to_radians(deg))).unwrap();
        let crossing = out.axis_crossing_mm().unwrap();
        assert!((crossing - image).abs() < 1e-9, "{deg}°: {crossing}");
    }
}

/// A refracting ellipsoid of conic constant k = −1/n² brings a collimated beam from air to a perfect focus
/// in the glass at nR/(n − 1) from the vertex (Descartes' oval, special case).
#[test]
fn refracting_ellipsoid_focuses_perfectly() {
    let (n, r) = (1.5, 10.0);
    let s = seq(vec![Surface::refracting(0.0, Shape::conic(r, -1.0 / (n * n)), Material::Constant(n))]);
    for h in [0.01, 1.0, 3.0, 5.0, 7.0] {
        let out = trace(&s, Ray::at_angle(h, -20.0, 0.0)).unwrap();
        assert!((out.axis_crossing_mm().unwrap() - n * r / (n - 1.0)).abs() < 1e-9, "h {h}");
    }
}

/// A paraboloidal mirror (k = −1) focuses a collimated axial beam perfectly at R/2 (classical).
#[test]
fn paraboloidal_mirror_focuses_perfectly() {
    let s = seq(vec![Surface::mirror(500.0, Shape::conic(-400.0, -1.0))]);
    for h in [0.1, 10.0, 40.0, 80.0] {
        let out = trace(&s, Ray::at_angle(h, 0.0, 0.0)).unwrap();
        assert!(out.l < 0.0, "the light returns");
        assert!((out.axis_crossing_mm().unwrap() - 300.0).abs() < 1e-9, "h {h}");
    }
    // The paraxial figures agree: EFL = −R/2, focus at the vertex plus R/2.
    let fo = FirstOrder::of(&s).unwrap();
    assert!(rel(fo.efl_mm.unwrap(), 200.0) < 1e-14);
    assert!((fo.back_focus_at_mm.unwrap() - 300.0).abs() < 1e-12);
    assert!(rel(fo.bfl_mm.unwrap(), 200.0) < 1e-14);
    // A spherical mirror of the same radius has spherical aberration: the edge ray falls short.
    let sphere = seq(vec![Surface::mirror(500.0, Shape::sphere(-400.0))]);
    let edge = trace(&sphere, Ray::at_angle(80.0, 0.0, 0.0)).unwrap();
    assert!(edge.axis_crossing_mm().unwrap() > 300.0 + 1.0);
}

/// The critical angle θc = arcsin(1/n) for glass to air (Snell's law).
#[test]
fn critical_angle() {
    let n = 1.5;
    let system = System {
        object_medium: Material::Constant(n),
        surfaces: vec![Surface::refracting(10.0, Shape::Flat, Material::AIR)],
    };
    let s = system.at(D_NM).unwrap();
    let theta_c = (1.0 / n).asin();
    assert!(trace(&s, Ray::at_angle(0.0, 0.0, theta_c - 1e-9)).is_ok());
    assert_eq!(
        trace(&s, Ray::at_angle(0.0, 0.0, theta_c + 1e-9)),
        Err(RayError::TotalInternalReflection { surface: 0 })
    );
}

/// Ray reversibility: a ray traced through a lens and sent back along its own path returns to its start
/// (Helmholtz reciprocity for a lossless system).
#[test]
fn rays_are_reversible() {
    let forward = seq(vec![
        Surface::refracting(20.0, Shape::sphere(30.0), Material::Constant(1.62)),
        Surface::refracting(26.0, Shape::conic(-45.0, -2.3), Material::Constant(1.5)),
        Surface::refracting(30.0, Shape::sphere(-80.0), Material::AIR),
    ]);
    let backward = System {
        object_medium: Material::AIR,
        surfaces: vec![
            Surface::refracting(30.0, Shape::sphere(-80.0), Material::Constant(1.5)),
            Surface::refracting(26.0, Shape::conic(-45.0, -2.3), Material::Constant(1.62)),
            Surface::refracting(20.0, Shape::sphere(30.0), Material::AIR),
        ],
    }
    .at(D_NM)
    .unwrap();
    let start = Ray::at_angle(-2.0, 0.0, 0.15);
    let out = trace(&forward, start).unwrap();
    let back_start = Ray { y_mm: out.y_mm, z_mm: out.z_mm, m: -out.m, l: -out.l, opl_mm: 0.0 };
    let back = trace(&backward, back_start).unwrap();
    assert!((back.height_at(0.0) - start.y_mm).abs() < 1e-9);
    assert!((back.m + start.m).abs() < 1e-12 && (back.l + start.l).abs() < 1e-12);
    // The optical path between the first and the last intercept is the same both ways.
    let path = lumenrail_optics::trace::trace_path(&forward, start);
    let inside = path.intercepts.last().unwrap().opl_mm - path.intercepts[0].opl_mm;
    assert!((back.opl_mm - inside).abs() < 1e-9, "{} vs {inside}", back.opl_mm);
}

/// The Lagrange invariant H = n(ū y − u ȳ) is the same in every space of a system (Welford).
#[test]
fn lagrange_invariant_is_held() {
    let mut surfaces = vec![Surface::aperture(140.0, 4.0)];
    surfaces.extend(singlet(150.0, Some(50.0), Some(-70.0), 6.0, 1.6));
    surfaces.extend(singlet(220.0, Some(-30.0), Some(90.0), 3.0, 1.7));
    surfaces.push(Surface::mirror(320.0, Shape::sphere(-250.0)));
    let s = seq(surfaces);
    let object = Object::Finite { z_mm: 0.0, height_mm: 6.0 };
    let p = Pupils::find(&s, &object).unwrap();
    let n0 = s.n_object;
    let h0 =
        lagrange_invariant(n0, p.marginal[0].y_mm, p.marginal_start.nu / n0, p.chief[0].y_mm, p.chief_start.nu / n0);
    assert!(h0.abs() > 0.1);
    for (i, st) in s.steps.iter().enumerate() {
        let n = st.signed_n_after();
        let h = lagrange_invariant(n, p.marginal[i].y_mm, p.marginal[i].nu / n, p.chief[i].y_mm, p.chief[i].nu / n);
        assert!(rel(h, h0) < 1e-12, "space after surface {i}: {h} vs {h0}");
    }
}

/// The thin-lens third-order spherical aberration (Coddington shape and position factors; Hecht, *Optics*,
/// sec. 6.3, as written in REFERENCES.md) against the small-aperture limit of an exact trace through a
/// lens of zero thickness, and against the Seidel sum S_I via ε = S_I/(2n'u') (Welford).
#[test]
fn thin_lens_spherical_aberration() {
    let n = 1.5168;
    for &(r1, r2, s_obj) in &[(60.0, -60.0, f64::INFINITY), (40.0, -200.0, -400.0), (-80.0, -25.0, -300.0)] {
        let lens = seq(singlet(0.0, Some(r1), Some(r2), 0.0, n));
        let f = 1.0 / ((n - 1.0) * (1.0 / r1 - 1.0 / r2));
        let s_img = if s_obj.is_infinite() { f } else { 1.0 / (1.0 / f + 1.0 / s_obj) };
        let q = (r2 + r1) / (r2 - r1);
        let p = if s_obj.is_infinite() { -1.0 } else { (s_img + s_obj) / (s_img - s_obj) };
        let coefficient = 1.0 / (8.0 * f.powi(3) * n * (n - 1.0))
            * ((n + 2.0) / (n - 1.0) * q * q
                + 4.0 * (n + 1.0) * p * q
                + (3.0 * n + 2.0) * (n - 1.0) * p * p
                + n.powi(3) / (n - 1.0));
        // Exact: 1/s'_h − 1/s'_p = a h² + b h⁴ + …; Richardson on h and h/2 leaves O(h⁶). At h = 1 mm the
        // subtraction keeps about 9 of 16 digits, so the comparison holds to 1e-6 relative.
        let delta = |h: f64| {
            let start =
                if s_obj.is_infinite() { Ray::at_angle(h, -10.0, 0.0) } else { Ray::towards(0.0, s_obj, h, 0.0) };
            let out = trace(&lens, start).unwrap();
            1.0 / out.axis_crossing_mm().unwrap() - 1.0 / s_img
        };
        let h = 1.0;
        let a = (16.0 * delta(h / 2.0) - delta(h)) / (3.0 * h * h);
        assert!(rel(a, coefficient) < 1e-6, "r1 {r1} r2 {r2}: {a} vs {coefficient}");
        // Seidel: the transverse aberration at the paraxial focus is ε = S_I/(2n'u') for the marginal ray
        // of height h at the lens; longitudinally δ(1/s') = −ε/(s'²u')… compare with the exact trace at a
        // tiny aperture instead: LSA ≈ −ε/u'.
        let object = if s_obj.is_infinite() {
            Object::Distant { field_deg: 0.0, beam_diameter_mm: 2.0 * h }
        } else {
            Object::Finite { z_mm: s_obj, height_mm: 0.0 }
        };
        let sized = if s_obj.is_infinite() {
            lens.clone()
        } else {
            let mut l = lens.clone();
            l.steps[0].semi_aperture_mm = h;
            l
        };
        let pupils = Pupils::find(&sized, &object).unwrap();
        let sd = seidel(
            &sized,
            &pupils.marginal,
            pupils.marginal_start.nu,
            &pupils.chief,
            pupils.chief_start.nu,
            &sized,
            &sized,
        );
        let u1 = pupils.marginal.last().unwrap().nu;
        let eps = sd.total.spherical / (2.0 * u1);
        let lsa_third_order = -eps / u1;
        // The thin-lens formula's longitudinal form: LSA = −s'² · coefficient · h².
        let lsa_formula = -s_img * s_img * coefficient * h * h;
        assert!(rel(lsa_third_order, lsa_formula) < 1e-9, "Seidel {lsa_third_order} vs {lsa_formula}");
    }
}

/// Plain facts of the trade (Gaussian imaging, Hecht): an object inside the focal length of a converging
/// lens gives a virtual, erect, magnified image; at the focal point the image is at infinity; a diverging
/// lens gives a virtual, erect, reduced image of a real object; beyond 2f the image is real, inverted,
/// reduced.
#[test]
fn plain_facts_of_imaging() {
    let converging = seq(vec![Surface::ideal_lens(100.0, 50.0)]);
    let inside = paraxial::images(&converging, &Object::Finite { z_mm: 70.0, height_mm: 1.0 })[0];
    assert!(!inside.real && inside.erect && inside.magnification.unwrap() > 1.0);
    assert!(inside.at_mm.unwrap() < 70.0, "the virtual image lies on the object's side");
    let at_focus = paraxial::images(&converging, &Object::Finite { z_mm: 50.0, height_mm: 1.0 })[0];
    assert_eq!(at_focus.at_mm, None);
    let far = paraxial::images(&converging, &Object::Finite { z_mm: -80.0, height_mm: 1.0 })[0];
    assert!(far.real && !far.erect && far.magnification.unwrap().abs() < 1.0);
    let diverging = seq(vec![Surface::ideal_lens(100.0, -50.0)]);
    for z in [0.0, 60.0, 99.0] {
        let img = paraxial::images(&diverging, &Object::Finite { z_mm: z, height_mm: 1.0 })[0];
        let m = img.magnification.unwrap();
        assert!(!img.real && img.erect && m > 0.0 && m < 1.0, "object at {z}");
    }
}

/// An ideal thin lens (tan u' = tan u − y/f) images every conjugate perfectly: the on-axis spot has zero
/// radius at the Gaussian image (exact, to rounding).
#[test]
fn ideal_lens_spot_is_a_point() {
    let system = System {
        object_medium: Material::AIR,
        surfaces: vec![Surface::ideal_lens(200.0, 80.0).with_semi_aperture(12.7)],
    };
    let request = Request {
        object: Object::Finite { z_mm: 0.0, height_mm: 3.0 },
        wavelengths_nm: vec![D_NM],
        primary: 0,
        planes_mm: vec![],
        partial_planes: Vec::new(),
        vignetting: true,
        weights: Vec::new(),
    };
    let a = analyse(&system, &request).unwrap();
    let spot = a.spot.clone().unwrap().unwrap();
    let image = a.images().last().unwrap().at_mm.unwrap();
    assert!((image - (200.0 + 1.0 / (1.0 / 80.0 - 1.0 / 200.0))).abs() < 1e-10);
    assert!(spot.best_rms_mm.unwrap() < 1e-12 && (spot.best_focus_at_mm.unwrap() - image).abs() < 1e-9);
    assert!(a.marginal_lsa_mm.unwrap().abs() < 1e-9);
    assert!((a.off_axis_transmission.unwrap() - 1.0).abs() < 1e-9);
    // Airy radius r = 1.21967 λ N_w with N_w = 1/(2|u'|) (Airy 1835; Born & Wolf sec. 8.5.2).
    let s_img = image - 200.0;
    let nw = s_img / (2.0 * 12.7);
    assert!(rel(a.working_f_number.unwrap(), nw) < 1e-12);
    assert!(rel(a.airy_radius_um.unwrap(), AIRY_FIRST_ZERO * D_NM * 1e-3 * nw) < 1e-12);
    assert!(rel(a.depth_of_focus_mm.unwrap(), 2.0 * D_NM * 1e-6 * nw * nw) < 1e-12);
}

/// RMS of pure third-order spherical aberration ε = aρ³ over the pupil (uniform by area): |a|/2 at the
/// paraxial focus and |a|/6 at best focus (REFERENCES.md, derived by direct integration). A fast sphere
/// has higher orders too, so the check uses a slow beam where fifth order is below 1e-4 of third.
#[test]
fn rms_of_third_order_spherical_aberration() {
    let system =
        System { object_medium: Material::AIR, surfaces: vec![Surface::mirror(1000.0, Shape::sphere(-2000.0))] };
    let request = Request {
        object: Object::Distant { field_deg: 0.0, beam_diameter_mm: 40.0 },
        wavelengths_nm: vec![D_NM],
        primary: 0,
        planes_mm: vec![0.0],
        partial_planes: Vec::new(),
        vignetting: false,
        weights: Vec::new(),
    };
    let a = analyse(&system, &request).unwrap();
    let spot = a.spot.clone().unwrap().unwrap();
    let paraxial_focus = a.images().last().unwrap().at_mm.unwrap();
    // Exact transverse aberration of the edge ray at the paraxial focus gives a.
    let edge = spot.marginal.height_at(paraxial_focus).abs();
    let s = System { object_medium: Material::AIR, surfaces: vec![Surface::mirror(1000.0, Shape::sphere(-2000.0))] }
        .at(D_NM)
        .unwrap();
    let rms_paraxial = {
        let planes = lumenrail_optics::spot::spot_figures(
            &s,
            request.object,
            &Pupils::find(&s, &request.object).unwrap(),
            &[paraxial_focus],
        )
        .unwrap();
        planes.planes[0].rms_mm
    };
    assert!(rel(rms_paraxial, edge / 2.0) < 2e-4);
    assert!(rel(spot.best_rms_mm.unwrap(), edge / 6.0) < 2e-4);
}

/// Third-order coma of a paraboloidal mirror with the stop at the mirror, traced with skew rays: the
/// tangential coma (the mean of the two tangential rim rays, less the chief ray) is three times the
/// sagittal coma (the sagittal rim ray less the chief ray), the classic 3:1 of the coma figure (Welford,
/// *Aberrations of Optical Systems*, ch. 7; Hecht, *Optics*, sec. 6.3.2). Higher orders enter as
/// (a/f)² and θ², about 6e-4 at f/20 and 0.2°, hence a 1e-3 relative tolerance.
#[test]
fn paraboloid_coma_is_three_to_one() {
    use lumenrail_optics::skew::{SkewRay, trace as trace3};
    let s = seq(vec![Surface::mirror(1000.0, Shape::conic(-2000.0, -1.0))]);
    let theta = 0.2f64.to_radians();
    let (a, focus) = (25.0, 0.0);
    let ray = |px: f64, py: f64| {
        // Parallel rays at the field angle that meet the mirror's vertex plane at (px, py).
        let from = [px, py - 100.0 * theta.tan(), 900.0];
        let to = [px, py, 1000.0];
        trace3(&s, SkewRay::towards(from, to)).unwrap().at_plane(focus)
    };
    let chief = ray(0.0, 0.0).1;
    let tangential = 0.5 * (ray(0.0, a).1 + ray(0.0, -a).1) - chief;
    let sagittal = ray(a, 0.0).1 - chief;
    assert!(sagittal.abs() > 1e-5, "coma is there: {sagittal}");
    // Measured: 3.00065.
    assert!((tangential / sagittal / 3.0 - 1.0).abs() < 1e-3, "{tangential} / {sagittal}");
    // The sagittal rim ray stays in its plane's mirror image: the spot is symmetric about the y axis.
    assert!((ray(a, 0.0).0 + ray(-a, 0.0).0).abs() < 1e-12);
}

/// The Coddington equations for a thin bundle refracted obliquely at a sphere (Jenkins & White,
/// *Fundamentals of Optics*; Kingslake, *Lens Design Fundamentals*), distances along the chief ray, positive
/// for a real object and image: sagittal n'/s' + n/s = (n'cos I' − n cos I)/R, tangential
/// n'cos²I'/t' + n cos²I/t = (n'cos I' − n cos I)/R. The foci are found from pairs of skew rays at ±δ
/// about the chief ray (sagittally δ = 1e-5, whose symmetric pair leaves an O(δ²) error of about 1e-10).
#[test]
fn coddington_foci_of_a_tilted_bundle() {
    use lumenrail_optics::skew::{SkewRay, trace as trace3};
    let (n, n1, r) = (1.0, 1.5, 50.0);
    let s = seq(vec![Surface::refracting(0.0, Shape::sphere(r), Material::Constant(n1))]);
    let object = [0.0, 0.0, -200.0];
    // The chief ray meets the sphere 15 mm above the axis.
    let h = 15.0;
    let sag = r - (r * r - h * h).sqrt();
    let hit = [0.0, h, sag];
    let chief = trace3(&s, SkewRay::towards(object, hit)).unwrap();
    let dist = ((hit[1] - object[1]).powi(2) + (hit[2] - object[2]).powi(2)).sqrt();
    // Angles of incidence and refraction from the normal at the hit point (towards the centre).
    let normal = [0.0, -h / r, (r - sag) / r];
    let dir_in = [0.0, (hit[1] - object[1]) / dist, (hit[2] - object[2]) / dist];
    let cos_i = dir_in[1] * normal[1] + dir_in[2] * normal[2];
    let cos_r = chief.m * normal[1] + chief.l * normal[2];
    let power = (n1 * cos_r - n * cos_i) / r;
    let s_img = n1 / (power - n / dist);
    let t_img = n1 * cos_r * cos_r / (power - n * cos_i * cos_i / dist);
    // Rays through points ±δ off the hit point, tangentially (y) and sagitally (x).
    let d = 1e-5;
    let pair = |offset: [f64; 3]| {
        let plus = [hit[0] + offset[0], hit[1] + offset[1], hit[2]];
        let minus = [hit[0] - offset[0], hit[1] - offset[1], hit[2]];
        (trace3(&s, SkewRay::towards(object, plus)).unwrap(), trace3(&s, SkewRay::towards(object, minus)).unwrap())
    };
    // Sagittal: the two rays cross in the meridional plane x = 0; its distance from the hit point along
    // the chief ray is s'.
    let (sp, _) = pair([d, 0.0, 0.0]);
    let t_cross = -sp.x_mm / sp.k;
    let p = [0.0, sp.y_mm + t_cross * sp.m, sp.z_mm + t_cross * sp.l];
    let s_traced = ((p[1] - chief.y_mm).powi(2) + (p[2] - chief.z_mm).powi(2)).sqrt();
    assert!((s_traced / s_img - 1.0).abs() < 1e-9, "sagittal {s_traced} vs {s_img}");
    // Tangential: the two rays (in the meridional plane) cross each other. Their crossing carries an O(δ²)
    // error, removed by Richardson extrapolation from δ and 2δ (δ = 1e-3 keeps rounding near 1e-13).
    let tangential = |d: f64| {
        let (a, b) = pair([0.0, d, 0.0]);
        let det = a.m * (-b.l) - a.l * (-b.m);
        let ta = ((b.y_mm - a.y_mm) * (-b.l) - (b.z_mm - a.z_mm) * (-b.m)) / det;
        let q = [a.y_mm + ta * a.m, a.z_mm + ta * a.l];
        ((q[0] - chief.y_mm).powi(2) + (q[1] - chief.z_mm).powi(2)).sqrt()
    };
    let t_traced = (4.0 * tangential(1e-3) - tangential(2e-3)) / 3.0;
    // Measured: 4e-14 (sagittal, whose pair is symmetric about the meridional plane) and 4e-11.
    assert!((t_traced / t_img - 1.0).abs() < 1e-9, "tangential {t_traced} vs {t_img}");
    // The bundle is astigmatic: the tangential focus lies nearer the surface.
    assert!(t_img < s_img - 1.0);
}

/// The field-curve figures of the views (`field::field_sample`, Richardson-extrapolated pairs of aimed skew
/// rays) against the Coddington equations (Jenkins & White, *Fundamentals of Optics*; Kingslake, *Lens
/// Design Fundamentals*) for a sphere with the stop at its vertex, so the chief ray meets the vertex at the
/// field angle: s' = n'/(P − n/s), t' = n'cos²I'/(P − n cos²I/s), P = (n'cos I' − n cos I)/R.
#[test]
fn field_curves_obey_coddington() {
    use lumenrail_optics::field::field_sample;
    use lumenrail_optics::paraxial::Object;
    use lumenrail_optics::pupil::Pupils;
    let (n, n1, r) = (1.0, 1.5, 50.0);
    let s = seq(vec![
        Surface::aperture(0.0, 2.0),
        Surface::refracting(0.0, Shape::sphere(r), Material::Constant(n1)).with_semi_aperture(30.0),
    ]);
    let (zo, h) = (-200.0, 40.0);
    let object = Object::Finite { z_mm: zo, height_mm: h };
    let pupils = Pupils::find(&s, &object).unwrap();
    let image_at = n1 / ((n1 - n) / r - n / -zo);
    let sample = field_sample(&s, object, &pupils, 1.0, image_at, 0.0).unwrap();
    let dist = zo.hypot(h);
    let cos_i = -zo / dist;
    let sin_r = n / n1 * (1.0 - cos_i * cos_i).sqrt();
    let cos_r = (1.0 - sin_r * sin_r).sqrt();
    let power = (n1 * cos_r - n * cos_i) / r;
    let s_img = n1 / (power - n / dist);
    let t_img = n1 * cos_r * cos_r / (power - n * cos_i * cos_i / dist);
    // Rail positions of the foci along the refracted chief ray from the vertex.
    let (zs, zt) = (s_img * cos_r, t_img * cos_r);
    let (got_s, got_t) = (sample.sagittal_mm + image_at, sample.tangential_mm + image_at);
    assert!((got_s / zs - 1.0).abs() < 1e-9, "sagittal {got_s} vs {zs}");
    assert!((got_t / zt - 1.0).abs() < 1e-9, "tangential {got_t} vs {zt}");
    // A positive sphere's field curves inward, the tangential more (Petzval and astigmatism).
    assert!(sample.tangential_mm < sample.sagittal_mm && sample.sagittal_mm < 0.0);
}

/// A refracting sphere with the stop at its centre of curvature: every chief ray passes through the centre
/// along a normal, so each off-axis bundle sees the same surface as the axial one, about its own chief ray.
/// Hence no astigmatism and no distortion, and the image lies on a sphere about the centre, the axial
/// image's distance away (the concentric case; Kingslake, *Lens Design Fundamentals*, recalled from
/// memory). Concave from air into n = 1.5, R = −50 mm: a distant object images 150 mm before the vertex,
/// 100 mm before the centre, so the focus at field angle θ lies 100(1 − cos θ) mm beyond the paraxial plane.
#[test]
fn a_sphere_with_its_stop_at_the_centre_has_no_astigmatism_or_distortion() {
    use lumenrail_optics::field::{field_curves, field_sample};
    use lumenrail_optics::paraxial::{Object, images};
    use lumenrail_optics::pupil::Pupils;
    let s = seq(vec![
        Surface::aperture(-50.0, 2.0),
        Surface::refracting(0.0, Shape::sphere(-50.0), Material::Constant(1.5)).with_semi_aperture(40.0),
    ]);
    let theta = 20.0f64;
    let object = Object::Distant { field_deg: theta, beam_diameter_mm: 60.0 };
    let pupils = Pupils::find(&s, &object).unwrap();
    let image = *images(&s, &object).last().unwrap();
    let (at, height) = (image.at_mm.unwrap(), image.height_mm.unwrap());
    assert!((at + 150.0).abs() < 1e-12, "{at}");
    let sample = field_sample(&s, object, &pupils, 1.0, at, height).unwrap();
    let want = 100.0 * (1.0 - theta.to_radians().cos());
    assert!((sample.tangential_mm - want).abs() < 1e-9, "{} vs {want}", sample.tangential_mm);
    assert!((sample.sagittal_mm - want).abs() < 1e-9, "{} vs {want}", sample.sagittal_mm);
    assert!(sample.distortion.unwrap().abs() < 1e-12, "{:?}", sample.distortion);
    for p in field_curves(&s, object, &pupils, 6) {
        assert!((p.tangential_mm - p.sagittal_mm).abs() < 1e-9, "{p:?}");
    }
}
