//! Figures of bounds: the predicted size against the varied parameter with the allowed
//! ranges in a strip below, and exclusion maps over two parameters.

use super::figure::{
    draw_line, draw_svg, symbol, Dash, Legend, Mark, SeriesLook, Theme, ALLOWED, EXCLUDED,
    NO_HORIZON,
};
use super::plot::{draw_title, label_areas, plot_error, style_mesh, Chart, Mesh};
use super::plot_scan::axis_label;
use super::CliError;
use plotters::prelude::*;
use umbral::bounds::{BoundResult, Inclination};
use umbral::numfmt::short;
use umbral::scan::refine::{FineNode, RefinedMap};

/// The prediction band's colour.
const BAND: RGBColor = ALLOWED;
/// The colours of the measured intervals and allowed ranges, one per confidence level.
const LEVEL_COLOURS: [RGBColor; 4] = [
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
];
/// No shadow although there is a horizon.
const NO_SHADOW: RGBColor = RGBColor(90, 90, 90);

/// The title of a bound's figure: the metric's title, the varied parameter and the
/// inclination (or its range).
pub fn bound_title(metric_title: &str, result: &BoundResult) -> String {
    let inclination = match result.inclination {
        Inclination::Fixed { degrees } => format!("θₒ = {}°", short(degrees, 6)),
        Inclination::Range {
            low_degrees,
            high_degrees,
        } => format!(
            "θₒ ∈ [{}°, {}°]",
            short(low_degrees, 6),
            short(high_degrees, 6)
        ),
    };
    format!(
        "{metric_title}: bound on {}, {inclination}",
        symbol(&result.vary.name)
    )
}

/// A confidence level as a percentage, e.g. `68 %`.
fn percent(confidence: f64) -> String {
    format!("{} %", short(100.0 * confidence, 4))
}

/// Predicted r_sh/M (a band over the nuisance box, a line without one) against the varied
/// parameter, the measured intervals as shaded horizontal bands, the ranges without a
/// horizon or shadow shaded grey, and below, in a strip of their own, the allowed ranges at
/// each level; returns the SVG text (`path` names it in errors).
pub fn bound_plot(
    path: &str,
    theme: &Theme,
    title: &str,
    result: &BoundResult,
) -> Result<String, CliError> {
    draw_bound_plot(theme, title, result).map_err(|e| plot_error(path, e))
}

