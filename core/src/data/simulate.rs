//! A seeded generator of panels with a known structure: the invented kidney-registry scenario.
//!
//! For subject i with covariates age (years), female (0/1), diabetes (0/1) and baseline urine
//! albumin-to-creatinine ratio acr (mg/g), at visit time t (years since enrolment):
//!
//! y(t) = (b0 + a_age (age - 60) + a_female female + U_i)
//!      + (b1 + g_diab diabetes + g_acr ln(acr / 30) + V_i) t + W_i(t) + e
//!
//! with (U_i, V_i) bivariate normal (sd_intercept, sd_slope, corr_intercept_slope), W_i a
//! stationary Gaussian process with variance serial_sd^2 and correlation exp(-|u| / serial_range)
//! (drawn exactly at irregular times as an Ornstein-Uhlenbeck chain), and e ~ N(0, noise_sd^2)
//! measurement error. Visits start at 0; each gap is visit_interval (1 + visit_jitter (2U - 1))
//! for uniform U, until an available follow-up drawn uniformly in [min_years, max_years]; each
//! visit after the first is missed (not recorded, the process going on) with probability
//! missed_visit. After each recorded visit j >= 1 the subject leaves with probability
//! logistic(dropout_base + dropout_decline max(0, decline)), decline being the fall in y since
//! the previous visit in units per year: steep decline raises the hazard (the start of dialysis
//! in the scenario); a recorded value below dialysis_threshold ends follow-up outright. Covariates: age ~ N(62, 12^2) clipped to [18, 95], female ~ Bernoulli(0.45),
//! diabetes ~ Bernoulli(0.35), acr ~ exp(N(ln 30, 1.2^2)).
//!
//! Random numbers come from [`crate::numeric::rng`], one stream per subject keyed by (seed, subject), so
//! the same seed gives the same panel on every platform and front, and subject i is the same
//! whatever the number of subjects.

use serde::Serialize;

use crate::data::panel::{Covariate, Missing, Panel, SubjectIds};
use crate::error::{Error, Result};
use crate::numeric::rng::Rng;

/// Settings of [`simulate`]; defaults are the demo scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SimulateOptions {
    /// Number of subjects (patients).
    pub subjects: usize,
    /// Seed of the random streams.
    pub seed: u64,
    /// Shortest available follow-up, years.
    pub min_years: f64,
    /// Longest available follow-up, years.
    pub max_years: f64,
    /// Mean gap between visits, years.
    pub visit_interval: f64,
    /// Relative spread of gaps, in [0, 1).
    pub visit_jitter: f64,
    /// Probability that a visit after the first is missed, in [0, 1).
    pub missed_visit: f64,
    /// Mean response at enrolment for the reference patient (age 60, male, no diabetes).
    pub intercept: f64,
    /// Mean change per year for the reference patient (acr 30 mg/g).
    pub slope: f64,
    /// Change of the intercept per year of age over 60.
    pub age_effect: f64,
    /// Intercept difference for female patients.
    pub female_effect: f64,
    /// Slope difference with diabetes.
    pub diabetes_slope: f64,
    /// Slope change per unit of ln(acr / 30).
    pub acr_slope: f64,
    /// SD of the random intercept.
    pub sd_intercept: f64,
    /// SD of the random slope.
    pub sd_slope: f64,
    /// Correlation of random intercept and slope, in (-1, 1).
    pub corr_intercept_slope: f64,
    /// SD of the serial (within-subject) process.
    pub serial_sd: f64,
    /// Range of the exponential serial correlation, years (> 0).
    pub serial_range: f64,
    /// SD of the measurement error.
    pub noise_sd: f64,
    /// Log-odds of leaving after a visit with no decline.
    pub dropout_base: f64,
    /// Increase of that log-odds per unit per year of decline.
    pub dropout_decline: f64,
    /// A recorded value below this ends the subject's follow-up (dialysis starts).
    pub dialysis_threshold: f64,
}

impl Default for SimulateOptions {
    fn default() -> Self {
        SimulateOptions {
            subjects: 3000,
            seed: 2026,
            min_years: 0.0,
            max_years: 8.0,
            visit_interval: 0.5,
            visit_jitter: 0.6,
            missed_visit: 0.1,
            intercept: 58.0,
            slope: -1.2,
            age_effect: -0.3,
            female_effect: -2.0,
            diabetes_slope: -1.0,
            acr_slope: -0.6,
            sd_intercept: 10.0,
            sd_slope: 1.2,
            corr_intercept_slope: 0.2,
            serial_sd: 4.0,
            serial_range: 1.5,
            noise_sd: 3.0,
            dropout_base: -3.5,
            dropout_decline: 0.05,
            dialysis_threshold: 10.0,
        }
    }
}

/// Names accepted by [`SimulateOptions::set`], in the order of the struct's fields.
pub const SIMULATE_OPTION_NAMES: [&str; 22] = [
    "subjects",
    "seed",
    "min_years",
    "max_years",
    "visit_interval",
    "visit_jitter",
    "missed_visit",
    "intercept",
    "slope",
    "age_effect",
    "female_effect",
    "diabetes_slope",
    "acr_slope",
    "sd_intercept",
    "sd_slope",
    "corr_intercept_slope",
    "serial_sd",
    "serial_range",
    "noise_sd",
    "dropout_base",
    "dropout_decline",
    "dialysis_threshold",
];

