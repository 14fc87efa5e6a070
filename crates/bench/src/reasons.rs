//! Why a figure of the report is null: every null in the report's JSON gets a sibling key `NAME_why` that
//! says, in words, why that figure is undefined or absent for this bench (an afocal bench's focal length,
//! an image at infinity's position, a distant object's magnification, a bench without a laser's beam), so a
//! program reading the JSON never meets an unexplained null, and never a NaN or an infinity.

use crate::report::Report;
use serde_json::{Map, Value};

/// Adds `NAME_why` beside every null `NAME` in `value` (the report serialised), in every object however
/// deep; arrays' objects are walked too.
pub(crate) fn annotate(value: &mut Value, report: &Report) {
    let mut path = Vec::new();
    walk(value, report, &mut path);
}

fn walk(value: &mut Value, report: &Report, path: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            let nulls: Vec<String> = map.iter().filter(|(_, v)| v.is_null()).map(|(k, _)| k.clone()).collect();
            for (k, v) in map.iter_mut() {
                path.push(k.clone());
                walk(v, report, path);
                path.pop();
            }
            add_reasons(map, &nulls, report, path);
        }
        Value::Array(items) => {
            for (i, v) in items.iter_mut().enumerate() {
                path.push(i.to_string());
                walk(v, report, path);
                path.pop();
            }
        }
        _ => {}
    }
}

fn add_reasons(map: &mut Map<String, Value>, nulls: &[String], report: &Report, path: &[String]) {
    for k in nulls {
        let why = why_null(report, path, k, map);
        map.insert(format!("{k}_why"), Value::String(why));
    }
}

