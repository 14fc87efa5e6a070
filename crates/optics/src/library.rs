//! The built-in material library: published dispersion formulas and a few generic glasses.
//!
//! Every entry names its published source and its valid wavelength range. No maker's catalogue data and no
//! brand glass names: the generic glasses are given only by nd and Vd and named by their six-digit glass
//! code (the first three digits are (nd − 1) × 1000, the last three Vd × 10).
//!
//! Water's formula gives the absolute index (relative to vacuum). Lumenrail takes every formula as
//! published and the bench's air as index 1, so water's index is used as published: this overstates the
//! index relative to real air by about 3.6e-4, well inside what a bench of lenses in air can resolve.

use crate::material::Material;

/// One entry of the built-in library.
#[derive(Debug, Clone)]
pub struct LibraryEntry {
    /// The name used in bench files, e.g. `fused-silica`.
    pub name: &'static str,
    /// A one-line description for people.
    pub description: &'static str,
    /// The published source of the formula, or the convention behind a generic glass.
    pub source: &'static str,
    /// The dispersion model.
    pub material: Material,
}

/// Sellmeier form with resonance wavelengths λᵢ in µm (Cᵢ = λᵢ²).
fn sellmeier_lambda(b: [f64; 3], lambda_um: [f64; 3], range_nm: (f64, f64)) -> Material {
    Material::Sellmeier { b: b.to_vec(), c_um2: lambda_um.iter().map(|l| l * l).collect(), range_nm }
}

/// A generic glass from its six-digit code.
fn coded_glass(code: &str) -> Material {
    let digits: u32 = code.parse().expect("built-in glass codes are six digits");
    Material::Abbe { nd: 1.0 + f64::from(digits / 1000) / 1000.0, vd: f64::from(digits % 1000) / 10.0 }
}

/// Every built-in material, in the order a menu should show them.
pub fn entries() -> Vec<LibraryEntry> {
    vec![
        LibraryEntry {
            name: "air",
            description: "air around the bench, index 1 by definition",
            source: "DESIGN.md convention: indices are relative to the bench's air",
            material: Material::AIR,
        },
        LibraryEntry {
            name: "fused-silica",
            description: "fused silica, 20 °C, 210–3710 nm",
            source: "I. H. Malitson, J. Opt. Soc. Am. 55, 1205–1208 (1965)",
            material: sellmeier_lambda(
                [0.6961663, 0.4079426, 0.8974794],
                [0.0684043, 0.1162414, 9.896161],
                (210.0, 3710.0),
            ),
        },
        LibraryEntry {
            name: "calcium-fluoride",
            description: "calcium fluoride crystal, 24 °C, 230–9700 nm",
            source: "I. H. Malitson, Appl. Opt. 2, 1103–1107 (1963)",
            material: sellmeier_lambda(
                [0.5675888, 0.4710914, 3.8484723],
                [0.050263605, 0.1003909, 34.649040],
                (230.0, 9700.0),
            ),
        },
        LibraryEntry {
            name: "sapphire-o",
            description: "synthetic sapphire, ordinary ray, 20 °C, 200–5000 nm",
            source: "I. H. Malitson & M. J. Dodge, J. Opt. Soc. Am. 62, 1405 (1972); M. J. Dodge, Handbook of Laser Science and Technology IV, CRC (1986)",
            material: sellmeier_lambda(
                [1.4313493, 0.65054713, 5.3414021],
                [0.0726631, 0.1193242, 18.028251],
                (200.0, 5000.0),
            ),
        },
        LibraryEntry {
            name: "water",
            description: "distilled water, 20 °C, 182–1129 nm (absolute index, used as published)",
            source: "M. Daimon & A. Masumura, Appl. Opt. 46, 3811–3820 (2007)",
            material: Material::Sellmeier {
                b: vec![5.684027565e-1, 1.726177391e-1, 2.086189578e-2, 1.130748688e-1],
                c_um2: vec![5.101829712e-3, 1.821153936e-2, 2.620722293e-2, 1.069792721e1],
                range_nm: (182.0, 1129.0),
            },
        },
        LibraryEntry {
            name: "pmma",
            description: "PMMA (acrylic), 20 °C, 436.8–1052 nm",
            source: "N. Sultanova, S. Kasarova, I. Nikolov, Acta Phys. Pol. A 116, 585–587 (2009); one-term Sellmeier fit of their data by M. Polyanskiy",
            material: Material::Sellmeier { b: vec![1.1819], c_um2: vec![0.011313], range_nm: (436.8, 1052.0) },
        },
        LibraryEntry {
            name: "polycarbonate",
            description: "polycarbonate, 20 °C, 436.8–1052 nm",
            source: "N. Sultanova, S. Kasarova, I. Nikolov, Acta Phys. Pol. A 116, 585–587 (2009); one-term Sellmeier fit of their data by M. Polyanskiy",
            material: Material::Sellmeier { b: vec![1.4182], c_um2: vec![0.021304], range_nm: (436.8, 1052.0) },
        },
        LibraryEntry {
            name: "517642",
            description: "generic borosilicate crown, nd 1.517, Vd 64.2",
            source: "six-digit glass code; nd/Vd two-term Cauchy model (DESIGN.md)",
            material: coded_glass("517642"),
        },
        LibraryEntry {
            name: "589613",
            description: "generic dense crown, nd 1.589, Vd 61.3",
            source: "six-digit glass code; nd/Vd two-term Cauchy model (DESIGN.md)",
            material: coded_glass("589613"),
        },
        LibraryEntry {
            name: "620364",
            description: "generic flint, nd 1.620, Vd 36.4",
            source: "six-digit glass code; nd/Vd two-term Cauchy model (DESIGN.md)",
            material: coded_glass("620364"),
        },
        LibraryEntry {
            name: "670472",
            description: "generic barium flint, nd 1.670, Vd 47.2",
            source: "six-digit glass code; nd/Vd two-term Cauchy model (DESIGN.md)",
            material: coded_glass("670472"),
        },
        LibraryEntry {
            name: "785258",
            description: "generic dense flint, nd 1.785, Vd 25.8",
            source: "six-digit glass code; nd/Vd two-term Cauchy model (DESIGN.md)",
            material: coded_glass("785258"),
        },
    ]
}

