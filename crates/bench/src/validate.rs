//! Validation of a bench: every finding names the part and the field and says what is wrong in plain
//! words. Errors stop a bench from being traced; warnings travel with the report.

use crate::compile;
use crate::model::{Bench, Laser, MaterialSpec, ObjectSpec, Part, PartKind, SurfaceSpec};

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Severity {
    /// The bench cannot be built or traced as written.
    Error,
    /// The bench can be traced, but something needs a look.
    Warning,
}

/// One thing validation found.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// Error or warning.
    pub severity: Severity,
    /// Index of the part concerned, in `bench.parts` (`None`: the bench as a whole); for a drawer, the
    /// item's index in `drawer.items`.
    pub part: Option<usize>,
    /// The field concerned, as spelled in the file.
    pub field: Option<&'static str>,
    /// What is wrong, in plain words (naming the part).
    pub message: String,
}

/// Most parts a bench may hold.
pub const MAX_PARTS: usize = 500;
/// The lengths a bench's diameters, thicknesses, focal lengths and radii may have, mm: a micrometre to a
/// kilometre (numbers outside it are typing slips, and they break the arithmetic: a focal length of 1e-323
/// mm overflows every power).
pub const LENGTH_RANGE_MM: std::ops::RangeInclusive<f64> = 1e-3..=1e6;

/// The nearest to the axis an off-axis object point may be, mm (a picometre, far below anything a bench
/// resolves): nearer, the paraxial chief ray's heights sink towards subnormal numbers and the field
/// figures' ratios overflow.
pub const MIN_OFF_AXIS_MM: f64 = 1e-9;

/// The smallest non-zero field angle of a distant object, degrees (a billionth), for the same reason.
pub const MIN_FIELD_DEG: f64 = 1e-9;

/// The longest rail a bench may have, mm (100 m).
pub const MAX_RAIL_MM: f64 = 100_000.0;

/// The wavelengths a bench may list, nm: deep ultraviolet to far infrared (each material still checks
/// its own range).
pub const WAVELENGTH_RANGE_NM: std::ops::RangeInclusive<f64> = 100.0..=100_000.0;

/// Most wavelengths a bench may list.
pub const MAX_WAVELENGTHS: usize = 32;

struct Checker<'a> {
    /// Each part's kind word and name, by index, for messages.
    names: Vec<(&'static str, &'a str)>,
    /// The wavelengths at which every material must have an index, nm.
    wavelengths_nm: &'a [f64],
    findings: Vec<Finding>,
}

