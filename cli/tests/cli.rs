//! The command line end to end: describe and simulate, and every bad-input case of
//! tests/fixtures/bad_input.json that a CSV file can express, with the line and column named.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

fn trajweave(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_trajweave"))
        .args(args)
        .output()
        .expect("the binary runs")
}

fn temp_csv(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("trajweave-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

/// `trajweave VERB FILE --subject id --time t --response y EXTRA...`, the columns every test file uses.
fn on_file(verb: &str, path: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        verb,
        path.to_str().unwrap(),
        "--subject",
        "id",
        "--time",
        "t",
        "--response",
        "y",
    ];
    args.extend_from_slice(extra);
    trajweave(&args)
}

/// The line every front prints for a fixture case: `error [kind]: message`.
fn expected_error(case: &Value) -> String {
    format!(
        "error [{}]: {}",
        case["kind"].as_str().unwrap(),
        case["message"].as_str().unwrap()
    )
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).trim_end().to_string()
}

fn describe_json(path: &Path, extra: &[&str]) -> Value {
    let mut args = vec!["--format", "json"];
    args.extend_from_slice(extra);
    let o = on_file("describe", path, &args);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_slice(&o.stdout).unwrap()
}

#[test]
fn describe_table_and_json() {
    let path = temp_csv(
        "small.csv",
        "id,t,y,age\n2,1,5,40\n1,0,7,50\n2,0,6,40\n2,0,6.5,40\n",
    );
    let d = describe_json(
        &path,
        &[
            "--covariate",
            "age",
            "--schedule",
            "0,1",
            "--tolerance",
            "0.1",
        ],
    );
    // Worked by hand: subject 1 has 1 visit, subject 2 has 3 (one duplicated at time 0).
    assert_eq!(d["subjects"], 2);
    assert_eq!(d["duplicated_rows"], 1);
    assert_eq!(d["single_visit_subjects"], 1);
    assert_eq!(d["visits_per_subject"]["median"], 2.0);
    assert_eq!(d["grid"]["patterns"]["complete"], 1);
    assert_eq!(d["grid"]["patterns"]["monotone"], 1);
    let o = on_file("describe", &path, &[]);
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(text.starts_with("subjects               2\n"), "{text}");
}

#[test]
fn na_response_dropped_on_request() {
    let path = temp_csv("na.csv", "id,t,y\n1,0,NA\n1,1,2\n2,0,\n");
    let d = describe_json(&path, &["--missing", "drop"]);
    assert_eq!(d["rows_dropped"], 2);
    assert_eq!(d["observations"], 1);
}

#[test]
fn missing_cells_in_any_column_dropped_and_counted() {
    // Every missing-value marker in the subject column is a missing id, never a subject "NA".
    let path = temp_csv(
        "na_any.csv",
        "id,t,y,age\n1,0,1,50\nNA,1,2,50\nNaN,0,3,60\n2,,4,60\n2,1,5,NA\n3,0,6,70\n",
    );
    let d = describe_json(&path, &["--missing", "drop", "--covariate", "age"]);
    // By hand: rows 2-5 go (ids NA and NaN, a blank time, an NA age); subjects 1 and 3 stay.
    assert_eq!(d["rows_dropped"], 4);
    assert_eq!(d["subjects"], 2);
    assert_eq!(
        d["dropped_by_column"],
        serde_json::json!([
            {"column": "subject", "rows": 2},
            {"column": "time", "rows": 1},
            {"column": "age", "rows": 1}
        ])
    );
    let o = on_file("describe", &path, &["--covariate", "age"]);
    assert_eq!(
        stderr(&o),
        format!(
            "error [missing]: {} line 3, column `id`: `subject` is missing at row 2: pass missing = \"drop\" to drop such rows, or fill them in",
            path.display()
        )
    );
    let o = on_file(
        "describe",
        &path,
        &["--missing", "drop", "--covariate", "age"],
    );
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(
        text.contains("missing, by column     subject 2, time 1, age 1\n"),
        "{text}"
    );
}

