//! Conversion of core results into the plain record classes of `tieline._results`.

use numpy::ndarray::Array2;
use numpy::{IntoPyArray, PyArray1};
use pyo3::prelude::*;
use pyo3::sync::PyOnceLock;
use pyo3::types::{PyDict, PyList, PyModule, PyTuple};
use serde_json::Value;
use tieline::equilibrium::{BubbleDew, StabilityResult};
use tieline::model::PhaseKind;

static RESULTS: PyOnceLock<Py<PyModule>> = PyOnceLock::new();

/// The class `name` of `tieline._results`.
pub fn class<'py>(py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
    RESULTS
        .get_or_try_init(py, || Ok::<_, PyErr>(py.import("tieline._results")?.unbind()))?
        .bind(py)
        .getattr(name)
}

/// A float vector as a numpy array.
pub fn arr<'py>(py: Python<'py>, v: &[f64]) -> Bound<'py, PyArray1<f64>> {
    PyArray1::from_slice(py, v)
}

/// A row-major matrix as a 2-D numpy array.
pub fn arr2(py: Python<'_>, rows: usize, cols: usize, v: Vec<f64>) -> PyResult<Bound<'_, PyAny>> {
    let a = Array2::from_shape_vec((rows, cols), v).map_err(|e| crate::errors::internal(&e.to_string()))?;
    Ok(a.into_pyarray(py).into_any())
}

/// The Python name of a phase kind.
pub fn kind_name(k: Option<PhaseKind>) -> &'static str {
    match k {
        Some(PhaseKind::Vapor) => "vapor",
        Some(PhaseKind::Liquid) => "liquid",
        Some(PhaseKind::Liquid2) => "liquid2",
        Some(PhaseKind::Solid) => "solid",
        Some(PhaseKind::Liquid3) => "liquid3",
        Some(_) => "other",
        None => "unknown",
    }
}

/// A serde value as a Python object: numbers stay int or float, arrays of numbers become
/// numpy arrays when `arrays`, objects become dicts.
pub fn value_to_py<'py>(py: Python<'py>, v: &Value, arrays: bool) -> PyResult<Bound<'py, PyAny>> {
    Ok(match v {
        Value::Null => py.None().into_bound(py),
        Value::Bool(b) => b.into_pyobject(py)?.to_owned().into_any(),
        Value::Number(n) => {
            if let Some(i) = n.as_i64().filter(|_| !n.is_f64()) {
                i.into_pyobject(py)?.into_any()
            } else {
                n.as_f64().unwrap_or(f64::NAN).into_pyobject(py)?.into_any()
            }
        }
        Value::String(s) => s.into_pyobject(py)?.into_any(),
        Value::Array(items) => {
            if arrays && !items.is_empty() && items.iter().all(|x| x.is_number()) {
                let v: Vec<f64> = items.iter().map(|x| x.as_f64().unwrap_or(f64::NAN)).collect();
                arr(py, &v).into_any()
            } else {
                let l = PyList::empty(py);
                for x in items {
                    l.append(value_to_py(py, x, arrays)?)?;
                }
                l.into_any()
            }
        }
        Value::Object(m) => {
            let d = PyDict::new(py);
            for (k, x) in m {
                d.set_item(k, value_to_py(py, x, arrays)?)?;
            }
            d.into_any()
        }
    })
}

/// A serialisable core record as the keyword arguments of its Python record class.
pub fn kwargs<'py, T: serde::Serialize>(py: Python<'py>, r: &T) -> PyResult<Bound<'py, PyDict>> {
    let v = serde_json::to_value(r).map_err(|e| crate::errors::internal(&e.to_string()))?;
    let d = value_to_py(py, &v, true)?;
    Ok(d.cast_into::<PyDict>()?)
}

/// Calls record class `name` with `kw`.
pub fn build<'py>(py: Python<'py>, name: &str, kw: &Bound<'py, PyDict>) -> PyResult<Bound<'py, PyAny>> {
    class(py, name)?.call((), Some(kw))
}

/// A stability result as `tieline.StabilityResult`.
pub fn stability_result<'py>(py: Python<'py>, r: &StabilityResult) -> PyResult<Bound<'py, PyAny>> {
    let kw = kwargs(py, r)?;
    let mut points = Vec::with_capacity(r.points.len());
    for p in &r.points {
        points.push(build(py, "StationaryPoint", &kwargs(py, p)?)?);
    }
    kw.set_item("points", PyTuple::new(py, points)?)?;
    build(py, "StabilityResult", &kw)
}

/// A bubble or dew point as `tieline.BubbleDewPoint`.
pub fn bubble_dew<'py>(py: Python<'py>, r: &BubbleDew) -> PyResult<Bound<'py, PyAny>> {
    build(py, "BubbleDewPoint", &kwargs(py, r)?)
}
