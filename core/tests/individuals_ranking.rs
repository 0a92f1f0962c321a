//! Subject ranking, picks and unusual-subject flags against outside references: per-chick
//! summaries of ChickWeight residuals from R's tapply, quantile and lm
//! (tests/fixtures/residuals_r.json, tests/reference/residuals_r.R), and brute-force
//! computations written here on simulated panels; row-permutation invariance; bad input.

mod common;

use common::numbers;
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Ranking, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::unusual::unusual;
use trajweave_core::numeric::rng::Rng;
use trajweave_core::{simulate, Missing, Panel, SimulateOptions, SubjectId, SubjectIds};

/// Summaries must agree with R's to this absolute difference (ChickWeight residuals are of
/// order 100 grams).
const R_SUMMARY_TOL: f64 = 1e-10;
/// Summaries must agree with the brute-force ones here to this relative difference.
const BRUTE_REL_TOL: f64 = 1e-12;

fn summaries() -> Vec<Summary> {
    vec![
        Summary::Median,
        Summary::Mean,
        Summary::Quantile(0.25),
        Summary::Rms,
        Summary::MaxAbs,
        Summary::Slope,
    ]
}

#[test]
fn chickweight_summaries_match_r() {
    let cw =
        common::load(include_str!("../../tests/fixtures/residuals_r.json"))["chickweight"].clone();
    let ids = SubjectIds::Int(
        numbers(&cw["subject"])
            .iter()
            .map(|&v| Some(v as i64))
            .collect(),
    );
    let panel = Panel::new(
        ids,
        &numbers(&cw["time"]),
        &numbers(&cw["weight"]),
        vec![],
        Missing::Error,
    )
    .unwrap();
    let r_input = numbers(&cw["residual"]);
    let res: Vec<f64> = panel.order().iter().map(|&row| r_input[row]).collect();
    let r_ids: Vec<i64> = numbers(&cw["ids"]).iter().map(|&v| v as i64).collect();
    for (summary, key) in summaries()
        .into_iter()
        .zip(["median", "mean", "q25", "rms", "max_abs", "slope"])
    {
        // Reference: R tapply(r, Chick, median / mean / quantile(type 7) / rms / max |r|) and
        // coef(lm(r ~ Time)) per chick.
        let want = numbers(&cw[key]);
        let ranking = rank_subjects(&panel, &res, summary).unwrap();
        assert!(ranking.unranked.is_empty());
        assert_eq!(ranking.subjects.len(), r_ids.len());
        let mut worst: f64 = 0.0;
        for (id, v) in ranking.subjects.iter().zip(&ranking.values) {
            let SubjectId::Int(id) = id else {
                panic!("int ids")
            };
            let j = r_ids.iter().position(|x| x == id).unwrap();
            worst = worst.max((v - want[j]).abs());
        }
        eprintln!("ChickWeight {key}: max |ours - R| = {worst:.2e}");
        assert!(worst <= R_SUMMARY_TOL, "{key}: {worst}");
        // Rank order: R's values, read in our rank order, never decrease (beyond the
        // tolerance: values equal in exact arithmetic may round either way, here chicks 49
        // and 50 on the 0.25 quantile).
        let in_rank_order: Vec<f64> = ranking
            .subjects
            .iter()
            .map(|id| {
                let SubjectId::Int(id) = id else {
                    panic!("int ids")
                };
                want[r_ids.iter().position(|x| x == id).unwrap()]
            })
            .collect();
        assert!(
            in_rank_order
                .windows(2)
                .all(|w| w[0] <= w[1] + R_SUMMARY_TOL),
            "{key}: order"
        );
    }
}

