//! Lab sheets as PDF: the printable handout of a measurement lab for the class (the bench drawn to scale,
//! the parts list with rail positions, the procedure, a blank readings table, the cautions) and the
//! instructor's answer key on separate pages, A4 or US Letter.
//!
//! The pages are written with pdf-writer in the standard Helvetica faces (WinAnsi encoding, so a PDF
//! reader extracts the text as written); the rail drawing is the rail SVG of [`crate::rail`] embedded as a
//! vector form by svg2pdf, its labels as outlines. Every figure is the [`LabSheet`]'s, which reads the
//! bench's one evaluation.

use crate::rail::rail_svg_sized;
use crate::scene::Scene;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::lab::LabSheet;
use lumenrail_bench::report::fixed;
use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, Str};
use std::collections::HashMap;

/// A paper size.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Paper {
    /// ISO A4, 210 × 297 mm.
    A4,
    /// US Letter, 8.5 × 11 in.
    Letter,
}

impl Paper {
    /// The word the command line takes.
    pub fn word(self) -> &'static str {
        match self {
            Paper::A4 => "a4",
            Paper::Letter => "letter",
        }
    }

    /// The paper by its word.
    pub fn from_word(word: &str) -> Option<Paper> {
        [Paper::A4, Paper::Letter].into_iter().find(|p| p.word() == word.to_ascii_lowercase())
    }

    /// Width and height in PDF points (1/72 in).
    pub fn size_pt(self) -> (f32, f32) {
        match self {
            Paper::A4 => (210.0 / 25.4 * 72.0, 297.0 / 25.4 * 72.0),
            Paper::Letter => (612.0, 792.0),
        }
    }
}

/// Why a lab sheet PDF could not be made.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct LabPdfError(pub String);

const MARGIN: f32 = 48.0;
const DRAWING_HEIGHT: f32 = 230.0;
const BODY: f32 = 10.0;
const REGULAR: Name<'static> = Name(b"F1");
const BOLD: Name<'static> = Name(b"F2");
const DRAWING: Name<'static> = Name(b"D1");

/// Text as WinAnsi bytes: the characters of our sheets that the encoding has, and plain stand-ins for
/// those it lacks (a minus sign as a hyphen, primes as apostrophes).
fn win_ansi(text: &str) -> Vec<u8> {
    let mut out = Vec::with_capacity(text.len());
    for c in text.chars() {
        match c {
            ' '..='~' => out.push(c as u8),
            'µ' => out.push(0xB5),
            '°' => out.push(0xB0),
            '²' => out.push(0xB2),
            '±' => out.push(0xB1),
            '×' => out.push(0xD7),
            '—' => out.push(0x97),
            '–' => out.push(0x96),
            '′' | '’' | '‘' => out.push(b'\''),
            '“' | '”' => out.push(b'"'),
            '−' => out.push(b'-'),
            '√' => out.extend_from_slice(b"sqrt"),
            _ => out.push(b'?'),
        }
    }
    out
}

