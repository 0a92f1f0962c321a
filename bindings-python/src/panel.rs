//! `Panel`: the core panel behind the Python class of the same name.

use numpy::{IntoPyArray, PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::PyList;
use trajweave_core::{Covariate, Missing, Panel, SubjectId, SubjectIds};

use crate::errors::{to_py, IntoPy};

/// The native panel; `trajweave.Panel` wraps it.
#[pyclass(name = "NativePanel", module = "trajweave._trajweave", frozen)]
pub struct NativePanel {
    pub inner: Panel,
}

/// Subject ids as the Python wrapper passes them: a float64 or int64 array, or a list of
/// ints or of texts where `None` is a missing id.
#[derive(FromPyObject)]
pub enum RawIds<'py> {
    Float(PyReadonlyArray1<'py, f64>),
    Int(PyReadonlyArray1<'py, i64>),
    IntList(Vec<Option<i64>>),
    Text(Vec<Option<String>>),
}

impl RawIds<'_> {
    fn into_core(self) -> SubjectIds {
        match self {
            RawIds::Float(a) => SubjectIds::Float(slice(&a)),
            RawIds::Int(a) => SubjectIds::Int(a.as_array().iter().map(|&i| Some(i)).collect()),
            RawIds::IntList(v) => SubjectIds::Int(v),
            RawIds::Text(v) => SubjectIds::Text(v),
        }
    }
}

/// Subject ids as a Python list of ints or strs.
pub fn id_list<'py>(py: Python<'py>, ids: &[SubjectId]) -> PyResult<Bound<'py, PyList>> {
    let items: Vec<Bound<'py, PyAny>> = ids
        .iter()
        .map(|id| match id {
            SubjectId::Int(i) => i
                .into_pyobject(py)
                .map(|o| o.into_any())
                .map_err(PyErr::from),
            SubjectId::Text(s) => s
                .into_pyobject(py)
                .map(|o| o.into_any())
                .map_err(PyErr::from),
        })
        .collect::<PyResult<_>>()?;
    PyList::new(py, items)
}

fn slice(a: &PyReadonlyArray1<'_, f64>) -> Vec<f64> {
    // Contiguous input is copied in one go; strided views element by element.
    a.as_slice()
        .map_or_else(|_| a.as_array().to_vec(), <[f64]>::to_vec)
}

#[pymethods]
impl NativePanel {
    #[new]
    #[pyo3(signature = (subject, time, response, names, covariates, missing))]
    fn new(
        py: Python<'_>,
        subject: RawIds<'_>,
        time: PyReadonlyArray1<'_, f64>,
        response: PyReadonlyArray1<'_, f64>,
        names: Vec<String>,
        covariates: Vec<PyReadonlyArray1<'_, f64>>,
        missing: &str,
    ) -> PyResult<Self> {
        let missing: Missing = missing.parse().py_err()?;
        let ids = subject.into_core();
        let (time, response) = (slice(&time), slice(&response));
        let covariates: Vec<Covariate> = names
            .into_iter()
            .zip(&covariates)
            .map(|(n, c)| Covariate::new(n, slice(c)))
            .collect();
        let inner = py
            .detach(|| Panel::new(ids, &time, &response, covariates, missing))
            .map_err(to_py)?;
        Ok(NativePanel { inner })
    }

    #[getter]
    fn n_subjects(&self) -> usize {
        self.inner.n_subjects()
    }

    #[getter]
    fn n_observations(&self) -> usize {
        self.inner.n_obs()
    }

    #[getter]
    fn n_rows(&self) -> usize {
        self.inner.n_input_rows()
    }

    #[getter]
    fn dropped_rows(&self) -> Vec<usize> {
        self.inner.dropped_rows().to_vec()
    }

    #[getter]
    fn dropped_by_column(&self) -> Vec<(String, usize)> {
        self.inner
            .dropped_by_column()
            .iter()
            .map(|c| (c.column.clone(), c.rows))
            .collect()
    }

    #[getter]
    fn subject_ids<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyList>> {
        id_list(py, self.inner.ids())
    }

    #[getter]
    fn offsets<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<usize>> {
        self.inner.offsets().to_vec().into_pyarray(py)
    }

    #[getter]
    fn time<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        self.inner.time().to_vec().into_pyarray(py)
    }

    #[getter]
    fn response<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        self.inner.response().to_vec().into_pyarray(py)
    }

    #[getter]
    fn is_binary(&self) -> bool {
        self.inner.is_binary()
    }

    #[getter]
    fn order<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<usize>> {
        self.inner.order().to_vec().into_pyarray(py)
    }

    #[getter]
    fn covariate_names(&self) -> Vec<String> {
        self.inner
            .covariates()
            .iter()
            .map(|c| c.name.clone())
            .collect()
    }

    fn covariate<'py>(&self, py: Python<'py>, name: &str) -> Option<Bound<'py, PyArray1<f64>>> {
        let c = self.inner.covariates().iter().find(|c| c.name == name)?;
        Some(c.values.clone().into_pyarray(py))
    }

    fn to_input_order<'py>(
        &self,
        py: Python<'py>,
        values: PyReadonlyArray1<'_, f64>,
    ) -> Bound<'py, PyArray1<f64>> {
        self.inner.to_input_order(&slice(&values)).into_pyarray(py)
    }
}
