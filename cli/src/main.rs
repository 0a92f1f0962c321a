//! The `trajweave` command: explore longitudinal data held in CSV files.

mod correlation;
mod covariates;
mod error;
mod individuals;
mod report;
mod smooth;
mod table;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand, ValueEnum};
use trajweave_core::{describe, simulate, Missing, SimulateOptions, SimulatedPanel, TimeGrid};

use error::CliError;
use table::{read_panel, Columns, ReadArgs};

#[derive(Parser)]
#[command(
    name = "trajweave",
    version,
    about = "Explore longitudinal (repeated-measures) data before modelling it"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Size, visits, follow-up, gaps and visit patterns of a panel in a CSV file.
    Describe(DescribeArgs),
    /// Write a simulated panel (the invented kidney-registry scenario) as CSV.
    Simulate(SimulateArgs),
    /// The mean curve of response on time, with an optional subject-bootstrap band.
    Smooth(smooth::SmoothArgs),
    /// The mean curve's average change per time unit over the central observation times, and
    /// the least-squares slope, with subject-bootstrap intervals.
    Change(smooth::ChangeArgs),
    /// Choose the amount of smoothing by cross-validation over subjects.
    Tune(smooth::TuneArgs),
    /// Residuals, subjects ranked by them, picks at quantiles, a sample and unusual subjects.
    Individuals(individuals::IndividualsArgs),
    /// Equal-count bands of a covariate with a trend and slope per band.
    Covariate(covariates::CovariateArgs),
    /// A mean curve per level of a covariate, or per dropout cohort.
    Groups(covariates::GroupsArgs),
    /// Subjects x time bins of binned means, rows ordered by follow-up, for a heat map.
    Grid(covariates::GridArgs),
    /// Residual correlation between time bins, with counts, Fisher intervals and lags.
    Correlation(correlation::CorrelationArgs),
    /// Empirical variogram of residuals, the process variance and a fitted model.
    Variogram(correlation::VariogramArgs),
    /// Candidate covariance structures fitted by likelihood, ranked by AIC.
    Screen(correlation::ScreenArgs),
    /// The whole exploration as one HTML page with figures, plus a JSON of every number
    /// (without a FILE: the bundled demo data).
    Report(report::ReportArgs),
}

#[derive(Args)]
pub struct PanelArgs {
    /// Delimited text file with a header row (comma, semicolon, tab or pipe; gzip or plain;
    /// `-` for standard input).
    file: PathBuf,
    /// Column holding subject ids (whole numbers or text).
    #[arg(long)]
    subject: String,
    /// Column holding visit times.
    #[arg(long)]
    time: String,
    /// Column holding the response.
    #[arg(long)]
    response: String,
    /// A numeric covariate column (repeat for several).
    #[arg(long = "covariate")]
    covariates: Vec<String>,
    /// What to do with a row holding a missing cell (a missing id, time, response or covariate,
    /// or an infinite response): error (default) or drop.
    #[arg(long, default_value = "error")]
    missing: String,
    #[command(flatten)]
    read: ReadArgs,
}

impl PanelArgs {
    pub fn read(&self) -> Result<trajweave_core::Panel, CliError> {
        let missing: Missing = self.missing.parse()?;
        let cols = Columns {
            subject: &self.subject,
            time: &self.time,
            response: &self.response,
            covariates: &self.covariates,
        };
        read_panel(&self.file, &cols, missing, &self.read.dialect()?)
    }
}

#[derive(Clone, Copy, ValueEnum)]
pub enum Format {
    Table,
    Json,
}

#[derive(Args)]
struct DescribeArgs {
    #[command(flatten)]
    panel: PanelArgs,
    /// Bin edges for visit patterns, comma-separated and increasing (e.g. 0,1,2,4).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    edges: Option<Vec<f64>>,
    /// Nominal visit times for visit patterns, comma-separated (needs --tolerance).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    schedule: Option<Vec<f64>>,
    /// Half-width of the window around each nominal time.
    #[arg(long, allow_hyphen_values = true)]
    tolerance: Option<f64>,
    /// Output: a readable table or JSON with every number.
    #[arg(long, value_enum, default_value = "table")]
    format: Format,
}

