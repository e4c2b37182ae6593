//! Image files: a NumPy array (`.npy`), a FITS primary image and a PNG quick look.
//!
//! * **`.npy`** ([`write_npy`]), NumPy format version 1.0 (NumPy Enhancement Proposal 1, "A
//!   simple file format for NumPy arrays"): the magic `\x93NUMPY`, the version bytes 1, 0, the
//!   header length as a little-endian u16, the header, a Python dict literal
//!   `{'descr': '<f8', 'fortran_order': False, 'shape': (N, N), }` padded with spaces and ended
//!   by a newline so that the data start at a multiple of 64 bytes, then the values as
//!   little-endian f64 in the image's own order (row 0, the top, first): `numpy.load` gives
//!   the array as the image is shown, `a[i, j]` at (α_j, β_i).
//! * **FITS** ([`write_fits`]), a primary HDU (Pence et al. 2010, A&A 524, A42): 2880-byte
//!   blocks of 80-character ASCII cards (SIMPLE, BITPIX = −64, NAXIS = 2, NAXIS1, NAXIS2, the
//!   coordinate keys, BUNIT, the caller's cards, END), then the values as big-endian IEEE f64,
//!   zero-padded to a multiple of 2880 bytes. FITS puts its first row at the bottom, so the
//!   rows are written from the last (smallest β) to the first: FITS axis 1 runs along α and
//!   axis 2 along β, both increasing with the pixel index. Coordinates: `PIXSIZEM` (pixel side
//!   in M) and `FIELDM` (field side in M) always. Without θ_g, linear world coordinates
//!   `ALPHA`/`BETA` in M (CRPIX at the centre of the grid, CRVAL 0, CDELT the pixel side; the
//!   unit, M = GM/c², has no FITS unit string and is named in the comments and in `PIXSIZEM`
//!   rather than in CUNIT). With θ_g, the celestial keys of Calabretta & Greisen (2002, A&A
//!   395, 1077): `RA---SIN`/`DEC--SIN`, CRVAL 0 (a placeholder: the image is centred on the
//!   black hole, not on a catalogued position), CDELT1 = −pixel and CDELT2 = +pixel in degrees
//!   (right ascension grows to the left, east), CUNIT `deg`, and `THETAG` (θ_g in μas) and
//!   `PIXUAS` (pixel side in μas). So +β, the projected spin axis in Bardeen's screen, points
//!   north and +α west; the real position angle on the sky is not known to the writer, as a
//!   COMMENT card says.
//! * **PNG** ([`write_png`]), 8-bit RGB in the [`fathom`](super::fathom) colour map through
//!   the `png` crate, row 0 at the top; a value v maps to t = (max(v, 0)/v_max)^γ with v_max
//!   the image's largest value (γ = 1 is linear; γ < 1 brings out faint structure); a blank
//!   image is all t = 0.
//!
//! The `.npy` and FITS writers are written here by hand: they are one fixed header each.
//! Of the crates for these formats, the FITS ones either read only (fitsrs) or wrap the C
//! library cfitsio (fitsio), and the `.npy` writers (npyz) bring a Python-literal parser and
//! big integers that a fixed header does not need. NaN and infinities are written as they are
//! (both formats store IEEE values; NaN is FITS's blank pixel for BITPIX = −64); the PNG
//! writer refuses them.
//!
//! ```
//! use umbral::image::{write_fits, write_npy, write_png, FitsHeader, Image};
//!
//! let image = Image::from_rows(2, 4.0, vec![0.0, 1.0, 2.0, 3.0]).unwrap();
//! let mut npy = Vec::new();
//! write_npy(&image, &mut npy).unwrap();
//! assert_eq!(npy.len(), 128 + 4 * 8);
//! let mut fits = Vec::new();
//! write_fits(&image, &FitsHeader::default(), &mut fits).unwrap();
//! assert_eq!(fits.len(), 2 * 2880);
//! let mut png = Vec::new();
//! write_png(&image, 1.0, &mut png).unwrap();
//! assert_eq!(&png[1..4], b"PNG");
//! ```

