//! The bench document: rail, object, wavelengths and parts, exactly as the bench file (format 1) spells
//! them (DESIGN.md, "The bench file").

use lumenrail_optics::eye::{EyeError, EyeState, SchematicEye};
use serde::{Deserialize, Serialize};

/// The newest bench file format this program reads and writes.
pub const FORMAT: u32 = 1;

/// One bench: a rail, an object, the parts and the wavelengths.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Bench {
    /// File format version (1).
    pub format: u32,
    /// A title for people.
    pub title: String,
    /// Usable rail length from the datum, mm.
    pub rail_length_mm: f64,
    /// Wavelengths, nm.
    pub wavelengths_nm: Vec<f64>,
    /// Index into `wavelengths_nm` of the wavelength that spots and first-order figures use.
    pub primary_wavelength: usize,
    /// Relative weights of the wavelengths in the white-light figures, one per wavelength (a source's
    /// spectrum times the detector's response, say); empty (and left out of the file) for equal weights.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub wavelength_weights: Vec<f64>,
    /// Where the light comes from.
    pub object: ObjectSpec,
    /// The parts, in any order (the rail position decides).
    pub parts: Vec<Part>,
    /// A laser on the bench, whose Gaussian beam is propagated through the parts beside the rays (left
    /// out of the file when there is none; format-1 files without it read as before). Written plainly:
    /// `laser: (at_mm: …, wavelength_nm: …, …)`.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "plain_some_laser",
        serialize_with = "plain_laser"
    )]
    pub laser: Option<Laser>,
    /// What the user wants of the bench, each with its tolerance (left out of the file when there are
    /// none; format-1 files without it read as before).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub aims: Vec<Aim>,
    /// How precisely parts must sit: ± limits for the tolerance run, one entry per part that differs from
    /// common shop practice ([`PartTolerance`]); left out of the file when empty, and format-1 files
    /// without it read as before.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub tolerances: Vec<PartTolerance>,
}

/// Common shop practice for a part's position along the rail: ± 0.1 mm (a rule of thumb for ordinary
/// machining, not a standard).
pub const COMMON_POSITION_MM: f64 = 0.1;
/// Common shop practice for a part's decentre: ± 0.05 mm on each of x and y (a rule of thumb).
pub const COMMON_DECENTRE_MM: f64 = 0.05;
/// Common shop practice for a part's tilt: ± 0.1° about each of x and y (a rule of thumb).
pub const COMMON_TILT_DEG: f64 = 0.1;

fn common_position_mm() -> f64 {
    COMMON_POSITION_MM
}
fn common_decentre_mm() -> f64 {
    COMMON_DECENTRE_MM
}
fn common_tilt_deg() -> f64 {
    COMMON_TILT_DEG
}

/// The ± limits within which one lens or mirror must sit, for the tolerance run. A field left out takes
/// common shop practice ([`COMMON_POSITION_MM`], [`COMMON_DECENTRE_MM`], [`COMMON_TILT_DEG`], pivot at
/// the part's centre). Written `(part: "L1", position_mm: 0.2, decentre_mm: 0.05, tilt_deg: 0.1,
/// pivot: Centre)`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartTolerance {
    /// The part's name.
    pub part: String,
    /// ± limit of the position along the rail, mm.
    #[serde(default = "common_position_mm")]
    pub position_mm: f64,
    /// ± limit of the decentre across the axis, mm, on each of x and y.
    #[serde(default = "common_decentre_mm")]
    pub decentre_mm: f64,
    /// ± limit of the tilt, degrees, about each of x and y.
    #[serde(default = "common_tilt_deg")]
    pub tilt_deg: f64,
    /// The point the part tilts about.
    #[serde(default)]
    pub pivot: Pivot,
}

