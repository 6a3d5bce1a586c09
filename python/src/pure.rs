//! Phase equilibrium of a pure substance over a fluid model and solids (the engine of
//! `tieline.PureSubstance`): the stable phase, two-phase coexistence and traced boundaries,
//! the triple point and the Gibbs-energy curves with their crossings.
//!
//! Phases are named "liquid", "vapor" and, for the solids of the set, "solid" when there is
//! one solid, else "solid0", "solid1", ... in the order given. Units are SI: K, Pa, J, m3, mol.

use crate::errors::{self, check, invalid};
use crate::solids::{PySolid, SolidKind, solid_list};
use crate::sweeps::{Failures, failures_to_py, slice};
use crate::{PyModel, parallel, records};
use numpy::{PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList, PyTuple};
use std::sync::Arc;
use tieline::equilibrium::{Coexistence, PhasePoint, PurePhase, PurePhases};
use tieline::model::{Model, SolidModel};

/// The name of a phase in a set of `ns` solids.
pub fn label(p: PurePhase, ns: usize) -> String {
    match p {
        PurePhase::Liquid => "liquid".into(),
        PurePhase::Vapor => "vapor".into(),
        PurePhase::Solid(k) if ns == 1 && k == 0 => "solid".into(),
        PurePhase::Solid(k) => format!("solid{k}"),
    }
}

/// The phase named `s` in a set of `ns` solids.
fn parse(py: Python<'_>, s: &str, ns: usize, what: &str) -> PyResult<PurePhase> {
    let key = s.trim().to_ascii_lowercase();
    let allowed = || {
        let mut v = vec!["\"liquid\"".to_string(), "\"vapor\"".to_string()];
        match ns {
            0 => {}
            1 => v.push("\"solid\"".into()),
            _ => v.extend((0..ns).map(|k| format!("\"solid{k}\""))),
        }
        v.join(", ")
    };
    match key.as_str() {
        "liquid" => return Ok(PurePhase::Liquid),
        "vapor" | "vapour" => return Ok(PurePhase::Vapor),
        "solid" if ns == 1 => return Ok(PurePhase::Solid(0)),
        "solid" if ns > 1 => {
            return Err(invalid(
                py,
                what,
                &format!(
                    "\"solid\" is ambiguous with {ns} solids; one of {} is required",
                    allowed()
                ),
            ));
        }
        _ => {}
    }
    if let Some(k) = key.strip_prefix("solid").and_then(|d| d.parse::<usize>().ok())
        && k < ns
    {
        return Ok(PurePhase::Solid(k));
    }
    Err(invalid(
        py,
        what,
        &format!("'{s}'; one of {} is required (the set has {ns} solids)", allowed()),
    ))
}

/// The inputs of a pure-substance call, owned so that the work can run without the GIL.
struct Set {
    model: Arc<Model>,
    component: usize,
    solids: Vec<Arc<SolidKind>>,
}

impl Set {
    fn new(model: &PyModel, component: usize, solids: &[PyRef<'_, PySolid>]) -> Self {
        Set {
            model: model.inner.clone(),
            component,
            solids: solid_list(solids),
        }
    }

    fn phases(&self, py: Python<'_>) -> PyResult<PurePhases<'_, Model>> {
        let refs: Vec<&dyn SolidModel> = self.solids.iter().map(|s| s.model()).collect();
        check(py, PurePhases::new(&*self.model, self.component, refs))
    }

    fn ns(&self) -> usize {
        self.solids.len()
    }

    /// The two phases of a coexistence call.
    fn pair(&self, py: Python<'_>, a: &str, b: &str) -> PyResult<(PurePhase, PurePhase)> {
        Ok((parse(py, a, self.ns(), "phases")?, parse(py, b, self.ns(), "phases")?))
    }
}

fn point<'py>(py: Python<'py>, p: &PhasePoint, ns: usize) -> PyResult<Bound<'py, PyAny>> {
    let kw = records::kwargs(py, p)?;
    kw.set_item("phase", label(p.phase, ns))?;
    records::build(py, "PhasePoint", &kw)
}

