//! The look and the files of every figure the tool draws: one style (an embedded font, text
//! sizes, a colour-blind-safe cycle of colours and then dash patterns, a light grid, legends
//! outside the data) and one writer that turns plotters' SVG into SVG, PNG or PDF by the file
//! extension.
//!
//! Plotters draws in whole backend units; figures are drawn at [`SUBPIXEL`] units per output
//! pixel and the SVG's `viewBox` maps them back, so paths are placed to a tenth of a pixel.
//! Text is measured and rendered with the same embedded DejaVu Sans, so a legend laid out
//! here fits in every format.

use super::CliError;
use clap::ValueEnum;
use plotters::prelude::*;
use plotters::style::FontStyle;
use std::path::Path;
use std::sync::Once;
use umbral::output::OutputTransaction;

/// Drawing units per output pixel (SVG px, PDF pt).
pub const SUBPIXEL: u32 = 10;

/// The colour-blind-safe cycle of Okabe & Ito (2008, "Color Universal Design", J*Fly), in
/// an order that puts the strongest contrasts on white first and yellow last.
pub const CYCLE: [RGBColor; 8] = [
    RGBColor(0, 114, 178),   // blue
    RGBColor(213, 94, 0),    // vermillion
    RGBColor(0, 158, 115),   // bluish green
    RGBColor(204, 121, 167), // reddish purple
    RGBColor(230, 159, 0),   // orange
    RGBColor(86, 180, 233),  // sky blue
    RGBColor(0, 0, 0),       // black
    RGBColor(240, 228, 66),  // yellow
];

/// Reference curves (e.g. the Schwarzschild circle): mid grey, dashed.
pub const REFERENCE: RGBColor = RGBColor(110, 110, 110);
/// Regions that are excluded.
pub const EXCLUDED: RGBColor = RGBColor(213, 94, 0);
/// Regions that are allowed.
pub const ALLOWED: RGBColor = RGBColor(0, 114, 178);
/// Regions without a horizon (neither allowed nor excluded).
pub const NO_HORIZON: RGBColor = RGBColor(150, 150, 150);

/// Figure sizes for a printed page or a projected slide.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum FigureStyle {
    /// A figure that a paper scales to one column: 360 pt wide, 11 pt labels.
    #[default]
    Paper,
    /// A figure for a slide: twice the size, with heavier lines.
    Slide,
}

/// Dash patterns after the colours run out: solid, dashed, dash-dotted-like short dashes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dash {
    Solid,
    Long,
    Short,
}

/// How one series is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesLook {
    pub colour: RGBColor,
    pub dash: Dash,
}

/// The i-th series' look: the eight colours, then the eight again dashed, then short dashes.
pub fn series(i: usize) -> SeriesLook {
    let dash = match (i / CYCLE.len()) % 3 {
        0 => Dash::Solid,
        1 => Dash::Long,
        _ => Dash::Short,
    };
    SeriesLook {
        colour: CYCLE[i % CYCLE.len()],
        dash,
    }
}

/// The sizes of one style, in output pixels (= PDF points).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Theme {
    /// Width of a single-panel figure.
    pub width: f64,
    /// Axis labels and legend text.
    pub label: f64,
    /// Tick labels.
    pub tick: f64,
    /// Figure titles.
    pub title: f64,
    /// Data lines.
    pub line: f64,
    /// Grid and frame lines.
    pub thin: f64,
    /// PNG pixels per output pixel.
    pub png_scale: f32,
}

impl Theme {
    /// The sizes of `style`.
    pub fn new(style: FigureStyle) -> Theme {
        match style {
            FigureStyle::Paper => Theme {
                width: 360.0,
                label: 11.0,
                tick: 9.5,
                title: 11.5,
                line: 1.4,
                thin: 0.6,
                png_scale: 4.0,
            },
            FigureStyle::Slide => Theme {
                width: 720.0,
                label: 21.0,
                tick: 18.0,
                title: 22.0,
                line: 3.0,
                thin: 1.0,
                png_scale: 2.0,
            },
        }
    }

    /// Output pixels to drawing units.
    pub fn px(&self, v: f64) -> i32 {
        (v * SUBPIXEL as f64).round() as i32
    }

    /// Output pixels to drawing units, unsigned (sizes).
    pub fn upx(&self, v: f64) -> u32 {
        self.px(v).max(0) as u32
    }

