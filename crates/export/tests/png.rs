//! The view pictures drawn without a window: the plots fill the picture, leaving no empty band beneath.

use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::views::{ViewKind, ViewRequest, Views};
use lumenrail_export::plots::view_png;

#[test]
fn view_pictures_have_no_empty_band_at_the_bottom() {
    for kind in ViewKind::ALL {
        // The beam view needs a laser on the bench.
        let demo = if kind == ViewKind::Beam { "laser-pinhole" } else { "camera-meniscus" };
        let b = lumenrail_bench::file::parse("t", lumenrail_bench::demos::find(demo).unwrap().text).unwrap().bench;
        let views = Views::only(&Evaluation::of(&b), &ViewRequest::default(), &[kind]);
        let img = view_png(&views, kind, &b.title);
        let (w, h) = img.dimensions();
        let bg = *img.get_pixel(w - 1, h - 1);
        let differs = |p: &image::Rgba<u8>| p.0.iter().zip(bg.0).any(|(a, b)| a.abs_diff(b) > 30);
        let last = (0..h).rev().find(|&y| (0..w).any(|x| differs(img.get_pixel(x, y)))).unwrap();
        assert!(last as f64 >= 0.88 * h as f64, "{kind:?}: drawing ends at row {last} of {h}");
    }
}
