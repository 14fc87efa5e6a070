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
