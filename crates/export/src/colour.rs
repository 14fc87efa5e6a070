//! The physical colour of a wavelength, for rays on the rail and series in the plots.

/// The physical colour of a wavelength as sRGB, by the piecewise-linear approximation of the visible
/// spectrum due to D. Bruton (1996), with the intensity falling off at the ends; outside 380–780 nm a dim
/// grey.
pub fn wavelength_rgb(wavelength_nm: f64) -> [u8; 3] {
    let w = wavelength_nm;
    let (r, g, b) = match w {
        w if (380.0..440.0).contains(&w) => (-(w - 440.0) / 60.0, 0.0, 1.0),
        w if (440.0..490.0).contains(&w) => (0.0, (w - 440.0) / 50.0, 1.0),
        w if (490.0..510.0).contains(&w) => (0.0, 1.0, -(w - 510.0) / 20.0),
        w if (510.0..580.0).contains(&w) => ((w - 510.0) / 70.0, 1.0, 0.0),
        w if (580.0..645.0).contains(&w) => (1.0, -(w - 645.0) / 65.0, 0.0),
        w if (645.0..=780.0).contains(&w) => (1.0, 0.0, 0.0),
        _ => return [140, 140, 140],
    };
    let fade = match w {
        w if w < 420.0 => 0.3 + 0.7 * (w - 380.0) / 40.0,
        w if w > 700.0 => 0.3 + 0.7 * (780.0 - w) / 80.0,
        _ => 1.0,
    };
    let c = |v: f64| ((v * fade).clamp(0.0, 1.0).powf(0.8) * 255.0).round() as u8;
    [c(r), c(g), c(b)]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colours_follow_the_spectrum() {
        assert_eq!(wavelength_rgb(656.2725), [255, 0, 0]);
        let green = wavelength_rgb(530.0);
        assert!(green[1] == 255 && green[2] == 0);
        let blue = wavelength_rgb(450.0);
        assert!(blue[2] == 255 && blue[0] == 0);
    }
}