    /// The embedded sans-serif font at `size` output pixels (plotters' size is 1.24 × the
    /// SVG font size it writes).
    pub fn font(&self, size: f64) -> TextStyle<'static> {
        register_fonts();
        ("sans-serif", size * 1.24 * SUBPIXEL as f64)
            .into_font()
            .color(&BLACK)
    }

    /// A light line (grid, frames, references).
    pub fn hairline(&self, colour: RGBColor) -> ShapeStyle {
        colour.stroke_width(self.upx(self.thin).max(1))
    }

    /// The width of `text` at `size`, in output pixels (with the embedded font's metrics).
    pub fn text_width(&self, text: &str, size: f64) -> f64 {
        let font = self.font(size);
        match font.font.layout_box(text) {
            Ok(((x0, _), (x1, _))) => (x1 - x0) as f64 / SUBPIXEL as f64,
            Err(_) => 0.6 * size * text.chars().count() as f64,
        }
    }

    /// The drawing size of a figure `w` × `h` output pixels.
    pub fn canvas(&self, w: f64, h: f64) -> (u32, u32) {
        (self.upx(w), self.upx(h))
    }
}

/// Register the embedded font with plotters (once; every drawing needs it).
pub fn register_fonts() {
    static FONTS: Once = Once::new();
    FONTS.call_once(|| {
        // The embedded fonts parse: failure here is a broken build, not bad input.
        let faces = [
            (FontStyle::Normal, dejavu::sans::regular()),
            (FontStyle::Bold, dejavu::sans::bold()),
            (FontStyle::Oblique, dejavu::sans::oblique()),
            (FontStyle::Italic, dejavu::sans::oblique()),
        ];
        for (style, bytes) in faces {
            if plotters::style::register_font("sans-serif", style, bytes).is_err() {
                eprintln!("umbral: the embedded DejaVu Sans font did not load");
            }
        }
    });
}

/// Draw a line series in `look` on `chart` (dashes after the first eight series).
pub fn draw_line<'a, DB: DrawingBackend + 'a>(
    chart: &mut ChartContext<
        'a,
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    theme: &Theme,
    points: Vec<(f64, f64)>,
    look: SeriesLook,
    width: f64,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let style = look.colour.stroke_width(theme.upx(width));
    match look.dash {
        Dash::Solid => {
            chart.draw_series(LineSeries::new(points, style))?;
        }
        Dash::Long => {
            chart.draw_series(DashedLineSeries::new(
                points,
                theme.upx(6.0 * width.max(1.0)),
                theme.upx(3.5 * width.max(1.0)),
                style,
            ))?;
        }
        Dash::Short => {
            chart.draw_series(DashedLineSeries::new(
                points,
                theme.upx(2.0 * width.max(1.0)),
                theme.upx(2.5 * width.max(1.0)),
                style,
            ))?;
        }
    }
    Ok(())
}

/// What a legend entry shows beside its text.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Mark {
    /// A line in a series look, of a width in output pixels.
    Line(SeriesLook, f64),
    /// A filled patch (colour, opacity).
    Patch(RGBColor, f64),
}

/// A legend: marks and texts in rows, drawn into an area of its own (outside the data).
#[derive(Debug, Clone, Default)]
pub struct Legend {
    pub entries: Vec<(Mark, String)>,
}

impl Legend {
    pub fn add(&mut self, mark: Mark, text: impl Into<String>) {
        self.entries.push((mark, text.into()));
    }

    /// The widest entry in output pixels (mark, gap and text).
    pub fn width(&self, theme: &Theme) -> f64 {
        self.entries
            .iter()
            .map(|(_, t)| theme.text_width(t, theme.label))
            .fold(0.0, f64::max)
            + 2.6 * theme.label
    }

    /// The height of one row in output pixels.
    pub fn row(theme: &Theme) -> f64 {
        1.45 * theme.label
    }

