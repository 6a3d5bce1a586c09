//! The short paths of the scalar calls, and the Rust-side timing entry points of
//! `python/bench/bench_overhead.py`.
//!
//! `tieline.flash`, `saturation_pressure` / `saturation_temperature` and `phase_properties`
//! first try these functions with the arguments as given: when the model is a `Model` and the
//! feed is already a contiguous float64 array (or a list of floats) of one amount per
//! component, the core is called directly; otherwise they return None and the Python layer
//! takes its general path (conversions, broadcasting and its messages for bad arguments).
//! Values are checked by the core either way, so both paths give the same results and the
//! same typed errors. Units: K, Pa, mol.

use crate::errors::check;
use crate::{PyFlashOptions, PyModel, results, root_choice, saturation_options};
use numpy::{PyArray1, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyFloat, PyList};
use std::hint::black_box;
use std::time::Instant;
use tieline::equilibrium::{FlashOptions, flash_pt, saturation_pressure, saturation_temperature};
use tieline::model::{FluidModel, Model, PhaseState};

/// Feed amounts (mol) taken as they are: a contiguous float64 1-D array or a list of floats
/// with `nc` entries, copied (a few values; cheaper than a tracked borrow of the array); None
/// for anything else.
fn amounts(feed: &Bound<'_, PyAny>, nc: usize) -> Option<Vec<f64>> {
    if let Ok(a) = feed.cast::<PyArray1<f64>>() {
        if a.len() != nc || !a.is_c_contiguous() {
            return None;
        }
        return a.to_vec().ok();
    }
    let l = feed.cast_exact::<PyList>().ok()?;
    if l.len() != nc {
        return None;
    }
    let mut v = Vec::with_capacity(nc);
    for x in l.iter() {
        v.push(x.cast_exact::<PyFloat>().ok()?.value());
    }
    Some(v)
}

/// PT flash of one point (T in K, p in Pa, feed in mol) when the arguments need no
/// conversion; None otherwise.
#[pyfunction]
pub fn _flash_fast<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    temperature: f64,
    pressure: f64,
    feed: &Bound<'py, PyAny>,
    options: PyRef<'py, PyFlashOptions>,
) -> PyResult<Option<Bound<'py, PyAny>>> {
    let Ok(m) = model.cast::<PyModel>() else {
        return Ok(None);
    };
    let m = &m.get().inner;
    let Some(n) = amounts(feed, m.num_components()) else {
        return Ok(None);
    };
    let r = check(py, flash_pt(&**m, temperature, pressure, &n, &options.inner))?;
    results::flash_result(py, r).map(Some)
}

/// Saturation state of component `component` (an index in range) at a temperature (K,
/// `by` = "temperature") or pressure (Pa); None when the index is out of range (the Python
/// layer then explains).
#[pyfunction]
pub fn _saturation_fast<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    by: &str,
    value: f64,
    component: usize,
) -> PyResult<Option<Bound<'py, PyAny>>> {
    let Ok(m) = model.cast::<PyModel>() else {
        return Ok(None);
    };
    let m = &m.get().inner;
    if component >= m.num_components() {
        return Ok(None);
    }
    let o = saturation_options(None, None);
    let r = if by == "temperature" {
        saturation_pressure(&**m, value, component, &o)
    } else {
        saturation_temperature(&**m, value, component, &o)
    };
    results::saturation(py, check(py, r)?).map(Some)
}

fn properties_of<'py>(
    py: Python<'py>,
    m: &Model,
    t: f64,
    p: f64,
    n: &[f64],
    root: &str,
) -> PyResult<Bound<'py, PyAny>> {
    let root = root_choice(py, root)?;
    let state = check(py, PhaseState::new(m, t, p, n, root))?;
    let props = check(py, state.properties(m))?;
    results::properties(py, props, state.kind)
}

/// Properties of one phase of `amounts` (mol) at T (K) and p (Pa) on the volume root `root`
/// when the arguments need no conversion; None otherwise.
#[pyfunction]
pub fn _properties_fast<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    temperature: f64,
    pressure: f64,
    amounts_: &Bound<'py, PyAny>,
    root: &str,
) -> PyResult<Option<Bound<'py, PyAny>>> {
    let Ok(m) = model.cast::<PyModel>() else {
        return Ok(None);
    };
    let m = &m.get().inner;
    let Some(n) = amounts(amounts_, m.num_components()) else {
        return Ok(None);
    };
    properties_of(py, m, temperature, pressure, &n, root).map(Some)
}

/// Properties of one phase of `amounts` (mol, checked) at T (K) and p (Pa) on `root`.
#[pyfunction]
pub fn properties_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: Vec<f64>,
    root: &str,
) -> PyResult<Bound<'py, PyAny>> {
    properties_of(py, &model.inner, temperature, pressure, &amounts, root)
}

/// Seconds per call of `calls` repetitions of `f` (at least one), on this thread.
fn per_call(calls: usize, mut f: impl FnMut() -> bool) -> Option<f64> {
    let calls = calls.max(1);
    let s = Instant::now();
    for _ in 0..calls {
        if !black_box(f()) {
            return None;
        }
    }
    Some(s.elapsed().as_secs_f64() / calls as f64)
}

fn timing_failed(py: Python<'_>, what: &str) -> PyErr {
    crate::errors::invalid(py, what, "the timed call failed; time a point that succeeds")
}

/// The Rust cost of the scalar flash: seconds per call of `calls` repetitions of the core's
/// `flash_pt` on these arguments (no conversion to Python objects), for the overhead bench.
#[pyfunction]
pub fn _time_rust_flash(
    py: Python<'_>,
    model: PyRef<'_, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: Vec<f64>,
    options: PyRef<'_, PyFlashOptions>,
    calls: usize,
) -> PyResult<f64> {
    let o: FlashOptions = options.inner;
    per_call(calls, || {
        flash_pt(&*model.inner, black_box(temperature), pressure, &amounts, &o).is_ok()
    })
    .ok_or_else(|| timing_failed(py, "flash"))
}

/// The Rust cost of one saturation state (as `_time_rust_flash`).
#[pyfunction]
pub fn _time_rust_saturation(
    py: Python<'_>,
    model: PyRef<'_, PyModel>,
    by: &str,
    value: f64,
    component: usize,
    calls: usize,
) -> PyResult<f64> {
    let o = saturation_options(None, None);
    let m = &*model.inner;
    per_call(calls, || {
        if by == "temperature" {
            saturation_pressure(m, black_box(value), component, &o).is_ok()
        } else {
            saturation_temperature(m, black_box(value), component, &o).is_ok()
        }
    })
    .ok_or_else(|| timing_failed(py, "saturation"))
}

/// The Rust cost of the properties of one phase (as `_time_rust_flash`).
#[pyfunction]
pub fn _time_rust_properties(
    py: Python<'_>,
    model: PyRef<'_, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: Vec<f64>,
    root: &str,
    calls: usize,
) -> PyResult<f64> {
    let root = root_choice(py, root)?;
    let m = &*model.inner;
    per_call(calls, || {
        PhaseState::new(m, black_box(temperature), pressure, &amounts, root)
            .and_then(|s| s.properties(m))
            .is_ok()
    })
    .ok_or_else(|| timing_failed(py, "properties"))
}
