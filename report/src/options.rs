//! The report's settings, with defaults and one `set(name, value)` that every front calls, so
//! the CLI, Python and R accept the same names and give the same errors.

use serde::Serialize;

use trajweave_core::correlation::binned::CorrelationOptions;
use trajweave_core::correlation::variogram::fit::{Estimate, VariogramModel};
use trajweave_core::correlation::variogram::{LagBins, VariogramOptions, MAX_LAG_BINS};
use trajweave_core::error::{Error, Result};
use trajweave_core::individuals::ranking::Summary;
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::mean_curve::BootstrapOptions;
use trajweave_core::trend::smoother::{Smoother, FAMILIES};

/// A value as a front passes it. Lists may also come as text, comma-separated
/// (`"0.1,0.5,0.9"`, `"lowess,spline"`), as a command line gives them.
#[derive(Debug, Clone, PartialEq)]
pub enum ReportValue {
    /// A number.
    Number(f64),
    /// A word or a comma-separated list.
    Text(String),
    /// Several numbers.
    Numbers(Vec<f64>),
    /// Several words.
    Texts(Vec<String>),
}

impl std::fmt::Display for ReportValue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ReportValue::Number(x) => write!(f, "{x}"),
            ReportValue::Text(s) => write!(f, "{s:?}"),
            ReportValue::Numbers(v) => write!(f, "{v:?}"),
            ReportValue::Texts(v) => write!(f, "{v:?}"),
        }
    }
}

/// The option names [`ReportOptions::set`] accepts, besides `<family>.<option>` (for example
/// `lowess.span`, `kernel.bandwidth`, `spline.df`, `super.span`), which sets that smoother's
/// option wherever the family is used.
pub const REPORT_OPTION_NAMES: [&str; 31] = [
    "title",
    "smoother",
    "smoothers",
    "bootstrap_reps",
    "bootstrap_level",
    "bootstrap_seed",
    "summary",
    "summary_p",
    "quantiles",
    "sample_size",
    "sample_seed",
    "bands",
    "overlap",
    "grid_edges",
    "density_threshold",
    "heatmap_rows",
    "group_levels",
    "unusual_threshold",
    "correlation_min_count",
    "correlation_level",
    "variogram_model",
    "variogram_estimate",
    "lag_bins",
    "lag_kind",
    "max_lag",
    "min_pairs",
    "screen_subjects",
    "screen_seed",
    "tune_subjects",
    "tune_seed",
    "min_at_risk",
];