impl PartTolerance {
    /// Common shop practice for the named part.
    pub fn common(part: &str) -> PartTolerance {
        PartTolerance {
            part: part.to_string(),
            position_mm: COMMON_POSITION_MM,
            decentre_mm: COMMON_DECENTRE_MM,
            tilt_deg: COMMON_TILT_DEG,
            pivot: Pivot::Centre,
        }
    }
}

/// The point a part tilts about. A pivot off the part's centre moves the part as it tilts, by the lever
/// arm times the angle: a tilt about x swings a part on a carrier below the axis along the rail, and a
/// first-vertex pivot swings the part's centre across the axis. The tolerance run traces that motion
/// exactly; its paraxial image position counts only the part's own position error.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum Pivot {
    /// The part's centre on the axis: midway between its first and last vertex.
    #[default]
    Centre,
    /// The part's first vertex (the side the light meets first).
    FirstVertex,
    /// The carrier's mounting point: below the axis by the post's height, at the carrier's centre along
    /// the rail (the part's centre).
    Carrier {
        /// How far below the optical axis the carrier is fixed, mm.
        below_axis_mm: f64,
    },
}

impl Pivot {
    /// Plain words for the pivot.
    pub fn words(&self) -> String {
        match self {
            Pivot::Centre => "part centre".into(),
            Pivot::FirstVertex => "first vertex".into(),
            Pivot::Carrier { below_axis_mm } => format!("carrier mount {below_axis_mm} mm below the axis"),
        }
    }
}

/// A goal the user sets for the bench, with its tolerance: what the report checks and the arranger
/// searches for.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum Aim {
    /// A sharp image on the named screen: met when the on-axis RMS spot radius there is at most `rms_um`.
    SharpOn {
        /// The screen's name.
        screen: String,
        /// The largest acceptable on-axis RMS radius, µm.
        rms_um: f64,
    },
    /// The final image's lateral magnification (negative: inverted), within ± `tolerance`.
    Magnification {
        /// The magnification wanted.
        value: f64,
        /// How far from it is still met.
        tolerance: f64,
    },
    /// The distance from the object to the final image along the rail, mm, within ± `tolerance_mm`.
    ObjectToImage {
        /// The distance wanted, mm.
        distance_mm: f64,
        /// How far from it is still met, mm.
        tolerance_mm: f64,
    },
    /// The bench no longer than this, mm: from the object (a distant object: the first part) to the
    /// farthest part or real final image.
    TotalLength {
        /// The longest acceptable length, mm.
        at_most_mm: f64,
    },
    /// An afocal output (parallel light out for parallel light in) with this angular magnification,
    /// within ± `tolerance`.
    AngularMagnification {
        /// The angular magnification wanted (negative: inverted).
        value: f64,
        /// How far from it is still met.
        tolerance: f64,
    },
    /// An afocal output that widens a parallel beam this many times (1/|angular magnification|), within
    /// ± `tolerance`.
    BeamExpansion {
        /// The ratio of beam diameters, out over in.
        ratio: f64,
        /// How far from it is still met.
        tolerance: f64,
    },
    /// The final image's height (negative: below the axis), mm, within ± `tolerance_mm`.
    ImageHeight {
        /// The height wanted, mm.
        height_mm: f64,
        /// How far from it is still met, mm.
        tolerance_mm: f64,
    },
    /// The final image's working f-number between `min` and `max`.
    WorkingFNumber {
        /// The smallest acceptable.
        min: f64,
        /// The largest acceptable.
        max: f64,
    },
    /// Neighbouring carriers at least this far apart, mm (parts without a carrier count their glass).
    CarrierGap {
        /// The smallest acceptable gap, mm.
        at_least_mm: f64,
    },
}

/// The object.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum ObjectSpec {
    /// A point object on the rail, with an off-axis point `height_mm` above the axis.
    Point {
        /// Rail position, mm.
        at_mm: f64,
        /// Height of the off-axis point, mm.
        height_mm: f64,
    },
    /// An object at infinity (a distant scene, a collimated beam): field angle of the off-axis point above
    /// the axis, and the beam diameter at the first part.
    Distant {
        /// Field angle, degrees.
        field_deg: f64,
        /// Beam diameter, mm.
        beam_diameter_mm: f64,
    },
}