/// Brute force: subject id -> summary, written independently of the core.
fn brute_summary(summary: Summary, t: &[f64], r: &[f64]) -> Option<f64> {
    let n = r.len() as f64;
    let mut s = r.to_vec();
    s.sort_by(f64::total_cmp);
    let q = |p: f64| {
        let h = (s.len() - 1) as f64 * p;
        let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
        s[lo] + (h - lo as f64) * (s[hi] - s[lo])
    };
    match summary {
        Summary::Median => Some(q(0.5)),
        Summary::Quantile(p) => Some(q(p)),
        Summary::Mean => Some(r.iter().sum::<f64>() / n),
        Summary::Rms => Some((r.iter().map(|v| v * v).sum::<f64>() / n).sqrt()),
        Summary::MaxAbs => r.iter().map(|v| v.abs()).reduce(f64::max),
        Summary::Slope => {
            let distinct = t.iter().any(|&v| v != t[0]);
            if !distinct {
                return None;
            }
            let (tb, rb) = (t.iter().sum::<f64>() / n, r.iter().sum::<f64>() / n);
            let num: f64 = t.iter().zip(r).map(|(a, b)| (a - tb) * (b - rb)).sum();
            let den: f64 = t.iter().map(|a| (a - tb) * (a - tb)).sum();
            Some(num / den)
        }
    }
}

fn simulated(subjects: usize, seed: u64) -> (trajweave_core::SimulatedPanel, Panel) {
    let s = simulate(&SimulateOptions {
        subjects,
        seed,
        ..Default::default()
    })
    .unwrap();
    let p = s.to_panel().unwrap();
    (s, p)
}

#[test]
fn ranking_and_picks_match_brute_force() {
    let (sim, panel) = simulated(301, 5);
    let res = residuals(&panel, &MeanModel::Polynomial { degree: 1 })
        .unwrap()
        .residuals;
    let res_input = panel.to_input_order(&res);
    for summary in summaries() {
        // Brute force from the input rows, grouped by patient id here.
        let mut ids: Vec<i64> = sim.patient.clone();
        ids.dedup();
        let mut rows: Vec<(f64, i64, usize)> = Vec::new();
        let mut unranked = Vec::new();
        for &id in &ids {
            let mut pts: Vec<(f64, f64)> = (0..sim.patient.len())
                .filter(|&k| sim.patient[k] == id)
                .map(|k| (sim.years[k], res_input[k]))
                .collect();
            pts.sort_by(|a, b| a.0.total_cmp(&b.0));
            let (t, r): (Vec<f64>, Vec<f64>) = pts.iter().copied().unzip();
            match brute_summary(summary, &t, &r) {
                Some(v) => rows.push((v, id, r.len())),
                None => unranked.push(SubjectId::Int(id)),
            }
        }
        rows.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let ranking = rank_subjects(&panel, &res, summary).unwrap();
        let want_ids: Vec<SubjectId> = rows.iter().map(|r| SubjectId::Int(r.1)).collect();
        assert_eq!(ranking.subjects, want_ids, "{summary:?}");
        assert_eq!(ranking.unranked, unranked, "{summary:?}");
        assert_eq!(ranking.ranks, (1..=rows.len()).collect::<Vec<_>>());
        assert_eq!(
            ranking.observations,
            rows.iter().map(|r| r.2).collect::<Vec<_>>()
        );
        for (v, w) in ranking.values.iter().zip(&rows) {
            assert!(
                (v - w.0).abs() <= BRUTE_REL_TOL * w.0.abs().max(1.0),
                "{summary:?}"
            );
        }
        // Picks: 0 -> smallest, 1 -> largest, 0.5 -> the middle subject (m is odd unless some
        // are unranked), 0.25 -> rank 1 + round(0.25 (m - 1)).
        let m = rows.len();
        let picks = pick_subjects(&panel, &res, &ranking, &[0.0, 0.25, 0.5, 1.0]).unwrap();
        let want_rank = [
            1,
            1 + ((m - 1) as f64 * 0.25 + 0.5) as usize,
            1 + (m - 1).div_ceil(2),
            m,
        ];
        for (p, &rank) in picks.iter().zip(&want_rank) {
            assert_eq!(p.rank, rank, "{summary:?} q={}", p.quantile);
            assert_eq!(p.subject, want_ids[rank - 1]);
            assert_eq!(p.value, ranking.values[rank - 1]);
            let SubjectId::Int(id) = p.subject else {
                panic!()
            };
            let ks: Vec<usize> = (0..sim.patient.len())
                .filter(|&k| sim.patient[k] == id)
                .collect();
            assert_eq!(p.time, ks.iter().map(|&k| sim.years[k]).collect::<Vec<_>>());
            assert_eq!(
                p.response,
                ks.iter().map(|&k| sim.egfr[k]).collect::<Vec<_>>()
            );
            assert_eq!(
                p.residual,
                ks.iter().map(|&k| res_input[k]).collect::<Vec<_>>()
            );
        }
    }
}

