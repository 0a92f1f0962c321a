//! The report on a simulated panel: it builds, every figure is there, the page is well-formed
//! and escapes user strings, and the JSON holds the numbers the estimators give when called
//! on their own with the same options.

use serde_json::{json, Value};
use trajweave_core::bands::covariate_bands;
use trajweave_core::conditional::conditional_trends;
use trajweave_core::groups::{dropout_curves, group_curves};
use trajweave_core::mean_curve::{mean_curve, BootstrapOptions};
use trajweave_core::ranking::{pick_subjects, rank_subjects, Summary};
use trajweave_core::report::{
    build_report, report_grid, ReportColumns, ReportOptions, ReportValue,
};
use trajweave_core::residuals::{residuals, MeanModel};
use trajweave_core::sample::{sample_subjects, Strategy};
use trajweave_core::smoother::Smoother;
use trajweave_core::unusual::unusual;
use trajweave_core::{describe, simulate, Covariate, Missing, Panel, SimulateOptions, SubjectIds};

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
        .set("span", &trajweave_core::curve::OptionValue::Number(0.5))
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
