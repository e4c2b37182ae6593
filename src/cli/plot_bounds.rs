//! SVG figures of bounds: predicted size against the varied parameter, and exclusion maps.

use super::plot::{finish, plot_error};
use super::CliError;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use umbral::bounds::BoundResult;

const BAND: RGBColor = RGBColor(31, 78, 121);
const LEVEL_COLOURS: [RGBColor; 4] = [
    RGBColor(46, 125, 50),
    RGBColor(196, 90, 17),
    RGBColor(123, 31, 162),
    RGBColor(0, 131, 143),
];

/// Predicted r_sh/M (band over the nuisance box) against the varied parameter, the measured
/// intervals as shaded horizontal bands and the allowed ranges as bars along the bottom;
/// returns the SVG text (`path` names it in errors).
pub fn bound_plot(path: &str, result: &BoundResult) -> Result<String, CliError> {
    let mut svg = String::new();
    draw_bound_plot(&mut svg, path, result)?;
    Ok(svg)
}

/// The size axis of [`bound_plot`]: every prediction and measured interval, padded (twice
/// below, for the allowed bars); (low, high, pad).
fn size_range(result: &BoundResult) -> (f64, f64, f64) {
    let ok: Vec<(f64, f64, f64)> = result
        .predicted
        .iter()
        .filter_map(|p| Some((p.value, p.size_min?, p.size_max?)))
        .collect();
    let mut y_lo = f64::INFINITY;
    let mut y_hi = f64::NEG_INFINITY;
    for &(_, a, b) in &ok {
        y_lo = y_lo.min(a);
        y_hi = y_hi.max(b);
    }
    for l in &result.levels {
        y_lo = y_lo.min(l.radius_interval[0]);
        y_hi = y_hi.max(l.radius_interval[1]);
    }
    let pad = 0.08 * (y_hi - y_lo).max(1e-3);
    (y_lo - 2.0 * pad, y_hi + pad, pad)
}

/// Contiguous runs of nodes with a prediction: (value, size_min, size_max).
fn prediction_runs(result: &BoundResult) -> Vec<Vec<(f64, f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64, f64)>> = Vec::new();
    let mut last_ok = false;
    for p in &result.predicted {
        match (p.size_min, p.size_max) {
            (Some(a), Some(b)) => {
                if !last_ok {
                    runs.push(Vec::new());
                }
                if let Some(r) = runs.last_mut() {
                    r.push((p.value, a, b));
                }
                last_ok = true;
            }
            _ => last_ok = false,
        }
    }
    runs
}

/// The measured intervals of every level as shaded bands across the plot (widest first so
/// narrower ones sit on top) and the allowed ranges as bars near the bottom, `pad` apart
/// from `y_lo` up.
fn draw_levels<'a>(
    chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<RangedCoordf64, RangedCoordf64>>,
    result: &BoundResult,
    (y_lo, pad): (f64, f64),
    path: &str,
) -> Result<(), CliError> {
    let (x_lo, x_hi) = (result.vary.low, result.vary.high);
    let mut order: Vec<usize> = (0..result.levels.len()).collect();
    order.sort_by(|&a, &b| {
        let w =
            |i: usize| result.levels[i].radius_interval[1] - result.levels[i].radius_interval[0];
        w(b).total_cmp(&w(a))
    });
    for &i in &order {
        let l = &result.levels[i];
        let colour = LEVEL_COLOURS[i % LEVEL_COLOURS.len()];
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(x_lo, l.radius_interval[0]), (x_hi, l.radius_interval[1])],
                colour.mix(0.15).filled(),
            )))
            .map_err(|e| plot_error(path, e))?
            .label(format!(
                "measured r_sh/M at {} (allowed: bar {})",
                l.confidence,
                i + 1
            ))
            .legend(move |(x, y)| {
                Rectangle::new([(x, y - 5), (x + 18, y + 5)], colour.mix(0.4).filled())
            });
        // Allowed ranges as bars near the bottom.
        let y_bar = y_lo + pad * (0.4 + 0.5 * i as f64);
        for a in &l.allowed {
            chart
                .draw_series(LineSeries::new(
                    vec![(a[0], y_bar), (a[1], y_bar)],
                    colour.stroke_width(5),
                ))
                .map_err(|e| plot_error(path, e))?;
        }
    }
    Ok(())
}

