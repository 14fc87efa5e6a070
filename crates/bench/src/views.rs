//! The data of the analysis views (spot, fan, sweep, colour and field), computed from a bench and its
//! report, and their CSV exports. The workbench plots exactly these numbers and the command line writes
//! them, so a figure has one source.
//!
//! Every view covers the on-axis and the off-axis object point at every wavelength of the bench. Rays are
//! aimed through the real stop ([`lumenrail_optics::sampling`]). Positions are rail positions in mm;
//! intercepts in the image plane are measured from the axis.

use crate::compile::{self, Compiled};
use crate::model::{Bench, PartKind};
use crate::report::Report;
use lumenrail_optics::field::{FieldSample, chief_height_at, field_curves};
use lumenrail_optics::material::{ABBE_RANGE_NM, Material};
use lumenrail_optics::paraxial::{self, Object};
use lumenrail_optics::pupil::Pupils;
use lumenrail_optics::sampling::{Grid, PupilSample, pupil_transmission, trace_grid};
use lumenrail_optics::skew::SkewRay;
use lumenrail_optics::spot::{AxialSpot, SpotFigures, spot_figures};
use lumenrail_optics::system::{Action, Sequence};
use std::fmt::Write as _;

/// Which object point a series belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Point {
    /// The on-axis point.
    OnAxis,
    /// The off-axis point (the object's height or field angle).
    OffAxis,
}

impl Point {
    /// The word used in CSV files and legends: `on-axis` or `off-axis`.
    pub fn word(self) -> &'static str {
        match self {
            Point::OnAxis => "on-axis",
            Point::OffAxis => "off-axis",
        }
    }

    fn fraction(self) -> f64 {
        match self {
            Point::OnAxis => 0.0,
            Point::OffAxis => 1.0,
        }
    }
}

/// The plane the spot and fan views look at.
#[derive(Debug, Clone, PartialEq)]
pub enum Plane {
    /// The first screen beyond the last part, else the on-axis best focus.
    Auto,
    /// A screen, by name.
    Screen(String),
    /// The on-axis best focus at the primary wavelength.
    BestFocus,
    /// A rail position, mm.
    At(f64),
}

/// The views one can export.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ViewKind {
    /// Spot diagram.
    Spot,
    /// Transverse ray aberration fans.
    Fan,
    /// RMS spot radius through focus.
    Sweep,
    /// Paraxial focus and lateral colour against wavelength.
    Colour,
    /// Field curvature and distortion across the field.
    Field,
}

impl ViewKind {
    /// Every view, in menu order.
    pub const ALL: [ViewKind; 5] = [ViewKind::Spot, ViewKind::Fan, ViewKind::Sweep, ViewKind::Colour, ViewKind::Field];

    /// The view's name on the command line and in menus.
    pub fn word(self) -> &'static str {
        match self {
            ViewKind::Spot => "spot",
            ViewKind::Fan => "fan",
            ViewKind::Sweep => "sweep",
            ViewKind::Colour => "colour",
            ViewKind::Field => "field",
        }
    }

    /// The view named `word`.
    pub fn from_word(word: &str) -> Option<ViewKind> {
        ViewKind::ALL.into_iter().find(|v| v.word() == word)
    }
}

/// What to compute.
#[derive(Debug, Clone, PartialEq)]
pub struct ViewRequest {
    /// The plane of the spot and fan views.
    pub plane: Plane,
    /// How the spot diagram samples the pupil.
    pub grid: Grid,
}

impl Default for ViewRequest {
    fn default() -> ViewRequest {
        ViewRequest { plane: Plane::Auto, grid: Grid::Hexapolar { rings: 6 } }
    }
}

/// One ray of a spot diagram.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpotRay {
    /// Normalised pupil coordinates (px, py) at the real stop.
    pub pupil: (f64, f64),
    /// The sample's share of the pupil's area in its grid (quadrature weights for the Gauss polar grid).
    pub weight: f64,
    /// Intercept x in the plane, mm from the axis.
    pub x_mm: f64,
    /// Intercept y in the plane, mm from the axis.
    pub y_mm: f64,
}