fn coexistence<'py>(py: Python<'py>, c: &Coexistence, ns: usize) -> PyResult<Bound<'py, PyAny>> {
    let kw = PyDict::new(py);
    kw.set_item("phases", (label(c.phases.0, ns), label(c.phases.1, ns)))?;
    kw.set_item("temperature", c.temperature)?;
    kw.set_item("pressure", c.pressure)?;
    kw.set_item(
        "states",
        PyTuple::new(py, [point(py, &c.states.0, ns)?, point(py, &c.states.1, ns)?])?,
    )?;
    kw.set_item("delta_h", c.delta_h)?;
    kw.set_item("delta_s", c.delta_s)?;
    kw.set_item("delta_v", c.delta_v)?;
    kw.set_item("clapeyron_slope", c.clapeyron_slope)?;
    kw.set_item("iterations", c.iterations)?;
    records::build(py, "Coexistence", &kw)
}

/// Checks a set and returns its phase names (liquid, vapour, then the solids).
#[pyfunction]
pub fn pure_phases(
    py: Python<'_>,
    model: PyRef<'_, PyModel>,
    component: usize,
    solids: Vec<PyRef<'_, PySolid>>,
) -> PyResult<Vec<String>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    Ok(ph.phases().into_iter().map(|p| label(p, set.ns())).collect())
}

/// One phase at (T, p), or None where it does not exist or is outside its model's range.
#[pyfunction]
#[allow(clippy::too_many_arguments)]
pub fn pure_evaluate<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    phase: &str,
    temperature: f64,
    pressure: f64,
) -> PyResult<Option<Bound<'py, PyAny>>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let which = parse(py, phase, set.ns(), "phase")?;
    match check(py, ph.evaluate(which, temperature, pressure))? {
        Some(p) => Ok(Some(point(py, &p, set.ns())?)),
        None => Ok(None),
    }
}

/// The stable phase at one (T, p) with every candidate that exists there.
#[pyfunction]
pub fn pure_stable_phase<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    temperature: f64,
    pressure: f64,
) -> PyResult<Bound<'py, PyAny>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let r = check(py, py.detach(|| ph.stable_phase(temperature, pressure)))?;
    let kw = PyDict::new(py);
    kw.set_item("stable", point(py, &r.stable, set.ns())?)?;
    let c: Vec<Bound<'py, PyAny>> = r
        .candidates
        .iter()
        .map(|p| point(py, p, set.ns()))
        .collect::<PyResult<_>>()?;
    kw.set_item("candidates", PyTuple::new(py, c)?)?;
    records::build(py, "StablePhase", &kw)
}

