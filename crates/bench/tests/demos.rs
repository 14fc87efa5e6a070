//! Every demo bench's figures checked against a hand calculation or a published formula.
//!
//! Thin-lens demos are exact (Gaussian imaging, Hecht, *Optics*: 1/s' − 1/s = 1/f, m = s'/s); real-lens
//! demos are checked against the lensmaker's equation and published rules, with the reason for each
//! tolerance beside it.

use lumenrail_bench::demos::{DEMOS, find};
use lumenrail_bench::file::parse;
use lumenrail_bench::report::Report;
use lumenrail_optics::library;
use lumenrail_optics::material::{C_LINE_NM, D_LINE_NM, F_LINE_NM};

fn report(name: &str) -> Report {
    let demo = find(name).unwrap_or_else(|| panic!("demo {name}"));
    let loaded = parse(name, demo.text).unwrap_or_else(|e| panic!("{e}"));
    let r = Report::of(&loaded.bench);
    assert!(r.traced(), "{name}: {:?}", r.trace_failure);
    r
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs().max(1.0)
}

/// Gauss: image distance from the lens for an object distance s (negative, to the left).
fn gauss(f: f64, s: f64) -> f64 {
    1.0 / (1.0 / f + 1.0 / s)
}

#[test]
fn every_demo_loads_traces_and_says_what_it_shows() {
    assert!(DEMOS.len() >= 10);
    for d in DEMOS {
        let r = report(d.name);
        assert!(!d.summary().is_empty(), "{}", d.name);
        assert!(!r.images.is_empty(), "{}", d.name);
        let loaded = parse(d.name, d.text).unwrap();
        assert!(loaded.warnings.is_empty(), "{}: {:?}", d.name, loaded.warnings);
    }
}

#[test]
fn one_lens_forms_a_real_half_size_image_on_the_screen() {
    let r = report("one-lens-screen");
    let img = r.images.last().unwrap();
    let s1 = gauss(100.0, -300.0);
    assert!(close(img.at_mm.unwrap(), 300.0 + s1, 1e-12));
    assert!(close(img.magnification.unwrap(), s1 / -300.0, 1e-12) && img.real && !img.erect);
    // An ideal lens images perfectly: the screen at the image has a zero spot.
    let screen = &r.screens[0];
    assert!(screen.rms_spot_um.unwrap() < 1e-9 && screen.move_to_best_focus_mm.unwrap().abs() < 1e-9);
}

#[test]
fn magnifier_gives_a_virtual_erect_enlarged_image() {
    let r = report("magnifier");
    let img = r.images.last().unwrap();
    let s1 = gauss(50.0, -30.0);
    assert!(close(img.at_mm.unwrap(), 100.0 + s1, 1e-12));
    assert!(close(img.magnification.unwrap(), s1 / -30.0, 1e-12));
    assert!(!img.real && img.erect && img.magnification.unwrap() > 1.0);
    // The image is for viewing: no f-number, Airy radius or depth of focus. Seen from the exit pupil (the
    // lens, its own stop) it subtends the object's own angle, tan θ = 4/30: the chief ray through a thin
    // lens's centre is undeviated (Hecht, sec. 5.2).
    let v = r.viewing.expect("a virtual final image is for viewing");
    assert!(close(v.image_at_mm.unwrap(), 100.0 + s1, 1e-12));
    assert!(close(v.from_exit_pupil_mm.unwrap(), s1, 1e-12));
    assert!(close(v.angular_size_deg.unwrap(), (4.0f64 / 30.0).atan().to_degrees(), 1e-12));
    assert!(r.first_order.f_number.is_none() && r.aberrations.airy_radius_um.is_none());
    assert!(r.aberrations.working_f_number.is_none() && r.aberrations.depth_of_focus_mm.is_none());
    assert!(r.to_text().contains("for viewing"));
}

