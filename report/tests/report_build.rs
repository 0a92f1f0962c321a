//! The report on a simulated panel: it builds, every figure is there, the page is well-formed
//! and escapes user strings, and the JSON holds the numbers the estimators give when called
//! on their own with the same options.

use serde_json::{json, Value};
use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::correlation::screen::{screen_structures, ScreenOptions, Screening, Structure};
use trajweave_core::correlation::variogram::fit::{fit_variogram, Estimate, VariogramModel};
use trajweave_core::correlation::variogram::{variogram, LagBins, VariogramOptions};
use trajweave_core::covariates::bands::covariate_bands;
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::covariates::groups::{dropout_curves, group_curves};
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::unusual::unusual;
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::{describe, simulate, Covariate, Missing, Panel, SimulateOptions, SubjectIds};
use trajweave_report::{build_report, report_grid, ReportColumns, ReportOptions, ReportValue};

const EVIL: &str = "<script>alert('x')</script>";

/// The simulated panel, plus a copy of `age` under a hostile name.
fn panel() -> Panel {
    let d = simulate(&SimulateOptions {
        subjects: 300,
        ..Default::default()
    })
    .unwrap();
    let mut covs = d.covariates();
    covs.push(Covariate::new(EVIL, d.age.clone()));
    let ids = SubjectIds::Int(d.patient.iter().map(|&p| Some(p)).collect());
    Panel::new(ids, &d.years, &d.egfr, covs, Missing::Error).unwrap()
}

fn columns() -> ReportColumns {
    ReportColumns {
        subject: EVIL.into(),
        time: "years".into(),
        response: "egfr".into(),
        time_unit: Some("years".into()),
        response_unit: Some("mL/min/1.73 m2".into()),
        source: Some(format!("{EVIL}.csv")),
    }
}

fn options() -> ReportOptions {
    let mut o = ReportOptions::default();
    o.set("bootstrap_reps", &ReportValue::Number(40.0)).unwrap();
    o.set("lowess.span", &ReportValue::Number(0.5)).unwrap();
    o
}

/// XML well-formedness by the rules of XML 1.0 (W3C) that matter here: tags balance and
/// nest, attribute values are quoted, text holds no raw `<` and only known entities.
fn well_formed(doc: &str) -> Result<Vec<String>, String> {
    let mut stack: Vec<String> = Vec::new();
    let mut seen = Vec::new();
    let mut rest = doc;
    let entities = |s: &str| -> Result<(), String> {
        let mut r = s;
        while let Some(p) = r.find('&') {
            let end = r[p..].find(';').ok_or("unterminated entity")? + p;
            let name = &r[p + 1..end];
            let known = ["amp", "lt", "gt", "quot", "apos"].contains(&name)
                || (name.starts_with('#') && name[1..].chars().all(|c| c.is_ascii_digit()));
            if !known {
                return Err(format!("entity &{name};"));
            }
            r = &r[end + 1..];
        }
        Ok(())
    };
    while let Some(open) = rest.find('<') {
        entities(&rest[..open])?;
        let close = rest[open..].find('>').ok_or("unterminated tag")? + open;
        let inner = &rest[open + 1..close];
        if inner.contains('<') {
            return Err(format!("raw < in tag {inner}"));
        }
        if let Some(name) = inner.strip_prefix('/') {
            if stack.pop().as_deref() != Some(name) {
                return Err(format!("bad close {name}"));
            }
        } else if !inner.starts_with('!') {
            let body = inner.trim_end_matches('/');
            let name: String = body.chars().take_while(|c| !c.is_whitespace()).collect();
            let mut attrs = body[name.len()..].trim();
            while !attrs.is_empty() {
                let eq = attrs.find('=').ok_or("attribute without value")?;
                let v = &attrs[eq + 1..];
                if !v.starts_with('"') {
                    return Err(format!("unquoted attribute in {name}"));
                }
                let end = v[1..].find('"').ok_or("unterminated value")? + 1;
                entities(&v[1..end])?;
                attrs = v[end + 1..].trim_start();
            }
            if !inner.ends_with('/') {
                stack.push(name.clone());
            }
            seen.push(name);
        }
        rest = &rest[close + 1..];
    }
    if stack.is_empty() {
        Ok(seen)
    } else {
        Err(format!("unclosed {stack:?}"))
    }
}

