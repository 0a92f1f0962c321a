//! Equal-count intervals against R's graphics::co.intervals (tests/fixtures/bands_r.json,
//! written by tests/reference/bands_r.R): the same interval ends, bit for bit, and the same
//! counts of values in each closed interval (computed in R).

mod exact_json;

use exact_json::{int, load_exact as load, nums as numbers};
use trajweave_core::covariates::bands::{covariate_bands, equal_count_bands};
use trajweave_core::{Covariate, Missing, Panel, SubjectIds};

#[test]
fn identical_to_r_co_intervals() {
    let fx = load(include_str!("../../tests/fixtures/bands_r.json"));
    let mut checked = 0;
    for d in fx["datasets"].as_array().unwrap() {
        let x = numbers(&d["x"]);
        for c in d["cases"].as_array().unwrap() {
            let number = int(&c["number"]);
            let overlap = exact_json::num(&c["overlap"]);
            let b = equal_count_bands(&x, number, overlap).unwrap();
            let what = format!("{} number {number} overlap {overlap}", d["name"]);
            let lower: Vec<f64> = b.bands.iter().map(|b| b.lower).collect();
            let upper: Vec<f64> = b.bands.iter().map(|b| b.upper).collect();
            let count: Vec<f64> = b.bands.iter().map(|b| b.count as f64).collect();
            // Same order statistics and the same half-gap: exact equality, not a tolerance.
            assert_eq!(lower, numbers(&c["lower"]), "{what}: lower");
            assert_eq!(upper, numbers(&c["upper"]), "{what}: upper");
            assert_eq!(count, numbers(&c["count"]), "{what}: count");
            assert_eq!(b.counted, "values");
            checked += 1;
        }
    }
    assert_eq!(checked, 27);
}

#[test]
fn row_order_does_not_matter() {
    let fx = load(include_str!("../../tests/fixtures/bands_r.json"));
    let x = numbers(&fx["datasets"][0]["x"]);
    let mut reversed = x.clone();
    reversed.reverse();
    assert_eq!(
        equal_count_bands(&x, 6, 0.5).unwrap(),
        equal_count_bands(&reversed, 6, 0.5).unwrap()
    );
}

#[test]
fn panel_covariate_counts_subjects_when_time_fixed() {
    // quakes$depth as a time-fixed covariate of 1000 subjects with 1 to 3 rows each: the
    // intervals must be R's on the 1000 subject values (one per subject), and a time-varying
    // covariate is banded over its rows.
    let fx = load(include_str!("../../tests/fixtures/bands_r.json"));
    let d = &fx["datasets"][0];
    let depth = numbers(&d["x"]);
    let (mut ids, mut depth_rows, mut varying) = (vec![], vec![], vec![]);
    for (i, &v) in depth.iter().enumerate() {
        for k in 0..(1 + i % 3) {
            ids.push(Some(i as i64));
            depth_rows.push(v);
            varying.push(v + k as f64);
        }
    }
    let n = ids.len();
    let time: Vec<f64> = (0..n).map(|r| (r % 3) as f64).collect();
    let panel = Panel::new(
        SubjectIds::Int(ids),
        &time,
        &vec![0.0; n],
        vec![
            Covariate::new("depth", depth_rows),
            Covariate::new("varying", varying.clone()),
        ],
        Missing::Error,
    )
    .unwrap();
    let b = covariate_bands(&panel, "depth", 6, 0.5).unwrap();
    assert_eq!(b.counted, "subjects");
    let c = &d["cases"][0];
    assert_eq!(
        (int(&c["number"]), exact_json::num(&c["overlap"])),
        (6, 0.5)
    );
    let lower: Vec<f64> = b.bands.iter().map(|b| b.lower).collect();
    assert_eq!(lower, numbers(&c["lower"]));
    let count: Vec<f64> = b.bands.iter().map(|b| b.count as f64).collect();
    assert_eq!(count, numbers(&c["count"]));

    let v = covariate_bands(&panel, "varying", 6, 0.5).unwrap();
    assert_eq!(v.counted, "values");
    // Per row: the same as banding the row values directly.
    let mut direct = equal_count_bands(&varying, 6, 0.5).unwrap();
    direct.counted = "values".into();
    assert_eq!(v, direct);

    assert_eq!(
        covariate_bands(&panel, "age", 6, 0.5).unwrap_err().to_string(),
        "`covariate` = \"age\" is not allowed: use one of the panel's covariates: \"depth\", \"varying\""
    );
}
