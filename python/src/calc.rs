//! Calculations by name (`tieline::calc`): one scalar entry point returning a `Record`, and one
//! vectorised entry point returning the records' fields stacked as numpy columns. Every
//! calculation the core describes reaches Python through these two functions.

use crate::errors::{self, check};
use crate::parallel;
use crate::sweeps::{failures_to_py, feeds, slice};
use numpy::ndarray::{ArrayD, IxDyn};
use numpy::{IntoPyArray, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList, PyTuple};
use tieline::calc::{ColumnData, Columns, Plan, Record, Value, Workspace, run_points};
use tieline::equilibrium::batch::{BatchLayout, Partition, WarmStart, run_len};
use tieline::model::Model;

/// A calculation's result: named fields with SI units, read as attributes (numbers as float
/// or int, vectors and tables as numpy arrays, words as str, absent values as None).
#[pyclass(frozen, name = "Record", module = "tieline._core")]
pub struct PyRecord {
    inner: Record,
}

fn value_to_py<'py>(py: Python<'py>, v: &Value) -> PyResult<Bound<'py, PyAny>> {
    Ok(match v {
        Value::Number(x) => x.into_pyobject(py)?.into_any(),
        Value::Count(n) => n.into_pyobject(py)?.into_any(),
        Value::Flag(b) => b.into_pyobject(py)?.to_owned().into_any(),
        Value::Text(s) => s.into_pyobject(py)?.into_any(),
        Value::Numbers(v) => crate::records::arr(py, v).into_any(),
        Value::Texts(v) => PyList::new(py, v)?.into_any(),
        Value::Table(rows) => {
            let cols = rows.first().map_or(0, Vec::len);
            crate::records::arr2(py, rows.len(), cols, rows.iter().flatten().copied().collect())?
        }
        Value::Absent => py.None().into_bound(py),
    })
}

#[pymethods]
impl PyRecord {
    /// Which calculation produced the record.
    #[getter]
    fn kind(&self) -> &str {
        &self.inner.kind
    }

    /// The field names, in order.
    #[getter]
    fn fields(&self) -> Vec<String> {
        self.inner.fields.iter().map(|f| f.name.to_string()).collect()
    }

    /// The SI unit of each field that has one (dict name -> unit).
    #[getter]
    fn units<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let d = PyDict::new(py);
        for f in self.inner.fields.iter().filter(|f| !f.unit.is_empty()) {
            d.set_item(f.name.as_ref(), f.unit.as_ref())?;
        }
        Ok(d)
    }

    fn __getattr__<'py>(&self, py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
        match self.inner.field(name) {
            Some(f) => value_to_py(py, &f.value),
            None => Err(pyo3::exceptions::PyAttributeError::new_err(format!(
                "a {} record has no field '{name}'; its fields are: {}",
                self.inner.kind,
                self.fields().join(", ")
            ))),
        }
    }

    fn __getitem__<'py>(&self, py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
        match self.inner.field(name) {
            Some(f) => value_to_py(py, &f.value),
            None => Err(pyo3::exceptions::PyKeyError::new_err(name.to_string())),
        }
    }

    fn __contains__(&self, name: &str) -> bool {
        self.inner.field(name).is_some()
    }

    fn __dir__(&self) -> Vec<String> {
        let mut v = self.fields();
        v.extend(["kind", "fields", "units", "to_dict", "to_json"].map(String::from));
        v
    }

    /// The fields as a dict (numpy arrays for vectors and tables).
    fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let d = PyDict::new(py);
        for f in &self.inner.fields {
            d.set_item(f.name.as_ref(), value_to_py(py, &f.value)?)?;
        }
        Ok(d)
    }

    /// The record as JSON text (`{"kind": ..., <field>: <value>, ..., "units": {...}}`).
    fn to_json(&self) -> String {
        self.inner.to_json().to_string()
    }

    fn __eq__(&self, other: &Bound<'_, PyAny>) -> bool {
        other
            .cast::<PyRecord>()
            .map(|o| o.get().inner == self.inner)
            .unwrap_or(false)
    }

    fn __repr__(&self) -> String {
        let shown: Vec<String> = self
            .inner
            .fields
            .iter()
            .filter_map(|f| match &f.value {
                Value::Number(x) => Some(format!("{}={x:.6e}", f.name)),
                Value::Count(n) => Some(format!("{}={n}", f.name)),
                _ => None,
            })
            .take(6)
            .collect();
        format!("Record({}: {}, ...)", self.inner.kind, shown.join(", "))
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let f = py.import("tieline._core")?.getattr("_record_from_json")?;
        let text = crate::json_text(&self.inner)?;
        PyTuple::new(py, [f, PyTuple::new(py, [text])?.into_any()])
    }
}