fn v<T: serde::Serialize>(x: &T) -> Value {
    serde_json::to_value(x).unwrap()
}

#[test]
fn builds_with_every_figure_and_escapes() {
    let p = panel();
    let mut steps = Vec::new();
    let r = build_report(&p, &columns(), &options(), &mut |s| {
        steps.push(s.to_string())
    })
    .unwrap();
    for step in [
        "describe",
        "mean curve and bootstrap band",
        "trajectory heat map",
        "assemble",
    ] {
        assert!(steps.iter().any(|s| s == step), "{step} not reported");
    }
    let expected = [
        "fig-follow-up",
        "fig-visits",
        "fig-gaps",
        "fig-mean-trend",
        "fig-picks",
        "fig-sample",
        "fig-heatmap",
        "fig-correlation",
        "fig-lag-correlation",
        "fig-variogram",
        "fig-variogram-pairs",
        "fig-covariate-1",
        "fig-covariate-2",
        "fig-covariate-3",
        "fig-group-1",
        "fig-group-2",
        "fig-dropout",
    ];
    let ids: Vec<String> = r.json["figures"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f.as_str().unwrap().to_string())
        .collect();
    assert_eq!(ids, expected);
    for id in expected {
        let at = r.html.find(&format!("<figure id=\"{id}\">")).unwrap();
        assert!(r.html[at..].starts_with(&format!("<figure id=\"{id}\"><svg")));
    }
    // The hostile column name, covariate name and file name appear only escaped.
    assert!(!r.html.contains("<script"));
    assert!(r
        .html
        .contains("&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;"));
    let (doctype, body) = r.html.split_once('\n').unwrap();
    assert_eq!(doctype, "<!DOCTYPE html>");
    let tags = well_formed(body).unwrap();
    assert_eq!(tags.iter().filter(|t| *t == "svg").count(), expected.len());
    // Self-contained: no address but the SVG namespace name.
    let stripped = r.html.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
    for bad in ["http", "src=", "<link", "<img", "<script", "url("] {
        assert!(!stripped.contains(bad), "{bad} found");
    }
    assert!(r.html.contains("not clinical advice"));
    assert!(r.html.len() < 5_000_000);
}