/// The stable phase at many (T, p) points, in parallel with the GIL released: the index of
/// the stable phase in the set's phase list (−1 where a point failed) and its molar g, h, s, v.
#[pyfunction]
#[pyo3(signature = (model, component, solids, temperature, pressure, threads=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn pure_stable_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    temperature: PyReadonlyArray1<'py, f64>,
    pressure: PyReadonlyArray1<'py, f64>,
    threads: Option<usize>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let t = slice(py, &temperature, "temperature")?;
    let p = slice(py, &pressure, "pressure")?;
    if t.len() != p.len() {
        return Err(invalid(
            py,
            "pressure",
            &format!("{} values for {} temperatures", p.len(), t.len()),
        ));
    }
    let order = ph.phases();
    let n = t.len();
    let res = parallel::run(py, n, n, threads, None, |i, ctl| {
        let r = ph.stable_phase(t[i], p[i]).map(|s| s.stable);
        ctl.advance(1);
        r
    })?;
    let mut index = Vec::with_capacity(n);
    let mut cols: Vec<Vec<f64>> = (0..4).map(|_| Vec::with_capacity(n)).collect();
    let mut ok = Vec::with_capacity(n);
    let mut fails = Failures::new();
    for (i, r) in res.into_iter().enumerate() {
        match r {
            Ok(s) => {
                index.push(order.iter().position(|&x| x == s.phase).map_or(-1, |k| k as i64));
                for (c, v) in cols.iter_mut().zip([s.gibbs, s.enthalpy, s.entropy, s.molar_volume]) {
                    c.push(v);
                }
                ok.push(true);
            }
            Err(e) => {
                index.push(-1);
                for c in cols.iter_mut() {
                    c.push(f64::NAN);
                }
                ok.push(false);
                fails.push((i, e));
            }
        }
    }
    let failures = failures_to_py(py, fails, raise_errors, |i| {
        format!("at point {i} (T = {} K, p = {} Pa)", t[i], p[i])
    })?;
    let d = PyDict::new(py);
    d.set_item("index", PyArray1::from_vec(py, index))?;
    for (name, c) in ["gibbs", "enthalpy", "entropy", "molar_volume"].iter().zip(cols) {
        d.set_item(*name, PyArray1::from_vec(py, c))?;
    }
    d.set_item("ok", PyArray1::from_vec(py, ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}

fn by_temperature(py: Python<'_>, by: &str) -> PyResult<bool> {
    match by {
        "temperature" => Ok(true),
        "pressure" => Ok(false),
        _ => Err(invalid(
            py,
            "by",
            &format!("'{by}'; \"temperature\" or \"pressure\" is required"),
        )),
    }
}

/// Coexistence of two phases at a given temperature (`by` = "temperature", `value` in K; the
/// pressure is solved) or pressure (`by` = "pressure", Pa; the temperature is solved).
#[pyfunction]
#[pyo3(signature = (model, component, solids, by, phase_a, phase_b, value, guess=None))]
#[allow(clippy::too_many_arguments)]
pub fn pure_coexistence<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    by: &str,
    phase_a: &str,
    phase_b: &str,
    value: f64,
    guess: Option<f64>,
) -> PyResult<Bound<'py, PyAny>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let (a, b) = set.pair(py, phase_a, phase_b)?;
    let at_t = by_temperature(py, by)?;
    let r = py.detach(|| {
        if at_t {
            ph.coexistence_at_temperature(a, b, value, guess)
        } else {
            ph.coexistence_at_pressure(a, b, value, guess)
        }
    });
    coexistence(py, &check(py, r)?, set.ns())
}

/// A two-phase boundary traced along temperatures (`by` = "temperature") or pressures, each
/// point started from the previous one: flat arrays.
#[pyfunction]
#[pyo3(signature = (model, component, solids, by, phase_a, phase_b, values, guess=None))]
#[allow(clippy::too_many_arguments)]
pub fn pure_trace<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    by: &str,
    phase_a: &str,
    phase_b: &str,
    values: PyReadonlyArray1<'py, f64>,
    guess: Option<f64>,
) -> PyResult<Bound<'py, PyDict>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let (a, b) = set.pair(py, phase_a, phase_b)?;
    let at_t = by_temperature(py, by)?;
    let xs = slice(py, &values, by)?;
    if xs.is_empty() {
        return Err(invalid(py, by, "an empty array; at least one value is required"));
    }
    let r = py.detach(|| {
        if at_t {
            ph.trace_along_temperature(a, b, xs, guess)
        } else {
            ph.trace_along_pressure(a, b, xs, guess)
        }
    });
    let pts = check(py, r)?;
    let col = |f: &dyn Fn(&Coexistence) -> f64| PyArray1::from_vec(py, pts.iter().map(f).collect());
    let pair = |f: &dyn Fn(&PhasePoint) -> f64| -> PyResult<Bound<'py, PyAny>> {
        let v: Vec<f64> = pts.iter().flat_map(|c| [f(&c.states.0), f(&c.states.1)]).collect();
        records::arr2(py, pts.len(), 2, v)
    };
    let d = PyDict::new(py);
    d.set_item("phases", (label(a, set.ns()), label(b, set.ns())))?;
    d.set_item("temperature", col(&|c| c.temperature))?;
    d.set_item("pressure", col(&|c| c.pressure))?;
    d.set_item("gibbs", col(&|c| c.states.0.gibbs))?;
    d.set_item("delta_h", col(&|c| c.delta_h))?;
    d.set_item("delta_s", col(&|c| c.delta_s))?;
    d.set_item("delta_v", col(&|c| c.delta_v))?;
    d.set_item("clapeyron_slope", col(&|c| c.clapeyron_slope))?;
    d.set_item("enthalpy", pair(&|p| p.enthalpy)?)?;
    d.set_item("entropy", pair(&|p| p.entropy)?)?;
    d.set_item("molar_volume", pair(&|p| p.molar_volume)?)?;
    d.set_item(
        "iterations",
        PyArray1::from_vec(py, pts.iter().map(|c| c.iterations as i64).collect()),
    )?;
    Ok(d)
}