/// Column names of a simulated panel, the same in every front.
pub const SIMULATED_COLUMNS: [&str; 7] = [
    "patient", "years", "egfr", "age", "female", "diabetes", "acr",
];

impl SimulateOptions {
    /// Sets one option by name, checking its range, so every front accepts the same names and
    /// gives the same errors.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::SimulateOptions;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = SimulateOptions::default();
    /// o.set("subjects", 50.0)?.set("noise_sd", 0.0)?;
    /// assert_eq!(o.subjects, 50);
    /// assert!(o.set("subjects", 0.5).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name or a value outside the option's range.
    pub fn set(&mut self, name: &str, value: f64) -> Result<&mut Self> {
        let finite = |allowed: &str| -> Result<f64> {
            if value.is_finite() {
                Ok(value)
            } else {
                Err(Error::option(name, value, allowed))
            }
        };
        let in_range = |ok: bool, allowed: &str| -> Result<f64> {
            if ok && value.is_finite() {
                Ok(value)
            } else {
                Err(Error::option(name, value, allowed))
            }
        };
        let whole = |max: f64, allowed: &str| -> Result<f64> {
            in_range(
                value.fract() == 0.0 && (0.0..=max).contains(&value),
                allowed,
            )
        };
        match name {
            "subjects" => {
                let v = whole(1e8, "a whole number from 1 to 100000000")?;
                if v < 1.0 {
                    return Err(Error::option(
                        name,
                        value,
                        "a whole number from 1 to 100000000",
                    ));
                }
                self.subjects = v as usize;
            }
            "seed" => {
                self.seed =
                    whole(9_007_199_254_740_991.0, "a whole number from 0 to 2^53 - 1")? as u64
            }
            "min_years" => self.min_years = in_range(value >= 0.0, "a number >= 0")?,
            "max_years" => self.max_years = in_range(value > 0.0, "a number > 0")?,
            "visit_interval" => self.visit_interval = in_range(value > 0.0, "a number > 0")?,
            "visit_jitter" => {
                self.visit_jitter = in_range((0.0..1.0).contains(&value), "a number in [0, 1)")?
            }
            "missed_visit" => {
                self.missed_visit = in_range((0.0..1.0).contains(&value), "a number in [0, 1)")?
            }
            "intercept" => self.intercept = finite("a finite number")?,
            "slope" => self.slope = finite("a finite number")?,
            "age_effect" => self.age_effect = finite("a finite number")?,
            "female_effect" => self.female_effect = finite("a finite number")?,
            "diabetes_slope" => self.diabetes_slope = finite("a finite number")?,
            "acr_slope" => self.acr_slope = finite("a finite number")?,
            "sd_intercept" => self.sd_intercept = in_range(value >= 0.0, "a number >= 0")?,
            "sd_slope" => self.sd_slope = in_range(value >= 0.0, "a number >= 0")?,
            "corr_intercept_slope" => {
                self.corr_intercept_slope =
                    in_range(value > -1.0 && value < 1.0, "a number in (-1, 1)")?
            }
            "serial_sd" => self.serial_sd = in_range(value >= 0.0, "a number >= 0")?,
            "serial_range" => self.serial_range = in_range(value > 0.0, "a number > 0")?,
            "noise_sd" => self.noise_sd = in_range(value >= 0.0, "a number >= 0")?,
            "dropout_base" => self.dropout_base = finite("a finite number")?,
            "dropout_decline" => self.dropout_decline = in_range(value >= 0.0, "a number >= 0")?,
            "dialysis_threshold" => self.dialysis_threshold = finite("a finite number")?,
            other => {
                return Err(Error::option(
                    "simulate option",
                    format!("{other:?}"),
                    &format!("use one of: {}", SIMULATE_OPTION_NAMES.join(", ")),
                ))
            }
        }
        Ok(self)
    }

    fn check(&self) -> Result<()> {
        if self.min_years > self.max_years {
            return Err(Error::option(
                "min_years",
                self.min_years,
                &format!("must not exceed max_years = {}", self.max_years),
            ));
        }
        Ok(())
    }
}

/// A simulated panel as columns, rows sorted by patient then time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SimulatedPanel {
    /// Patient ids 1..=subjects.
    pub patient: Vec<i64>,
    /// Years since enrolment.
    pub years: Vec<f64>,
    /// The response (eGFR, mL/min/1.73 m2).
    pub egfr: Vec<f64>,
    /// Age at enrolment, years (time-fixed).
    pub age: Vec<f64>,
    /// 1 for female, 0 for male (time-fixed).
    pub female: Vec<f64>,
    /// 1 with diabetes (time-fixed).
    pub diabetes: Vec<f64>,
    /// Baseline urine albumin-to-creatinine ratio, mg/g (time-fixed).
    pub acr: Vec<f64>,
}