#[test]
fn json_holds_the_estimators_numbers() {
    let p = panel();
    let o = options();
    let r = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"];

    let d = describe(&p, None).unwrap();
    assert_eq!(s["overview"]["follow_up"], v(&d.follow_up));
    assert_eq!(
        s["overview"]["visits_per_subject"],
        v(&d.visits_per_subject)
    );
    assert_eq!(s["overview"]["gaps"], v(&d.gaps));

    let kernel = Smoother::new("kernel").unwrap();
    let boot = BootstrapOptions {
        reps: 40,
        level: 0.95,
        seed: 1,
    };
    let m = mean_curve(&p, &kernel, None, Some(&boot)).unwrap();
    let c = &s["trend"]["curves"];
    assert_eq!(c[0]["smoother"], "kernel");
    assert_eq!(c[0]["fitted"], v(&m.fitted));
    assert_eq!(c[0]["band"], v(&m.band));
    let mut lowess = Smoother::new("lowess").unwrap();
    lowess
        .set(
            "span",
            &trajweave_core::trend::curve::OptionValue::Number(0.5),
        )
        .unwrap();
    let ml = mean_curve(&p, &lowess, None, None).unwrap();
    assert_eq!(c[1]["smoother"], "lowess");
    assert_eq!(c[1]["fitted"], v(&ml.fitted));
    assert_eq!(c[1]["settings"]["span"], 0.5);
    assert_eq!(c.as_array().unwrap().len(), 4);

    let res = residuals(&p, &MeanModel::Curve(m.curve.clone())).unwrap();
    let ranking = rank_subjects(&p, &res.residuals, Summary::Median).unwrap();
    let picks = pick_subjects(&p, &res.residuals, &ranking, &o.quantiles).unwrap();
    let ind = &s["individuals"];
    assert_eq!(ind["picks"], v(&picks));
    let sample = sample_subjects(&p, Some(&ranking), 12, 1, Strategy::Spread).unwrap();
    assert_eq!(ind["sample"], v(&sample));
    let u = unusual(&p, &res.residuals, &ranking, 3.5, 3.5).unwrap();
    assert_eq!(ind["unusual"]["subjects"], v(&u.subjects));
    assert_eq!(ind["unusual"]["scale"], json!(u.scale));
    // 300 subjects, at most 300 rows: one row per subject, in rank order.
    assert_eq!(ind["heatmap"]["rows"].as_array().unwrap().len(), 300);
    assert_eq!(ind["heatmap"]["rows"][0], ranking.subjects[0].to_string());

    let cov = &s["covariates"]["covariates"];
    for (k, name) in ["age", "acr", EVIL].iter().enumerate() {
        let b = covariate_bands(&p, name, 4, 0.5).unwrap();
        let t = conditional_trends(&p, name, &b, &kernel, None).unwrap();
        assert_eq!(cov[k]["covariate"], *name);
        assert_eq!(cov[k]["bands"], v(&b));
        assert_eq!(cov[k]["trends"], v(&t.trends));
    }

    let g = &s["groups"];
    for (k, name) in ["female", "diabetes"].iter().enumerate() {
        let gc = group_curves(&p, name, &kernel, None).unwrap();
        assert_eq!(g["groups"][k]["by"], *name);
        for (j, c) in gc.groups.iter().enumerate() {
            assert_eq!(g["groups"][k]["groups"][j]["fitted"], v(&c.fitted));
            assert_eq!(g["groups"][k]["groups"][j]["subjects"], c.subjects);
        }
    }
    let grid = report_grid(&p, &o).unwrap();
    let dc = dropout_curves(&p, &grid, &kernel, None).unwrap();
    assert_eq!(g["dropout"]["left_out"], dc.left_out);
    for (j, c) in dc.groups.iter().enumerate() {
        assert_eq!(g["dropout"]["groups"][j]["fitted"], v(&c.fitted));
        assert_eq!(g["dropout"]["groups"][j]["label"], c.label);
    }
    // The summary states the size and the mean change per year.
    let text = r.json["summary"].as_str().unwrap();
    assert!(text.starts_with(&format!("300 subjects with {} observations", p.n_obs())));
    assert!(text.contains("per year"));
}

#[test]
fn density_replaces_dots_above_the_threshold() {
    let p = panel();
    let mut o = options();
    let n = p.n_obs() as f64;
    o.set("density_threshold", &ReportValue::Number(n)).unwrap();
    let dots = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    assert_eq!(
        dots.json["sections"]["trend"]["data_cloud"]["points"],
        p.n_obs()
    );
    o.set("density_threshold", &ReportValue::Number(n - 1.0))
        .unwrap();
    let binned = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let counts = &binned.json["sections"]["trend"]["data_cloud"]["counts"];
    let total: u64 = counts
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_u64().unwrap())
        .sum();
    assert_eq!(total as usize, p.n_obs());
    // Dots are circles; the density has none in the trend figure.
    let fig = |html: &str| {
        let a = html.find("<figure id=\"fig-mean-trend\">").unwrap();
        let b = html[a..].find("</figure>").unwrap() + a;
        html[a..b].matches("<circle").count()
    };
    assert!(fig(&dots.html) >= p.n_obs() - 10);
    assert_eq!(fig(&binned.html), 0);
}

#[test]
fn pooled_heat_map_and_option_errors() {
    let p = panel();
    let mut o = options();
    o.set("heatmap_rows", &ReportValue::Number(40.0)).unwrap();
    let r = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let h = &r.json["sections"]["individuals"]["heatmap"];
    // 300 subjects into 40 rows: floor(300 g / 40) boundaries give rows of 7 or 8.
    let per: Vec<u64> = h["subjects_per_row"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap())
        .collect();
    assert_eq!(per.len(), 40);
    assert_eq!(per.iter().sum::<u64>(), 300);
    assert_eq!(&per[..2], &[7, 8]);

    let mut bad = options();
    bad.set("summary", &ReportValue::Text("quantile".into()))
        .unwrap();
    let e = build_report(&p, &columns(), &bad, &mut |_| {}).unwrap_err();
    assert_eq!(
        (e.kind(), e.argument()),
        ("invalid_option", Some("summary_p"))
    );
}

