//! `missing = "drop"` over every column used: which rows go, the count per column, and the
//! description that reports them. Expected values are counted by hand from the inputs below
//! (a closed form: a row goes when any of its cells is missing).

use trajweave_core::{describe, Covariate, Missing, Panel, SubjectIds};

fn inputs() -> (SubjectIds, Vec<f64>, Vec<f64>, Vec<Covariate>) {
    let nan = f64::NAN;
    // Row:        0    1    2     3    4    5    6
    let ids = SubjectIds::Text(vec![
        Some("a".into()),
        Some("a".into()),
        None,
        Some("b".into()),
        Some("b".into()),
        Some("c".into()),
        Some(" ".into()),
    ]);
    let time = vec![0.0, 1.0, 0.0, nan, 1.0, 0.0, 2.0];
    let response = vec![1.0, nan, 3.0, 4.0, 5.0, 6.0, 7.0];
    let age = Covariate::new("age", vec![50.0, 50.0, nan, 60.0, nan, 70.0, 80.0]);
    let sex = Covariate::new("sex", vec![0.0, 0.0, 1.0, 1.0, 1.0, nan, 1.0]);
    (ids, time, response, vec![age, sex])
}

#[test]
fn drop_counts_each_column_and_keeps_the_rest() {
    let (ids, time, response, covariates) = inputs();
    let p = Panel::new(ids, &time, &response, covariates, Missing::Drop).unwrap();
    // By hand: row 0 is the only complete row.
    assert_eq!(p.dropped_rows(), &[1, 2, 3, 4, 5, 6]);
    assert_eq!(p.n_obs(), 1);
    let counts: Vec<(String, usize)> = p
        .dropped_by_column()
        .iter()
        .map(|c| (c.column.clone(), c.rows))
        .collect();
    // By hand: subject rows 2 and 6 (blank text), time row 3, response row 1, age rows 2 and
    // 4, sex row 5; row 2 counts under both subject and age.
    let expected = [
        ("subject", 2),
        ("time", 1),
        ("response", 1),
        ("age", 2),
        ("sex", 1),
    ];
    assert_eq!(
        counts,
        expected
            .iter()
            .map(|&(c, n)| (c.to_string(), n))
            .collect::<Vec<_>>()
    );
    let d = describe(&p, None).unwrap();
    assert_eq!(d.rows_dropped, 6);
    assert_eq!(d.dropped_by_column.len(), 5);
    assert!(d
        .to_text()
        .contains("missing, by column     subject 2, time 1, response 1, age 2, sex 1"));
    // The dropped rows come back as NaN in input order.
    let back = p.to_input_order(p.response());
    assert_eq!(back[0], 1.0);
    assert!(back[1..].iter().all(|v| v.is_nan()));
}

#[test]
fn error_names_the_first_missing_cell() {
    let (ids, time, response, covariates) = inputs();
    let e = Panel::new(ids, &time, &response, covariates, Missing::Error).unwrap_err();
    // By hand: row 2 (counted from 1) is the response gap of input row 1.
    assert_eq!(e.kind(), "missing");
    assert_eq!(e.argument(), Some("response"));
    assert_eq!(e.row(), Some(2));
}

#[test]
fn complete_panel_reports_no_missing_columns() {
    let ids = SubjectIds::Float(vec![1.0, 1.0, 2.0]);
    let p = Panel::new(
        ids,
        &[0.0, 1.0, 0.0],
        &[1.0, 2.0, 3.0],
        vec![],
        Missing::Drop,
    )
    .unwrap();
    assert!(p.dropped_by_column().is_empty());
    // By hand: 1.0 and 1.0 are one subject.
    assert_eq!(p.n_subjects(), 2);
}