/// Helvetica's advance widths are about half the size on average; wrapping at 0.52 em keeps lines inside.
fn wrap(text: &str, size: f32, width: f32) -> Vec<String> {
    let per_line = ((width / (0.52 * size)) as usize).max(10);
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > per_line {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// Pages being laid out top to bottom: one content stream per page.
struct Layout {
    size: (f32, f32),
    pages: Vec<Content>,
    y: f32,
    /// Pages (by index) that show the drawing.
    drawing_on: Vec<usize>,
}

impl Layout {
    fn new(paper: Paper) -> Layout {
        let size = paper.size_pt();
        Layout { size, pages: vec![Content::new()], y: size.1 - MARGIN, drawing_on: Vec::new() }
    }

    fn width(&self) -> f32 {
        self.size.0 - 2.0 * MARGIN
    }

    fn page(&mut self) -> &mut Content {
        self.pages.last_mut().expect("a page")
    }

    /// Room for `height` points, or a new page.
    fn room(&mut self, height: f32) {
        if self.y - height < MARGIN {
            self.pages.push(Content::new());
            self.y = self.size.1 - MARGIN;
        }
    }

    fn text_at(&mut self, x: f32, y: f32, font: Name<'static>, size: f32, text: &str) {
        let bytes = win_ansi(text);
        self.page().begin_text().set_font(font, size).next_line(x, y).show(Str(&bytes)).end_text();
    }

    fn line(&mut self, font: Name<'static>, size: f32, text: &str) {
        for l in wrap(text, size, self.width()) {
            self.room(size * 1.35);
            self.y -= size * 1.35;
            let y = self.y;
            self.text_at(MARGIN, y, font, size, &l);
        }
    }

    fn indented(&mut self, mark: &str, text: &str) {
        let indent = 16.0;
        let lines = wrap(text, BODY, self.width() - indent);
        for (k, l) in lines.iter().enumerate() {
            self.room(BODY * 1.35);
            self.y -= BODY * 1.35;
            let y = self.y;
            if k == 0 {
                self.text_at(MARGIN, y, REGULAR, BODY, mark);
            }
            self.text_at(MARGIN + indent, y, REGULAR, BODY, l);
        }
    }

    fn heading(&mut self, text: &str) {
        self.room(40.0);
        self.y -= 8.0;
        self.line(BOLD, 12.0, text);
        self.y -= 2.0;
    }

    /// A table: column heads and rows of cells, columns sharing the width by `weights`; `boxed` draws the
    /// grid (for the blank readings table).
    fn table(&mut self, heads: &[String], rows: &[Vec<String>], weights: &[f32], boxed: bool) {
        let total: f32 = weights.iter().sum();
        let widths: Vec<f32> = weights.iter().map(|w| w / total * self.width()).collect();
        let row_h = if boxed { 22.0 } else { BODY * 1.45 };
        let all = std::iter::once(heads.to_vec()).chain(rows.iter().cloned()).collect::<Vec<_>>();
        for (k, cells) in all.iter().enumerate() {
            self.room(row_h);
            self.y -= row_h;
            let y = self.y;
            let mut x = MARGIN;
            for (c, cell) in cells.iter().enumerate() {
                let font = if k == 0 { BOLD } else { REGULAR };
                let w = widths.get(c).copied().unwrap_or(60.0);
                if !cell.is_empty() {
                    self.text_at(x + 3.0, y + 0.35 * row_h, font, if k == 0 { 9.0 } else { BODY }, cell);
                }
                if boxed {
                    self.page().set_line_width(0.6).rect(x, y, w, row_h).stroke();
                }
                x += w;
            }
        }
    }

    /// Leaves room for the drawing and marks its place on this page.
    fn drawing(&mut self) -> (f32, f32) {
        self.room(DRAWING_HEIGHT + 20.0);
        self.y -= DRAWING_HEIGHT;
        let at = (MARGIN, self.y);
        self.drawing_on.push(self.pages.len() - 1);
        let w = self.width();
        self.page().save_state().transform([w, 0.0, 0.0, DRAWING_HEIGHT, at.0, at.1]).x_object(DRAWING).restore_state();
        at
    }

    /// The finished document; `drawing` is the rail drawing's SVG, embedded where it was placed.
    fn finish(self, title: &str, drawing: Option<&str>) -> Result<Vec<u8>, LabPdfError> {
        let mut alloc = Ref::new(1);
        let catalog = alloc.bump();
        let tree_id = alloc.bump();
        let regular = alloc.bump();
        let bold = alloc.bump();
        let info = alloc.bump();
        let mut pdf = Pdf::new();
        let svg = match drawing {
            Some(svg) => {
                let mut options = svg2pdf::usvg::Options::default();
                let fonts = options.fontdb_mut();
                fonts.load_font_data(epaint_default_fonts::UBUNTU_LIGHT.to_vec());
                let family = fonts.faces().next().and_then(|f| f.families.first()).map(|(name, _)| name.clone());
                if let Some(family) = family {
                    fonts.set_sans_serif_family(family);
                }
                let tree = svg2pdf::usvg::Tree::from_str(svg, &options)
                    .map_err(|e| LabPdfError(format!("the rail drawing could not be read for the PDF: {e}")))?;
                let conversion = svg2pdf::ConversionOptions { embed_text: false, ..Default::default() };
                let (chunk, id) = svg2pdf::to_chunk(&tree, conversion)
                    .map_err(|e| LabPdfError(format!("the rail drawing could not be put in the PDF: {e}")))?;
                let mut map = HashMap::new();
                let chunk = chunk.renumber(|old| *map.entry(old).or_insert_with(|| alloc.bump()));
                let id = map.get(&id).copied();
                Some((chunk, id))
            }
            None => None,
        };
        let page_ids: Vec<(Ref, Ref)> = self.pages.iter().map(|_| (alloc.bump(), alloc.bump())).collect();
        pdf.catalog(catalog).pages(tree_id);
        pdf.pages(tree_id).kids(page_ids.iter().map(|p| p.0)).count(page_ids.len() as i32);
        let (w, h) = self.size;
        for (k, (page_id, content_id)) in page_ids.iter().enumerate() {
            let mut page = pdf.page(*page_id);
            page.media_box(Rect::new(0.0, 0.0, w, h)).parent(tree_id).contents(*content_id);
            let mut resources = page.resources();
            resources.fonts().pair(REGULAR, regular).pair(BOLD, bold);
            if let Some((_, Some(id))) = &svg
                && self.drawing_on.contains(&k)
            {
                resources.x_objects().pair(DRAWING, *id);
            }
            resources.finish();
            page.finish();
        }
        for (font, name) in [(regular, b"Helvetica".as_slice()), (bold, b"Helvetica-Bold".as_slice())] {
            pdf.type1_font(font).base_font(Name(name)).encoding_predefined(Name(b"WinAnsiEncoding"));
        }
        pdf.document_info(info).title(pdf_writer::TextStr(title)).creator(pdf_writer::TextStr("Lumenrail"));
        for (content, (_, content_id)) in self.pages.into_iter().zip(&page_ids) {
            pdf.stream(*content_id, &content.finish());
        }
        if let Some((chunk, _)) = &svg {
            pdf.extend(chunk);
        }
        Ok(pdf.finish())
    }
}

/// The class's lab sheet as a PDF file's bytes.
pub fn sheet_pdf(evaluation: &Evaluation, sheet: &LabSheet, paper: Paper) -> Result<Vec<u8>, LabPdfError> {
    let mut l = Layout::new(paper);
    l.line(REGULAR, 9.0, "Lumenrail lab sheet");
    l.line(BOLD, 16.0, sheet.lab.heading());
    l.line(REGULAR, 11.0, &sheet.bench_title);
    l.y -= 6.0;
    l.drawing();
    let rail = evaluation.bench.rail_length_mm.max(1.0);
    // The drawing's own scale (crate::rail: 40 pt margins either side of the rail), 1 pt = 25.4/72 mm.
    let paper_mm_per_mm = f64::from(l.width() - 80.0) / rail * 25.4 / 72.0;
    l.line(
        REGULAR,
        9.0,
        &format!(
            "The bench to scale: 1 mm on the rail is {} mm on this page (1 : {}); heights are drawn taller, as the drawing states. Positions are from the rail's datum at 0.",
            fixed(paper_mm_per_mm, 3),
            fixed(1.0 / paper_mm_per_mm, 1)
        ),
    );
    l.heading("Parts");
    let rows: Vec<Vec<String>> = sheet
        .parts
        .iter()
        .map(|p| {
            vec![
                p.name.clone(),
                p.kind.clone(),
                format!("{} mm", fixed(p.at_mm, 1)),
                p.focal_mm.map_or_else(|| "-".into(), |f| format!("{} mm", fixed(f, 1))),
                format!("{} mm", fixed(p.diameter_mm, 1)),
            ]
        })
        .collect();
    let heads: Vec<String> =
        ["part", "kind", "on the rail at", "focal length", "diameter"].iter().map(|s| s.to_string()).collect();
    l.table(&heads, &rows, &[3.0, 1.6, 1.6, 1.6, 1.4], false);
    l.heading("Procedure");
    for (k, step) in sheet.procedure.iter().enumerate() {
        l.indented(&format!("{}.", k + 1), step);
    }
    l.heading("Readings");
    let blank: Vec<Vec<String>> = (0..sheet.rows)
        .map(|r| (0..sheet.columns.len()).map(|c| if c == 0 { format!("{}", r + 1) } else { String::new() }).collect())
        .collect();
    let mut weights = vec![0.7];
    weights.extend(std::iter::repeat_n(1.6, sheet.columns.len().saturating_sub(1)));
    l.table(&sheet.columns, &blank, &weights, true);
    l.heading("Safety");
    for c in &sheet.cautions {
        l.indented("-", c);
    }
    l.y -= 10.0;
    l.line(REGULAR, BODY, "Name: ______________________    Date: ____________    Bench: ____________");
    let scene = Scene::of(evaluation);
    let svg = rail_svg_sized(evaluation, &scene, (f64::from(l.width()), f64::from(DRAWING_HEIGHT)));
    l.finish(sheet.lab.heading(), Some(&svg))
}

/// The instructor's answer key as a PDF file's bytes (separate from the class's sheet).
pub fn answers_pdf(sheet: &LabSheet, paper: Paper) -> Result<Vec<u8>, LabPdfError> {
    let mut l = Layout::new(paper);
    l.line(REGULAR, 9.0, "Lumenrail lab sheet: answer key (for the instructor; computed by the program)");
    l.line(BOLD, 16.0, sheet.lab.heading());
    l.line(REGULAR, 11.0, &sheet.bench_title);
    l.heading("Expected figures");
    let rows: Vec<Vec<String>> = sheet.answers.iter().map(|a| vec![a.label.clone(), a.value.clone()]).collect();
    let heads = vec!["figure".to_string(), "value".to_string()];
    l.table(&heads, &rows, &[3.0, 2.0], false);
    if !sheet.notes.is_empty() {
        l.heading("Notes");
        for n in &sheet.notes {
            l.indented("-", n);
        }
    }
    l.heading("Safety");
    for c in &sheet.cautions {
        l.indented("-", c);
    }
    l.finish(&format!("{}: answer key", sheet.lab.heading()), None)
}
