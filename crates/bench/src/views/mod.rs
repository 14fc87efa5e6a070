//! The data of the analysis views (spot, fan, sweep, colour, field and beam), projected from a bench's one
//! [`Evaluation`]. The workbench plots exactly these numbers and `lumenrail-export` writes them (CSV,
//! PNG), so a figure has one source.
//!
//! Every view covers the on-axis and the off-axis object point at every wavelength of the bench. Rays are
//! aimed through the real stop ([`lumenrail_optics::sampling`]). Positions are rail positions in mm;
//! intercepts in the image plane are measured from the axis. A view reads the evaluation's sequences,
//! stops and figures; it never compiles the bench or finds a pupil again.

mod beam;
mod colour;
mod fan;
mod field;
mod spot;
mod sweep;

pub use beam::{BeamView, BeamViewPart, BeamViewWaist, envelope_end_mm};
pub use colour::ColourView;
pub use fan::{FanSeries, FanView};
pub use field::{FieldPointFigures, FieldView};
pub use lumenrail_optics::analysis::ColourSample;
pub use spot::{SpotRay, SpotSeries, SpotView};
pub use sweep::{SweepSeries, SweepView};

use crate::evaluation::Evaluation;
use lumenrail_optics::sampling::Grid;
use lumenrail_optics::spot::{SkewSpot, SpotFigures, spot_figures};

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

    pub(crate) fn fraction(self) -> f64 {
        match self {
            Point::OnAxis => 0.0,
            Point::OffAxis => 1.0,
        }
    }
}

/// The plane the spot and fan views look at, and the plane the wavefront and sharpness views refer the
/// wavefront to (their automatic plane is the paraxial image, as in the report).
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
    /// The laser beam's 1/e² diameter along the rail, with its waists.
    Beam,
    /// The wavefront view: OPD fans and wavefront figures of each point (issue 16).
    Wavefront,
    /// The sharpness view: polychromatic MTF against the diffraction limit (issue 16).
    Sharpness,
}

impl ViewKind {
    /// Every view, in menu order.
    pub const ALL: [ViewKind; 8] = [
        ViewKind::Spot,
        ViewKind::Fan,
        ViewKind::Sweep,
        ViewKind::Colour,
        ViewKind::Field,
        ViewKind::Beam,
        ViewKind::Wavefront,
        ViewKind::Sharpness,
    ];

    /// The view's name on the command line and in menus.
    pub fn word(self) -> &'static str {
        match self {
            ViewKind::Spot => "spot",
            ViewKind::Fan => "fan",
            ViewKind::Sweep => "sweep",
            ViewKind::Colour => "colour",
            ViewKind::Field => "field",
            ViewKind::Beam => "beam",
            ViewKind::Wavefront => "wavefront",
            ViewKind::Sharpness => "sharpness",
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
    /// The plane of the spot and fan views, and of the wavefront's reference sphere.
    pub plane: Plane,
    /// How the spot diagram samples the pupil.
    pub grid: Grid,
}

impl Default for ViewRequest {
    fn default() -> ViewRequest {
        ViewRequest { plane: Plane::Auto, grid: Grid::Rings { rings: 6 } }
    }
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
    /// The beam view.
    pub beam: Option<BeamView>,
    /// The wavefront and sharpness views' data: with the automatic plane the evaluation's own figures
    /// (referred to the paraxial image, as the report's), else referred to the plane asked for.
    pub sharpness: Option<crate::sharpness::Sharpness>,
    /// The sharpness view's polychromatic PSF of each of `sharpness`'s points that has one.
    pub psf: Vec<(Point, lumenrail_optics::diffraction::Psf)>,
    /// Why some views are empty.
    pub notes: Vec<String>,
}

/// The plane the wavefront is referred to when the request names one: a screen beyond the last part, the
/// best focus or a rail position, with its words. `None` for the automatic plane (the paraxial image, as
/// in the report), or a screen the light does not reach.
fn wavefront_plane(evaluation: &Evaluation, plane: &Plane) -> Option<(f64, String)> {
    match plane {
        Plane::Auto => None,
        Plane::Screen(name) => evaluation
            .report
            .viewable_screens()
            .find(|s| s.part == *name)
            .map(|s| (s.at_mm, format!("screen \"{name}\" at {} mm", crate::report::fixed(s.at_mm, 3)))),
        Plane::BestFocus => {
            let z = evaluation.analysis()?.spot.as_ref()?.as_ref().ok()?.best_focus_at_mm?;
            Some((z, format!("the best focus at {} mm", crate::report::fixed(z, 3))))
        }
        Plane::At(z) if z.is_finite() => Some((*z, format!("the plane at {} mm", crate::report::fixed(*z, 3)))),
        Plane::At(_) => None,
    }
}

/// What a point's spot and sweep figures are integrated from.
enum Bundle {
    /// The on-axis point: rotationally symmetric rings, converged at the view plane.
    OnAxis(SpotFigures),
    /// The off-axis point: a Gauss polar grid of skew rays.
    OffAxis(SkewSpot),
}

impl Views {
    /// Every view of the evaluated bench.
    pub fn of(evaluation: &Evaluation, request: &ViewRequest) -> Views {
        Views::only(evaluation, request, &ViewKind::ALL)
    }