/// The residuals of the report's main curve, computed as a caller would.
fn main_residuals(p: &Panel, o: &ReportOptions) -> Vec<f64> {
    let kernel = Smoother::new("kernel").unwrap();
    let boot = o.bootstrap().unwrap();
    let m = mean_curve(p, &kernel, None, boot.as_ref()).unwrap();
    residuals(p, &MeanModel::Curve(m.curve)).unwrap().residuals
}

/// The figure's markup, from `<figure id=...>` to its `</figure>`.
fn figure_of<'a>(html: &'a str, id: &str) -> &'a str {
    let a = html.find(&format!("<figure id=\"{id}\">")).unwrap();
    let b = html[a..].find("</figure>").unwrap() + a;
    &html[a..b]
}

#[test]
fn correlation_sections_hold_the_estimators_numbers() {
    let p = panel();
    let o = options();
    let r = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"];
    let res = main_residuals(&p, &o);
    let grid = report_grid(&p, &o).unwrap();

    // Binned correlation and its lags: the estimator called alone with the same residuals.
    let c = binned_correlation(&p, &res, &grid, &CorrelationOptions::default()).unwrap();
    assert_eq!(s["correlation"]["correlation"], v(&c));
    assert_eq!(s["correlation"]["grid"], v(&grid));
    // Outside reference: the Pearson product-moment formula (Pearson 1896) written out here
    // for bins 0 and 1, each subject's visit nearest the bin centre (ties to the earlier).
    let k = grid.n_bins();
    let (t, mut xs, mut ys) = (p.time(), Vec::new(), Vec::new());
    for i in 0..p.n_subjects() {
        let pick = |b: usize| {
            let centre = grid.centre(b);
            p.subject_rows(i)
                .filter(|&row| grid.bin_of(t[row]) == Some(b))
                .min_by(|&x, &y| (t[x] - centre).abs().total_cmp(&(t[y] - centre).abs()))
        };
        if let (Some(a), Some(b)) = (pick(0), pick(1)) {
            xs.push(res[a]);
            ys.push(res[b]);
        }
    }
    let n = xs.len() as f64;
    let (mx, my) = (xs.iter().sum::<f64>() / n, ys.iter().sum::<f64>() / n);
    let sxy: f64 = xs.iter().zip(&ys).map(|(x, y)| (x - mx) * (y - my)).sum();
    let sxx: f64 = xs.iter().map(|x| (x - mx).powi(2)).sum();
    let syy: f64 = ys.iter().map(|y| (y - my).powi(2)).sum();
    let pearson = sxy / (sxx * syy).sqrt();
    assert_eq!(c.counts[1], xs.len() as u64);
    assert!(
        (c.correlation[1] - pearson).abs() < 1e-10,
        "{} vs {pearson}",
        c.correlation[1]
    );
    assert_eq!(c.correlation.len(), k * k);
    // The heat map writes value and count in each of its k x k cells (k <= 16 here).
    let fig = figure_of(&r.html, "fig-correlation");
    assert!(k <= 16);
    assert_eq!(fig.matches(">n=").count(), k * k);
    assert!(fig.contains(&format!(">n={}<", c.counts[1])));
    assert!(fig.contains(&format!(">{:.2}<", c.correlation[1])));

    // Variogram with default options, the fit with the default (exponential, classical).
    let vg = variogram(&p, &res, &VariogramOptions::default()).unwrap();
    let fit = fit_variogram(&vg, VariogramModel::Exponential, Estimate::Classical).unwrap();
    let sv = &s["variogram"];
    assert_eq!(sv["variogram"], v(&vg));
    assert_eq!(sv["fit"], v(&fit));
    assert_eq!(sv["model"], "exponential");
    // Outside reference: the process variance by its definition, the mean of (r_j - r_k)^2 / 2
    // over every pair of rows of different subjects, enumerated (Diggle 1988, section 2).
    let sub: Vec<usize> = (0..p.n_subjects())
        .flat_map(|i| p.subject_rows(i).map(move |_| i))
        .collect();
    let (mut sum, mut pairs) = (0.0, 0u64);
    for a in 0..res.len() {
        for b in a + 1..res.len() {
            if sub[a] != sub[b] {
                sum += (res[a] - res[b]).powi(2) / 2.0;
                pairs += 1;
            }
        }
    }
    assert!((vg.process_variance - sum / pairs as f64).abs() < 1e-9 * vg.process_variance);
    // Outside reference: the exponential model's closed form tau^2 + sigma^2 (1 - exp(-u/phi))
    // at each bin's mean lag, and the shares of nu^2, sigma^2, tau^2 in their sum.
    let closed: Vec<f64> = vg
        .lag
        .iter()
        .map(|u| fit.error_variance + fit.serial_variance * (1.0 - (-u / fit.range).exp()))
        .collect();
    for (j, want) in closed.iter().enumerate() {
        let got = sv["fitted_at_bins"][j].as_f64().unwrap();
        assert!((got - want).abs() <= 1e-12 * want.abs().max(1.0));
    }
    let total = fit.intercept_variance + fit.serial_variance + fit.error_variance;
    assert_eq!(sv["shares"]["total"], json!(total));
    let share_sum: f64 = ["intercept", "serial", "error"]
        .iter()
        .map(|k| sv["shares"][k].as_f64().unwrap())
        .sum();
    assert!((share_sum - 1.0).abs() < 1e-12);
    assert_eq!(
        sv["shares"]["error"].as_f64().unwrap(),
        fit.error_variance / total
    );
    // The fit's warnings are in the text, the shares in the summary.
    for w in &fit.warnings {
        assert!(
            r.html.contains(&w.replace('\'', "&#39;")),
            "warning {w} not shown"
        );
    }
    let summary = r.json["summary"].as_str().unwrap();
    assert!(summary.contains("measurement error"), "{summary}");
    assert!(summary.contains("% is between subjects (random intercept)"));
    if !fit.warnings.is_empty() {
        assert!(summary.contains("see the variogram section"));
    }
    // Pair counts label the points (20 bins) and fill the bar strip.
    let fig = figure_of(&r.html, "fig-variogram");
    let first = vg.pairs.iter().find(|&&n| n >= 30).unwrap();
    assert!(fig.contains(&format!(">{first}</text>")));
    let bars = figure_of(&r.html, "fig-variogram-pairs");
    assert!(bars.matches("<rect").count() > vg.pairs.len());
}

