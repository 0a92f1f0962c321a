//! `trajweave report`: the whole exploration of one file (or of the bundled demo data) as one
//! self-contained HTML page with figures, plus a JSON file with every number shown.

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use clap::Args;
use trajweave_core::Missing;
use trajweave_report::{build_report, ReportColumns, ReportOptions, ReportValue};

use crate::error::CliError;
use crate::table::{read_panel, read_panel_from, Columns, Dialect, ReadArgs};
use crate::write_out;

/// The bundled demo data: the invented kidney registry (simulated; no real patient).
const DEMO_CSV: &[u8] = include_bytes!("../../demo-data/kidney_registry.csv");
const DEMO_COVARIATES: [&str; 4] = ["age", "female", "diabetes", "acr"];

#[derive(Args)]
pub struct ReportArgs {
    /// Delimited text file with a header row (gzip or plain; `-` for standard input); without
    /// it, the bundled demo data.
    file: Option<PathBuf>,
    /// Column holding subject ids (demo: patient).
    #[arg(long)]
    subject: Option<String>,
    /// Column holding visit times (demo: years).
    #[arg(long)]
    time: Option<String>,
    /// Column holding the response (demo: egfr).
    #[arg(long)]
    response: Option<String>,
    /// A numeric covariate column (repeat for several; demo: age, female, diabetes, acr).
    #[arg(long = "covariate")]
    covariates: Vec<String>,
    /// What to do with a row holding a missing cell (a missing id, time, response or covariate,
    /// or an infinite response): error (default) or drop.
    #[arg(long, default_value = "error")]
    missing: String,
    #[command(flatten)]
    read: ReadArgs,
    /// Unit of the time column, for axis titles (demo: years).
    #[arg(long)]
    time_unit: Option<String>,
    /// Unit of the response, for axis titles (demo: mL/min/1.73 m2).
    #[arg(long)]
    response_unit: Option<String>,
    /// Settings file (TOML): one `name = value` per report option.
    #[arg(long)]
    settings: Option<PathBuf>,
    /// A report option as NAME=VALUE (repeatable; after --settings). Lists comma-separated.
    #[arg(long = "set", value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// The HTML file to write; the JSON goes beside it with the extension .json.
    #[arg(long, default_value = "report.html")]
    out: PathBuf,
    /// No progress bar.
    #[arg(long)]
    quiet: bool,
}

pub fn run_report(a: &ReportArgs) -> Result<(), CliError> {
    let mut options = ReportOptions::default();
    if let Some(path) = &a.settings {
        apply_settings(&mut options, path)?;
    }
    for pair in &a.set {
        let (name, value) = pair.split_once('=').ok_or_else(|| bad_set(pair))?;
        let value = match value.trim().parse::<f64>() {
            Ok(x) => ReportValue::Number(x),
            Err(_) => ReportValue::Text(value.trim().to_string()),
        };
        options.set(name.trim(), &value)?;
    }
    let missing: Missing = a.missing.parse()?;
    let dialect = a.read.dialect()?;
    let (panel, columns) = match &a.file {
        None => {
            let covariates: Vec<String> = if a.covariates.is_empty() {
                DEMO_COVARIATES.iter().map(|s| s.to_string()).collect()
            } else {
                a.covariates.clone()
            };
            let subject = a.subject.clone().unwrap_or("patient".into());
            let time = a.time.clone().unwrap_or("years".into());
            let response = a.response.clone().unwrap_or("egfr".into());
            let cols = Columns {
                subject: &subject,
                time: &time,
                response: &response,
                covariates: &covariates,
            };
            let panel =
                read_panel_from(DEMO_CSV, "demo data", &cols, missing, &Dialect::default())?;
            let columns = ReportColumns {
                subject: subject.clone(),
                time: time.clone(),
                response: response.clone(),
                time_unit: Some(a.time_unit.clone().unwrap_or("years".into())),
                response_unit: Some(a.response_unit.clone().unwrap_or("mL/min/1.73 m2".into())),
                source: Some("the bundled demo data (simulated; no real patient)".into()),
            };
            (panel, columns)
        }
        Some(file) => {
            let need = |v: &Option<String>, flag: &str| {
                v.clone().ok_or_else(|| {
                    CliError::from(trajweave_core::Error::InvalidOption {
                        argument: flag.into(),
                        value: "not given".into(),
                        allowed: format!("name the column with {flag} COLUMN (needed with a FILE)"),
                    })
                })
            };
            let (subject, time, response) = (
                need(&a.subject, "--subject")?,
                need(&a.time, "--time")?,
                need(&a.response, "--response")?,
            );
            let cols = Columns {
                subject: &subject,
                time: &time,
                response: &response,
                covariates: &a.covariates,
            };
            let panel = read_panel(file, &cols, missing, &dialect)?;
            let columns = ReportColumns {
                subject,
                time,
                response,
                time_unit: a.time_unit.clone(),
                response_unit: a.response_unit.clone(),
                source: file.file_name().map(|n| n.to_string_lossy().into_owned()),
            };
            (panel, columns)
        }
    };
    let bar = Progress::start(!a.quiet && std::io::stderr().is_terminal());
    let report = build_report(&panel, &columns, &options, &mut |step| bar.step(step));
    bar.finish();
    let report = report?;
    write_out(&a.out, report.html.as_bytes())?;
    let json_path = a.out.with_extension("json");
    write_out(&json_path, report.json_text().as_bytes())?;
    if !a.quiet {
        eprintln!(
            "wrote {} ({:.1} MB) and {}",
            a.out.display(),
            report.html.len() as f64 / 1e6,
            json_path.display()
        );
    }
    Ok(())
}