/// A laser source: where it sits, its wavelength and its beam as it leaves.
///
/// Diameters are 1/e² diameters (where the irradiance falls to 1/e² ≈ 13.5 % of the peak), as laser data
/// sheets give them; the beam figures use the radius, half of it. The beam is propagated as an embedded
/// Gaussian of quality M² (`lumenrail_optics::beam`). The rays the bench draws are still those of its
/// `object`: for a laser bench, `Distant(field_deg: …, beam_diameter_mm: <the laser's diameter>)` makes
/// them the geometric bundle of a collimated beam, which the 1/e² envelope follows away from its waists.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Laser {
    /// Rail position of the laser's exit, mm: the beam starts here travelling +z; every part lies after it.
    pub at_mm: f64,
    /// Wavelength in air, nm (one of the bench's wavelengths).
    pub wavelength_nm: f64,
    /// The waist's 1/e² diameter, mm.
    pub waist_diameter_mm: f64,
    /// Rail position of the waist, mm, as it would lie in free space (often at or just behind the exit).
    pub waist_at_mm: f64,
    /// Beam quality M² (1 for a perfect Gaussian; at least 1).
    pub m_squared: f64,
    /// Output power, mW, for the peak irradiances (left out: no irradiances).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "plain_some",
        serialize_with = "plain"
    )]
    pub power_mw: Option<f64>,
}

/// A part on the rail.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Part {
    /// A unique name.
    pub name: String,
    /// Rail position of the first surface vertex (the side the light meets first), mm.
    pub at_mm: f64,
    /// What the part is.
    pub kind: PartKind,
    /// Footprint of the part's carrier along the rail, mm, centred on the part (for collision checks).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "plain_some",
        serialize_with = "plain"
    )]
    pub carrier_mm: Option<f64>,
    /// The label of the drawer item the part was placed from, if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub from_drawer: Option<String>,
    /// A lens's surface coatings, one per surface in rail order (front first; a doublet has three), for
    /// the stray-focus map: `coatings: [Percent(0.5), Bare]`. Left out (and empty) when every surface is
    /// bare glass, which reflects its Fresnel share; format-1 files without it read as before.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub coatings: Vec<Coating>,
}

/// What a lens surface reflects at normal incidence, for the stray-focus map.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Coating {
    /// Bare glass: the Fresnel reflectance ((n₁ − n₂)/(n₁ + n₂))² of the indices either side.
    Bare,
    /// A coating that reflects this many percent (0 to 100) at the laser's (or the primary) wavelength.
    Percent(f64),
}

impl PartKind {
    /// How many refracting surfaces the part has (what its `coatings` list may hold): 2 for a singlet, 3
    /// for a doublet, 0 for the rest (a thin lens is ideal and has none).
    pub fn surface_count(&self) -> usize {
        match self {
            PartKind::Singlet { .. } => 2,
            PartKind::Doublet { .. } => 3,
            _ => 0,
        }
    }
}

/// A surface shape.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum SurfaceSpec {
    /// A plane.
    Flat,
    /// A sphere of this radius, mm, positive when its centre lies at +z of the vertex.
    Radius(f64),
    /// A conicoid of vertex radius `radius` (mm) and conic constant `conic`.
    Conic {
        /// Vertex radius, mm.
        radius: f64,
        /// Conic constant.
        conic: f64,
    },
}