#[test]
fn correlation_options_by_name_reach_the_estimators() {
    let p = panel();
    let mut o = options();
    for (name, value) in [
        ("variogram_model", ReportValue::Text("gaussian".into())),
        ("variogram_estimate", ReportValue::Text("robust".into())),
        ("lag_bins", ReportValue::Number(12.0)),
        ("lag_kind", ReportValue::Text("equal_count".into())),
        ("max_lag", ReportValue::Number(5.0)),
        ("min_pairs", ReportValue::Text("20".into())),
        ("correlation_min_count", ReportValue::Number(25.0)),
        ("correlation_level", ReportValue::Number(0.9)),
        ("grid_edges", ReportValue::Text("0,1,2,3,4,5,6,7,8".into())),
    ] {
        o.set(name, &value).unwrap();
    }
    // A hostile time column name: axis titles of the new figures are escaped.
    let mut cols = columns();
    cols.time = EVIL.into();
    cols.time_unit = None;
    let r = build_report(&p, &cols, &o, &mut |_| {}).unwrap();
    assert!(!r.html.contains("<script"));
    let body = r.html.split_once('\n').unwrap().1;
    well_formed(body).unwrap();
    let s = &r.json["sections"];
    let res = main_residuals(&p, &o);
    let grid = report_grid(&p, &o).unwrap();
    let co = CorrelationOptions {
        level: 0.9,
        min_count: 25,
    };
    let c = binned_correlation(&p, &res, &grid, &co).unwrap();
    assert_eq!(s["correlation"]["correlation"], v(&c));
    let vo = VariogramOptions {
        bins: LagBins::EqualCount(12),
        max_lag: Some(5.0),
        min_pairs: 20,
        ..Default::default()
    };
    let vg = variogram(&p, &res, &vo).unwrap();
    let fit = fit_variogram(&vg, VariogramModel::Gaussian, Estimate::Robust).unwrap();
    assert_eq!(s["variogram"]["variogram"], v(&vg));
    assert_eq!(s["variogram"]["fit"], v(&fit));
    assert_eq!(s["variogram"]["model"], "gaussian");
    // Outside reference: the Gaussian model's closed form tau^2 + sigma^2 (1 - exp(-(u/phi)^2)).
    for (j, u) in vg.lag.iter().enumerate() {
        let want = fit.error_variance
            + fit.serial_variance * (1.0 - (-(u / fit.range) * (u / fit.range)).exp());
        let got = s["variogram"]["fitted_at_bins"][j].as_f64().unwrap();
        assert!((got - want).abs() <= 1e-12 * want.abs().max(1.0));
    }

    let err = |name: &str, value: ReportValue| {
        let mut o = ReportOptions::default();
        let e = o.set(name, &value).unwrap_err();
        (e.kind(), e.argument().map(String::from))
    };
    for (name, value) in [
        ("variogram_model", ReportValue::Text("spherical".into())),
        ("variogram_estimate", ReportValue::Text("median".into())),
        ("lag_bins", ReportValue::Number(0.0)),
        ("lag_bins", ReportValue::Number(2.5)),
        ("lag_kind", ReportValue::Text("quantile".into())),
        ("max_lag", ReportValue::Number(-1.0)),
        ("min_pairs", ReportValue::Number(0.0)),
        ("correlation_min_count", ReportValue::Number(1.0)),
        ("correlation_level", ReportValue::Number(1.0)),
        ("screen_subjects", ReportValue::Number(5.0)),
        ("screen_seed", ReportValue::Number(-1.0)),
    ] {
        assert_eq!(
            err(name, value),
            ("invalid_option", Some(name.to_string())),
            "{name}"
        );
    }
}

