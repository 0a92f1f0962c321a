//! The native module `trajweave._trajweave`: converts arguments, calls the core, converts
//! results. Files mirror the core's modules; no statistics live here.

use pyo3::prelude::*;

mod change;
mod correlation;
mod covariates;
mod describe;
mod errors;
mod individuals;
mod mean_curve;
mod panel;
mod report;
mod simulate;
mod smoother;
mod tune;

#[pymodule]
fn _trajweave(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<panel::NativePanel>()?;
    m.add_function(wrap_pyfunction!(describe::describe_panel, m)?)?;
    m.add_function(wrap_pyfunction!(simulate::simulate_columns, m)?)?;
    m.add_function(wrap_pyfunction!(simulate::simulated_columns, m)?)?;
    m.add_function(wrap_pyfunction!(smoother::fit_smoother, m)?)?;
    m.add_function(wrap_pyfunction!(smoother::predict_curve, m)?)?;
    m.add_function(wrap_pyfunction!(smoother::smoother_settings, m)?)?;
    m.add_function(wrap_pyfunction!(mean_curve::panel_mean_curve, m)?)?;
    m.add_function(wrap_pyfunction!(tune::panel_tune_smoother, m)?)?;
    m.add_function(wrap_pyfunction!(change::panel_average_change, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::values_equal_count_bands, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::panel_covariate_bands, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::panel_conditional_trends, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::panel_group_curves, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::panel_dropout_curves, m)?)?;
    m.add_function(wrap_pyfunction!(covariates::panel_trajectory_grid, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::panel_binned_correlation, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::panel_variogram, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::variogram_fit, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::variogram_compare, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::panel_process_variance, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::panel_screen_structures, m)?)?;
    m.add_function(wrap_pyfunction!(correlation::panel_structure_loglik, m)?)?;
    m.add_function(wrap_pyfunction!(
        correlation::structure_implied_correlation,
        m
    )?)?;
    m.add_function(wrap_pyfunction!(report::panel_report, m)?)?;
    m.add_class::<individuals::NativeRanking>()?;
    m.add_class::<individuals::NativeValues>()?;
    m.add_function(wrap_pyfunction!(individuals::panel_residuals, m)?)?;
    m.add_function(wrap_pyfunction!(individuals::input_order, m)?)?;
    m.add_function(wrap_pyfunction!(individuals::panel_rank_subjects, m)?)?;
    m.add_function(wrap_pyfunction!(individuals::panel_pick_subjects, m)?)?;
    m.add_function(wrap_pyfunction!(individuals::panel_sample_subjects, m)?)?;
    m.add_function(wrap_pyfunction!(individuals::panel_unusual, m)?)?;
    Ok(())
}
