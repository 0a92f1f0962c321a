//! `trajweave smooth` (the mean curve with an optional band), `trajweave change` (its average
//! change per time unit with intervals) and `trajweave tune` (choosing the smoothing by
//! cross-validation over subjects).

use std::fmt::Write as _;

use clap::Args;
use trajweave_core::trend::change::{average_change, ChangeOptions};
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::trend::tune::tune_smoother;

use crate::error::CliError;
use crate::{json, write_out, Format, PanelArgs};

/// The smoother and its options; only the options given are passed, so the core's defaults
/// and its checks (which options a family takes) apply.
#[derive(Args)]
pub struct SmootherArgs {
    /// Smoother family: lowess, kernel, spline or super.
    #[arg(long, default_value = "lowess")]
    method: String,
    /// LOWESS or super smoother span (fraction of points), or "cv" for the super smoother's
    /// variable span.
    #[arg(long)]
    span: Option<String>,
    /// LOWESS robustness iterations.
    #[arg(long)]
    iterations: Option<f64>,
    /// LOWESS interpolation distance.
    #[arg(long)]
    delta: Option<f64>,
    /// Kernel bandwidth (the kernel's standard deviation).
    #[arg(long)]
    bandwidth: Option<f64>,
    /// Kernel shape: gaussian or box.
    #[arg(long)]
    shape: Option<String>,
    /// Kernel degree: 0 (local constant) or 1 (local linear).
    #[arg(long)]
    degree: Option<f64>,
    /// Gaussian kernel truncation, in bandwidths.
    #[arg(long)]
    truncation: Option<f64>,
    /// Gaussian kernel evaluation: auto, exact or binned.
    #[arg(long)]
    evaluation: Option<String>,
    /// Gaussian kernel grid points per bandwidth (binned evaluation).
    #[arg(long)]
    bins_per_bandwidth: Option<f64>,
    /// Smoothing-spline penalty.
    #[arg(long)]
    lambda: Option<f64>,
    /// Smoothing-spline target degrees of freedom.
    #[arg(long)]
    df: Option<f64>,
    /// Super smoother bass (0 to 10).
    #[arg(long)]
    bass: Option<f64>,
}

impl SmootherArgs {
    pub fn smoother(&self) -> Result<Smoother, CliError> {
        let num =
            |name: &str, v: Option<f64>| v.map(|x| (name.to_string(), OptionValue::Number(x)));
        let word = |name: &str, v: &Option<String>| {
            v.as_ref()
                .map(|s| (name.to_string(), OptionValue::Text(s.clone())))
        };
        let span = self.span.as_ref().map(|s| {
            let value = s
                .parse::<f64>()
                .map_or(OptionValue::Text(s.clone()), OptionValue::Number);
            ("span".to_string(), value)
        });
        let options: Vec<(String, OptionValue)> = [
            span,
            num("iterations", self.iterations),
            num("delta", self.delta),
            num("bandwidth", self.bandwidth),
            word("shape", &self.shape),
            num("degree", self.degree),
            num("truncation", self.truncation),
            word("evaluation", &self.evaluation),
            num("bins_per_bandwidth", self.bins_per_bandwidth),
            num("lambda", self.lambda),
            num("df", self.df),
            num("bass", self.bass),
        ]
        .into_iter()
        .flatten()
        .collect();
        Ok(Smoother::from_options(&self.method, &options)?)
    }
}

#[derive(Args)]
pub struct SmoothArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    smoother: SmootherArgs,
    /// Times to evaluate the curve at, comma-separated (default: 101 points over the range).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    at: Option<Vec<f64>>,
    /// Number of subject resamples for a pointwise band (10 to 100000; none by default).
    #[arg(long)]
    bootstrap: Option<usize>,
    /// Coverage of the band.
    #[arg(long, default_value_t = 0.95)]
    level: f64,
    /// Seed of the resamples.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Output: csv (time, fitted, lower, upper) or json (every number, with the settings).
    #[arg(long, default_value = "csv")]
    format: String,
    /// Output file, or - for standard output.
    #[arg(long, default_value = "-")]
    out: std::path::PathBuf,
}

pub fn run_smooth(a: &SmoothArgs) -> Result<(), CliError> {
    let smoother = a.smoother.smoother()?;
    let boot = a.bootstrap.map(|reps| BootstrapOptions {
        reps,
        level: a.level,
        seed: a.seed,
    });
    let format = csv_or_json(&a.format)?;
    let panel = a.panel.read()?;
    let m = mean_curve(&panel, &smoother, a.at.as_deref(), boot.as_ref())?;
    warn(&m.curve.warnings);
    let text = match format {
        Format::Json => json(&m)?,
        Format::Table => {
            let mut s = String::from(if m.band.is_some() {
                "time,fitted,lower,upper\n"
            } else {
                "time,fitted\n"
            });
            for k in 0..m.at.len() {
                let _ = write!(s, "{},{}", m.at[k], m.fitted[k]);
                if let Some(b) = &m.band {
                    let _ = write!(s, ",{},{}", b.lower[k], b.upper[k]);
                }
                s.push('\n');
            }
            s
        }
    };
    write_out(&a.out, text.as_bytes())
}