use std::io::Write;

use super::colormap::fathom;
use super::{Image, ImageError};

/// Bytes in a FITS block.
const BLOCK: usize = 2880;
/// Characters in a FITS header card.
const CARD: usize = 80;

fn io_error(e: std::io::Error) -> ImageError {
    ImageError::Write(e.to_string())
}

/// Writes the image as a NumPy version 1.0 `.npy` array of N × N little-endian f64, row 0 (the
/// top) first (module docs).
pub fn write_npy<W: Write>(image: &Image, mut out: W) -> Result<(), ImageError> {
    let n = image.pixels;
    let dict = format!("{{'descr': '<f8', 'fortran_order': False, 'shape': ({n}, {n}), }}");
    // Magic (6) + version (2) + length (2) + dict + padding + newline ≡ 0 (mod 64).
    let unpadded = 10 + dict.len() + 1;
    let total = unpadded.div_ceil(64) * 64;
    let header_len = total - 10;
    let length = u16::try_from(header_len).map_err(|_| {
        ImageError::BadRequest(format!("an .npy header of {header_len} bytes is too long"))
    })?;
    let mut bytes = Vec::with_capacity(total + 8 * n * n);
    bytes.extend_from_slice(b"\x93NUMPY\x01\x00");
    bytes.extend_from_slice(&length.to_le_bytes());
    bytes.extend_from_slice(dict.as_bytes());
    bytes.resize(total - 1, b' ');
    bytes.push(b'\n');
    for v in &image.data {
        bytes.extend_from_slice(&v.to_le_bytes());
    }
    out.write_all(&bytes).map_err(io_error)?;
    out.flush().map_err(io_error)
}

/// The value of a FITS header card.
#[derive(Debug, Clone, PartialEq)]
pub enum FitsValue {
    /// `T` or `F`.
    Logical(bool),
    /// An integer.
    Integer(i64),
    /// A finite real number.
    Real(f64),
    /// A string of printable ASCII, at most 68 characters (one card).
    Text(String),
}

/// A header card from the caller: an upper-case keyword of at most 8 characters (A–Z, 0–9,
/// `-`, `_`), a value and a comment (printable ASCII; cut to what fits in the card).
#[derive(Debug, Clone, PartialEq)]
pub struct FitsCard {
    /// The keyword.
    pub key: String,
    /// The value.
    pub value: FitsValue,
    /// The comment (may be empty).
    pub comment: String,
}

/// What the FITS header says beyond the grid (module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct FitsHeader {
    /// θ_g = GM/(c²D) in micro-arcseconds: when given, the celestial coordinate keys.
    pub theta_g_uas: Option<f64>,
    /// The BUNIT value.
    pub bunit: String,
    /// More cards, written after BUNIT in the order given.
    pub cards: Vec<FitsCard>,
}

impl Default for FitsHeader {
    /// No θ_g, BUNIT `arbitrary`, no extra cards.
    fn default() -> Self {
        FitsHeader {
            theta_g_uas: None,
            bunit: "arbitrary".into(),
            cards: Vec::new(),
        }
    }
}

/// Keywords the writer sets itself, which a caller's card may not repeat.
const RESERVED: &[&str] = &[
    "SIMPLE", "BITPIX", "NAXIS", "NAXIS1", "NAXIS2", "EXTEND", "BUNIT", "CTYPE1", "CTYPE2",
    "CUNIT1", "CUNIT2", "CRPIX1", "CRPIX2", "CRVAL1", "CRVAL2", "CDELT1", "CDELT2", "PIXSIZEM",
    "FIELDM", "THETAG", "PIXUAS", "END", "COMMENT", "HISTORY",
];

