//! The program's icon and its desktop entry: one SVG of our own (`assets/icon/lumenrail.svg`) from which the
//! window's icon and the PNG for the desktop's icon theme are rasterised (resvg), and the freedesktop.org
//! desktop entry that starts the workbench. [`install`] writes both where a desktop looks for them.

use std::path::{Path, PathBuf};

/// The icon as SVG text, built into the program.
pub const SVG: &str = include_str!("../../../assets/icon/lumenrail.svg");

/// The desktop entry (freedesktop.org Desktop Entry Specification 1.4), built into the program; its
/// `Exec=lumenrail` is replaced by the installed program's path when [`install`] writes it.
pub const DESKTOP_ENTRY: &str = include_str!("../../../assets/lumenrail.desktop");

/// The icon's name in the desktop's icon theme and the entry's file stem.
pub const ICON_NAME: &str = "lumenrail";

/// The icon rasterised to `size` × `size` pixels, as straight (not premultiplied) RGBA bytes row by row,
/// the layout windows take for their icon. `size` is 16 to 1024.
pub fn rgba(size: u32) -> Result<Vec<u8>, String> {
    if !(16..=1024).contains(&size) {
        return Err(format!("an icon of {size} pixels is not made (16 to 1024)"));
    }
    let tree = resvg::usvg::Tree::from_str(SVG, &resvg::usvg::Options::default())
        .map_err(|e| format!("the icon's SVG does not read: {e}"))?;
    let mut pixmap =
        resvg::tiny_skia::Pixmap::new(size, size).ok_or_else(|| format!("cannot make a {size}-pixel icon"))?;
    let scale = size as f32 / tree.size().width().max(tree.size().height());
    resvg::render(&tree, resvg::tiny_skia::Transform::from_scale(scale, scale), &mut pixmap.as_mut());
    Ok(pixmap
        .pixels()
        .iter()
        .flat_map(|p| {
            let c = p.demultiply();
            [c.red(), c.green(), c.blue(), c.alpha()]
        })
        .collect())
}

/// The icon as a PNG file's bytes, `size` × `size` pixels.
pub fn png(size: u32) -> Result<Vec<u8>, String> {
    let pixels = rgba(size)?;
    let picture = image::RgbaImage::from_raw(size, size, pixels).ok_or("the icon's pixels do not fill it")?;
    let mut bytes = std::io::Cursor::new(Vec::new());
    picture.write_to(&mut bytes, image::ImageFormat::Png).map_err(|e| format!("cannot encode the icon as PNG: {e}"))?;
    Ok(bytes.into_inner())
}

/// The desktop entry with its `Exec` line starting `program` (quoted as the specification asks).
pub fn desktop_entry(program: &Path) -> String {
    let quoted = program.display().to_string().replace('\\', "\\\\").replace('"', "\\\"");
    DESKTOP_ENTRY
        .lines()
        .map(|line| if line.starts_with("Exec=") { format!("Exec=\"{quoted}\" %f") } else { line.to_string() })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

/// The files [`install`] wrote.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Installed {
    /// The desktop entry.
    pub entry: PathBuf,
    /// The scalable icon.
    pub svg: PathBuf,
    /// The 256-pixel icon.
    pub png: PathBuf,
}

/// Writes the desktop entry (starting `program`) and the icon (SVG and a 256-pixel PNG) under `data_home`
/// (the XDG data folder, `~/.local/share` by default): `applications/lumenrail.desktop` and
/// `icons/hicolor/{scalable,256x256}/apps/lumenrail.{svg,png}`. Each file is written atomically.
pub fn install(data_home: &Path, program: &Path) -> Result<Installed, String> {
    let entry = data_home.join("applications").join(format!("{ICON_NAME}.desktop"));
    let svg = data_home.join("icons/hicolor/scalable/apps").join(format!("{ICON_NAME}.svg"));
    let png_path = data_home.join("icons/hicolor/256x256/apps").join(format!("{ICON_NAME}.png"));
    let write = |path: &Path, bytes: &[u8]| -> Result<(), String> {
        let folder = path.parent().unwrap_or(Path::new("."));
        std::fs::create_dir_all(folder).map_err(|e| format!("cannot make the folder {}: {e}", folder.display()))?;
        lumenrail_bench::file::write_atomic(path, bytes).map_err(|e| e.to_string())
    };
    write(&entry, desktop_entry(program).as_bytes())?;
    write(&svg, SVG.as_bytes())?;
    write(&png_path, &png(256)?)?;
    Ok(Installed { entry, svg, png: png_path })
}

/// The XDG data folder: `$XDG_DATA_HOME` if set and absolute, else `$HOME/.local/share`.
pub fn data_home() -> Option<PathBuf> {
    let xdg = std::env::var_os("XDG_DATA_HOME").map(PathBuf::from).filter(|p| p.is_absolute());
    xdg.or_else(|| std::env::var_os("HOME").map(|home| PathBuf::from(home).join(".local/share")))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_icon_rasterises_with_a_transparent_corner_and_an_opaque_centre() {
        let px = rgba(64).unwrap();
        assert_eq!(px.len(), 64 * 64 * 4);
        assert_eq!(px[3], 0, "the rounded corner is transparent");
        let centre = (32 * 64 + 32) * 4;
        assert_eq!(px[centre + 3], 255, "the centre is opaque");
        assert!(rgba(8).is_err() && rgba(4096).is_err());
    }

    #[test]
    fn the_png_decodes_to_the_same_pixels() {
        let bytes = png(48).unwrap();
        let back = image::load_from_memory(&bytes).unwrap().to_rgba8();
        assert_eq!(back.dimensions(), (48, 48));
        assert_eq!(back.into_raw(), rgba(48).unwrap());
    }

    #[test]
    fn the_entry_starts_the_installed_program_with_a_file() {
        let text = desktop_entry(Path::new("/opt/my tools/lumenrail"));
        assert!(text.contains("\nExec=\"/opt/my tools/lumenrail\" %f\n"), "{text}");
        assert!(text.starts_with("[Desktop Entry]\n"));
        assert!(text.contains(&format!("\nIcon={ICON_NAME}\n")));
    }
}
