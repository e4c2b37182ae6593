//! Figures of critical curves on the observer's screen, and the staging of figure files.

use super::figure::{
    draw_line, draw_svg, series, tick, Dash, FigureFormat, Legend, Mark, SeriesLook, Theme,
    REFERENCE,
};
use super::CliError;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::path::Path;
use umbral::numfmt::short;
use umbral::output::OutputTransaction;

/// One labelled closed curve on the screen, in M.
pub struct ScreenCurve {
    pub label: String,
    pub alpha: Vec<f64>,
    pub beta: Vec<f64>,
}

/// A figure of critical curves.
pub struct ScreenFigure<'a> {
    /// The title above the plot.
    pub title: &'a str,
    /// The curves, in M.
    pub curves: &'a [ScreenCurve],
    /// θ_g = GM/(c²D) in μas: the axes are then in μas.
    pub theta_g_uas: Option<f64>,
}

/// An error writing the figure `path`.
pub fn plot_error(path: &str, e: impl std::fmt::Display) -> CliError {
    CliError::usage(format!("cannot write figure '{path}': {e}"))
}

/// Stage a figure's file in `outputs` (see [`OutputTransaction::stage`]), after checking that
/// its extension names a format.
pub fn stage_plot(outputs: &mut OutputTransaction, path: &str) -> Result<(), CliError> {
    FigureFormat::of(path)?;
    outputs
        .stage(Path::new(path))
        .map(|_| ())
        .map_err(|e| plot_error(path, e.message))
}

/// A cartesian chart with f64 axes on the SVG backend.
pub type Chart<'a> = ChartContext<'a, SVGBackend<'a>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// What a chart's axes show: their names, about how many ticks, whether the x ticks are
/// labelled (not on a panel above another), and the y tick labels when they are not numbers.
pub struct Mesh<'a> {
    pub x_desc: &'a str,
    pub y_desc: &'a str,
    pub ticks: (usize, usize),
    pub x_labels: bool,
    pub y_label: Option<&'a dyn Fn(&f64) -> String>,
}

impl<'a> Mesh<'a> {
    /// Both axes named and labelled with numbers, about seven ticks each.
    pub fn new(x_desc: &'a str, y_desc: &'a str) -> Mesh<'a> {
        Mesh {
            x_desc,
            y_desc,
            ticks: (7, 7),
            x_labels: true,
            y_label: None,
        }
    }
}

/// Axis names, tick labels and a light major grid in the theme's sizes (no minor grid): the
/// one look of every chart's axes.
pub fn style_mesh(chart: &mut Chart<'_>, theme: &Theme, mesh: &Mesh<'_>) -> Result<(), String> {
    let x_format = |v: &f64| {
        if mesh.x_labels {
            tick(*v)
        } else {
            String::new()
        }
    };
    let y_format = |v: &f64| match mesh.y_label {
        Some(f) => f(v),
        None => tick(*v),
    };
    chart
        .configure_mesh()
        .x_desc(mesh.x_desc)
        .y_desc(mesh.y_desc)
        .x_labels(mesh.ticks.0)
        .y_labels(mesh.ticks.1)
        .x_label_formatter(&x_format)
        .y_label_formatter(&y_format)
        .label_style(theme.font(theme.tick))
        .axis_desc_style(theme.font(theme.label))
        .bold_line_style(
            RGBColor(0, 0, 0)
                .mix(0.14)
                .stroke_width(theme.upx(theme.thin)),
        )
        .light_line_style(TRANSPARENT)
        .axis_style(theme.hairline(RGBColor(60, 60, 60)))
        .set_all_tick_mark_size(theme.px(3.0))
        .draw()
        .map_err(|e| e.to_string())
}

/// Draw a title centred at the top of `area`, `height` output pixels tall.
pub fn draw_title(
    area: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
    theme: &Theme,
    title: &str,
    height: f64,
) -> Result<(), String> {
    let (w, _) = area.dim_in_pixel();
    let style = theme
        .font(theme.title)
        .pos(plotters::style::text_anchor::Pos::new(
            plotters::style::text_anchor::HPos::Center,
            plotters::style::text_anchor::VPos::Center,
        ));
    area.draw_text(title, &style, ((w / 2) as i32, theme.px(height / 2.0)))
        .map_err(|e| e.to_string())
}