/// The spot of one object point at one wavelength.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// One per ray that got through.
    pub rays: Vec<SpotRay>,
    /// Rays of the grid that did not get through.
    pub lost: usize,
    /// Centroid (x, y), mm (area-weighted over the pupil).
    pub centroid: (f64, f64),
    /// RMS radius about the centroid, mm (area-weighted over the pupil).
    pub rms_mm: f64,
    /// Radius about the centroid that holds every ray of the grid, mm.
    pub geometric_mm: f64,
    /// Share of the real stop's area whose rays get through every aperture (computed at the primary
    /// wavelength; `None` at the others).
    pub transmission: Option<f64>,
}

/// The spot view.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotView {
    /// The plane's rail position.
    pub plane_at_mm: f64,
    /// What the plane is ("screen \"…\"", "best focus", …).
    pub plane_label: String,
    /// Airy disk radius at the primary wavelength, mm.
    pub airy_radius_mm: Option<f64>,
    /// The primary wavelength, nm (each point's spot is drawn about its centroid at this wavelength).
    pub primary_nm: f64,
    /// One series per point and wavelength.
    pub series: Vec<SpotSeries>,
}

/// The ray fans of one object point at one wavelength: transverse error against pupil coordinate.
#[derive(Debug, Clone, PartialEq)]
pub struct FanSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Tangential fan: (py, y error mm) from the primary wavelength's chief ray.
    pub tangential: Vec<(f64, f64)>,
    /// Sagittal fan: (px, x error mm).
    pub sagittal: Vec<(f64, f64)>,
}

/// The fan view.
#[derive(Debug, Clone, PartialEq)]
pub struct FanView {
    /// The plane's rail position.
    pub plane_at_mm: f64,
    /// One series per point and wavelength.
    pub series: Vec<FanSeries>,
}

/// RMS spot radius through focus for one object point at one wavelength.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepSeries {
    /// The object point.
    pub point: Point,
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// (plane position, RMS radius mm).
    pub samples: Vec<(f64, f64)>,
    /// The plane of least RMS radius and that radius (exact: RMS² is quadratic in the plane's position).
    pub best: (f64, f64),
}

/// The sweep view.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepView {
    /// On-axis best focus at the primary wavelength (the report's figure).
    pub best_focus_at_mm: f64,
    /// Depth of focus, ± mm.
    pub depth_of_focus_mm: Option<f64>,
    /// Airy radius at the primary wavelength, mm.
    pub airy_radius_mm: Option<f64>,
    /// The spot view's plane, marked.
    pub plane_at_mm: f64,
    /// One series per point and wavelength.
    pub series: Vec<SweepSeries>,
}

/// One wavelength of the colour view.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColourSample {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Final paraxial image position.
    pub focus_at_mm: Option<f64>,
    /// Off-axis real chief ray height at the primary wavelength's paraxial image plane, less that at the
    /// primary wavelength, mm.
    pub lateral_colour_mm: Option<f64>,
}

/// The colour view.
#[derive(Debug, Clone, PartialEq)]
pub struct ColourView {
    /// The wavelength range every material of the bench is valid over (within 380–1000 nm), nm.
    pub range_nm: (f64, f64),
    /// The primary wavelength, nm.
    pub primary_nm: f64,
    /// The bench's own wavelengths, nm.
    pub bench_nm: Vec<f64>,
    /// Evenly spaced samples across the range (and the bench's wavelengths).
    pub samples: Vec<ColourSample>,
}