    /// Draw the entries as a column from the top left of `area`.
    pub fn draw_column<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        theme: &Theme,
        (left, top): (f64, f64),
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        for (k, (mark, text)) in self.entries.iter().enumerate() {
            let y = top + (k as f64 + 0.5) * Self::row(theme);
            self.draw_entry(area, theme, (left, y), mark, text)?;
        }
        Ok(())
    }

    /// Draw the entries in rows that wrap at `width` output pixels, from (left, top);
    /// returns the height used.
    pub fn draw_rows<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        theme: &Theme,
        (left, top): (f64, f64),
        width: f64,
    ) -> Result<f64, DrawingAreaErrorKind<DB::ErrorType>> {
        let rows = self.rows(theme, width);
        for (r, row) in rows.iter().enumerate() {
            let y = top + (r as f64 + 0.5) * Self::row(theme);
            let mut x = left;
            for &k in row {
                let (mark, text) = &self.entries[k];
                self.draw_entry(area, theme, (x, y), mark, text)?;
                x += self.entry_width(theme, text) + theme.label;
            }
        }
        Ok(rows.len() as f64 * Self::row(theme))
    }

    /// The height [`Legend::draw_rows`] needs at `width` output pixels.
    pub fn rows_height(&self, theme: &Theme, width: f64) -> f64 {
        self.rows(theme, width).len() as f64 * Self::row(theme)
    }

    fn entry_width(&self, theme: &Theme, text: &str) -> f64 {
        2.6 * theme.label + theme.text_width(text, theme.label)
    }

    fn rows(&self, theme: &Theme, width: f64) -> Vec<Vec<usize>> {
        let mut rows: Vec<Vec<usize>> = Vec::new();
        let mut used = f64::INFINITY;
        for (k, (_, text)) in self.entries.iter().enumerate() {
            let w = self.entry_width(theme, text);
            if used + w > width {
                rows.push(Vec::new());
                used = 0.0;
            }
            if let Some(row) = rows.last_mut() {
                row.push(k);
            }
            used += w + theme.label;
        }
        rows
    }

    fn draw_entry<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        theme: &Theme,
        (x, y): (f64, f64),
        mark: &Mark,
        text: &str,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        let mark_w = 2.0 * theme.label;
        match *mark {
            Mark::Line(look, width) => {
                let style = look.colour.stroke_width(theme.upx(width));
                let (a, b) = ((x, y), (x + mark_w, y));
                let pieces: Vec<((f64, f64), (f64, f64))> = match look.dash {
                    Dash::Solid => vec![(a, b)],
                    Dash::Long => dashes(a, b, 6.0 * width.max(1.0), 3.5 * width.max(1.0)),
                    Dash::Short => dashes(a, b, 2.0 * width.max(1.0), 2.5 * width.max(1.0)),
                };
                for (p, q) in pieces {
                    area.draw(&PathElement::new(
                        vec![
                            (theme.px(p.0), theme.px(p.1)),
                            (theme.px(q.0), theme.px(q.1)),
                        ],
                        style,
                    ))?;
                }
            }
            Mark::Patch(colour, opacity) => {
                let h = 0.4 * theme.label;
                area.draw(&Rectangle::new(
                    [
                        (theme.px(x), theme.px(y - h)),
                        (theme.px(x + mark_w), theme.px(y + h)),
                    ],
                    colour.mix(opacity).filled(),
                ))?;
            }
        }
        let font = theme
            .font(theme.label)
            .pos(plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Left,
                plotters::style::text_anchor::VPos::Center,
            ));
        area.draw_text(
            text,
            &font,
            (theme.px(x + mark_w + 0.6 * theme.label), theme.px(y)),
        )?;
        Ok(())
    }
}

/// Dashes from `a` to `b`: pieces `on` long, `off` apart.
fn dashes(a: (f64, f64), b: (f64, f64), on: f64, off: f64) -> Vec<((f64, f64), (f64, f64))> {
    let length = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
    let mut out = Vec::new();
    let mut s = 0.0;
    while s < length {
        let e = (s + on).min(length);
        let at = |t: f64| {
            (
                a.0 + (b.0 - a.0) * t / length,
                a.1 + (b.1 - a.1) * t / length,
            )
        };
        out.push((at(s), at(e)));
        s += on + off;
    }
    out
}

/// Draw with plotters into an SVG string at [`SUBPIXEL`] units per pixel and return the
/// SVG text with its `width`/`height` in output pixels.
pub fn draw_svg<F>(theme: &Theme, (w, h): (f64, f64), draw: F) -> Result<String, String>
where
    F: FnOnce(&DrawingArea<SVGBackend<'_>, plotters::coord::Shift>) -> Result<(), String>,
{
    register_fonts();
    let size = theme.canvas(w, h);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        draw(&root)?;
        root.present().map_err(|e| e.to_string())?;
    }
    let from = format!("width=\"{}\" height=\"{}\"", size.0, size.1);
    let to = format!("width=\"{}\" height=\"{}\"", fmt_px(w), fmt_px(h));
    Ok(plain_svg(&svg.replacen(&from, &to, 1)))
}

/// SVG that simple renderers draw right too: opacity 1 is SVG's default (without the
/// attribute, renderers that mishandle it, such as ImageMagick's own, no longer fill
/// polylines), polygons say they have no outline, and polylines of many short segments get
/// round joins (the same look at these widths, without mitre spikes).
pub fn plain_svg(svg: &str) -> String {
    svg.replace(" opacity=\"1\"", "")
        .replace("<polygon fill=", "<polygon stroke=\"none\" fill=")
        .replace("<polygon opacity=", "<polygon stroke=\"none\" opacity=")
        .replace(
            "<polyline fill=\"none\"",
            "<polyline fill=\"none\" stroke-linejoin=\"round\"",
        )
}