/// Settings of a report. Build with `Default` and change by name with [`ReportOptions::set`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportOptions {
    /// Title of the page (default "Trajectory report").
    pub title: String,
    /// The smoother family of the mean curve, its band, the residuals, covariate and group
    /// curves (default "kernel": a local-linear Gaussian kernel, cheap enough for 200
    /// bootstrap refits of a million rows).
    pub smoother: String,
    /// Families drawn side by side in the mean-trend figure (default all four).
    pub smoothers: Vec<String>,
    /// Every family with its settings (changed by `<family>.<option>`).
    pub families: Vec<Smoother>,
    /// Replicates of the subject bootstrap band; 0 draws no band (default 200).
    pub bootstrap_reps: usize,
    /// Coverage of the band (default 0.95).
    pub bootstrap_level: f64,
    /// Seed of the bootstrap (default 1).
    pub bootstrap_seed: u64,
    /// Residual summary subjects are ranked by (default "median").
    pub summary: String,
    /// Probability of the "quantile" summary.
    pub summary_p: Option<f64>,
    /// Quantiles of the ranking whose subjects are drawn (default 0.05, 0.25, 0.5, 0.75, 0.95).
    pub quantiles: Vec<f64>,
    /// Subjects in the spread sample of trajectories (default 12).
    pub sample_size: usize,
    /// Seed of the sample (default 1).
    pub sample_seed: u64,
    /// Equal-count intervals per continuous covariate (default 4).
    pub bands: usize,
    /// Overlap of those intervals (default 0.5).
    pub overlap: f64,
    /// Time-bin edges of the heat map and the dropout cohorts; `None` chooses nice edges
    /// about one tenth of the time range apart.
    pub grid_edges: Option<Vec<f64>>,
    /// Above this many points a cloud is drawn as a binned density (default 20000).
    pub density_threshold: usize,
    /// Most rows of the trajectory heat map; more subjects are pooled (default 300).
    pub heatmap_rows: usize,
    /// A covariate with at most this many distinct values is a grouping (group curves);
    /// one with more is banded (default 6).
    pub group_levels: usize,
    /// Robust z beyond which a subject counts as unusual (default 3.5).
    pub unusual_threshold: f64,
    /// Fewest subjects behind a shown cell of the binned residual correlation (default 3,
    /// as [`CorrelationOptions`]).
    pub correlation_min_count: usize,
    /// Coverage of the Fisher intervals of the binned correlation (default 0.95).
    pub correlation_level: f64,
    /// Variogram model fitted: "exponential" (default) or "gaussian".
    pub variogram_model: String,
    /// Bin estimates the model is fitted to: "classical" (default) or "robust".
    pub variogram_estimate: String,
    /// Lag bins of the variogram (default 20).
    pub lag_bins: usize,
    /// How lag bins are formed: "equal_width" (default) or "equal_count".
    pub lag_kind: String,
    /// Largest lag of the variogram; `None` takes the longest follow-up of any subject.
    pub max_lag: Option<f64>,
    /// Fewest pairs behind a variogram bin's estimate (default 30).
    pub min_pairs: usize,
    /// Subjects in the seeded subsample the covariance screening is fitted to (default 20000;
    /// all subjects when there are no more).
    pub screen_subjects: usize,
    /// Seed of that subsample (default 1).
    pub screen_seed: u64,
    /// The main smoother's smoothing is chosen by leave-one-subject-out cross-validation up
    /// to this many subjects, and by 10-fold cross-validation over subjects above it
    /// (default 500).
    pub tune_subjects: usize,
    /// Seed of the folds of that cross-validation (default 1).
    pub tune_seed: u64,
    /// Curves are drawn solid only where at least this many subjects are in follow-up, dashed
    /// elsewhere (default 20; common practice, no single source).
    pub min_at_risk: usize,
    /// Smoother options set by hand (`<family>.<option>`): a main parameter given is used as
    /// given, not chosen by cross-validation.
    #[serde(skip)]
    pub given: Vec<String>,
}

impl Default for ReportOptions {
    fn default() -> Self {
        let all = ["lowess", "kernel", "spline", "super"];
        ReportOptions {
            title: "Trajectory report".into(),
            smoother: "kernel".into(),
            smoothers: all.iter().map(|s| s.to_string()).collect(),
            families: all.iter().filter_map(|f| Smoother::new(f).ok()).collect(),
            bootstrap_reps: 200,
            bootstrap_level: 0.95,
            bootstrap_seed: 1,
            summary: "median".into(),
            summary_p: None,
            quantiles: vec![0.05, 0.25, 0.5, 0.75, 0.95],
            sample_size: 12,
            sample_seed: 1,
            bands: 4,
            overlap: 0.5,
            grid_edges: None,
            density_threshold: 20_000,
            heatmap_rows: 300,
            group_levels: 6,
            unusual_threshold: 3.5,
            correlation_min_count: CorrelationOptions::default().min_count,
            correlation_level: CorrelationOptions::default().level,
            variogram_model: "exponential".into(),
            variogram_estimate: "classical".into(),
            lag_bins: 20,
            lag_kind: "equal_width".into(),
            max_lag: None,
            min_pairs: VariogramOptions::default().min_pairs,
            screen_subjects: 20_000,
            screen_seed: 1,
            tune_subjects: 500,
            tune_seed: 1,
            min_at_risk: 20,
            given: Vec::new(),
        }
    }
}

fn number(name: &str, v: &ReportValue, allowed: &str) -> Result<f64> {
    match v {
        ReportValue::Number(x) if x.is_finite() => Ok(*x),
        ReportValue::Text(t) => t
            .trim()
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .ok_or_else(|| Error::option(name, v, allowed)),
        other => Err(Error::option(name, other, allowed)),
    }
}

fn whole(name: &str, v: &ReportValue, lo: f64, hi: f64, allowed: &str) -> Result<u64> {
    let x = number(name, v, allowed)?;
    if x.fract() == 0.0 && (lo..=hi).contains(&x) {
        Ok(x as u64)
    } else {
        Err(Error::option(name, v, allowed))
    }
}