#[test]
fn diverging_lens_gives_a_virtual_erect_reduced_image() {
    let r = report("diverging-lens");
    let img = r.images.last().unwrap();
    let s1 = gauss(-80.0, -120.0);
    assert!(close(img.at_mm.unwrap(), 120.0 + s1, 1e-12));
    assert!(close(img.magnification.unwrap(), 0.4, 1e-12) && !img.real && img.erect);
}

#[test]
fn diverging_then_converging_gives_a_real_image() {
    let r = report("diverging-then-converging");
    // First lens: s = −100, f = −100: s' = −50 (virtual, at 50 mm), m₁ = 0.5.
    // Second lens at 150 sees it 100 mm away: s' = 1/(1/80 − 1/100) = 400, at 550 mm, m₂ = −4.
    assert!(close(r.images[0].at_mm.unwrap(), 50.0, 1e-12) && !r.images[0].real);
    let last = r.images.last().unwrap();
    assert!(close(last.at_mm.unwrap(), 550.0, 1e-12) && last.real);
    assert!(close(last.magnification.unwrap(), -2.0, 1e-12));
    // Gullstrand: 1/f = 1/f₁ + 1/f₂ − d/(f₁f₂) with d = 50.
    let f = 1.0 / (-1.0 / 100.0 + 1.0 / 80.0 + 50.0 / 8000.0);
    assert!(close(r.first_order.efl_mm.unwrap(), f, 1e-12));
}

#[test]
fn unit_relay_has_an_inverted_intermediate_and_an_erect_final_image() {
    let r = report("unit-relay");
    assert_eq!(r.images.len(), 2);
    assert!(close(r.images[0].at_mm.unwrap(), 200.0, 1e-12));
    assert!(close(r.images[0].magnification.unwrap(), -1.0, 1e-12));
    assert!(close(r.images[1].at_mm.unwrap(), 400.0, 1e-12));
    assert!(close(r.images[1].magnification.unwrap(), 1.0, 1e-12));
    // Without a field lens the 2 mm field point loses light at relay B (the stop is relay A). A ray from
    // (0, 2) through A at height h passes the intermediate image point (200, −2) and meets B at −4 − h;
    // rays with h > 8.5 mm fall outside B's 12.5 mm rim: 4 of A's 25 mm, so 84% passes (similar triangles).
    assert!(close(r.off_axis_transmission.unwrap(), 0.84, 1e-6));
    // In two dimensions a ray through A at (hx, hy) meets B at (−hx, −4 − hy): the passing part of A's disk
    // is its overlap with an equal disk 4 mm off, the lens-shaped area 2r²acos(s/2r) − (s/2)√(4r² − s²)
    // (plane geometry) over πr², 79.7% (measured: 9e-10 from it).
    let (r0, s0) = (12.5f64, 4.0f64);
    let lens = 2.0 * r0 * r0 * (s0 / (2.0 * r0)).acos() - 0.5 * s0 * (4.0 * r0 * r0 - s0 * s0).sqrt();
    let area = lens / (std::f64::consts::PI * r0 * r0);
    assert!(close(r.off_axis_area_transmission.unwrap(), area, 1e-8), "{:?} vs {area}", r.off_axis_area_transmission);
    assert!(
        r.warnings
            .iter()
            .any(|w| w.kind == lumenrail_bench::report::WarningKind::Vignetting && w.message.contains("vignetting"))
    );
    // The field screen sits at the intermediate image: relay A alone images the point perfectly there.
    let field = r.screens.iter().find(|s| s.part == "Field screen").unwrap();
    assert!(!field.after_last_part && field.rms_spot_um.unwrap() < 1e-9);
    assert!(close(field.best_focus_at_mm.unwrap(), 200.0, 1e-12));
}

