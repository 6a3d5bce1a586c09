//! Conversion of core results into the plain record classes of `tieline._results`.

use numpy::ndarray::Array2;
use numpy::{IntoPyArray, PyArray1};
use pyo3::prelude::*;
use pyo3::sync::PyOnceLock;
use pyo3::types::{PyDict, PyList, PyModule, PyTuple};
use serde_json::Value;
use tieline::equilibrium::{BubbleDew, FlashResult, Phase, StabilityResult};
use tieline::model::{PhaseKind, Properties};

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

fn phase<'py>(py: Python<'py>, ph: &Phase) -> PyResult<Bound<'py, PyAny>> {
    let kw = PyDict::new(py);
    kw.set_item("kind", kind_name(ph.kind))?;
    kw.set_item("amount", ph.amount)?;
    kw.set_item("fraction", ph.fraction)?;
    kw.set_item("composition", arr(py, &ph.composition))?;
    kw.set_item("molar_volume", ph.molar_volume)?;
    kw.set_item("z", ph.z)?;
    kw.set_item("ln_phi", arr(py, &ph.ln_phi))?;
    build(py, "Phase", &kw)
}

/// A flash result as `tieline.FlashResult`.
pub fn flash_result<'py>(py: Python<'py>, r: &FlashResult) -> PyResult<Bound<'py, PyAny>> {
    let phases: Vec<Bound<'py, PyAny>> = r.phases.iter().map(|p| phase(py, p)).collect::<PyResult<_>>()?;
    let d = &r.diagnostics;
    let dk = PyDict::new(py);
    dk.set_item("stability_iterations", d.stability_iterations)?;
    dk.set_item("ss_iterations", d.ss_iterations)?;
    dk.set_item("accelerations", d.accelerations)?;
    dk.set_item("newton_iterations", d.newton_iterations)?;
    dk.set_item("residual", d.residual)?;
    dk.set_item("certificate", d.certificate)?;
    dk.set_item("certificate_iterations", d.certificate_iterations)?;
    dk.set_item("warm_start", d.warm_start)?;
    dk.set_item("splits_tried", d.splits_tried)?;
    dk.set_item("gibbs", d.gibbs)?;
    let kw = PyDict::new(py);
    kw.set_item("temperature", r.temperature)?;
    kw.set_item("pressure", r.pressure)?;
    kw.set_item("feed", arr(py, &r.feed))?;
    kw.set_item("phases", PyTuple::new(py, phases)?)?;
    match &r.tie_line {
        Some(tl) => {
            let t = PyDict::new(py);
            t.set_item("beta", tl.beta)?;
            t.set_item("x", arr(py, &tl.x))?;
            t.set_item("y", arr(py, &tl.y))?;
            kw.set_item("tie_line", build(py, "TieLine", &t)?)?
        }
        None => kw.set_item("tie_line", py.None())?,
    }
    kw.set_item("diagnostics", build(py, "FlashDiagnostics", &dk)?)?;
    build(py, "FlashResult", &kw)
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

/// Phase properties as `tieline.Properties`, with the phase kind.
pub fn properties<'py>(py: Python<'py>, r: &Properties, kind: PhaseKind) -> PyResult<Bound<'py, PyAny>> {
    let kw = kwargs(py, r)?;
    kw.set_item("kind", kind_name(Some(kind)))?;
    build(py, "Properties", &kw)
}
