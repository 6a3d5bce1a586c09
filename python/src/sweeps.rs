//! Vectorised calls: many points in, flat numpy arrays out, computed in parallel with the
//! GIL released. The Python layer broadcasts the inputs and restores their shape.

use crate::errors;
use crate::parallel;
use crate::records::arr2;
use numpy::{PyArray1, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};
use tieline::Error;
use tieline::equilibrium::batch::{BatchLayout, Partition, WarmStart, flash_run, run_len};
use tieline::equilibrium::{FlashContext, FlashResult};
use tieline::model::{FluidModel, Model, PhaseKind, PhaseState};

/// Inputs of a vectorised call, read from numpy before the GIL is released.
pub struct Points<'a> {
    /// One value per point (K or Pa).
    pub a: &'a [f64],
    /// One value per point (K or Pa), when the call takes two.
    pub b: &'a [f64],
    /// Amounts: one row of nc shared by all points, or one row per point (mol).
    pub feeds: &'a [f64],
    /// Whether `feeds` has one row per point.
    pub per_point: bool,
    /// Components.
    pub nc: usize,
}

impl Points<'_> {
    /// The feed of point `i`.
    pub fn feed(&self, i: usize) -> &[f64] {
        if self.per_point {
            &self.feeds[i * self.nc..(i + 1) * self.nc]
        } else {
            self.feeds
        }
    }
}

pub(crate) fn slice<'a>(py: Python<'_>, a: &'a PyReadonlyArray1<'_, f64>, what: &str) -> PyResult<&'a [f64]> {
    a.as_slice()
        .map_err(|_| errors::invalid(py, what, "a contiguous 1-D float64 array is required"))
}

/// Reads the feeds array: (1, nc) or (npts, nc).
pub fn feeds<'a>(
    py: Python<'_>,
    f: &'a PyReadonlyArray2<'_, f64>,
    npts: usize,
    nc: usize,
) -> PyResult<(&'a [f64], bool)> {
    let shape = f.shape();
    let s = f
        .as_slice()
        .map_err(|_| errors::invalid(py, "amounts", "a contiguous float64 array is required"))?;
    if shape[1] != nc {
        return Err(errors::invalid(
            py,
            "amounts",
            &format!("{} values per point for a model of {nc} components", shape[1]),
        ));
    }
    if shape[0] == 1 {
        Ok((s, false))
    } else if shape[0] == npts {
        Ok((s, true))
    } else {
        Err(errors::invalid(
            py,
            "amounts",
            &format!(
                "{} rows for {npts} points; 1 row or one per point is required",
                shape[0]
            ),
        ))
    }
}

/// Per-point failures, in index order.
pub(crate) type Failures = Vec<(usize, Error)>;

pub(crate) fn failures_to_py<'py>(
    py: Python<'py>,
    mut fails: Failures,
    raise: bool,
    describe: impl Fn(usize) -> String,
) -> PyResult<Bound<'py, PyList>> {
    fails.sort_by_key(|(i, _)| *i);
    if let (true, Some((i, e))) = (raise, fails.first()) {
        let err = errors::to_py(py, e, Some(&describe(*i)));
        err.value(py).setattr("index", *i)?;
        return Err(err);
    }
    let l = PyList::empty(py);
    for (i, e) in &fails {
        let err = errors::to_py(py, e, Some(&describe(*i)));
        err.value(py).setattr("index", *i)?;
        l.append((*i, err.value(py).clone()))?;
    }
    Ok(l)
}

/// Code of a phase kind in the flat arrays (0: no phase in that slot).
pub fn kind_code(k: Option<PhaseKind>) -> i8 {
    match k {
        None => 0,
        Some(PhaseKind::Vapor) => 1,
        Some(PhaseKind::Liquid) => 2,
        Some(PhaseKind::Liquid2) => 3,
        Some(PhaseKind::Solid) => 4,
        Some(PhaseKind::Liquid3) => 5,
        Some(_) => 6,
    }
}