impl Checker<'_> {
    fn push(&mut self, severity: Severity, part: Option<usize>, field: Option<&'static str>, message: String) {
        self.findings.push(Finding { severity, part, field, message });
    }

    fn error(&mut self, part: Option<usize>, field: &'static str, message: String) {
        self.push(Severity::Error, part, Some(field), message);
    }

    fn who(&self, i: usize) -> String {
        let (word, name) = self.names[i];
        format!("{word} \"{name}\"")
    }

    /// A length that must be finite and positive, within [`LENGTH_RANGE_MM`].
    fn positive(&mut self, part: Option<usize>, field: &'static str, what: &str, v: f64) -> bool {
        let whose = part.map_or(String::new(), |i| format!("{}: ", self.who(i)));
        if !(v.is_finite() && v > 0.0) {
            self.error(part, field, format!("{whose}{what} must be a positive number of mm, not {v}"));
            return false;
        }
        if !LENGTH_RANGE_MM.contains(&v) {
            self.error(
                part,
                field,
                format!(
                    "{whose}{what} of {v:e} mm is outside the {} to {} mm a bench's lengths may be",
                    LENGTH_RANGE_MM.start(),
                    LENGTH_RANGE_MM.end()
                ),
            );
            return false;
        }
        true
    }

    fn surface(&mut self, i: usize, field: &'static str, s: &SurfaceSpec, semi_mm: f64) -> bool {
        let who = self.who(i);
        let (radius, conic) = match *s {
            SurfaceSpec::Flat => return true,
            SurfaceSpec::Radius(r) => (r, 0.0),
            SurfaceSpec::Conic { radius, conic } => (radius, conic),
        };
        if !radius.is_finite() || radius == 0.0 || !LENGTH_RANGE_MM.contains(&radius.abs()) {
            let hint = if radius == 0.0 { " (a flat surface is spelled Flat)" } else { "" };
            self.error(Some(i), field, format!("{who}: radius {radius} mm is not a usable radius{hint}"));
            return false;
        }
        if !conic.is_finite() {
            self.error(Some(i), field, format!("{who}: conic constant {conic} must be a finite number"));
            return false;
        }
        let shape = compile::shape(s);
        if semi_mm.is_finite() && shape.sag_mm(semi_mm).is_none() {
            let msg = if conic == 0.0 {
                format!(
                    "{who}: a sphere of radius {} mm cannot span the {:.4} mm diameter (the radius is smaller than the semi-diameter)",
                    radius.abs(),
                    2.0 * semi_mm
                )
            } else {
                format!("{who}: this conic surface does not reach the lens's edge at {semi_mm} mm from the axis")
            };
            self.error(Some(i), field, msg);
            return false;
        }
        true
    }

    fn material(&mut self, i: usize, field: &'static str, m: &MaterialSpec) {
        let who = self.who(i);
        match compile::material(m) {
            Err(unknown) => {
                let hint = if unknown.suggestions.is_empty() {
                    String::from(" (run `lumenrail materials` for the list)")
                } else {
                    format!(
                        "; did you mean {}?",
                        unknown.suggestions.iter().map(|s| format!("\"{s}\"")).collect::<Vec<_>>().join(" or ")
                    )
                };
                self.error(Some(i), field, format!("{who}: unknown material \"{}\"{hint}", unknown.name));
            }
            Ok(material) => {
                if let Err(e) = material.validate() {
                    self.error(Some(i), field, format!("{who}: {e}"));
                    return;
                }
                for &wl in self.wavelengths_nm {
                    if wl.is_finite()
                        && wl > 0.0
                        && let Err(e) = material.index_at(wl)
                    {
                        self.error(Some(i), field, format!("{who}: {e}"));
                        return;
                    }
                }
            }
        }
    }

    /// The numbers of part `i`'s own kind: diameter, focal length, radii, thicknesses, edge thickness and
    /// materials (not its place on the rail).
    fn kind(&mut self, i: usize, kind: &PartKind) {
        let who = self.who(i);
        let d_ok = self.positive(Some(i), "diameter_mm", "the diameter", kind.diameter_mm());
        let semi = if d_ok { 0.5 * kind.diameter_mm() } else { f64::NAN };
        match kind {
            PartKind::ThinLens { focal_mm, .. } => {
                if !focal_mm.is_finite() || !LENGTH_RANGE_MM.contains(&focal_mm.abs()) {
                    self.error(
                        Some(i),
                        "focal_mm",
                        format!("{who}: focal length {focal_mm} mm must be a finite, non-zero number"),
                    );
                }
            }
            PartKind::Singlet { front, back, thickness_mm, material, .. } => {
                let t_ok = self.positive(Some(i), "thickness_mm", "the centre thickness", *thickness_mm);
                let f_ok = self.surface(i, "front", front, semi);
                let b_ok = self.surface(i, "back", back, semi);
                self.material(i, "material", material);
                if t_ok && f_ok && b_ok && d_ok {
                    edge_check(self, i, &[*front, *back], &[*thickness_mm], semi);
                }
            }
            PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, material1, material2, .. } => {
                let t1 = self.positive(Some(i), "thickness1_mm", "the first centre thickness", *thickness1_mm);
                let t2 = self.positive(Some(i), "thickness2_mm", "the second centre thickness", *thickness2_mm);
                let s_ok = self.surface(i, "front", front, semi)
                    & self.surface(i, "middle", middle, semi)
                    & self.surface(i, "back", back, semi);
                self.material(i, "material1", material1);
                self.material(i, "material2", material2);
                if t1 && t2 && s_ok && d_ok {
                    edge_check(self, i, &[*front, *middle, *back], &[*thickness1_mm, *thickness2_mm], semi);
                }
            }
            PartKind::Mirror { surface, .. } => {
                self.surface(i, "surface", surface, semi);
            }
            PartKind::Iris { .. } | PartKind::Screen { .. } => {}
            PartKind::Eye { pupil_mm, refraction_d, accommodation_d, amplitude_d, vertex_mm, .. } => {
                self.eye(i, kind, *pupil_mm, *refraction_d, *accommodation_d, *amplitude_d, *vertex_mm)
            }
        }
    }

    /// An eye's numbers: pupil, refractive error, accommodation and its range, the spectacle plane.
    #[allow(clippy::too_many_arguments)]
    fn eye(
        &mut self,
        i: usize,
        kind: &PartKind,
        pupil_mm: f64,
        refraction_d: f64,
        accommodation_d: f64,
        amplitude_d: Option<f64>,
        vertex_mm: Option<f64>,
    ) {
        let who = self.who(i);
        if !(pupil_mm.is_finite() && EYE_PUPIL_RANGE_MM.contains(&pupil_mm)) {
            self.error(
                Some(i),
                "pupil_mm",
                format!(
                    "{who}: a pupil of {pupil_mm} mm is outside the {} to {} mm an eye's pupil spans",
                    EYE_PUPIL_RANGE_MM.start(),
                    EYE_PUPIL_RANGE_MM.end()
                ),
            );
        }
        if !(refraction_d.is_finite() && refraction_d.abs() <= MAX_REFRACTION_D) {
            self.error(
                Some(i),
                "refraction_d",
                format!("{who}: a refractive error of {refraction_d} D is outside ±{MAX_REFRACTION_D} D"),
            );
            return;
        }
        if let Some(a) = amplitude_d
            && !(a.is_finite() && a >= 0.0)
        {
            self.error(Some(i), "amplitude_d", format!("{who}: the accommodation range {a} D must be 0 or more"));
            return;
        }
        if let Some(d) = vertex_mm
            && !(d.is_finite() && (0.0..=MAX_VERTEX_MM).contains(&d))
        {
            self.error(
                Some(i),
                "vertex_mm",
                format!("{who}: a spectacle plane {d} mm in front of the eye is outside 0 to {MAX_VERTEX_MM} mm"),
            );
        }
        if !accommodation_d.is_finite() {
            self.error(
                Some(i),
                "accommodation_d",
                format!("{who}: accommodation {accommodation_d} D must be a number"),
            );
            return;
        }
        match kind.eye_state() {
            Ok(e) => {
                if let Some(a) = amplitude_d
                    && a > e.amplitude_d + 1e-9
                {
                    self.error(
                        Some(i),
                        "amplitude_d",
                        format!(
                            "{who}: an accommodation range of {a} D is more than this eye's {:.2} D",
                            e.amplitude_d
                        ),
                    );
                }
            }
            Err(lumenrail_optics::eye::EyeError::NoRetina(_)) => self.error(
                Some(i),
                "refraction_d",
                format!("{who}: a refractive error of {refraction_d} D leaves no room for a retina"),
            ),
            Err(lumenrail_optics::eye::EyeError::Accommodation { asked, amplitude }) => self.error(
                Some(i),
                "accommodation_d",
                format!("{who}: accommodation of {asked} D is outside this eye's range, 0 to {amplitude:.2} D"),
            ),
        }
    }

    /// The glass extent of a part along the rail (vertex span widened by the edge sags), if it is solid.
    fn glass_span(&self, p: &Part) -> Option<(f64, f64)> {
        let semi = 0.5 * p.kind.diameter_mm();
        let sag = |s: &SurfaceSpec| compile::shape(s).sag_mm(semi).unwrap_or(0.0);
        let (front, back): (f64, f64) = match &p.kind {
            PartKind::Singlet { front, back, .. } => (sag(front), sag(back)),
            PartKind::Doublet { front, back, .. } => (sag(front), sag(back)),
            PartKind::Mirror { surface, .. } => (sag(surface), sag(surface)),
            PartKind::Eye { .. } => (0.0, 0.0),
            _ => return None,
        };
        Some((p.at_mm + front.min(0.0), p.end_mm() + back.max(0.0)))
    }
}

