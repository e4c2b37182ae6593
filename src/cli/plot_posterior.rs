//! SVG corner plot of posterior samples: an n × n lower-triangular grid with each parameter's
//! smoothed density on the diagonal (over its histogram, with the median and 68 % equal-tailed
//! interval marked) and, below it, each pair's smoothed 68 % and 95 % highest-density regions,
//! shaded and outlined.
//!
//! Smoothing: Gaussian kernel density estimates (`umbral::sampling::kde`), with Silverman's
//! bandwidth h = 0.9 min(σ, IQR/1.349) n^(−1/5) on the diagonal (Silverman 1986, "Density
//! Estimation", Chapman & Hall, eq. 3.31) and Scott's h_j = min(σ_j, IQR_j/1.349) n^(−1/6) per
//! axis below it (the 2-D normal-reference rule; Scott 1992, "Multivariate Density
//! Estimation", Wiley, ch. 6, from memory), reflected at the hard edges of the priors
//! (uniform, log-uniform and isotropic bounds; Silverman 1986, §2.10) so that no density leaks
//! past a bound (exact for a density flat at the edge; one falling to zero there comes out
//! slightly raised next to it). An axis ends at such an edge when the edge lies within 5 % of the axis's span
//! of where it would end otherwise. The highest-density regions are the grid cells of the
//! smoothed density holding 68 % and 95 % of its mass in the panel, contoured by marching
//! squares with linear interpolation (the `contour` crate): each outline is closed, or ends at
//! the panel's edge where the region reaches it (a prior edge, or the end of the plotted
//! range).
//!
//! n is the least effective sample size of the plotted parameters rather than the number of
//! rows: the rows of an ensemble run are autocorrelated, and an estimate is as noisy as the
//! independent draws behind it (common practice, no source). The histograms follow Scott's
//! normal-reference rule, h = 3.5 s n^(−1/3) with the same n
//! (`umbral::sampling::histogram`), clamped to 10–80 bins.

use super::plot::plot_error;
use super::CliError;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use umbral::numfmt::Num;
use umbral::posterior::Inference;
use umbral::sampling::histogram::{plot_range, scott_width, Axis};
use umbral::sampling::kde::{density_1d, scott_bandwidth, silverman_bandwidth, Density2d};
use umbral::sampling::summary::Marginal;
use umbral::sampling::Prior;

/// The most parameters a corner plot shows.
pub const MAX_PARAMETERS: usize = 6;

/// Densities and highest-density regions.
const BLUE: RGBColor = super::figure::CYCLE[0];
/// The histogram behind a smoothed density.
const GREY: RGBColor = RGBColor(150, 150, 150);
/// The median and the equal-tailed interval.
const ORANGE: RGBColor = super::figure::CYCLE[1];
/// The highest-density regions shaded and outlined below the diagonal.
const HPD_LEVELS: [f64; 2] = [0.68, 0.95];
/// An axis ends at a prior edge within this fraction of its span.
const EDGE_SNAP: f64 = 0.05;
/// Grid cells per bandwidth of a smoothed density (the binned estimate needs at least 2).
const CELLS_PER_BANDWIDTH: f64 = 4.0;
/// The equal-tailed interval shaded on the diagonal.
const INTERVAL: f64 = 0.68;

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
type Panel<'a> = ChartContext<'a, SVGBackend<'a>, Cartesian2d<Ticked, Ticked>>;

/// A linear axis over [low, high] with its ticks at given values (grid lines and labels).
struct Ticked {
    low: f64,
    high: f64,
    ticks: Vec<f64>,
}

impl Ranged for Ticked {
    type ValueType = f64;
    type FormatOption = DefaultFormatting;

    fn map(&self, v: &f64, limit: (i32, i32)) -> i32 {
        let fraction = (v - self.low) / (self.high - self.low);
        limit.0 + ((limit.1 - limit.0) as f64 * fraction).round() as i32
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            Vec::new()
        } else {
            self.ticks.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.low..self.high
    }
}

/// The columns a corner plot shows, in the order it shows them, and the names it leaves out.
/// Order: the shared (deviation) parameters, then source by source its spin `a@K`, its
/// inclination `inclination@K` and its other nuisances. Every parameter is shown when there
/// are at most [`MAX_PARAMETERS`]; otherwise the shared ones, spins and inclinations up to the
/// limit.
pub fn chosen(names: &[String]) -> (Vec<usize>, Vec<String>) {
    // (source, rank within the source, column): shared parameters are source 0.
    let key = |i: usize| {
        let (base, source) = match names[i].split_once('@') {
            Some((b, k)) => (b, k.parse::<usize>().unwrap_or(usize::MAX)),
            None => (names[i].as_str(), 0),
        };
        let rank = match base {
            _ if source == 0 => 0,
            "a" => 0,
            "inclination" => 1,
            _ => 2,
        };
        (source, rank, i)
    };
    let mut order: Vec<usize> = (0..names.len()).collect();
    order.sort_by_key(|&i| key(i));
    if names.len() <= MAX_PARAMETERS {
        return (order, Vec::new());
    }
    let (mut shown, mut left) = (Vec::new(), Vec::new());
    for i in order {
        if key(i).1 < 2 && shown.len() < MAX_PARAMETERS {
            shown.push(i);
        } else {
            left.push(names[i].clone());
        }
    }
    (shown, left)
}

/// A parameter's axis label: a symbol for the model's names (θₒ for the inclination, κ for the
/// ring-to-shadow ratio), the unit in brackets, and `@K` kept when there are several sources.
fn label(name: &str, several_sources: bool) -> String {
    let (base, source) = match name.split_once('@') {
        Some((b, k)) => (b, format!("@{k}")),
        None => (name, String::new()),
    };
    let source = if several_sources {
        source
    } else {
        String::new()
    };
    let (symbol, unit) = match base {
        "inclination" => ("θₒ", " (deg)"),
        "kappa" => ("κ", ""),
        "mass_msun" => ("M", " (M☉)"),
        "distance_mpc" => ("D", " (Mpc)"),
        "theta_g_uas" => ("θ_g", " (μas)"),
        other => (other, ""),
    };
    format!("{symbol}{source}{unit}")
}

