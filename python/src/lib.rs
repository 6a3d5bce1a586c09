//! The compiled core of the `tieline` Python package (`tieline._core`).
//!
//! A thin layer over the `tieline` crate: models and data banks as Python classes, scalar
//! calls returning the record classes of `tieline._results`, vectorised calls taking flat numpy
//! arrays and releasing the GIL while rayon computes. Errors map once to the exception classes
//! of `tieline._errors` (module `errors`). The public Python API and its docs live in the
//! pure-Python package; this crate is its engine. Units are SI: K, Pa, mol, m3, J.

mod calc;
mod errors;
mod fast;
mod parallel;
mod pure;
mod records;
mod results;
mod solids;
mod sweeps;
mod water;

use errors::{check, invalid};
use numpy::{PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyTuple, PyType};
use std::sync::Arc;
use tieline::equilibrium::{BubbleDew, FlashOptions, SaturationOptions, StabilityOptions};
use tieline::model::{CubicKind, FluidModel, Model, ModelDescription, PhaseKind, PhaseState, RootChoice};
use tieline::substance::DataBank;

/// A data bank of pure components.
#[pyclass(frozen, name = "ComponentBank", module = "tieline._core")]
pub struct PyBank {
    inner: Arc<DataBank>,
    embedded: bool,
}

pub(crate) fn json_text<T: serde::Serialize>(v: &T) -> PyResult<String> {
    serde_json::to_string(v).map_err(|e| errors::internal(&e.to_string()))
}

#[pymethods]
impl PyBank {
    /// The bank compiled into the library.
    #[staticmethod]
    fn embedded() -> Self {
        PyBank {
            inner: Arc::new(DataBank::embedded().clone()),
            embedded: true,
        }
    }

    /// Parses a component file (TOML text); with `include_embedded` its components are added
    /// to those of the embedded bank.
    #[staticmethod]
    #[pyo3(signature = (text, include_embedded=false))]
    fn from_toml(py: Python<'_>, text: &Bound<'_, PyAny>, include_embedded: bool) -> PyResult<Self> {
        let text: String = text.extract().map_err(|_| {
            errors::invalid(
                py,
                "text",
                &format!(
                    "{}; the TOML text as str is required (decode bytes first, e.g. data.decode(\"utf-8\"))",
                    text.get_type().name().map(|n| n.to_string()).unwrap_or_default()
                ),
            )
        })?;
        let user = check(py, DataBank::from_toml_str(&text))?;
        if !include_embedded {
            return Ok(PyBank {
                inner: Arc::new(user),
                embedded: false,
            });
        }
        let base = DataBank::embedded();
        let mut refs = base.references().clone();
        refs.extend(user.references().iter().map(|(k, v)| (k.clone(), v.clone())));
        let mut bank = DataBank::with_references(refs);
        for c in base.components().iter().chain(user.components()) {
            check(py, bank.add(c.clone()))?;
        }
        Ok(PyBank {
            inner: Arc::new(bank),
            embedded: false,
        })
    }

    /// Reads a component file (TOML); see `from_toml`.
    #[staticmethod]
    #[pyo3(signature = (path, include_embedded=false))]
    fn from_file(py: Python<'_>, path: std::path::PathBuf, include_embedded: bool) -> PyResult<Self> {
        let text = std::fs::read_to_string(&path)?;
        Self::from_toml(py, &pyo3::types::PyString::new(py, &text).into_any(), include_embedded)
    }

    /// Canonical names of the components, in file order.
    #[getter]
    fn names(&self) -> Vec<String> {
        self.inner.components().iter().map(|c| c.name.clone()).collect()
    }

    /// The constants of one component (by name, alias or CAS number) as a dict, SI units.
    fn component<'py>(&self, py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
        let c = check(py, self.inner.get(name))?;
        let v = serde_json::to_value(c).map_err(|e| errors::internal(&e.to_string()))?;
        records::value_to_py(py, &v, false)
    }

    fn __contains__(&self, name: &str) -> bool {
        self.inner.get(name).is_ok()
    }

    fn __len__(&self) -> usize {
        self.inner.components().len()
    }

    fn __repr__(&self) -> String {
        format!(
            "ComponentBank({} components{})",
            self.inner.components().len(),
            if self.embedded { ", embedded" } else { "" }
        )
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let f = py.import("tieline._core")?.getattr("_bank_from_json")?;
        PyTuple::new(
            py,
            [
                f,
                (json_text(&*self.inner)?, self.embedded).into_pyobject(py)?.into_any(),
            ],
        )
    }
}

#[pyfunction]
fn _bank_from_json(py: Python<'_>, text: &str, embedded: bool) -> PyResult<PyBank> {
    let bank: DataBank =
        serde_json::from_str(text).map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("bank: {e}")), None))?;
    Ok(PyBank {
        inner: Arc::new(bank),
        embedded,
    })
}

/// A thermodynamic model of a fluid mixture, or of water by IAPWS-95 (immutable; shared
/// freely between threads).
#[pyclass(frozen, name = "Model", module = "tieline._core")]
pub struct PyModel {
    pub(crate) inner: Arc<Model>,
}