/// Why `key` (in the object at `path`, whose other fields are `siblings`) is null.
fn why_null(r: &Report, path: &[String], key: &str, siblings: &Map<String, Value>) -> String {
    let afocal = r.afocal.is_some();
    let section = path.first().map(String::as_str).unwrap_or("");
    let untraced = r.trace_failure.is_some();
    let final_at_infinity = r.images.last().is_some_and(|i| i.at_mm.is_none());
    let no_finite_image = if untraced {
        "the bench cannot be traced as asked (see trace_failure)".to_string()
    } else if afocal {
        "the bench is afocal: parallel light leaves parallel, so there is no image at a finite distance".to_string()
    } else if final_at_infinity {
        "the final image is at infinity (the light leaves parallel, for viewing)".to_string()
    } else if r.images.last().is_some_and(|i| !i.real) {
        "the final image is virtual: it cannot be caught on a screen".to_string()
    } else {
        "there is no final image at a finite distance".to_string()
    };
    let s = |t: &str| t.to_string();
    match (section, key) {
        (_, "trace_failure") => s("the bench was traced"),
        (_, "beam") => s("no laser on the bench"),
        (_, "stray") => s("no part has a glass surface that reflects, so there is no stray light to follow"),
        (_, "afocal") => s("the bench is not afocal: it has a focal length"),
        (_, "viewing") => s("the final image is real (a screen can catch it), or there is none"),
        (_, "stop") => s("nothing limits the light: no aperture stop"),
        (_, "field") => format!("no field figures: {no_finite_image}, or no off-axis point"),
        (_, "seidel") => s("no Seidel sums: the paraxial rays do not reach image space"),
        (_, "off_axis_clipped_by") => s("nothing clips the off-axis point's pupil"),
        (_, "intercepted_by") => s("no part intercepts the light before this image forms"),
        (_, "after_part") => s("the waist lies in the laser's own beam, before any part"),
        (_, "power_mw") => s("the laser's power is not given"),
        (_, "eye") => s("no eye part on the bench"),
        (_, "instrument") => s("the bench is neither afocal nor forms an image for viewing: no instrument figures"),
        ("eye", "near_point_mm") => s("the eye cannot accommodate (no amplitude), so its near point is its far point"),
        ("eye", "near_spectacle_power_d") => s("the object is not near: no reading lens is needed"),
        ("instrument", "angular_magnification") => {
            s("the bench is not an afocal telescope, or its final image is not at infinity")
        }
        ("instrument", "magnifying_power_as_arranged") => {
            s("the object is distant or its off-axis point is on the axis: there is no angle at 250 mm to compare with")
        }
        ("instrument", "field_of_view" | "real_field_mm") => {
            s("no field stop found: nothing limits the chief ray, so the field is not bounded by the bench")
        }
        ("instrument", "magnifying_power_relaxed" | "magnifying_power_near_point") => {
            s("not a single magnifier: these figures are for one lens held before the eye")
        }
        ("instrument", _) => s("not a microscope: no objective and eyepiece pair to name"),
        ("beam", "peak_irradiance_w_per_cm2") => s("the laser's power is not given, so no irradiance"),
        ("warnings", "part") => s("this warning is about the whole bench, not one part"),
        ("field", "lateral_colour_mm") => s("one wavelength only: lateral colour needs two or more"),
        ("stray", "note") => s("every reflecting surface is followed"),
        ("stray", "diameter_mm") => s("without a laser a paraxial focus is a point: no beam size to give"),
        ("stray", "peak_irradiance_w_per_cm2") => s("no laser power given (or no laser), so no irradiance"),
        ("stray", "nearest") => s("no surface or laser exit to measure from"),
        ("stray", "diameter_at_source_mm") => s(
            "not a back-reflection towards a source of finite size (a double reflection, or a distant object without a laser)",
        ),
        ("stray", "screen" | "diameter_at_screen_mm") => {
            s("this reflection travels back towards the source, or no screen lies beyond the last surface")
        }
        ("stray", "screen_irradiance_share") => {
            s("no screen share: the reflection does not reach a screen, focuses to a point on it, or there is no laser")
        }
        ("first_order", "f_number") if !afocal => s("no aperture stop, so no entrance pupil"),
        ("first_order", _) if untraced => s("the bench cannot be traced as asked (see trace_failure)"),
        ("first_order", _) if afocal => s(
            "the bench is afocal: parallel light leaves parallel, so there is no focal length, focal point, principal or nodal plane",
        ),
        ("first_order", _) => s("no part has power, so there is no focal length"),
        ("images", "at_mm") => s("this image is at infinity: the light leaves this part parallel"),
        ("images", "height_mm") => s("this image is at infinity: its size is an angle, not a height"),
        ("images", "magnification") => {
            if siblings.get("at_mm").is_some_and(Value::is_null) {
                s("this image is at infinity: it has an angular size, not a magnification")
            } else {
                s("the object is at infinity: its image has a size but no magnification")
            }
        }
        ("colour", "image_at_mm") => s("at this wavelength the final image is at infinity"),
        ("viewing", _) => s("the image is at infinity, for a relaxed eye"),
        ("afocal", _) | ("stop", _) => s("no exit pupil: the stop's image is at infinity or the stop is missing"),
        ("screens", "rms_spot_um" | "geometric_spot_um" | "rms_over_airy") => {
            s("no spot figure at this screen: no light reaches it, or the bundle cannot be traced to it")
        }
        ("screens", _) => {
            s("no best focus: the light reaching this screen has no finite plane of least blur (parallel or diverging)")
        }
        ("aberrations", _) | (_, "off_axis_transmission" | "off_axis_area_transmission" | "unclipped_field") => {
            if key.contains("transmission") || key == "unclipped_field" {
                s("the off-axis point's vignetting could not be found: its chief ray cannot be aimed through the stop")
            } else {
                no_finite_image
            }
        }
        _ => s("not defined for this bench (the text report says why)"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demos::DEMOS;
    use crate::evaluation::Evaluation;

    fn nulls(v: &Value, path: &str, out: &mut Vec<String>) {
        match v {
            Value::Object(m) => {
                for (k, x) in m {
                    if x.is_null() {
                        out.push(format!("{path}.{k}"));
                        assert!(
                            m.get(&format!("{k}_why")).is_some_and(Value::is_string),
                            "{path}.{k} has no reason beside it"
                        );
                    }
                    nulls(x, &format!("{path}.{k}"), out);
                }
            }
            Value::Array(a) => a.iter().enumerate().for_each(|(i, x)| nulls(x, &format!("{path}[{i}]"), out)),
            _ => {}
        }
    }

    /// Every null in every demo's JSON report has its reason beside it, none the catch-all, and the
    /// afocal telescope's focal length says it is afocal.
    #[test]
    fn every_null_has_a_reason_beside_it() {
        for d in DEMOS {
            let b = crate::file::parse(d.name, d.text).unwrap().bench;
            let json: Value = serde_json::from_str(&Evaluation::of(&b).report.to_json()).unwrap();
            let mut found = Vec::new();
            nulls(&json, "", &mut found);
            let text = json.to_string();
            assert!(!text.contains("not defined for this bench"), "{}: a null without its own reason", d.name);
            if d.name == "keplerian-telescope" {
                assert!(found.iter().any(|p| p == ".first_order.efl_mm"));
                let why = json["first_order"]["efl_mm_why"].as_str().unwrap();
                assert!(why.contains("afocal"), "{why}");
            }
        }
    }
}