/// One plotted parameter.
struct Column {
    label: String,
    /// The samples (inclinations in degrees).
    values: Vec<f64>,
    /// The plotted range.
    low: f64,
    high: f64,
    /// The prior's hard edges in plotted units (±∞ where there is none).
    edges: (f64, f64),
    bins_1d: usize,
    /// Silverman's and Scott's 2-D bandwidths (`None`: the samples have no spread).
    bandwidth_1d: Option<f64>,
    bandwidth_2d: Option<f64>,
    median: f64,
    interval: [f64; 2],
    ticks: Vec<f64>,
}

/// The least effective sample size of the shown columns, at most the number of rows.
fn effective_size(inference: &Inference, shown: &[usize]) -> f64 {
    let rows = inference.samples.len() as f64;
    shown
        .iter()
        .filter_map(|&i| inference.summaries.get(i).map(|s| s.ess))
        .filter(|e| e.is_finite() && *e > 0.0)
        .fold(rows, f64::min)
}

/// The hard edges of `prior` (finite ends of a bounded prior; ±∞ for a normal one), times
/// `scale`.
fn hard_edges(prior: Option<&Prior>, scale: f64) -> (f64, f64) {
    match prior {
        Some(Prior::Uniform { low, high })
        | Some(Prior::LogUniform { low, high })
        | Some(Prior::Isotropic { low, high }) => (low * scale, high * scale),
        _ => (f64::NEG_INFINITY, f64::INFINITY),
    }
}

/// `range` extended to a prior edge lying within [`EDGE_SNAP`] of its span beyond either end.
fn snap_to_edges((low, high): (f64, f64), (lo_edge, hi_edge): (f64, f64)) -> (f64, f64) {
    let reach = EDGE_SNAP * (high - low);
    let low = if lo_edge <= low && low - lo_edge <= reach {
        lo_edge
    } else {
        low
    };
    let high = if hi_edge >= high && hi_edge - high <= reach {
        hi_edge
    } else {
        high
    };
    (low, high)
}

/// The shown columns of `inference` (`priors` in its column order) from `sources` sources,
/// with their ranges, histogram bins and bandwidths for `n_eff` draws, and about `ticks` ticks.
fn columns(
    inference: &Inference,
    (shown, priors, sources): (&[usize], &[Prior], usize),
    n_eff: f64,
    ticks: usize,
) -> Result<Vec<Column>, CliError> {
    shown
        .iter()
        .map(|&i| {
            let name = &inference.names[i];
            let scale = if name.starts_with("inclination") {
                180.0 / std::f64::consts::PI
            } else {
                1.0
            };
            let values: Vec<f64> = inference.samples.iter().map(|r| r[i] * scale).collect();
            let m = Marginal::new(&values)
                .map_err(|e| CliError::usage(format!("corner plot of {name}: {e}")))?;
            let edges = hard_edges(priors.get(i), scale);
            let (low, high) = snap_to_edges(plot_range(&m), edges);
            let interval = m
                .equal_tailed(INTERVAL)
                .map_err(|e| CliError::usage(format!("corner plot of {name}: {e}")))?;
            let bins_1d = scott_width(&m, n_eff, 1)
                .map_or(10, |h| (((high - low) / h).ceil() as usize).clamp(10, 80));
            Ok(Column {
                label: label(name, sources > 1),
                bins_1d,
                bandwidth_1d: silverman_bandwidth(&m, n_eff),
                bandwidth_2d: scott_bandwidth(&m, n_eff, 2),
                median: m.median(),
                interval,
                ticks: nice_ticks(low, high, ticks),
                values,
                low,
                high,
                edges,
            })
        })
        .collect()
}

/// The cells of a smoothed density over `col`'s range for bandwidth `h`:
/// [`CELLS_PER_BANDWIDTH`] per bandwidth within `bins` (at least, at most); where that is too
/// few, the bandwidth is widened to two cells. Returns the axis and the bandwidth.
fn smoothing_axis(col: &Column, h: f64, (least, most): (usize, usize)) -> (Axis, f64) {
    let span = col.high - col.low;
    let bins = ((CELLS_PER_BANDWIDTH * span / h).ceil() as usize).clamp(least, most);
    let axis = Axis::new(col.low, col.high, bins);
    (axis, h.max(2.0 * axis.width()))
}

/// About `target` round tick values (1, 2 or 5 × 10^k apart) inside [lo, hi], kept 6 % of the
/// span away from either end so that the labels of neighbouring panels never meet.
fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    let span = hi - lo;
    let inner = (lo + 0.06 * span, hi - 0.06 * span);
    let raw = span / target.max(2) as f64;
    let decade = 10f64.powf(raw.log10().floor());
    let mut steps: Vec<f64> = [0.1, 0.2, 0.5, 1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * decade)
        .filter(|&s| s <= raw * 1.0000001)
        .collect();
    steps.reverse();
    for step in steps.iter().copied().chain(std::iter::once(0.1 * decade)) {
        let first = (inner.0 / step).ceil() as i64;
        let last = (inner.1 / step).floor() as i64;
        if last - first >= 1 {
            return (first..=last).map(|k| k as f64 * step).collect();
        }
    }
    vec![0.5 * (lo + hi)]
}

/// A tick label: plain decimals with as many places as the tick spacing needs, or
/// `m.me±e` for magnitudes from 10⁵ up or below 10⁻³.
fn tick_label(value: f64, ticks: &[f64]) -> String {
    let step = match ticks {
        [a, b, ..] => (b - a).abs(),
        _ => value.abs().max(1e-300),
    };
    let magnitude = ticks.iter().fold(0.0f64, |m, t| m.max(t.abs()));
    let places = |s: f64| (-(s.log10() + 1e-9).floor()).max(0.0) as usize;
    if magnitude >= 1e5 || (magnitude > 0.0 && magnitude < 1e-3) {
        let exponent = magnitude.log10().floor();
        format!("{:.*e}", places(step / 10f64.powf(exponent)), value)
    } else if value.abs() < 0.5 * step * 1e-6 {
        "0".to_string()
    } else {
        format!("{:.*}", places(step), value)
    }
}

