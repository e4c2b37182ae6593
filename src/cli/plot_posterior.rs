//! SVG corner plot of posterior samples: an n × n lower-triangular grid with each parameter's
//! histogram on the diagonal (median and 68 % equal-tailed interval marked) and the 2-D
//! histogram of each pair below it, outlined at its 68 % and 95 % highest-density regions.
//!
//! Bins follow Scott's normal-reference rule, h = 3.5 s n^(−1/(2+d)) per axis (d = 1 on the
//! diagonal, 2 below it; `umbral::sampling::histogram`), with n the least effective sample
//! size of the plotted parameters rather than the number of rows: the rows of an ensemble run
//! are autocorrelated, and a histogram is as noisy as the independent draws behind it (common
//! practice, no source). The counts are clamped to 10–80 bins on the diagonal and 8–50 per
//! axis below it so that a panel stays readable.

use super::plot::plot_error;
use super::plot_bounds::allowed_polygons;
use super::CliError;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use umbral::posterior::Inference;
use umbral::sampling::histogram::{counts_2d, density_threshold, plot_range, scott_width, Axis};
use umbral::sampling::summary::Marginal;

/// The most parameters a corner plot shows.
pub const MAX_PARAMETERS: usize = 6;

/// Histograms and 2-D cells.
const BLUE: RGBColor = RGBColor(31, 78, 121);
/// The median and the equal-tailed interval.
const ORANGE: RGBColor = RGBColor(196, 90, 17);
/// The highest-density regions outlined below the diagonal.
const HPD_LEVELS: [f64; 2] = [0.68, 0.95];
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

/// A parameter's axis label: a symbol for the model's names (θ_o for the inclination, κ for the
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
        "inclination" => ("θ_o", " (deg)"),
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
    bins_1d: usize,
    bins_2d: usize,
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