/// One object point of the field view.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FieldPointFigures {
    /// Object height (mm) or field angle (degrees) of the point.
    pub field: f64,
    /// Tangential focus minus the paraxial image, mm along the light.
    pub tangential_mm: f64,
    /// Sagittal focus minus the paraxial image, mm along the light.
    pub sagittal_mm: f64,
    /// Distortion, % (`None` on axis).
    pub distortion_percent: Option<f64>,
}

/// The field view.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldView {
    /// "object height, mm" or "field angle, °".
    pub field_label: &'static str,
    /// Points from the axis to the off-axis point.
    pub points: Vec<FieldPointFigures>,
}

/// Every view of a bench, or why it has none.
#[derive(Debug, Clone, PartialEq)]
pub struct Views {
    /// The spot view.
    pub spot: Option<SpotView>,
    /// The fan view.
    pub fan: Option<FanView>,
    /// The sweep view.
    pub sweep: Option<SweepView>,
    /// The colour view.
    pub colour: Option<ColourView>,
    /// The field view.
    pub field: Option<FieldView>,
    /// Why some views are empty.
    pub notes: Vec<String>,
}

/// Points across the tangential fan (odd, so the chief ray is one of them).
const FAN_POINTS: usize = 41;
/// Wavelength samples of the colour view.
const COLOUR_POINTS: usize = 61;
/// Plane samples of the sweep view.
const SWEEP_POINTS: usize = 121;
/// Points across the field view.
const FIELD_POINTS: usize = 11;

/// Quadrature rays that got through, with their samples, and the chief ray, all in image space.
type Quadrature = (Vec<(PupilSample, SkewRay)>, SkewRay);

/// What a point's spot and sweep figures are integrated from.
enum Bundle {
    /// The on-axis point: the report's rotationally symmetric rings, converged at the view plane.
    OnAxis(SpotFigures),
    /// The off-axis point: a Gauss polar grid of skew rays.
    OffAxis(Quadrature),
}

/// Where the off-axis point's figures come from: Gauss quadrature over the pupil, doubled from 6 rings by
/// 12 arms until the RMS radius at the plane `z` settles to 1e-9 of itself or 1e-12 mm (at most 24 × 48).
fn off_axis_quadrature(seq: &Sequence, object: Object, pupils: &Pupils, z: f64) -> Option<Quadrature> {
    let mut last: Option<(Quadrature, f64)> = None;
    let mut rings = 6;
    while rings <= 24 {
        let grid = Grid::Polar { rings, arms: 2 * rings }.samples();
        let traced = trace_grid(seq, object, pupils, 1.0, &grid).ok()?;
        if traced.rays.is_empty() {
            return None;
        }
        let rms = weighted_spot(&traced.rays, z).2;
        if let Some((_, prev)) = &last
            && (rms - prev).abs() <= 1e-9 * rms.max(*prev) + 1e-12
        {
            return Some((traced.rays, traced.chief));
        }
        last = Some(((traced.rays, traced.chief), rms));
        rings *= 2;
    }
    last.map(|(q, _)| q)
}

/// Centroid and RMS radius about it at `z`, weights renormalised over the rays that got through.
fn weighted_spot(rays: &[(PupilSample, SkewRay)], z: f64) -> (f64, f64, f64) {
    let w: f64 = rays.iter().map(|(s, _)| s.weight).sum();
    let (mut cx, mut cy) = (0.0, 0.0);
    for (s, r) in rays {
        let (x, y) = r.at_plane(z);
        cx += s.weight * x;
        cy += s.weight * y;
    }
    (cx, cy) = (cx / w, cy / w);
    let ms: f64 = rays
        .iter()
        .map(|(s, r)| {
            let (x, y) = r.at_plane(z);
            s.weight * ((x - cx).powi(2) + (y - cy).powi(2))
        })
        .sum::<f64>()
        / w;
    (cx, cy, ms.sqrt())
}