/// Looks a material up by its library name (exact, case-sensitive).
pub fn find(name: &str) -> Option<LibraryEntry> {
    entries().into_iter().find(|e| e.name == name)
}

/// The library names nearest to a misspelt `name`, best first (at most three), for "did you mean" hints.
pub fn nearest_names(name: &str) -> Vec<&'static str> {
    let lower = name.to_lowercase();
    let mut scored: Vec<(usize, &'static str)> =
        entries().iter().map(|e| (edit_distance(&lower, e.name), e.name)).collect();
    scored.sort();
    let limit = (lower.chars().count() / 2).max(3);
    scored.into_iter().filter(|(d, _)| *d <= limit).take(3).map(|(_, n)| n).collect()
}

/// Levenshtein distance between two strings, by characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut prev = row[0];
        row[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let cur = row[j + 1];
            row[j + 1] = (prev + usize::from(ca != *cb)).min(row[j] + 1).min(cur + 1);
            prev = cur;
        }
    }
    row[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::{C_LINE_NM, D_LINE_NM, F_LINE_NM};

    const G_NM: f64 = 435.8343;
    const E_NM: f64 = 546.0740;

    fn n(name: &str, wavelength_nm: f64) -> f64 {
        find(name).unwrap().material.index_at(wavelength_nm).unwrap()
    }

    /// Formula values of REFERENCES.md section 3 (evaluated at 40 digits, quoted to 9 significant digits),
    /// so the tolerance is half a unit in the ninth digit.
    #[test]
    fn formulas_match_their_published_coefficients() {
        let table: [(&str, [f64; 5]); 6] = [
            ("fused-silica", [1.46669282, 1.46312648, 1.46007813, 1.45846369, 1.45636662]),
            ("calcium-fluoride", [1.43948514, 1.43702505, 1.43493995, 1.43384928, 1.43245802]),
            ("sapphire-o", [1.78112636, 1.77550751, 1.77070936, 1.76817209, 1.76488399]),
            ("water", [1.34058560, 1.33749186, 1.33483039, 1.33340334, 1.33151260]),
            ("pmma", [f64::NAN, 1.49710479, 1.49281852, 1.49061817, 1.48787847]),
            ("polycarbonate", [f64::NAN, 1.59959789, 1.58975332, 1.58476265, 1.57860728]),
        ];
        for (name, values) in table {
            for (wl, expected) in [G_NM, F_LINE_NM, E_NM, D_LINE_NM, C_LINE_NM].iter().zip(values) {
                if expected.is_nan() {
                    // 435.8 nm lies below the polymers' published range (436.8 nm): it must be refused.
                    assert!(find(name).unwrap().material.index_at(*wl).is_err(), "{name} at {wl}");
                    continue;
                }
                let got = n(name, *wl);
                assert!((got - expected).abs() < 6e-9, "{name} at {wl} nm: {got} vs {expected}");
            }
        }
    }

    /// Independent published values (REFERENCES.md, "Independent spot values"): fused silica nd 1.45846
    /// and water nd 1.3334, Vd 55.76 (refractiveindex.info); PMMA and PC measured by Sultanova et al. to
    /// ±0.001.
    #[test]
    fn formulas_agree_with_published_measurements() {
        assert!((n("fused-silica", D_LINE_NM) - 1.45846).abs() < 5e-6);
        assert!((n("water", D_LINE_NM) - 1.3334).abs() < 5e-5);
        let vd = find("water").unwrap().material.abbe_number().unwrap();
        assert!((vd - 55.76).abs() < 5e-3);
        assert!((n("pmma", 486.1) - 1.497).abs() < 1e-3);
        assert!((n("pmma", 587.6) - 1.491).abs() < 1e-3);
        assert!((n("polycarbonate", 486.1) - 1.599).abs() < 1e-3);
        assert!((n("polycarbonate", 587.6) - 1.585).abs() < 1e-3);
    }

    #[test]
    fn glass_codes_decode_to_nd_and_vd() {
        let m = find("620364").unwrap().material;
        assert!((m.index_at(D_LINE_NM).unwrap() - 1.620).abs() < 1e-12);
        assert!((m.abbe_number().unwrap() - 36.4).abs() < 1e-9);
    }

    #[test]
    fn every_entry_is_valid_across_the_visible_lines() {
        for e in entries() {
            e.material.validate().unwrap();
            for wl in [F_LINE_NM, D_LINE_NM, C_LINE_NM] {
                assert!(e.material.index_at(wl).unwrap() >= 1.0, "{}", e.name);
            }
        }
    }

    #[test]
    fn misspelt_names_get_suggestions() {
        assert_eq!(nearest_names("fused-silca")[0], "fused-silica");
        assert_eq!(nearest_names("Sapphire")[0], "sapphire-o");
        assert_eq!(edit_distance("kitten", "sitting"), 3);
    }
}