/// Pixel geometry of the grid: `n` square panels of side `panel`, `gap` apart, with the
/// y labels in a strip of width `left` and the x labels in one of height `bottom`.
struct Layout {
    n: usize,
    panel: i32,
    gap: i32,
    left: i32,
    top: i32,
    bottom: i32,
    right: i32,
}

impl Layout {
    /// The layout of `n` panels under a header with `keys` rows of key and `notes` lines of
    /// notes.
    fn new(n: usize, keys: usize, notes: usize) -> Layout {
        let panel = (880 / n.max(1) as i32).clamp(160, 440) * U;
        Layout {
            n,
            panel,
            gap: 10 * U,
            left: 72 * U,
            top: (KEY_TOP - 2 + KEY_ROW * keys as i32 + NOTE_ROW * notes as i32) * U,
            bottom: 58 * U,
            right: 24 * U,
        }
    }

    fn size(&self) -> (u32, u32) {
        let grid = self.n as i32 * self.panel + (self.n as i32 - 1) * self.gap;
        (
            (self.left + grid + self.right) as u32,
            (self.top + grid + self.bottom + 8 * U) as u32,
        )
    }

    /// The drawing area of panel (row `i`, column `j`) with its label strips: the bottom row
    /// takes the x strip below it, the first column the y strip to its left.
    fn area<'a>(&self, root: &Area<'a>, i: usize, j: usize) -> (Area<'a>, bool, bool) {
        let (bottom, left) = (i + 1 == self.n, j == 0 && (i > 0 || self.n == 1));
        let x = self.left + j as i32 * (self.panel + self.gap);
        let y = self.top + i as i32 * (self.panel + self.gap);
        let (x0, w) = if left {
            (x - self.left, self.panel + self.left)
        } else {
            (x, self.panel)
        };
        let h = self.panel + if bottom { self.bottom } else { 0 };
        (root.clone().shrink((x0, y), (w, h)), bottom, left)
    }
}

/// A corner plot of `inference`'s samples from `sources` sources (see the module docs) titled
/// `title`; `priors` are the sampled parameters' priors in the order of `inference.names` (their
/// hard edges reflect the smoothed densities). Returns the SVG text (`path` names it in errors).
pub fn corner_plot(
    path: &str,
    title: &str,
    inference: &Inference,
    priors: &[Prior],
    sources: usize,
) -> Result<String, CliError> {
    let (shown, left_out) = chosen(&inference.names);
    let n_eff = effective_size(inference, &shown);
    let ticks = (Layout::new(shown.len(), 0, 0).panel / (80 * U)).max(3) as usize;
    let cols = columns(inference, (&shown, priors, sources), n_eff, ticks)?;
    let mut notes = vec![format!(
        "{} samples, {:.0} effective. Smoothed with Gaussian kernels, bandwidth 0.9 \
         min(σ, IQR/1.349) n^(−1/5) on the diagonal (Silverman) and min(σ, IQR/1.349) n^(−1/6) \
         per axis below it (Scott), n the effective size; histogram bins by Scott's rule.",
        inference.samples.len(),
        n_eff
    )];
    let reflected: Vec<String> = cols
        .iter()
        .filter_map(|c| {
            let ends: Vec<String> = [c.edges.0, c.edges.1]
                .iter()
                .filter(|e| e.is_finite())
                // Seven significant digits: an edge in degrees from radians reads as given.
                .map(|e| Num(format!("{e:.6e}").parse().unwrap_or(*e)).to_string())
                .collect();
            (!ends.is_empty()).then(|| format!("{} at {}", c.label, ends.join(" and ")))
        })
        .collect();
    if !reflected.is_empty() {
        notes.push(format!(
            "Densities reflected at the prior edges (Silverman 1986, §2.10): {}.",
            reflected.join("; ")
        ));
    }
    if !left_out.is_empty() {
        notes.push(format!(
            "Not shown (at most {MAX_PARAMETERS}: the shared parameters, then each source's \
             spin and inclination): {}",
            left_out.join(", ")
        ));
    }
    let width = (Layout::new(cols.len(), 0, 0).size().0 / U as u32) as usize;
    let keys = key_rows(&keys(cols.len() > 1), width);
    let notes = wrap(&notes, width);
    let layout = Layout::new(cols.len(), keys.len(), notes.len());
    let mut diagonals = Vec::new();
    for col in &cols {
        diagonals.push(smooth_1d(col)?);
    }
    let mut pairs = Vec::new();
    for (i, y) in cols.iter().enumerate() {
        for x in cols.iter().take(i) {
            pairs.push(smooth_pair(x, y)?);
        }
    }
    let smooth = Smoothed { diagonals, pairs };
    let header = Header {
        title,
        keys: &keys,
        notes: &notes,
    };
    super::figure::register_fonts();
    let mut svg = String::new();
    draw_corner(&mut svg, path, &header, (&cols, &smooth), &layout)?;
    // Drawn at U units per pixel (paths placed to a tenth of a pixel): the file's size in
    // pixels.
    let (w, h) = layout.size();
    let svg = svg.replacen(
        &format!("width=\"{w}\" height=\"{h}\""),
        &format!("width=\"{}\" height=\"{}\"", w / U as u32, h / U as u32),
        1,
    );
    // Every colour is opaque (see `blend`), so the plain form changes no pixel.
    Ok(super::figure::plain_svg(&svg))
}

/// Drawing units per output pixel: paths are placed to a tenth of a pixel.
const U: i32 = super::figure::SUBPIXEL as i32;

/// The width of a character of the key's text in pixels, about (a generous estimate for a
/// sans-serif font; plotters' size 13 is 10.5 px in SVG).
const KEY_CHAR: f64 = 6.5;
/// The same for the notes (size 12).
const NOTE_CHAR: f64 = 6.0;
/// The middle of the first row of the key, and the height of a key row and of a note line.
const KEY_TOP: i32 = 44;
const KEY_ROW: i32 = 22;
const NOTE_ROW: i32 = 18;
/// A key entry's mark and the room around it, in pixels.
const SWATCH: i32 = 30;
const KEY_GAP: i32 = 24;

/// The marks a key explains.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Mark {
    /// The median line on the shaded equal-tailed interval.
    Interval,
    /// A smoothed density's curve.
    Density,
    /// A histogram's outline.
    Histogram,
    /// A highest-density region: its shade and outline (level index into [`HPD_LEVELS`]).
    Region(usize),
}