fn fmt_px(v: f64) -> String {
    let s = format!("{v:.1}");
    s.trim_end_matches(".0").to_string()
}

/// A tick label: at most six significant digits, a typeset minus sign.
pub fn tick(v: f64) -> String {
    umbral::numfmt::short(v, 6).replace('-', "−")
}

/// A parameter name typeset for a figure or table: Greek names as letters, trailing digits
/// as subscripts (`alpha13` → α₁₃, `eps3` → ε₃, `a` → a).
pub fn symbol(name: &str) -> String {
    let split = name.trim_end_matches(|c: char| c.is_ascii_digit()).len();
    let (stem, digits) = name.split_at(split);
    let letter = match stem {
        "alpha" => "α",
        "beta" => "β",
        "gamma" => "γ",
        "delta" => "δ",
        "eps" | "epsilon" => "ε",
        "zeta" => "ζ",
        "eta" => "η",
        "theta" => "θ",
        "kappa" => "κ",
        "lambda" => "λ",
        "mu" => "μ",
        "nu" => "ν",
        "xi" => "ξ",
        "rho" => "ρ",
        "sigma" => "σ",
        "tau" => "τ",
        "phi" => "φ",
        "chi" => "χ",
        "psi" => "ψ",
        "omega" => "ω",
        "inclination" => "θₒ",
        other => other,
    };
    const SUB: [char; 10] = ['₀', '₁', '₂', '₃', '₄', '₅', '₆', '₇', '₈', '₉'];
    let sub: String = digits
        .chars()
        .map(|c| SUB[c.to_digit(10).unwrap_or(0) as usize])
        .collect();
    format!("{letter}{sub}")
}

/// A figure file's format, from its extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureFormat {
    Svg,
    Png,
    Pdf,
}

impl FigureFormat {
    /// The format `path` names by its extension (`.svg`, `.png`, `.pdf`, any case).
    pub fn of(path: &str) -> Result<FigureFormat, CliError> {
        let ext = Path::new(path)
            .extension()
            .and_then(|e| e.to_str())
            .map(|e| e.to_ascii_lowercase());
        match ext.as_deref() {
            Some("svg") => Ok(FigureFormat::Svg),
            Some("png") => Ok(FigureFormat::Png),
            Some("pdf") => Ok(FigureFormat::Pdf),
            _ => Err(CliError::usage(format!(
                "cannot write figure '{path}': the extension must be .svg, .png or .pdf"
            ))),
        }
    }
}

/// The bytes of `svg` in `format` (PNG at the theme's scale, PDF at 72 points per pixel).
pub fn encode(svg: &str, format: FigureFormat, theme: &Theme) -> Result<Vec<u8>, String> {
    if format == FigureFormat::Svg {
        return Ok(svg.as_bytes().to_vec());
    }
    let mut options = resvg::usvg::Options::default();
    {
        let db = options.fontdb_mut();
        for bytes in [
            dejavu::sans::regular(),
            dejavu::sans::bold(),
            dejavu::sans::oblique(),
        ] {
            db.load_font_data(bytes.to_vec());
        }
        db.set_sans_serif_family("DejaVu Sans");
    }
    options.font_family = "DejaVu Sans".into();
    let tree = resvg::usvg::Tree::from_str(svg, &options).map_err(|e| e.to_string())?;
    match format {
        FigureFormat::Png => {
            let scale = theme.png_scale;
            let size = tree.size();
            let (w, h) = (
                (size.width() * scale).ceil() as u32,
                (size.height() * scale).ceil() as u32,
            );
            let mut pixmap =
                resvg::tiny_skia::Pixmap::new(w, h).ok_or("the figure has no area".to_string())?;
            resvg::render(
                &tree,
                resvg::tiny_skia::Transform::from_scale(scale, scale),
                &mut pixmap.as_mut(),
            );
            pixmap.encode_png().map_err(|e| e.to_string())
        }
        FigureFormat::Pdf => svg2pdf::to_pdf(
            &tree,
            svg2pdf::ConversionOptions::default(),
            svg2pdf::PageOptions::default(),
        )
        .map(|pdf| sorted_resources(&pdf))
        .map_err(|e| e.to_string()),
        FigureFormat::Svg => unreachable!("returned above"),
    }
}