fn numbers(name: &str, v: &ReportValue, allowed: &str) -> Result<Vec<f64>> {
    let list = match v {
        ReportValue::Number(x) => vec![*x],
        ReportValue::Numbers(xs) => xs.clone(),
        ReportValue::Text(t) => t
            .split(',')
            .map(|p| p.trim().parse::<f64>())
            .collect::<std::result::Result<Vec<f64>, _>>()
            .map_err(|_| Error::option(name, v, allowed))?,
        ReportValue::Texts(_) => return Err(Error::option(name, v, allowed)),
    };
    if list.is_empty() || list.iter().any(|x| !x.is_finite()) {
        return Err(Error::option(name, v, allowed));
    }
    Ok(list)
}

fn words(name: &str, v: &ReportValue, allowed: &str) -> Result<Vec<String>> {
    let list: Vec<String> = match v {
        ReportValue::Text(t) => t.split(',').map(|p| p.trim().to_string()).collect(),
        ReportValue::Texts(ts) => ts.iter().map(|p| p.trim().to_string()).collect(),
        other => return Err(Error::option(name, other, allowed)),
    };
    if list.is_empty() || list.iter().any(String::is_empty) {
        return Err(Error::option(name, v, allowed));
    }
    Ok(list)
}

fn family(name: &str, v: &str) -> Result<String> {
    Smoother::new(v)
        .map(|s| s.family().to_string())
        .map_err(|_| Error::option(name, format!("{v:?}"), &format!("use {FAMILIES}")))
}