/// The key's entries: the diagonal's marks, and the regions when there are pairs.
fn keys(pairs: bool) -> Vec<(Mark, String)> {
    let mut keys = vec![
        (
            Mark::Interval,
            format!("median and {:.0}% equal-tailed interval", 100.0 * INTERVAL),
        ),
        (Mark::Density, "smoothed density".to_string()),
        (Mark::Histogram, "histogram".to_string()),
    ];
    if pairs {
        for (k, level) in HPD_LEVELS.iter().enumerate() {
            keys.push((
                Mark::Region(k),
                format!("{:.0}% highest-density region (smoothed)", 100.0 * level),
            ));
        }
    }
    keys
}

/// The width of a key entry in pixels.
fn key_width(text: &str) -> i32 {
    SWATCH + (KEY_CHAR * text.chars().count() as f64) as i32 + KEY_GAP
}

/// The key's entries in rows that fit `width` pixels.
fn key_rows(keys: &[(Mark, String)], width: usize) -> Vec<Vec<(Mark, String)>> {
    let room = width as i32 - 32;
    let mut rows: Vec<Vec<(Mark, String)>> = Vec::new();
    let mut used = room;
    for key in keys {
        let w = key_width(&key.1);
        if used + w > room {
            rows.push(Vec::new());
            used = 0;
        }
        used += w;
        if let Some(row) = rows.last_mut() {
            row.push(key.clone());
        }
    }
    rows
}

/// Join `pieces` into lines that fit `width` pixels of the notes' text, breaking between
/// pieces and, for a long piece, between words.
fn wrap(pieces: &[String], width: usize) -> Vec<String> {
    let max = (width.saturating_sub(40) as f64 / NOTE_CHAR) as usize;
    let mut lines: Vec<String> = Vec::new();
    for piece in pieces {
        let mut line = String::new();
        for word in piece.split(' ') {
            if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > max {
                lines.push(std::mem::take(&mut line));
            }
            if !line.is_empty() {
                line.push(' ');
            }
            line.push_str(word);
        }
        lines.push(line);
    }
    lines
}

/// The smoothed densities of a corner plot: one curve per column (`None` where the samples
/// have no spread), one set of regions per pair, row by row below the diagonal.
struct Smoothed {
    diagonals: Vec<Option<Vec<(f64, f64)>>>,
    pairs: Vec<Option<Vec<Regions>>>,
}

/// The title, the key in rows and the notes.
struct Header<'a> {
    title: &'a str,
    keys: &'a [Vec<(Mark, String)>],
    notes: &'a [String],
}

fn draw_corner(
    svg: &mut String,
    path: &str,
    header: &Header,
    (cols, smooth): (&[Column], &Smoothed),
    layout: &Layout,
) -> Result<(), CliError> {
    let root = SVGBackend::with_string(svg, layout.size()).into_drawing_area();
    root.fill(&WHITE).map_err(|e| plot_error(path, e))?;
    draw_header(&root, header).map_err(|e| plot_error(path, e))?;
    let mut pairs = smooth.pairs.iter();
    for (i, col) in cols.iter().enumerate() {
        let (area, bottom, left) = layout.area(&root, i, i);
        let curve = smooth.diagonals[i].as_deref();
        draw_diagonal(&area, col, curve, (bottom, left), cols.len() == 1)
            .map_err(|e| plot_error(path, e))?;
        for (j, other) in cols.iter().enumerate().take(i) {
            let regions = pairs.next().and_then(|r| r.as_deref());
            let (area, bottom, left) = layout.area(&root, i, j);
            draw_pair(&area, (other, col), regions, (bottom, left))
                .map_err(|e| plot_error(path, e))?;
        }
    }
    root.present().map_err(|e| plot_error(path, e))?;
    Ok(())
}

type DrawError = DrawingAreaErrorKind<std::io::Error>;

/// A region's shade (level index into [`HPD_LEVELS`]): darker for the smaller region.
fn region_shade(level: usize) -> RGBColor {
    blend(WHITE, BLUE, if level == 0 { 0.5 } else { 0.2 })
}

/// The shade of the equal-tailed interval on the diagonal.
fn band() -> RGBColor {
    blend(WHITE, ORANGE, 0.15)
}

/// The title, the key (each entry's mark drawn as in the panels) and the notes.
fn draw_header<'a>(root: &Area<'a>, header: &Header) -> Result<(), DrawError> {
    // Text is placed by its middle: renderers agree on that more than on its top.
    let left = Pos::new(HPos::Left, VPos::Center);
    let text = |size: u32, colour: RGBColor| {
        ("sans-serif", size * U as u32)
            .into_font()
            .color(&colour)
            .pos(left)
    };
    root.draw_text(header.title, &text(20, BLACK), (16 * U, 18 * U))?;
    for (r, row) in header.keys.iter().enumerate() {
        let y = (KEY_TOP + KEY_ROW * r as i32) * U;
        let mut x = 16 * U;
        for (mark, key) in row {
            match mark {
                Mark::Interval => {
                    root.draw(&Rectangle::new(
                        [(x, y - 6 * U), (x + 22 * U, y + 6 * U)],
                        band().filled(),
                    ))?;
                    root.draw(&PathElement::new(
                        vec![(x + 11 * U, y - 7 * U), (x + 11 * U, y + 7 * U)],
                        ORANGE.stroke_width(2 * U as u32),
                    ))?;
                }
                Mark::Density => {
                    root.draw(&PathElement::new(
                        vec![
                            (x, y + 5 * U),
                            (x + 8 * U, y - 4 * U),
                            (x + 14 * U, y - 4 * U),
                            (x + 22 * U, y + 5 * U),
                        ],
                        BLUE.stroke_width(2 * U as u32),
                    ))?;
                }
                Mark::Histogram => {
                    root.draw(&PathElement::new(
                        vec![
                            (x, y + 6 * U),
                            (x, y),
                            (x + 8 * U, y),
                            (x + 8 * U, y - 6 * U),
                            (x + 15 * U, y - 6 * U),
                            (x + 15 * U, y + U),
                            (x + 22 * U, y + U),
                            (x + 22 * U, y + 6 * U),
                        ],
                        GREY.stroke_width(U as u32),
                    ))?;
                }
                Mark::Region(level) => {
                    root.draw(&Rectangle::new(
                        [(x, y - 6 * U), (x + 22 * U, y + 6 * U)],
                        region_shade(*level).filled(),
                    ))?;
                    let line = vec![(x, y), (x + 22 * U, y)];
                    if *level == 0 {
                        root.draw(&PathElement::new(line, BLACK.stroke_width(2 * U as u32)))?;
                    } else {
                        root.draw(&DashedPathElement::new(
                            line,
                            5 * U,
                            3 * U,
                            BLACK.stroke_width(U as u32),
                        ))?;
                    }
                }
            }
            root.draw_text(key, &text(13, BLACK), (x + SWATCH * U, y))?;
            x += key_width(key) * U;
        }
    }
    let grey = text(12, blend(WHITE, BLACK, 0.7));
    let notes_top = KEY_TOP + KEY_ROW * header.keys.len() as i32;
    for (k, note) in header.notes.iter().enumerate() {
        root.draw_text(note, &grey, (16 * U, (notes_top + NOTE_ROW * k as i32) * U))?;
    }
    Ok(())
}

