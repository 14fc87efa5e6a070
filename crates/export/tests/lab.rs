//! Lab sheet PDFs read back by independent readers: their text by lopdf (the positions and figures of the
//! answer key are there as printed) and their pages rendered by hayro (not blank; the drawing is drawn).

use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::file::parse;
use lumenrail_bench::lab::{Key, Lab, LabSheet};
use lumenrail_bench::report::fixed;
use lumenrail_export::lab::{Paper, answers_pdf, sheet_pdf};

fn evaluation(demo: &str) -> Evaluation {
    let d = lumenrail_bench::demos::find(demo).unwrap();
    Evaluation::of(&parse(demo, d.text).unwrap().bench)
}

/// Every page's text, as lopdf extracts it.
fn text(pdf: &[u8]) -> String {
    let doc = lopdf::Document::load_mem(pdf).expect("lopdf reads the PDF");
    let pages: Vec<u32> = doc.get_pages().keys().copied().collect();
    assert!(!pages.is_empty());
    doc.extract_text(&pages).expect("text")
}

/// Renders every page with hayro at 1 px per point; returns (width, height, RGBA) of each.
fn render(pdf: &[u8]) -> Vec<(usize, usize, Vec<u8>)> {
    use hayro::hayro_interpret::InterpreterSettings;
    use hayro::hayro_syntax::Pdf;
    use hayro::{PixmapSettings, RenderCache, RenderSettings};
    let doc = Pdf::new(pdf.to_vec()).expect("hayro reads the PDF");
    let cache = RenderCache::new();
    doc.pages()
        .iter()
        .map(|page| {
            let pix = hayro::render(
                page,
                &cache,
                &InterpreterSettings::default(),
                &RenderSettings::default(),
                &PixmapSettings::default(),
            );
            (usize::from(pix.width()), usize::from(pix.height()), pix.data_as_u8_slice().to_vec())
        })
        .collect()
}

/// The share of a region's pixels that are not white (ink).
fn ink(page: &(usize, usize, Vec<u8>), rows: std::ops::Range<usize>) -> f64 {
    let (w, _, data) = page;
    let mut inked = 0usize;
    let mut all = 0usize;
    for y in rows {
        for x in 0..*w {
            let p = &data[4 * (y * w + x)..4 * (y * w + x) + 4];
            all += 1;
            if p[3] > 0 && (p[0] < 200 || p[1] < 200 || p[2] < 200) {
                inked += 1;
            }
        }
    }
    inked as f64 / all.max(1) as f64
}

fn keep(name: &str, page: &(usize, usize, Vec<u8>)) {
    // Set LUMENRAIL_KEEP_PAGES=DIR to look at the rendered pages.
    if let Ok(dir) = std::env::var("LUMENRAIL_KEEP_PAGES") {
        let (w, h, data) = page;
        let img = image::RgbaImage::from_raw(*w as u32, *h as u32, data.clone()).unwrap();
        img.save(std::path::Path::new(&dir).join(format!("{name}.png"))).unwrap();
    }
}

/// The displacement lab on A4 and Letter: the class's sheet names the parts at their rail positions and
/// draws the bench (ink in the drawing's band, under the title); the answer key holds the two lens
/// positions, the displacement, f and the systematic error exactly as the key computes them.
#[test]
fn the_displacement_sheet_and_key_read_back() {
    let e = evaluation("bessel-lab");
    let sheet = LabSheet::of(&e, Lab::Displacement).unwrap();
    let Key::Displacement(k) = &sheet.key else { panic!() };
    for (paper, size) in [(Paper::A4, (595, 841)), (Paper::Letter, (612, 792))] {
        let pdf = sheet_pdf(&e, &sheet, paper).unwrap();
        let t = text(&pdf);
        for want in
            ["Focal length by the displacement method", "Unknown lens", "300.0 mm", "650.0 mm", "Readings", "Safety"]
        {
            assert!(t.contains(want), "{want:?} not in the sheet's text:\n{t}");
        }
        assert!(!t.contains(&fixed(k.first_at_mm, 2)), "the class's sheet gives no answers");
        let pages = render(&pdf);
        let first = &pages[0];
        // hayro renders at 1 px per point, rounding down: A4 is 595.28 × 841.89 pt.
        assert_eq!((first.0, first.1), size, "{paper:?}");
        keep(&format!("displacement-{}", paper.word()), first);
        // The drawing band: from about 110 pt below the top edge, 230 pt tall.
        let drawing = ink(first, 110..330);
        assert!(drawing > 0.01, "the drawing is drawn: {drawing}");
        assert!(ink(first, 0..first.1) > 0.02, "the page is not blank");
        let answers = answers_pdf(&sheet, paper).unwrap();
        let t = text(&answers);
        for want in [
            fixed(k.first_at_mm, 2),
            fixed(k.second_at_mm, 2),
            fixed(k.displacement_mm, 2),
            fixed(k.focal_mm, 2),
            fixed(k.systematic_error_mm, 2),
        ] {
            assert!(t.contains(&format!("{want} mm")), "{want} mm not in the key's text:\n{t}");
        }
        let pages = render(&answers);
        keep(&format!("displacement-answers-{}", paper.word()), &pages[0]);
        assert!(ink(&pages[0], 0..pages[0].1) > 0.005, "the key is not blank");
    }
}

/// The autocollimation and magnification labs: their sheets and keys hold their own figures.
#[test]
fn the_other_labs_read_back() {
    let e = evaluation("autocollimation");
    let sheet = LabSheet::of(&e, Lab::Autocollimation).unwrap();
    let t = text(&answers_pdf(&sheet, Paper::A4).unwrap());
    assert!(t.contains("170.00 mm") && t.contains("150.00 mm"), "{t}");
    let pdf = sheet_pdf(&e, &sheet, Paper::Letter).unwrap();
    assert!(text(&pdf).contains("Flat mirror"));
    let pages = render(&pdf);
    keep("autocollimation-letter", &pages[0]);
    assert!(ink(&pages[0], 110..330) > 0.01);
    let e = evaluation("one-lens-screen");
    let sheet = LabSheet::of(&e, Lab::Magnification).unwrap();
    let t = text(&answers_pdf(&sheet, Paper::A4).unwrap());
    assert!(t.contains("-0.5000") && t.contains("450.00 mm"), "{t}");
    // A bench that cannot hold the lab says why instead of printing a sheet.
    assert!(LabSheet::of(&evaluation("keplerian-telescope"), Lab::Displacement).is_err());
}