/// The shown columns of `inference` from `sources` sources with their bins (Scott's rule for
/// `n_eff` draws) and about `ticks` ticks.
fn columns(
    inference: &Inference,
    (shown, sources): (&[usize], usize),
    n_eff: f64,
    ticks: usize,
) -> Result<Vec<Column>, CliError> {
    let bins = |m: &Marginal, span: f64, dims: usize, (lo, hi): (usize, usize)| {
        scott_width(m, n_eff, dims).map_or(lo, |h| ((span / h).ceil() as usize).clamp(lo, hi))
    };
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
            let (low, high) = plot_range(&m);
            let interval = m
                .equal_tailed(INTERVAL)
                .map_err(|e| CliError::usage(format!("corner plot of {name}: {e}")))?;
            Ok(Column {
                label: label(name, sources > 1),
                bins_1d: bins(&m, high - low, 1, (10, 80)),
                bins_2d: bins(&m, high - low, 2, (8, 50)),
                median: m.median(),
                interval,
                ticks: nice_ticks(low, high, ticks),
                values,
                low,
                high,
            })
        })
        .collect()
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
    /// The layout of `n` panels under a header with `notes` lines of notes.
    fn new(n: usize, notes: usize) -> Layout {
        let panel = (880 / n.max(1) as i32).clamp(160, 440);
        Layout {
            n,
            panel,
            gap: 10,
            left: 72,
            top: 64 + 18 * notes as i32,
            bottom: 58,
            right: 24,
        }
    }

    fn size(&self) -> (u32, u32) {
        let grid = self.n as i32 * self.panel + (self.n as i32 - 1) * self.gap;
        (
            (self.left + grid + self.right) as u32,
            (self.top + grid + self.bottom + 8) as u32,
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
/// `title`; returns the SVG text (`path` names it in errors).
pub fn corner_plot(
    path: &str,
    title: &str,
    inference: &Inference,
    sources: usize,
) -> Result<String, CliError> {
    let (shown, left_out) = chosen(&inference.names);
    let n_eff = effective_size(inference, &shown);
    let ticks = (Layout::new(shown.len(), 0).panel / 80).max(3) as usize;
    let cols = columns(inference, (&shown, sources), n_eff, ticks)?;
    let mut notes = vec![format!(
        "{} samples, {:.0} effective (bins: Scott's rule on the effective size)",
        inference.samples.len(),
        n_eff
    )];
    if !left_out.is_empty() {
        notes.push(format!(
            "not shown (at most {MAX_PARAMETERS}: the shared parameters, then each source's \
             spin and inclination): {}",
            left_out.join(", ")
        ));
    }
    let notes = wrap(&notes, Layout::new(cols.len(), 0).size().0 as usize);
    let layout = Layout::new(cols.len(), notes.len());
    let mut svg = String::new();
    draw_corner(&mut svg, path, title, &notes, &cols, &layout)?;
    // Every colour is opaque (see `blend`), and opacity 1 is SVG's default: without the
    // attribute the file is smaller and renderers that mishandle it (ImageMagick's own fills
    // such polylines) draw it right.
    Ok(svg.replace(" opacity=\"1\"", ""))
}

/// The width of a character of the key's text in pixels, about (a generous estimate for a
/// sans-serif font; plotters' size 13 is 10.5 px in SVG).
const KEY_CHAR: f64 = 6.5;
/// The same for the notes (size 12).
const NOTE_CHAR: f64 = 6.0;

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

fn draw_corner(
    svg: &mut String,
    path: &str,
    title: &str,
    notes: &[String],
    cols: &[Column],
    layout: &Layout,
) -> Result<(), CliError> {
    let root = SVGBackend::with_string(svg, layout.size()).into_drawing_area();
    root.fill(&WHITE).map_err(|e| plot_error(path, e))?;
    draw_header(&root, title, notes, cols.len() > 1).map_err(|e| plot_error(path, e))?;
    for (i, col) in cols.iter().enumerate() {
        let (area, bottom, left) = layout.area(&root, i, i);
        draw_diagonal(&area, col, (bottom, left), cols.len() == 1)
            .map_err(|e| plot_error(path, e))?;
        for (j, other) in cols.iter().enumerate().take(i) {
            let grid = pair_grid(other, col)?;
            let (area, bottom, left) = layout.area(&root, i, j);
            draw_pair(&area, (other, col), &grid, (bottom, left))
                .map_err(|e| plot_error(path, e))?;
        }
    }
    root.present().map_err(|e| plot_error(path, e))?;
    Ok(())
}

type DrawError = DrawingAreaErrorKind<std::io::Error>;

/// The title, a key to the marks (the highest-density outlines only with pairs to outline)
/// and the notes, one per line.
fn draw_header<'a>(
    root: &Area<'a>,
    title: &str,
    notes: &[String],
    pairs: bool,
) -> Result<(), DrawError> {
    // Text is placed by its middle: renderers agree on that more than on its top.
    let left = Pos::new(HPos::Left, VPos::Center);
    let text =
        |size: u32, colour: RGBColor| ("sans-serif", size).into_font().color(&colour).pos(left);
    root.draw_text(title, &text(20, BLACK), (16, 18))?;
    let (y, mut x) = (44, 16);
    let band = blend(WHITE, ORANGE, 0.15);
    root.draw(&Rectangle::new(
        [(x, y - 6), (x + 22, y + 6)],
        band.filled(),
    ))?;
    root.draw(&PathElement::new(
        vec![(x + 11, y - 7), (x + 11, y + 7)],
        ORANGE.stroke_width(2),
    ))?;
    x += 30;
    let mut keys = vec![format!(
        "median and {:.0}% equal-tailed interval",
        100.0 * INTERVAL
    )];
    if pairs {
        keys.extend(
            HPD_LEVELS
                .iter()
                .map(|l| format!("{:.0}% highest-density region", 100.0 * l)),
        );
    }
    for (k, key) in keys.iter().enumerate() {
        if k > 0 {
            let line = vec![(x, y), (x + 24, y)];
            if k == 1 {
                root.draw(&PathElement::new(line, BLACK.stroke_width(2)))?;
            } else {
                root.draw(&DashedPathElement::new(line, 5, 3, BLACK.stroke_width(1)))?;
            }
            x += 30;
        }
        root.draw_text(key, &text(13, BLACK), (x, y))?;
        x += (KEY_CHAR * key.chars().count() as f64) as i32 + 24;
    }
    let grey = text(12, blend(WHITE, BLACK, 0.7));
    for (k, note) in notes.iter().enumerate() {
        root.draw_text(note, &grey, (16, 66 + 18 * k as i32))?;
    }
    Ok(())
}

/// A panel's chart over `x` × `y` with its tick labels and axis names where it has label
/// strips (`bottom`, `left`), and light grid lines at the ticks with `grid` (they would show
/// only in the empty cells of a 2-D histogram, so those panels go without).
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
        .x_label_area_size(if bottom { 58 } else { 0 })
        .y_label_area_size(if left { 72 } else { 0 })
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
    mesh.bold_line_style(blend(WHITE, BLACK, 0.08))
        .light_line_style(TRANSPARENT)
        .label_style(("sans-serif", 12))
        .axis_desc_style(("sans-serif", 15))
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
        blend(WHITE, BLACK, 0.6).stroke_width(1),
    ))?;
    Ok(())
}