fn cubic_kind(py: Python<'_>, kind: &str) -> PyResult<CubicKind> {
    Ok(match kind.to_ascii_lowercase().replace(['-', ' '], "_").as_str() {
        "peng_robinson" | "pr" => CubicKind::PengRobinson,
        "peng_robinson78" | "peng_robinson_78" | "pr78" => CubicKind::PengRobinson78,
        "soave_redlich_kwong" | "srk" => CubicKind::SoaveRedlichKwong,
        _ => {
            return Err(invalid(
                py,
                "kind",
                &format!(
                    "'{kind}'; one of \"peng_robinson\", \"peng_robinson78\", \"soave_redlich_kwong\" (or \"iapws95\" for water) is required"
                ),
            ));
        }
    })
}

/// Whether `kind` names the IAPWS-95 water model rather than a cubic equation.
fn is_iapws95(kind: &str) -> bool {
    matches!(
        kind.to_ascii_lowercase().replace(['-', ' '], "_").as_str(),
        "iapws95" | "iapws_95"
    )
}

fn kind_name(k: CubicKind) -> &'static str {
    match k {
        CubicKind::PengRobinson => "peng_robinson",
        CubicKind::PengRobinson78 => "peng_robinson78",
        CubicKind::SoaveRedlichKwong => "soave_redlich_kwong",
    }
}

fn component_index(py: Python<'_>, key: &Bound<'_, PyAny>, names: &[String], bank: &DataBank) -> PyResult<usize> {
    if let Ok(i) = key.extract::<usize>() {
        if i < names.len() {
            return Ok(i);
        }
        return Err(invalid(
            py,
            "kij",
            &format!("component index {i} for {} components", names.len()),
        ));
    }
    let s: String = key
        .extract()
        .map_err(|_| invalid(py, "kij", "keys must be pairs of component indices or names"))?;
    let canonical = check(py, bank.get(&s))?.name.clone();
    names
        .iter()
        .position(|n| *n == canonical)
        .ok_or_else(|| invalid(py, "kij", &format!("'{s}' is not a component of this model")))
}

/// Interaction entries [i, j, k0, k1] from a matrix or a mapping.
fn kij_entries(py: Python<'_>, kij: &Bound<'_, PyAny>, names: &[String], bank: &DataBank) -> PyResult<Vec<Vec<f64>>> {
    let nc = names.len();
    let mut out = Vec::new();
    if let Ok(d) = kij.cast::<PyDict>() {
        for (k, v) in d.iter() {
            let pair: (Bound<'_, PyAny>, Bound<'_, PyAny>) = k
                .extract()
                .map_err(|_| invalid(py, "kij", "keys must be pairs (i, j) of component indices or names"))?;
            let i = component_index(py, &pair.0, names, bank)?;
            let j = component_index(py, &pair.1, names, bank)?;
            let (k0, k1) = if let Ok(x) = v.extract::<f64>() {
                (x, 0.0)
            } else {
                v.extract::<(f64, f64)>()
                    .map_err(|_| invalid(py, "kij", "values must be k0 or (k0, k1) with k_ij = k0 + k1·T"))?
            };
            if !(k0.is_finite() && k1.is_finite()) {
                return Err(invalid(
                    py,
                    "kij",
                    &format!("k0 = {k0}, k1 = {k1} for ({i}, {j}); finite values are required"),
                ));
            }
            out.push(vec![i as f64, j as f64, k0, k1]);
        }
        return Ok(out);
    }
    let m: Vec<Vec<f64>> = kij.extract().map_err(|_| {
        invalid(
            py,
            "kij",
            "an nc×nc matrix of numbers or a mapping {(i, j): k0 or (k0, k1)} is required",
        )
    })?;
    if m.len() != nc || m.iter().any(|r| r.len() != nc) {
        return Err(invalid(
            py,
            "kij",
            &format!("the matrix must be {nc}×{nc} for {nc} components"),
        ));
    }
    if let Some(x) = m.iter().flatten().find(|x| !x.is_finite()) {
        return Err(invalid(
            py,
            "kij",
            &format!(
                "{x} in the matrix; finite values are required",
                x = tieline::error::num(*x)
            ),
        ));
    }
    for i in 0..nc {
        if m[i][i] != 0.0 {
            return Err(invalid(
                py,
                "kij",
                &format!("diagonal entry ({i}, {i}) is {}; it must be 0", m[i][i]),
            ));
        }
        for j in (i + 1)..nc {
            if m[i][j] != m[j][i] {
                return Err(invalid(
                    py,
                    "kij",
                    &format!("not symmetric: ({i}, {j}) = {} but ({j}, {i}) = {}", m[i][j], m[j][i]),
                ));
            }
            if m[i][j] != 0.0 {
                out.push(vec![i as f64, j as f64, m[i][j], 0.0]);
            }
        }
    }
    Ok(out)
}