fn draw_bound_plot(svg: &mut String, path: &str, result: &BoundResult) -> Result<(), CliError> {
    let (y_lo, y_hi, pad) = size_range(result);
    let (x_lo, x_hi) = (result.vary.low, result.vary.high);
    let root = SVGBackend::with_string(svg, (820, 560)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| plot_error(path, e))?;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            format!("{}: bound on {}", result.metric, result.vary.name),
            ("sans-serif", 20),
        )
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(56)
        .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)
        .map_err(|e| plot_error(path, e))?;
    chart
        .configure_mesh()
        .x_desc(result.vary.name.as_str())
        .y_desc(format!(
            "predicted {} radius r_sh / M",
            result.size_measure.name()
        ))
        .draw()
        .map_err(|e| plot_error(path, e))?;
    draw_levels(&mut chart, result, (y_lo, pad), path)?;
    // The prediction band.
    let runs = prediction_runs(result);
    for (k, run) in runs.iter().enumerate() {
        let mut outline: Vec<(f64, f64)> = run.iter().map(|&(x, a, _)| (x, a)).collect();
        outline.extend(run.iter().rev().map(|&(x, _, b)| (x, b)));
        chart
            .draw_series(std::iter::once(Polygon::new(
                outline,
                BAND.mix(0.3).filled(),
            )))
            .map_err(|e| plot_error(path, e))?;
        let s = chart
            .draw_series(LineSeries::new(
                run.iter().map(|&(x, a, _)| (x, a)),
                BAND.stroke_width(2),
            ))
            .map_err(|e| plot_error(path, e))?;
        if k == 0 {
            s.label("prediction over the nuisance box")
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], BAND.stroke_width(2)));
        }
        chart
            .draw_series(LineSeries::new(
                run.iter().map(|&(x, _, b)| (x, b)),
                BAND.stroke_width(2),
            ))
            .map_err(|e| plot_error(path, e))?;
    }
    for r in &result.no_horizon {
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(r[0], y_lo), (r[1], y_hi)],
                BLACK.mix(0.08).filled(),
            )))
            .map_err(|e| plot_error(path, e))?;
    }
    finish(&mut chart, &root, path)
}

/// One level of an exclusion map: the allowed region as polygons in parameter space.
pub struct AllowedRegion {
    pub confidence: f64,
    pub polygons: Vec<Vec<(f64, f64)>>,
}

/// The allowed region at `threshold` of `values` (row-major, x fastest, `nx` × `ny` samples
/// on the grid `x0 + i dx`, `y0 + j dy`), by the `contour` crate's marching squares with
/// linear interpolation. Samples sit at cell centres in the crate's convention, hence the
/// half-step origin shift.
#[allow(clippy::too_many_arguments)]
pub fn allowed_polygons(
    values: &[f64],
    nx: usize,
    ny: usize,
    x0: f64,
    dx: f64,
    y0: f64,
    dy: f64,
) -> Result<Vec<Vec<(f64, f64)>>, CliError> {
    let builder = contour::ContourBuilder::new(nx, ny, true)
        .x_origin(x0 - 0.5 * dx)
        .x_step(dx)
        .y_origin(y0 - 0.5 * dy)
        .y_step(dy);
    let contours = builder
        .contours(values, &[0.0])
        .map_err(|e| CliError::usage(format!("contouring failed: {e:?}")))?;
    let mut out = Vec::new();
    for c in contours {
        for polygon in c.geometry().0.iter() {
            out.push(polygon.exterior().0.iter().map(|p| (p.x, p.y)).collect());
            for hole in polygon.interiors() {
                out.push(hole.0.iter().map(|p| (p.x, p.y)).collect());
            }
        }
    }
    Ok(out)
}

/// An exclusion map: allowed regions at each level as filled contours, no-horizon grid
/// points as grey dots; returns the SVG text (`path` names it in errors).
pub fn exclusion_map(
    path: &str,
    title: &str,
    axes: [(&str, f64, f64); 2],
    regions: &[AllowedRegion],
    no_horizon: &[(f64, f64)],
) -> Result<String, CliError> {
    let mut svg = String::new();
    draw_exclusion_map(&mut svg, path, title, axes, regions, no_horizon)?;
    Ok(svg)
}

fn draw_exclusion_map(
    svg: &mut String,
    path: &str,
    title: &str,
    axes: [(&str, f64, f64); 2],
    regions: &[AllowedRegion],
    no_horizon: &[(f64, f64)],
) -> Result<(), CliError> {
    let root = SVGBackend::with_string(svg, (760, 680)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| plot_error(path, e))?;
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 20))
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(56)
        .build_cartesian_2d(axes[0].1..axes[0].2, axes[1].1..axes[1].2)
        .map_err(|e| plot_error(path, e))?;
    chart
        .configure_mesh()
        .x_desc(axes[0].0)
        .y_desc(axes[1].0)
        .draw()
        .map_err(|e| plot_error(path, e))?;
    let mut order: Vec<usize> = (0..regions.len()).collect();
    order.sort_by(|&a, &b| regions[b].confidence.total_cmp(&regions[a].confidence));
    for &i in &order {
        let colour = LEVEL_COLOURS[i % LEVEL_COLOURS.len()];
        let r = &regions[i];
        for (k, poly) in r.polygons.iter().enumerate() {
            chart
                .draw_series(std::iter::once(Polygon::new(
                    poly.clone(),
                    colour.mix(0.25).filled(),
                )))
                .map_err(|e| plot_error(path, e))?;
            let mut closed = poly.clone();
            if let Some(&first) = poly.first() {
                closed.push(first);
            }
            let s = chart
                .draw_series(LineSeries::new(closed, colour.stroke_width(2)))
                .map_err(|e| plot_error(path, e))?;
            if k == 0 {
                s.label(format!("allowed at {}", r.confidence))
                    .legend(move |(x, y)| {
                        Rectangle::new([(x, y - 5), (x + 18, y + 5)], colour.mix(0.5).filled())
                    });
            }
        }
    }
    if !no_horizon.is_empty() {
        chart
            .draw_series(
                no_horizon
                    .iter()
                    .map(|&p| Circle::new(p, 2, BLACK.mix(0.35).filled())),
            )
            .map_err(|e| plot_error(path, e))?
            .label("no horizon")
            .legend(|(x, y)| Circle::new((x + 9, y), 3, BLACK.mix(0.35).filled()));
    }
    finish(&mut chart, &root, path)
}