/// Rebuilds a record from its serde JSON (pickling).
#[pyfunction]
pub fn _record_from_json(py: Python<'_>, text: &str) -> PyResult<PyRecord> {
    let inner: Record = serde_json::from_str(text)
        .map_err(|e| errors::invalid(py, "record", &format!("not a serialised record: {e}")))?;
    Ok(PyRecord { inner })
}

/// Describes calculation `name`: summary, arguments (name, unit, doc) and default options.
#[pyfunction]
pub fn describe_calculation<'py>(py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyDict>> {
    let c = check(py, tieline::calc::find(name))?;
    let d = PyDict::new(py);
    d.set_item("name", c.name)?;
    d.set_item("summary", c.summary)?;
    let args: Vec<(&str, &str, &str)> = c.arguments.iter().map(|a| (a.name, a.unit, a.doc)).collect();
    d.set_item("arguments", args)?;
    d.set_item("options", crate::records::value_to_py(py, &c.default_options(), false)?)?;
    d.set_item("feed_extension", c.feed_extension)?;
    Ok(d)
}

/// The names of all calculations.
#[pyfunction]
pub fn calculation_names() -> Vec<&'static str> {
    tieline::calc::CALCULATIONS.iter().map(|c| c.name).collect()
}

fn plan(py: Python<'_>, name: &str, options_json: Option<&str>) -> PyResult<Plan> {
    check(py, Plan::new(name, options_json))
}

/// Runs calculation `name` once: scalar `args` (the calculation's units) and feed amounts
/// (mol). The GIL is released while it runs.
#[pyfunction]
#[pyo3(signature = (model, name, args, feed, options_json=None))]
pub fn calc_point(
    py: Python<'_>,
    model: PyRef<'_, crate::PyModel>,
    name: &str,
    args: Vec<f64>,
    feed: PyReadonlyArray1<'_, f64>,
    options_json: Option<&str>,
) -> PyResult<PyRecord> {
    let plan = plan(py, name, options_json)?;
    let m: &Model = &model.inner;
    let feed = crate::amounts_slice(py, &feed)?;
    let r = py.detach(|| plan.run(&mut Workspace::default(), m, &args, feed));
    Ok(PyRecord { inner: check(py, r)? })
}

