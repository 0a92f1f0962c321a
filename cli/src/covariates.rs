//! `trajweave covariate` (equal-count bands of a covariate with a trend per band),
//! `trajweave groups` (a curve per level of a covariate, or per dropout cohort) and
//! `trajweave grid` (the subjects x time-bins matrix for a heat map), as JSON.

use clap::Args;
use trajweave_core::covariates::bands::covariate_bands;
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::covariates::groups::{dropout_curves, group_curves};
use trajweave_core::individuals::trajectory_grid::trajectory_grid;
use trajweave_core::TimeGrid;

use crate::error::CliError;
use crate::individuals::option;
use crate::smooth::SmootherArgs;
use crate::{json, write_out, PanelArgs};

#[derive(Args)]
pub struct CovariateArgs {
    #[command(flatten)]
    panel: PanelArgs,
    /// The covariate whose bands are compared (must also be given as --covariate).
    #[arg(long)]
    by: String,
    /// Number of equal-count bands.
    #[arg(long, default_value_t = 4)]
    bands: usize,
    /// Share of each band overlapping the next, in [0, 1).
    #[arg(long, default_value_t = 0.5)]
    overlap: f64,
    #[command(flatten)]
    smoother: SmootherArgs,
    /// Times to evaluate the curves at, comma-separated (default: 101 points over the range).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    at: Option<Vec<f64>>,
}

pub fn run_covariate(a: &CovariateArgs) -> Result<(), CliError> {
    let smoother = a.smoother.smoother()?;
    let panel = a.panel.read()?;
    let bands = covariate_bands(&panel, &a.by, a.bands, a.overlap)?;
    let trends = conditional_trends(&panel, &a.by, &bands, &smoother, a.at.as_deref())?;
    let out = serde_json::json!({"bands": bands, "trends": trends});
    write_out(std::path::Path::new("-"), json(&out)?.as_bytes())
}

#[derive(Args)]
pub struct GroupsArgs {
    #[command(flatten)]
    panel: PanelArgs,
    /// A categorical covariate: one curve per level (must also be given as --covariate).
    #[arg(long)]
    by: Option<String>,
    /// Bin edges of the last visit: one curve per dropout cohort (instead of --by).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    edges: Option<Vec<f64>>,
    #[command(flatten)]
    smoother: SmootherArgs,
    /// Times to evaluate the curves at, comma-separated (default: 101 points over the range).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    at: Option<Vec<f64>>,
}

pub fn run_groups(a: &GroupsArgs) -> Result<(), CliError> {
    let smoother = a.smoother.smoother()?;
    let panel = a.panel.read()?;
    let curves = match (&a.by, &a.edges) {
        (Some(by), None) => group_curves(&panel, by, &smoother, a.at.as_deref())?,
        (None, Some(edges)) => dropout_curves(
            &panel,
            &TimeGrid::edges(edges.clone())?,
            &smoother,
            a.at.as_deref(),
        )?,
        _ => {
            return Err(option(
                "--by",
                "given with --edges, or neither given",
                "give --by COLUMN or --edges E1,E2,...",
            ))
        }
    };
    write_out(std::path::Path::new("-"), json(&curves)?.as_bytes())
}

#[derive(Args)]
pub struct GridArgs {
    #[command(flatten)]
    panel: PanelArgs,
    /// Time-bin edges, comma-separated and increasing.
    #[arg(
        long,
        value_delimiter = ',',
        allow_hyphen_values = true,
        required = true
    )]
    edges: Vec<f64>,
}

/// Rows ordered by each subject's follow-up length (last minus first visit), the longest last.
pub fn run_grid(a: &GridArgs) -> Result<(), CliError> {
    let panel = a.panel.read()?;
    let grid = TimeGrid::edges(a.edges.clone())?;
    let t = panel.time();
    let follow: Vec<f64> = (0..panel.n_subjects())
        .map(|i| {
            let rows = panel.subject_rows(i);
            t[rows.end - 1] - t[rows.start]
        })
        .collect();
    let g = trajectory_grid(&panel, panel.response(), &grid, &follow)?;
    write_out(std::path::Path::new("-"), json(&g)?.as_bytes())
}
