//! The built-in demo benches (also in `assets/demos/`), each a scenario of our own with a one-line comment
//! on what it shows.

/// One demo bench.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Demo {
    /// Its name, as `lumenrail demos NAME` takes it.
    pub name: &'static str,
    /// The bench file's text.
    pub text: &'static str,
}

impl Demo {
    /// The one-line comment on what the demo shows (the file's first line, after `// What it shows:`).
    pub fn summary(&self) -> &'static str {
        let first = self.text.lines().next().unwrap_or("");
        first.trim_start_matches("//").trim().trim_start_matches("What it shows:").trim()
    }
}

/// A demo from its name: the file is `assets/demos/NAME.bench.ron`, so the two cannot disagree.
macro_rules! demo {
    ($name:literal) => {
        Demo { name: $name, text: include_str!(concat!("../../../assets/demos/", $name, ".bench.ron")) }
    };
}

/// Every demo, in the order a menu should list them.
pub const DEMOS: &[Demo] = &[
    demo!("one-lens-screen"),
    demo!("magnifier"),
    demo!("diverging-lens"),
    demo!("diverging-then-converging"),
    demo!("unit-relay"),
    demo!("microscope-model"),
    demo!("keplerian-telescope"),
    demo!("galilean-expander"),
    demo!("laser-expander"),
    demo!("laser-pinhole"),
    demo!("plano-convex-curved-first"),
    demo!("plano-convex-flat-first"),
    demo!("colour-singlet"),
    demo!("colour-achromat"),
    demo!("autocollimation"),
    demo!("bessel-lab"),
    demo!("camera-meniscus"),
    demo!("myopic-eye"),
    demo!("myopic-eye-corrected"),
    demo!("hyperopic-reading"),
];

/// The demo the workbench opens when no file is given.
pub const DEFAULT: &str = "one-lens-screen";

/// A demo by name.
pub fn find(name: &str) -> Option<Demo> {
    DEMOS.iter().copied().find(|d| d.name == name)
}

/// The stress bench of the benchmarks and the heavy-bench tests (not a demo): a 60-part relay train of our
/// own, like a periscope's — an entrance iris and an objective singlet, then 19 relay stages of a card at the
/// intermediate image, an ideal field lens that images each relay lens onto the next (so the 30° field
/// passes) and a biconvex relay singlet, and a last card — at 12 wavelengths across the visible, with a
/// distant object 30° off axis: 20 intermediate screens, 20 real singlets, colour at 12 lines.
pub fn heavy_train_text() -> String {
    use std::fmt::Write as _;
    let wavelengths: Vec<String> = (0..12).map(|k| format!("{:.1}", 420.0 + 25.0 * f64::from(k))).collect();
    let mut parts = String::from(
        "        (name: \"Entrance iris\", at_mm: 93.0, kind: Iris(diameter_mm: 10.0), carrier_mm: 4.0),\n        \
         (name: \"Objective\", at_mm: 100.0, kind: Singlet(front: Radius(103.4), back: Radius(-103.4), \
         thickness_mm: 5.0, diameter_mm: 40.0, material: Named(\"517642\")), carrier_mm: 10.0),\n",
    );
    for k in 0..19 {
        let focus = 204.0 + 400.0 * f64::from(k);
        let n = k + 1;
        let _ = writeln!(
            parts,
            "        (name: \"Card {n}\", at_mm: {focus:.1}, kind: Screen(diameter_mm: 400.0), carrier_mm: 6.0),\n        \
             (name: \"Field lens {n}\", at_mm: {fl:.1}, kind: ThinLens(focal_mm: {ff:.1}, diameter_mm: 400.0), carrier_mm: 8.0),\n        \
             (name: \"Relay {n}\", at_mm: {rl:.1}, kind: Singlet(front: Radius(103.4), back: Radius(-103.4), \
             thickness_mm: 5.0, diameter_mm: 40.0, material: Named(\"517642\")), carrier_mm: 10.0),",
            // The field lens images the lens before (the objective 112 mm back, else the last relay 210 mm
            // back) onto the next relay, 190 mm on: 1/f = 1/u + 1/v.
            ff = 1.0 / (1.0 / if k == 0 { 112.0 } else { 210.0 } + 1.0 / 190.0),
            fl = focus + 8.0,
            rl = focus + 198.0,
        );
    }
    parts
        .push_str("        (name: \"Last card\", at_mm: 7804.0, kind: Screen(diameter_mm: 400.0), carrier_mm: 6.0),\n");
    format!(
        "// A stress bench for the benchmarks: 60 parts, 12 wavelengths, 30° field.\n(\n    format: 1,\n    \
         title: \"Stress train: a 60-part relay\",\n    rail_length_mm: 8000.0,\n    \
         wavelengths_nm: [{}],\n    primary_wavelength: 6,\n    \
         object: Distant(field_deg: 30.0, beam_diameter_mm: 10.0),\n    parts: [\n{parts}    ],\n)\n",
        wavelengths.join(", ")
    )
}
