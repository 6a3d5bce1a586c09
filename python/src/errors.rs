//! Mapping of [`tieline::Error`] to the Python exception classes of `tieline._errors`, done
//! once, here.

use pyo3::exceptions::PyRuntimeError;
use pyo3::prelude::*;
use pyo3::sync::PyOnceLock;
use pyo3::types::{PyDict, PyModule};
use tieline::Error;

static ERRORS: PyOnceLock<Py<PyModule>> = PyOnceLock::new();

fn errors_module(py: Python<'_>) -> PyResult<&Bound<'_, PyModule>> {
    ERRORS
        .get_or_try_init(py, || Ok::<_, PyErr>(py.import("tieline._errors")?.unbind()))
        .map(|m| m.bind(py))
}

/// Builds an exception of class `class` (in `tieline._errors`) with `message` and attributes.
pub fn make_exception(py: Python<'_>, class: &str, message: &str, attrs: &Bound<'_, PyDict>) -> PyErr {
    let build = || -> PyResult<PyErr> {
        let cls = errors_module(py)?.getattr(class)?;
        let exc = cls.call1((message,))?;
        for (k, v) in attrs.iter() {
            exc.setattr(k.cast::<pyo3::types::PyString>()?, v)?;
        }
        Ok(PyErr::from_value(exc))
    };
    match build() {
        Ok(e) => e,
        Err(e) => e,
    }
}

/// An `InvalidInputError` for a Python-side argument problem.
pub fn invalid(py: Python<'_>, what: &str, detail: &str) -> PyErr {
    to_py(py, &Error::invalid(what, detail), None)
}

/// The Python exception for a core error; `context` (e.g. "at point 17") prefixes the message.
pub fn to_py(py: Python<'_>, e: &Error, context: Option<&str>) -> PyErr {
    let message = match context {
        Some(c) => format!("{c}: {e}"),
        None => e.to_string(),
    };
    let attrs = PyDict::new(py);
    let fill = || -> PyResult<&'static str> {
        Ok(match e {
            Error::InvalidInput { what, detail } => {
                attrs.set_item("what", what)?;
                attrs.set_item("detail", detail)?;
                "InvalidInputError"
            }
            Error::UnknownComponent { name, suggestions } => {
                attrs.set_item("name", name)?;
                attrs.set_item("suggestions", suggestions.clone())?;
                "UnknownComponentError"
            }
            Error::OutsideValidity {
                what,
                value,
                min,
                max,
                detail,
            } => {
                attrs.set_item("what", what)?;
                attrs.set_item("value", value)?;
                attrs.set_item("min", min)?;
                attrs.set_item("max", max)?;
                attrs.set_item("detail", detail)?;
                "OutsideValidityError"
            }
            Error::NoSolution(_) => "NoSolutionError",
            Error::NotConverged { method, diagnostics } => {
                attrs.set_item("method", method)?;
                let it = PyDict::new(py);
                for (stage, n) in &diagnostics.iterations {
                    it.set_item(stage, n)?;
                }
                attrs.set_item("iterations", it)?;
                attrs.set_item("residual", diagnostics.residual)?;
                attrs.set_item("tolerance", diagnostics.tolerance)?;
                "ConvergenceError"
            }
            Error::Data(_) => "DataError",
            _ => "TielineError",
        })
    };
    match fill() {
        Ok(class) => make_exception(py, class, &message, &attrs),
        Err(err) => err,
    }
}

/// Converts a core result, mapping its error.
pub fn check<T>(py: Python<'_>, r: tieline::Result<T>) -> PyResult<T> {
    r.map_err(|e| to_py(py, &e, None))
}

/// An internal failure (a panic in a worker thread): never expected, reported rather than
/// crashing the interpreter.
pub fn internal(what: &str) -> PyErr {
    PyRuntimeError::new_err(format!("tieline internal error: {what}"))
}