/// The weighted second moments of straight rays about their centroid at a reference plane: with t the
/// distance from that plane, RMS²(t) = (Vxx + Vyy) + 2t(Cxs + Cys) + t²(Vss), so the sweep and its exact
/// minimum cost nothing per plane.
struct Moments {
    z_ref: f64,
    v: f64,
    c: f64,
    vs: f64,
}

impl Moments {
    fn of(rays: &[(PupilSample, SkewRay)], z_ref: f64) -> Moments {
        let w: f64 = rays.iter().map(|(s, _)| s.weight).sum();
        let mean = |f: &dyn Fn(&SkewRay) -> f64| rays.iter().map(|(s, r)| s.weight * f(r)).sum::<f64>() / w;
        let (x0, y0) = (mean(&|r| r.at_plane(z_ref).0), mean(&|r| r.at_plane(z_ref).1));
        let (sx0, sy0) = (mean(&|r| r.k / r.l), mean(&|r| r.m / r.l));
        let (mut v, mut c, mut vs) = (0.0, 0.0, 0.0);
        for (s, r) in rays {
            let (x, y) = r.at_plane(z_ref);
            let (dx, dy, sx, sy) = (x - x0, y - y0, r.k / r.l - sx0, r.m / r.l - sy0);
            v += s.weight * (dx * dx + dy * dy);
            c += s.weight * (dx * sx + dy * sy);
            vs += s.weight * (sx * sx + sy * sy);
        }
        Moments { z_ref, v: v / w, c: c / w, vs: vs / w }
    }

    /// RMS radius about the centroid at the plane `z`.
    fn rms_at(&self, z: f64) -> f64 {
        let t = z - self.z_ref;
        (self.v + t * (2.0 * self.c + t * self.vs)).max(0.0).sqrt()
    }

    /// The plane of least RMS radius (`None` for a collimated bundle).
    fn best_focus(&self) -> Option<f64> {
        (self.vs > 1e-24).then(|| self.z_ref - self.c / self.vs)
    }
}

/// The per-wavelength pieces every view needs.
struct Colour {
    wavelength_nm: f64,
    seq: Sequence,
    pupils: Option<Pupils>,
}