fn component_refs(
    py: Python<'_>,
    components: &Bound<'_, PyAny>,
    bank: &DataBank,
) -> PyResult<(Vec<serde_json::Value>, Vec<String>)> {
    if components.is_instance_of::<pyo3::types::PyString>() {
        return Err(invalid(
            py,
            "components",
            "a list of names is required, not a single string",
        ));
    }
    let mut refs = Vec::new();
    let mut names = Vec::new();
    for item in components
        .try_iter()
        .map_err(|_| invalid(py, "components", "a list of component names is required"))?
    {
        let item = item?;
        if let Ok(s) = item.extract::<String>() {
            names.push(check(py, bank.get(&s))?.name.clone());
            refs.push(serde_json::Value::String(s));
        } else if let Ok(d) = item.cast::<PyDict>() {
            let mut obj = serde_json::Map::new();
            let name: String = d
                .get_item("name")?
                .ok_or_else(|| invalid(py, "components", "a component given as a dict needs a 'name'"))?
                .extract()?;
            names.push(check(py, bank.get(&name))?.name.clone());
            obj.insert("name".into(), name.into());
            for (k, v) in d.iter() {
                let k: String = k.extract()?;
                match k.as_str() {
                    "name" => {}
                    "tc" | "pc" | "acentric" => {
                        let x: f64 = v
                            .extract()
                            .ok()
                            .filter(|x: &f64| x.is_finite() && (*x > 0.0 || k == "acentric"))
                            .ok_or_else(|| {
                                invalid(
                                    py,
                                    "components",
                                    &format!("'{k}' must be a finite number (> 0 for tc in K and pc in Pa)"),
                                )
                            })?;
                        obj.insert(k, serde_json::Value::from(x));
                    }
                    _ => {
                        return Err(invalid(
                            py,
                            "components",
                            &format!("override '{k}' is not known; 'tc' (K), 'pc' (Pa) and 'acentric' are allowed"),
                        ));
                    }
                }
            }
            refs.push(serde_json::Value::Object(obj));
        } else {
            return Err(invalid(
                py,
                "components",
                "each component must be a name or a dict with 'name'",
            ));
        }
    }
    if refs.is_empty() {
        return Err(invalid(
            py,
            "components",
            "an empty list; at least one component is required",
        ));
    }
    Ok((refs, names))
}

impl PyModel {
    /// The cubic equation of state behind the model, if it is one.
    fn cubic(&self) -> Option<&tieline::model::CubicEos> {
        match &*self.inner {
            Model::Cubic(m) => Some(m),
            _ => None,
        }
    }

    /// The IAPWS-95 water model from a constructor call with `kind="iapws95"`: the
    /// components must be water alone, with no cubic parameters.
    fn iapws95_from_args(
        py: Python<'_>,
        components: &Bound<'_, PyAny>,
        kij: Option<&Bound<'_, PyAny>>,
        volume_shift: Option<&Bound<'_, PyAny>>,
        bank: &DataBank,
    ) -> PyResult<Self> {
        let (refs, names) = component_refs(py, components, bank)?;
        let water_only = names.len() == 1 && names[0] == "water" && refs[0].is_string();
        if !water_only {
            return Err(invalid(
                py,
                "components",
                &format!(
                    "{names:?} for kind \"iapws95\"; IAPWS-95 describes water alone, given as [\"water\"] \
                     (no constant overrides)"
                ),
            ));
        }
        for (what, given) in [("kij", kij.is_some()), ("volume_shift", volume_shift.is_some())] {
            if given {
                return Err(invalid(
                    py,
                    what,
                    "IAPWS-95 has no such parameter; it belongs to the cubic equations of state",
                ));
            }
        }
        Ok(PyModel {
            inner: Arc::new(Model::Iapws95(tieline::model::Iapws95::new())),
        })
    }
}

/// Index of component `name` (name, alias or CAS number) in `model`.
pub(crate) fn model_index(py: Python<'_>, model: &Model, name: &str) -> PyResult<usize> {
    let key = name.trim().to_lowercase();
    let found = match model {
        Model::Cubic(eos) => eos.components().iter().position(|c| {
            c.name.to_lowercase() == key || c.cas == key || c.aliases.iter().any(|a| a.to_lowercase() == key)
        }),
        m => {
            // A model without component records: its own names, or a bank entry of that name.
            let canonical = DataBank::embedded().get(name).ok().map(|c| c.name.to_lowercase());
            (0..m.num_components()).position(|i| {
                let n = m.component_name(i).to_lowercase();
                n == key || canonical.as_deref() == Some(n.as_str())
            })
        }
    };
    found.ok_or_else(|| {
        errors::to_py(
            py,
            &tieline::Error::UnknownComponent {
                name: name.to_string(),
                suggestions: (0..model.num_components())
                    .map(|i| model.component_name(i).to_string())
                    .collect(),
            },
            Some("not a component of this model"),
        )
    })
}

/// A component argument: an index (range-checked) or a name, alias or CAS number.
pub(crate) fn component_arg(py: Python<'_>, model: &Model, key: &Bound<'_, PyAny>, what: &str) -> PyResult<usize> {
    let nc = model.num_components();
    if key.is_instance_of::<pyo3::types::PyBool>() {
        return Err(invalid(py, what, "a bool; an index or a component name is required"));
    }
    if let Ok(i) = key.extract::<i64>() {
        if i >= 0 && (i as usize) < nc {
            return Ok(i as usize);
        }
        return Err(invalid(py, what, &format!("index {i} for a model of {nc} components")));
    }
    match key.extract::<String>() {
        Ok(s) => model_index(py, model, &s),
        Err(_) => Err(invalid(py, what, "an index or a component name is required")),
    }
}

