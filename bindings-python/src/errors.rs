//! Core errors raised as the package's own exception classes (defined in
//! `trajweave/errors.py`, so each can also derive from `ValueError`).

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use trajweave_core::Error;

/// The Python class for each core error kind: one table, every kind listed.
fn class_name(kind: &str) -> &'static str {
    match kind {
        "length_mismatch" => "LengthMismatchError",
        "non_finite" => "NonFiniteError",
        "missing" => "MissingValueError",
        "invalid_value" => "InvalidValueError",
        "invalid_option" => "InvalidOptionError",
        "empty" => "EmptyInputError",
        "too_few" => "TooFewError",
        _ => "TrajweaveError",
    }
}

/// Converts a core error into the matching Python exception.
pub fn to_py(e: Error) -> PyErr {
    Python::attach(|py| {
        let make = || -> PyResult<PyErr> {
            let module = py.import("trajweave.errors")?;
            let class = module.getattr(class_name(e.kind()))?;
            let args = PyTuple::new(py, [e.to_string()])?;
            Ok(PyErr::from_value(class.call1(args)?))
        };
        make().unwrap_or_else(|import_failed| import_failed)
    })
}

/// `Result` with core errors converted.
pub trait IntoPy<T> {
    /// Converts the error side.
    fn py_err(self) -> PyResult<T>;
}

impl<T> IntoPy<T> for Result<T, Error> {
    fn py_err(self) -> PyResult<T> {
        self.map_err(to_py)
    }
}