#[test]
fn unusual_matches_brute_force_robust_z() {
    let (_, panel) = simulated(400, 9);
    let mut res = residuals(&panel, &MeanModel::Polynomial { degree: 1 })
        .unwrap()
        .residuals;
    res[17] += 200.0; // one wild observation
    let ranking = rank_subjects(&panel, &res, Summary::Mean).unwrap();
    let u = unusual(&panel, &res, &ranking, 2.5, 3.5).unwrap();
    // Brute force: median and MAD by full sorts; Hampel's 1.4826.
    let med = |v: &[f64]| {
        let mut s = v.to_vec();
        s.sort_by(f64::total_cmp);
        let n = s.len();
        if n % 2 == 1 {
            s[n / 2]
        } else {
            (s[n / 2 - 1] + s[n / 2]) / 2.0
        }
    };
    let c = med(&ranking.values);
    let dev: Vec<f64> = ranking.values.iter().map(|v| (v - c).abs()).collect();
    let scale = 1.4826 * med(&dev);
    assert!((u.center - c).abs() <= 1e-12 * c.abs().max(1.0));
    assert!(
        (u.scale - scale).abs() <= 1e-5 * scale,
        "1.4826 is rounded: {} vs {scale}",
        u.scale
    );
    let mut want: Vec<(f64, SubjectId)> = ranking
        .values
        .iter()
        .zip(&ranking.subjects)
        .map(|(v, s)| ((v - c) / scale, s.clone()))
        .filter(|(z, _)| z.abs() > 2.5)
        .collect();
    want.sort_by(|a, b| b.0.abs().total_cmp(&a.0.abs()));
    assert_eq!(
        u.subjects
            .iter()
            .map(|s| s.subject.clone())
            .collect::<Vec<_>>(),
        want.iter().map(|w| w.1.clone()).collect::<Vec<_>>()
    );
    for (s, w) in u.subjects.iter().zip(&want) {
        assert!((s.robust_z - w.0).abs() <= 1e-4 * w.0.abs());
    }
    let oscale = 1.4826 * med(&res.iter().map(|r| r.abs()).collect::<Vec<_>>());
    let flagged: Vec<usize> = (0..res.len())
        .filter(|&k| (res[k] / oscale).abs() > 3.5)
        .collect();
    assert_eq!(u.observations.len(), flagged.len());
    assert_eq!(u.observations[0].row, panel.order()[17] + 1);
    assert_eq!(u.observations[0].residual, res[17]);
    for o in &u.observations {
        assert!((o.standardised - o.residual / oscale).abs() <= 1e-4 * o.standardised.abs());
    }
}

#[test]
fn permuting_input_rows_changes_nothing() {
    let (sim, panel) = simulated(200, 3);
    let n = sim.patient.len();
    let mut perm: Vec<usize> = (0..n).collect();
    let mut rng = Rng::new(99, 0);
    for i in (1..n).rev() {
        perm.swap(i, (rng.uniform() * (i + 1) as f64) as usize);
    }
    let pick = |v: &[f64]| perm.iter().map(|&k| v[k]).collect::<Vec<f64>>();
    let ids = SubjectIds::Int(perm.iter().map(|&k| Some(sim.patient[k])).collect());
    let shuffled = Panel::new(
        ids,
        &pick(&sim.years),
        &pick(&sim.egfr),
        vec![],
        Missing::Error,
    )
    .unwrap();
    let run = |p: &Panel| {
        let r = residuals(p, &MeanModel::Polynomial { degree: 2 }).unwrap();
        let ranking: Ranking = rank_subjects(p, &r.residuals, Summary::Slope).unwrap();
        let picks = pick_subjects(p, &r.residuals, &ranking, &[0.1, 0.5, 0.9]).unwrap();
        let sample = sample_subjects(p, Some(&ranking), 7, 4, Strategy::Spread).unwrap();
        let u = unusual(p, &r.residuals, &ranking, 2.0, 2.5).unwrap();
        (r, ranking, picks, sample, u)
    };
    let (a, b) = (run(&panel), run(&shuffled));
    assert_eq!(a.0.residuals, b.0.residuals); // panel order is the same sorted order
    assert_eq!(a.0.coefficients, b.0.coefficients);
    assert_eq!((&a.1, &a.2, &a.3), (&b.1, &b.2, &b.3));
    assert_eq!(a.4.subjects, b.4.subjects);
    assert!(!a.4.observations.is_empty());
    for (x, y) in a.4.observations.iter().zip(&b.4.observations) {
        // Row numbers follow the caller's rows: shuffled row j holds original row perm[j].
        assert_eq!(perm[y.row - 1] + 1, x.row);
        assert_eq!(
            (x.residual, &x.subject, x.time),
            (y.residual, &y.subject, y.time)
        );
    }
}