impl Views {
    /// Computes every view of `bench`, whose report is `report`.
    pub fn of(bench: &Bench, report: &Report, request: &ViewRequest) -> Views {
        let mut views = Views { spot: None, fan: None, sweep: None, colour: None, field: None, notes: Vec::new() };
        if let Some(why) = &report.trace_failure {
            views.notes.push(format!("nothing to show: {why}"));
            return views;
        }
        let Ok(compiled) = compile::compile(bench) else {
            return views;
        };
        let object = compiled.object;
        let colours: Vec<Colour> = bench
            .wavelengths_nm
            .iter()
            .filter_map(|&w| {
                let seq = compiled.system.at(w).ok()?;
                let pupils = Pupils::find(&seq, &object).ok();
                Some(Colour { wavelength_nm: w, seq, pupils })
            })
            .collect();
        let Some(primary) = colours.iter().find(|c| Some(c.wavelength_nm) == bench.primary_wavelength_nm()) else {
            return views;
        };
        views.colour = colour_view(bench, &compiled, primary, report);
        let Some(pupils) = &primary.pupils else {
            views.notes.push("no aperture limits the light, so there is no pupil to fill".into());
            return views;
        };
        let final_image = paraxial::images(&primary.seq, &object).last().and_then(|i| i.at_mm);
        if final_image.is_none() {
            views.notes.push(if report.afocal.is_some() {
                "the bench is afocal: the light leaves parallel, so there is no image plane to look at".into()
            } else {
                "the final image is at infinity (the light leaves parallel), so there is no image plane to look at"
                    .into()
            });
            return views;
        }
        let Some(best) = spot_figures(&primary.seq, object, pupils, &[]).ok() else {
            views.notes.push("the on-axis light does not reach an image".into());
            return views;
        };
        let Some(best_focus_at_mm) = best.best_focus_at_mm else {
            views.notes.push("the on-axis light leaves collimated, so it has no focus to look at".into());
            return views;
        };
        let (plane_at_mm, plane_label) = choose_plane(bench, &compiled, report, &request.plane, best_focus_at_mm);
        let airy_radius_mm = report.aberrations.airy_radius_um.map(|u| u * 1e-3);
        let mut spot = SpotView {
            plane_at_mm,
            plane_label,
            airy_radius_mm,
            primary_nm: primary.wavelength_nm,
            series: Vec::new(),
        };
        let mut fan = FanView { plane_at_mm, series: Vec::new() };
        let mut sweep = SweepView {
            best_focus_at_mm,
            depth_of_focus_mm: report.aberrations.depth_of_focus_mm,
            airy_radius_mm,
            plane_at_mm,
            series: Vec::new(),
        };
        let sweep_planes = sweep_planes(&sweep, report, final_image);
        let display_grid = request.grid.samples();
        // The primary wavelength's chief ray is every fan's reference, so lateral colour shows as an offset.
        let chief_reference = |point: Point| -> Option<f64> {
            let p = primary.pupils.as_ref()?;
            lumenrail_optics::sampling::SkewAimer::new(&primary.seq, object, p, point.fraction())
                .ok()
                .and_then(|a| lumenrail_optics::skew::trace_with(&primary.seq, a.chief_ray(), false).ok())
                .map(|r| r.at_plane(plane_at_mm).1)
        };
        let off_axis = match bench.object {
            crate::model::ObjectSpec::Point { height_mm, .. } => height_mm != 0.0,
            crate::model::ObjectSpec::Distant { field_deg, .. } => field_deg != 0.0,
        };
        let points: &[Point] = if off_axis { &[Point::OnAxis, Point::OffAxis] } else { &[Point::OnAxis] };
        for &point in points {
            let reference = chief_reference(point).unwrap_or(0.0);
            for c in &colours {
                let Some(p) = &c.pupils else { continue };
                if let Some(f) = fan_series(&c.seq, object, p, point, plane_at_mm, reference) {
                    fan.series.push(f);
                }
                let bundle = match point {
                    Point::OnAxis => spot_figures(&c.seq, object, p, &[plane_at_mm]).ok().map(Bundle::OnAxis),
                    Point::OffAxis => off_axis_quadrature(&c.seq, object, p, plane_at_mm).map(Bundle::OffAxis),
                };
                let Some(bundle) = bundle else { continue };
                if let Some(mut s) = spot_series(&c.seq, object, p, point, &display_grid, plane_at_mm, &bundle) {
                    if std::ptr::eq(c, primary) {
                        // The off-axis share is the report's; the on-axis one is a single arm's.
                        s.transmission = match point {
                            Point::OffAxis => report.off_axis_area_transmission,
                            Point::OnAxis => pupil_transmission(&c.seq, object, p, 0.0).ok(),
                        };
                    }
                    spot.series.push(s);
                }
                if let Some(s) = sweep_series(&c.seq, object, p, point, &sweep_planes, plane_at_mm, &bundle) {
                    sweep.series.push(s);
                }
            }
        }
        for &point in points {
            if !spot.series.iter().any(|s| s.point == point) {
                views
                    .notes
                    .push(format!("no ray from the {} point can be aimed through the stop to the image", point.word()));
            }
        }
        views.spot = Some(spot);
        views.fan = Some(fan);
        views.sweep = Some(sweep);
        views.field = field_view(bench, &primary.seq, object, pupils);
        match &views.field {
            None if off_axis => {
                views.notes.push("no field figures: the off-axis bundles cannot be traced to their foci".into())
            }
            Some(f) if f.points.len() < FIELD_POINTS => views.notes.push(format!(
                "the field view has {} of its {FIELD_POINTS} points: the bundles of the others do not get through",
                f.points.len()
            )),
            _ => {}
        }
        views
    }