/// A medium.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum MaterialSpec {
    /// A material of the built-in library, by name.
    Named(String),
    /// A constant index.
    Index(f64),
    /// A glass by nd and Vd (two-term Cauchy model).
    Abbe {
        /// Index at 587.5618 nm.
        nd: f64,
        /// Abbe number.
        vd: f64,
    },
    /// A Sellmeier formula n² = 1 + Σ bᵢλ²/(λ² − cᵢ), λ in µm, c in µm². A formula typed into a bench
    /// carries no range of its own, so it is accepted over 380–1000 nm, as an nd/Vd glass is.
    Sellmeier {
        /// The b coefficients.
        b: Vec<f64>,
        /// The c coefficients, µm².
        c: Vec<f64>,
    },
}

/// What a part is.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum PartKind {
    /// An ideal thin lens.
    ThinLens {
        /// Focal length, mm (negative: diverging).
        focal_mm: f64,
        /// Diameter, mm.
        diameter_mm: f64,
    },
    /// A singlet lens.
    Singlet {
        /// The surface the light meets first.
        front: SurfaceSpec,
        /// The second surface.
        back: SurfaceSpec,
        /// Centre thickness, mm.
        thickness_mm: f64,
        /// Diameter, mm.
        diameter_mm: f64,
        /// The glass.
        material: MaterialSpec,
    },
    /// A cemented doublet.
    Doublet {
        /// First surface.
        front: SurfaceSpec,
        /// Cemented surface.
        middle: SurfaceSpec,
        /// Last surface.
        back: SurfaceSpec,
        /// Centre thickness of the first element, mm.
        thickness1_mm: f64,
        /// Centre thickness of the second element, mm.
        thickness2_mm: f64,
        /// Glass of the first element.
        material1: MaterialSpec,
        /// Glass of the second element.
        material2: MaterialSpec,
        /// Diameter, mm.
        diameter_mm: f64,
    },
    /// A mirror: the light turns back.
    Mirror {
        /// The mirror's shape.
        surface: SurfaceSpec,
        /// Diameter, mm.
        diameter_mm: f64,
    },
    /// An iris (aperture).
    Iris {
        /// Opening diameter, mm.
        diameter_mm: f64,
    },
    /// An observation screen: it does not block light.
    Screen {
        /// Screen diameter, mm.
        diameter_mm: f64,
    },
    /// A schematic eye, its corneal vertex at the part's position: the light meets its cornea, pupil and
    /// lens, and its retina is its screen (`lumenrail_optics::eye`). It is the last part on the rail.
    Eye {
        /// Which published eye.
        model: EyeModel,
        /// The pupil's diameter, mm: a stop like any iris.
        pupil_mm: f64,
        /// The relaxed eye's refractive error: its far point's vergence at the cornea, dioptres (−3: a
        /// myope whose far point lies 333 mm in front; +2: a hyperope). The axial length follows from it.
        #[serde(default)]
        refraction_d: f64,
        /// How much the eye accommodates, dioptres (0: relaxed, focused on its far point).
        #[serde(default)]
        accommodation_d: f64,
        /// The most it can accommodate, dioptres (left out: the schematic eye's full range; less for an
        /// older eye).
        #[serde(
            default,
            skip_serializing_if = "Option::is_none",
            deserialize_with = "plain_some",
            serialize_with = "plain"
        )]
        amplitude_d: Option<f64>,
        /// The spectacle plane's distance in front of the cornea, mm, for the correcting lens the report
        /// gives (left out: 12 mm, common practice).
        #[serde(
            default,
            skip_serializing_if = "Option::is_none",
            deserialize_with = "plain_some",
            serialize_with = "plain"
        )]
        vertex_mm: Option<f64>,
    },
}

/// A published schematic eye, as a bench file names it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum EyeModel {
    /// Gullstrand's exact schematic eye (No. 1): six surfaces, relaxed and accommodated.
    Gullstrand,
    /// Emsley's reduced eye: one surface, n = 4/3, 60 D.
    Reduced,
}

impl EyeModel {
    /// The optics crate's eye.
    pub fn schematic(self) -> SchematicEye {
        match self {
            EyeModel::Gullstrand => SchematicEye::GullstrandExact,
            EyeModel::Reduced => SchematicEye::EmsleyReduced,
        }
    }
}