/// A panel's chart over `x` × `y` with its tick labels and axis names where it has label
/// strips (`bottom`, `left`), and light grid lines at the ticks with `grid` (they would cross
/// the shaded regions of a pair, so those panels go without).
fn panel<'a>(
    area: &Area<'a>,
    x: (&Column, (f64, f64)),
    y: (&str, (f64, f64), Vec<f64>),
    (bottom, left): (bool, bool),
    grid: bool,
) -> Result<Panel<'a>, DrawError> {
    let (col, (x_lo, x_hi)) = x;
    let (y_name, (y_lo, y_hi), y_ticks) = y;
    let mut chart = ChartBuilder::on(area)
        .x_label_area_size(if bottom { 58 * U } else { 0 })
        .y_label_area_size(if left { 72 * U } else { 0 })
        .build_cartesian_2d(
            Ticked {
                low: x_lo,
                high: x_hi,
                ticks: col.ticks.clone(),
            },
            Ticked {
                low: y_lo,
                high: y_hi,
                ticks: y_ticks.clone(),
            },
        )?;
    let x_ticks = col.ticks.clone();
    let x_format = move |v: &f64| tick_label(*v, &x_ticks);
    let y_format = move |v: &f64| tick_label(*v, &y_ticks);
    let mut mesh = chart.configure_mesh();
    mesh.bold_line_style(blend(WHITE, BLACK, 0.08).stroke_width(U as u32))
        .light_line_style(TRANSPARENT)
        .axis_style(BLACK.stroke_width(U as u32))
        .set_all_tick_mark_size(5 * U)
        .label_style(("sans-serif", 12 * U))
        .axis_desc_style(("sans-serif", 15 * U))
        .x_label_formatter(&x_format)
        .y_label_formatter(&y_format);
    if !grid {
        mesh.disable_mesh();
    }
    if bottom {
        mesh.x_desc(col.label.as_str());
    }
    if left {
        mesh.y_desc(y_name);
    }
    mesh.draw()?;
    Ok(chart)
}

/// A frame around a panel's plotting area.
fn frame<'a>(chart: &mut Panel<'a>, x: (f64, f64), y: (f64, f64)) -> Result<(), DrawError> {
    let corners = vec![(x.0, y.0), (x.1, y.0), (x.1, y.1), (x.0, y.1), (x.0, y.0)];
    chart.draw_series(LineSeries::new(
        corners,
        blend(WHITE, BLACK, 0.6).stroke_width(U as u32),
    ))?;
    Ok(())
}

/// A column's smoothed density as a curve over its whole range: the reflected estimate at
/// the cell centres ([`density_1d`]), held level over the half cell at either end. `None`
/// when the samples have no spread.
fn smooth_1d(col: &Column) -> Result<Option<Vec<(f64, f64)>>, CliError> {
    let Some(h) = col.bandwidth_1d else {
        return Ok(None);
    };
    let (axis, h) = smoothing_axis(col, h, (200, 4000));
    let density = density_1d(&col.values, &axis, h, col.edges)
        .map_err(|e| CliError::usage(format!("corner plot of {}: {e}", col.label)))?;
    let mut curve = vec![(col.low, density[0])];
    curve.extend(
        density
            .iter()
            .enumerate()
            .map(|(k, &d)| (axis.centre(k), d)),
    );
    curve.push((col.high, density[density.len() - 1]));
    Ok(Some(curve))
}

/// The part of `curve` over [a, b], its ends interpolated.
fn clip(curve: &[(f64, f64)], (a, b): (f64, f64)) -> Vec<(f64, f64)> {
    let at = |x: f64| {
        let k = curve.partition_point(|p| p.0 < x).clamp(1, curve.len() - 1);
        let ((x0, y0), (x1, y1)) = (curve[k - 1], curve[k]);
        if x1 > x0 {
            y0 + (y1 - y0) * (x - x0) / (x1 - x0)
        } else {
            y1
        }
    };
    let mut out = vec![(a, at(a))];
    out.extend(curve.iter().copied().filter(|p| p.0 > a && p.0 < b));
    out.push((b, at(b)));
    out
}