#[test]
fn microscope_objective_magnifies_eight_times_and_the_eyepiece_sends_the_image_to_infinity() {
    let r = report("microscope-model");
    // Objective f = 16 mm with the object 18 mm before it: s' = 144 mm, m = −8.
    assert!(close(r.images[0].at_mm.unwrap(), 28.0 + 144.0, 1e-12));
    assert!(close(r.images[0].magnification.unwrap(), -8.0, 1e-12));
    // The intermediate image sits at the eyepiece's front focus (197 − 25 = 172 mm): final image at infinity.
    assert_eq!(r.images.last().unwrap().at_mm, None);
    assert!(!r.images.last().unwrap().erect);
    // For viewing with a relaxed eye: the 4 mm intermediate image in the eyepiece's focal plane leaves as
    // parallel light at tan θ = 4/25 (an ideal thin lens sends every ray from a point of its focal plane
    // out at tan u' = tan u − y/f, the same for all; Hecht, sec. 5.2); no f-number means anything here.
    let v = r.viewing.expect("an image at infinity is for viewing");
    assert_eq!(v.image_at_mm, None);
    assert!(close(v.angular_size_deg.unwrap(), (4.0f64 / 25.0).atan().to_degrees(), 1e-12));
    assert!(r.first_order.f_number.is_none());
    assert!(r.to_text().contains("at infinity (the light leaves parallel"), "{}", r.to_text());
}

#[test]
fn keplerian_telescope_is_afocal_with_the_published_figures() {
    let r = report("keplerian-telescope");
    let af = r.afocal.as_ref().unwrap();
    // M = −f_o/f_e; exit pupil D/|M|; eye relief = the eyepiece's image of the objective (Smith).
    assert!(close(af.angular_magnification, -200.0 / 25.0, 1e-12));
    assert!(close(af.exit_pupil_diameter_mm.unwrap(), 30.0 / 8.0, 1e-12));
    assert!(close(af.eye_relief_mm.unwrap(), gauss(25.0, -225.0), 1e-12));
    assert_eq!(r.first_order.efl_mm, None);
}

#[test]
fn galilean_expander_widens_the_beam_four_times_upright() {
    let r = report("galilean-expander");
    let af = r.afocal.as_ref().unwrap();
    // Beam expander: M = f₂/|f₁| = 4 in diameter; angles shrink by 4; upright (Galilean).
    assert!(close(af.angular_magnification, 0.25, 1e-12));
    assert!(close(af.exit_pupil_diameter_mm.unwrap(), 16.0, 1e-12));
    assert!(r.images.last().unwrap().erect);
}

#[test]
fn plano_convex_lens_both_ways_round() {
    let n = library::find("517642").unwrap().material.index_at(D_LINE_NM).unwrap();
    let curved = report("plano-convex-curved-first");
    let flat = report("plano-convex-flat-first");
    // EFL = R/(n − 1) both ways; BFL = f − t/n curved side first, f flat side first.
    let f = 51.7 / (n - 1.0);
    assert!(close(curved.first_order.efl_mm.unwrap(), f, 1e-12));
    assert!(close(flat.first_order.efl_mm.unwrap(), f, 1e-12));
    assert!(close(curved.first_order.bfl_mm.unwrap(), f - 5.0 / n, 1e-12));
    assert!(close(flat.first_order.bfl_mm.unwrap(), f, 1e-12));
    // Curved side to the collimated beam gives the smaller spherical aberration (common practice). The
    // thin-lens third-order ratio of the two orientations (Coddington q = ±1, p = −1; Hecht sec. 6.3, as
    // REFERENCES.md writes it) is about 3.9; the real 5 mm thick lens at f/5 departs from it through
    // thickness and fifth order, so only 25% agreement is asked.
    let lsa_c = curved.aberrations.marginal_lsa_mm.unwrap();
    let lsa_f = flat.aberrations.marginal_lsa_mm.unwrap();
    let common = (n + 2.0) / (n - 1.0) + (3.0 * n + 2.0) * (n - 1.0) + n.powi(3) / (n - 1.0);
    let ratio = (common + 4.0 * (n + 1.0)) / (common - 4.0 * (n + 1.0));
    assert!(lsa_c < 0.0 && lsa_f < 0.0, "a positive singlet is undercorrected");
    assert!(((lsa_f / lsa_c) / ratio - 1.0).abs() < 0.25, "{} vs {ratio}", lsa_f / lsa_c);
    assert!(curved.screens[0].best_rms_spot_um.unwrap() < flat.screens[0].best_rms_spot_um.unwrap() / 3.0);
}