/// The size axis of [`bound_plot`]: every prediction and measured interval, padded.
fn size_range(result: &BoundResult) -> (f64, f64) {
    let mut y_lo = f64::INFINITY;
    let mut y_hi = f64::NEG_INFINITY;
    for p in &result.predicted {
        if let (Some(a), Some(b)) = (p.size_min, p.size_max) {
            y_lo = y_lo.min(a);
            y_hi = y_hi.max(b);
        }
    }
    for l in &result.levels {
        y_lo = y_lo.min(l.radius_interval[0]);
        y_hi = y_hi.max(l.radius_interval[1]);
    }
    if !y_lo.is_finite() {
        return (0.0, 1.0);
    }
    let pad = 0.08 * (y_hi - y_lo).max(1e-3);
    (y_lo - pad, y_hi + pad)
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

/// What the prediction band spans, for its legend entry: the nuisance parameters and an
/// inclination range, or nothing (a single line).
fn nuisance_words(result: &BoundResult) -> Option<String> {
    let mut parts: Vec<String> = result
        .nuisance
        .iter()
        .map(|n| {
            format!(
                "{} ∈ [{}, {}]",
                symbol(&n.name),
                short(n.low, 6),
                short(n.high, 6)
            )
        })
        .collect();
    if let Inclination::Range {
        low_degrees,
        high_degrees,
    } = result.inclination
    {
        parts.push(format!(
            "θₒ ∈ [{}°, {}°]",
            short(low_degrees, 6),
            short(high_degrees, 6)
        ));
    }
    (!parts.is_empty()).then(|| parts.join(", "))
}

fn draw_bound_plot(theme: &Theme, title: &str, result: &BoundResult) -> Result<String, String> {
    let (y_lo, y_hi) = size_range(result);
    let (x_lo, x_hi) = (result.vary.low, result.vary.high);
    let x_name = symbol(&result.vary.name);
    let size_name = format!("{} radius", result.size_measure.name());
    let nuisance = nuisance_words(result);
    let mut legend = Legend::default();
    legend.add(
        match nuisance {
            Some(_) => Mark::Patch(BAND, 0.35),
            None => Mark::Line(
                SeriesLook {
                    colour: BAND,
                    dash: Dash::Solid,
                },
                theme.line,
            ),
        },
        match &nuisance {
            Some(words) => format!("predicted, over {words}"),
            None => "predicted".to_string(),
        },
    );
    for (i, l) in result.levels.iter().enumerate() {
        legend.add(
            Mark::Patch(LEVEL_COLOURS[i % LEVEL_COLOURS.len()], 0.3),
            format!(
                "measured at {}: [{}, {}] M",
                percent(l.confidence),
                short(l.radius_interval[0], 5),
                short(l.radius_interval[1], 5)
            ),
        );
    }
    if !result.no_horizon.is_empty() {
        legend.add(Mark::Patch(NO_HORIZON, 0.3), "no horizon (not evaluated)");
    }
    if !result.no_shadow.is_empty() {
        legend.add(Mark::Patch(NO_SHADOW, 0.45), "no shadow");
    }
    if !result.horizonless.is_empty() {
        legend.add(
            Mark::Patch(NO_HORIZON, 0.12),
            "horizonless, photon sphere bounds capture",
        );
    }
    if !result.failures.is_empty() {
        legend.add(Mark::Patch(EXCLUDED, 0.5), "solver failed (neither)");
    }
    let (left, bottom) = label_areas(theme);
    let strip_label_w = result
        .levels
        .iter()
        .map(|l| theme.text_width(&format!("{} allowed", percent(l.confidence)), theme.tick))
        .fold(0.0, f64::max);
    let left = left.max(strip_label_w + 1.2 * theme.tick);
    let margin = 1.5 * theme.tick;
    let title_h = 2.0 * theme.title;
    let w = 1.3 * theme.width;
    let main_h = 0.62 * theme.width;
    let strip_row = 1.5 * theme.label;
    let strip_h = strip_row * result.levels.len().max(1) as f64 + bottom;
    let legend_h = legend.rows_height(theme, w - left - margin) + 0.5 * theme.label;
    let h = title_h + main_h + strip_h + legend_h + margin;
    let levels = result.levels.len().max(1);
    draw_svg(theme, (w, h), |root| {
        let (top, rest) = root.split_vertically(theme.px(title_h));
        draw_title(&top, theme, title, title_h)?;
        let (main, rest) = rest.split_vertically(theme.px(main_h));
        let (strip, legend_area) = rest.split_vertically(theme.px(strip_h));
        let mut chart = ChartBuilder::on(&main)
            .margin_right(theme.px(margin))
            .x_label_area_size(theme.px(0.5 * theme.tick))
            .y_label_area_size(theme.px(left))
            .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)
            .map_err(|e| e.to_string())?;
        let y_desc = format!("predicted {size_name} / M");
        style_mesh(
            &mut chart,
            theme,
            &Mesh {
                ticks: (7, 6),
                x_labels: false,
                ..Mesh::new("", &y_desc)
            },
        )?;
        draw_measured(&mut chart, result, (x_lo, x_hi))?;
        draw_regions(&mut chart, result, (y_lo, y_hi))?;
        draw_prediction(&mut chart, theme, result, nuisance.is_some())?;
        // The strip of allowed ranges: one row per level, the widest (highest confidence)
        // at the bottom.
        let mut strip_chart = ChartBuilder::on(&strip)
            .margin_right(theme.px(margin))
            .x_label_area_size(theme.px(bottom))
            .y_label_area_size(theme.px(left))
            .build_cartesian_2d(x_lo..x_hi, 0.0..levels as f64)
            .map_err(|e| e.to_string())?;
        let names: Vec<String> = result
            .levels
            .iter()
            .map(|l| format!("{} allowed", percent(l.confidence)))
            .collect();
        let row_label = |y: &f64| -> String {
            let k = (y - 0.5).round();
            if (y - 0.5 - k).abs() < 1e-9 && k >= 0.0 {
                names.get(k as usize).cloned().unwrap_or_default()
            } else {
                String::new()
            }
        };
        style_mesh(
            &mut strip_chart,
            theme,
            &Mesh {
                ticks: (7, 2 * levels + 1),
                y_label: Some(&row_label),
                ..Mesh::new(&x_name, "")
            },
        )?;
        for r in &result.no_horizon {
            strip_chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(r[0], 0.0), (r[1], levels as f64)],
                    NO_HORIZON.mix(0.3).filled(),
                )))
                .map_err(|e| e.to_string())?;
        }
        for (i, l) in result.levels.iter().enumerate() {
            let colour = LEVEL_COLOURS[i % LEVEL_COLOURS.len()];
            for a in &l.allowed {
                // A single allowed point still shows as a short bar.
                let min_w = 0.004 * (x_hi - x_lo);
                let (a0, a1) = if a[1] - a[0] < min_w {
                    (a[0] - 0.5 * min_w, a[1] + 0.5 * min_w)
                } else {
                    (a[0], a[1])
                };
                strip_chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [(a0, i as f64 + 0.22), (a1, i as f64 + 0.78)],
                        colour.filled(),
                    )))
                    .map_err(|e| e.to_string())?;
            }
        }
        legend
            .draw_rows(
                &legend_area,
                theme,
                (left, 0.5 * theme.label),
                w - left - margin,
            )
            .map(|_| ())
            .map_err(|e| e.to_string())
    })
}