/// Runs calculation `name` at many points in parallel (GIL released): `args` is a list of
/// 1-D arrays, one per scalar argument, all of the same length; `amounts` has one row shared
/// by every point or one row per point. The layout is that of the core's flash batch: blocks
/// of `block_len(npts)` points (16 to 64) unless `block` fixes it, each computed by
/// `tieline::calc::run_points` with warm starts between near neighbours only. Returns
/// `{"columns": {name: (array, unit, shape)}, "ok": bool array, "failures": [(index,
/// exception)]}`; arrays are flat, point-major.
#[pyfunction]
#[pyo3(signature = (model, name, args, amounts, options_json=None, block=None, threads=None, progress=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn calc_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, crate::PyModel>,
    name: &str,
    args: Vec<PyReadonlyArray1<'py, f64>>,
    amounts: PyReadonlyArray2<'py, f64>,
    options_json: Option<&str>,
    block: Option<usize>,
    threads: Option<usize>,
    progress: Option<Bound<'py, PyAny>>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let plan = plan(py, name, options_json)?;
    let m: &Model = &model.inner;
    // The feed's width: the model's components, plus the species an option adds.
    let nc = amounts.shape()[1];
    let cols: Vec<&[f64]> = args
        .iter()
        .zip(plan.calculation().arguments)
        .map(|(a, spec)| slice(py, a, spec.name))
        .collect::<PyResult<_>>()?;
    let want = plan.calculation().arguments.len();
    if cols.len() != want {
        return Err(errors::invalid(
            py,
            "arguments",
            &format!("{} arrays given; {name} takes {want}", args.len()),
        ));
    }
    // Without scalar arguments the feed rows are the points.
    let npts = cols.first().map_or_else(|| amounts.shape()[0], |c| c.len());
    if let Some((c, spec)) = cols
        .iter()
        .zip(plan.calculation().arguments)
        .find(|(c, _)| c.len() != npts)
    {
        return Err(errors::invalid(
            py,
            spec.name,
            &format!("{} values for {npts} points", c.len()),
        ));
    }
    if block == Some(0) {
        return Err(errors::invalid(
            py,
            "block",
            "0; a block of at least 1 point is required",
        ));
    }
    // The layout of `flash_sweep` and the core's `flash_batch`: it depends on the points
    // alone, so the results do not depend on the thread count.
    let layout = BatchLayout {
        partition: block.map_or(Partition::Auto, Partition::Blocks),
        warm_start: WarmStart::Near,
    };
    let (f, per_point) = feeds(py, &amounts, npts, nc)?;
    let block = run_len(&layout, npts, parallel::effective_threads(threads));
    let nblocks = npts.div_ceil(block);
    let blocks = parallel::run(py, nblocks, npts, threads, progress.as_ref(), |b, ctl| {
        let mut ws = Workspace::default();
        let range = b * block..((b + 1) * block).min(npts);
        let mut out = Vec::with_capacity(range.len());
        // Once the sweep is cancelled its results are discarded: the remaining points of the
        // block get an empty feed, which every calculation refuses at its input check.
        let feed = |i: usize| {
            if ctl.cancelled() {
                &[][..]
            } else if per_point {
                &f[i * nc..(i + 1) * nc]
            } else {
                f
            }
        };
        let run = run_points(
            &plan,
            &mut ws,
            m,
            &cols,
            feed,
            range.clone(),
            layout.warm_start,
            |_, r| {
                out.push(r);
                ctl.advance(1);
            },
        );
        if let Err(e) = run {
            out = range.map(|_| Err(e.clone())).collect();
        }
        out
    })?;
    let results: Vec<_> = blocks.into_iter().flatten().collect();
    let stacked = py.detach(|| Columns::from_results(name, results));
    columns_to_py(py, stacked, raise_errors, |i| {
        let vals: Vec<String> = plan
            .calculation()
            .arguments
            .iter()
            .zip(&cols)
            .map(|(s, c)| format!("{} = {} {}", s.name, c[i], s.unit))
            .collect();
        format!("at point {i} ({})", vals.join(", "))
    })
}

fn columns_to_py<'py>(
    py: Python<'py>,
    c: Columns,
    raise_errors: bool,
    describe: impl Fn(usize) -> String,
) -> PyResult<Bound<'py, PyDict>> {
    let failures = failures_to_py(py, c.failures, raise_errors, describe)?;
    let cols = PyDict::new(py);
    for col in c.columns {
        let mut shape = vec![c.points];
        shape.extend(&col.shape);
        let arr: Bound<'py, PyAny> = match col.data {
            ColumnData::Numbers(v) => nd(py, &shape, v)?.into_any(),
            ColumnData::Counts(v) => nd(py, &shape, v.into_iter().map(|x| x as i64).collect())?.into_any(),
            ColumnData::Flags(v) => nd(py, &shape, v)?.into_any(),
            ColumnData::Texts(v) => {
                let np = py.import("numpy")?;
                np.call_method1("array", (v,))?
                    .call_method1("reshape", (shape.clone(),))?
            }
        };
        cols.set_item(col.name, (arr, col.unit, col.shape))?;
    }
    let d = PyDict::new(py);
    d.set_item("columns", cols)?;
    d.set_item("ok", nd(py, &[c.points], c.ok)?)?;
    d.set_item("failures", failures)?;
    Ok(d)
}

fn nd<'py, T: numpy::Element>(py: Python<'py>, shape: &[usize], v: Vec<T>) -> PyResult<Bound<'py, PyAny>> {
    let a = ArrayD::from_shape_vec(IxDyn(shape), v).map_err(|e| errors::internal(&e.to_string()))?;
    Ok(a.into_pyarray(py).into_any())
}
