//! Wall time of covariance screening (all nine candidates) on a simulated panel.
//!
//! ```text
//! cargo run --release -p trajweave-core --example screen_speed [subjects]
//! ```
//! Visits yearly at 0..9 (jitter 2 %, 10 % missed), random intercept + exponential serial
//! process + error, no covariate effects, no random slope, no dropout; residuals = y minus
//! the known mean (intercept + slope t). Toeplitz and unstructured use a schedule grid 0..9
//! with tolerance 0.3.

use std::time::Instant;

use trajweave_core::correlation::screen::{screen_structures, ScreenOptions};
use trajweave_core::{simulate, SimulateOptions, TimeGrid};

fn main() -> trajweave_core::Result<()> {
    let subjects = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(100_000);
    let o = SimulateOptions {
        subjects,
        seed: 11,
        min_years: 9.5,
        max_years: 9.5,
        visit_interval: 1.0,
        visit_jitter: 0.02,
        missed_visit: 0.1,
        age_effect: 0.0,
        female_effect: 0.0,
        diabetes_slope: 0.0,
        acr_slope: 0.0,
        sd_slope: 0.0,
        dropout_base: -1e3,
        dropout_decline: 0.0,
        dialysis_threshold: -1e9,
        ..Default::default()
    };
    let data = simulate(&o)?;
    let panel = data.to_panel()?;
    let mean = |t: f64| o.intercept + o.slope * t;
    let resid: Vec<f64> = panel
        .time()
        .iter()
        .zip(panel.response())
        .map(|(&t, &y)| y - mean(t))
        .collect();
    let options = ScreenOptions {
        grid: Some(TimeGrid::schedule((0..10).map(f64::from).collect(), 0.3)?),
        ..Default::default()
    };
    println!(
        "{} subjects, {} observations, {} threads",
        panel.n_subjects(),
        panel.n_obs(),
        rayon::current_num_threads()
    );
    let start = Instant::now();
    let s = screen_structures(&panel, &resid, &options)?;
    let total = start.elapsed().as_secs_f64();
    for f in &s.fits {
        println!(
            "{:<28} l = {:>16.4}  dAIC = {:>12.2}  iter = {:>4}  conv = {}  {:?}",
            f.structure, f.loglik, f.delta_aic, f.iterations, f.converged, f.parameters
        );
    }
    for k in &s.skipped {
        println!("skipped {}: {}", k.structure, k.reason);
    }
    // Each candidate alone, for the per-structure cost.
    for c in &options.candidates {
        let one = ScreenOptions {
            candidates: vec![*c],
            ..options.clone()
        };
        let t = Instant::now();
        screen_structures(&panel, &resid, &one)?;
        println!("  {:<28} {:.2} s", c.name(), t.elapsed().as_secs_f64());
    }
    println!("all candidates: {total:.2} s");
    Ok(())
}
