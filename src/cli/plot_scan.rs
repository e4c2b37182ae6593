//! Figures of one-axis scans: observables against the scanned parameter, one panel each.

use super::figure::{
    draw_line, draw_svg, series, symbol, Legend, Mark, Theme, EXCLUDED, NO_HORIZON,
};
use super::plot::{draw_title, label_areas, plot_error, style_mesh, Mesh};
use super::CliError;
use plotters::prelude::*;
use umbral::observables::Quantity;
use umbral::scan::{GridAxis, ScanPoint};

/// No shadow although there is a horizon.
const NO_SHADOW: RGBColor = RGBColor(90, 90, 90);

/// A figure of observables along one grid axis.
pub struct ObservablePlot<'a> {
    /// The title above the panels.
    pub title: &'a str,
    /// The scanned axis.
    pub axis: &'a GridAxis,
    /// The scan's points, in grid order.
    pub points: &'a [ScanPoint],
    /// The observables, one panel each, top to bottom.
    pub observables: &'a [Quantity],
}

/// A quantity's axis label, typeset: Greek letters, en dashes, the unit after a slash.
pub fn quantity_label(q: Quantity) -> String {
    let label = q
        .label()
        .replace("alpha", "α")
        .replace("beta", "β")
        .replace("Hioki-Maeda", "Hioki–Maeda");
    match q.unit() {
        "" => label,
        "M^2" => format!("{label} / M²"),
        unit => format!("{label} / {unit}"),
    }
}

/// The axis label of a grid axis (inclination in degrees).
pub fn axis_label(name: &str) -> String {
    if name == "inclination" {
        "θₒ (°)".to_string()
    } else {
        symbol(name)
    }
}

/// Draw the observables of a one-axis scan against its parameter, with the stretches
/// without a shadow shaded and named in the legend; returns the SVG text.
pub fn observable_plot(
    path: &str,
    theme: &Theme,
    figure: &ObservablePlot<'_>,
) -> Result<String, CliError> {
    draw_observables(theme, figure).map_err(|e| plot_error(path, e))
}

/// Stretches of the axis around points of `status`: half-way to each neighbour.
fn stretches(figure: &ObservablePlot<'_>, status: &str) -> Vec<(f64, f64)> {
    let n = figure.points.len();
    let x = |i: usize| figure.axis.value(i);
    let mut out: Vec<(f64, f64)> = Vec::new();
    for (i, p) in figure.points.iter().enumerate() {
        if p.status != status {
            continue;
        }
        let lo = if i == 0 {
            x(0)
        } else {
            0.5 * (x(i - 1) + x(i))
        };
        let hi = if i + 1 == n {
            x(i)
        } else {
            0.5 * (x(i) + x(i + 1))
        };
        match out.last_mut() {
            Some(last) if (last.1 - lo).abs() <= 1e-12 * (1.0 + lo.abs()) => last.1 = hi,
            _ => out.push((lo, hi)),
        }
    }
    out
}