/// Thick-lens paraxial focus at one wavelength for a distant object: back vertex + BFL, from the
/// lensmaker's equation and the back principal plane h' = −f(n−1)t/(nR₁) (Hecht).
fn thick_focus(r1: f64, r2: f64, t: f64, n: f64, at: f64) -> f64 {
    let phi = (n - 1.0) * (1.0 / r1 - 1.0 / r2 + (n - 1.0) * t / (n * r1 * r2));
    let f = 1.0 / phi;
    at + t + f - f * (n - 1.0) * t / (n * r1)
}

#[test]
fn singlet_colour_matches_the_lensmaker_at_f_and_c_and_the_achromat_removes_most_of_it() {
    let glass = library::find("517642").unwrap().material;
    let singlet = report("colour-singlet");
    let nf = glass.index_at(F_LINE_NM).unwrap();
    let nc = glass.index_at(C_LINE_NM).unwrap();
    let shift = thick_focus(103.4, -103.4, 5.0, nc, 50.0) - thick_focus(103.4, -103.4, 5.0, nf, 50.0);
    assert!(close(singlet.aberrations.chromatic_focal_shift_mm.unwrap(), shift, 1e-10));
    // To first order the shift is f/V (REFERENCES.md, derived): 100.8/64.2 = 1.57 mm; the thick lens
    // departs from the thin-lens rule by about 2%, so 3% is asked.
    assert!(close(shift, singlet.first_order.efl_mm.unwrap() / 64.2, 0.03));
    let achromat = report("colour-achromat");
    let a = achromat.aberrations.chromatic_focal_shift_mm.unwrap();
    assert!(a.abs() < shift / 10.0, "achromat {a} vs singlet {shift}");
    // Designed as a 100 mm thin achromat (φ₁/V₁ + φ₂/V₂ = 0, Hecht); thickness moves f by about 1%.
    assert!(close(achromat.first_order.efl_mm.unwrap(), 100.0, 0.02));
}

#[test]
fn autocollimation_returns_an_inverted_image_to_the_object_plane() {
    let r = report("autocollimation");
    // Object at the lens's focus: the light leaves collimated, the flat mirror returns it, and the lens
    // refocuses it in the object plane at m = −1 (the autocollimation method of measuring f).
    assert_eq!(r.images[0].at_mm, None);
    let last = r.images.last().unwrap();
    assert!(close(last.at_mm.unwrap(), 20.0, 1e-9));
    assert!(close(last.magnification.unwrap(), -1.0, 1e-12) && last.real);
    assert!(r.screens[0].rms_spot_um.unwrap() < 1e-9);
}

#[test]
fn camera_meniscus_focus_and_image_height_follow_the_lensmaker() {
    let n = library::find("517642").unwrap().material.index_at(D_LINE_NM).unwrap();
    let r = report("camera-meniscus");
    let image = r.images.last().unwrap();
    // Thick lensmaker (Hecht) for the focus; a distant point 10° off axis images at f tan θ (Gaussian
    // optics), inverted.
    assert!(close(image.at_mm.unwrap(), thick_focus(-80.0, -30.0, 4.0, n, 55.0), 1e-12));
    let f = r.first_order.efl_mm.unwrap();
    assert!(close(image.height_mm.unwrap(), -f * 10f64.to_radians().tan(), 1e-12));
    // The front iris is the stop and the entrance pupil (nothing images it in object space).
    let stop = r.stop.as_ref().unwrap();
    assert_eq!(stop.part, "Front iris");
    assert!(close(stop.entrance_pupil_at_mm.unwrap(), 40.0, 1e-12));
    // Off axis the bundle is astigmatic; both foci fall short of the flat paraxial image plane (the
    // inward-curving field of a positive singlet, Petzval).
    let field = r.field.as_ref().unwrap();
    assert!(field.tangential_focus_mm < 0.0 && field.sagittal_focus_mm < 0.0);
    assert!(field.astigmatism_mm.abs() > 0.1);
}