/// The measured intervals as shaded bands across the plot (widest first, so narrower ones
/// sit on top).
fn draw_measured(
    chart: &mut Chart<'_>,
    result: &BoundResult,
    (x_lo, x_hi): (f64, f64),
) -> Result<(), String> {
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
                colour.mix(0.3).filled(),
            )))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// Ranges of the varied parameter without a horizon, without a shadow, horizonless but
/// evaluated, or failed, as vertical shaded bands.
fn draw_regions(
    chart: &mut Chart<'_>,
    result: &BoundResult,
    (y_lo, y_hi): (f64, f64),
) -> Result<(), String> {
    let bands = result
        .no_horizon
        .iter()
        .map(|r| (*r, NO_HORIZON.mix(0.3)))
        .chain(result.no_shadow.iter().map(|r| (*r, NO_SHADOW.mix(0.45))))
        .chain(
            result
                .horizonless
                .iter()
                .map(|r| (*r, NO_HORIZON.mix(0.12))),
        )
        .chain(
            result
                .failures
                .iter()
                .map(|f| ([f.low, f.high], EXCLUDED.mix(0.5))),
        );
    for (r, colour) in bands {
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(r[0], y_lo), (r[1], y_hi)],
                colour.filled(),
            )))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// The prediction: a band between the nuisance box's extremes, or a line.
