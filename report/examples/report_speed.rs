//! Timing of `build_report` on simulated panels: the demo size (3000 subjects) and 1e5
//! subjects, with the time of each step (from the progress callback) and the page size.
//! Run: `cargo run --release -p trajweave-core --example report_speed [subjects ...]`.

use std::time::Instant;

use trajweave_core::{simulate, SimulateOptions};
use trajweave_report::{build_report, ReportColumns, ReportOptions};

fn main() -> trajweave_core::Result<()> {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let sizes = if sizes.is_empty() {
        vec![3000, 100_000]
    } else {
        sizes
    };
    let columns = ReportColumns {
        subject: "patient".into(),
        time: "years".into(),
        response: "egfr".into(),
        time_unit: Some("years".into()),
        response_unit: Some("mL/min/1.73 m2".into()),
        source: Some("simulated".into()),
    };
    let options = ReportOptions::default();
    for subjects in sizes {
        let data = simulate(&SimulateOptions {
            subjects,
            ..Default::default()
        })?;
        let panel = data.to_panel()?;
        let start = Instant::now();
        let mut last = (String::from("start"), start);
        let mut steps: Vec<(String, f64)> = Vec::new();
        let report = build_report(&panel, &columns, &options, &mut |step| {
            let now = Instant::now();
            steps.push((last.0.clone(), (now - last.1).as_secs_f64()));
            last = (step.to_string(), now);
        })?;
        let total = start.elapsed().as_secs_f64();
        steps.push((last.0.clone(), (Instant::now() - last.1).as_secs_f64()));
        let json = serde_json::to_string(&report.json).unwrap_or_default();
        println!(
            "{subjects} subjects, {} rows: {total:.2} s, HTML {:.2} MB, JSON {:.2} MB",
            panel.n_obs(),
            report.html.len() as f64 / 1e6,
            json.len() as f64 / 1e6
        );
        // REPORT_OUT=dir keeps the pages for a look.
        if let Ok(dir) = std::env::var("REPORT_OUT") {
            let path = format!("{dir}/report_{subjects}.html");
            if let Err(e) = std::fs::write(&path, &report.html) {
                eprintln!("could not write {path}: {e}");
            }
        }
        for (name, secs) in steps.iter().skip(1) {
            println!("  {name:<34} {secs:>7.3} s");
        }
    }
    Ok(())
}