impl ReportOptions {
    /// Sets one option by name.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::{ReportOptions, ReportValue};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = ReportOptions::default();
    /// o.set("quantiles", &ReportValue::Text("0.1, 0.9".into()))?;
    /// o.set("lowess.span", &ReportValue::Number(0.3))?;
    /// assert_eq!(o.quantiles, vec![0.1, 0.9]);
    /// let e = o.set("bands", &ReportValue::Number(0.0)).unwrap_err();
    /// assert_eq!(e.kind(), "invalid_option");
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option for an unknown name, a value of the wrong
    /// type or out of range (the message says what is allowed).
    pub fn set(&mut self, name: &str, value: &ReportValue) -> Result<()> {
        let v = value;
        match name {
            "title" => match v {
                ReportValue::Text(t) if !t.trim().is_empty() => self.title = t.clone(),
                other => return Err(Error::option(name, other, "a non-blank text")),
            },
            "smoother" => {
                let w = words(name, v, &format!("one of {FAMILIES}"))?;
                match w.as_slice() {
                    [one] => self.smoother = family(name, one)?,
                    _ => return Err(Error::option(name, v, &format!("one of {FAMILIES}"))),
                }
            }
            "smoothers" => {
                let allowed = format!("one or more of {FAMILIES}");
                let mut list = Vec::new();
                for w in words(name, v, &allowed)? {
                    let f = family(name, &w)?;
                    if !list.contains(&f) {
                        list.push(f);
                    }
                }
                self.smoothers = list;
            }
            "bootstrap_reps" => {
                let allowed = "0 (no band) or a whole number from 10 to 100000";
                let r = whole(name, v, 0.0, 100_000.0, allowed)?;
                if (1..10).contains(&r) {
                    return Err(Error::option(name, v, allowed));
                }
                self.bootstrap_reps = r as usize;
            }
            "bootstrap_level" => {
                let x = number(name, v, "a number in (0, 1), e.g. 0.95")?;
                if !(x > 0.0 && x < 1.0) {
                    return Err(Error::option(name, v, "a number in (0, 1), e.g. 0.95"));
                }
                self.bootstrap_level = x;
            }
            "bootstrap_seed" | "sample_seed" | "screen_seed" | "tune_seed" => {
                let s = whole(
                    name,
                    v,
                    0.0,
                    9_007_199_254_740_991.0,
                    "a whole number from 0 to 2^53 - 1",
                )?;
                match name {
                    "bootstrap_seed" => self.bootstrap_seed = s,
                    "sample_seed" => self.sample_seed = s,
                    "tune_seed" => self.tune_seed = s,
                    _ => self.screen_seed = s,
                }
            }
            "summary" => {
                let w = words(name, v, trajweave_core::individuals::ranking::SUMMARIES)?;
                let [one] = w.as_slice() else {
                    return Err(Error::option(
                        name,
                        v,
                        trajweave_core::individuals::ranking::SUMMARIES,
                    ));
                };
                // Checked without p here; the pair is checked by `ranking_summary`.
                Summary::parse(one, Some(0.5)).or_else(|_| Summary::parse(one, None))?;
                self.summary = one.clone();
            }
            "summary_p" => {
                let p = number(name, v, "a probability in [0, 1]")?;
                if !(0.0..=1.0).contains(&p) {
                    return Err(Error::option(name, v, "a probability in [0, 1]"));
                }
                self.summary_p = Some(p);
            }
            "quantiles" => {
                let q = numbers(name, v, "one or more probabilities in [0, 1]")?;
                if q.iter().any(|p| !(0.0..=1.0).contains(p)) {
                    return Err(Error::option(
                        name,
                        v,
                        "one or more probabilities in [0, 1]",
                    ));
                }
                self.quantiles = q;
            }
            "sample_size" => {
                self.sample_size =
                    whole(name, v, 1.0, 1000.0, "a whole number from 1 to 1000")? as usize;
            }
            "bands" => {
                self.bands = whole(name, v, 1.0, 20.0, "a whole number from 1 to 20")? as usize;
            }
            "overlap" => {
                let x = number(name, v, "a fraction in [0, 1), e.g. 0.5")?;
                if !(0.0..1.0).contains(&x) {
                    return Err(Error::option(name, v, "a fraction in [0, 1), e.g. 0.5"));
                }
                self.overlap = x;
            }
            "grid_edges" => {
                let allowed = "two or more strictly increasing times";
                let e = numbers(name, v, allowed)?;
                if e.len() < 2 || e.windows(2).any(|w| w[1] <= w[0]) {
                    return Err(Error::option(name, v, allowed));
                }
                self.grid_edges = Some(e);
            }
            "density_threshold" => {
                self.density_threshold = whole(
                    name,
                    v,
                    0.0,
                    10_000_000.0,
                    "a whole number of points from 0 to 10000000",
                )? as usize;
            }
            "heatmap_rows" => {
                self.heatmap_rows =
                    whole(name, v, 10.0, 2000.0, "a whole number from 10 to 2000")? as usize;
            }
            "group_levels" => {
                self.group_levels =
                    whole(name, v, 2.0, 50.0, "a whole number from 2 to 50")? as usize;
            }
            "unusual_threshold" => {
                let x = number(name, v, "a number > 0, e.g. 3.5")?;
                if x <= 0.0 {
                    return Err(Error::option(name, v, "a number > 0, e.g. 3.5"));
                }
                self.unusual_threshold = x;
            }
            other => return self.set_structure_option(other, v),
        }
        Ok(())
    }

