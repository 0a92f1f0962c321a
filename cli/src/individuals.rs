//! `trajweave individuals`: residuals from a mean model, subjects ranked by a summary of their
//! residuals, the subjects at chosen quantiles, a sample and the unusual subjects, as JSON;
//! optionally the per-row residuals as CSV in the file's row order.

use clap::Args;
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel, Residuals};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::unusual::unusual;
use trajweave_core::trend::mean_curve::mean_curve;
use trajweave_core::Panel;

use crate::error::CliError;
use crate::smooth::SmootherArgs;
use crate::{json, write_out, PanelArgs};

/// The mean model residuals are taken from (shared by the verbs that use residuals).
#[derive(Args)]
pub struct MeanArgs {
    /// Mean model: polynomial (in time, --poly-degree), smooth (the --method smoother over all
    /// rows) or group (one smooth per level of --by).
    #[arg(long, default_value = "polynomial")]
    mean: String,
    /// Polynomial degree, 0 to 3.
    #[arg(long, default_value_t = 1)]
    poly_degree: usize,
    /// Covariate whose levels get their own curve (with --mean group).
    #[arg(long)]
    by: Option<String>,
    #[command(flatten)]
    smoother: SmootherArgs,
}

impl MeanArgs {
    /// The residuals of the mean model asked for.
    pub fn residuals(&self, panel: &Panel) -> Result<Residuals, CliError> {
        let model = match self.mean.as_str() {
            "polynomial" => MeanModel::Polynomial {
                degree: self.poly_degree,
            },
            "smooth" => {
                MeanModel::Curve(mean_curve(panel, &self.smoother.smoother()?, None, None)?.curve)
            }
            "group" => MeanModel::ByGroup {
                covariate: self
                    .by
                    .clone()
                    .ok_or_else(|| option("--by", "not given", "--mean group needs --by COLUMN"))?,
                smoother: self.smoother.smoother()?,
            },
            other => {
                return Err(option(
                    "--mean",
                    &format!("{other:?}"),
                    "polynomial, smooth or group",
                ))
            }
        };
        Ok(residuals(panel, &model)?)
    }
}

#[derive(Args)]
pub struct IndividualsArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    mean: MeanArgs,
    /// Summary of each subject's residuals: median, mean, quantile (with --p), rms, max_abs or slope.
    #[arg(long, default_value = "median")]
    summary: String,
    /// Probability of --summary quantile.
    #[arg(long)]
    p: Option<f64>,
    /// Quantiles of the summary whose subjects are shown, comma-separated.
    #[arg(long, value_delimiter = ',', default_value = "0.05,0.25,0.5,0.75,0.95")]
    quantiles: Vec<f64>,
    /// Number of subjects to sample.
    #[arg(long, default_value_t = 10)]
    sample: usize,
    /// Sampling: random or spread.
    #[arg(long, default_value = "spread")]
    strategy: String,
    /// Seed of the sample.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Robust z beyond which a subject is unusual.
    #[arg(long, default_value_t = 3.5)]
    subject_threshold: f64,
    /// Standardised residual beyond which an observation is unusual.
    #[arg(long, default_value_t = 3.5)]
    observation_threshold: f64,
    /// Also write the residuals, one per row of the file in its order, to this CSV file.
    #[arg(long)]
    residuals_out: Option<std::path::PathBuf>,
}

pub fn run_individuals(a: &IndividualsArgs) -> Result<(), CliError> {
    let summary = Summary::parse(&a.summary, a.p)?;
    let strategy = Strategy::parse(&a.strategy)?;
    let panel = a.panel.read()?;
    let r = a.mean.residuals(&panel)?;
    let ranking = rank_subjects(&panel, &r.residuals, summary)?;
    let picks = pick_subjects(&panel, &r.residuals, &ranking, &a.quantiles)?;
    let k = a.sample.min(panel.n_subjects());
    let sample = sample_subjects(&panel, Some(&ranking), k, a.seed, strategy)?;
    let flags = unusual(
        &panel,
        &r.residuals,
        &ranking,
        a.subject_threshold,
        a.observation_threshold,
    )?;
    if let Some(path) = &a.residuals_out {
        let mut s = String::from("residual\n");
        for v in panel.to_input_order(&r.residuals) {
            s += &if v.is_nan() {
                "NA\n".to_string()
            } else {
                format!("{v}\n")
            };
        }
        write_out(path, s.as_bytes())?;
    }
    let out = serde_json::json!({
        "model": r.model,
        "coefficients": r.coefficients,
        "ranking": ranking,
        "picks": picks,
        "sample": sample,
        "unusual": flags,
    });
    write_out(std::path::Path::new("-"), json(&out)?.as_bytes())
}

pub fn option(argument: &str, value: &str, allowed: &str) -> CliError {
    CliError::from(trajweave_core::Error::InvalidOption {
        argument: argument.into(),
        value: value.into(),
        allowed: allowed.into(),
    })
}
