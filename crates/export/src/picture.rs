//! Pictures drawn without a window: egui runs headless, its shapes are tessellated into triangles as for
//! the screen, and this module fills the triangles in software. The export PNGs are therefore the very
//! drawing the workbench shows, on any computer, with no GPU and no display.

use egui::epaint::{ClippedPrimitive, Primitive};
use egui::{ColorImage, TextureId};
use std::collections::HashMap;

/// Draws `draw` on a `width` × `height` point canvas at `pixels_per_point` and returns the pixels.
pub fn render(width: f32, height: f32, pixels_per_point: f32, mut draw: impl FnMut(&mut egui::Ui)) -> image::RgbaImage {
    let ctx = egui::Context::default();
    ctx.set_visuals(egui::Visuals::light());
    let mut textures: HashMap<TextureId, ColorImage> = HashMap::new();
    let input = || egui::RawInput {
        screen_rect: Some(egui::Rect::from_min_size(egui::Pos2::ZERO, egui::vec2(width, height))),
        ..Default::default()
    };
    ctx.set_pixels_per_point(pixels_per_point);
    let mut output = None;
    // The first frame lays out and loads fonts; the second is drawn with everything in place.
    for _ in 0..2 {
        let mut out = ctx.run_ui(input(), |ui| {
            egui::CentralPanel::default().show(ui, |ui| draw(ui));
        });
        let set = std::mem::take(&mut out.textures_delta.set);
        out.textures_delta.clear();
        for (id, deltas) in &set {
            for delta in deltas {
                let egui::ImageData::Color(patch) = &delta.image;
                match delta.pos {
                    None => {
                        textures.insert(*id, (**patch).clone());
                    }
                    Some([x0, y0]) => {
                        if let Some(t) = textures.get_mut(id) {
                            for y in 0..patch.size[1] {
                                for x in 0..patch.size[0] {
                                    t.pixels[(y0 + y) * t.size[0] + x0 + x] = patch.pixels[y * patch.size[0] + x];
                                }
                            }
                        }
                    }
                }
            }
        }
        output = Some(out);
    }
    let out = output.expect("two frames ran");
    let ppp = out.pixels_per_point;
    let primitives = ctx.tessellate(out.shapes, ppp);
    let (w, h) = ((width * ppp).round() as usize, (height * ppp).round() as usize);
    let mut canvas = Canvas { w, h, px: vec![[0.0; 4]; w * h] };
    for p in &primitives {
        canvas.fill(p, ppp, &textures);
    }
    let bytes: Vec<u8> = canvas
        .px
        .iter()
        .flat_map(|c| {
            // Un-premultiply into straight alpha for the PNG; the background is opaque.
            let a = c[3].clamp(0.0, 1.0);
            let un = |v: f32| if a > 0.0 { (v / a * 255.0).round().clamp(0.0, 255.0) as u8 } else { 0 };
            [un(c[0]), un(c[1]), un(c[2]), (a * 255.0).round() as u8]
        })
        .collect();
    image::RgbaImage::from_raw(w as u32, h as u32, bytes).expect("the canvas has w × h pixels")
}

/// Premultiplied RGBA in 0–1, gamma space (as egui blends).
struct Canvas {
    w: usize,
    h: usize,
    px: Vec<[f32; 4]>,
}