#[test]
fn unestimable_correlation_is_a_note_not_an_error() {
    // Every subject seen once: no within-subject pairs, so neither the binned correlation
    // nor the variogram can be estimated; the report still builds and says why.
    let n = 40;
    let ids = SubjectIds::Int((0..n).map(Some).collect());
    let t: Vec<f64> = (0..n).map(|i| (i % 8) as f64).collect();
    let y: Vec<f64> = (0..n)
        .map(|i| 50.0 - t[i as usize] + (i % 3) as f64)
        .collect();
    let p = Panel::new(ids, &t, &y, vec![], Missing::Error).unwrap();
    let mut o = options();
    o.set("bootstrap_reps", &ReportValue::Number(0.0)).unwrap();
    let r = build_report(&p, &ReportColumns::default(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"];
    assert_eq!(s["correlation"]["correlation"], Value::Null);
    assert_eq!(s["correlation"]["skipped"].as_array().unwrap().len(), 1);
    assert_eq!(s["variogram"]["fit"], Value::Null);
    assert!(r.html.contains("Not drawn:"));
    assert!(!r.json["summary"]
        .as_str()
        .unwrap()
        .contains("measurement error"));
}

/// Closed forms (Akaike 1974; Schwarz 1978; the Gaussian likelihood of independent residuals
/// at the ML variance s2 = mean r^2, l = -N/2 (ln(2 pi s2) + 1)) checked against a screening.
fn check_criteria(sc: &Screening, r: &[f64]) {
    let n = r.len() as f64;
    for f in &sc.fits {
        let p = f.n_parameters as f64;
        assert!((f.aic - (-2.0 * f.loglik + 2.0 * p)).abs() < 1e-9 * f.aic.abs());
        assert!((f.bic - (-2.0 * f.loglik + p * n.ln())).abs() < 1e-9 * f.bic.abs());
    }
    let ind = sc
        .fits
        .iter()
        .find(|f| f.structure == "independence")
        .unwrap();
    let s2 = r.iter().map(|x| x * x).sum::<f64>() / n;
    let l = -n / 2.0 * ((2.0 * std::f64::consts::PI * s2).ln() + 1.0);
    assert!(
        (ind.loglik - l).abs() < 1e-9 * l.abs(),
        "{} vs {l}",
        ind.loglik
    );
}

#[test]
fn screening_holds_the_estimators_numbers_on_the_subsample() {
    let p = panel();
    let mut o = options();
    o.set("bootstrap_reps", &ReportValue::Number(0.0)).unwrap();
    let res = main_residuals(&p, &o);
    let r = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"]["screening"];
    // 300 subjects, fewer than screen_subjects: all used. The default grid holds several
    // visits of a subject in a bin, so toeplitz and unstructured are left out.
    assert_eq!(s["subsample"]["subsampled"], false);
    let so = ScreenOptions {
        candidates: Structure::ALL
            .iter()
            .copied()
            .filter(|c| !c.needs_grid())
            .collect(),
        grid: None,
        ..ScreenOptions::default()
    };
    let sc = screen_structures(&p, &res, &so).unwrap();
    assert_eq!(s["screening"], v(&sc));
    assert!(s["grid_structures"].is_string());
    check_criteria(&sc, &res);
    let summary = r.json["summary"].as_str().unwrap();
    assert!(summary.contains("Covariance screening:") && summary.contains("fits best"));
    let html_table = r.html.split("<section id=\"screening\">").nth(1).unwrap();
    assert!(html_table.contains("<th>delta AIC</th>"));

    // A subsample of 100 subjects, seed 7: the same subjects as the random sample, by hand.
    o.set("screen_subjects", &ReportValue::Number(100.0))
        .unwrap();
    o.set("screen_seed", &ReportValue::Number(7.0)).unwrap();
    let r = build_report(&p, &columns(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"]["screening"];
    let pick = sample_subjects(&p, None, 100, 7, Strategy::Random).unwrap();
    let (mut ids, mut t, mut y, mut rr) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for &i in &pick.subject_index {
        for row in p.subject_rows(i) {
            ids.push(Some(i as i64));
            t.push(p.time()[row]);
            y.push(p.response()[row]);
            rr.push(res[row]);
        }
    }
    let q = Panel::new(SubjectIds::Int(ids), &t, &y, vec![], Missing::Error).unwrap();
    let sc = screen_structures(&q, &rr, &so).unwrap();
    assert_eq!(s["screening"], v(&sc));
    assert_eq!(s["subsample"]["subjects"], 100);
    check_criteria(&sc, &rr);
    assert!(r
        .html
        .contains("seeded random subsample of 100 of the 300 subjects"));
}

#[test]
fn a_scheduled_grid_admits_toeplitz_and_unstructured() {
    // 80 subjects seen once in each of 4 yearly windows (times j + 0.3 u, u from a seeded
    // linear congruential generator, Knuth's MMIX constants), a subject effect and noise.
    let mut state: u64 = 12345;
    let mut unif = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let (mut ids, mut t, mut y) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..80 {
        let b = 4.0 * (unif() - 0.5);
        for j in 0..4 {
            ids.push(Some(i));
            let tj = j as f64 + 0.3 * unif();
            t.push(tj);
            y.push(50.0 - tj + b + (unif() - 0.5));
        }
    }
    let p = Panel::new(SubjectIds::Int(ids), &t, &y, vec![], Missing::Error).unwrap();
    let mut o = options();
    o.set("bootstrap_reps", &ReportValue::Number(0.0)).unwrap();
    o.set("grid_edges", &ReportValue::Text("0,1,2,3,4".into()))
        .unwrap();
    let r = build_report(&p, &ReportColumns::default(), &o, &mut |_| {}).unwrap();
    let s = &r.json["sections"]["screening"];
    assert_eq!(s["grid_structures"], Value::Null);
    let res = main_residuals(&p, &o);
    let so = ScreenOptions {
        grid: Some(report_grid(&p, &o).unwrap()),
        ..ScreenOptions::default()
    };
    let sc = screen_structures(&p, &res, &so).unwrap();
    assert_eq!(s["screening"], v(&sc));
    assert_eq!(sc.fits.len(), 9);
    check_criteria(&sc, &res);
}