/// Writes the image as a FITS primary HDU of big-endian f64, the bottom row (smallest β) first,
/// with the coordinate keys and cards of `header` (module docs).
pub fn write_fits<W: Write>(
    image: &Image,
    header: &FitsHeader,
    mut out: W,
) -> Result<(), ImageError> {
    let cards = header_cards(image, header)?;
    let n = image.pixels;
    let header_bytes = cards.len() * CARD;
    let mut bytes = Vec::with_capacity(header_bytes.next_multiple_of(BLOCK) + 8 * n * n + BLOCK);
    for card in &cards {
        bytes.extend_from_slice(card.as_bytes());
    }
    bytes.resize(header_bytes.next_multiple_of(BLOCK), b' ');
    for i in (0..n).rev() {
        for v in &image.data[i * n..(i + 1) * n] {
            bytes.extend_from_slice(&v.to_be_bytes());
        }
    }
    bytes.resize(bytes.len().next_multiple_of(BLOCK), 0);
    out.write_all(&bytes).map_err(io_error)?;
    out.flush().map_err(io_error)
}

/// All header cards, END included, each exactly 80 characters.
fn header_cards(image: &Image, header: &FitsHeader) -> Result<Vec<String>, ImageError> {
    use FitsValue::{Integer, Logical, Real, Text};
    let n = image.pixels;
    let pixel = image.pixel_size();
    let centre = (n as f64 + 1.0) / 2.0;
    let mut cards = vec![
        card("SIMPLE", &Logical(true), "conforms to the FITS standard")?,
        card("BITPIX", &Integer(-64), "IEEE double-precision values")?,
        card("NAXIS", &Integer(2), "a two-dimensional image")?,
        card("NAXIS1", &Integer(n as i64), "pixels along alpha")?,
        card("NAXIS2", &Integer(n as i64), "pixels along beta")?,
        card("PIXSIZEM", &Real(pixel), "pixel side in M = GM/c^2")?,
        card(
            "FIELDM",
            &Real(image.field),
            "field of view side in M = GM/c^2",
        )?,
    ];
    match header.theta_g_uas {
        None => {
            cards.extend([
                card(
                    "CTYPE1",
                    &Text("ALPHA".into()),
                    "Bardeen screen alpha, in M",
                )?,
                card("CTYPE2", &Text("BETA".into()), "Bardeen screen beta, in M")?,
                card("CRPIX1", &Real(centre), "centre of the grid")?,
                card("CRPIX2", &Real(centre), "centre of the grid")?,
                card("CRVAL1", &Real(0.0), "alpha at the centre, M")?,
                card("CRVAL2", &Real(0.0), "beta at the centre, M")?,
                card("CDELT1", &Real(pixel), "alpha step per pixel, M")?,
                card("CDELT2", &Real(pixel), "beta step per pixel, M")?,
            ]);
            cards.extend([
                comment("Axis 1 is the screen coordinate alpha, axis 2 is beta (Bardeen),"),
                comment("both in M = GM/c^2."),
            ]);
        }
        Some(theta_g) => {
            if !(theta_g.is_finite() && theta_g > 0.0) {
                return Err(ImageError::BadRequest(format!(
                    "theta_g must be a positive number of micro-arcseconds, got {theta_g}"
                )));
            }
            let pixel_uas = pixel * theta_g;
            let pixel_deg = pixel_uas / 3.6e9;
            cards.extend([
                card("THETAG", &Real(theta_g), "GM/(c^2 D) in micro-arcseconds")?,
                card("PIXUAS", &Real(pixel_uas), "pixel side in micro-arcseconds")?,
                card(
                    "CTYPE1",
                    &Text("RA---SIN".into()),
                    "right ascension, -alpha",
                )?,
                card("CTYPE2", &Text("DEC--SIN".into()), "declination, +beta")?,
                card("CRPIX1", &Real(centre), "centre of the grid")?,
                card("CRPIX2", &Real(centre), "centre of the grid")?,
                card("CRVAL1", &Real(0.0), "placeholder position, deg")?,
                card("CRVAL2", &Real(0.0), "placeholder position, deg")?,
                card("CDELT1", &Real(-pixel_deg), "RA step per pixel, deg")?,
                card("CDELT2", &Real(pixel_deg), "Dec step per pixel, deg")?,
                card("CUNIT1", &Text("deg".into()), "")?,
                card("CUNIT2", &Text("deg".into()), "")?,
            ]);
            cards.extend([
                comment("Axis 1 is the screen coordinate alpha, axis 2 is beta (Bardeen); +beta,"),
                comment("the projected spin axis, is put north and +alpha west. The true"),
                comment("position angle and sky position are not known: CRVAL is a placeholder."),
            ]);
        }
    }
    cards.push(card(
        "BUNIT",
        &Text(header.bunit.clone()),
        "brightness unit",
    )?);
    for extra in &header.cards {
        let key = extra.key.as_str();
        if RESERVED.contains(&key) || key.starts_with("NAXIS") {
            return Err(ImageError::BadRequest(format!(
                "the FITS keyword {key} is set by the writer and cannot be given again"
            )));
        }
        cards.push(card(key, &extra.value, &extra.comment)?);
    }
    cards.push(format!("{:<CARD$}", "END"));
    Ok(cards)
}