    /// The options of the correlation-structure sections (names in
    /// [`REPORT_OPTION_NAMES`] after `unusual_threshold`); others go to the smoothers.
    fn set_structure_option(&mut self, name: &str, v: &ReportValue) -> Result<()> {
        let word = |allowed: &str| -> Result<String> {
            match words(name, v, allowed)?.as_slice() {
                [one] => Ok(one.clone()),
                _ => Err(Error::option(name, v, allowed)),
            }
        };
        match name {
            "correlation_min_count" => {
                let allowed = "a whole number of subjects from 2 to 1000000000";
                self.correlation_min_count = whole(name, v, 2.0, 1e9, allowed)? as usize;
            }
            "correlation_level" => {
                let x = number(name, v, "a number in (0, 1), e.g. 0.95")?;
                if !(x > 0.0 && x < 1.0) {
                    return Err(Error::option(name, v, "a number in (0, 1), e.g. 0.95"));
                }
                self.correlation_level = x;
            }
            "variogram_model" => {
                let allowed = "\"exponential\" or \"gaussian\"";
                let w = word(allowed)?;
                VariogramModel::parse(&w).map_err(|_| Error::option(name, v, allowed))?;
                self.variogram_model = w;
            }
            "variogram_estimate" => {
                let allowed = "\"classical\" or \"robust\"";
                let w = word(allowed)?;
                Estimate::parse(&w).map_err(|_| Error::option(name, v, allowed))?;
                self.variogram_estimate = w;
            }
            "lag_bins" => {
                let allowed = format!("a whole number of bins from 1 to {MAX_LAG_BINS}");
                self.lag_bins = whole(name, v, 1.0, MAX_LAG_BINS as f64, &allowed)? as usize;
            }
            "lag_kind" => {
                let allowed = "\"equal_width\" or \"equal_count\"";
                let w = word(allowed)?;
                if w != "equal_width" && w != "equal_count" {
                    return Err(Error::option(name, v, allowed));
                }
                self.lag_kind = w;
            }
            "max_lag" => {
                let x = number(name, v, "a time span > 0")?;
                if x <= 0.0 {
                    return Err(Error::option(name, v, "a time span > 0"));
                }
                self.max_lag = Some(x);
            }
            "min_pairs" => {
                let allowed = "a whole number of pairs from 1 to 1000000000";
                self.min_pairs = whole(name, v, 1.0, 1e9, allowed)? as usize;
            }
            "screen_subjects" => {
                let allowed = "a whole number of subjects from 10 to 100000000";
                self.screen_subjects = whole(name, v, 10.0, 1e8, allowed)? as usize;
            }
            "tune_subjects" => {
                let allowed = "a whole number of subjects from 2 to 100000000";
                self.tune_subjects = whole(name, v, 2.0, 1e8, allowed)? as usize;
            }
            "min_at_risk" => {
                let allowed = "a whole number of subjects from 1 to 1000000000";
                self.min_at_risk = whole(name, v, 1.0, 1e9, allowed)? as usize;
            }
            other => return self.set_family_option(other, v),
        }
        Ok(())
    }

    /// Settings of the binned residual correlation.
    pub fn correlation(&self) -> CorrelationOptions {
        CorrelationOptions {
            level: self.correlation_level,
            min_count: self.correlation_min_count,
        }
    }

    /// Settings of the empirical variogram (no pair sample, no smoothed variogram).
    ///
    /// # Errors
    /// Those of [`LagBins::from_options`] (a `lag_kind` or `lag_bins` set by hand out of range).
    pub fn variogram(&self) -> Result<VariogramOptions> {
        Ok(VariogramOptions {
            bins: LagBins::from_options(Some(&self.lag_kind), Some(self.lag_bins as f64), None)?,
            max_lag: self.max_lag,
            min_pairs: self.min_pairs,
            ..VariogramOptions::default()
        })
    }

    /// The variogram model and the estimate it is fitted to.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `variogram_model` or `variogram_estimate` for a name
    /// set by hand that is not known.
    pub fn variogram_fit(&self) -> Result<(VariogramModel, Estimate)> {
        let model = VariogramModel::parse(&self.variogram_model).map_err(|_| {
            Error::option(
                "variogram_model",
                format!("{:?}", self.variogram_model),
                "\"exponential\" or \"gaussian\"",
            )
        })?;
        let estimate = Estimate::parse(&self.variogram_estimate).map_err(|_| {
            Error::option(
                "variogram_estimate",
                format!("{:?}", self.variogram_estimate),
                "\"classical\" or \"robust\"",
            )
        })?;
        Ok((model, estimate))
    }

    fn set_family_option(&mut self, name: &str, v: &ReportValue) -> Result<()> {
        let unknown = || {
            Error::option(
                "option",
                format!("{name:?}"),
                &format!(
                    "use one of {} or <family>.<option> such as \"lowess.span\"",
                    REPORT_OPTION_NAMES.join(", ")
                ),
            )
        };
        let (fam, opt) = name.split_once('.').ok_or_else(unknown)?;
        let value = match v {
            ReportValue::Number(x) => OptionValue::Number(*x),
            ReportValue::Text(t) => match t.trim().parse::<f64>() {
                Ok(x) => OptionValue::Number(x),
                Err(_) => OptionValue::Text(t.clone()),
            },
            other => return Err(Error::option(name, other, "a number or a word")),
        };
        let s = self
            .families
            .iter_mut()
            .find(|s| s.family() == fam)
            .ok_or_else(unknown)?;
        s.set(opt, &value)?;
        if !self.given.iter().any(|g| g == name) {
            self.given.push(name.to_string());
        }
        Ok(())
    }