/// The narrowest and widest eye pupils accepted, mm (a human pupil spans about 2 to 8 mm; from memory).
pub const EYE_PUPIL_RANGE_MM: std::ops::RangeInclusive<f64> = 1.0..=9.0;

/// The largest refractive error accepted, dioptres either way.
pub const MAX_REFRACTION_D: f64 = 20.0;

/// The farthest spectacle plane accepted in front of the cornea, mm.
pub const MAX_VERTEX_MM: f64 = 30.0;

/// An eye looks along the rail: it is the one eye and the last part (its retina ends the light path).
fn eyes(c: &mut Checker, bench: &Bench) {
    let eyes: Vec<usize> =
        (0..bench.parts.len()).filter(|&i| matches!(bench.parts[i].kind, PartKind::Eye { .. })).collect();
    if let Some(&second) = eyes.get(1) {
        c.error(Some(second), "kind", format!("{} is a second eye; a bench holds one", c.who(second)));
        return;
    }
    let Some(&e) = eyes.first() else { return };
    let at = bench.parts[e].at_mm;
    if let Some(j) = (0..bench.parts.len()).find(|&j| j != e && bench.parts[j].at_mm >= at) {
        let msg = format!(
            "{} at {} mm stands at or behind {}'s cornea ({} mm); the eye must be the last part on the rail",
            c.who(j),
            bench.parts[j].at_mm,
            c.who(e),
            at
        );
        c.error(Some(j), "at_mm", msg);
    }
}