#[test]
fn simulate_is_seeded_and_exact() {
    let a = trajweave(&["simulate", "--subjects", "20", "--seed", "5"]);
    let b = trajweave(&["simulate", "--subjects", "20", "--seed", "5"]);
    assert!(a.status.success());
    assert_eq!(a.stdout, b.stdout);
    let c = trajweave(&["simulate", "--subjects", "20", "--seed", "6"]);
    assert_ne!(a.stdout, c.stdout);
    let text = String::from_utf8(a.stdout).unwrap();
    assert!(text.starts_with("patient,years,egfr,age,female,diabetes,acr\n1,0,"));
    let bad = trajweave(&["simulate", "--set", "noise_sd"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(
        stderr(&bad).starts_with("error [invalid_option]: `--set` = \"noise_sd\" is not allowed")
    );
}

/// Writes a fixture case as CSV: subject, time, response and covariate columns; NaN as a blank
/// cell, infinities as `inf`/`-inf`, a missing id as a blank cell.
fn case_csv(case: &Value) -> String {
    let cell = |v: &Value| match v {
        Value::Null => String::new(),
        Value::String(s) if s == "nan" => String::new(),
        Value::String(s) => s.clone(),
        other => other.to_string(),
    };
    let covs: Vec<(&String, &Vec<Value>)> = case
        .get("covariates")
        .and_then(Value::as_object)
        .map(|m| m.iter().map(|(k, v)| (k, v.as_array().unwrap())).collect())
        .unwrap_or_default();
    let mut s = String::from("id,t,y");
    for (name, _) in &covs {
        s += &format!(",{name}");
    }
    s.push('\n');
    for i in 0..case["subject"].as_array().unwrap().len() {
        s += &format!(
            "{},{},{}",
            cell(&case["subject"][i]),
            cell(&case["time"][i]),
            cell(&case["response"][i])
        );
        for (_, v) in &covs {
            s += &format!(",{}", cell(&v[i]));
        }
        s.push('\n');
    }
    s
}

#[test]
fn bad_input_fixture_through_csv() {
    let fixture: Value =
        serde_json::from_str(include_str!("../../tests/fixtures/bad_input.json")).unwrap();
    // Not expressible as a CSV file: unequal column lengths (a ragged CSV row is a CSV error,
    // tested below) and a fractional id (a CSV id that is not a whole number is a text id).
    let skip = ["length_mismatch", "invalid_value"];
    let mut checked = 0;
    for case in fixture["panel_cases"].as_array().unwrap() {
        let (name, kind) = (
            case["name"].as_str().unwrap(),
            case["kind"].as_str().unwrap(),
        );
        if skip.contains(&kind) {
            continue;
        }
        let path = temp_csv(&format!("case{checked}.csv"), &case_csv(case));
        let p = path.to_str().unwrap();
        let missing = case
            .get("missing")
            .and_then(Value::as_str)
            .unwrap_or("error");
        let mut args = vec!["--missing", missing, "--format", "json"];
        if let Some(m) = case.get("covariates").and_then(Value::as_object) {
            for name in m.keys() {
                args.extend(["--covariate", name.as_str()]);
            }
        }
        let o = on_file("describe", &path, &args);
        assert_eq!(o.status.code(), Some(2), "{name}");
        let err = stderr(&o);
        let message = case["message"].as_str().unwrap();
        assert!(
            err.starts_with(&format!("error [{kind}]: ")),
            "{name}: {err}"
        );
        assert!(err.ends_with(message), "{name}: {err}");
        if let Some(row) = message.split("at row ").nth(1) {
            // The file line is the row plus one for the header.
            let row: u64 = row
                .split(|c: char| !c.is_ascii_digit())
                .next()
                .unwrap()
                .parse()
                .unwrap();
            assert!(
                err.contains(&format!("{p} line {}, column `", row + 1)),
                "{name}: {err}"
            );
        }
        checked += 1;
    }
    assert!(checked >= 11, "only {checked} cases checked");
    for case in fixture["describe_cases"].as_array().unwrap() {
        let path = temp_csv("one.csv", "id,t,y\n1,0,1\n");
        let mut args: Vec<String> = Vec::new();
        for (key, value) in case["grid"].as_object().unwrap() {
            args.push(format!("--{key}"));
            args.push(match value {
                Value::Array(v) => v.iter().map(Value::to_string).collect::<Vec<_>>().join(","),
                other => other.to_string(),
            });
        }
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = on_file("describe", &path, &args);
        assert_eq!(stderr(&o), expected_error(case), "{}", case["name"]);
    }
    for case in fixture["simulate_cases"].as_array().unwrap() {
        let mut args = vec!["simulate".to_string(), "--out".into(), "-".into()];
        for (key, value) in case["options"].as_object().unwrap() {
            args.push("--set".into());
            args.push(format!("{key}={value}"));
        }
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = trajweave(&args);
        assert_eq!(stderr(&o), expected_error(case), "{}", case["name"]);
    }
}

#[test]
fn csv_errors_name_line_and_column() {
    let p = temp_csv("text.csv", "id,t,y\n1,0,1\n1,1,abc\n");
    let o = on_file("describe", &p, &[]);
    assert_eq!(
        stderr(&o),
        format!("error [invalid_value]: {} line 3, column `y`: \"abc\" is not a number; use a number, or leave the cell blank (or NA) for a missing value", p.display())
    );
    let p = temp_csv("ragged.csv", "id,t,y\n1,0,1\n1,1\n");
    let o = on_file("describe", &p, &[]);
    assert_eq!(
        stderr(&o),
        format!(
            "error [csv]: {} line 3: not valid CSV: this row has 2 fields but the header has 3",
            p.display()
        )
    );
    let o = trajweave(&[
        "describe",
        p.to_str().unwrap(),
        "--subject",
        "patient",
        "--time",
        "t",
        "--response",
        "y",
    ]);
    assert_eq!(
        stderr(&o),
        format!("error [invalid_option]: --subject \"patient\": {} has no such column; its columns are id, t, y", p.display())
    );
    let o = trajweave(&[
        "describe",
        "/nonexistent/file.csv",
        "--subject",
        "id",
        "--time",
        "t",
        "--response",
        "y",
    ]);
    assert!(stderr(&o).starts_with("error [io]: /nonexistent/file.csv: "));
}

#[test]
fn smooth_and_tune_kernel() {
    let mut csv = String::from("id,t,y\n");
    for s in 0..6 {
        for k in 0..5 {
            csv += &format!("{s},{k},{}\n", (k as f64) * 0.5 + s as f64);
        }
    }
    let path = temp_csv("smooth.csv", &csv);
    let o = on_file(
        "smooth",
        &path,
        &["--method", "kernel", "--bandwidth", "0.8", "--at", "0,2,4"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8(o.stdout).unwrap();
    let rows: Vec<&str> = text.lines().collect();
    assert_eq!(rows[0], "time,fitted");
    // Every subject is a line of slope 0.5 with intercepts 0..5 (mean 2.5): a local-linear fit
    // of the pooled data is exactly the mean line 2.5 + 0.5 t (closed form).
    for (row, t) in rows[1..].iter().zip([0.0, 2.0, 4.0]) {
        let fitted: f64 = row.split(',').nth(1).unwrap().parse().unwrap();
        assert!((fitted - (2.5 + 0.5 * t)).abs() < 1e-9, "{row}");
    }
    let o = on_file(
        "smooth",
        &path,
        &[
            "--method",
            "kernel",
            "--bootstrap",
            "20",
            "--format",
            "json",
        ],
    );
    let m: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(m["band"]["lower"].as_array().unwrap().len(), 101);
    let o = on_file(
        "tune",
        &path,
        &[
            "--method",
            "kernel",
            "--candidates",
            "0.5,1,2",
            "--format",
            "json",
        ],
    );
    let t: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(t["scheme"], "leave-one-subject-out");
    assert_eq!(t["scores"].as_array().unwrap().len(), 3);
    // Options a family does not take are refused by the core, naming the allowed ones.
    let o = on_file("smooth", &path, &["--method", "kernel", "--df", "4"]);
    assert!(stderr(&o).starts_with("error [invalid_option]: `kernel option` = \"df\" is not allowed: use one of: bandwidth"), "{}", stderr(&o));
    let o = on_file("smooth", &path, &["--method", "cubic"]);
    assert_eq!(stderr(&o), "error [invalid_option]: `smoother` = \"cubic\" is not allowed: use \"lowess\", \"kernel\", \"spline\" or \"super\"");
}

#[test]
fn individuals_covariate_groups_grid() {
    let mut csv = String::from("id,t,y,g\n");
    for s in 0..8 {
        for k in 0..4 {
            csv += &format!("{s},{k},{},{}\n", (s * 7 + k * 3) % 11, s % 2);
        }
    }
    let path = temp_csv("ind.csv", &csv);
    let out = std::env::temp_dir().join(format!("trajweave-cli-{}/res.csv", std::process::id()));
    let o = on_file(
        "individuals",
        &path,
        &[
            "--poly-degree",
            "0",
            "--sample",
            "3",
            "--residuals-out",
            out.to_str().unwrap(),
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(d["ranking"]["subjects"].as_array().unwrap().len(), 8);
    assert_eq!(d["sample"]["subjects"].as_array().unwrap().len(), 3);
    // Degree 0: the residual is y minus the mean of all y (closed form), in the file's order.
    let ys: Vec<f64> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(2).unwrap().parse().unwrap())
        .collect();
    let mean = ys.iter().sum::<f64>() / ys.len() as f64;
    let res: Vec<f64> = std::fs::read_to_string(&out)
        .unwrap()
        .lines()
        .skip(1)
        .map(|l| l.parse().unwrap())
        .collect();
    for (r, y) in res.iter().zip(&ys) {
        assert!((r - (y - mean)).abs() < 1e-12);
    }
    let o = on_file(
        "covariate",
        &path,
        &[
            "--covariate",
            "g",
            "--by",
            "g",
            "--bands",
            "2",
            "--overlap",
            "0",
            "--method",
            "kernel",
            "--bandwidth",
            "1",
        ],
    );
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(d["bands"]["counted"], "subjects", "{}", stderr(&o));
    let o = on_file(
        "groups",
        &path,
        &[
            "--covariate",
            "g",
            "--by",
            "g",
            "--method",
            "kernel",
            "--bandwidth",
            "1",
        ],
    );
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(d["groups"].as_array().unwrap().len(), 2, "{}", stderr(&o));
    let o = on_file("groups", &path, &["--method", "kernel"]);
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `--by`"),
        "{}",
        stderr(&o)
    );
    let o = on_file("grid", &path, &["--edges", "0,2,4"]);
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(d["values"].as_array().unwrap().len(), 16, "{}", stderr(&o));
}

#[test]
fn variogram_and_correlation() {
    // Two subjects at times 0, 1, 2 and 0, 1; residuals from a degree-0 polynomial are y minus
    // the grand mean, so pair differences are differences of y (closed form by hand).
    let csv = "id,t,y\n1,0,1\n1,1,3\n1,2,2\n2,0,0\n2,1,2\n";
    let path = temp_csv("vg.csv", csv);
    let o = on_file(
        "variogram",
        &path,
        &[
            "--poly-degree",
            "0",
            "--lag-edges",
            "0,1.5,2.5",
            "--min-pairs",
            "1",
            "--fit",
            "none",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    let vg = &d["variogram"];
    assert_eq!(vg["pairs"], serde_json::json!([3, 1]));
    // Lag 1 pairs: (1,3), (3,2), (0,2): v = 2, 0.5, 2; lag 2: (1,2): v = 0.5.
    assert_eq!(vg["classical"], serde_json::json!([1.5, 0.5]));
    assert!(d["fit"].is_null());
    let o = on_file("variogram", &path, &["--lag-kind", "quantile"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `lag_kind`"),
        "{}",
        stderr(&o)
    );
    let o = on_file("correlation", &path, &["--bins", "2", "--edges", "0,1,2"]);
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `bins`"),
        "{}",
        stderr(&o)
    );
    let o = on_file(
        "correlation",
        &path,
        &["--schedule", "0,1", "--tolerance", "0.1"],
    );
    assert!(stderr(&o).contains("too_few"), "{}", stderr(&o));
}

#[test]
fn variogram_with_a_random_slope_and_the_comparison() {
    // A simulated registry (random slope SD 1.2, the CLI's own simulator), residuals from a
    // straight line (the default mean).
    let sim = trajweave(&["simulate", "--subjects", "600", "--seed", "3"]);
    assert!(sim.status.success(), "{}", stderr(&sim));
    let path = temp_csv("slope.csv", &String::from_utf8_lossy(&sim.stdout));
    let base = [
        "variogram",
        path.to_str().unwrap(),
        "--subject",
        "patient",
        "--time",
        "years",
        "--response",
        "egfr",
        "--max-lag",
        "6",
    ];
    let mut args = base.to_vec();
    args.extend(["--random-slope", "--compare"]);
    let o = trajweave(&args);
    assert!(o.status.success(), "{}", stderr(&o));
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    let (fit, vg) = (&d["fit"], &d["variogram"]);
    assert_eq!(fit["random_slope"], true);
    let x = |k: &str| fit[k].as_f64().unwrap();
    let (tau2, s2, phi, w) = (
        x("error_variance"),
        x("serial_variance"),
        x("range"),
        x("slope_variance"),
    );
    assert!(w > 0.0);
    // Closed forms: the curve tau^2 + sigma^2 (1 - exp(-u / phi)) + omega^2 u^2 / 2, and
    // nu^2 = P - (tau^2 + sigma^2 + omega^2 s_t^2).
    let lags = fit["curve_lag"].as_array().unwrap();
    let curve = fit["curve_variogram"].as_array().unwrap();
    for (u, g) in lags.iter().zip(curve) {
        let u = u.as_f64().unwrap();
        let want = tau2 + s2 * (1.0 - (-u / phi).exp()) + w * u * u / 2.0;
        assert!((g.as_f64().unwrap() - want).abs() <= 1e-12 * want);
    }
    let pv = vg["process_variance"].as_f64().unwrap();
    let nu2 = pv - (tau2 + s2 + w * vg["time_variance"].as_f64().unwrap());
    assert!((x("intercept_variance") - nu2.max(0.0)).abs() <= 1e-12 * pv);
    assert!(fit["curve_correlation"]
        .as_array()
        .unwrap()
        .iter()
        .all(Value::is_null));
    // The comparison holds the same slope fit and a stationary fit on the same bins.
    let c = &d["comparison"];
    assert_eq!(&c["random_slope"], fit);
    assert_eq!(c["stationary"]["random_slope"], false);
    let reduction = 1.0 - x("criterion") / c["stationary"]["criterion"].as_f64().unwrap();
    assert!((c["criterion_reduction"].as_f64().unwrap() - reduction).abs() < 1e-15);
    // Without --compare there is no comparison; with --fit none it is refused.
    let o = trajweave(&base);
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(d.get("comparison").is_none() && d["fit"]["random_slope"] == false);
    let mut args = base.to_vec();
    args.extend(["--fit", "none", "--compare"]);
    let o = trajweave(&args);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(
        stderr(&o),
        "error [invalid_option]: `--compare` = given with --fit none is not allowed: name a \
         model with --fit to compare its fits"
    );
}

#[test]
fn report_from_a_file_with_settings() {
    let mut csv = String::from("id,t,<script>y</script>\n");
    for s in 0..30 {
        for k in 0..5 {
            csv += &format!("{s},{k},{}\n", 50 + (s * 7 + k * 3) % 11);
        }
    }
    let path = temp_csv("report.csv", &csv);
    let dir = path.parent().unwrap().to_path_buf();
    let settings = dir.join("settings.toml");
    std::fs::write(
        &settings,
        "bootstrap_reps = 20\nsmoothers = [\"kernel\", \"spline\"]\ntitle = \"Clinic <b>\"\n",
    )
    .unwrap();
    let out = dir.join("report.html");
    let o = trajweave(&[
        "report",
        path.to_str().unwrap(),
        "--subject",
        "id",
        "--time",
        "t",
        "--response",
        "<script>y</script>",
        "--settings",
        settings.to_str().unwrap(),
        "--set",
        "sample_size=4",
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let html = std::fs::read_to_string(&out).unwrap();
    assert!(!html.contains("<script>y") && html.contains("&lt;script&gt;y"));
    assert!(html.contains("Clinic &lt;b&gt;"));
    let numbers: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("report.json")).unwrap()).unwrap();
    assert_eq!(numbers["sections"]["overview"]["subjects"], 30);
    // A FILE needs its columns named; an unknown option is refused by name.
    let o = trajweave(&[
        "report",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `--subject`"),
        "{}",
        stderr(&o)
    );
    let o = trajweave(&[
        "report",
        "--set",
        "no_such=1",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `option` = \"no_such\""),
        "{}",
        stderr(&o)
    );
}

#[test]
fn screen_ranks_and_refuses_unknown_names() {
    let mut csv = String::from("id,t,y\n");
    for s in 0..40 {
        for k in 0..5 {
            csv += &format!(
                "{s},{k},{}\n",
                (s % 7) as f64 + ((s * 13 + k * 5) % 11) as f64 * 0.3
            );
        }
    }
    let path = temp_csv("screen.csv", &csv);
    let o = on_file(
        "screen",
        &path,
        &["--candidates", "independence,exchangeable"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    let fits = d["screening"]["fits"].as_array().unwrap();
    assert_eq!(fits.len(), 2);
    // Independence has one parameter, its variance (the closed form is checked in the core).
    let f = fits
        .iter()
        .find(|f| f["structure"] == "independence")
        .unwrap();
    assert_eq!(f["n_parameters"], 1);
    let o = on_file("screen", &path, &["--candidates", "ar1"]);
    assert!(
        stderr(&o).starts_with("error [invalid_option]: `candidates`"),
        "{}",
        stderr(&o)
    );
    let o = on_file("screen", &path, &["--candidates", "toeplitz"]);
    assert!(stderr(&o).contains("`grid`"), "{}", stderr(&o));
}

/// Pairs of subjects on the line 50 - 1.25 t sharing visit times with opposite noise, so the
/// noise sums to 0 at every time.
fn paired_line_csv() -> String {
    let mut s = String::from("id,t,y\n");
    for k in 0..15 {
        for v in 0..4 {
            let t = f64::from(k) * 0.37 + f64::from(v) * 1.1;
            let e = f64::from((k * 7 + v * 3) % 5) - 2.0;
            s += &format!("{},{t},{}\n", 2 * k + 1, 50.0 - 1.25 * t + e);
            s += &format!("{},{t},{}\n", 2 * k + 2, 50.0 - 1.25 * t - e);
        }
    }
    s
}

#[test]
fn change_json_table_and_errors() {
    let path = temp_csv("paired.csv", &paired_line_csv());
    let o = on_file(
        "change",
        &path,
        &[
            "--method",
            "lowess",
            "--iterations",
            "0",
            "--reps",
            "20",
            "--format",
            "json",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let c: Value = serde_json::from_slice(&o.stdout).unwrap();
    // Closed form: a fit linear in y with weights depending on x alone reproduces the line
    // when the noise cancels at each time, so the average slope and the least-squares slope
    // are both -1.25.
    assert!((c["estimate"].as_f64().unwrap() + 1.25).abs() < 1e-9);
    assert!((c["ols_slope"].as_f64().unwrap() + 1.25).abs() < 1e-12);
    assert_eq!(c["reps"], 20);
    assert_eq!(c["central"], 0.9);
    assert_eq!(c["smoother"]["family"], "lowess");
    assert!(c["lower"].as_f64().unwrap() <= c["upper"].as_f64().unwrap());
    let table = on_file("change", &path, &["--reps", "20"]);
    assert!(table.status.success());
    let text = String::from_utf8_lossy(&table.stdout);
    assert!(
        text.contains("mean curve") && text.contains("least squares"),
        "{text}"
    );

    let bad = on_file("change", &path, &["--central", "1.5"]);
    assert_eq!(bad.status.code(), Some(2));
    assert_eq!(
        stderr(&bad),
        "error [invalid_option]: `central` = 1.5 is not allowed: a number in (0, 1], the share \
         of observation times the window covers (e.g. 0.9)"
    );
    let bad = on_file("change", &path, &["--reps", "0"]);
    assert_eq!(
        stderr(&bad),
        "error [invalid_option]: `reps` = 0 is not allowed: a whole number from 10 to 100000"
    );
}

#[test]
fn binary_response_lowess_is_a_proportion_unless_robustness_is_asked() {
    // One visit in ten is 1, evenly spread: the proportion is 0.1 in every window (closed
    // form), and local lines over the pattern stay within 0.02 of it.
    let mut csv = String::from("id,t,y\n");
    for i in 0..200 {
        csv += &format!("{},{i},{}\n", i / 4 + 1, u8::from(i % 10 == 3));
    }
    let path = temp_csv("binary.csv", &csv);
    let o = on_file("smooth", &path, &["--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(stderr(&o), "");
    let m: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(m["curve"]["settings"]["iterations"], 0);
    assert_eq!(m["curve"]["warnings"], serde_json::json!([]));
    for f in m["fitted"].as_array().unwrap() {
        assert!((f.as_f64().unwrap() - 0.1).abs() < 0.02, "{f}");
    }
    // Asked for: robustness weights discard every 1, the curve is 0, and a warning says why.
    let o = on_file("smooth", &path, &["--iterations", "3", "--format", "json"]);
    assert!(o.status.success());
    let m: Value = serde_json::from_slice(&o.stdout).unwrap();
    let warning = m["curve"]["warnings"][0].as_str().unwrap().to_string();
    assert!(warning.starts_with("the response has two distinct values (binary)"));
    assert_eq!(stderr(&o), format!("warning: {warning}"));
    assert!(m["fitted"]
        .as_array()
        .unwrap()
        .iter()
        .all(|f| f.as_f64().unwrap().abs() < 1e-12));
}

#[test]
fn screen_flags_a_boundary_fit_and_gives_implied_correlations() {
    // Responses centred within each subject: subject totals 0, so by the determinant lemma and
    // Sherman-Morrison the exchangeable likelihood falls with nu2 (closed form: nu2 = 0,
    // tau2 = mean r^2), a fit on its boundary.
    let mut csv = String::from("id,t,y\n");
    for s in 0..40 {
        let v: Vec<f64> = (0..5)
            .map(|k| ((s * 13 + k * 5) % 11) as f64 * 0.3)
            .collect();
        let m = v.iter().sum::<f64>() / 5.0;
        for (k, x) in v.iter().enumerate() {
            csv += &format!("{s},{}.{},{}\n", k, s % 7, x - m);
        }
    }
    let path = temp_csv("screen_flags.csv", &csv);
    let args = [
        "--poly-degree",
        "0",
        "--candidates",
        "exchangeable,intercept_slope_error,intercept_slope_exponential_error",
        "--correlation-lags",
        "0,1,2.5",
        "--correlation-time",
        "1",
    ];
    let o = on_file("screen", &path, &args);
    assert!(o.status.success(), "{}", stderr(&o));
    let d: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(d["screening"]["time_origin"], 0.0);
    let fits = d["screening"]["fits"].as_array().unwrap();
    assert_eq!(fits.len(), 3);
    let ex = fits
        .iter()
        .find(|f| f["structure"] == "exchangeable")
        .unwrap();
    assert_eq!(ex["parameters"][0], 0.0);
    assert_eq!(ex["at_boundary"], serde_json::json!([true, false]));
    assert_eq!(ex["flagged"], true);
    assert!(ex["flags"][0]
        .as_str()
        .unwrap()
        .starts_with("intercept_variance is at its lower bound 0"));
    for f in fits {
        let n = f["parameters"].as_array().unwrap().len();
        assert_eq!(f["at_boundary"].as_array().unwrap().len(), n);
        assert_eq!(f["flagged"], !f["flags"].as_array().unwrap().is_empty());
    }
    // Exchangeable implies nu2 / (nu2 + tau2) = 0 at every lag (closed form).
    let implied = d["implied_correlation"].as_array().unwrap();
    let e = implied
        .iter()
        .find(|i| i["structure"] == "exchangeable")
        .unwrap();
    assert_eq!(e["correlation"], serde_json::json!([0.0, 0.0, 0.0]));
    assert_eq!(e["time"], 1.0);

    let mut table_args = args.to_vec();
    table_args.extend(["--format", "table"]);
    let o = on_file("screen", &path, &table_args);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(text.lines().nth(1).unwrap().ends_with("flagged"), "{text}");
    let row = text
        .lines()
        .find(|l| l.starts_with("exchangeable "))
        .unwrap();
    assert!(row.ends_with("FLAG"), "{text}");
    assert!(
        text.contains("flag on exchangeable: intercept_variance is at its lower bound 0"),
        "{text}"
    );
    assert!(text.contains("implied correlation of exchangeable from time 1 by lag"));
}