    /// True when `<family>.<option>` was set by hand.
    pub fn is_given(&self, family: &str, option: &str) -> bool {
        self.given
            .iter()
            .any(|g| g == &format!("{family}.{option}"))
    }

    /// The smoother of `family` with the settings given.
    pub fn family(&self, family: &str) -> Option<&Smoother> {
        self.families.iter().find(|s| s.family() == family)
    }

    /// The main smoother ([`ReportOptions::smoother`]) with its settings.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when the family is unknown.
    pub fn main_smoother(&self) -> Result<&Smoother> {
        self.family(&self.smoother).ok_or_else(|| {
            Error::option(
                "smoother",
                format!("{:?}", self.smoother),
                &format!("use {FAMILIES}"),
            )
        })
    }

    /// The bootstrap settings, `None` when no band is asked for.
    ///
    /// # Errors
    /// Those of [`BootstrapOptions::validate`].
    pub fn bootstrap(&self) -> Result<Option<BootstrapOptions>> {
        if self.bootstrap_reps == 0 {
            return Ok(None);
        }
        let b = BootstrapOptions {
            reps: self.bootstrap_reps,
            level: self.bootstrap_level,
            seed: self.bootstrap_seed,
        };
        b.validate()?;
        Ok(Some(b))
    }

    /// The ranking summary from `summary` and `summary_p`.
    ///
    /// # Errors
    /// Those of [`Summary::parse`] (a "quantile" without `summary_p`, or a p with another
    /// summary).
    pub fn ranking_summary(&self) -> Result<Summary> {
        Summary::parse(&self.summary, self.summary_p).map_err(|e| match e {
            Error::InvalidOption { value, allowed, .. } => Error::InvalidOption {
                argument: "summary_p".into(),
                value,
                allowed,
            },
            other => other,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_values_and_errors() {
        let mut o = ReportOptions::default();
        o.set(
            "smoothers",
            &ReportValue::Text("spline, lowess, spline".into()),
        )
        .unwrap();
        assert_eq!(o.smoothers, vec!["spline", "lowess"]);
        o.set("kernel.bandwidth", &ReportValue::Text("0.4".into()))
            .unwrap();
        assert_eq!(
            serde_json::to_value(o.family("kernel").unwrap()).unwrap()["options"]["bandwidth"],
            0.4
        );
        o.set("super.span", &ReportValue::Text("cv".into()))
            .unwrap();
        o.set("bootstrap_reps", &ReportValue::Number(0.0)).unwrap();
        assert_eq!(o.bootstrap().unwrap(), None);
        let err = |name: &str, v: ReportValue| {
            let mut o = ReportOptions::default();
            let e = o.set(name, &v).unwrap_err();
            (e.kind(), e.argument().map(String::from))
        };
        let bad = |name: &str| ("invalid_option", Some(name.to_string()));
        assert_eq!(
            err("bootstrap_reps", ReportValue::Number(5.0)),
            bad("bootstrap_reps")
        );
        assert_eq!(
            err("quantiles", ReportValue::Text("0.1,x".into())),
            bad("quantiles")
        );
        assert_eq!(
            err("quantiles", ReportValue::Numbers(vec![1.5])),
            bad("quantiles")
        );
        assert_eq!(
            err("smoother", ReportValue::Text("loess".into())),
            bad("smoother")
        );
        assert_eq!(
            err("grid_edges", ReportValue::Text("0,2,1".into())),
            bad("grid_edges")
        );
        assert_eq!(err("lowess.span", ReportValue::Number(2.0)), bad("span"));
        assert_eq!(err("colour", ReportValue::Number(1.0)), bad("option"));
        assert_eq!(err("spline2.df", ReportValue::Number(4.0)), bad("option"));
        assert_eq!(
            err("sample_size", ReportValue::Number(2.5)),
            bad("sample_size")
        );
        let mut q = ReportOptions::default();
        q.set("summary", &ReportValue::Text("quantile".into()))
            .unwrap();
        assert_eq!(
            q.ranking_summary().unwrap_err().argument(),
            Some("summary_p")
        );
        q.set("summary_p", &ReportValue::Number(0.9)).unwrap();
        assert_eq!(q.ranking_summary().unwrap(), Summary::Quantile(0.9));
    }
}
