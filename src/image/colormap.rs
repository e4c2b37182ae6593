//! "Fathom", umbral's colour map: a deep green-teal through blue to a pale lilac white,
//! perceptually uniform in lightness and readable in grey.
//!
//! A map of our own, laid out in OKLab (Ottosson 2020, "A perceptual color space for image
//! processing", blog post), in its polar form (L, C, h) with a = C cos h, b = C sin h. For
//! t ∈ [0, 1]:
//!
//! * lightness linear, L(t) = 0.14 + 0.83 t (equal steps of perceived lightness, from near
//!   black to near white);
//! * hue linear, h(t) = 160° + 160° t (green-teal, cyan, blue, violet, lilac);
//! * chroma a smooth bump, C(t) = 0.025 − 0.013 t + 0.10 exp(−(t − 0.6)²/(2 · 0.17²)), kept
//!   at least 15 % inside the sRGB gamut along the whole path, so no colour is ever clipped
//!   (the tests check every linear sRGB channel stays in [0, 1] before rounding).
//!
//! Being monotonic in L, the map's relative luminance increases monotonically too (checked),
//! so it reads correctly when printed in grey. It deliberately avoids the warm
//! black-red-orange-yellow-white scheme of published black-hole images.
//!
//! OKLab → linear sRGB uses Ottosson's two matrices and the cube between them (values from
//! memory, checked against the colour-science Python package 0.4.7: its LMS′ → Lab matrix is
//! identical and its sRGB → OKLab agrees to 10⁻⁴, the difference coming from its 4-digit
//! sRGB → XYZ matrix); linear sRGB → sRGB is the transfer function of IEC 61966-2-1. The tests
//! check that L = 1, a = b = 0 is white and that sRGB → OKLab → sRGB is the identity.
//!
//! ```
//! use umbral::image::fathom;
//!
//! let dark = fathom(0.0);
//! let light = fathom(1.0);
//! assert!(dark.iter().all(|&c| c < 40));
//! assert!(light.iter().all(|&c| c > 230));
//! ```

/// The colour map's name.
pub const COLOUR_MAP_NAME: &str = "fathom";

const L_START: f64 = 0.14;
const L_END: f64 = 0.97;
const HUE_START_DEG: f64 = 160.0;
const HUE_END_DEG: f64 = 320.0;

/// The 8-bit sRGB colour of the map at `t` (clamped to [0, 1]; NaN counts as 0).
pub fn fathom(t: f64) -> [u8; 3] {
    fathom_srgb(t).map(|c| (c * 255.0).round() as u8)
}

/// The map at `t` in non-linear sRGB, each channel in [0, 1] (unrounded).
fn fathom_srgb(t: f64) -> [f64; 3] {
    fathom_linear(t).map(encode)
}

/// The map at `t` in linear sRGB, before any rounding.
fn fathom_linear(t: f64) -> [f64; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let (lightness, chroma, hue) = lch(t);
    oklab_to_linear_srgb([lightness, chroma * hue.cos(), chroma * hue.sin()])
}

/// (L, C, h in radians) of the map at `t`.
fn lch(t: f64) -> (f64, f64, f64) {
    let lightness = L_START + (L_END - L_START) * t;
    let hue = (HUE_START_DEG + (HUE_END_DEG - HUE_START_DEG) * t).to_radians();
    let chroma = 0.025 - 0.013 * t + 0.10 * (-0.5 * ((t - 0.6) / 0.17).powi(2)).exp();
    (lightness, chroma, hue)
}

/// OKLab → linear sRGB (Ottosson 2020).
fn oklab_to_linear_srgb([l, a, b]: [f64; 3]) -> [f64; 3] {
    let l_ = l + 0.396_337_777_4 * a + 0.215_803_757_3 * b;
    let m_ = l - 0.105_561_345_8 * a - 0.063_854_172_8 * b;
    let s_ = l - 0.089_484_177_5 * a - 1.291_485_548_0 * b;
    let (l3, m3, s3) = (l_.powi(3), m_.powi(3), s_.powi(3));
    [
        4.076_741_662_1 * l3 - 3.307_711_591_3 * m3 + 0.230_969_929_2 * s3,
        -1.268_438_004_6 * l3 + 2.609_757_401_1 * m3 - 0.341_319_396_5 * s3,
        -0.004_196_086_3 * l3 - 0.703_418_614_7 * m3 + 1.707_614_701_0 * s3,
    ]
}