/// A `COMMENT` card; the text, always one of the writer's own, fits in 72 characters.
fn comment(text: &str) -> String {
    assert!(
        text.len() <= CARD - 8,
        "a COMMENT text too long for a card: {text}"
    );
    format!("{:<CARD$}", format!("COMMENT {text}"))
}

/// One 80-character card `KEY     = value / comment` (Pence et al. 2010, Sect. 4.1–4.2):
/// logical, integer and real values right-justified to column 30, strings from column 11 in
/// single quotes (inner quotes doubled, padded to at least 8 characters); a comment that does
/// not fit is cut.
fn card(key: &str, value: &FitsValue, note: &str) -> Result<String, ImageError> {
    let key_ok = !key.is_empty()
        && key.len() <= 8
        && key
            .bytes()
            .all(|c| c.is_ascii_uppercase() || c.is_ascii_digit() || c == b'-' || c == b'_');
    if !key_ok {
        return Err(ImageError::BadRequest(format!(
            "a FITS keyword must be 1 to 8 characters of A-Z, 0-9, '-' or '_', got {key:?}"
        )));
    }
    let printable = |s: &str| s.bytes().all(|c| (32..=126).contains(&c));
    let text = match value {
        FitsValue::Logical(b) => format!("{:>20}", if *b { "T" } else { "F" }),
        FitsValue::Integer(i) => format!("{i:>20}"),
        FitsValue::Real(x) => {
            if !x.is_finite() {
                return Err(ImageError::BadRequest(format!(
                    "the FITS keyword {key} needs a finite value, got {x}"
                )));
            }
            format!("{:>20}", real(*x))
        }
        FitsValue::Text(s) => {
            if !printable(s) {
                return Err(ImageError::BadRequest(format!(
                    "the FITS keyword {key} needs printable ASCII text, got {s:?}"
                )));
            }
            let quoted = format!("'{:<8}'", s.replace('\'', "''"));
            if quoted.len() > CARD - 10 {
                return Err(ImageError::BadRequest(format!(
                    "the text of the FITS keyword {key} is too long for one card ({} characters)",
                    s.len()
                )));
            }
            quoted
        }
    };
    if !printable(note) {
        return Err(ImageError::BadRequest(format!(
            "the comment of the FITS keyword {key} needs printable ASCII, got {note:?}"
        )));
    }
    let mut line = format!("{key:<8}= {text}");
    if !note.is_empty() && line.len() + 3 < CARD {
        line.push_str(" / ");
        line.push_str(note);
    }
    line.truncate(CARD);
    Ok(format!("{line:<CARD$}"))
}

/// A real in FITS form: the shortest decimal that reads back to the same f64, always with a
/// decimal point; plain (`0.5`) when that fits the 20 columns of a fixed-format value, else
/// with an exponent `E` (`-5.138888888888889E-10`).
fn real(x: f64) -> String {
    let with_point = |s: &str| {
        if s.contains('.') {
            s.to_string()
        } else {
            format!("{s}.0")
        }
    };
    let plain = with_point(&format!("{x}"));
    if plain.len() <= 20 {
        return plain;
    }
    let s = format!("{x:E}");
    let (mantissa, exponent) = s.split_once('E').expect("{:E} has an exponent");
    format!("{}E{exponent}", with_point(mantissa))
}