/// A diagonal panel: the parameter's smoothed density, filled, over its histogram's outline,
/// its 68 % equal-tailed interval shaded and its median as a vertical line; the density axis
/// is labelled only when it is the one panel. Without a smoothed density (no spread) the
/// histogram is filled instead.
fn draw_diagonal<'a>(
    area: &Area<'a>,
    col: &Column,
    curve: Option<&[(f64, f64)]>,
    strips: (bool, bool),
    alone: bool,
) -> Result<(), DrawError> {
    let axis = Axis::new(col.low, col.high, col.bins_1d);
    let norm = 1.0 / (col.values.len() as f64 * axis.width());
    let histogram: Vec<f64> = axis.counts(&col.values).iter().map(|c| c * norm).collect();
    let highest = histogram
        .iter()
        .copied()
        .chain(curve.unwrap_or(&[]).iter().map(|p| p.1))
        .fold(0.0f64, f64::max);
    let top = 1.1 * highest;
    let y_ticks = if alone {
        std::iter::once(0.0)
            .chain(nice_ticks(0.0, top, 5))
            .collect()
    } else {
        Vec::new()
    };
    let mut chart = panel(
        area,
        (col, (col.low, col.high)),
        ("posterior density", (0.0, top), y_ticks),
        (strips.0, alone),
        true,
    )?;
    let [a, b] = col.interval;
    let inner = (a.max(col.low), b.min(col.high));
    chart.draw_series(std::iter::once(Rectangle::new(
        [(a, 0.0), (b, top)],
        band().filled(),
    )))?;
    let steps = step_outline(&axis, &histogram, (col.low, col.high));
    let under = |points: Vec<(f64, f64)>| {
        let (first, last) = (points[0].0, points[points.len() - 1].0);
        let mut outline = vec![(first, 0.0)];
        outline.extend(points);
        outline.push((last, 0.0));
        outline
    };
    let (whole, inside) = match curve {
        Some(c) => (under(c.to_vec()), under(clip(c, inner))),
        None => (
            steps.clone(),
            step_outline(&axis, &histogram, (inner.0, inner.1)),
        ),
    };
    for (outline, base) in [(whole, WHITE), (inside, band())] {
        let fill = blend(base, BLUE, 0.3);
        chart.draw_series(std::iter::once(Polygon::new(outline, fill.filled())))?;
    }
    chart.draw_series(LineSeries::new(steps, GREY.stroke_width(U as u32)))?;
    if let Some(c) = curve {
        chart.draw_series(LineSeries::new(c.to_vec(), BLUE.stroke_width(2 * U as u32)))?;
    }
    chart.draw_series(LineSeries::new(
        vec![(col.median, 0.0), (col.median, top)],
        ORANGE.stroke_width(2 * U as u32),
    ))?;
    frame(&mut chart, (col.low, col.high), (0.0, top))
}

/// The outline of a histogram's bars (`density` per bin of `axis`) over [lo, hi], from the
/// axis up and back down.
fn step_outline(axis: &Axis, density: &[f64], (lo, hi): (f64, f64)) -> Vec<(f64, f64)> {
    let mut points = vec![(lo, 0.0)];
    for (i, &d) in density.iter().enumerate() {
        let left = axis.low + i as f64 * axis.width();
        let (s, t) = (left.max(lo), (left + axis.width()).min(hi));
        if s < t {
            points.extend([(s, d), (t, d)]);
        }
    }
    points.push((hi, 0.0));
    points
}

/// `top` laid over `base` at opacity `f`, as one opaque colour (every SVG renderer shows it
/// alike).
fn blend(base: RGBColor, top: RGBColor, f: f64) -> RGBColor {
    let mix = |b: u8, t: u8| (b as f64 + f * (t as f64 - b as f64)).round() as u8;
    RGBColor(mix(base.0, top.0), mix(base.1, top.1), mix(base.2, top.2))
}

/// A polyline or ring of points.
type Line = Vec<(f64, f64)>;

/// A highest-density region of a pair in data coordinates: its rings for shading (each with
/// whether it is a hole) and its outlines for lines.
#[derive(Debug, Clone, Default)]
struct Regions {
    rings: Vec<(Vec<(f64, f64)>, bool)>,
    outlines: Vec<Vec<(f64, f64)>>,
}

/// The smoothed highest-density regions of a pair at [`HPD_LEVELS`]: the reflected 2-D
/// estimate ([`Density2d`]) with Scott's bandwidths, contoured at the level holding each
/// fraction of its mass in the panel. `None` when either parameter has no spread.
fn smooth_pair(x: &Column, y: &Column) -> Result<Option<Vec<Regions>>, CliError> {
    let (Some(hx), Some(hy)) = (x.bandwidth_2d, y.bandwidth_2d) else {
        return Ok(None);
    };
    let (ax, hx) = smoothing_axis(x, hx, (60, 400));
    let (ay, hy) = smoothing_axis(y, hy, (60, 400));
    let density = Density2d::new(&x.values, &y.values, (ax, ay), (hx, hy), (x.edges, y.edges))
        .map_err(|e| {
            CliError::usage(format!(
                "corner plot of {} against {}: {e}",
                y.label, x.label
            ))
        })?;
    let mut levels = Vec::new();
    for &fraction in &HPD_LEVELS {
        levels.push(match density.level(fraction) {
            Some(t) => regions(&density.values, (&ax, &ay), t)?,
            None => Regions::default(),
        });
    }
    Ok(Some(levels))
}

/// The region `values ≥ level` of a density at the cell centres of `x` × `y` (row-major, x
/// fastest), by marching squares with linear interpolation (the `contour` crate, whose sample
/// k sits at k + 1/2 and whose rings run along the grid's border where a region reaches it).
/// The rings, for shading, keep their stretches along the border; the outlines, for lines,
/// leave them out and so end at the border. Either is carried straight from the last cell
/// centre to the border (the density is held level over that half cell).
fn regions(values: &[f64], (x, y): (&Axis, &Axis), level: f64) -> Result<Regions, CliError> {
    let contours = contour::ContourBuilder::new(x.bins, y.bins, true)
        .contours(values, &[level])
        .map_err(|e| CliError::usage(format!("contouring failed: {e:?}")))?;
    let size = (x.bins as f64, y.bins as f64);
    let to_data = |points: Vec<(f64, f64)>| -> Vec<(f64, f64)> {
        points
            .into_iter()
            .map(|(i, j)| (x.low + i * x.width(), y.low + j * y.width()))
            .collect()
    };
    let mut out = Regions::default();
    for c in contours {
        for polygon in c.geometry().0.iter() {
            let rings = std::iter::once((polygon.exterior(), false))
                .chain(polygon.interiors().iter().map(|r| (r, true)));
            for (ring, hole) in rings {
                let points: Vec<(f64, f64)> = ring.0.iter().map(|p| (p.x, p.y)).collect();
                let (shade, lines) = split_ring(&points, size);
                out.rings.push((to_data(shade), hole));
                out.outlines.extend(lines.into_iter().map(to_data));
            }
        }
    }
    Ok(out)
}