/// Prints each warning of a result to standard error.
fn warn(warnings: &[String]) {
    for w in warnings {
        eprintln!("warning: {w}");
    }
}

#[derive(Args)]
pub struct ChangeArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    smoother: SmootherArgs,
    /// Share of the observation times the window covers, in (0, 1].
    #[arg(long, default_value_t = 0.9)]
    central: f64,
    /// Number of subject resamples (10 to 100000).
    #[arg(long, default_value_t = 200.0)]
    reps: f64,
    /// Coverage of the intervals.
    #[arg(long, default_value_t = 0.95)]
    level: f64,
    /// Seed of the resamples.
    #[arg(long, default_value_t = 1.0)]
    seed: f64,
    /// Output: a readable table or JSON.
    #[arg(long, value_enum, default_value = "table")]
    format: Format,
}

pub fn run_change(a: &ChangeArgs) -> Result<(), CliError> {
    let smoother = a.smoother.smoother()?;
    let o = ChangeOptions::from_numbers(a.central, a.reps, a.level, a.seed)?;
    let panel = a.panel.read()?;
    let c = average_change(&panel, &smoother, &o)?;
    warn(&c.warnings);
    let text = match a.format {
        Format::Json => json(&c)?,
        Format::Table => {
            let pct = 100.0 * c.level;
            let mut s = format!(
                "average change per time unit of the {} mean curve from {} to {} (central {}):\n",
                c.smoother.family(),
                c.from,
                c.to,
                c.central
            );
            let _ = writeln!(
                s,
                "{:>14} {:>14} {:>22}",
                "",
                "estimate",
                format!("{pct}% interval")
            );
            let _ = writeln!(
                s,
                "{:>14} {:>14.6} {:>22}",
                "mean curve",
                c.estimate,
                format!("{:.4} to {:.4}", c.lower, c.upper)
            );
            let _ = writeln!(
                s,
                "{:>14} {:>14.6} {:>22}",
                "least squares",
                c.ols_slope,
                format!("{:.4} to {:.4}", c.ols_lower, c.ols_upper)
            );
            let _ = writeln!(
                s,
                "{} subject resamples (seed {}), {} failed",
                c.reps, c.seed, c.failed
            );
            s
        }
    };
    write_out(std::path::Path::new("-"), text.as_bytes())
}

fn csv_or_json(f: &str) -> Result<Format, CliError> {
    match f {
        "csv" => Ok(Format::Table),
        "json" => Ok(Format::Json),
        other => Err(CliError::from(trajweave_core::Error::InvalidOption {
            argument: "--format".into(),
            value: format!("{other:?}"),
            allowed: "csv or json".into(),
        })),
    }
}

#[derive(Args)]
pub struct TuneArgs {
    #[command(flatten)]
    panel: PanelArgs,
    #[command(flatten)]
    smoother: SmootherArgs,
    /// Candidate values of the parameter, comma-separated.
    #[arg(long, value_delimiter = ',', required = true)]
    candidates: Vec<f64>,
    /// The parameter to vary (default: span, bandwidth or df by family).
    #[arg(long)]
    parameter: Option<String>,
    /// Folds of subjects (default: leave one subject out).
    #[arg(long)]
    folds: Option<usize>,
    /// Seed of the fold assignment.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Output: a readable table or JSON.
    #[arg(long, value_enum, default_value = "table")]
    format: Format,
}

pub fn run_tune(a: &TuneArgs) -> Result<(), CliError> {
    let smoother = a.smoother.smoother()?;
    let panel = a.panel.read()?;
    let t = tune_smoother(
        &panel,
        &smoother,
        a.parameter.as_deref(),
        &a.candidates,
        a.folds,
        a.seed,
    )?;
    let text = match a.format {
        Format::Json => json(&t)?,
        Format::Table => {
            let mut s = format!(
                "{} {} by {} ({} folds)\n",
                t.family, t.parameter, t.scheme, t.folds
            );
            let _ = writeln!(s, "{:>14} {:>16} {:>16}", t.parameter, "cv score", "gcv");
            for (i, c) in t.candidates.iter().enumerate() {
                let gcv = t
                    .gcv
                    .as_ref()
                    .map_or("".to_string(), |g| format!("{:.6}", g[i]));
                let mark = if i == t.best_index { "  <- best" } else { "" };
                let _ = writeln!(s, "{c:>14} {:>16.6} {gcv:>16}{mark}", t.scores[i]);
            }
            s
        }
    };
    write_out(std::path::Path::new("-"), text.as_bytes())
}