/// The spectacle plane's distance in front of the cornea when a bench gives none, mm (common practice).
pub const DEFAULT_VERTEX_MM: f64 = 12.0;

/// How wide an eye is drawn and counted on the rail, mm (an adult eye is about 24 mm across; from memory).
pub const EYE_DIAMETER_MM: f64 = 24.0;

impl SurfaceSpec {
    /// The same surface met from the other side: its radius negated.
    pub fn reversed(self) -> SurfaceSpec {
        match self {
            SurfaceSpec::Flat => SurfaceSpec::Flat,
            SurfaceSpec::Radius(r) => SurfaceSpec::Radius(-r),
            SurfaceSpec::Conic { radius, conic } => SurfaceSpec::Conic { radius: -radius, conic },
        }
    }
}

impl PartKind {
    /// The part turned round on the rail: surfaces in reverse order with their radii negated (a doublet's
    /// thicknesses and glasses swap). Thin lenses, mirrors, irises and screens are unchanged.
    pub fn turned(&self) -> PartKind {
        match self {
            PartKind::Singlet { front, back, thickness_mm, diameter_mm, material } => PartKind::Singlet {
                front: back.reversed(),
                back: front.reversed(),
                thickness_mm: *thickness_mm,
                diameter_mm: *diameter_mm,
                material: material.clone(),
            },
            PartKind::Doublet {
                front,
                middle,
                back,
                thickness1_mm,
                thickness2_mm,
                material1,
                material2,
                diameter_mm,
            } => PartKind::Doublet {
                front: back.reversed(),
                middle: middle.reversed(),
                back: front.reversed(),
                thickness1_mm: *thickness2_mm,
                thickness2_mm: *thickness1_mm,
                material1: material2.clone(),
                material2: material1.clone(),
                diameter_mm: *diameter_mm,
            },
            other => other.clone(),
        }
    }

    /// A short word for the kind, for messages.
    pub fn word(&self) -> &'static str {
        match self {
            PartKind::ThinLens { .. } => "thin lens",
            PartKind::Singlet { .. } => "singlet",
            PartKind::Doublet { .. } => "doublet",
            PartKind::Mirror { .. } => "mirror",
            PartKind::Iris { .. } => "iris",
            PartKind::Screen { .. } => "screen",
            PartKind::Eye { .. } => "eye",
        }
    }

    /// Centre thickness along the rail, mm (0 for thin parts).
    pub fn thickness_mm(&self) -> f64 {
        match self {
            PartKind::Singlet { thickness_mm, .. } => *thickness_mm,
            PartKind::Doublet { thickness1_mm, thickness2_mm, .. } => thickness1_mm + thickness2_mm,
            PartKind::Eye { .. } => self.eye_state().map_or_else(|_| self.eye_fallback_length_mm(), |e| e.retina_mm),
            _ => 0.0,
        }
    }

    /// Diameter, mm.
    pub fn diameter_mm(&self) -> f64 {
        match self {
            PartKind::ThinLens { diameter_mm, .. }
            | PartKind::Singlet { diameter_mm, .. }
            | PartKind::Doublet { diameter_mm, .. }
            | PartKind::Mirror { diameter_mm, .. }
            | PartKind::Iris { diameter_mm }
            | PartKind::Screen { diameter_mm } => *diameter_mm,
            PartKind::Eye { .. } => EYE_DIAMETER_MM,
        }
    }

    /// An eye part's state: its optics, retina and range (an error for another kind, or numbers the eye
    /// cannot take; validation says which).
    pub fn eye_state(&self) -> Result<EyeState, EyeError> {
        match self {
            PartKind::Eye { model, refraction_d, accommodation_d, amplitude_d, .. } => {
                let e = EyeState::new(model.schematic(), *refraction_d, *accommodation_d)?;
                match amplitude_d {
                    Some(a) if *a < e.amplitude_d => {
                        if *accommodation_d > *a + 1e-9 {
                            return Err(EyeError::Accommodation { asked: *accommodation_d, amplitude: *a });
                        }
                        Ok(EyeState { amplitude_d: *a, ..e })
                    }
                    _ => Ok(e),
                }
            }
            _ => Err(EyeError::NoRetina(f64::NAN)),
        }
    }

    /// An eye's length when its numbers are refused: the emmetropic relaxed eye's (so that drawing and
    /// layout checks still have a size).
    fn eye_fallback_length_mm(&self) -> f64 {
        match self {
            PartKind::Eye { model, .. } => EyeState::new(model.schematic(), 0.0, 0.0).map_or(0.0, |e| e.retina_mm),
            _ => 0.0,
        }
    }

    /// Whether the part is made of glass (or is a mirror): such parts cannot overlap one another.
    pub fn is_solid(&self) -> bool {
        !matches!(self, PartKind::Screen { .. } | PartKind::Iris { .. } | PartKind::ThinLens { .. })
    }
}