/// Whether a point in grid coordinates lies on the border of a grid of `size` cells.
fn on_border((i, j): (f64, f64), (nx, ny): (f64, f64)) -> bool {
    i == 0.0 || j == 0.0 || i == nx || j == ny
}

/// `point` carried straight to the border at `border` (a border point next to it): along
/// whichever of the border's sides through `border` is nearer.
fn to_border(point: (f64, f64), border: (f64, f64), (nx, ny): (f64, f64)) -> (f64, f64) {
    let vertical = border.0 == 0.0 || border.0 == nx;
    let horizontal = border.1 == 0.0 || border.1 == ny;
    let across = (point.0 - border.0).abs();
    let along = (point.1 - border.1).abs();
    if vertical && (!horizontal || across <= along) {
        (border.0, point.1)
    } else {
        (point.0, border.1)
    }
}

/// A ring from the contour crate (grid coordinates, closed: its first point repeated last)
/// as a closed shading ring (border points next to inner points replaced by those points
/// carried to the border) and as lines: the whole ring closed when it does not touch the
/// border, else its runs of inner points, each carried to the border at both ends.
fn split_ring(ring: &[(f64, f64)], size: (f64, f64)) -> (Line, Vec<Line>) {
    let mut points = ring.to_vec();
    if points.len() > 1 && points.first() == points.last() {
        points.pop();
    }
    let n = points.len();
    let border = |k: usize| on_border(points[k % n], size);
    if n == 0 || (0..n).all(|k| !border(k)) {
        let mut closed = points.clone();
        if let Some(&first) = points.first() {
            closed.push(first);
        }
        return (points, vec![closed]);
    }
    let mut shade = Vec::new();
    for k in 0..n {
        if !border(k) {
            shade.push(points[k]);
            continue;
        }
        let (prev, next) = ((k + n - 1) % n, (k + 1) % n);
        let mut carried = false;
        for m in [prev, next] {
            if !border(m) {
                shade.push(to_border(points[m], points[k], size));
                carried = true;
            }
        }
        if !carried {
            shade.push(points[k]);
        }
    }
    // Lines: start just after a border point and walk once round.
    let start = (0..n).find(|&k| border(k)).unwrap_or(0);
    let mut lines = Vec::new();
    let mut run: Vec<(f64, f64)> = Vec::new();
    for step in 1..=n {
        let k = (start + step) % n;
        let before = (start + step - 1) % n;
        if border(k) {
            if !run.is_empty() {
                run.push(to_border(points[before], points[k], size));
                lines.push(std::mem::take(&mut run));
            }
        } else {
            if run.is_empty() {
                run.push(to_border(points[k], points[before], size));
            }
            run.push(points[k]);
        }
    }
    (shade, lines)
}