#[pymethods]
impl PyModel {
    #[new]
    #[pyo3(signature = (components, kind="peng_robinson", kij=None, volume_shift=None, bank=None))]
    fn new(
        py: Python<'_>,
        components: &Bound<'_, PyAny>,
        kind: &str,
        kij: Option<&Bound<'_, PyAny>>,
        volume_shift: Option<&Bound<'_, PyAny>>,
        bank: Option<PyRef<'_, PyBank>>,
    ) -> PyResult<Self> {
        let bank: &DataBank = match &bank {
            Some(b) => &b.inner,
            None => DataBank::embedded(),
        };
        if is_iapws95(kind) {
            return Self::iapws95_from_args(py, components, kij, volume_shift, bank);
        }
        let kind = cubic_kind(py, kind)?;
        let (refs, names) = component_refs(py, components, bank)?;
        let mut desc = serde_json::Map::new();
        desc.insert("model".into(), "cubic".into());
        desc.insert("kind".into(), kind_name(kind).into());
        desc.insert("components".into(), serde_json::Value::Array(refs));
        if let Some(k) = kij {
            let entries = kij_entries(py, k, &names, bank)?;
            desc.insert(
                "kij".into(),
                serde_json::to_value(entries).map_err(|e| errors::internal(&e.to_string()))?,
            );
        }
        if let Some(vs) = volume_shift {
            let v = if let Ok(s) = vs.extract::<String>() {
                serde_json::Value::String(s)
            } else {
                let c: Vec<f64> = vs
                    .extract()
                    .map_err(|_| invalid(py, "volume_shift", "\"peneloux\" or a list of c_i (m3/mol) is required"))?;
                serde_json::to_value(c).map_err(|e| errors::internal(&e.to_string()))?
            };
            desc.insert("volume_shift".into(), v);
        }
        let d: ModelDescription = serde_json::from_value(serde_json::Value::Object(desc))
            .map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("model description: {e}")), None))?;
        Ok(PyModel {
            inner: Arc::new(check(py, d.build(bank))?),
        })
    }

    /// Water by the IAPWS-95 formulation (IAPWS R6-95(2018)): one component, "water".
    #[staticmethod]
    fn water() -> Self {
        PyModel {
            inner: Arc::new(Model::Iapws95(tieline::model::Iapws95::new())),
        }
    }

    /// A model from a description (JSON text; the Python layer turns dicts into text) or from
    /// the full JSON written by `to_json`.
    #[classmethod]
    #[pyo3(signature = (text, bank=None))]
    fn from_json(
        _cls: &Bound<'_, PyType>,
        py: Python<'_>,
        text: &str,
        bank: Option<PyRef<'_, PyBank>>,
    ) -> PyResult<Self> {
        let bank: &DataBank = match &bank {
            Some(b) => &b.inner,
            None => DataBank::embedded(),
        };
        Ok(PyModel {
            inner: Arc::new(check(py, tieline::model::model_from_json(text, bank))?),
        })
    }

    /// A model from a description given as a dict or as JSON text (components by bank name).
    #[classmethod]
    #[pyo3(signature = (description, bank=None))]
    fn from_description(
        cls: &Bound<'_, PyType>,
        py: Python<'_>,
        description: &Bound<'_, PyAny>,
        bank: Option<PyRef<'_, PyBank>>,
    ) -> PyResult<Self> {
        let text: String = if let Ok(s) = description.extract::<String>() {
            s
        } else if description.is_instance_of::<PyDict>() {
            py.import("json")?.call_method1("dumps", (description,))?.extract()?
        } else {
            return Err(invalid(py, "description", "a dict or a JSON text is required"));
        };
        Self::from_json(cls, py, &text, bank)
    }

    /// The full model as JSON text (components with all their constants).
    fn to_json(&self) -> String {
        self.inner.to_json()
    }

    /// The full model as a dict.
    fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let v = serde_json::to_value(&*self.inner).map_err(|e| errors::internal(&e.to_string()))?;
        records::value_to_py(py, &v, false)
    }

    /// Canonical component names, in order.
    #[getter]
    fn components(&self) -> Vec<String> {
        (0..self.inner.num_components())
            .map(|i| self.inner.component_name(i).to_string())
            .collect()
    }

    /// Number of components.
    #[getter]
    fn num_components(&self) -> usize {
        self.inner.num_components()
    }

    /// The equation of state: a cubic kind, or "iapws95" for water.
    #[getter]
    fn kind(&self) -> &'static str {
        match &*self.inner {
            Model::Cubic(m) => kind_name(m.kind()),
            Model::Iapws95(_) => "iapws95",
            _ => "other",
        }
    }

    /// Molar masses, kg/mol.
    #[getter]
    fn molar_masses<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v: Vec<f64> = (0..self.inner.num_components())
            .map(|i| self.inner.molar_mass(i))
            .collect();
        PyArray1::from_vec(py, v)
    }

    /// Critical temperatures, K.
    #[getter]
    fn critical_temperatures<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v: Vec<f64> = (0..self.inner.num_components())
            .map(|i| self.inner.critical_constants(i).tc)
            .collect();
        PyArray1::from_vec(py, v)
    }

    /// Critical pressures, Pa.
    #[getter]
    fn critical_pressures<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v: Vec<f64> = (0..self.inner.num_components())
            .map(|i| self.inner.critical_constants(i).pc)
            .collect();
        PyArray1::from_vec(py, v)
    }

    /// Acentric factors.
    #[getter]
    fn acentric_factors<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v: Vec<f64> = (0..self.inner.num_components())
            .map(|i| self.inner.critical_constants(i).acentric)
            .collect();
        PyArray1::from_vec(py, v)
    }

    /// k_ij = k0 + k1·T at `temperature` (K), an nc×nc matrix (zeros for a model without
    /// interaction parameters, such as IAPWS-95).
    #[pyo3(signature = (temperature=298.15))]
    fn kij<'py>(&self, py: Python<'py>, temperature: f64) -> PyResult<Bound<'py, PyAny>> {
        if !(temperature.is_finite() && temperature > 0.0) {
            return Err(invalid(
                py,
                "temperature",
                &format!(
                    "{temperature} K; a finite value > 0 K is required",
                    temperature = tieline::error::num(temperature)
                ),
            ));
        }
        let Some(eos) = self.cubic() else {
            // No interaction parameters: a one-fluid model of its own (k_ii = 0 by definition).
            let nc = self.inner.num_components();
            return records::arr2(py, nc, nc, vec![0.0; nc * nc]);
        };
        let k = eos.kij();
        let v: Vec<f64> = k.k0.iter().zip(&k.k1).map(|(a, b)| a + b * temperature).collect();
        records::arr2(py, k.nc, k.nc, v)
    }

    /// Index of a component by name, alias or CAS number.
    fn index(&self, py: Python<'_>, name: &str) -> PyResult<usize> {
        model_index(py, &self.inner, name)
    }

    fn __eq__(&self, other: &Bound<'_, PyAny>) -> bool {
        match other.cast::<PyModel>() {
            Ok(o) => *o.get().inner == *self.inner,
            Err(_) => false,
        }
    }

    fn __hash__(&self) -> u64 {
        use std::hash::{Hash, Hasher};
        let mut h = std::collections::hash_map::DefaultHasher::new();
        self.inner.to_json().hash(&mut h);
        h.finish()
    }

    fn __repr__(&self) -> String {
        format!("Model({:?}, kind={:?})", self.components(), self.kind())
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let f = py.import("tieline._core")?.getattr("_model_from_json")?;
        PyTuple::new(py, [f, (self.inner.to_json(),).into_pyobject(py)?.into_any()])
    }
}