impl SimulatedPanel {
    /// The covariate columns, named as in [`SIMULATED_COLUMNS`].
    pub fn covariates(&self) -> Vec<Covariate> {
        vec![
            Covariate::new("age", self.age.clone()),
            Covariate::new("female", self.female.clone()),
            Covariate::new("diabetes", self.diabetes.clone()),
            Covariate::new("acr", self.acr.clone()),
        ]
    }

    /// The data as a [`Panel`] with all four covariates.
    ///
    /// # Errors
    /// None in practice: simulated values are always finite.
    pub fn to_panel(&self) -> Result<Panel> {
        let ids = SubjectIds::Int(self.patient.iter().map(|&p| Some(p)).collect());
        Panel::new(
            ids,
            &self.years,
            &self.egfr,
            self.covariates(),
            Missing::Error,
        )
    }
}

/// Simulates a panel.
///
/// # Examples
/// ```
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let opts = SimulateOptions { subjects: 20, ..Default::default() };
/// let a = simulate(&opts)?;
/// assert_eq!(a, simulate(&opts)?); // same seed, same panel
/// assert_eq!(*a.patient.last().unwrap(), 20);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] when `min_years` exceeds `max_years` (each option's own range is
/// checked by [`SimulateOptions::set`]).
pub fn simulate(o: &SimulateOptions) -> Result<SimulatedPanel> {
    o.check()?;
    let mut out = SimulatedPanel {
        patient: vec![],
        years: vec![],
        egfr: vec![],
        age: vec![],
        female: vec![],
        diabetes: vec![],
        acr: vec![],
    };
    let root = (1.0 - o.corr_intercept_slope * o.corr_intercept_slope).sqrt();
    let mut times = Vec::new();
    let mut ys = Vec::new();
    for i in 0..o.subjects {
        let mut rng = Rng::new(o.seed, i as u64);
        let age = (62.0 + 12.0 * rng.normal()).clamp(18.0, 95.0);
        let female = f64::from(u8::from(rng.bernoulli(0.45)));
        let diabetes = f64::from(u8::from(rng.bernoulli(0.35)));
        let acr = libm::exp(libm::log(30.0) + 1.2 * rng.normal());
        let (z1, z2) = (rng.normal(), rng.normal());
        let u = o.sd_intercept * z1;
        let v = o.sd_slope * (o.corr_intercept_slope * z1 + root * z2);
        let a = o.intercept + o.age_effect * (age - 60.0) + o.female_effect * female + u;
        let b = o.slope + o.diabetes_slope * diabetes + o.acr_slope * libm::log(acr / 30.0) + v;
        let available = o.min_years + (o.max_years - o.min_years) * rng.uniform();

        times.clear();
        ys.clear();
        let mut t = 0.0;
        let mut w = o.serial_sd * rng.normal();
        loop {
            let y = a + b * t + w + o.noise_sd * rng.normal();
            let recorded = t == 0.0 || rng.uniform() >= o.missed_visit;
            if recorded {
                times.push(t);
                ys.push(y);
            }
            if recorded && y < o.dialysis_threshold {
                break;
            }
            let j = ys.len() - 1;
            if recorded && j >= 1 {
                let decline = (ys[j - 1] - ys[j]) / (times[j] - times[j - 1]);
                let eta = o.dropout_base + o.dropout_decline * decline.max(0.0);
                if rng.uniform() < 1.0 / (1.0 + libm::exp(-eta)) {
                    break;
                }
            }
            let gap = o.visit_interval * (1.0 + o.visit_jitter * (2.0 * rng.uniform() - 1.0));
            if t + gap > available {
                break;
            }
            t += gap;
            // Exact Ornstein-Uhlenbeck step: corr(W(t), W(t + gap)) = exp(-gap / range).
            let rho = libm::exp(-gap / o.serial_range);
            w = rho * w + o.serial_sd * (1.0 - rho * rho).sqrt() * rng.normal();
        }
        for (&t, &y) in times.iter().zip(&ys) {
            out.patient.push(i as i64 + 1);
            out.years.push(t);
            out.egfr.push(y);
            out.age.push(age);
            out.female.push(female);
            out.diabetes.push(diabetes);
            out.acr.push(acr);
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn subject_streams_do_not_depend_on_count() {
        let small = simulate(&SimulateOptions {
            subjects: 5,
            ..Default::default()
        })
        .unwrap();
        let big = simulate(&SimulateOptions {
            subjects: 50,
            ..Default::default()
        })
        .unwrap();
        let n = small.patient.len();
        assert_eq!(small.egfr, big.egfr[..n]);
        assert_eq!(big.patient[n], 6);
    }

    #[test]
    fn set_rejects_unknown_and_out_of_range() {
        let mut o = SimulateOptions::default();
        assert_eq!(o.set("noise", 1.0).unwrap_err().kind(), "invalid_option");
        assert!(o.set("visit_jitter", 1.0).is_err());
        assert!(o.set("serial_range", 0.0).is_err());
        assert!(o.set("seed", -1.0).is_err());
        o.set("min_years", 9.0).unwrap();
        assert!(simulate(&o).is_err());
    }
}
