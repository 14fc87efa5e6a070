//! The rail drawing read back by an independent XML reader (roxmltree): the title, every part, every drawn
//! ray, and positions that the drawing's own scale gives back in millimetres.

use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_export::rail::rail_svg;
use lumenrail_export::scene::Scene;

#[test]
fn every_demo_draws_to_scale_and_reads_back() {
    for d in DEMOS {
        let bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
        let evaluation = Evaluation::of(&bench);
        let scene = Scene::of(&evaluation);
        let text = rail_svg(&evaluation, &scene);
        let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("{}: {e}", d.name));
        let root = doc.root_element();
        assert_eq!(root.tag_name().name(), "svg");
        let by_id = |id: &str| doc.descendants().find(|n| n.attribute("id") == Some(id)).unwrap();
        assert_eq!(by_id("title").text().unwrap().trim(), bench.title, "{}", d.name);
        // The scale: two ticks give the drawing's millimetres.
        let ticks: Vec<(f64, f64)> = by_id("scale")
            .descendants()
            .filter(|n| n.attribute("class") == Some("tick"))
            .map(|n| (n.attribute("data-mm").unwrap().parse().unwrap(), n.attribute("x").unwrap().parse().unwrap()))
            .collect();
        assert!(ticks.len() >= 3, "{}", d.name);
        let ((z0, x0), (z1, x1)) = (ticks[0], ticks[ticks.len() - 1]);
        let mm_at = |x: f64| z0 + (x - x0) * (z1 - z0) / (x1 - x0);
        // Every part is drawn where the bench puts it, to 1e-3 mm (coordinates are written to 1e-3 px).
        let parts: Vec<_> = by_id("parts").children().filter(|n| n.attribute("data-part").is_some()).collect();
        assert_eq!(parts.len(), bench.parts.len(), "{}", d.name);
        for g in parts {
            let name = g.attribute("data-part").unwrap();
            let part = bench.part(name).unwrap();
            let label = g.descendants().find(|n| n.tag_name().name() == "text").unwrap();
            assert_eq!(label.text().unwrap().trim(), name);
            let x: f64 = label.attribute("x").unwrap().parse().unwrap();
            assert!(
                (mm_at(x) - part.at_mm).abs() < 2e-3,
                "{}: {name} drawn at {} mm, not {}",
                d.name,
                mm_at(x),
                part.at_mm
            );
        }
        // One polyline per drawn ray.
        let rays = by_id("rays").children().filter(|n| n.tag_name().name() == "polyline").count();
        assert_eq!(rays, scene.rays.len(), "{}", d.name);
        // Real images solid, virtual ones dashed.
        for (img, g) in
            scene.images.iter().zip(by_id("images").children().filter(|n| n.attribute("class") == Some("image")))
        {
            let line = g.children().find(|n| n.tag_name().name() == "line").unwrap();
            assert_eq!(line.attribute("stroke-dasharray").is_some(), !img.real, "{}", d.name);
        }
    }
}

/// The rail drawing as PNG, at a size the user chose, read back by the `image` crate's PNG decoder: the
/// picture has that size, the title is drawn in the top band, and the rail's scale line runs across the
/// picture from the datum to the rail's end, where the SVG laid out for the same size puts it.
#[test]
fn the_rail_png_is_the_svg_drawing_at_the_chosen_size() {
    let d = lumenrail_bench::demos::find("unit-relay").unwrap();
    let bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
    let evaluation = Evaluation::of(&bench);
    let scene = Scene::of(&evaluation);
    for (w, h) in [(1600u32, 700u32), (900, 400)] {
        let bytes = lumenrail_export::rail::rail_png(&evaluation, &scene, w, h).unwrap();
        let png = image::load_from_memory_with_format(&bytes, image::ImageFormat::Png).unwrap().to_rgba8();
        assert_eq!(png.dimensions(), (w, h));
        let dark = |x: u32, y: u32| {
            let p = png.get_pixel(x, y);
            p[3] > 200 && u32::from(p[0]) + u32::from(p[1]) + u32::from(p[2]) < 200
        };
        // The title: dark pixels in the top band, left of the middle.
        assert!((0..40).any(|y| (40..w / 2).any(|x| dark(x, y))), "{w}×{h}: no title");
        // The scale line (2 px wide, black) at the SVG's own y, from x(0) to x(rail).
        let svg = lumenrail_export::rail::rail_svg_sized(&evaluation, &scene, (f64::from(w), f64::from(h)));
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let line = doc
            .descendants()
            .find(|n| n.attribute("id") == Some("scale"))
            .and_then(|g| g.children().find(|n| n.tag_name().name() == "line"))
            .unwrap();
        let num = |k: &str| line.attribute(k).unwrap().parse::<f64>().unwrap();
        let (x1, x2, y) = (num("x1"), num("x2"), num("y1"));
        let row = y.floor() as u32;
        let run: Vec<u32> = (0..w).filter(|&x| dark(x, row) || dark(x, row.saturating_sub(1))).collect();
        let (first, last) = (*run.first().unwrap(), *run.last().unwrap());
        // Within two pixels of the SVG's ends (antialiasing of the line's ends and of the end ticks).
        assert!((f64::from(first) - x1).abs() <= 2.0, "{w}×{h}: line starts at {first}, svg {x1}");
        assert!((f64::from(last) - x2).abs() <= 2.0, "{w}×{h}: line ends at {last}, svg {x2}");
        assert!(run.len() as f64 >= 0.95 * (x2 - x1), "{w}×{h}: the line has gaps");
    }
    // Too large a picture is refused in words, not attempted.
    assert!(lumenrail_export::rail::rail_png(&evaluation, &scene, 9000, 500).is_err());
}

/// A laser bench's scene carries the beam's 1/e² envelope from the laser's waist to the last screen,
/// the same beam as the report's (its radius on the far card is half the report's diameter there).
#[test]
fn the_scene_carries_the_laser_envelope_to_the_last_screen() {
    let d = lumenrail_bench::demos::find("laser-expander").unwrap();
    let bench = lumenrail_bench::file::parse(d.name, d.text).unwrap().bench;
    let evaluation = Evaluation::of(&bench);
    let scene = Scene::of(&evaluation);
    assert!(!scene.beam.is_empty());
    let (z_end, r_end) = *scene.beam.last().unwrap().last().unwrap();
    let card = &evaluation.report.beam.as_ref().unwrap().screens[0];
    assert!((z_end - card.at_mm).abs() < 1e-9, "{z_end} vs {}", card.at_mm);
    assert!((2.0 * r_end - card.diameter_mm).abs() < 1e-9 * card.diameter_mm, "{r_end} vs {}", card.diameter_mm);
    let (z0, r0) = scene.beam[0][0];
    assert!((z0 - 20.0).abs() < 1e-12 && (2.0 * r0 - 0.8).abs() < 1e-12, "starts at the laser's waist");
    // Without a laser there is no envelope.
    let plain = Evaluation::of(
        &lumenrail_bench::file::parse("t", lumenrail_bench::demos::find("unit-relay").unwrap().text).unwrap().bench,
    );
    assert!(Scene::of(&plain).beam.is_empty());
}