#[pyfunction]
fn _model_from_json(py: Python<'_>, text: &str) -> PyResult<PyModel> {
    Ok(PyModel {
        inner: Arc::new(check(py, Model::from_json(text))?),
    })
}

/// Options of the PT flash (see `tieline.flash`).
#[pyclass(frozen, name = "FlashOptions", module = "tieline._core")]
pub struct PyFlashOptions {
    pub(crate) inner: FlashOptions,
}

#[pymethods]
impl PyFlashOptions {
    #[new]
    #[pyo3(signature = (tolerance=None, max_ss_iterations=None, max_newton_iterations=None, certificate=None, negative_flash=None, stability_tolerance=None, max_phases=None))]
    #[allow(clippy::too_many_arguments)]
    fn new(
        py: Python<'_>,
        tolerance: Option<f64>,
        max_ss_iterations: Option<usize>,
        max_newton_iterations: Option<usize>,
        certificate: Option<bool>,
        negative_flash: Option<bool>,
        stability_tolerance: Option<f64>,
        max_phases: Option<usize>,
    ) -> PyResult<Self> {
        let mut o = FlashOptions::default();
        if let Some(k) = max_phases {
            if !(2..=3).contains(&k) {
                return Err(invalid(py, "max_phases", &format!("{k}; 2 or 3 is required")));
            }
            o.max_phases = k;
        }
        if let Some(x) = tolerance {
            if !(x > 0.0 && x < 1e-2) {
                return Err(invalid(
                    py,
                    "tolerance",
                    &format!("{x}; a value in (0, 1e-2) is required", x = tieline::error::num(x)),
                ));
            }
            o.tolerance = x;
        }
        if let Some(x) = max_ss_iterations {
            o.max_ss_iterations = x;
        }
        if let Some(x) = max_newton_iterations {
            o.max_newton_iterations = x;
        }
        if let Some(x) = certificate {
            o.certificate = x;
        }
        if let Some(x) = negative_flash {
            o.negative_flash = x;
        }
        if let Some(x) = stability_tolerance {
            if !(x > 0.0 && x < 1e-2) {
                return Err(invalid(
                    py,
                    "stability_tolerance",
                    &format!("{x}; a value in (0, 1e-2) is required", x = tieline::error::num(x)),
                ));
            }
            o.stability.tolerance = x;
        }
        Ok(PyFlashOptions { inner: o })
    }

    /// The options as a dict.
    fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let v = serde_json::to_value(self.inner).map_err(|e| errors::internal(&e.to_string()))?;
        records::value_to_py(py, &v, false)
    }
}

pub(crate) fn saturation_options(tolerance: Option<f64>, max_iterations: Option<usize>) -> SaturationOptions {
    let mut o = SaturationOptions::default();
    if let Some(t) = tolerance {
        o.tolerance = t;
    }
    if let Some(m) = max_iterations {
        o.max_iterations = m;
    }
    o
}

pub(crate) fn root_choice(py: Python<'_>, root: &str) -> PyResult<RootChoice> {
    Ok(match root {
        "stable" => RootChoice::Stable,
        "liquid" => RootChoice::Liquid,
        "vapor" | "vapour" => RootChoice::Vapor,
        _ => {
            return Err(invalid(
                py,
                "root",
                &format!("'{root}'; \"stable\", \"liquid\" or \"vapor\" is required"),
            ));
        }
    })
}