fn draw_prediction(
    chart: &mut Chart<'_>,
    theme: &Theme,
    result: &BoundResult,
    band: bool,
) -> Result<(), String> {
    let look = SeriesLook {
        colour: BAND,
        dash: Dash::Solid,
    };
    for run in prediction_runs(result) {
        if band {
            let mut outline: Vec<(f64, f64)> = run.iter().map(|&(x, a, _)| (x, a)).collect();
            outline.extend(run.iter().rev().map(|&(x, _, b)| (x, b)));
            chart
                .draw_series(std::iter::once(Polygon::new(
                    outline,
                    BAND.mix(0.35).filled(),
                )))
                .map_err(|e| e.to_string())?;
            for edge in [
                run.iter().map(|&(x, a, _)| (x, a)).collect::<Vec<_>>(),
                run.iter().map(|&(x, _, b)| (x, b)).collect(),
            ] {
                draw_line(chart, theme, edge, look, theme.thin.max(1.0))
                    .map_err(|e| e.to_string())?;
            }
        } else {
            let line: Vec<(f64, f64)> = run.iter().map(|&(x, a, _)| (x, a)).collect();
            draw_line(chart, theme, line, look, theme.line).map_err(|e| e.to_string())?;
        }
    }
    Ok(())
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
) -> Result<Regions, CliError> {
    let builder = contour::ContourBuilder::new(nx, ny, true)
        .x_origin(x0 - 0.5 * dx)
        .x_step(dx)
        .y_origin(y0 - 0.5 * dy)
        .y_step(dy);
    let contours = builder
        .contours(values, &[0.0])
        .map_err(|e| CliError::usage(format!("contouring failed: {e:?}")))?;
    let mut out = Regions::default();
    let ring = |r: &[contour::Pt]| -> Vec<(f64, f64)> { r.iter().map(|p| (p.x, p.y)).collect() };
    for c in contours {
        for polygon in c.geometry().0.iter() {
            let exterior = ring(&polygon.exterior().0);
            let holes: Vec<Vec<(f64, f64)>> =
                polygon.interiors().iter().map(|h| ring(&h.0)).collect();
            out.fills.push(bridge_holes(exterior.clone(), &holes));
            out.outlines.push(exterior);
            out.outlines.extend(holes);
        }
    }
    Ok(out)
}

/// The value at fractional index `u` of increasing `values`, linear between nodes (clamped to
/// the ends).
fn along(values: &[f64], u: f64) -> f64 {
    let last = values.len() - 1;
    let u = u.clamp(0.0, last as f64);
    let i = (u.floor() as usize).min(last.saturating_sub(1));
    let t = u - i as f64;
    if last == 0 {
        values[0]
    } else {
        values[i] + (values[i + 1] - values[i]) * t
    }
}

/// Filled regions as simple rings (holes joined to their exterior by a zero-width bridge,
/// since a plotters polygon has no holes) and their outlines.
#[derive(Debug, Default)]
pub struct Regions {
    pub fills: Vec<Vec<(f64, f64)>>,
    pub outlines: Vec<Vec<(f64, f64)>>,
}

/// One ring that fills `exterior` less `holes`: each hole is spliced in at its vertex
/// nearest to the ring, going round it and back along the same bridge.
fn bridge_holes(mut ring: Vec<(f64, f64)>, holes: &[Vec<(f64, f64)>]) -> Vec<(f64, f64)> {
    for hole in holes {
        if hole.is_empty() || ring.is_empty() {
            continue;
        }
        let d2 = |a: (f64, f64), b: (f64, f64)| (a.0 - b.0).powi(2) + (a.1 - b.1).powi(2);
        let mut best = (0, 0, f64::INFINITY);
        for (i, &p) in ring.iter().enumerate() {
            for (j, &q) in hole.iter().enumerate() {
                let d = d2(p, q);
                if d < best.2 {
                    best = (i, j, d);
                }
            }
        }
        let (i, j, _) = best;
        let mut spliced = ring[..=i].to_vec();
        spliced.extend_from_slice(&hole[j..]);
        spliced.extend_from_slice(&hole[..=j]);
        spliced.extend_from_slice(&ring[i..]);
        ring = spliced;
    }
    ring
}

/// An exclusion map drawn from a refined scan (see [`umbral::scan::refine`]).
pub struct ExclusionMap<'a> {
    /// The title above the map.
    pub title: &'a str,
    /// The two axes' parameter names.
    pub names: [&'a str; 2],
    /// The refined grid and its fields.
    pub map: &'a RefinedMap,
    /// The confidence of each level, in the order of the map's allowed fields.
    pub confidences: &'a [f64],
}

