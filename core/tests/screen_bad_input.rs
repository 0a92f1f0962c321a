//! Covariance screening: bad input gives typed errors naming the argument, never a panic;
//! degenerate data (duplicated visit times) gives a -inf fit with a note, ranked last.
//! Expected values are worked out by hand from the inputs below.

use trajweave_core::correlation::screen::{
    implied_correlation, screen_structures, structure_loglik, ScreenOptions, Structure,
};
use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};

/// Input rows deliberately not sorted: subject 2 first.
fn panel() -> Panel {
    let ids = SubjectIds::Int(vec![Some(2), Some(2), Some(1), Some(1), Some(1)]);
    let time = [1.0, 0.0, 0.0, 1.0, 2.5];
    Panel::new(ids, &time, &[0.0; 5], vec![], Missing::Error).unwrap()
}

const R: [f64; 5] = [0.5, -0.2, 0.1, 0.9, -0.4];

#[test]
fn resid_length_and_non_finite() {
    let p = panel();
    let e = screen_structures(&p, &R[..4], &ScreenOptions::default()).unwrap_err();
    assert_eq!((e.kind(), e.argument()), ("length_mismatch", Some("resid")));
    // Panel row 3 is subject 2 at time 0, the caller's row 2 (counted from 1).
    let mut r = R;
    r[3] = f64::NAN;
    let e = screen_structures(&p, &r, &ScreenOptions::default()).unwrap_err();
    assert_eq!(
        (e.kind(), e.argument(), e.row()),
        ("non_finite", Some("resid"), Some(2))
    );
    let e = structure_loglik(&p, &r, Structure::Independence, &[1.0], None).unwrap_err();
    assert_eq!(e.row(), Some(2));
}

#[test]
fn names_and_parameters() {
    let e = Structure::parse("compound_symmetry").unwrap_err();
    assert_eq!(
        (e.kind(), e.argument()),
        ("invalid_option", Some("candidates"))
    );
    assert!(e.to_string().contains("intercept_exponential_error"));
    let p = panel();
    let e = structure_loglik(&p, &R, Structure::Exponential, &[1.0], None).unwrap_err();
    assert_eq!(
        (e.kind(), e.argument()),
        ("invalid_option", Some("parameters"))
    );
    assert!(e.to_string().contains("variance, range"));
    let e = structure_loglik(&p, &R, Structure::Exponential, &[1.0, -2.0], None).unwrap_err();
    assert!(e.to_string().contains("range must be > 0"));
    let e = structure_loglik(&p, &R, Structure::Exchangeable, &[f64::NAN, 1.0], None).unwrap_err();
    assert_eq!(e.argument(), Some("parameters"));
    let e = structure_loglik(&p, &R, Structure::Toeplitz, &[1.0, 0.5], None).unwrap_err();
    assert_eq!(e.argument(), Some("grid"));
    // Random slope: the correlation in [-1, 1], the error variance > 0 without a serial part.
    let s = Structure::InterceptSlopeError;
    let e = structure_loglik(&p, &R, s, &[1.0, 0.5, 1.5, 1.0], None).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`parameters` = intercept_slope_correlation = 1.5 is not allowed: \
         intercept_slope_correlation must be in [-1, 1]"
    );
    let e = structure_loglik(&p, &R, s, &[1.0, 0.5, 0.2, 0.0], None).unwrap_err();
    assert!(e.to_string().contains("error_variance must be > 0"), "{e}");
    let s = Structure::InterceptSlopeExponentialError;
    let e = structure_loglik(&p, &R, s, &[1.0, 0.5, 0.2, 0.0, 1.0, 0.0], None).unwrap_err();
    assert!(e
        .to_string()
        .contains("serial_variance + error_variance must be > 0"));
    assert!(structure_loglik(&p, &R, s, &[0.0, 0.0, 0.0, 0.0, 1.0, 0.3], None).is_ok());
}

