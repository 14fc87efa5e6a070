//! The CSV text of each view: a header row with units, then one row per datum, so that a script can
//! recompute every figure the view shows.

use lumenrail_bench::views::{ViewKind, Views};
use std::fmt::Write as _;

/// The CSV text of one view (`None` when the view has no data).
pub fn view_csv(views: &Views, kind: ViewKind) -> Option<String> {
    let mut t = String::new();
    match kind {
        ViewKind::Spot => {
            let v = views.spot.as_ref()?;
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
            let v = views.fan.as_ref()?;
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
            let v = views.sweep.as_ref()?;
            t.push_str("point,wavelength_nm,plane_at_mm,rms_radius_mm\n");
            for s in &v.series {
                for (z, r) in &s.samples {
                    let _ = writeln!(t, "{},{},{z},{r}", s.point.word(), s.wavelength_nm);
                }
            }
        }
        ViewKind::Colour => {
            let v = views.colour.as_ref()?;
            t.push_str("wavelength_nm,focus_at_mm,lateral_colour_mm\n");
            let opt = |v: Option<f64>| v.map_or_else(String::new, |v| format!("{v}"));
            for s in &v.samples {
                let _ = writeln!(t, "{},{},{}", s.wavelength_nm, opt(s.focus_at_mm), opt(s.lateral_colour_mm));
            }
        }
        ViewKind::Field => {
            let v = views.field.as_ref()?;
            let unit = if v.field_label.starts_with("object") { "object_height_mm" } else { "field_angle_deg" };
            let _ = writeln!(t, "{unit},tangential_focus_mm,sagittal_focus_mm,distortion_percent");
            for p in &v.points {
                let d = p.distortion_percent.map_or_else(String::new, |d| format!("{d}"));
                let _ = writeln!(t, "{},{},{},{d}", p.field, p.tangential_mm, p.sagittal_mm);
            }
        }
        ViewKind::Beam => {
            let v = views.beam.as_ref()?;
            // One table: the envelope's samples (space 0 is the laser's), then the waists, then the parts.
            t.push_str("row,space_or_name,z_mm,diameter_mm\n");
            for (k, run) in v.runs.iter().enumerate() {
                for (z, d) in run {
                    let _ = writeln!(t, "envelope,{k},{z},{d}");
                }
            }
            for w in &v.waists {
                let _ = writeln!(t, "waist,{},{},{}", quoted(&format!("after {}", w.after)), w.at_mm, w.diameter_mm);
            }
            for p in &v.parts {
                let _ = writeln!(t, "part,{},{},{}", quoted(&p.part), p.at_mm, p.diameter_mm);
            }
        }
        ViewKind::Wavefront => {
            let v = views.sharpness.as_ref()?;
            t.push_str("point,wavelength_nm,fan,pupil_coordinate,opd_waves\n");
            for p in &v.points {
                for w in &p.waves {
                    let wf = &w.wavefront;
                    for (name, fan) in [("tangential", &wf.tangential_fan), ("sagittal", &wf.sagittal_fan)] {
                        for f in fan {
                            let _ = writeln!(t, "{},{},{name},{},{}", p.point.word(), wf.wavelength_nm, f.p, f.waves);
                        }
                    }
                }
            }
        }
        ViewKind::Sharpness => {
            let v = views.sharpness.as_ref()?;
            t.push_str("point,frequency_per_mm,tangential,sagittal,limit_tangential,limit_sagittal\n");
            for p in &v.points {
                let Some(m) = &p.mtf else { continue };
                for (i, f) in m.frequencies_per_mm.iter().enumerate() {
                    let _ = writeln!(
                        t,
                        "{},{f},{},{},{},{}",
                        p.point.word(),
                        m.tangential[i],
                        m.sagittal[i],
                        m.limit_tangential[i],
                        m.limit_sagittal[i]
                    );
                }
            }
        }
    }
    Some(t)
}

/// A CSV field: quoted (with inner quotes doubled) when it holds a comma, a quote or a line break.
fn quoted(field: &str) -> String {
    if field.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", field.replace('"', "\"\""))
    } else {
        field.to_string()
    }
}