impl Part {
    /// Rail position of the part's last vertex, mm.
    pub fn end_mm(&self) -> f64 {
        self.at_mm + self.kind.thickness_mm()
    }

    /// The carrier's extent on the rail, centred on the part's middle, if the part has one.
    pub fn carrier_span_mm(&self) -> Option<(f64, f64)> {
        self.carrier_mm.map(|w| {
            let mid = 0.5 * (self.at_mm + self.end_mm());
            (mid - 0.5 * w, mid + 0.5 * w)
        })
    }
}

impl Bench {
    /// Each wavelength's share of the white light: the weights scaled to sum to 1, or equal shares when
    /// the bench gives no weights (or weights that do not fit its wavelengths).
    pub fn shares(&self) -> Vec<f64> {
        let n = self.wavelengths_nm.len();
        let total: f64 = self.wavelength_weights.iter().sum();
        if self.wavelength_weights.len() == n && total > 0.0 && total.is_finite() {
            self.wavelength_weights.iter().map(|w| w / total).collect()
        } else {
            vec![1.0 / n.max(1) as f64; n]
        }
    }

    /// The primary wavelength, nm, if the index is valid.
    pub fn primary_wavelength_nm(&self) -> Option<f64> {
        self.wavelengths_nm.get(self.primary_wavelength).copied()
    }

    /// The parts' indices in rail order (stable for equal positions).
    pub fn rail_order(&self) -> Vec<usize> {
        let mut order: Vec<usize> = (0..self.parts.len()).collect();
        order.sort_by(|&a, &b| self.parts[a].at_mm.total_cmp(&self.parts[b].at_mm));
        order
    }

    /// A part by name.
    pub fn part(&self, name: &str) -> Option<&Part> {
        self.parts.iter().find(|p| p.name == name)
    }
}

/// Reads an optional number written plainly (`carrier_mm: 25.0`, not `Some(25.0)`); absent means `None`.
fn plain_some<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    f64::deserialize(d).map(Some)
}

/// Reads an optional laser written plainly (`laser: (at_mm: …)`, not `Some(…)`); absent means `None`.
fn plain_some_laser<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<Laser>, D::Error> {
    Laser::deserialize(d).map(Some)
}

/// Writes an optional laser plainly (skipped when absent, by `skip_serializing_if`).
fn plain_laser<S: serde::Serializer>(v: &Option<Laser>, s: S) -> Result<S::Ok, S::Error> {
    match v {
        Some(l) => l.serialize(s),
        None => s.serialize_none(),
    }
}

/// Writes an optional number plainly (skipped when absent, by `skip_serializing_if`).
fn plain<S: serde::Serializer>(v: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match v {
        Some(x) => s.serialize_f64(*x),
        None => s.serialize_none(),
    }
}