type BubbleDewFn = fn(&Model, f64, &[f64], &SaturationOptions) -> tieline::Result<BubbleDew>;

pub(crate) fn bubble_dew_solver(py: Python<'_>, which: &str) -> PyResult<BubbleDewFn> {
    use tieline::equilibrium as eq;
    Ok(match which {
        "bubble_pressure" => |m, x, n, o| eq::bubble_pressure(m, x, n, o),
        "dew_pressure" => |m, x, n, o| eq::dew_pressure(m, x, n, o),
        "bubble_temperature" => |m, x, n, o| eq::bubble_temperature(m, x, n, o),
        "dew_temperature" => |m, x, n, o| eq::dew_temperature(m, x, n, o),
        _ => {
            return Err(invalid(
                py,
                "kind",
                &format!("'{which}'; bubble_pressure, dew_pressure, bubble_temperature or dew_temperature is required"),
            ));
        }
    })
}

/// A real number from a Python object (int, float or numpy scalar; not a bool).
pub(crate) fn real(py: Python<'_>, x: &Bound<'_, PyAny>, what: &str) -> PyResult<f64> {
    if x.is_instance_of::<pyo3::types::PyBool>() || x.is_instance_of::<pyo3::types::PyString>() {
        return Err(invalid(py, what, &format!("{x}; a number is required")));
    }
    x.extract::<f64>()
        .map_err(|_| invalid(py, what, &format!("{x}; a number is required")))
}

pub(crate) fn amounts_slice<'a>(py: Python<'_>, a: &'a PyReadonlyArray1<'_, f64>) -> PyResult<&'a [f64]> {
    a.as_slice()
        .map_err(|_| invalid(py, "amounts", "a contiguous 1-D float64 array is required"))
}

/// PT flash of one point.
#[pyfunction]
fn flash_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: PyReadonlyArray1<'py, f64>,
    options: PyRef<'py, PyFlashOptions>,
) -> PyResult<Bound<'py, PyAny>> {
    let n = amounts_slice(py, &amounts)?;
    let r = check(
        py,
        tieline::equilibrium::flash_pt(&*model.inner, temperature, pressure, n, &options.inner),
    )?;
    results::flash_result(py, r)
}

/// Tangent-plane stability test of one phase.
#[pyfunction]
#[pyo3(signature = (model, temperature, pressure, amounts, tolerance=None, threshold=None))]
fn stability_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: PyReadonlyArray1<'py, f64>,
    tolerance: Option<f64>,
    threshold: Option<f64>,
) -> PyResult<Bound<'py, PyAny>> {
    let n = amounts_slice(py, &amounts)?;
    let mut o = StabilityOptions::default();
    if let Some(t) = tolerance {
        if !(t > 0.0 && t < 1e-2) {
            return Err(invalid(
                py,
                "tolerance",
                &format!("{t}; a value in (0, 1e-2) is required", t = tieline::error::num(t)),
            ));
        }
        o.tolerance = t;
    }
    if let Some(t) = threshold {
        if !(t >= 0.0 && t.is_finite()) {
            return Err(invalid(
                py,
                "threshold",
                &format!("{t}; a finite value >= 0 is required", t = tieline::error::num(t)),
            ));
        }
        o.threshold = t;
    }
    let r = check(
        py,
        tieline::equilibrium::stability(&*model.inner, temperature, pressure, n, &o),
    )?;
    records::stability_result(py, &r)
}

/// Saturation state of one component: by = "temperature" (value in K) or "pressure" (Pa).
#[pyfunction]
#[pyo3(signature = (model, by, value, component, tolerance=None, max_iterations=None))]
fn saturation_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    by: &str,
    value: f64,
    component: usize,
    tolerance: Option<f64>,
    max_iterations: Option<usize>,
) -> PyResult<Bound<'py, PyAny>> {
    let o = saturation_options(tolerance, max_iterations);
    let r = match by {
        "temperature" => tieline::equilibrium::saturation_pressure(&*model.inner, value, component, &o),
        "pressure" => tieline::equilibrium::saturation_temperature(&*model.inner, value, component, &o),
        _ => {
            return Err(invalid(
                py,
                "by",
                &format!("'{by}'; \"temperature\" or \"pressure\" is required"),
            ));
        }
    };
    let r = check(py, r)?;
    results::saturation(py, r)
}

/// One bubble or dew point (`which` as in `bubble_dew_sweep`).
#[pyfunction]
#[pyo3(signature = (model, which, value, amounts, tolerance=None, max_iterations=None))]
fn bubble_dew_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    which: &str,
    value: f64,
    amounts: PyReadonlyArray1<'py, f64>,
    tolerance: Option<f64>,
    max_iterations: Option<usize>,
) -> PyResult<Bound<'py, PyAny>> {
    let n = amounts_slice(py, &amounts)?;
    let o = saturation_options(tolerance, max_iterations);
    let solve = bubble_dew_solver(py, which)?;
    let r = check(py, solve(&model.inner, value, n, &o))?;
    records::bubble_dew(py, &r)
}

/// A fluid phase at (T, p, n) on a chosen volume root.
#[pyclass(frozen, name = "PhaseState", module = "tieline._core")]
pub struct PyPhaseState {
    model: Arc<Model>,
    state: PhaseState,
    ln_phi: Vec<f64>,
}

