//! `trajweave correlation`, `variogram` and `screen`: the correlation structure of residuals
//! from a mean model and candidate covariance structures, as JSON.

use clap::Args;
use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::correlation::screen::{screen_structures, ScreenOptions};
use trajweave_core::correlation::variogram::fit::{
    compare_variogram_fits, fit_variogram_with, Estimate, FitOptions, VariogramModel,
};
use trajweave_core::correlation::variogram::{variogram, VariogramOptions};
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::TimeGrid;

use crate::error::CliError;
use crate::individuals::{option, MeanArgs};
use crate::{json, write_out, PanelArgs};

#[derive(Args)]
pub struct CorrelationArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    mean: MeanArgs,
    /// Number of equal-width time bins over the observed times.
    #[arg(long)]
    bins: Option<f64>,
    /// Time-bin edges, comma-separated and increasing.
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    edges: Option<Vec<f64>>,
    /// Nominal visit times, comma-separated (needs --tolerance).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    schedule: Option<Vec<f64>>,
    /// Half-width of the window around each nominal time.
    #[arg(long, allow_hyphen_values = true)]
    tolerance: Option<f64>,
    /// Coverage of the Fisher intervals.
    #[arg(long, allow_hyphen_values = true)]
    level: Option<f64>,
    /// Fewest subjects behind a shown correlation.
    #[arg(long)]
    min_count: Option<f64>,
}

pub fn run_correlation(a: &CorrelationArgs) -> Result<(), CliError> {
    let options = CorrelationOptions::from_numbers(a.level, a.min_count)?;
    let panel = a.panel.read()?;
    let grid = TimeGrid::for_times(
        panel.time(),
        a.bins,
        a.edges.clone(),
        a.schedule.clone(),
        a.tolerance,
    )?;
    let r = a.mean.residuals(&panel)?;
    let c = binned_correlation(&panel, &r.residuals, &grid, &options)?;
    let out = serde_json::json!({ "model": r.model, "correlation": c });
    write_out(std::path::Path::new("-"), json(&out)?.as_bytes())
}

#[derive(Args)]
pub struct VariogramArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    mean: MeanArgs,
    /// Number of lag bins (default 20).
    #[arg(long)]
    lag_bins: Option<f64>,
    /// Lag bins: equal_width (default) or equal_count.
    #[arg(long)]
    lag_kind: Option<String>,
    /// Lag-bin edges, comma-separated (instead of --lag-bins and --max-lag).
    #[arg(long, value_delimiter = ',')]
    lag_edges: Option<Vec<f64>>,
    /// Largest lag kept (default: the longest follow-up).
    #[arg(long, allow_hyphen_values = true)]
    max_lag: Option<f64>,
    /// Fewest pairs for a bin's estimate.
    #[arg(long)]
    min_pairs: Option<f64>,
    /// Raw pairs to include: a number (seeded sample) or "all".
    #[arg(long)]
    sample: Option<String>,
    /// Seed of the pair sample.
    #[arg(long)]
    seed: Option<f64>,
    /// Add a smoothed variogram: a smoother family (lowess, kernel, spline, super) with its
    /// default settings, fitted to the pair sample.
    #[arg(long)]
    smoothed: Option<String>,
    /// Model fitted to the variogram: exponential (default), gaussian, or none.
    #[arg(long, default_value = "exponential")]
    fit: String,
    /// Bin estimate fitted: classical (default) or robust.
    #[arg(long, default_value = "classical")]
    estimate: String,
    /// Add a random-slope term omega^2 u^2 / 2 to the fitted model.
    #[arg(long)]
    random_slope: bool,
    /// Also fit the model with and without a random slope and say which to read
    /// ("comparison" in the output).
    #[arg(long)]
    compare: bool,
}

pub fn run_variogram(a: &VariogramArgs) -> Result<(), CliError> {
    let model = match a.fit.as_str() {
        "none" => None,
        other => Some(VariogramModel::parse(other)?),
    };
    let estimate = Estimate::parse(&a.estimate)?;
    let smoother = a.smoothed.as_deref().map(Smoother::new).transpose()?;
    let options = VariogramOptions::from_front(
        a.lag_kind.as_deref(),
        a.lag_bins,
        a.lag_edges.clone(),
        a.max_lag,
        a.min_pairs,
        a.sample.as_deref(),
        a.seed,
        smoother,
    )?;
    let panel = a.panel.read()?;
    let r = a.mean.residuals(&panel)?;
    let vg = variogram(&panel, &r.residuals, &options)?;
    let fit = model
        .map(|m| {
            fit_variogram_with(
                &vg,
                &FitOptions {
                    model: m,
                    estimate,
                    random_slope: a.random_slope,
                },
            )
        })
        .transpose()?;
    if let Some(f) = &fit {
        for w in &f.warnings {
            eprintln!("warning: {w}");
        }
    }
    let comparison = match (a.compare, model) {
        (false, _) => None,
        (true, Some(m)) => Some(compare_variogram_fits(&vg, m, estimate)?),
        (true, None) => {
            return Err(option(
                "--compare",
                "given with --fit none",
                "name a model with --fit to compare its fits",
            ))
        }
    };
    let mut out = serde_json::json!({ "model": r.model, "variogram": vg, "fit": fit });
    if let Some(c) = comparison {
        out["comparison"] =
            serde_json::to_value(c).map_err(|e| CliError::io("json", e.to_string()))?;
    }
    write_out(std::path::Path::new("-"), json(&out)?.as_bytes())
}

#[derive(Args)]
pub struct ScreenArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    mean: MeanArgs,
    /// Structures to fit, comma-separated (default all): independence, exchangeable,
    /// exponential, gaussian, intercept_exponential_error, toeplitz, unstructured.
    #[arg(long, value_delimiter = ',')]
    candidates: Option<Vec<String>>,
    /// Time-bin edges for toeplitz and unstructured, comma-separated.
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    edges: Option<Vec<f64>>,
    /// Nominal visit times for toeplitz and unstructured (needs --tolerance).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    schedule: Option<Vec<f64>>,
    /// Half-width of the window around each nominal time.
    #[arg(long, allow_hyphen_values = true)]
    tolerance: Option<f64>,
    /// Cap on each optimiser's iterations.
    #[arg(long)]
    max_iterations: Option<f64>,
    /// Relative convergence tolerance of the optimisers.
    #[arg(long, allow_hyphen_values = true)]
    convergence: Option<f64>,
}

pub fn run_screen(a: &ScreenArgs) -> Result<(), CliError> {
    let grid = TimeGrid::from_options(a.edges.clone(), a.schedule.clone(), a.tolerance)?;
    let options = ScreenOptions::from_front(
        a.candidates.as_deref(),
        grid,
        a.max_iterations,
        a.convergence,
    )?;
    let panel = a.panel.read()?;
    let r = a.mean.residuals(&panel)?;
    let s = screen_structures(&panel, &r.residuals, &options)?;
    let out = serde_json::json!({ "model": r.model, "screening": s });
    write_out(std::path::Path::new("-"), json(&out)?.as_bytes())
}