/// Validates `bench`; returns every finding, errors first.
pub fn validate(bench: &Bench) -> Vec<Finding> {
    let mut c = Checker {
        names: bench.parts.iter().map(|p| (p.kind.word(), p.name.as_str())).collect(),
        wavelengths_nm: &bench.wavelengths_nm,
        findings: Vec::new(),
    };
    if bench.format != crate::model::FORMAT {
        c.error(
            None,
            "format",
            format!("format {} is not one this program reads (it reads format {})", bench.format, crate::model::FORMAT),
        );
    }
    let rail_ok = if bench.rail_length_mm.is_finite() && bench.rail_length_mm > MAX_RAIL_MM {
        c.error(
            None,
            "rail_length_mm",
            format!(
                "a rail of {:e} mm is longer than the {MAX_RAIL_MM} mm (100 m) a bench may be",
                bench.rail_length_mm
            ),
        );
        false
    } else {
        c.positive(None, "rail_length_mm", "the rail length", bench.rail_length_mm)
    };
    if bench.wavelengths_nm.is_empty() {
        c.error(None, "wavelengths_nm", "at least one wavelength is needed".into());
    }
    if bench.wavelengths_nm.len() > MAX_WAVELENGTHS {
        c.error(
            None,
            "wavelengths_nm",
            format!("{} wavelengths is more than the {MAX_WAVELENGTHS} a bench may list", bench.wavelengths_nm.len()),
        );
    }
    for &wl in &bench.wavelengths_nm {
        if !(wl.is_finite() && wl > 0.0) {
            c.error(None, "wavelengths_nm", format!("wavelength {wl} nm must be a positive number"));
        } else if !WAVELENGTH_RANGE_NM.contains(&wl) {
            c.error(
                None,
                "wavelengths_nm",
                format!(
                    "wavelength {wl} nm is outside the {} to {} nm that optics on a rail work in",
                    WAVELENGTH_RANGE_NM.start(),
                    WAVELENGTH_RANGE_NM.end()
                ),
            );
        }
    }
    if bench.primary_wavelength >= bench.wavelengths_nm.len() && !bench.wavelengths_nm.is_empty() {
        c.error(
            None,
            "primary_wavelength",
            format!(
                "primary_wavelength {} does not name one of the {} wavelengths (it counts from 0)",
                bench.primary_wavelength,
                bench.wavelengths_nm.len()
            ),
        );
    }
    let weights = &bench.wavelength_weights;
    if !weights.is_empty() {
        if weights.len() != bench.wavelengths_nm.len() {
            c.error(
                None,
                "wavelength_weights",
                format!(
                    "{} weights for {} wavelengths: give one weight per wavelength, or none for equal weights",
                    weights.len(),
                    bench.wavelengths_nm.len()
                ),
            );
        }
        if let Some(w) = weights.iter().find(|w| !(w.is_finite() && **w >= 0.0)) {
            c.error(None, "wavelength_weights", format!("the weight {w} must be a number of at least 0"));
        } else if weights.iter().all(|w| *w == 0.0) {
            c.error(None, "wavelength_weights", "the weights are all 0; at least one must be above 0".into());
        }
    }
    match bench.object {
        ObjectSpec::Point { at_mm, height_mm } => {
            if !at_mm.is_finite() || rail_ok && !(0.0..=bench.rail_length_mm).contains(&at_mm) {
                c.error(
                    None,
                    "object",
                    format!("the object at {at_mm} mm must lie on the rail (0 to {} mm)", bench.rail_length_mm),
                );
            }
            if !height_mm.is_finite() {
                c.error(None, "object", format!("the object height {height_mm} mm must be a finite number"));
            } else if height_mm.abs() > *LENGTH_RANGE_MM.end() {
                c.error(
                    None,
                    "object",
                    format!("the object height {height_mm} mm is more than a kilometre from the axis"),
                );
            } else if height_mm != 0.0 && height_mm.abs() < MIN_OFF_AXIS_MM {
                c.error(
                    None,
                    "object",
                    format!(
                        "the object height {height_mm} mm is below a picometre: give 0 for a point on the axis, or at least {MIN_OFF_AXIS_MM} mm"
                    ),
                );
            }
        }
        ObjectSpec::Distant { field_deg, beam_diameter_mm } => {
            if !(field_deg.is_finite() && field_deg.abs() < 90.0) {
                c.error(None, "object", format!("the field angle {field_deg}° must lie between −90° and 90°"));
            } else if field_deg != 0.0 && field_deg.abs() < MIN_FIELD_DEG {
                c.error(
                    None,
                    "object",
                    format!(
                        "the field angle {field_deg}° is below a billionth of a degree: give 0 for a distant point on the axis, or at least {MIN_FIELD_DEG}°"
                    ),
                );
            }
            c.positive(None, "object", "the beam diameter", beam_diameter_mm);
        }
    }
    if let Some(l) = &bench.laser {
        laser(&mut c, bench, l, rail_ok);
    }
    if bench.parts.len() > MAX_PARTS {
        c.error(None, "parts", format!("{} parts is more than the {MAX_PARTS} a bench may hold", bench.parts.len()));
        return c.findings;
    }
    // Names.
    for (i, p) in bench.parts.iter().enumerate() {
        if p.name.trim().is_empty() {
            c.error(Some(i), "name", format!("the {} at {} mm needs a name", p.kind.word(), p.at_mm));
        } else if p.name.chars().any(char::is_control) || p.name.contains('\u{feff}') {
            c.error(
                Some(i),
                "name",
                format!(
                    "the name of the {} at {} mm holds a line break or another control character; a name is one line",
                    p.kind.word(),
                    p.at_mm
                ),
            );
        } else if let Some(first) = bench.parts[..i].iter().position(|q| q.name == p.name) {
            c.error(
                Some(i),
                "name",
                format!(
                    "two parts are named \"{}\" (part {} and part {}); names must be unique",
                    p.name,
                    first + 1,
                    i + 1
                ),
            );
        }
    }
    // Each part's own numbers.
    for (i, p) in bench.parts.iter().enumerate() {
        let who = c.who(i);
        if !p.at_mm.is_finite() {
            c.error(Some(i), "at_mm", format!("{who}: position {} mm must be a finite number", p.at_mm));
            continue;
        }
        c.kind(i, &p.kind);
        coatings(&mut c, i, p);
        if let Some(w) = p.carrier_mm
            && !(w.is_finite() && w >= 0.0)
        {
            c.error(Some(i), "carrier_mm", format!("{who}: carrier width {w} mm must be a non-negative number"));
        }
        if rail_ok && p.kind.thickness_mm().is_finite() && (p.at_mm < 0.0 || p.end_mm() > bench.rail_length_mm) {
            c.error(
                Some(i),
                "at_mm",
                format!(
                    "{who} at {} mm lies beyond the rail, which runs from 0 to {} mm",
                    p.at_mm, bench.rail_length_mm
                ),
            );
        }
    }
    eyes(&mut c, bench);
    // An object on a lens's, mirror's or iris's surface sends its light from the surface itself: the
    // pupils, seen from there, have no size. A gap under the least length is that too (fuzz findings: a
    // thin lens and an iris 1e-319 mm away). A card may hold the object (a lit crosshair on the card that
    // takes the returned image).
    if let ObjectSpec::Point { at_mm, .. } = bench.object {
        for (i, p) in bench.parts.iter().enumerate() {
            if matches!(p.kind, PartKind::Screen { .. }) {
                continue;
            }
            if let Some(z) = [p.at_mm, p.end_mm()].into_iter().find(|z| (at_mm - z).abs() < *LENGTH_RANGE_MM.start()) {
                let msg = format!(
                    "the object at {at_mm} mm lies on {} (at {z} mm); put it at least {} mm away",
                    c.who(i),
                    LENGTH_RANGE_MM.start()
                );
                c.error(None, "object", msg);
            }
        }
    }
    if c.findings.iter().any(|f| f.severity == Severity::Error) {
        return c.findings;
    }
    // Parts against each other, in rail order.
    let order = bench.rail_order();
    for (a_pos, &a) in order.iter().enumerate() {
        for &b in &order[a_pos + 1..] {
            let (pa, pb) = (&bench.parts[a], &bench.parts[b]);
            if let (Some(ga), Some(gb)) = (c.glass_span(pa), c.glass_span(pb)) {
                let overlap = ga.1.min(gb.1) - ga.0.max(gb.0);
                if overlap > 0.0 {
                    let msg = format!(
                        "{} and {} overlap by {overlap:.3} mm of glass; they cannot both be built there",
                        c.who(a),
                        c.who(b)
                    );
                    c.error(Some(b), "at_mm", msg);
                }
            }
            // A thin part (iris, screen, thin lens) inside a lens's glass cannot be built either.
            for (solid, thin) in [(a, b), (b, a)] {
                let (ps, pt) = (&bench.parts[solid], &bench.parts[thin]);
                if let (Some(g), None) = (c.glass_span(ps), c.glass_span(pt))
                    && pt.at_mm > g.0
                    && pt.at_mm < g.1
                {
                    let msg = format!(
                        "{} at {} mm lies inside the glass of {} ({:.3} to {:.3} mm)",
                        c.who(thin),
                        pt.at_mm,
                        c.who(solid),
                        g.0,
                        g.1
                    );
                    c.error(Some(thin), "at_mm", msg);
                }
            }
            if let (Some(ca), Some(cb)) = (pa.carrier_span_mm(), pb.carrier_span_mm()) {
                let overlap = ca.1.min(cb.1) - ca.0.max(cb.0);
                if overlap > 0.0 {
                    let msg = format!("the carriers of {} and {} overlap by {overlap:.1} mm", c.who(a), c.who(b));
                    c.push(Severity::Warning, Some(b), Some("carrier_mm"), msg);
                }
            }
        }
    }
    aims(&mut c, bench);
    for n in 0..bench.tolerances.len() {
        for (field, message) in tolerance_problems(bench, n) {
            let part = bench.parts.iter().position(|p| p.name == bench.tolerances[n].part);
            c.error(part, field, message);
        }
    }
    c.findings.sort_by_key(|f| f.severity != Severity::Error);
    c.findings
}