/// ln φ of a state on its own volume root (the root whose volume the state holds).
fn state_ln_phi(py: Python<'_>, model: &Model, s: &PhaseState) -> PyResult<Vec<f64>> {
    use tieline::model::{FugacityWork, LnPhi, Need, ln_phi};
    let nc = model.num_components();
    let mut w = FugacityWork::new(nc);
    let mut best: Option<(f64, Vec<f64>)> = None;
    for root in [RootChoice::Liquid, RootChoice::Vapor] {
        let mut out = LnPhi::new(nc);
        check(py, ln_phi(model, s.t, s.p, &s.n, root, Need::VALUES, &mut w, &mut out))?;
        let d = (out.v - s.v).abs();
        if best.as_ref().is_none_or(|(bd, _)| d < *bd) {
            best = Some((d, out.ln_phi));
        }
    }
    Ok(best.map(|b| b.1).unwrap_or_default())
}

#[pymethods]
impl PyPhaseState {
    #[new]
    #[pyo3(signature = (model, temperature, pressure, amounts, root="stable"))]
    fn new(
        py: Python<'_>,
        model: PyRef<'_, PyModel>,
        temperature: f64,
        pressure: f64,
        amounts: Vec<f64>,
        root: &str,
    ) -> PyResult<Self> {
        let root = root_choice(py, root)?;
        let state = check(
            py,
            PhaseState::new(&*model.inner, temperature, pressure, &amounts, root),
        )?;
        let ln_phi = state_ln_phi(py, &model.inner, &state)?;
        Ok(PyPhaseState {
            model: model.inner.clone(),
            state,
            ln_phi,
        })
    }

    /// Temperature, K.
    #[getter]
    fn temperature(&self) -> f64 {
        self.state.t
    }

    /// Pressure, Pa.
    #[getter]
    fn pressure(&self) -> f64 {
        self.state.p
    }

    /// Amounts, mol.
    #[getter]
    fn amounts<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        records::arr(py, &self.state.n)
    }

    /// Mole fractions.
    #[getter]
    fn composition<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        PyArray1::from_vec(py, self.state.composition())
    }

    /// Total volume, m3.
    #[getter]
    fn volume(&self) -> f64 {
        self.state.v
    }

    /// Molar volume, m3/mol.
    #[getter]
    fn molar_volume(&self) -> f64 {
        self.state.v / self.state.total()
    }

    /// Natural logarithms of the fugacity coefficients (needs no ideal-gas data).
    #[getter]
    fn ln_phi<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        records::arr(py, &self.ln_phi)
    }

    /// Fugacities f_i = x_i φ_i p, Pa.
    #[getter]
    fn fugacity<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let x = self.state.composition();
        let v: Vec<f64> = x
            .iter()
            .zip(&self.ln_phi)
            .map(|(x, l)| x * l.exp() * self.state.p)
            .collect();
        PyArray1::from_vec(py, v)
    }

    /// Compressibility factor Z = pv/(RT).
    #[getter]
    fn z(&self) -> f64 {
        self.state.p * self.state.v / (self.state.total() * tieline::substance::R * self.state.t)
    }

    /// "vapor" or "liquid" (the model's naming rule).
    #[getter]
    fn kind(&self) -> &'static str {
        records::kind_name(Some(self.state.kind))
    }

    /// The model the state belongs to.
    #[getter]
    fn model(&self) -> PyModel {
        PyModel {
            inner: self.model.clone(),
        }
    }

    /// All thermodynamic properties of the phase.
    fn properties<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let p = check(py, self.state.properties(&*self.model))?;
        results::properties(py, p, self.state.kind)
    }

    fn __repr__(&self) -> String {
        format!(
            "PhaseState({}, T={} K, p={} Pa, v={} m3/mol)",
            records::kind_name(Some(self.state.kind)),
            self.state.t,
            self.state.p,
            self.state.v / self.state.total()
        )
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let f = py.import("tieline._core")?.getattr("_state_from_json")?;
        PyTuple::new(
            py,
            [
                f,
                (self.model.to_json(), json_text(&self.state)?)
                    .into_pyobject(py)?
                    .into_any(),
            ],
        )
    }
}

#[pyfunction]
fn _state_from_json(py: Python<'_>, model: &str, state: &str) -> PyResult<PyPhaseState> {
    let m = check(py, Model::from_json(model))?;
    let s: PhaseState = serde_json::from_str(state)
        .map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("phase state: {e}")), None))?;
    let ln_phi = state_ln_phi(py, &m, &s)?;
    Ok(PyPhaseState {
        model: Arc::new(m),
        state: s,
        ln_phi,
    })
}

/// A phase of a flash result as a state (total volume m3, amounts mol), for its properties.
#[pyfunction]
fn _phase_state<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    temperature: f64,
    pressure: f64,
    amounts: Vec<f64>,
    volume: f64,
    kind: &str,
) -> PyResult<PyPhaseState> {
    let kind = match kind {
        "vapor" => PhaseKind::Vapor,
        "liquid" => PhaseKind::Liquid,
        "liquid2" => PhaseKind::Liquid2,
        "liquid3" => PhaseKind::Liquid3,
        _ => {
            return Err(invalid(
                py,
                "kind",
                &format!("'{kind}'; vapor, liquid, liquid2 or liquid3 is required"),
            ));
        }
    };
    if amounts.len() != model.inner.num_components() {
        return Err(invalid(py, "amounts", "one amount per component is required"));
    }
    let state = PhaseState {
        t: temperature,
        p: pressure,
        n: amounts,
        v: volume,
        kind,
    };
    let ln_phi = state_ln_phi(py, &model.inner, &state)?;
    Ok(PyPhaseState {
        model: model.inner.clone(),
        state,
        ln_phi,
    })
}

