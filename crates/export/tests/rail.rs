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