/// The sizes of the label areas beside a chart, in output pixels: (left, bottom).
pub fn label_areas(theme: &Theme) -> (f64, f64) {
    (
        3.6 * theme.tick + 1.5 * theme.label,
        1.6 * theme.tick + 1.6 * theme.label,
    )
}

/// Draw curves on the (α, β) screen with equal aspect, with the Schwarzschild circle of
/// radius 3√3 M dashed on top for comparison, and the legend in a column to the right;
/// returns the SVG text (`path` names it in errors).
pub fn screen_curves(
    path: &str,
    theme: &Theme,
    figure: &ScreenFigure<'_>,
) -> Result<String, CliError> {
    draw_screen_curves(theme, figure).map_err(|e| plot_error(path, e))
}

fn draw_screen_curves(theme: &Theme, figure: &ScreenFigure<'_>) -> Result<String, String> {
    let scale = figure.theta_g_uas.unwrap_or(1.0);
    let schwarzschild = umbral::observables::SCHWARZSCHILD_SHADOW_RADIUS;
    let extent = figure
        .curves
        .iter()
        .flat_map(|c| c.alpha.iter().chain(c.beta.iter()))
        .fold(schwarzschild, |m, x| m.max(x.abs()))
        * 1.12
        * scale;
    let reference = SeriesLook {
        colour: REFERENCE,
        dash: Dash::Long,
    };
    let mut legend = Legend::default();
    for (i, c) in figure.curves.iter().enumerate() {
        legend.add(Mark::Line(series(i), theme.line), c.label.clone());
    }
    let reference_label = match figure.theta_g_uas {
        Some(g) => format!("Schwarzschild, 3√3 M = {} μas", short(schwarzschild * g, 4)),
        None => "Schwarzschild, radius 3√3 M".to_string(),
    };
    legend.add(Mark::Line(reference, theme.thin.max(1.0)), reference_label);
    let (left, bottom) = label_areas(theme);
    let margin = 1.2 * theme.tick;
    let title_h = 2.0 * theme.title;
    let side = theme.width - left - 2.0 * margin;
    let legend_w = legend.width(theme) + theme.label;
    let (w, h) = (theme.width + legend_w, title_h + side + bottom + margin);
    let (x_desc, y_desc) = match figure.theta_g_uas {
        Some(_) => ("α (μas)", "β (μas)"),
        None => ("α / M", "β / M"),
    };
    draw_svg(theme, (w, h), |root| {
        let (top, rest) = root.split_vertically(theme.px(title_h));
        draw_title(&top, theme, figure.title, title_h)?;
        let (plot_area, legend_area) = rest.split_horizontally(theme.px(theme.width));
        let mut chart = ChartBuilder::on(&plot_area)
            .margin_left(theme.px(margin))
            .margin_right(theme.px(margin))
            .x_label_area_size(theme.px(bottom))
            .y_label_area_size(theme.px(left))
            .build_cartesian_2d(-extent..extent, -extent..extent)
            .map_err(|e| e.to_string())?;
        style_mesh(&mut chart, theme, &Mesh::new(x_desc, y_desc))?;
        for (i, c) in figure.curves.iter().enumerate() {
            let mut points: Vec<(f64, f64)> = c
                .alpha
                .iter()
                .zip(&c.beta)
                .map(|(a, b)| (a * scale, b * scale))
                .collect();
            if let Some(first) = points.first().copied() {
                points.push(first);
            }
            draw_line(&mut chart, theme, points, series(i), theme.line)
                .map_err(|e| e.to_string())?;
        }
        let circle: Vec<(f64, f64)> = (0..=720)
            .map(|k| {
                let t = (k as f64 / 2.0).to_radians();
                (
                    schwarzschild * scale * t.cos(),
                    schwarzschild * scale * t.sin(),
                )
            })
            .collect();
        draw_line(&mut chart, theme, circle, reference, theme.thin.max(1.0))
            .map_err(|e| e.to_string())?;
        legend
            .draw_column(&legend_area, theme, (0.0, 0.0))
            .map_err(|e| e.to_string())
    })
}