fn draw_observables(theme: &Theme, figure: &ObservablePlot<'_>) -> Result<String, String> {
    let axis = figure.axis;
    let (x_lo, x_hi) = (axis.value(0), axis.value(axis.count - 1));
    let shades = [
        ("no_horizon", (NO_HORIZON, 0.35), "no horizon"),
        ("no_shadow", (NO_SHADOW, 0.45), "no shadow"),
        ("failed", (EXCLUDED, 0.45), "solver failed"),
    ];
    let mut legend = Legend::default();
    let mut bands = Vec::new();
    for (status, colour, text) in shades {
        let s = stretches(figure, status);
        if !s.is_empty() {
            legend.add(Mark::Patch(colour.0, colour.1), text);
            bands.push((s, colour));
        }
    }
    if figure.points.iter().any(|p| p.horizonless) {
        legend.add(
            Mark::Line(series(0), theme.line),
            "evaluated (includes horizonless points with a photon sphere)",
        );
    }
    let (left, bottom) = label_areas(theme);
    let left = left.max(theme.text_width("−0.00000", theme.tick) + 2.2 * theme.label);
    let margin = 1.5 * theme.tick;
    let title_h = 2.0 * theme.title;
    let w = 1.3 * theme.width;
    let panel_h = 0.42 * theme.width;
    let panels = figure.observables.len().max(1);
    let legend_h = if legend.entries.is_empty() {
        0.0
    } else {
        legend.rows_height(theme, w - left - margin) + 0.5 * theme.label
    };
    let h = title_h + panels as f64 * panel_h + bottom + legend_h + margin;
    draw_svg(theme, (w, h), |root| {
        let (top, rest) = root.split_vertically(theme.px(title_h));
        draw_title(&top, theme, figure.title, title_h)?;
        let (body, legend_area) = rest.split_vertically(theme.px(panels as f64 * panel_h + bottom));
        let mut area = body;
        for (k, &q) in figure.observables.iter().enumerate() {
            let last = k + 1 == figure.observables.len();
            let (panel, below) = if last {
                (area.clone(), area.clone())
            } else {
                area.split_vertically(theme.px(panel_h))
            };
            let values: Vec<Option<f64>> = figure
                .points
                .iter()
                .map(|p| {
                    if p.status == "shadow" {
                        p.quantity(q)
                    } else {
                        None
                    }
                })
                .collect();
            let finite: Vec<f64> = values.iter().flatten().copied().collect();
            let (lo, hi) = finite
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                    (a.min(v), b.max(v))
                });
            let (lo, hi) = if lo.is_finite() {
                let pad = 0.08 * (hi - lo).max(1e-9 * (1.0 + hi.abs()));
                (lo - pad, hi + pad)
            } else {
                (0.0, 1.0)
            };
            let mut chart = ChartBuilder::on(&panel)
                .margin_right(theme.px(margin))
                .margin_top(theme.px(0.4 * theme.label))
                .x_label_area_size(theme.px(if last { bottom } else { 0.3 * theme.tick }))
                .y_label_area_size(theme.px(left))
                .build_cartesian_2d(x_lo..x_hi, lo..hi)
                .map_err(|e| e.to_string())?;
            let x_desc = if last {
                axis_label(&axis.name)
            } else {
                String::new()
            };
            let y_desc = quantity_label(q);
            style_mesh(
                &mut chart,
                theme,
                &Mesh {
                    ticks: (7, 5),
                    x_labels: last,
                    ..Mesh::new(&x_desc, &y_desc)
                },
            )?;
            for (s, colour) in &bands {
                for &(a, b) in s {
                    chart
                        .draw_series(std::iter::once(Rectangle::new(
                            [(a, lo), (b, hi)],
                            colour.0.mix(colour.1).filled(),
                        )))
                        .map_err(|e| e.to_string())?;
                }
            }
            // Runs of consecutive points with a value, as lines with small markers.
            let mut run: Vec<(f64, f64)> = Vec::new();
            let mut runs = Vec::new();
            for (i, v) in values.iter().enumerate() {
                match v {
                    Some(v) => run.push((axis.value(i), *v)),
                    None => runs.push(std::mem::take(&mut run)),
                }
            }
            runs.push(run);
            let look = series(0);
            for r in runs.into_iter().filter(|r| !r.is_empty()) {
                draw_line(&mut chart, theme, r.clone(), look, theme.line)
                    .map_err(|e| e.to_string())?;
                chart
                    .draw_series(r.iter().map(|&p| {
                        Circle::new(p, theme.upx(1.3 * theme.line), look.colour.filled())
                    }))
                    .map_err(|e| e.to_string())?;
            }
            area = below;
        }
        if !legend.entries.is_empty() {
            legend
                .draw_rows(
                    &legend_area,
                    theme,
                    (left, 0.4 * theme.label),
                    w - left - margin,
                )
                .map_err(|e| e.to_string())?;
        }
        Ok(())
    })
}