/// The PDF with the entries of its resource dictionaries in sorted order. svg2pdf writes them
/// in a hash map's order, which changes from run to run; the entries are lines of the form
/// `/name N 0 R`, and sorting a run of them keeps its length, so every object's offset in the
/// cross-reference table stays right. The same figure then gives the same bytes every time.
fn sorted_resources(pdf: &[u8]) -> Vec<u8> {
    fn entry(line: &[u8]) -> bool {
        let text = match std::str::from_utf8(line) {
            Ok(t) => t.trim_start_matches(' '),
            Err(_) => return false,
        };
        let mut words = text.split(' ');
        let (Some(name), Some(number), Some("0"), Some("R"), None) = (
            words.next(),
            words.next(),
            words.next(),
            words.next(),
            words.next(),
        ) else {
            return false;
        };
        name.starts_with('/')
            && name.len() > 1
            && name[1..].chars().all(|c| c.is_ascii_alphanumeric())
            && !number.is_empty()
            && number.chars().all(|c| c.is_ascii_digit())
    }
    let mut out = Vec::with_capacity(pdf.len());
    let lines: Vec<&[u8]> = pdf.split_inclusive(|&b| b == b'\n').collect();
    let mut k = 0;
    while k < lines.len() {
        let body = |l: &[u8]| l.strip_suffix(b"\n").unwrap_or(l).to_vec();
        if entry(&body(lines[k])) && lines[k].ends_with(b"\n") {
            let mut end = k;
            while end < lines.len() && lines[end].ends_with(b"\n") && entry(&body(lines[end])) {
                end += 1;
            }
            let mut run: Vec<&[u8]> = lines[k..end].to_vec();
            run.sort();
            for line in run {
                out.extend_from_slice(line);
            }
            k = end;
        } else {
            out.extend_from_slice(lines[k]);
            k += 1;
        }
    }
    out
}

/// Write the figure `svg` to its staged file `path` in the format its extension names.
pub fn write_figure(
    outputs: &mut OutputTransaction,
    path: &str,
    svg: &str,
    theme: &Theme,
) -> Result<(), CliError> {
    let format = FigureFormat::of(path)?;
    let bytes = encode(svg, format, theme)
        .map_err(|e| CliError::usage(format!("cannot write figure '{path}': {e}")))?;
    outputs
        .write(Path::new(path), &bytes)
        .map_err(|e| CliError::usage(format!("cannot write figure '{path}': {}", e.message)))
}

/// Write `svg` as `stem.svg`, `stem.png` and `stem.pdf` in `dir` (the demo's figures).
pub fn write_figure_set(
    outputs: &mut OutputTransaction,
    dir: &Path,
    stem: &str,
    svg: &str,
    theme: &Theme,
) -> Result<(), CliError> {
    for ext in ["svg", "png", "pdf"] {
        let path = dir.join(format!("{stem}.{ext}"));
        write_figure(outputs, &path.to_string_lossy(), svg, theme)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cycle_has_eight_distinct_colours_then_dashes() {
        let looks: Vec<SeriesLook> = (0..24).map(series).collect();
        for i in 0..24 {
            for j in 0..i {
                assert_ne!(looks[i], looks[j], "series {i} and {j} look alike");
            }
        }
        assert_eq!(looks[8].dash, Dash::Long);
    }

    #[test]
    fn every_format_is_written() {
        let theme = Theme::new(FigureStyle::Paper);
        let svg = draw_svg(&theme, (120.0, 80.0), |root| {
            let mut legend = Legend::default();
            legend.add(Mark::Line(series(0), 1.4), "α₁₃ = 3√3 M, θₒ = 17°");
            legend
                .draw_column(root, &theme, (5.0, 5.0))
                .map_err(|e| e.to_string())
        })
        .unwrap();
        assert!(svg.contains("width=\"120\" height=\"80\" viewBox=\"0 0 1200 800\""));
        let png = encode(&svg, FigureFormat::Png, &theme).unwrap();
        assert_eq!(&png[1..4], b"PNG");
        let pdf = encode(&svg, FigureFormat::Pdf, &theme).unwrap();
        assert_eq!(&pdf[..5], b"%PDF-");
        assert!(FigureFormat::of("x.jpg").is_err());
        assert_eq!(symbol("alpha13"), "α₁₃");
        assert_eq!(symbol("eps3"), "ε₃");
        assert_eq!(symbol("a"), "a");
        assert_eq!(FigureFormat::of("x.PDF").unwrap(), FigureFormat::Pdf);
    }
}