/// An exclusion map: the plane shaded as excluded where there is a horizon and no level
/// allows the point, grey where there is no horizon, the allowed regions of each level from
/// marching squares on the refined grid, the traced edge of the horizon's existence as a
/// line, and no-shadow and failed points marked; every shade is in the legend. Returns the
/// SVG text (`path` names it in errors).
pub fn exclusion_map(
    path: &str,
    theme: &Theme,
    map: &ExclusionMap<'_>,
) -> Result<String, CliError> {
    let grid = map.map;
    let (nx, ny) = (grid.x.len(), grid.y.len());
    // Contours in index space, then to parameter space along each axis (which may be
    // unevenly spaced).
    let contour = |values: &[f64]| -> Result<Regions, CliError> {
        let mut regions = allowed_polygons(values, nx, ny, 0.0, 1.0, 0.0, 1.0)?;
        for ring in regions.fills.iter_mut().chain(regions.outlines.iter_mut()) {
            for p in ring.iter_mut() {
                *p = (along(&grid.x, p.0), along(&grid.y, p.1));
            }
        }
        Ok(regions)
    };
    let horizon = contour(grid.horizon_field())?;
    let mut levels = Vec::new();
    for (k, &confidence) in map.confidences.iter().enumerate() {
        levels.push((confidence, contour(grid.allowed_field(k))?));
    }
    draw_exclusion_map(theme, map, &horizon, &levels).map_err(|e| plot_error(path, e))
}