/// Linear sRGB → sRGB (IEC 61966-2-1).
fn encode(c: f64) -> f64 {
    if c <= 0.003_130_8 {
        12.92 * c
    } else {
        1.055 * c.powf(1.0 / 2.4) - 0.055
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Linear sRGB → OKLab (Ottosson 2020), the inverse of `oklab_to_linear_srgb`.
    fn linear_srgb_to_oklab([r, g, b]: [f64; 3]) -> [f64; 3] {
        let l = 0.412_221_470_8 * r + 0.536_332_536_3 * g + 0.051_445_992_9 * b;
        let m = 0.211_903_498_2 * r + 0.680_699_545_1 * g + 0.107_396_956_6 * b;
        let s = 0.088_302_461_9 * r + 0.281_718_837_6 * g + 0.629_978_700_5 * b;
        let (l_, m_, s_) = (l.cbrt(), m.cbrt(), s.cbrt());
        [
            0.210_454_255_3 * l_ + 0.793_617_785_0 * m_ - 0.004_072_046_8 * s_,
            1.977_998_495_1 * l_ - 2.428_592_205_0 * m_ + 0.450_593_709_9 * s_,
            0.025_904_037_1 * l_ + 0.782_771_766_2 * m_ - 0.808_675_766_0 * s_,
        ]
    }

    /// sRGB → linear sRGB (IEC 61966-2-1).
    fn decode(c: f64) -> f64 {
        if c <= 0.040_45 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    }

    /// Relative luminance Y of linear sRGB (IEC 61966-2-1, ITU-R BT.709 primaries, D65).
    fn luminance([r, g, b]: [f64; 3]) -> f64 {
        0.2126 * r + 0.7152 * g + 0.0722 * b
    }

    #[test]
    fn oklab_white_is_srgb_white() {
        let white = oklab_to_linear_srgb([1.0, 0.0, 0.0]);
        for c in white {
            assert!((c - 1.0).abs() < 1e-9, "{white:?}");
        }
        let lab = linear_srgb_to_oklab([1.0, 1.0, 1.0]);
        assert!((lab[0] - 1.0).abs() < 1e-8 && lab[1].abs() < 1e-8 && lab[2].abs() < 1e-7);
    }

    #[test]
    fn srgb_to_oklab_and_back_is_the_identity() {
        // The published matrices carry 10 digits: the LMS′ → Lab matrix times its inverse
        // differs from the identity by up to 6e-8, which the sRGB slope near black (12.92)
        // turns into about 1e-6. So: identity to 1e-5 (400 times below one 8-bit level), and
        // exactly on 8-bit values.
        for r in 0..=15 {
            for g in 0..=15 {
                for b in 0..=15 {
                    let bytes = [r, g, b].map(|c| 17 * c as u8);
                    let srgb = bytes.map(|c| c as f64 / 255.0);
                    let back =
                        oklab_to_linear_srgb(linear_srgb_to_oklab(srgb.map(decode))).map(encode);
                    for (x, y) in srgb.iter().zip(back) {
                        assert!((x - y).abs() < 1e-5, "{srgb:?} -> {back:?}");
                    }
                    assert_eq!(back.map(|c| (c * 255.0).round() as u8), bytes);
                }
            }
        }
    }

    #[test]
    fn a_known_colour_has_its_oklab_coordinates() {
        // sRGB red in OKLab as the colour-science Python package 0.4.7 gives it through its
        // own sRGB → XYZ matrix, which agrees with Ottosson's combined matrix to 10⁻⁴.
        let lab = linear_srgb_to_oklab([1.0, 0.0, 0.0]);
        let expected = [0.627_926, 0.224_888, 0.125_805];
        for (x, y) in lab.iter().zip(expected) {
            assert!((x - y).abs() < 1e-4, "{lab:?}");
        }
    }

    #[test]
    fn lightness_steps_are_equal() {
        let samples = 256;
        let lightness: Vec<f64> = (0..samples)
            .map(|k| linear_srgb_to_oklab(fathom_linear(k as f64 / (samples - 1) as f64))[0])
            .collect();
        let step = (L_END - L_START) / (samples - 1) as f64;
        for pair in lightness.windows(2) {
            assert!(((pair[1] - pair[0]) / step - 1.0).abs() < 1e-5, "{pair:?}");
        }
        assert!((lightness[0] - L_START).abs() < 1e-7);
        assert!((lightness[samples - 1] - L_END).abs() < 1e-7);
    }

    #[test]
    fn luminance_rises_monotonically() {
        // Unrounded, finely sampled.
        let y: Vec<f64> = (0..=4096)
            .map(|k| luminance(fathom_linear(k as f64 / 4096.0)))
            .collect();
        assert!(y.windows(2).all(|p| p[1] > p[0]));
        // And as the 8-bit colours a PNG gets, at 64 levels.
        let y8: Vec<f64> = (0..64)
            .map(|k| luminance(fathom(k as f64 / 63.0).map(|c| decode(c as f64 / 255.0))))
            .collect();
        assert!(y8.windows(2).all(|p| p[1] > p[0]), "{y8:?}");
    }

    #[test]
    fn no_colour_leaves_the_gamut() {
        for k in 0..=4096 {
            let rgb = fathom_linear(k as f64 / 4096.0);
            assert!(
                rgb.iter().all(|c| (0.0..=1.0).contains(c)),
                "t = {k}/4096: {rgb:?}"
            );
        }
    }

    #[test]
    fn the_chroma_stays_well_inside_the_gamut() {
        // 15 % more chroma than the map uses is still inside: no channel is near clipping.
        for k in 0..=1024 {
            let t = k as f64 / 1024.0;
            let (l, c, h) = lch(t);
            let wider = oklab_to_linear_srgb([l, 1.15 * c * h.cos(), 1.15 * c * h.sin()]);
            assert!(
                wider.iter().all(|c| (0.0..=1.0).contains(c)),
                "t = {t}: {wider:?}"
            );
        }
    }

    #[test]
    fn the_hue_runs_from_green_teal_to_lilac() {
        // Green-teal at the dark end (green above red), lilac at the light end (blue and red
        // above green): not the warm scheme.
        let dark = fathom_srgb(0.0);
        assert!(dark[1] > dark[0]);
        let light = fathom_srgb(1.0);
        assert!(light[2] > light[1] && light[0] > light[1]);
        let middle = fathom_srgb(0.5);
        assert!(middle[2] > middle[0] && middle[2] > middle[1]);
    }

    #[test]
    fn out_of_range_arguments_are_clamped() {
        assert_eq!(fathom(-1.0), fathom(0.0));
        assert_eq!(fathom(2.0), fathom(1.0));
        assert_eq!(fathom(f64::NAN), fathom(0.0));
    }
}