#[test]
fn implied_correlation_refuses_bad_input() {
    let s = Structure::Exponential;
    let e = implied_correlation(s, &[1.0, 1.0], f64::NAN, &[1.0], None).unwrap_err();
    assert_eq!((e.kind(), e.argument()), ("invalid_option", Some("time")));
    let e = implied_correlation(s, &[1.0, 1.0], 0.0, &[1.0, f64::INFINITY], None).unwrap_err();
    assert_eq!(e.argument(), Some("lags"));
    let e = implied_correlation(s, &[1.0], 0.0, &[1.0], None).unwrap_err();
    assert_eq!(e.argument(), Some("parameters"));
    let e = implied_correlation(Structure::Toeplitz, &[1.0, 0.5], 0.0, &[1.0], None).unwrap_err();
    assert_eq!(e.argument(), Some("grid"));
    // On a grid: bins of t and t + u (closed form c_1 / c_0 = 0.5); NaN outside every bin.
    let g = TimeGrid::schedule(vec![0.0, 1.0], 0.2).unwrap();
    let c = implied_correlation(
        Structure::Toeplitz,
        &[2.0, 1.0],
        0.0,
        &[0.0, 1.1, 3.0],
        Some(&g),
    )
    .unwrap();
    assert_eq!(c[..2], [1.0, 0.5]);
    assert!(c[2].is_nan());
}

#[test]
fn too_few_and_options() {
    let one = Panel::new(
        SubjectIds::Int(vec![Some(1), Some(1)]),
        &[0.0, 1.0],
        &[0.0, 0.0],
        vec![],
        Missing::Error,
    )
    .unwrap();
    let e = screen_structures(&one, &[1.0, 2.0], &ScreenOptions::default()).unwrap_err();
    assert_eq!(e.kind(), "too_few");
    let p = panel();
    for bad in [
        ScreenOptions {
            candidates: vec![],
            ..Default::default()
        },
        ScreenOptions {
            max_iterations: 0,
            ..Default::default()
        },
        ScreenOptions {
            convergence: 0.0,
            ..Default::default()
        },
    ] {
        assert_eq!(
            screen_structures(&p, &R, &bad).unwrap_err().kind(),
            "invalid_option"
        );
    }
}

#[test]
fn grid_structures_are_skipped_or_refused() {
    let p = panel();
    // With other candidates: skipped with a reason.
    let s = screen_structures(&p, &R, &ScreenOptions::default()).unwrap();
    assert_eq!(s.skipped.len(), 2);
    assert!(s.skipped[0].reason.contains("grid"));
    // Only toeplitz, no grid: an error naming `grid`.
    let only = ScreenOptions {
        candidates: vec![Structure::Toeplitz],
        ..Default::default()
    };
    let e = screen_structures(&p, &R, &only).unwrap_err();
    assert_eq!((e.kind(), e.argument()), ("invalid_option", Some("grid")));
    // A grid missing the visit at 2.5: refused when asked only for unstructured.
    let g = TimeGrid::schedule(vec![0.0, 1.0, 2.0], 0.2).unwrap();
    let only = ScreenOptions {
        candidates: vec![Structure::Unstructured],
        grid: Some(g.clone()),
        ..Default::default()
    };
    let e = screen_structures(&p, &R, &only).unwrap_err();
    assert!(e.to_string().contains("no bin"), "{e}");
    // More than 12 bins: skipped.
    let wide = TimeGrid::edges((0..=13).map(f64::from).collect()).unwrap();
    let o = ScreenOptions {
        grid: Some(wide),
        ..Default::default()
    };
    let s = screen_structures(&p, &R, &o).unwrap();
    assert!(s.skipped[0].reason.contains("at most 12"));
}

#[test]
fn duplicated_times_give_minus_infinity_last() {
    // Subject 1 has two visits at time 1: V of a pure serial structure has two equal rows.
    let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2), Some(3)]);
    let p = Panel::new(
        ids,
        &[1.0, 1.0, 0.0, 1.0, 0.0],
        &[0.0; 5],
        vec![],
        Missing::Error,
    )
    .unwrap();
    let s = screen_structures(&p, &R, &ScreenOptions::default()).unwrap();
    let last = &s.fits[s.fits.len() - 2..];
    for f in last {
        assert!(["exponential", "gaussian"].contains(&f.structure.as_str()));
        assert_eq!(f.loglik, f64::NEG_INFINITY);
        assert!(f.note.as_deref().unwrap().contains("duplicated"));
    }
    let l = structure_loglik(&p, &R, Structure::Exponential, &[1.0, 1.0], None).unwrap();
    assert_eq!(l, f64::NEG_INFINITY);
}