/// Each key of a TOML table as a report option: numbers, text, or arrays of either.
fn apply_settings(options: &mut ReportOptions, path: &Path) -> Result<(), CliError> {
    let file = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| CliError::io(&file, e.to_string()))?;
    let table: toml::Table = text
        .parse()
        .map_err(|e: toml::de::Error| CliError::io(&file, e.to_string()))?;
    for (name, value) in &table {
        let bad = || {
            CliError::from(trajweave_core::Error::InvalidOption {
                argument: name.clone(),
                value: value.to_string(),
                allowed: format!("in {file}: a number, a text, or an array of numbers or texts"),
            })
        };
        let number = |v: &toml::Value| match v {
            toml::Value::Integer(i) => Some(*i as f64),
            toml::Value::Float(x) => Some(*x),
            _ => None,
        };
        let v = match value {
            toml::Value::String(s) => ReportValue::Text(s.clone()),
            toml::Value::Array(items) if items.iter().all(|i| i.is_str()) => ReportValue::Texts(
                items
                    .iter()
                    .filter_map(|i| i.as_str().map(String::from))
                    .collect(),
            ),
            toml::Value::Array(items) => ReportValue::Numbers(
                items
                    .iter()
                    .map(|i| number(i).ok_or_else(bad))
                    .collect::<Result<_, _>>()?,
            ),
            other => ReportValue::Number(number(other).ok_or_else(bad)?),
        };
        options.set(name, &v)?;
    }
    Ok(())
}

fn bad_set(pair: &str) -> CliError {
    CliError::from(trajweave_core::Error::InvalidOption {
        argument: "--set".into(),
        value: format!("{pair:?}"),
        allowed: "write NAME=VALUE, e.g. --set bootstrap_reps=100".into(),
    })
}

/// A progress line on stderr, redrawn by a ticker thread while a step has run for more than a
/// second: a moving bar, the step's name, its number and the time so far.
struct Progress {
    state: Option<Arc<Mutex<State>>>,
    ticker: Option<std::thread::JoinHandle<()>>,
}

struct State {
    step: String,
    count: usize,
    since: Instant,
    start: Instant,
    done: bool,
    drawn: bool,
}

impl Progress {
    fn start(on: bool) -> Progress {
        if !on {
            return Progress {
                state: None,
                ticker: None,
            };
        }
        let now = Instant::now();
        let state = Arc::new(Mutex::new(State {
            step: "starting".into(),
            count: 0,
            since: now,
            start: now,
            done: false,
            drawn: false,
        }));
        let shared = Arc::clone(&state);
        let ticker = std::thread::spawn(move || {
            let mut frame = 0usize;
            loop {
                std::thread::sleep(Duration::from_millis(120));
                let Ok(mut s) = shared.lock() else { return };
                if s.done {
                    return;
                }
                if s.since.elapsed() < Duration::from_secs(1) {
                    continue;
                }
                frame += 1;
                let width = 20;
                let at = frame % (2 * width - 2);
                let pos = if at < width { at } else { 2 * width - 2 - at };
                let bar: String = (0..width)
                    .map(|i| if i.abs_diff(pos) <= 1 { '#' } else { '-' })
                    .collect();
                eprint!(
                    "\r\x1b[2K[{bar}] step {}: {} ({:.1} s)",
                    s.count,
                    s.step,
                    s.start.elapsed().as_secs_f64()
                );
                s.drawn = true;
            }
        });
        Progress {
            state: Some(state),
            ticker: Some(ticker),
        }
    }

    fn step(&self, name: &str) {
        if let Some(state) = &self.state {
            if let Ok(mut s) = state.lock() {
                s.step = name.to_string();
                s.count += 1;
                s.since = Instant::now();
            }
        }
    }

    fn finish(mut self) {
        if let Some(state) = &self.state {
            if let Ok(mut s) = state.lock() {
                s.done = true;
                if s.drawn {
                    eprint!("\r\x1b[2K");
                }
            }
        }
        if let Some(t) = self.ticker.take() {
            let _ = t.join();
        }
    }
}
