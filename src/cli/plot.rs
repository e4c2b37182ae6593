//! SVG figures (plotters).

use super::CliError;
use plotters::prelude::*;
use std::path::Path;
use umbral::output::OutputTransaction;

/// One labelled closed curve on the screen.
pub struct ScreenCurve {
    pub label: String,
    pub alpha: Vec<f64>,
    pub beta: Vec<f64>,
}

const PALETTE: [RGBColor; 6] = [
    RGBColor(31, 78, 121),
    RGBColor(196, 90, 17),
    RGBColor(46, 125, 50),
    RGBColor(123, 31, 162),
    RGBColor(183, 28, 28),
    RGBColor(0, 131, 143),
];

pub fn plot_error(path: &str, e: impl std::fmt::Display) -> CliError {
    CliError::usage(format!("cannot write plot '{path}': {e}"))
}

/// Stage a figure's file in `outputs` (see [`OutputTransaction::stage`]).
pub fn stage_plot(outputs: &mut OutputTransaction, path: &str) -> Result<(), CliError> {
    outputs
        .stage(Path::new(path))
        .map(|_| ())
        .map_err(|e| plot_error(path, e.message))
}

/// Write a figure's SVG text to its staged file.
pub fn write_plot(outputs: &mut OutputTransaction, path: &str, svg: &str) -> Result<(), CliError> {
    outputs
        .write(Path::new(path), svg.as_bytes())
        .map_err(|e| plot_error(path, e.message))
}

/// Draw curves on the (α, β) screen with equal aspect, plus the Schwarzschild circle of
/// radius 3√3 M for comparison; returns the SVG text (`path` names it in errors).
pub fn screen_curves(path: &str, title: &str, curves: &[ScreenCurve]) -> Result<String, CliError> {
    let mut svg = String::new();
    draw_screen_curves(&mut svg, path, title, curves)?;
    Ok(svg)
}

fn draw_screen_curves(
    svg: &mut String,
    path: &str,
    title: &str,
    curves: &[ScreenCurve],
) -> Result<(), CliError> {
    let schwarzschild = umbral::observables::SCHWARZSCHILD_SHADOW_RADIUS;
    let extent = curves
        .iter()
        .flat_map(|c| c.alpha.iter().chain(c.beta.iter()))
        .fold(schwarzschild, |m, x| m.max(x.abs()))
        * 1.15;
    let root = SVGBackend::with_string(svg, (720, 720)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| plot_error(path, e))?;
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 20))
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(52)
        .build_cartesian_2d(-extent..extent, -extent..extent)
        .map_err(|e| plot_error(path, e))?;
    chart
        .configure_mesh()
        .x_desc("alpha / M")
        .y_desc("beta / M")
        .draw()
        .map_err(|e| plot_error(path, e))?;
    let circle: Vec<(f64, f64)> = (0..=360)
        .map(|k| {
            let t = (k as f64).to_radians();
            (schwarzschild * t.cos(), schwarzschild * t.sin())
        })
        .collect();
    chart
        .draw_series(LineSeries::new(circle, BLACK.mix(0.5).stroke_width(1)))
        .map_err(|e| plot_error(path, e))?
        .label("Schwarzschild, radius 3*sqrt(3) M")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], BLACK.mix(0.5)));
    for (i, c) in curves.iter().enumerate() {
        let colour = PALETTE[i % PALETTE.len()];
        let mut points: Vec<(f64, f64)> = c
            .alpha
            .iter()
            .copied()
            .zip(c.beta.iter().copied())
            .collect();
        if let Some(first) = points.first().copied() {
            points.push(first);
        }
        chart
            .draw_series(LineSeries::new(points, colour.stroke_width(2)))
            .map_err(|e| plot_error(path, e))?
            .label(c.label.clone())
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2))
            });
    }
    finish(&mut chart, &root, path)
}

/// Draw the legend in the upper right corner and finish the drawing.
pub fn finish<'a, X: Ranged, Y: Ranged>(
    chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
    root: &DrawingArea<SVGBackend<'a>, plotters::coord::Shift>,
    path: &str,
) -> Result<(), CliError> {
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .position(SeriesLabelPosition::UpperRight)
        .draw()
        .map_err(|e| plot_error(path, e))?;
    root.present().map_err(|e| plot_error(path, e))?;
    Ok(())
}