#[derive(Args)]
struct SimulateArgs {
    /// Number of patients.
    #[arg(long, default_value_t = 3000.0)]
    subjects: f64,
    /// Seed of the random streams.
    #[arg(long, default_value_t = 2026.0)]
    seed: f64,
    /// Any other option as NAME=VALUE (repeatable); `trajweave simulate --list` shows them.
    #[arg(long = "set", value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// Round every number to this many decimals (default: every digit, exact round trip).
    #[arg(long)]
    digits: Option<usize>,
    /// Print the option names and default values, then stop.
    #[arg(long)]
    list: bool,
    /// Output file, or - for standard output.
    #[arg(long, default_value = "-")]
    out: PathBuf,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Describe(a) => run_describe(&a),
        Command::Simulate(a) => run_simulate(&a),
        Command::Smooth(a) => smooth::run_smooth(&a),
        Command::Change(a) => smooth::run_change(&a),
        Command::Tune(a) => smooth::run_tune(&a),
        Command::Individuals(a) => individuals::run_individuals(&a),
        Command::Covariate(a) => covariates::run_covariate(&a),
        Command::Groups(a) => covariates::run_groups(&a),
        Command::Grid(a) => covariates::run_grid(&a),
        Command::Correlation(a) => correlation::run_correlation(&a),
        Command::Variogram(a) => correlation::run_variogram(&a),
        Command::Screen(a) => correlation::run_screen(&a),
        Command::Report(a) => report::run_report(&a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error [{}]: {e}", e.kind());
            ExitCode::from(2)
        }
    }
}

fn run_describe(a: &DescribeArgs) -> Result<(), CliError> {
    let grid = TimeGrid::from_options(a.edges.clone(), a.schedule.clone(), a.tolerance)?;
    let panel = a.panel.read()?;
    let d = describe(&panel, grid.as_ref())?;
    let text = match a.format {
        Format::Table => d.to_text(),
        Format::Json => json(&d)?,
    };
    write_out(Path::new("-"), text.as_bytes())
}

pub fn json<T: serde::Serialize>(value: &T) -> Result<String, CliError> {
    serde_json::to_string_pretty(value)
        .map(|s| s + "\n")
        .map_err(|e| CliError::io("json", e.to_string()))
}

fn run_simulate(a: &SimulateArgs) -> Result<(), CliError> {
    let mut o = SimulateOptions::default();
    if a.list {
        let defaults = serde_json::to_value(&o).map_err(|e| CliError::io("json", e.to_string()))?;
        let mut s = String::new();
        for name in trajweave_core::SIMULATE_OPTION_NAMES {
            s += &format!("{name:<22} {}\n", defaults[name]);
        }
        return write_out(Path::new("-"), s.as_bytes());
    }
    o.set("subjects", a.subjects)?.set("seed", a.seed)?;
    for pair in &a.set {
        let (name, value) = pair.split_once('=').ok_or_else(|| bad_set(pair))?;
        let value: f64 = value.trim().parse().map_err(|_| bad_set(pair))?;
        o.set(name.trim(), value)?;
    }
    let data = simulate(&o)?;
    write_out(&a.out, simulated_csv(&data, a.digits).as_bytes())
}

fn bad_set(pair: &str) -> CliError {
    CliError::from(trajweave_core::Error::InvalidOption {
        argument: "--set".into(),
        value: format!("{pair:?}"),
        allowed: "write NAME=VALUE with a number, e.g. --set noise_sd=2.5".into(),
    })
}

fn simulated_csv(d: &SimulatedPanel, digits: Option<usize>) -> String {
    let num = |x: f64| match digits {
        Some(k) => format!("{x:.k$}"),
        None => format!("{x}"),
    };
    let mut s = trajweave_core::SIMULATED_COLUMNS.join(",") + "\n";
    for i in 0..d.patient.len() {
        s += &format!(
            "{},{},{},{},{},{},{}\n",
            d.patient[i],
            num(d.years[i]),
            num(d.egfr[i]),
            num(d.age[i]),
            d.female[i],
            d.diabetes[i],
            num(d.acr[i])
        );
    }
    s
}

pub fn write_out(path: &Path, bytes: &[u8]) -> Result<(), CliError> {
    let name = path.display().to_string();
    let result = if name == "-" {
        std::io::stdout().lock().write_all(bytes)
    } else {
        std::fs::write(path, bytes)
    };
    result.map_err(|e| CliError::io(&name, e.to_string()))
}

#[cfg(test)]
mod tests {
    #[test]
    fn every_command_line_is_well_formed() {
        // clap's own consistency checks (unique names, valid defaults) for every subcommand.
        use clap::CommandFactory;
        super::Cli::command().debug_assert();
    }
}