/// A part's coatings: only lens surfaces take them, one per surface, each reflecting 0 to 100 %.
fn coatings(c: &mut Checker<'_>, i: usize, p: &Part) {
    if p.coatings.is_empty() {
        return;
    }
    let who = c.who(i);
    let count = p.kind.surface_count();
    if count == 0 {
        let why = if matches!(p.kind, PartKind::ThinLens { .. }) {
            "an ideal thin lens has no surfaces to coat"
        } else {
            "only the surfaces of a singlet or a doublet take coatings"
        };
        c.error(Some(i), "coatings", format!("{who}: {why}"));
        return;
    }
    if p.coatings.len() != count {
        c.error(
            Some(i),
            "coatings",
            format!(
                "{who}: {} coatings for its {count} surfaces; give one per surface, front first (Bare or Percent(…))",
                p.coatings.len()
            ),
        );
    }
    for (k, coating) in p.coatings.iter().enumerate() {
        if let crate::model::Coating::Percent(v) = coating
            && !(v.is_finite() && (0.0..=100.0).contains(v))
        {
            c.error(
                Some(i),
                "coatings",
                format!("{who}: coating {} reflects {v} %, but a reflectance is 0 to 100 %", k + 1),
            );
        }
    }
}

/// Checks each part kind's own numbers, as a bench's validation does: diameter, focal length, radii,
/// thicknesses, edge thickness, and each material's index at `wavelengths_nm`. `parts` gives each kind with
/// the name that messages call it by; a finding's `part` is the index in `parts`. (The drawer's validation
/// uses this, so that a part in the drawer is checked exactly as the same part on a bench.)
pub(crate) fn part_kinds(parts: &[(&str, &PartKind)], wavelengths_nm: &[f64]) -> Vec<Finding> {
    let mut c = Checker {
        names: parts.iter().map(|(name, kind)| (kind.word(), *name)).collect(),
        wavelengths_nm,
        findings: Vec::new(),
    };
    for (i, (_, kind)) in parts.iter().enumerate() {
        c.kind(i, kind);
    }
    c.findings
}