/// The triple point of solid `solid` (a phase name) with the liquid and the vapour.
#[pyfunction]
#[pyo3(signature = (model, component, solids, solid, t_guess=None))]
pub fn pure_triple_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    solid: &str,
    t_guess: Option<f64>,
) -> PyResult<Bound<'py, PyAny>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let k = match parse(py, solid, set.ns(), "solid")? {
        PurePhase::Solid(k) => k,
        _ => {
            return Err(invalid(
                py,
                "solid",
                &format!("'{solid}'; the triple point is asked of a solid of the set"),
            ));
        }
    };
    let tp = check(py, py.detach(|| ph.triple_point(k, t_guess)))?;
    let kw = PyDict::new(py);
    kw.set_item("temperature", tp.temperature)?;
    kw.set_item("pressure", tp.pressure)?;
    let pts: Vec<Bound<'py, PyAny>> = tp
        .phases
        .iter()
        .map(|p| point(py, p, set.ns()))
        .collect::<PyResult<_>>()?;
    kw.set_item("phases", PyTuple::new(py, pts)?)?;
    kw.set_item("residual", tp.residual)?;
    kw.set_item("iterations", tp.iterations)?;
    records::build(py, "TriplePoint", &kw)
}

/// Gibbs-energy curves of every phase: `by` = "temperature" (isobaric at `fixed` Pa over the
/// temperature grid, K) or "pressure" (isothermal at `fixed` K over the pressure grid, Pa).
#[pyfunction]
#[allow(clippy::too_many_arguments)]
pub fn pure_gibbs_curves<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    component: usize,
    solids: Vec<PyRef<'py, PySolid>>,
    by: &str,
    fixed: f64,
    grid: PyReadonlyArray1<'py, f64>,
) -> PyResult<Bound<'py, PyDict>> {
    let set = Set::new(&model, component, &solids);
    let ph = set.phases(py)?;
    let along_t = by_temperature(py, by)?;
    let xs = slice(py, &grid, by)?;
    let r = py.detach(|| {
        if along_t {
            ph.gibbs_curves_isobaric(fixed, xs)
        } else {
            ph.gibbs_curves_isothermal(fixed, xs)
        }
    });
    let g = check(py, r).map_err(|e| {
        // The core names the grid "grid"; say which argument that is.
        if e.value(py).getattr("what").is_ok_and(|w| w.to_string() == "grid") {
            let plural = if along_t { "temperatures" } else { "pressures" };
            errors::invalid(py, plural, "at least two strictly ascending values are required")
        } else {
            e
        }
    })?;
    let ns = set.ns();
    let nx = xs.len();
    let labels: Vec<String> = g.curves.iter().map(|(p, _)| label(*p, ns)).collect();
    let values: Vec<f64> = g
        .curves
        .iter()
        .flat_map(|(_, v)| v.iter().map(|x| x.unwrap_or(f64::NAN)))
        .collect();
    let crossings = PyList::empty(py);
    for c in &g.crossings {
        let kw = PyDict::new(py);
        kw.set_item("point", coexistence(py, &c.point, ns)?)?;
        kw.set_item("gibbs", c.gibbs)?;
        kw.set_item("stable", c.stable)?;
        crossings.append(records::build(py, "Crossing", &kw)?)?;
    }
    let d = PyDict::new(py);
    d.set_item("phases", labels)?;
    d.set_item("grid", PyArray1::from_slice(py, &g.grid))?;
    d.set_item("gibbs", records::arr2(py, g.curves.len(), nx, values)?)?;
    d.set_item("crossings", crossings)?;
    Ok(d)
}
