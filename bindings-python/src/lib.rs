//! The native module `trajweave._trajweave`: converts arguments, calls the core, converts
//! results. Files mirror the core's modules; no statistics live here.

use pyo3::prelude::*;

mod describe;
mod errors;
mod panel;
mod simulate;

#[pymodule]
fn _trajweave(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<panel::NativePanel>()?;
    m.add_function(wrap_pyfunction!(describe::describe_panel, m)?)?;
    m.add_function(wrap_pyfunction!(simulate::simulate_columns, m)?)?;
    m.add_function(wrap_pyfunction!(simulate::simulated_columns, m)?)?;
    Ok(())
}