/// Writes an 8-bit RGB PNG in the `fathom` colour map, t = (max(v, 0)/v_max)^`gamma` (module
/// docs). Errors for a non-positive or non-finite γ, a non-finite value, or an image too large
/// for PNG.
pub fn write_png<W: Write>(image: &Image, gamma: f64, out: W) -> Result<(), ImageError> {
    if !(gamma.is_finite() && gamma > 0.0) {
        return Err(ImageError::BadRequest(format!(
            "the PNG gamma must be a positive number, got {gamma}"
        )));
    }
    if let Some(k) = image.data.iter().position(|v| !v.is_finite()) {
        return Err(ImageError::BadRequest(format!(
            "cannot colour a non-finite value ({} at row {}, column {})",
            image.data[k],
            k / image.pixels,
            k % image.pixels
        )));
    }
    let side = u32::try_from(image.pixels)
        .map_err(|_| ImageError::BadRequest("the image is too large for a PNG".into()))?;
    let top = image.data.iter().copied().fold(0.0, f64::max);
    let mut rgb = Vec::with_capacity(3 * image.data.len());
    for v in &image.data {
        let t = if top > 0.0 {
            (v.max(0.0) / top).powf(gamma)
        } else {
            0.0
        };
        rgb.extend_from_slice(&fathom(t));
    }
    let mut encoder = png::Encoder::new(out, side, side);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    encoder.set_source_srgb(png::SrgbRenderingIntent::Perceptual);
    let png_error = |e: png::EncodingError| ImageError::Write(e.to_string());
    let mut writer = encoder.write_header().map_err(png_error)?;
    writer.write_image_data(&rgb).map_err(png_error)?;
    writer.finish().map_err(png_error)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reals_read_back_and_carry_a_decimal_point() {
        for x in [
            0.0,
            1.0,
            -2.5,
            1e-10,
            -1.234_567_890_123_456_7e-10,
            3.0e300,
            0.1,
        ] {
            let s = real(x);
            assert!(s.contains('.'), "{s}");
            assert_eq!(s.parse::<f64>().unwrap(), x, "{s}");
            assert!(s.len() <= 24);
        }
        assert_eq!(real(1.0), "1.0");
        assert_eq!(real(-0.5), "-0.5");
        assert_eq!(real(-2.5e-17), "-2.5E-17");
        assert_eq!(real(3.0e300), "3.0E300");
    }

    #[test]
    fn cards_follow_the_fixed_format() {
        let c = card("NAXIS1", &FitsValue::Integer(64), "pixels").unwrap();
        assert_eq!(c.len(), 80);
        assert_eq!(&c[..10], "NAXIS1  = ");
        // The value ends in column 30.
        assert_eq!(&c[28..30], "64");
        let s = card("X", &FitsValue::Text("it's".into()), "").unwrap();
        assert_eq!(s.trim_end(), "X       = 'it''s   '");
        let t = card("SIMPLE", &FitsValue::Logical(true), "").unwrap();
        assert_eq!(&t[29..30], "T");
    }

    #[test]
    fn long_comments_are_cut_and_bad_cards_refused() {
        let long = "x".repeat(200);
        let c = card("KEY", &FitsValue::Integer(1), &long).unwrap();
        assert_eq!(c.len(), 80);
        assert!(card("lower", &FitsValue::Integer(1), "").is_err());
        assert!(card("TOOLONGKEY", &FitsValue::Integer(1), "").is_err());
        assert!(card("K", &FitsValue::Real(f64::NAN), "").is_err());
        assert!(card("K", &FitsValue::Text("é".into()), "").is_err());
        assert!(card("K", &FitsValue::Text("x".repeat(69)), "").is_err());
        assert!(card("K", &FitsValue::Text("x".repeat(68)), "").is_ok());
    }
}