    /// The CSV text of one view: a header row with units, then one row per datum.
    pub fn csv(&self, kind: ViewKind) -> Option<String> {
        let mut t = String::new();
        match kind {
            ViewKind::Spot => {
                let v = self.spot.as_ref()?;
                t.push_str("point,wavelength_nm,x_mm,y_mm,pupil_x,pupil_y,weight\n");
                for s in &v.series {
                    for r in &s.rays {
                        let (px, py) = r.pupil;
                        let _ = writeln!(
                            t,
                            "{},{},{},{},{px},{py},{}",
                            s.point.word(),
                            s.wavelength_nm,
                            r.x_mm,
                            r.y_mm,
                            r.weight
                        );
                    }
                }
            }
            ViewKind::Fan => {
                let v = self.fan.as_ref()?;
                t.push_str("point,wavelength_nm,fan,pupil_coordinate,error_mm\n");
                for s in &v.series {
                    for (name, data) in [("tangential", &s.tangential), ("sagittal", &s.sagittal)] {
                        for (p, e) in data {
                            let _ = writeln!(t, "{},{},{name},{p},{e}", s.point.word(), s.wavelength_nm);
                        }
                    }
                }
            }
            ViewKind::Sweep => {
                let v = self.sweep.as_ref()?;
                t.push_str("point,wavelength_nm,plane_at_mm,rms_radius_mm\n");
                for s in &v.series {
                    for (z, r) in &s.samples {
                        let _ = writeln!(t, "{},{},{z},{r}", s.point.word(), s.wavelength_nm);
                    }
                }
            }
            ViewKind::Colour => {
                let v = self.colour.as_ref()?;
                t.push_str("wavelength_nm,focus_at_mm,lateral_colour_mm\n");
                let opt = |v: Option<f64>| v.map_or_else(String::new, |v| format!("{v}"));
                for s in &v.samples {
                    let _ = writeln!(t, "{},{},{}", s.wavelength_nm, opt(s.focus_at_mm), opt(s.lateral_colour_mm));
                }
            }
            ViewKind::Field => {
                let v = self.field.as_ref()?;
                let unit = if v.field_label.starts_with("object") { "object_height_mm" } else { "field_angle_deg" };
                let _ = writeln!(t, "{unit},tangential_focus_mm,sagittal_focus_mm,distortion_percent");
                for p in &v.points {
                    let d = p.distortion_percent.map_or_else(String::new, |d| format!("{d}"));
                    let _ = writeln!(t, "{},{},{},{d}", p.field, p.tangential_mm, p.sagittal_mm);
                }
            }
        }
        Some(t)
    }
}

/// The rail position and label of the spot and fan views' plane.
fn choose_plane(bench: &Bench, compiled: &Compiled, report: &Report, plane: &Plane, best: f64) -> (f64, String) {
    let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
    let screen_after = |name: &str| {
        report.screens.iter().find(|s| s.part == name && s.after_last_part && s.rms_spot_um.is_some()).map(|s| s.at_mm)
    };
    match plane {
        Plane::Screen(name) => {
            if let Some(z) = screen_after(name) {
                return (z, format!("screen \"{name}\""));
            }
        }
        Plane::At(z) if z.is_finite() => return (*z, format!("plane at {z} mm")),
        Plane::BestFocus => return (best, "best focus".into()),
        _ => {}
    }
    for i in bench.rail_order() {
        let p = &bench.parts[i];
        if matches!(p.kind, PartKind::Screen { .. }) && (p.at_mm - last_z) * compiled.final_direction >= 0.0 {
            return (p.at_mm, format!("screen \"{}\"", p.name));
        }
    }
    (best, "best focus".into())
}