/// Edge thickness of each element of a lens must be positive: its surfaces may not cross inside the
/// diameter.
fn edge_check(c: &mut Checker<'_>, i: usize, surfaces: &[SurfaceSpec], thicknesses: &[f64], semi_mm: f64) {
    let sags: Vec<f64> = surfaces.iter().map(|s| compile::shape(s).sag_mm(semi_mm).unwrap_or(0.0)).collect();
    for (k, t) in thicknesses.iter().enumerate() {
        let edge = t + sags[k + 1] - sags[k];
        if edge <= 0.0 {
            let which = if thicknesses.len() > 1 { format!(" (element {})", k + 1) } else { String::new() };
            let field = if thicknesses.len() > 1 {
                if k == 0 { "thickness1_mm" } else { "thickness2_mm" }
            } else {
                "thickness_mm"
            };
            let who = c.who(i);
            c.error(
                Some(i),
                field,
                format!(
                    "{who}{which}: the edge thickness is {edge:.3} mm; its surfaces cross inside the {:.3} mm diameter",
                    2.0 * semi_mm
                ),
            );
        }
    }
}

/// The largest ± limits a tolerance entry may set: 10 mm of position or decentre, 10° of tilt (beyond
/// them the part is misplaced, not out of tolerance, and the run's linear stacks mean nothing).
pub const MAX_TOLERANCE_MM: f64 = 10.0;
/// The largest tilt limit, degrees.
pub const MAX_TOLERANCE_DEG: f64 = 10.0;