/// Sets the default number of threads of batch calls (0: one per core; at most
/// `MAX_THREADS`, more is an InvalidInputError, never clamped).
#[pyfunction]
fn set_threads(py: Python<'_>, n: &Bound<'_, PyAny>) -> PyResult<()> {
    let bad = || {
        errors::invalid(
            py,
            "threads",
            &format!(
                "{}; an integer from 0 to {} (0: one per core) is required",
                n.repr().map(|r| r.to_string()).unwrap_or_default(),
                tieline::limits::MAX_THREADS
            ),
        )
    };
    if n.is_instance_of::<pyo3::types::PyBool>() {
        return Err(bad());
    }
    let v: usize = n.extract().map_err(|_| bad())?;
    check(
        py,
        tieline::error::check::count("threads", v, 0, tieline::limits::MAX_THREADS),
    )?;
    parallel::set_default_threads(v);
    Ok(())
}

/// Compact form of a number as every message of the library prints it (`1e-300`, `2.5e6`).
#[pyfunction]
fn format_number(x: f64) -> String {
    tieline::error::num(x).to_string()
}

/// The number of threads a batch call uses by default.
#[pyfunction]
fn get_threads() -> usize {
    parallel::effective_threads(None)
}

/// The compiled extension of the `tieline` package.
#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    m.add_class::<PyBank>()?;
    m.add_class::<PyModel>()?;
    m.add_class::<PyFlashOptions>()?;
    m.add_class::<PyPhaseState>()?;
    m.add_class::<results::PyFlashResult>()?;
    m.add_class::<results::PyPhase>()?;
    m.add_class::<results::PyTieLine>()?;
    m.add_class::<results::PyFlashDiagnostics>()?;
    m.add_class::<results::PyProperties>()?;
    m.add_class::<results::PySaturationPoint>()?;
    m.add_function(wrap_pyfunction!(fast::_flash_fast, m)?)?;
    m.add_function(wrap_pyfunction!(fast::_saturation_fast, m)?)?;
    m.add_function(wrap_pyfunction!(fast::_properties_fast, m)?)?;
    m.add_function(wrap_pyfunction!(fast::properties_point, m)?)?;
    m.add_function(wrap_pyfunction!(fast::_time_rust_flash, m)?)?;
    m.add_function(wrap_pyfunction!(fast::_time_rust_saturation, m)?)?;
    m.add_function(wrap_pyfunction!(fast::_time_rust_properties, m)?)?;
    m.add_class::<solids::PySolid>()?;
    m.add_function(wrap_pyfunction!(_bank_from_json, m)?)?;
    m.add_function(wrap_pyfunction!(_model_from_json, m)?)?;
    m.add_function(wrap_pyfunction!(_state_from_json, m)?)?;
    m.add_function(wrap_pyfunction!(_phase_state, m)?)?;
    m.add_function(wrap_pyfunction!(flash_point, m)?)?;
    m.add_function(wrap_pyfunction!(stability_point, m)?)?;
    m.add_function(wrap_pyfunction!(saturation_point, m)?)?;
    m.add_function(wrap_pyfunction!(bubble_dew_point, m)?)?;
    m.add_function(wrap_pyfunction!(sweeps::flash_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(sweeps::saturation_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(sweeps::bubble_dew_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(sweeps::properties_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(solids::_solid_from_json, m)?)?;
    m.add_function(wrap_pyfunction!(solids::_solid_point, m)?)?;
    m.add_function(wrap_pyfunction!(solids::_solid_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(solids::solid_flash_point, m)?)?;
    m.add_function(wrap_pyfunction!(solids::frost_point, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_phases, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_evaluate, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_stable_phase, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_stable_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_coexistence, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_trace, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_triple_point, m)?)?;
    m.add_function(wrap_pyfunction!(pure::pure_gibbs_curves, m)?)?;
    m.add_function(wrap_pyfunction!(water::water_state, m)?)?;
    m.add_function(wrap_pyfunction!(water::water_saturation_point, m)?)?;
    m.add_class::<calc::PyRecord>()?;
    m.add_function(wrap_pyfunction!(calc::_record_from_json, m)?)?;
    m.add_function(wrap_pyfunction!(calc::describe_calculation, m)?)?;
    m.add_function(wrap_pyfunction!(calc::calculation_names, m)?)?;
    m.add_function(wrap_pyfunction!(calc::calc_point, m)?)?;
    m.add_function(wrap_pyfunction!(calc::calc_sweep, m)?)?;
    m.add_function(wrap_pyfunction!(set_threads, m)?)?;
    m.add_function(wrap_pyfunction!(format_number, m)?)?;
    m.add("MAX_THREADS", tieline::limits::MAX_THREADS)?;
    m.add("MAX_ITERATIONS", tieline::limits::MAX_ITERATIONS)?;
    m.add("MAX_POINTS", tieline::limits::MAX_POINTS)?;
    m.add("MAX_COMPONENTS", tieline::limits::MAX_COMPONENTS)?;
    m.add_function(wrap_pyfunction!(get_threads, m)?)?;
    Ok(())
}