fn spot_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    grid: &[PupilSample],
    z: f64,
    bundle: &Bundle,
) -> Option<SpotSeries> {
    let traced = trace_grid(seq, object, pupils, point.fraction(), grid).ok()?;
    let rays: Vec<SpotRay> = traced
        .rays
        .iter()
        .map(|(p, r)| {
            let (x_mm, y_mm) = r.at_plane(z);
            SpotRay { pupil: (p.px, p.py), weight: p.weight, x_mm, y_mm }
        })
        .collect();
    let (centroid, rms_mm, geometric_mm) = match bundle {
        // On axis the centroid is on the axis, and the figures are the report's rings'.
        Bundle::OnAxis(f) => ((0.0, 0.0), f.planes[0].1, f.planes[0].2),
        Bundle::OffAxis((quad, _)) => {
            let (cx, cy, rms) = weighted_spot(quad, z);
            let geometric = rays.iter().map(|r| (r.x_mm - cx).hypot(r.y_mm - cy)).fold(0.0, f64::max);
            ((cx, cy), rms, geometric)
        }
    };
    Some(SpotSeries {
        point,
        wavelength_nm: seq.wavelength_nm,
        rays,
        lost: traced.lost,
        centroid,
        rms_mm,
        geometric_mm,
        transmission: None,
    })
}

fn fan_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    z: f64,
    reference_y: f64,
) -> Option<FanSeries> {
    let half = (FAN_POINTS - 1) / 2;
    let coords: Vec<f64> = (0..FAN_POINTS).map(|j| (j as f64 - half as f64) / half as f64).collect();
    let tangential: Vec<PupilSample> = coords.iter().map(|&py| PupilSample { px: 0.0, py, weight: 1.0 }).collect();
    let sagittal: Vec<PupilSample> = coords.iter().map(|&px| PupilSample { px, py: 0.0, weight: 1.0 }).collect();
    let t = trace_grid(seq, object, pupils, point.fraction(), &tangential).ok()?;
    let s = trace_grid(seq, object, pupils, point.fraction(), &sagittal).ok()?;
    Some(FanSeries {
        point,
        wavelength_nm: seq.wavelength_nm,
        tangential: t.rays.iter().map(|(p, r)| (p.py, r.at_plane(z).1 - reference_y)).collect(),
        sagittal: s.rays.iter().map(|(p, r)| (p.px, r.at_plane(z).0)).collect(),
    })
}

/// The planes of the sweep: a range about the best focus wide enough to show the depth of focus, the
/// spherical aberration and the colour, stretched to take in the spot view's plane; the best focus
/// itself is one of the planes.
fn sweep_planes(view: &SweepView, report: &Report, paraxial_at: Option<f64>) -> Vec<f64> {
    let centre = view.best_focus_at_mm;
    let mut half = view.depth_of_focus_mm.map_or(0.0, |d| 3.0 * d);
    if let Some(z) = paraxial_at {
        half = half.max(2.0 * (z - centre).abs());
    }
    if let Some(c) = report.aberrations.chromatic_focal_shift_mm {
        half = half.max(1.5 * c.abs());
    }
    if half <= 0.0 || !half.is_finite() {
        half = 1.0;
    }
    let (mut lo, mut hi) = (centre - half, centre + half);
    let p = view.plane_at_mm;
    if (p - centre).abs() <= 10.0 * half {
        lo = lo.min(p - 0.1 * half);
        hi = hi.max(p + 0.1 * half);
    }
    let mut planes: Vec<f64> =
        (0..SWEEP_POINTS).map(|j| lo + (hi - lo) * j as f64 / (SWEEP_POINTS - 1) as f64).collect();
    planes.push(centre);
    planes.sort_by(f64::total_cmp);
    planes
}