/// The fields of a tolerance entry a finding can name (each spelled `tolerances.FIELD`, so that the file's
/// locator looks for them in the `tolerances` list rather than in a part).
pub(crate) const TOLERANCE_FIELDS: [&str; 6] = [
    "tolerances.part",
    "tolerances.position_mm",
    "tolerances.decentre_mm",
    "tolerances.tilt_deg",
    "tolerances.pivot",
    "tolerances.below_axis_mm",
];

/// What is wrong with tolerance entry `n` (from 0): (field, message) pairs. The part must be a lens or
/// mirror of the bench, named once in the list; the limits finite, at least 0 and at most
/// [`MAX_TOLERANCE_MM`] / [`MAX_TOLERANCE_DEG`]; a carrier pivot 0 to 1000 mm below the axis.
pub(crate) fn tolerance_problems(bench: &Bench, n: usize) -> Vec<(&'static str, String)> {
    use crate::model::Pivot;
    let t = &bench.tolerances[n];
    let who = format!("tolerance {} (\"{}\")", n + 1, t.part);
    let mut out = Vec::new();
    match bench.parts.iter().find(|p| p.name == t.part) {
        None => out.push((TOLERANCE_FIELDS[0], format!("{who}: there is no part named \"{}\" on the bench", t.part))),
        Some(p)
            if !matches!(
                p.kind,
                PartKind::ThinLens { .. }
                    | PartKind::Singlet { .. }
                    | PartKind::Doublet { .. }
                    | PartKind::Mirror { .. }
            ) =>
        {
            out.push((
                TOLERANCE_FIELDS[0],
                format!(
                    "{who}: only lenses and mirrors carry tolerances; a screen is the plane the image is measured on, and an iris here limits no ray of the tolerance run (a {} was named)",
                    p.kind.word()
                ),
            ));
        }
        Some(_) => {}
    }
    if bench.tolerances[..n].iter().any(|e| e.part == t.part) {
        out.push((TOLERANCE_FIELDS[0], format!("{who}: the part is listed twice; give it one entry")));
    }
    let limit = |v: f64, max: f64| v.is_finite() && (0.0..=max).contains(&v);
    for (field, v, max, unit, what) in [
        (TOLERANCE_FIELDS[1], t.position_mm, MAX_TOLERANCE_MM, "mm", "position"),
        (TOLERANCE_FIELDS[2], t.decentre_mm, MAX_TOLERANCE_MM, "mm", "decentre"),
        (TOLERANCE_FIELDS[3], t.tilt_deg, MAX_TOLERANCE_DEG, "°", "tilt"),
    ] {
        if !limit(v, max) {
            out.push((field, format!("{who}: the {what} limit ±{v} {unit} must be a number from 0 to {max} {unit}")));
        }
    }
    if let Pivot::Carrier { below_axis_mm } = t.pivot
        && !limit(below_axis_mm, 1000.0)
    {
        out.push((
            TOLERANCE_FIELDS[5],
            format!("{who}: the carrier's mounting point {below_axis_mm} mm below the axis must be a number from 0 to 1000 mm"),
        ));
    }
    out
}