    /// The views in `kinds` of the evaluated bench (the others are left empty): what an open panel shows.
    pub fn only(evaluation: &Evaluation, request: &ViewRequest, kinds: &[ViewKind]) -> Views {
        let mut views = Views {
            spot: None,
            fan: None,
            sweep: None,
            colour: None,
            field: None,
            beam: None,
            sharpness: None,
            psf: Vec::new(),
            notes: Vec::new(),
        };
        let report = &evaluation.report;
        if let Some(why) = &report.trace_failure {
            views.notes.push(format!("nothing to show: {why}"));
            return views;
        }
        let (Some(compiled), Some(analysis)) = (evaluation.compiled(), evaluation.analysis()) else {
            return views;
        };
        let wants = |k: ViewKind| kinds.contains(&k);
        if wants(ViewKind::Beam) {
            views.beam = beam::beam_view(evaluation);
            if views.beam.is_none() {
                views.notes.push(if evaluation.bench.laser.is_some() {
                    "the laser's beam cannot be traced (the readout says why)".into()
                } else {
                    "no laser on the bench: the beam view shows a laser's beam (add `laser: (…)` to the bench file)"
                        .into()
                });
            }
            // The beam needs no image plane: the other views' notes would not concern it.
            if kinds.iter().all(|&k| k == ViewKind::Beam) {
                return views;
            }
        }
        if wants(ViewKind::Wavefront) || wants(ViewKind::Sharpness) {
            views.sharpness = evaluation.traced.as_ref().and_then(|t| {
                let (bench, object) = (&evaluation.bench, t.compiled.object);
                match wavefront_plane(evaluation, &request.plane) {
                    Some((z, plane)) => Some(crate::sharpness::Sharpness::of(
                        bench,
                        &t.analysis,
                        object,
                        z,
                        plane,
                        crate::sharpness::EVALUATION_SAMPLES_ACROSS,
                    )),
                    // A live evaluation left its own figures to its job: the view computes them itself
                    // (compiling and analysing nothing).
                    None if report.sharpness_pending => {
                        crate::sharpness::Sharpness::at_paraxial_image(bench, &t.analysis, object)
                    }
                    None => t.sharpness.clone(),
                }
            });
            match &views.sharpness {
                None => views.notes.push("no wavefront: the bench has no real final image to refer it to".into()),
                Some(s) => {
                    views.notes.extend(s.notes.iter().cloned());
                    if wants(ViewKind::Sharpness) {
                        views.psf = s
                            .points
                            .iter()
                            .filter_map(|p| Some((p.point, p.psf_padded(crate::sharpness::SHOWN_PADDING)?)))
                            .collect();
                    }
                }
            }
        }
        if wants(ViewKind::Colour) {
            views.colour = colour::colour_view(evaluation, compiled, analysis);
        }
        let primary = analysis.primary();
        let Ok(pupils) = &primary.pupils else {
            views.notes.push("no aperture limits the light, so there is no pupil to fill".into());
            return views;
        };
        if primary.final_image_at_mm().is_none() {
            views.notes.push(if report.afocal.is_some() {
                "the bench is afocal: the light leaves parallel, so there is no image plane to look at".into()
            } else {
                "the final image is at infinity (the light leaves parallel), so there is no image plane to look at"
                    .into()
            });
            return views;
        }
        let Some(Ok(best)) = &analysis.spot else {
            views.notes.push("the on-axis light does not reach an image".into());
            return views;
        };
        let Some(best_focus_at_mm) = best.best_focus_at_mm else {
            views.notes.push("the on-axis light leaves collimated, so it has no focus to look at".into());
            return views;
        };
        let off_axis = match evaluation.bench.object {
            crate::model::ObjectSpec::Point { height_mm, .. } => height_mm != 0.0,
            crate::model::ObjectSpec::Distant { field_deg, .. } => field_deg != 0.0,
        };
        let points: &[Point] = if off_axis { &[Point::OnAxis, Point::OffAxis] } else { &[Point::OnAxis] };
        let (plane_at_mm, plane_label) = spot::choose_plane(evaluation, &request.plane, best_focus_at_mm);
        let object = compiled.object;
        if wants(ViewKind::Fan) {
            views.fan = Some(fan::fan_view(analysis, object, points, plane_at_mm));
        }
        if wants(ViewKind::Spot) || wants(ViewKind::Sweep) {
            // Each point's bundle at each wavelength, integrated once for both views.
            let mut bundles = Vec::new();
            for &point in points {
                for (k, w) in analysis.wavelengths.iter().enumerate() {
                    let Ok(p) = &w.pupils else { continue };
                    let bundle = match point {
                        Point::OnAxis => spot_figures(&w.seq, object, p, &[plane_at_mm]).ok().map(Bundle::OnAxis),
                        Point::OffAxis => SkewSpot::converged(&w.seq, object, p, 1.0, plane_at_mm).map(Bundle::OffAxis),
                    };
                    if let Some(b) = bundle {
                        bundles.push((point, k, b));
                    }
                }
            }
            if wants(ViewKind::Spot) {
                let spot = spot::spot_view(analysis, object, request, plane_at_mm, plane_label, report, &bundles);
                for &point in points {
                    if !spot.series.iter().any(|s| s.point == point) {
                        views.notes.push(format!(
                            "no ray from the {} point can be aimed through the stop to the image",
                            point.word()
                        ));
                    }
                }
                views.spot = Some(spot);
            }
            if wants(ViewKind::Sweep) {
                views.sweep =
                    Some(sweep::sweep_view(analysis, object, report, best_focus_at_mm, plane_at_mm, &bundles));
            }
        }
        if wants(ViewKind::Field) {
            views.field = field::field_view(evaluation, analysis, object, pupils);
            match &views.field {
                None if off_axis => {
                    views.notes.push("no field figures: the off-axis bundles cannot be traced to their foci".into())
                }
                Some(f) if f.points.len() < field::FIELD_POINTS => views.notes.push(format!(
                    "the field view has {} of its {} points: the bundles of the others do not get through",
                    f.points.len(),
                    field::FIELD_POINTS
                )),
                _ => {}
            }
        }
        views
    }
}
