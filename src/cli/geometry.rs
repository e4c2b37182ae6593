//! `umbral geometry`: the metric, its inverse and the Christoffel symbols at one point.

use super::args::{metric_from_args, parse_finite, MetricChoice};
use super::CliError;
use clap::Args;
use serde::Serialize;
use std::collections::BTreeMap;
use std::f64::consts::PI;
use umbral::metric::{check_point, Classification, Spacetime};
use umbral::numfmt::Num;

#[derive(Debug, Args)]
pub struct GeometryArgs {
    #[command(flatten)]
    metric: MetricChoice,
    /// Parameter assignment NAME=VALUE (repeatable).
    #[arg(long = "set", value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// Radius r in units of M (r > 0: every metric's chart; points where the metric is
    /// singular to within rounding are refused).
    #[arg(long, allow_hyphen_values = true)]
    r: String,
    /// Polar angle theta in radians (strictly between 0 and pi).
    #[arg(long, allow_hyphen_values = true)]
    theta: String,
    /// Print JSON instead of tables.
    #[arg(long)]
    json: bool,
}

#[derive(Serialize)]
struct Point {
    r: f64,
    theta: f64,
}

#[derive(Serialize)]
struct GeometryReport {
    metric: String,
    parameters: BTreeMap<String, f64>,
    point: Point,
    g: Vec<Vec<f64>>,
    g_inverse: Vec<Vec<f64>>,
    christoffel: Vec<Vec<Vec<f64>>>,
    horizon_radius: Option<f64>,
}

/// Evaluate everything at the point, refusing points outside the chart (θ in (0, π), r > 0)
/// and points where the metric is singular to within rounding ([`check_point`]).
/// `place` names the point in messages.
fn report(
    metric: &dyn Spacetime,
    r: f64,
    theta: f64,
    place: &str,
) -> Result<GeometryReport, CliError> {
    if !(theta > 0.0 && theta < PI) {
        return Err(CliError::usage(format!(
            "--theta must lie strictly between 0 and pi (the axis is a coordinate singularity), got {}",
            Num(theta)
        )));
    }
    check_point(metric, r, theta).map_err(|problem| {
        CliError::usage(if problem.is_singular() {
            format!("the metric is singular at {place}: {problem}")
        } else {
            format!("the point {place} is not in the metric's chart: {problem}")
        })
    })?;
    let info = metric.info();
    let g = metric.metric(r, theta);
    let g_inv = metric.inverse_metric(r, theta);
    let gamma = metric.christoffel(r, theta);
    let rows = |m: &nalgebra::Matrix4<f64>| -> Vec<Vec<f64>> {
        (0..4)
            .map(|i| (0..4).map(|j| m[(i, j)]).collect())
            .collect()
    };
    Ok(GeometryReport {
        metric: info.name.clone(),
        parameters: umbral::metric::parameter_map(metric),
        point: Point { r, theta },
        g: rows(&g),
        g_inverse: rows(&g_inv),
        christoffel: gamma
            .iter()
            .map(|m| m.iter().map(|row| row.to_vec()).collect())
            .collect(),
        horizon_radius: match metric.classify() {
            Classification::BlackHole { outer_horizon } => Some(outer_horizon),
            Classification::Horizonless => None,
        },
    })
}

const NAMES: [&str; 4] = ["t", "r", "theta", "phi"];

fn print_matrix(title: &str, m: &[Vec<f64>]) -> Result<(), CliError> {
    outln!("{title}")?;
    outln!(
        "{:>8}{}",
        "",
        NAMES.iter().map(|n| format!("{n:>24}")).collect::<String>()
    )?;
    for (i, row) in m.iter().enumerate() {
        outln!(
            "{:>8}{}",
            NAMES[i],
            row.iter()
                .map(|x| format!("{x:>24.16e}"))
                .collect::<String>()
        )?;
    }
    Ok(())
}

pub fn run(args: &GeometryArgs) -> Result<(), CliError> {
    let r = parse_finite(&args.r, "--r")?;
    let theta = parse_finite(&args.theta, "--theta")?;
    let metric = metric_from_args(&args.metric, &args.set)?;
    let place = format!(
        "r = {}, theta = {} rad ({} deg)",
        Num(r),
        Num(theta),
        Num(theta.to_degrees())
    );
    let rep = report(metric.as_ref(), r, theta, &place)?;
    if args.json {
        outln!(
            "{}",
            serde_json::to_string_pretty(&rep).expect("serialisable")
        )?;
        return Ok(());
    }
    outln!(
        "metric {} ({}) at r = {r} M, theta = {theta} rad",
        rep.metric,
        super::args::parameter_summary(&rep.parameters)
    )?;
    match rep.horizon_radius {
        Some(h) => outln!("outer horizon: r = {h:.15} M"),
        None => outln!("outer horizon: none (horizonless)"),
    }?;
    print_matrix("g_{mu nu}", &rep.g)?;
    print_matrix("g^{mu nu}", &rep.g_inverse)?;
    outln!("nonzero Christoffel symbols Gamma^mu_{{alpha beta}} (alpha <= beta)")?;
    for (mu, m) in rep.christoffel.iter().enumerate() {
        for (alpha, row) in m.iter().enumerate() {
            for (beta, x) in row.iter().enumerate().skip(alpha) {
                if *x != 0.0 {
                    outln!(
                        "  Gamma^{}_{{{} {}}} = {x:.16e}",
                        NAMES[mu],
                        NAMES[alpha],
                        NAMES[beta]
                    )?;
                }
            }
        }
    }
    Ok(())
}
