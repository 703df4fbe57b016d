//! `rungs._rungs`: the Python extension over the `rungs` library (pyo3).
//!
//! Every computation runs with the GIL released ([`Python::detach`]) and returns the
//! JSON of the matching `rungs … --format json` command as a string, which the Python
//! package (`rungs/__init__.py`) decodes into dicts and NumPy arrays: one serialization,
//! so Python sees the command's keys and numbers. Bad input raises `rungs.LatticeError`
//! (a `ValueError`) with the command's message; a computation that does not converge
//! raises `rungs.ConvergenceError` (a `RuntimeError`).

use pyo3::create_exception;
use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use serde::Serialize;

create_exception!(
    rungs,
    LatticeError,
    PyValueError,
    "Bad input: a lattice file or YAML text that is not a valid lattice, an unknown level, or an argument that does not fit the lattice. The message is the `rungs` command's."
);
create_exception!(
    rungs,
    ConvergenceError,
    PyRuntimeError,
    "A computation that did not converge (the `rungs` command exits with status 1)."
);

/// The Python exception for a library error.
fn py_err(e: rungs::Error) -> PyErr {
    if e.is_bad_input() {
        LatticeError::new_err(e.to_string())
    } else {
        ConvergenceError::new_err(e.to_string())
    }
}

/// A result as JSON text, or the Python exception.
fn json<T: Serialize>(result: Result<T, rungs::Error>) -> PyResult<String> {
    let value = result.map_err(py_err)?;
    serde_json::to_string(&value)
        .map_err(|e| ConvergenceError::new_err(format!("cannot encode the result as JSON: {e}")))
}

/// A validated lattice (see `rungs.Lattice`).
#[pyclass(frozen, module = "rungs")]
struct Lattice {
    inner: rungs::Lattice,
}

#[pymethods]
impl Lattice {
    /// Read and validate the lattice file at `path`.
    #[staticmethod]
    fn from_file(py: Python<'_>, path: std::path::PathBuf) -> PyResult<Lattice> {
        let inner = py.detach(|| rungs::load(&path)).map_err(py_err)?;
        Ok(Lattice { inner })
    }

    /// Read and validate a lattice written as YAML text.
    #[staticmethod]
    fn from_yaml(py: Python<'_>, text: &str) -> PyResult<Lattice> {
        let inner = py.detach(|| rungs::from_yaml(text)).map_err(py_err)?;
        Ok(Lattice { inner })
    }

    /// The lattice's name.
    #[getter]
    fn name(&self) -> &str {
        self.inner.name()
    }

    /// Its levels in ladder order.
    #[getter]
    fn levels(&self) -> Vec<String> {
        rungs::levels(&self.inner)
    }

    /// Its spatial dimension.
    #[getter]
    fn dimension(&self) -> usize {
        self.inner.dimension()
    }

    /// The file's uniform field h.
    #[getter]
    fn field(&self) -> f64 {
        self.inner.field()
    }

    fn __repr__(&self) -> String {
        format!(
            "Lattice(name={:?}, dimension={}, levels={:?})",
            self.inner.name(),
            self.inner.dimension(),
            rungs::levels(&self.inner)
        )
    }
}

/// `rungs tc --format json` as text.
#[pyfunction]
#[pyo3(signature = (lattice, levels=None, field=None, supercell=None))]
fn tc_json(
    py: Python<'_>,
    lattice: &Lattice,
    levels: Option<Vec<String>>,
    field: Option<f64>,
    supercell: Option<Vec<usize>>,
) -> PyResult<String> {
    let request = rungs::TcRequest {
        levels,
        field,
        supercell,
    };
    py.detach(|| json(rungs::tc(&lattice.inner, &request)))
}

/// `rungs sweep --format json` as text.
#[pyfunction]
#[pyo3(signature = (lattice, levels, temps, fields, supercell=None))]
fn sweep_json(
    py: Python<'_>,
    lattice: &Lattice,
    levels: Vec<String>,
    temps: Vec<f64>,
    fields: Vec<f64>,
    supercell: Option<Vec<usize>>,
) -> PyResult<String> {
    let request = rungs::SweepRequest {
        levels,
        temperatures: temps,
        fields,
        supercell,
    };
    py.detach(|| json(rungs::sweep(&lattice.inner, &request)))
}

/// `rungs ladder --format json` as text.
#[pyfunction]
#[pyo3(signature = (lattice, up_to=None, monte_carlo=false, field=None))]
fn ladder_json(
    py: Python<'_>,
    lattice: &Lattice,
    up_to: Option<u32>,
    monte_carlo: bool,
    field: Option<f64>,
) -> PyResult<String> {
    let options = rungs::LadderOptions {
        up_to,
        monte_carlo,
        field: field.unwrap_or(lattice.inner.field()),
    };
    py.detach(|| json(rungs::ladder(&lattice.inner, options)))
}

/// `rungs mc --format json` as text.
#[pyfunction]
#[pyo3(signature = (lattice, sizes, temps, sweeps, warmup, seed))]
fn mc_json(
    py: Python<'_>,
    lattice: &Lattice,
    sizes: Vec<usize>,
    temps: Vec<f64>,
    sweeps: usize,
    warmup: usize,
    seed: u64,
) -> PyResult<String> {
    let config = rungs::McConfig {
        temperatures: temps,
        sweeps,
        warmup,
        seed,
        ..rungs::McConfig::default()
    };
    py.detach(|| {
        json(
            rungs::monte_carlo(&lattice.inner, &sizes, &config),
        )
    })
}

/// The extension module.
#[pymodule]
fn _rungs(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add_class::<Lattice>()?;
    m.add("LatticeError", py.get_type::<LatticeError>())?;
    m.add("ConvergenceError", py.get_type::<ConvergenceError>())?;
    m.add("COLUMNS", rungs::COLUMNS.to_vec())?;
    m.add_function(wrap_pyfunction!(tc_json, m)?)?;
    m.add_function(wrap_pyfunction!(sweep_json, m)?)?;
    m.add_function(wrap_pyfunction!(ladder_json, m)?)?;
    m.add_function(wrap_pyfunction!(mc_json, m)?)?;
    Ok(())
}