fn draw_exclusion_map(
    theme: &Theme,
    map: &ExclusionMap<'_>,
    horizon: &Regions,
    levels: &[(f64, Regions)],
) -> Result<String, String> {
    let grid = map.map;
    let (x_lo, x_hi) = (grid.x[0], grid.x[grid.x.len() - 1]);
    let (y_lo, y_hi) = (grid.y[0], grid.y[grid.y.len() - 1]);
    let no_shadow = grid.points_with_status("no_shadow");
    let failed = grid.points_with_status("failed");
    let some_no_horizon = grid.horizon_field().iter().any(|&h| h < 0.0);
    let mut legend = Legend::default();
    // Widest (highest confidence) first, so narrower regions sit on top.
    let mut order: Vec<usize> = (0..levels.len()).collect();
    order.sort_by(|&a, &b| levels[b].0.total_cmp(&levels[a].0));
    // A level is in the legend only where it shows: allowed at some node where no level of
    // lower confidence (drawn on top) is.
    for (k, (confidence, _)) in levels.iter().enumerate() {
        let shows = (0..grid.nodes.len()).any(|n| {
            grid.allowed_field(k)[n] >= 0.0
                && levels
                    .iter()
                    .enumerate()
                    .filter(|(j, (c, _))| *j != k && c < confidence)
                    .all(|(j, _)| grid.allowed_field(j)[n] < 0.0)
        });
        if shows {
            legend.add(
                Mark::Patch(LEVEL_COLOURS[k % LEVEL_COLOURS.len()], 0.55),
                format!("allowed at {}", percent(*confidence)),
            );
        }
    }
    // Excluded: a node with a horizon that is a shadow point (or inside a cell of them)
    // and allowed at no level.
    let excluded = grid.nodes.iter().enumerate().any(|(k, node)| {
        let shadow = match node {
            FineNode::Point(p) => p.status == "shadow",
            FineNode::Interpolated => true,
        };
        shadow
            && grid.horizon_field()[k] > 0.0
            && (0..levels.len()).all(|l| grid.allowed_field(l)[k] < 0.0)
    });
    if excluded || !some_no_horizon {
        legend.add(Mark::Patch(EXCLUDED, 0.22), "excluded");
    }
    if some_no_horizon {
        legend.add(Mark::Patch(NO_HORIZON, 0.35), "no horizon");
        legend.add(
            Mark::Line(
                SeriesLook {
                    colour: RGBColor(30, 30, 30),
                    dash: Dash::Solid,
                },
                theme.line,
            ),
            "horizon edge (traced)",
        );
    }
    if !no_shadow.is_empty() {
        legend.add(Mark::Patch(NO_SHADOW, 0.8), "no shadow (points)");
    }
    if !failed.is_empty() {
        legend.add(
            Mark::Patch(RGBColor(0, 0, 0), 1.0),
            "solver failed (points)",
        );
    }
    let (left, bottom) = label_areas(theme);
    let margin = 1.2 * theme.tick;
    let title_h = 2.0 * theme.title;
    let side = theme.width - left - 2.0 * margin;
    let legend_w = legend.width(theme) + theme.label;
    let (w, h) = (theme.width + legend_w, title_h + side + bottom + margin);
    let [xn, yn] = map.names;
    draw_svg(theme, (w, h), |root| {
        let (top, rest) = root.split_vertically(theme.px(title_h));
        draw_title(&top, theme, map.title, title_h)?;
        let (plot_area, legend_area) = rest.split_horizontally(theme.px(theme.width));
        let mut chart = ChartBuilder::on(&plot_area)
            .margin_left(theme.px(margin))
            .margin_right(theme.px(margin))
            .x_label_area_size(theme.px(bottom))
            .y_label_area_size(theme.px(left))
            .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)
            .map_err(|e| e.to_string())?;
        let background = if some_no_horizon {
            NO_HORIZON.mix(0.35)
        } else {
            EXCLUDED.mix(0.22)
        };
        let fill = |chart: &mut Chart<'_>, polys: &[Vec<(f64, f64)>], colour: RGBAColor| {
            for poly in polys {
                chart
                    .draw_series(std::iter::once(Polygon::new(poly.clone(), colour.filled())))
                    .map_err(|e| e.to_string())?;
            }
            Ok::<(), String>(())
        };
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(x_lo, y_lo), (x_hi, y_hi)],
                background.filled(),
            )))
            .map_err(|e| e.to_string())?;
        if some_no_horizon {
            // Where there is a horizon: white, then the excluded shade.
            fill(&mut chart, &horizon.fills, WHITE.mix(1.0))?;
            fill(&mut chart, &horizon.fills, EXCLUDED.mix(0.22))?;
        }
        for &k in &order {
            let colour = LEVEL_COLOURS[k % LEVEL_COLOURS.len()];
            fill(&mut chart, &levels[k].1.fills, WHITE.mix(1.0))?;
            fill(&mut chart, &levels[k].1.fills, colour.mix(0.55))?;
        }
        for &k in &order {
            let colour = LEVEL_COLOURS[k % LEVEL_COLOURS.len()];
            for poly in &levels[k].1.outlines {
                let mut closed = poly.clone();
                if let Some(&first) = poly.first() {
                    closed.push(first);
                }
                chart
                    .draw_series(LineSeries::new(
                        closed,
                        colour.stroke_width(theme.upx(theme.thin)),
                    ))
                    .map_err(|e| e.to_string())?;
            }
        }
        let edge_look = SeriesLook {
            colour: RGBColor(30, 30, 30),
            dash: Dash::Solid,
        };
        for line in &grid.horizon_edge {
            draw_line(&mut chart, theme, line.clone(), edge_look, theme.line)
                .map_err(|e| e.to_string())?;
        }
        let dot = theme.upx(1.6);
        chart
            .draw_series(
                no_shadow
                    .iter()
                    .map(|&p| Circle::new(p, dot, NO_SHADOW.filled())),
            )
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(
                failed
                    .iter()
                    .map(|&p| Cross::new(p, dot, BLACK.stroke_width(theme.upx(theme.thin)))),
            )
            .map_err(|e| e.to_string())?;
        // The mesh last, so its grid and frame sit on top of the shades.
        let (x_desc, y_desc) = (axis_label(xn), axis_label(yn));
        style_mesh(&mut chart, theme, &Mesh::new(&x_desc, &y_desc))?;
        legend
            .draw_column(&legend_area, theme, (0.0, 0.0))
            .map_err(|e| e.to_string())
    })
}