#[test]
fn bad_input_errors() {
    let ids = SubjectIds::Int(vec![Some(2), Some(1), Some(1)]);
    let panel = Panel::new(
        ids,
        &[0.0, 0.0, 0.0],
        &[1.0, 2.0, 3.0],
        vec![],
        Missing::Error,
    )
    .unwrap();
    let e = rank_subjects(&panel, &[1.0, 2.0], Summary::Mean).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`residuals` has 2 values but `response` has 3: give one value per row in each"
    );
    // Panel row 2 is input row 3 (subject 1's second row): the message names the input row.
    let e = rank_subjects(&panel, &[1.0, f64::NAN, 0.0], Summary::Mean).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`residuals` is not finite at row 3 (value NaN): remove the row or give a finite value"
    );
    let e = rank_subjects(&panel, &[1.0, 2.0, 3.0], Summary::Slope).unwrap_err();
    assert_eq!(
        e.to_string(),
        "too few subjects with a defined summary for a ranking by slope: need at least 1, found 0"
    );
    let res = [1.0, 2.0, 3.0];
    let ranking = rank_subjects(&panel, &res, Summary::Median).unwrap();
    let e = pick_subjects(&panel, &res, &ranking, &[0.5, 1.5]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`quantiles` = 1.5 is not allowed: quantiles in [0, 1]"
    );
    let e = sample_subjects(&panel, None, 0, 1, Strategy::Random).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`k` = 0 is not allowed: a number of subjects of at least 1"
    );
    let e = sample_subjects(&panel, None, 3, 1, Strategy::Random).unwrap_err();
    assert_eq!(
        e.to_string(),
        "too few subjects for a sample of k = 3: need at least 3, found 2"
    );
    for bad in [0.0, -1.0, f64::NAN] {
        let e = unusual(&panel, &res, &ranking, bad, 3.5).unwrap_err();
        assert_eq!(e.argument(), Some("subject_threshold"));
        let e = unusual(&panel, &res, &ranking, 3.5, bad).unwrap_err();
        assert_eq!(e.argument(), Some("observation_threshold"));
    }
    let e = unusual(&panel, &res, &ranking, 0.0, 3.5).unwrap_err();
    assert_eq!(e.to_string(), "`subject_threshold` = 0 is not allowed: a threshold on |robust z| > 0 (the default is 3.5)");
    let e = Summary::parse("quantile", Some(1.2)).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`p` = 1.2 is not allowed: a probability in [0, 1]"
    );
    let e = Summary::parse("quantile", None).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`p` = none is not allowed: the \"quantile\" summary needs p, a probability in [0, 1]"
    );
    let e = Summary::parse("mode", None).unwrap_err();
    assert_eq!(e.kind(), "invalid_option");
    // A ranking from another panel is refused.
    let other = Panel::new(
        SubjectIds::Int(vec![Some(5), Some(6)]),
        &[0.0, 0.0],
        &[0.0, 0.0],
        vec![],
        Missing::Error,
    )
    .unwrap();
    let r2 = rank_subjects(&other, &[0.0, 1.0], Summary::Mean).unwrap();
    let e = pick_subjects(&panel, &res, &r2, &[0.5]).unwrap_err();
    assert_eq!(e.argument(), Some("ranking"));
}