/// A panel below the diagonal: the smoothed 95 % and 68 % highest-density regions of `y`
/// against `x`, shaded (holes in the background's shade) and outlined, 68 % solid and 95 %
/// dashed.
fn draw_pair<'a>(
    area: &Area<'a>,
    (x, y): (&Column, &Column),
    regions: Option<&[Regions]>,
    strips: (bool, bool),
) -> Result<(), DrawError> {
    let mut chart = panel(
        area,
        (x, (x.low, x.high)),
        (&y.label, (y.low, y.high), y.ticks.clone()),
        strips,
        false,
    )?;
    let levels = regions.unwrap_or(&[]);
    // The wider region first, the narrower over it.
    for (k, level) in levels.iter().enumerate().rev() {
        let outside = if k + 1 < levels.len() {
            region_shade(k + 1)
        } else {
            WHITE
        };
        for (ring, hole) in &level.rings {
            let colour = if *hole { outside } else { region_shade(k) };
            chart.draw_series(std::iter::once(Polygon::new(ring.clone(), colour.filled())))?;
        }
    }
    for (k, level) in levels.iter().enumerate() {
        for line in &level.outlines {
            if k == 0 {
                chart.draw_series(LineSeries::new(
                    line.clone(),
                    BLACK.stroke_width(2 * U as u32),
                ))?;
            } else {
                chart.draw_series(DashedLineSeries::new(
                    line.clone(),
                    5 * U,
                    3 * U,
                    BLACK.stroke_width(U as u32),
                ))?;
            }
        }
    }
    frame(&mut chart, (x.low, x.high), (y.low, y.high))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn at_most_six_parameters_shared_first_then_spins_and_inclinations() {
        let few = names(&["a@1", "q", "inclination@1"]);
        assert_eq!(chosen(&few), (vec![1, 0, 2], vec![]));
        let many = names(&[
            "a@1",
            "q",
            "a@2",
            "inclination@1",
            "inclination@2",
            "kappa@1",
            "mass_msun@1",
            "kappa@2",
        ]);
        let (shown, left) = chosen(&many);
        assert_eq!(shown, vec![1, 0, 3, 2, 4]);
        assert_eq!(left, names(&["kappa@1", "mass_msun@1", "kappa@2"]));
        // Four sources and q: q, then spin and inclination source by source.
        let sources: Vec<String> = (1..=4)
            .flat_map(|k| [format!("a@{k}"), format!("inclination@{k}")])
            .chain(["q".to_string()])
            .collect();
        let (shown, left) = chosen(&sources);
        assert_eq!(shown, vec![8, 0, 1, 2, 3, 4]);
        assert_eq!(left, names(&["inclination@3", "a@4", "inclination@4"]));
    }

    #[test]
    fn labels_and_ticks_read_well() {
        assert_eq!(label("inclination@1", false), "θₒ (deg)");
        assert_eq!(label("kappa@2", true), "κ@2");
        assert_eq!(label("mass_msun@1", false), "M (M☉)");
        assert_eq!(label("q", true), "q");
        let ticks = nice_ticks(0.0, 1.0, 4);
        assert_eq!(ticks.len(), 4);
        for (t, want) in ticks.iter().zip([0.2, 0.4, 0.6, 0.8]) {
            assert!((t - want).abs() < 1e-12, "{ticks:?}");
        }
        let labels: Vec<String> = ticks.iter().map(|&t| tick_label(t, &ticks)).collect();
        assert_eq!(labels, ["0.2", "0.4", "0.6", "0.8"]);
        let big = nice_ticks(1.7e9, 2.35e9, 3);
        assert_eq!(tick_label(big[0], &big), "1.8e9", "{big:?}");
        // Ticks stay clear of the ends.
        let t = nice_ticks(0.001, 0.499, 3);
        assert!(t[0] > 0.001 + 0.06 * 0.498 && t[t.len() - 1] < 0.499 - 0.06 * 0.498);
    }

    /// A ring of the contour crate (from a region touching the bottom, left and top of a
    /// 5 × 4 grid): its shading ring is carried straight to the border, and its line is the
    /// run of inner points, ending on the border at both ends.
    #[test]
    fn rings_touching_the_border_become_lines_ending_on_it() {
        let ring = [
            (1.75, 3.5),
            (2.5, 2.5),
            (2.5, 1.5),
            (1.75, 0.5),
            (1.5, 0.0),
            (0.5, 0.0),
            (0.0, 0.5),
            (0.0, 3.5),
            (0.5, 4.0),
            (1.5, 4.0),
            (1.75, 3.5),
        ];
        let (shade, lines) = split_ring(&ring, (5.0, 4.0));
        assert_eq!(
            lines,
            vec![vec![
                (1.75, 4.0),
                (1.75, 3.5),
                (2.5, 2.5),
                (2.5, 1.5),
                (1.75, 0.5),
                (1.75, 0.0)
            ]]
        );
        assert_eq!(
            shade,
            vec![
                (1.75, 3.5),
                (2.5, 2.5),
                (2.5, 1.5),
                (1.75, 0.5),
                (1.75, 0.0),
                (0.5, 0.0),
                (0.0, 0.5),
                (0.0, 3.5),
                (0.5, 4.0),
                (1.75, 4.0)
            ]
        );
        // A ring clear of the border is one closed line.
        let inner = [(1.0, 1.0), (2.0, 1.0), (2.0, 2.0), (1.0, 1.0)];
        let (shade, lines) = split_ring(&inner, (5.0, 4.0));
        assert_eq!(shade, inner[..3].to_vec());
        assert_eq!(lines, vec![inner.to_vec()]);
    }

    /// Whether `(x, y)` lies inside the closed ring `ring` (even-odd rule).
    fn inside(ring: &[(f64, f64)], (x, y): (f64, f64)) -> bool {
        let mut odd = false;
        for k in 0..ring.len() {
            let ((x0, y0), (x1, y1)) = (ring[k], ring[(k + 1) % ring.len()]);
            if (y0 > y) != (y1 > y) && x < x0 + (y - y0) * (x1 - x0) / (y1 - y0) {
                odd = !odd;
            }
        }
        odd
    }

    /// A pair of a half-normal |u| (prior edge at 0, where its density is highest) and a
    /// correlated normal: the smoothed 68 % and 95 % regions hold about their fractions of the
    /// samples (the smoothing widens them slightly: a normal smoothed with Scott's bandwidths
    /// has 1 − (1 − p)^(1 + n^(−1/3)) inside its region of mass p, 0.693 and 0.955 here, less
    /// for the narrower kernel of the half-normal's axis), every outline is closed or ends on
    /// the panel's border, the region reaching the edge at 0 ends exactly there, and no
    /// outline crosses into x < 0.
    #[test]
    fn smoothed_regions_hold_their_fractions_and_end_at_the_prior_edge() {
        use rand_chacha::rand_core::SeedableRng;
        use rand_distr::{Distribution, StandardNormal};
        let n = 20_000;
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(9);
        let samples: Vec<Vec<f64>> = (0..n)
            .map(|_| {
                let u: f64 = StandardNormal.sample(&mut rng);
                let v: f64 = StandardNormal.sample(&mut rng);
                vec![u.abs(), 0.6 * u.abs() + 0.8 * v]
            })
            .collect();
        let summary = |name: &str| umbral::posterior::ParameterSummary {
            name: name.into(),
            prior: String::new(),
            median: 0.0,
            mean: 0.0,
            intervals: Vec::new(),
            rhat: 1.0,
            ess: n as f64,
        };
        let inference = Inference {
            names: names(&["x", "y"]),
            samples,
            summaries: vec![summary("x"), summary("y")],
            convergence: umbral::sampling::Convergence::new(1.0, n as f64, 0.5),
            evidence: None,
            steps: 0,
            evaluations: n,
            failures: 0,
            first_failure: None,
            quadrature: None,
        };
        let priors = [
            Prior::Uniform {
                low: 0.0,
                high: 10.0,
            },
            Prior::Normal {
                mean: 0.0,
                sigma: 10.0,
            },
        ];
        let cols = columns(&inference, (&[0, 1], &priors, 1), n as f64, 4).unwrap();
        assert_eq!(cols[0].low, 0.0, "the x axis starts at the prior edge");
        let levels = smooth_pair(&cols[0], &cols[1]).unwrap().unwrap();
        let (xs, ys) = (&cols[0].values, &cols[1].values);
        for (level, (p, most)) in levels.iter().zip([(0.68, 0.693), (0.95, 0.955)]) {
            let held = xs
                .iter()
                .zip(ys)
                .filter(|&(&x, &y)| {
                    level
                        .rings
                        .iter()
                        .filter(|(ring, _)| inside(ring, (x, y)))
                        .count()
                        % 2
                        == 1
                })
                .count() as f64
                / n as f64;
            println!("{p}: {held:.4} of the samples inside");
            assert!(held > p - 0.01 && held < most + 0.01, "{p}: {held}");
            let on_border = |(x, y): (f64, f64)| {
                x == cols[0].low || x == cols[0].high || y == cols[1].low || y == cols[1].high
            };
            let mut at_edge = 0;
            for line in &level.outlines {
                let (first, last) = (line[0], line[line.len() - 1]);
                assert!(
                    first == last || (on_border(first) && on_border(last)),
                    "{p}: an outline from {first:?} to {last:?}"
                );
                assert!(line.iter().all(|&(x, _)| x >= 0.0));
                at_edge += [first, last].iter().filter(|e| e.0 == 0.0).count();
            }
            assert_eq!(at_edge, 2, "{p}: the region reaches x = 0 and ends there");
        }
    }
}