/// Flat outputs of a block of flash points.
#[derive(Default)]
struct FlashBlock {
    num_phases: Vec<i64>,
    kind: Vec<i8>,
    fraction: Vec<f64>,
    amount: Vec<f64>,
    composition: Vec<f64>,
    molar_volume: Vec<f64>,
    z: Vec<f64>,
    ln_phi: Vec<f64>,
    vapor_fraction: Vec<f64>,
    residual: Vec<f64>,
    certificate: Vec<f64>,
    gibbs: Vec<f64>,
    stability_iterations: Vec<i64>,
    ss_iterations: Vec<i64>,
    newton_iterations: Vec<i64>,
    warm_start: Vec<bool>,
    ok: Vec<bool>,
    failures: Failures,
}

impl FlashBlock {
    /// Appends point `i`, in `slots` phase slots (the options' `max_phases`).
    fn push(&mut self, i: usize, nc: usize, slots: usize, r: Result<&FlashResult, Error>) {
        match r {
            Ok(r) if r.phases.len() <= slots => {
                self.num_phases.push(r.phases.len() as i64);
                for s in 0..slots {
                    match r.phases.get(s) {
                        Some(ph) => {
                            self.kind.push(kind_code(ph.kind));
                            self.fraction.push(ph.fraction);
                            self.amount.push(ph.amount);
                            self.composition.extend_from_slice(&ph.composition);
                            self.molar_volume.push(ph.molar_volume);
                            self.z.push(ph.z);
                            self.ln_phi.extend_from_slice(&ph.ln_phi);
                        }
                        None => self.empty_slot(nc),
                    }
                }
                let d = &r.diagnostics;
                self.vapor_fraction.push(r.vapor_fraction() + 0.0);
                self.residual.push(d.residual);
                self.certificate.push(d.certificate.unwrap_or(f64::NAN));
                self.gibbs.push(d.gibbs);
                self.stability_iterations.push(d.stability_iterations as i64);
                self.ss_iterations.push(d.ss_iterations as i64);
                self.newton_iterations.push(d.newton_iterations as i64);
                self.warm_start.push(d.warm_start);
                self.ok.push(true);
            }
            other => {
                let e = match other {
                    Err(e) => e,
                    Ok(r) => Error::invalid(
                        "phases",
                        format!(
                            "{} phases found; vectorised results hold at most {slots}",
                            r.phases.len()
                        ),
                    ),
                };
                self.num_phases.push(0);
                for _ in 0..slots {
                    self.empty_slot(nc);
                }
                for v in [
                    &mut self.vapor_fraction,
                    &mut self.residual,
                    &mut self.certificate,
                    &mut self.gibbs,
                ] {
                    v.push(f64::NAN);
                }
                for v in [
                    &mut self.stability_iterations,
                    &mut self.ss_iterations,
                    &mut self.newton_iterations,
                ] {
                    v.push(0);
                }
                self.warm_start.push(false);
                self.ok.push(false);
                self.failures.push((i, e));
            }
        }
    }

    fn empty_slot(&mut self, nc: usize) {
        self.kind.push(0);
        self.fraction.push(f64::NAN);
        self.amount.push(f64::NAN);
        self.composition.extend(std::iter::repeat_n(f64::NAN, nc));
        self.molar_volume.push(f64::NAN);
        self.z.push(f64::NAN);
        self.ln_phi.extend(std::iter::repeat_n(f64::NAN, nc));
    }

    fn append(&mut self, o: FlashBlock) {
        self.num_phases.extend(o.num_phases);
        self.kind.extend(o.kind);
        self.fraction.extend(o.fraction);
        self.amount.extend(o.amount);
        self.composition.extend(o.composition);
        self.molar_volume.extend(o.molar_volume);
        self.z.extend(o.z);
        self.ln_phi.extend(o.ln_phi);
        self.vapor_fraction.extend(o.vapor_fraction);
        self.residual.extend(o.residual);
        self.certificate.extend(o.certificate);
        self.gibbs.extend(o.gibbs);
        self.stability_iterations.extend(o.stability_iterations);
        self.ss_iterations.extend(o.ss_iterations);
        self.newton_iterations.extend(o.newton_iterations);
        self.warm_start.extend(o.warm_start);
        self.ok.extend(o.ok);
        self.failures.extend(o.failures);
    }
}