/// Each aim's numbers must make sense, and a screen it names must be on the bench.
fn aims(c: &mut Checker<'_>, bench: &Bench) {
    use crate::model::Aim;
    for (k, aim) in bench.aims.iter().enumerate() {
        let n = k + 1;
        let mut need = |ok: bool, what: String| {
            if !ok {
                c.error(None, "aims", format!("aim {n}: {what}"));
            }
        };
        let finite = |v: f64| v.is_finite();
        let tol = |v: f64| v.is_finite() && v >= 0.0;
        match aim {
            Aim::SharpOn { screen, rms_um } => {
                let named = bench.parts.iter().any(|p| &p.name == screen && matches!(p.kind, PartKind::Screen { .. }));
                need(named, format!("there is no screen named \"{screen}\" on the bench"));
                need(rms_um.is_finite() && *rms_um > 0.0, format!("the RMS spot radius {rms_um} µm must be above 0"));
            }
            Aim::Magnification { value, tolerance } | Aim::AngularMagnification { value, tolerance } => {
                need(
                    finite(*value) && *value != 0.0,
                    format!("the magnification {value} must be a number other than 0"),
                );
                need(tol(*tolerance), format!("the tolerance {tolerance} must be a number of at least 0"));
            }
            Aim::BeamExpansion { ratio, tolerance } => {
                need(ratio.is_finite() && *ratio > 0.0, format!("the expansion ratio {ratio} must be above 0"));
                need(tol(*tolerance), format!("the tolerance {tolerance} must be a number of at least 0"));
            }
            Aim::ObjectToImage { distance_mm, tolerance_mm } => {
                need(finite(*distance_mm), format!("the distance {distance_mm} mm must be a number"));
                need(tol(*tolerance_mm), format!("the tolerance {tolerance_mm} mm must be a number of at least 0"));
                need(
                    matches!(bench.object, ObjectSpec::Point { .. }),
                    "an object-to-image distance needs an object on the rail, not a distant one".into(),
                );
            }
            Aim::ImageHeight { height_mm, tolerance_mm } => {
                need(finite(*height_mm), format!("the image height {height_mm} mm must be a number"));
                need(tol(*tolerance_mm), format!("the tolerance {tolerance_mm} mm must be a number of at least 0"));
            }
            Aim::TotalLength { at_most_mm } => {
                need(
                    at_most_mm.is_finite() && *at_most_mm > 0.0,
                    format!("the length {at_most_mm} mm must be above 0"),
                );
            }
            Aim::WorkingFNumber { min, max } => {
                need(
                    min.is_finite() && max.is_finite() && *min > 0.0 && min <= max,
                    format!(
                        "the f-number range {min} to {max} must run from a number above 0 up to one at least as large"
                    ),
                );
            }
            Aim::CarrierGap { at_least_mm } => {
                need(tol(*at_least_mm), format!("the gap {at_least_mm} mm must be a number of at least 0"));
            }
        }
    }
}

/// The laser's numbers: on the rail before every part, a positive waist diameter, M² of at least 1, a
/// wavelength the bench lists (so every material is checked there and the rays show its colour), a
/// positive power when given.
fn laser(c: &mut Checker<'_>, bench: &Bench, l: &Laser, rail_ok: bool) {
    if !l.at_mm.is_finite() || rail_ok && !(0.0..=bench.rail_length_mm).contains(&l.at_mm) {
        c.error(
            None,
            "laser",
            format!("the laser at {} mm must lie on the rail (0 to {} mm)", l.at_mm, bench.rail_length_mm),
        );
    } else if let Some(p) = bench
        .parts
        .iter()
        .filter(|p| p.at_mm.is_finite() && p.at_mm < l.at_mm)
        .min_by(|a, b| a.at_mm.total_cmp(&b.at_mm))
    {
        c.error(
            None,
            "laser",
            format!(
                "the laser at {} mm must come before every part: the {} \"{}\" at {} mm lies behind it",
                l.at_mm,
                p.kind.word(),
                p.name,
                p.at_mm
            ),
        );
    }
    if !(l.wavelength_nm.is_finite() && l.wavelength_nm > 0.0) {
        c.error(
            None,
            "wavelength_nm",
            format!("the laser's wavelength {} nm must be a positive number", l.wavelength_nm),
        );
    } else if !bench.wavelengths_nm.iter().any(|w| (w - l.wavelength_nm).abs() <= 1e-9 * l.wavelength_nm) {
        c.error(
            None,
            "wavelength_nm",
            format!(
                "the laser's wavelength {} nm is not one of the bench's wavelengths; list it in wavelengths_nm, so that every material is checked there",
                l.wavelength_nm
            ),
        );
    }
    c.positive(None, "waist_diameter_mm", "the laser's waist diameter (1/e²)", l.waist_diameter_mm);
    if !l.waist_at_mm.is_finite() {
        c.error(
            None,
            "waist_at_mm",
            format!("the laser's waist position {} mm must be a finite number", l.waist_at_mm),
        );
    } else if (l.waist_at_mm - l.at_mm).abs() > *LENGTH_RANGE_MM.end() {
        // A fuzz finding: a waist 2e99 mm away made the beam overflow to an infinite size.
        c.error(
            None,
            "waist_at_mm",
            format!(
                "the laser's waist at {} mm lies more than {} mm (1 km) from the laser",
                l.waist_at_mm,
                LENGTH_RANGE_MM.end()
            ),
        );
    }
    if !(l.m_squared.is_finite() && l.m_squared >= 1.0) {
        c.error(
            None,
            "m_squared",
            format!("the laser's beam quality M² = {} must be at least 1 (1 is a perfect Gaussian beam)", l.m_squared),
        );
    }
    if let Some(p) = l.power_mw
        && !(p.is_finite() && p > 0.0)
    {
        c.error(
            None,
            "power_mw",
            format!("the laser's power {p} mW must be a positive number (leave it out for none)"),
        );
    }
}