/// A diagonal panel: the parameter's histogram as a density, its 68 % equal-tailed interval
/// shaded and its median as a vertical line; the density axis is labelled only when it is the
/// one panel.
fn draw_diagonal<'a>(
    area: &Area<'a>,
    col: &Column,
    strips: (bool, bool),
    alone: bool,
) -> Result<(), DrawError> {
    let axis = Axis::new(col.low, col.high, col.bins_1d);
    let norm = 1.0 / (col.values.len() as f64 * axis.width());
    let density: Vec<f64> = axis.counts(&col.values).iter().map(|c| c * norm).collect();
    let top = 1.1 * density.iter().fold(0.0f64, |m, &d| m.max(d));
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
    let band = blend(WHITE, ORANGE, 0.15);
    chart.draw_series(std::iter::once(Rectangle::new(
        [(a, 0.0), (b, top)],
        band.filled(),
    )))?;
    let whole = step_outline(&axis, &density, (col.low, col.high));
    let inside = step_outline(&axis, &density, (a.max(col.low), b.min(col.high)));
    for (outline, base) in [(&whole, WHITE), (&inside, band)] {
        let fill = blend(base, BLUE, 0.35);
        chart.draw_series(std::iter::once(Polygon::new(
            outline.clone(),
            fill.filled(),
        )))?;
    }
    chart.draw_series(LineSeries::new(whole, BLUE.stroke_width(1)))?;
    chart.draw_series(LineSeries::new(
        vec![(col.median, 0.0), (col.median, top)],
        ORANGE.stroke_width(2),
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

/// A cell's colour on a linear single-hue scale from white (empty) to the house blue at 85 %
/// (fullest), so that the outlines stay visible on the fullest cells.
fn shade(fraction: f64) -> RGBColor {
    blend(WHITE, BLUE, 0.85 * fraction.clamp(0.0, 1.0))
}

/// The 2-D histogram of a pair and the outlines of its highest-density regions at
/// [`HPD_LEVELS`] (closed rings, in data coordinates).
struct PairGrid {
    x: Axis,
    y: Axis,
    /// Row-major counts, x fastest.
    counts: Vec<f64>,
    /// The rings of each level, in the order of [`HPD_LEVELS`].
    outlines: Vec<Vec<Vec<(f64, f64)>>>,
}

/// The cells with count ≥ t, t from [`density_threshold`], hold the level's fraction of the
/// samples in the plotted range; their edge is contoured by marching squares between the cell
/// centres (and runs along the panel's edge where the region reaches it).
fn pair_grid(x: &Column, y: &Column) -> Result<PairGrid, CliError> {
    let (ax, ay) = (
        Axis::new(x.low, x.high, x.bins_2d),
        Axis::new(y.low, y.high, y.bins_2d),
    );
    let counts = counts_2d(&x.values, &y.values, &ax, &ay);
    let mut outlines = Vec::new();
    for &level in &HPD_LEVELS {
        let rings = match density_threshold(&counts, level) {
            Some(t) => {
                let above: Vec<f64> = counts.iter().map(|c| c - t).collect();
                let (x0, y0) = (ax.centre(0), ay.centre(0));
                allowed_polygons(&above, ax.bins, ay.bins, x0, ax.width(), y0, ay.width())?
            }
            None => Vec::new(),
        };
        outlines.push(rings);
    }
    Ok(PairGrid {
        x: ax,
        y: ay,
        counts,
        outlines,
    })
}

/// The filled cells of a 2-D histogram, shaded by count. A cell reaches a quarter of a cell
/// into a filled right or upper neighbour (drawn after it, so covered again; never into an
/// empty cell): scaled renderers then show no hairline seams between cells.
fn cells(grid: &PairGrid) -> Vec<Rectangle<(f64, f64)>> {
    let (ax, ay, counts) = (&grid.x, &grid.y, &grid.counts);
    let filled = |i: usize, j: usize| i < ax.bins && j < ay.bins && counts[j * ax.bins + i] > 0.0;
    let fullest = counts.iter().fold(0.0f64, |m, &c| m.max(c));
    let mut out = Vec::new();
    for j in 0..ay.bins {
        for i in (0..ax.bins).filter(|&i| filled(i, j)) {
            let (x0, y0) = (
                ax.low + i as f64 * ax.width(),
                ay.low + j as f64 * ay.width(),
            );
            let reach = |more: bool, w: f64| if more { 1.25 * w } else { w };
            let right = filled(i + 1, j);
            // Up too only where the corner it then covers is filled as well.
            let up = filled(i, j + 1) && (!right || filled(i + 1, j + 1));
            let (x1, y1) = (x0 + reach(right, ax.width()), y0 + reach(up, ay.width()));
            let colour = shade(counts[j * ax.bins + i] / fullest);
            out.push(Rectangle::new([(x0, y0), (x1, y1)], colour.filled()));
        }
    }
    out
}

/// A panel below the diagonal: the 2-D histogram of `y` against `x` as shaded cells, with the
/// 68 % (solid) and 95 % (dashed) highest-density regions outlined.
fn draw_pair<'a>(
    area: &Area<'a>,
    (x, y): (&Column, &Column),
    grid: &PairGrid,
    strips: (bool, bool),
) -> Result<(), DrawError> {
    let mut chart = panel(
        area,
        (x, (x.low, x.high)),
        (&y.label, (y.low, y.high), y.ticks.clone()),
        strips,
        false,
    )?;
    chart.draw_series(cells(grid))?;
    for (k, rings) in grid.outlines.iter().enumerate() {
        for ring in rings {
            let mut closed = ring.clone();
            if let Some(&first) = ring.first() {
                closed.push(first);
            }
            if k == 0 {
                chart.draw_series(LineSeries::new(closed, BLACK.stroke_width(2)))?;
            } else {
                chart.draw_series(DashedLineSeries::new(closed, 5, 3, BLACK.stroke_width(1)))?;
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
        assert_eq!(label("inclination@1", false), "θ_o (deg)");
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
}
