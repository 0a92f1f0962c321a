//! The simulator produces the structure its documentation states, checked against closed-form
//! values with all other components switched off. Tolerances are 5 standard errors of the
//! estimate at the stated size and seed (common practice, no published source).

use trajweave_core::{simulate, SimulateOptions, SimulatedPanel};

/// Every random component and covariate effect off, no dropout, no missed visits.
fn quiet() -> SimulateOptions {
    let mut o = SimulateOptions {
        subjects: 4000,
        seed: 11,
        ..Default::default()
    };
    for name in [
        "age_effect",
        "female_effect",
        "diabetes_slope",
        "acr_slope",
        "sd_intercept",
        "sd_slope",
        "serial_sd",
        "noise_sd",
        "dropout_decline",
        "missed_visit",
    ] {
        o.set(name, 0.0).unwrap();
    }
    o.set("dropout_base", -60.0).unwrap();
    o.set("dialysis_threshold", -1e9).unwrap();
    o
}

fn runs(d: &SimulatedPanel) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let mut start = 0;
    for i in 1..=d.patient.len() {
        if i == d.patient.len() || d.patient[i] != d.patient[start] {
            out.push(start..i);
            start = i;
        }
    }
    out
}

#[test]
fn fixed_part_is_exact_when_everything_else_is_off() {
    let o = quiet();
    let d = simulate(&o).unwrap();
    for (t, y) in d.years.iter().zip(&d.egfr) {
        assert!((y - (o.intercept + o.slope * t)).abs() < 1e-9);
    }
    // Gaps stay inside visit_interval * (1 +- visit_jitter).
    for r in runs(&d) {
        for w in d.years[r].windows(2) {
            let g = w[1] - w[0];
            assert!(g >= o.visit_interval * (1.0 - o.visit_jitter) - 1e-12);
            assert!(g <= o.visit_interval * (1.0 + o.visit_jitter) + 1e-12);
        }
    }
}

#[test]
fn measurement_error_variance() {
    let mut o = quiet();
    o.set("noise_sd", 2.0).unwrap();
    let d = simulate(&o).unwrap();
    let r: Vec<f64> = d
        .years
        .iter()
        .zip(&d.egfr)
        .map(|(t, y)| y - o.intercept - o.slope * t)
        .collect();
    let n = r.len() as f64;
    let var = r.iter().map(|e| e * e).sum::<f64>() / n;
    // Closed form: E[e^2] = 4, SE = 4 sqrt(2 / n).
    assert!(
        (var - 4.0).abs() < 5.0 * 4.0 * (2.0 / n).sqrt(),
        "var {var}"
    );
}

#[test]
fn serial_correlation_is_exponential_in_the_gap() {
    let mut o = quiet();
    o.set("serial_sd", 3.0)
        .unwrap()
        .set("visit_jitter", 0.0)
        .unwrap();
    o.set("min_years", 4.0)
        .unwrap()
        .set("max_years", 4.0)
        .unwrap();
    let d = simulate(&o).unwrap();
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    let mut pairs = 0.0_f64;
    for r in runs(&d) {
        let w: Vec<f64> = r
            .clone()
            .map(|i| d.egfr[i] - o.intercept - o.slope * d.years[i])
            .collect();
        for k in 1..w.len() {
            sxy += w[k - 1] * w[k];
            sxx += w[k - 1] * w[k - 1];
            syy += w[k] * w[k];
            pairs += 1.0;
        }
    }
    let rho = sxy / (sxx * syy).sqrt();
    let expected = (-o.visit_interval / o.serial_range).exp();
    // Large-sample SE of a correlation, (1 - rho^2) / sqrt(n), inflated 3x for the overlap of
    // consecutive pairs within a subject.
    let se = 3.0 * (1.0 - expected * expected) / pairs.sqrt();
    assert!((rho - expected).abs() < 5.0 * se, "rho {rho} vs {expected}");
    assert!((sxx / pairs - 9.0).abs() < 0.5, "variance {}", sxx / pairs);
}

#[test]
fn random_slope_spread() {
    let mut o = quiet();
    o.set("sd_slope", 1.5).unwrap();
    o.set("min_years", 3.0).unwrap();
    let d = simulate(&o).unwrap();
    let slopes: Vec<f64> = runs(&d)
        .into_iter()
        .filter(|r| r.len() >= 2)
        .map(|r| {
            let (t, y) = (&d.years[r.clone()], &d.egfr[r]);
            let n = t.len() as f64;
            let (mt, my) = (t.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
            let sxy: f64 = t.iter().zip(y).map(|(a, b)| (a - mt) * (b - my)).sum();
            let sxx: f64 = t.iter().map(|a| (a - mt) * (a - mt)).sum();
            sxy / sxx
        })
        .collect();
    let n = slopes.len() as f64;
    let mean = slopes.iter().sum::<f64>() / n;
    let sd = (slopes.iter().map(|s| (s - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    // Without noise each subject's least-squares slope is its true slope exactly.
    assert!((mean - o.slope).abs() < 5.0 * 1.5 / n.sqrt());
    assert!((sd - 1.5).abs() < 5.0 * 1.5 / (2.0 * n).sqrt(), "sd {sd}");
}

#[test]
fn steep_decline_brings_dropout() {
    let mut o = quiet();
    o.set("sd_slope", 3.0)
        .unwrap()
        .set("dropout_base", -3.0)
        .unwrap();
    o.set("min_years", 8.0).unwrap();
    let no_effect = simulate(&o).unwrap();
    o.set("dropout_decline", 0.5).unwrap();
    let with_effect = simulate(&o).unwrap();
    // Same random streams; only the decline term differs, so rows can only fall.
    assert!(with_effect.patient.len() < no_effect.patient.len() * 9 / 10);
}