/// The vectorised PT flash (see `tieline.flash`).
#[pyfunction]
#[pyo3(signature = (model, temperature, pressure, amounts, options, block, threads=None, progress=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn flash_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, crate::PyModel>,
    temperature: PyReadonlyArray1<'py, f64>,
    pressure: PyReadonlyArray1<'py, f64>,
    amounts: PyReadonlyArray2<'py, f64>,
    options: PyRef<'py, crate::PyFlashOptions>,
    block: Option<usize>,
    threads: Option<usize>,
    progress: Option<Bound<'py, PyAny>>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let m: &Model = &model.inner;
    let nc = m.num_components();
    let t = slice(py, &temperature, "temperature")?;
    let p = slice(py, &pressure, "pressure")?;
    if t.len() != p.len() {
        return Err(errors::invalid(
            py,
            "pressure",
            &format!("{} values for {} temperatures", p.len(), t.len()),
        ));
    }
    if block == Some(0) {
        return Err(errors::invalid(
            py,
            "block",
            "0; a block of at least 1 point is required",
        ));
    }
    // The layout of the core's `flash_batch`: blocks of `block_len(npts)` points unless the
    // caller fixes the block, warm starts between near neighbours only. It depends on the
    // points alone, so the results do not depend on the thread count.
    let layout = BatchLayout {
        partition: block.map_or(Partition::Auto, Partition::Blocks),
        warm_start: WarmStart::Near,
    };
    let npts = t.len();
    let (f, per_point) = feeds(py, &amounts, npts, nc)?;
    let pts = Points {
        a: t,
        b: p,
        feeds: f,
        per_point,
        nc,
    };
    let opts = options.inner;
    let slots = opts.max_phases;
    let block = run_len(&layout, npts, parallel::effective_threads(threads));
    let nblocks = npts.div_ceil(block);
    let blocks = parallel::run(py, nblocks, npts, threads, progress.as_ref(), |b, ctl| {
        let mut fb = FlashBlock::default();
        let range = b * block..((b + 1) * block).min(npts);
        let mut ctx = FlashContext::new(nc);
        // Once the sweep is cancelled its results are discarded: the remaining points of the
        // block get an empty feed, which the flash rejects at its input check, so a long
        // block stops at once.
        let feed = |i: usize| if ctl.cancelled() { &[][..] } else { pts.feed(i) };
        flash_run(
            &mut ctx,
            m,
            pts.a,
            pts.b,
            feed,
            range,
            &opts,
            layout.warm_start,
            |i, r| {
                if !ctl.cancelled() {
                    fb.push(i, nc, slots, r.map_err(|e| e.clone()));
                    ctl.advance(1);
                }
            },
        );
        fb
    })?;
    let mut all = FlashBlock::default();
    for b in blocks {
        all.append(b);
    }
    let failures = failures_to_py(py, std::mem::take(&mut all.failures), raise_errors, |i| {
        format!("at point {i} (T = {} K, p = {} Pa)", t[i], p[i])
    })?;
    let d = PyDict::new(py);
    d.set_item("num_phases", PyArray1::from_vec(py, all.num_phases))?;
    d.set_item("kind", arr2i8(py, npts, slots, all.kind)?)?;
    d.set_item("fraction", arr2(py, npts, slots, all.fraction)?)?;
    d.set_item("amount", arr2(py, npts, slots, all.amount)?)?;
    d.set_item("composition", arr2(py, npts, slots * nc, all.composition)?)?;
    d.set_item("molar_volume", arr2(py, npts, slots, all.molar_volume)?)?;
    d.set_item("z", arr2(py, npts, slots, all.z)?)?;
    d.set_item("ln_phi", arr2(py, npts, slots * nc, all.ln_phi)?)?;
    d.set_item("vapor_fraction", PyArray1::from_vec(py, all.vapor_fraction))?;
    d.set_item("residual", PyArray1::from_vec(py, all.residual))?;
    d.set_item("certificate", PyArray1::from_vec(py, all.certificate))?;
    d.set_item("gibbs", PyArray1::from_vec(py, all.gibbs))?;
    d.set_item("stability_iterations", PyArray1::from_vec(py, all.stability_iterations))?;
    d.set_item("ss_iterations", PyArray1::from_vec(py, all.ss_iterations))?;
    d.set_item("newton_iterations", PyArray1::from_vec(py, all.newton_iterations))?;
    d.set_item("warm_start", PyArray1::from_vec(py, all.warm_start))?;
    d.set_item("ok", PyArray1::from_vec(py, all.ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}

fn arr2i8(py: Python<'_>, rows: usize, cols: usize, v: Vec<i8>) -> PyResult<Bound<'_, PyAny>> {
    use numpy::IntoPyArray;
    let a = numpy::ndarray::Array2::from_shape_vec((rows, cols), v).map_err(|e| errors::internal(&e.to_string()))?;
    Ok(a.into_pyarray(py).into_any())
}

/// Saturation curve of one component: `by` = "temperature" (values are T, K → p_sat) or
/// "pressure" (values are p, Pa → T_sat).
#[pyfunction]
#[pyo3(signature = (model, by, values, component, tolerance=None, max_iterations=None, threads=None, progress=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn saturation_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, crate::PyModel>,
    by: &str,
    values: PyReadonlyArray1<'py, f64>,
    component: usize,
    tolerance: Option<f64>,
    max_iterations: Option<usize>,
    threads: Option<usize>,
    progress: Option<Bound<'py, PyAny>>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let m: &Model = &model.inner;
    let vals = slice(py, &values, by)?;
    let opts = crate::saturation_options(tolerance, max_iterations);
    let by_t = match by {
        "temperature" => true,
        "pressure" => false,
        other => {
            return Err(errors::invalid(
                py,
                "by",
                &format!("'{other}'; \"temperature\" or \"pressure\" is required"),
            ));
        }
    };
    let n = vals.len();
    let res = parallel::run(py, n, n, threads, progress.as_ref(), |i, ctl| {
        let r = if by_t {
            tieline::equilibrium::saturation_pressure(m, vals[i], component, &opts)
        } else {
            tieline::equilibrium::saturation_temperature(m, vals[i], component, &opts)
        };
        ctl.advance(1);
        r
    })?;
    let cols = [
        "temperature",
        "pressure",
        "liquid_molar_volume",
        "vapor_molar_volume",
        "liquid_density",
        "vapor_density",
        "enthalpy_of_vaporization",
        "residual",
    ];
    let mut data: Vec<Vec<f64>> = vec![Vec::with_capacity(n); cols.len()];
    let mut iters = Vec::with_capacity(n);
    let mut ok = Vec::with_capacity(n);
    let mut fails = Failures::new();
    for (i, r) in res.into_iter().enumerate() {
        match r {
            Ok(s) => {
                let row = [
                    s.temperature,
                    s.pressure,
                    s.liquid_molar_volume,
                    s.vapor_molar_volume,
                    s.liquid_density,
                    s.vapor_density,
                    s.enthalpy_of_vaporization,
                    s.residual,
                ];
                for (c, v) in data.iter_mut().zip(row) {
                    c.push(v);
                }
                iters.push(s.iterations as i64);
                ok.push(true);
            }
            Err(e) => {
                for c in data.iter_mut() {
                    c.push(f64::NAN);
                }
                // The given coordinate is known even when the point failed.
                data[if by_t { 0 } else { 1 }][i] = vals[i];
                iters.push(0);
                ok.push(false);
                fails.push((i, e));
            }
        }
    }
    let unit = if by_t { "K" } else { "Pa" };
    let failures = failures_to_py(py, fails, raise_errors, |i| {
        format!("at point {i} ({by} = {} {unit})", vals[i])
    })?;
    let d = PyDict::new(py);
    for (c, v) in cols.iter().zip(data) {
        d.set_item(*c, PyArray1::from_vec(py, v))?;
    }
    d.set_item("iterations", PyArray1::from_vec(py, iters))?;
    d.set_item("ok", PyArray1::from_vec(py, ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}

/// Bubble or dew points at many T (or p) values: `which` is one of "bubble_pressure",
/// "dew_pressure", "bubble_temperature", "dew_temperature".
#[pyfunction]
#[pyo3(signature = (model, which, values, amounts, tolerance=None, max_iterations=None, threads=None, progress=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn bubble_dew_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, crate::PyModel>,
    which: &str,
    values: PyReadonlyArray1<'py, f64>,
    amounts: PyReadonlyArray2<'py, f64>,
    tolerance: Option<f64>,
    max_iterations: Option<usize>,
    threads: Option<usize>,
    progress: Option<Bound<'py, PyAny>>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let m: &Model = &model.inner;
    let nc = m.num_components();
    let vals = slice(py, &values, "values")?;
    let n = vals.len();
    let (f, per_point) = feeds(py, &amounts, n, nc)?;
    let pts = Points {
        a: vals,
        b: vals,
        feeds: f,
        per_point,
        nc,
    };
    let opts = crate::saturation_options(tolerance, max_iterations);
    let solve = crate::bubble_dew_solver(py, which)?;
    let res = parallel::run(py, n, n, threads, progress.as_ref(), |i, ctl| {
        let r = solve(m, vals[i], pts.feed(i), &opts);
        ctl.advance(1);
        r
    })?;
    let mut t = Vec::with_capacity(n);
    let mut p = Vec::with_capacity(n);
    let mut incipient = Vec::with_capacity(n * nc);
    let mut kv = Vec::with_capacity(n * nc);
    let mut vf = Vec::with_capacity(n);
    let mut vi = Vec::with_capacity(n);
    let mut resid = Vec::with_capacity(n);
    let mut iters = Vec::with_capacity(n);
    let mut ok = Vec::with_capacity(n);
    let mut fails = Failures::new();
    let pressure_unknown = which.ends_with("pressure");
    for (i, r) in res.into_iter().enumerate() {
        match r {
            Ok(b) => {
                t.push(b.temperature);
                p.push(b.pressure);
                incipient.extend_from_slice(&b.incipient);
                kv.extend_from_slice(&b.k_values);
                vf.push(b.feed_molar_volume);
                vi.push(b.incipient_molar_volume);
                resid.push(b.residual);
                iters.push((b.ss_iterations + b.newton_iterations) as i64);
                ok.push(true);
            }
            Err(e) => {
                if pressure_unknown {
                    t.push(vals[i]);
                    p.push(f64::NAN);
                } else {
                    t.push(f64::NAN);
                    p.push(vals[i]);
                }
                incipient.extend(std::iter::repeat_n(f64::NAN, nc));
                kv.extend(std::iter::repeat_n(f64::NAN, nc));
                for v in [&mut vf, &mut vi, &mut resid] {
                    v.push(f64::NAN);
                }
                iters.push(0);
                ok.push(false);
                fails.push((i, e));
            }
        }
    }
    let (name, unit) = if pressure_unknown { ("T", "K") } else { ("p", "Pa") };
    let failures = failures_to_py(py, fails, raise_errors, |i| {
        format!("at point {i} ({name} = {} {unit})", vals[i])
    })?;
    let d = PyDict::new(py);
    d.set_item("temperature", PyArray1::from_vec(py, t))?;
    d.set_item("pressure", PyArray1::from_vec(py, p))?;
    d.set_item("incipient", arr2(py, n, nc, incipient)?)?;
    d.set_item("k_values", arr2(py, n, nc, kv)?)?;
    d.set_item("feed_molar_volume", PyArray1::from_vec(py, vf))?;
    d.set_item("incipient_molar_volume", PyArray1::from_vec(py, vi))?;
    d.set_item("residual", PyArray1::from_vec(py, resid))?;
    d.set_item("iterations", PyArray1::from_vec(py, iters))?;
    d.set_item("ok", PyArray1::from_vec(py, ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}

/// Properties of single phases on a chosen root at many (T, p, n) points.
#[pyfunction]
#[pyo3(signature = (model, temperature, pressure, amounts, root, threads=None, raise_errors=true))]
#[allow(clippy::too_many_arguments)]
pub fn properties_sweep<'py>(
    py: Python<'py>,
    model: PyRef<'py, crate::PyModel>,
    temperature: PyReadonlyArray1<'py, f64>,
    pressure: PyReadonlyArray1<'py, f64>,
    amounts: PyReadonlyArray2<'py, f64>,
    root: &str,
    threads: Option<usize>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let m: &Model = &model.inner;
    let nc = m.num_components();
    let t = slice(py, &temperature, "temperature")?;
    let p = slice(py, &pressure, "pressure")?;
    if t.len() != p.len() {
        return Err(errors::invalid(
            py,
            "pressure",
            &format!("{} values for {} temperatures", p.len(), t.len()),
        ));
    }
    let n = t.len();
    let (f, per_point) = feeds(py, &amounts, n, nc)?;
    let pts = Points {
        a: t,
        b: p,
        feeds: f,
        per_point,
        nc,
    };
    let root = crate::root_choice(py, root)?;
    let res = parallel::run(py, n, n, threads, None, |i, ctl| {
        let r = PhaseState::new(m, t[i], p[i], pts.feed(i), root).and_then(|s| Ok((s.properties(m)?, s.kind)));
        ctl.advance(1);
        r
    })?;
    let scalar = [
        "molar_volume",
        "molar_density",
        "mass_density",
        "molar_mass",
        "z",
        "enthalpy",
        "entropy",
        "gibbs",
        "internal_energy",
        "helmholtz",
        "cp",
        "cv",
        "speed_of_sound",
        "joule_thomson",
        "isothermal_compressibility",
        "thermal_expansion",
        "residual_enthalpy",
        "residual_entropy",
        "residual_gibbs",
    ];
    let mut cols: Vec<Vec<f64>> = vec![Vec::with_capacity(n); scalar.len()];
    let mut lnphi = Vec::with_capacity(n * nc);
    let mut fug = Vec::with_capacity(n * nc);
    let mut kinds = Vec::with_capacity(n);
    let mut ok = Vec::with_capacity(n);
    let mut fails = Failures::new();
    for (i, r) in res.into_iter().enumerate() {
        match r {
            Ok((pr, kind)) => {
                let row = [
                    pr.molar_volume,
                    pr.molar_density,
                    pr.mass_density,
                    pr.molar_mass,
                    pr.z,
                    pr.enthalpy,
                    pr.entropy,
                    pr.gibbs,
                    pr.internal_energy,
                    pr.helmholtz,
                    pr.cp,
                    pr.cv,
                    pr.speed_of_sound,
                    pr.joule_thomson,
                    pr.isothermal_compressibility,
                    pr.thermal_expansion,
                    pr.residual_enthalpy,
                    pr.residual_entropy,
                    pr.residual_gibbs,
                ];
                for (c, v) in cols.iter_mut().zip(row) {
                    c.push(v);
                }
                lnphi.extend_from_slice(&pr.ln_phi);
                fug.extend_from_slice(&pr.fugacity);
                kinds.push(kind_code(Some(kind)));
                ok.push(true);
            }
            Err(e) => {
                for c in cols.iter_mut() {
                    c.push(f64::NAN);
                }
                lnphi.extend(std::iter::repeat_n(f64::NAN, nc));
                fug.extend(std::iter::repeat_n(f64::NAN, nc));
                kinds.push(0);
                ok.push(false);
                fails.push((i, e));
            }
        }
    }
    let failures = failures_to_py(py, fails, raise_errors, |i| {
        format!("at point {i} (T = {} K, p = {} Pa)", t[i], p[i])
    })?;
    let d = PyDict::new(py);
    for (c, v) in scalar.iter().zip(cols) {
        d.set_item(*c, PyArray1::from_vec(py, v))?;
    }
    d.set_item("ln_phi", arr2(py, n, nc, lnphi)?)?;
    d.set_item("fugacity", arr2(py, n, nc, fug)?)?;
    d.set_item("kind", PyArray1::from_vec(py, kinds))?;
    d.set_item("ok", PyArray1::from_vec(py, ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}