impl Canvas {
    fn fill(&mut self, prim: &ClippedPrimitive, ppp: f32, textures: &HashMap<TextureId, ColorImage>) {
        let Primitive::Mesh(mesh) = &prim.primitive else { return };
        let tex = textures.get(&mesh.texture_id);
        let clip = prim.clip_rect;
        let (cx0, cy0) = ((clip.min.x * ppp).max(0.0), (clip.min.y * ppp).max(0.0));
        let (cx1, cy1) = ((clip.max.x * ppp).min(self.w as f32), (clip.max.y * ppp).min(self.h as f32));
        for tri in mesh.indices.chunks_exact(3) {
            let v = [&mesh.vertices[tri[0] as usize], &mesh.vertices[tri[1] as usize], &mesh.vertices[tri[2] as usize]];
            let p = v.map(|v| (v.pos.x * ppp, v.pos.y * ppp));
            let area = (p[1].0 - p[0].0) * (p[2].1 - p[0].1) - (p[2].0 - p[0].0) * (p[1].1 - p[0].1);
            if area.abs() < 1e-12 {
                continue;
            }
            let x0 = p.iter().map(|q| q.0).fold(f32::INFINITY, f32::min).max(cx0).floor() as usize;
            let x1 = p.iter().map(|q| q.0).fold(f32::NEG_INFINITY, f32::max).min(cx1).ceil() as usize;
            let y0 = p.iter().map(|q| q.1).fold(f32::INFINITY, f32::min).max(cy0).floor() as usize;
            let y1 = p.iter().map(|q| q.1).fold(f32::NEG_INFINITY, f32::max).min(cy1).ceil() as usize;
            let colour = v.map(|v| v.color.to_array().map(|c| c as f32 / 255.0));
            for y in y0..y1.min(self.h) {
                for x in x0..x1.min(self.w) {
                    let (sx, sy) = (x as f32 + 0.5, y as f32 + 0.5);
                    let edge = |a: (f32, f32), b: (f32, f32)| (b.0 - a.0) * (sy - a.1) - (b.1 - a.1) * (sx - a.0);
                    let (w0, w1, w2) = (edge(p[1], p[2]) / area, edge(p[2], p[0]) / area, edge(p[0], p[1]) / area);
                    if w0 < 0.0 || w1 < 0.0 || w2 < 0.0 {
                        continue;
                    }
                    let mut c = [0.0f32; 4];
                    for (k, ck) in c.iter_mut().enumerate() {
                        *ck = w0 * colour[0][k] + w1 * colour[1][k] + w2 * colour[2][k];
                    }
                    if let Some(t) = tex {
                        let u = w0 * v[0].uv.x + w1 * v[1].uv.x + w2 * v[2].uv.x;
                        let vv = w0 * v[0].uv.y + w1 * v[1].uv.y + w2 * v[2].uv.y;
                        let texel = sample(t, u, vv);
                        for (ck, tk) in c.iter_mut().zip(texel) {
                            *ck *= tk;
                        }
                    }
                    let d = &mut self.px[y * self.w + x];
                    let keep = 1.0 - c[3];
                    for k in 0..4 {
                        d[k] = c[k] + d[k] * keep;
                    }
                }
            }
        }
    }
}

/// Bilinear texture sample, premultiplied RGBA in 0–1.
fn sample(t: &ColorImage, u: f32, v: f32) -> [f32; 4] {
    let (w, h) = (t.size[0], t.size[1]);
    let (fx, fy) = ((u * w as f32 - 0.5).clamp(0.0, (w - 1) as f32), (v * h as f32 - 0.5).clamp(0.0, (h - 1) as f32));
    let (x0, y0) = (fx.floor() as usize, fy.floor() as usize);
    let (x1, y1) = ((x0 + 1).min(w - 1), (y0 + 1).min(h - 1));
    let (ax, ay) = (fx - x0 as f32, fy - y0 as f32);
    let at = |x: usize, y: usize| -> [f32; 4] { t.pixels[y * w + x].to_array().map(|c| c as f32 / 255.0) };
    let (a, b, c, d) = (at(x0, y0), at(x1, y0), at(x0, y1), at(x1, y1));
    let mut out = [0.0; 4];
    for k in 0..4 {
        out[k] = (a[k] * (1.0 - ax) + b[k] * ax) * (1.0 - ay) + (c[k] * (1.0 - ax) + d[k] * ax) * ay;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use egui::Color32;

    /// A filled rectangle and a line of text come out where they were drawn, in their colours.
    #[test]
    fn shapes_and_text_are_drawn() {
        let img = render(200.0, 100.0, 1.0, |ui| {
            let r = egui::Rect::from_min_size(egui::pos2(20.0, 20.0), egui::vec2(40.0, 30.0));
            ui.painter().rect_filled(r, 0.0, Color32::from_rgb(200, 30, 30));
            ui.painter().text(
                egui::pos2(100.0, 50.0),
                egui::Align2::LEFT_CENTER,
                "Spot",
                egui::FontId::proportional(20.0),
                Color32::BLACK,
            );
        });
        assert_eq!(img.dimensions(), (200, 100));
        assert_eq!(img.get_pixel(40, 35).0, Color32::from_rgb(200, 30, 30).to_array());
        // The background is the light theme's panel colour, opaque.
        assert_eq!(img.get_pixel(5, 95).0[3], 255);
        // The text puts dark pixels in its box and nowhere else.
        let dark = |x0: u32, x1: u32| {
            (x0..x1)
                .flat_map(|x| (40..60).map(move |y| (x, y)))
                .filter(|&(x, y)| img.get_pixel(x, y).0[0] < 100)
                .count()
        };
        assert!(dark(100, 150) > 20, "text drawn");
        assert_eq!(dark(160, 200), 0);
    }
}
