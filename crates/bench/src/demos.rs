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

/// Every demo, in the order a menu should list them.
pub const DEMOS: &[Demo] = &[
    Demo { name: "one-lens-screen", text: include_str!("../../../assets/demos/one-lens-screen.bench.ron") },
    Demo { name: "magnifier", text: include_str!("../../../assets/demos/magnifier.bench.ron") },
    Demo { name: "diverging-lens", text: include_str!("../../../assets/demos/diverging-lens.bench.ron") },
    Demo {
        name: "diverging-then-converging",
        text: include_str!("../../../assets/demos/diverging-then-converging.bench.ron"),
    },
    Demo { name: "unit-relay", text: include_str!("../../../assets/demos/unit-relay.bench.ron") },
    Demo { name: "microscope-model", text: include_str!("../../../assets/demos/microscope-model.bench.ron") },
    Demo { name: "keplerian-telescope", text: include_str!("../../../assets/demos/keplerian-telescope.bench.ron") },
    Demo { name: "galilean-expander", text: include_str!("../../../assets/demos/galilean-expander.bench.ron") },
    Demo {
        name: "plano-convex-curved-first",
        text: include_str!("../../../assets/demos/plano-convex-curved-first.bench.ron"),
    },
    Demo {
        name: "plano-convex-flat-first",
        text: include_str!("../../../assets/demos/plano-convex-flat-first.bench.ron"),
    },
    Demo { name: "colour-singlet", text: include_str!("../../../assets/demos/colour-singlet.bench.ron") },
    Demo { name: "colour-achromat", text: include_str!("../../../assets/demos/colour-achromat.bench.ron") },
    Demo { name: "autocollimation", text: include_str!("../../../assets/demos/autocollimation.bench.ron") },
];

/// The demo the workbench opens when no file is given.
pub const DEFAULT: &str = "one-lens-screen";

/// A demo by name.
pub fn find(name: &str) -> Option<Demo> {
    DEMOS.iter().copied().find(|d| d.name == name)
}