fn sweep_series(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    point: Point,
    planes: &[f64],
    view_plane: f64,
    bundle: &Bundle,
) -> Option<SweepSeries> {
    let (samples, best) = match bundle {
        Bundle::OnAxis(figures) => {
            let spot = AxialSpot::trace(seq, object, pupils, figures.rings).ok()?;
            let samples = planes.iter().map(|&z| (z, spot.rms_radius_at(z))).collect();
            (samples, (figures.best_focus_at_mm?, figures.best_rms_mm?))
        }
        Bundle::OffAxis((rays, _)) => {
            let m = Moments::of(rays, view_plane);
            let samples = planes.iter().map(|&z| (z, m.rms_at(z))).collect();
            let z = m.best_focus()?;
            (samples, (z, m.rms_at(z)))
        }
    };
    Some(SweepSeries { point, wavelength_nm: seq.wavelength_nm, samples, best })
}

/// The wavelength range every medium of the compiled bench is valid over, within the project's working
/// range 380–1000 nm.
fn common_range(compiled: &Compiled) -> (f64, f64) {
    let mut range = ABBE_RANGE_NM;
    let mut take = |m: &Material| {
        let (lo, hi) = m.range_nm();
        range = (range.0.max(lo), range.1.min(hi));
    };
    take(&compiled.system.object_medium);
    for s in &compiled.system.surfaces {
        if let Action::Refract { into } = &s.action {
            take(into);
        }
    }
    range
}

fn colour_view(bench: &Bench, compiled: &Compiled, primary: &Colour, report: &Report) -> Option<ColourView> {
    let (mut lo, mut hi) = common_range(compiled);
    for &w in &bench.wavelengths_nm {
        (lo, hi) = (lo.min(w), hi.max(w));
    }
    if hi <= lo {
        return None;
    }
    let object = compiled.object;
    let plane = report.images.last().and_then(|i| i.at_mm);
    let lateral_at = |seq: &Sequence| -> Option<f64> {
        let z = plane?;
        let p = Pupils::find(seq, &object).ok()?;
        chief_height_at(seq, object, &p, 1.0, z).ok()
    };
    let reference = lateral_at(&primary.seq);
    let mut wavelengths: Vec<f64> =
        (0..COLOUR_POINTS).map(|j| lo + (hi - lo) * j as f64 / (COLOUR_POINTS - 1) as f64).collect();
    wavelengths.extend(&bench.wavelengths_nm);
    wavelengths.sort_by(f64::total_cmp);
    wavelengths.dedup();
    let samples = wavelengths
        .into_iter()
        .filter_map(|w| {
            let seq = compiled.system.at(w).ok()?;
            let focus_at_mm = paraxial::images(&seq, &object).last().and_then(|i| i.at_mm);
            let lateral_colour_mm = lateral_at(&seq).zip(reference).map(|(a, b)| a - b);
            Some(ColourSample { wavelength_nm: w, focus_at_mm, lateral_colour_mm })
        })
        .collect();
    Some(ColourView {
        range_nm: (lo, hi),
        primary_nm: primary.wavelength_nm,
        bench_nm: bench.wavelengths_nm.clone(),
        samples,
    })
}

fn field_view(bench: &Bench, seq: &Sequence, object: Object, pupils: &Pupils) -> Option<FieldView> {
    let (full, field_label) = match bench.object {
        crate::model::ObjectSpec::Point { height_mm, .. } => (height_mm, "object height, mm"),
        crate::model::ObjectSpec::Distant { field_deg, .. } => (field_deg, "field angle, deg"),
    };
    if full == 0.0 {
        return None;
    }
    let points: Vec<FieldPointFigures> = field_curves(seq, object, pupils, FIELD_POINTS)
        .into_iter()
        .map(|s: FieldSample| FieldPointFigures {
            // The first point stands for the axis (its foci are found at a vanishing field).
            field: if s.fraction < 1e-5 { 0.0 } else { s.fraction * full },
            tangential_mm: s.tangential_mm,
            sagittal_mm: s.sagittal_mm,
            distortion_percent: s.distortion.filter(|_| s.fraction >= 1e-5).map(|d| 100.0 * d),
        })
        .collect();
    (!points.is_empty()).then_some(FieldView { field_label, points })
}
