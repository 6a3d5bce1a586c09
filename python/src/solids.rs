//! Pure solid phases (`tieline.Solid`), the PT flash with solids and the frost point.
//!
//! A solid is one of the closed set of built-in solid models, kept as a serialisable enum so
//! that it pickles. Units are SI: K, Pa, mol, m3, J.

use crate::errors::{self, check, invalid};
use crate::{PyFlashOptions, PyModel, component_arg, json_text, real, records};
use numpy::PyReadonlyArray1;
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyTuple};
use serde::{Deserialize, Serialize};
use std::sync::Arc;
use tieline::equilibrium::{
    FlashOptions, SolidFlashOptions, SolidFlashResult, SolidPhaseSpec, flash_pt_with_solids, frost_point_temperature,
};
use tieline::model::{FluidModel, FusionData, FusionSolid, IceIh, Model, SolidModel};

/// The built-in solid models.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "solid", rename_all = "snake_case")]
// Solids are built once and shared, so the size difference between variants does not matter.
#[allow(clippy::large_enum_variant)]
pub(crate) enum SolidKind {
    /// Ice Ih by IAPWS-06.
    IceIh(IceIh),
    /// A solid from fusion data, anchored to a fluid model.
    Fusion(FusionSolid),
}

impl SolidKind {
    pub(crate) fn model(&self) -> &dyn SolidModel {
        match self {
            SolidKind::IceIh(s) => s,
            SolidKind::Fusion(s) => s,
        }
    }
}

/// A pure solid phase of one species: ice Ih by IAPWS-06 (`Solid.ice_ih()`), solid carbon
/// dioxide from its fusion data (`Solid.carbon_dioxide(model)`), or a solid from fusion data
/// of your own (`Solid.from_fusion_data(model, component, data)`).
///
/// Its molar Gibbs energy, enthalpy (J/mol), entropy, heat capacity (J/(mol K)) and volume
/// (m3/mol) at (T in K, p in Pa) are in the library's reference state, so they compare
/// directly with those of the fluid phases. A solid from fusion data is anchored to the fluid
/// model it was built with (equal Gibbs energy with that model's saturated liquid at the
/// triple-point temperature): use it with that model. Outside its range of validity
/// (`validity`) a solid raises `OutsideValidityError`.
///
/// Immutable, picklable, and shared freely between threads.
#[pyclass(frozen, name = "Solid", module = "tieline._core")]
pub struct PySolid {
    pub(crate) inner: Arc<SolidKind>,
}

fn solid(kind: SolidKind) -> PySolid {
    PySolid { inner: Arc::new(kind) }
}

/// Builds a fusion solid of component `component` of `model` from `data`, after checking that
/// the data name that component.
fn anchored(py: Python<'_>, model: &Model, component: usize, data: FusionData) -> PyResult<PySolid> {
    let name = model.component_name(component);
    if name != data.species {
        return Err(invalid(
            py,
            "component",
            &format!(
                "component {component} is '{name}'; the fusion data are of '{}'",
                data.species
            ),
        ));
    }
    Ok(solid(SolidKind::Fusion(check(
        py,
        FusionSolid::anchored(model, component, data),
    )?)))
}

#[pymethods]
impl PySolid {
    /// Ice Ih by the IAPWS-06 Gibbs function (IAPWS R10-06(2009)), species "water", valid for
    /// 0 < T ≤ 273.16 K and p ≤ 210 MPa; its reference state is that of the IAPWS-95 water
    /// model (`Model.water()`). With a cubic model's water the liquid's Gibbs energy is not
    /// IAPWS-95's, so liquid–ice equilibria then follow the cubic's (less accurate) liquid.
    #[staticmethod]
    fn ice_ih() -> Self {
        solid(SolidKind::IceIh(IceIh::new()))
    }

    /// Solid carbon dioxide ("dry ice") from its fusion data — triple point 216.592 K,
    /// enthalpy of fusion 9.0 kJ/mol, constant molar volume and heat capacity; 150–260 K, up
    /// to 50 MPa (see `fusion_data` for the values and their sources) — anchored to component
    /// `component` (index or name; by default the one named "carbon dioxide") of the fluid
    /// `model`: at 216.592 K and that model's vapour pressure there (`anchor_pressure`, Pa) the
    /// solid's molar Gibbs energy equals the fluid's.
    #[staticmethod]
    #[pyo3(signature = (model, component=None))]
    fn carbon_dioxide(
        py: Python<'_>,
        model: PyRef<'_, PyModel>,
        component: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<Self> {
        let m: &Model = &model.inner;
        let data = FusionData::carbon_dioxide();
        let i = match component {
            Some(c) => component_arg(py, m, c, "component")?,
            None => crate::model_index(py, m, &data.species)?,
        };
        anchored(py, m, i, data)
    }

    /// A solid from fusion data, anchored to component `component` (index or name) of the
    /// fluid `model`. `data` has the keys of `fusion_data`: t_triple (K), p_triple (Pa),
    /// enthalpy_of_fusion (J/mol), delta_cp (cp liquid − cp solid, J/(mol K)),
    /// solid_molar_volume (m3/mol), t_min, t_max (K), p_max (Pa), and optionally species and
    /// source. Unknown or missing keys raise `DataError`, bad values `InvalidInputError`.
    #[staticmethod]
    fn from_fusion_data(
        py: Python<'_>,
        model: PyRef<'_, PyModel>,
        component: &Bound<'_, PyAny>,
        data: &Bound<'_, PyDict>,
    ) -> PyResult<Self> {
        let m: &Model = &model.inner;
        let i = component_arg(py, m, component, "component")?;
        let text: String = py.import("json")?.call_method1("dumps", (data,))?.extract()?;
        let mut v: serde_json::Value = serde_json::from_str(&text)
            .map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("fusion data: {e}")), None))?;
        if let Some(obj) = v.as_object_mut() {
            obj.entry("species")
                .or_insert_with(|| m.component_name(i).to_string().into());
            obj.entry("source").or_insert_with(|| "given by the caller".into());
        }
        let data: FusionData = serde_json::from_value(v)
            .map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("fusion data: {e}")), None))?;
        anchored(py, m, i, data)
    }

    /// "ice_ih" or "fusion".
    #[getter]
    fn kind(&self) -> &'static str {
        match &*self.inner {
            SolidKind::IceIh(_) => "ice_ih",
            SolidKind::Fusion(_) => "fusion",
        }
    }

    /// The species (the fluid component name it matches).
    #[getter]
    fn species(&self) -> String {
        self.inner.model().species().to_string()
    }

    /// Molar mass, kg/mol.
    #[getter]
    fn molar_mass(&self) -> f64 {
        self.inner.model().molar_mass()
    }

    /// Where the model may be evaluated: {"t_min": K, "t_max": K, "p_max": Pa}.
    #[getter]
    fn validity<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let v = serde_json::to_value(self.inner.model().validity()).map_err(|e| errors::internal(&e.to_string()))?;
        records::value_to_py(py, &v, false)
    }

    /// An estimate (T in K, p in Pa) of the solid–liquid–vapour triple point.
    #[getter]
    fn triple_point_estimate(&self) -> (f64, f64) {
        self.inner.model().triple_point_estimate()
    }

    /// For a fusion solid, the pressure (Pa) of its anchor: the fluid model's vapour pressure
    /// at the triple-point temperature; None for ice Ih.
    #[getter]
    fn anchor_pressure(&self) -> Option<f64> {
        match &*self.inner {
            SolidKind::Fusion(s) => Some(s.anchor_pressure()),
            SolidKind::IceIh(_) => None,
        }
    }

    /// For a fusion solid, the fusion data it was built from (SI units); None for ice Ih.
    #[getter]
    fn fusion_data<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyAny>>> {
        match &*self.inner {
            SolidKind::Fusion(s) => {
                let v = serde_json::to_value(s.data()).map_err(|e| errors::internal(&e.to_string()))?;
                Ok(Some(records::value_to_py(py, &v, false)?))
            }
            SolidKind::IceIh(_) => Ok(None),
        }
    }

    /// Molar properties at temperature (K) and pressure (Pa) in the library reference state;
    /// arrays broadcast (see `tieline.Solid` in the package docs).
    #[pyo3(signature = (temperature, pressure, *, on_error="raise"))]
    fn properties<'py>(
        slf: &Bound<'py, Self>,
        temperature: &Bound<'py, PyAny>,
        pressure: &Bound<'py, PyAny>,
        on_error: &str,
    ) -> PyResult<Bound<'py, PyAny>> {
        let py = slf.py();
        py.import("tieline._api")?
            .getattr("_solid_properties")?
            .call1((slf, temperature, pressure, on_error))
    }

    /// Ice Ih only: the IAPWS-06 properties per kg (IAPWS-06 reference state) at temperature
    /// (K) and pressure (Pa).
    fn specific_properties<'py>(
        &self,
        py: Python<'py>,
        temperature: &Bound<'py, PyAny>,
        pressure: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let t = real(py, temperature, "temperature")?;
        let p = real(py, pressure, "pressure")?;
        let SolidKind::IceIh(ice) = &*self.inner else {
            return Err(invalid(
                py,
                "solid",
                "specific_properties() is the IAPWS-06 Gibbs function of ice Ih; use properties() for this solid",
            ));
        };
        let r = check(py, ice.specific_properties(t, p))?;
        let kw = records::kwargs(py, &r)?;
        kw.set_item("temperature", t)?;
        kw.set_item("pressure", p)?;
        records::build(py, "IceProperties", &kw)
    }

    /// ln of the solid's fugacity, ln(f/Pa), at temperature (K) and pressure (Pa), relative
    /// to the ideal gas of the same species in the fluid `model` (found by name).
    fn ln_fugacity(
        &self,
        py: Python<'_>,
        model: PyRef<'_, PyModel>,
        temperature: &Bound<'_, PyAny>,
        pressure: &Bound<'_, PyAny>,
    ) -> PyResult<f64> {
        let t = real(py, temperature, "temperature")?;
        let p = real(py, pressure, "pressure")?;
        let m: &Model = &model.inner;
        let s = self.inner.model();
        let spec = check(py, SolidPhaseSpec::matching(m, s))?;
        // The solid's own checks first (T and p valid, inside its range), then the ideal gas.
        check(py, s.properties(t, p))?;
        let ig = check(py, m.ideal_gas(t, spec.component))?;
        check(py, s.ln_fugacity(t, p, &ig))
    }

    /// The solid as JSON text (round-trips through pickling).
    fn to_json(&self) -> PyResult<String> {
        json_text(&*self.inner)
    }

    /// The solid as a dict.
    fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let v = serde_json::to_value(&*self.inner).map_err(|e| errors::internal(&e.to_string()))?;
        records::value_to_py(py, &v, false)
    }

    fn __eq__(&self, other: &Bound<'_, PyAny>) -> bool {
        match other.cast::<PySolid>() {
            Ok(o) => *o.get().inner == *self.inner,
            Err(_) => false,
        }
    }

    fn __hash__(&self) -> PyResult<u64> {
        use std::hash::{Hash, Hasher};
        let mut h = std::collections::hash_map::DefaultHasher::new();
        json_text(&*self.inner)?.hash(&mut h);
        Ok(h.finish())
    }

    fn __repr__(&self) -> String {
        match &*self.inner {
            SolidKind::IceIh(_) => "Solid.ice_ih()".to_string(),
            SolidKind::Fusion(s) => format!(
                "Solid({:?} from fusion data, triple point {} K, {} Pa)",
                s.data().species,
                s.data().t_triple,
                s.anchor_pressure()
            ),
        }
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let f = py.import("tieline._core")?.getattr("_solid_from_json")?;
        PyTuple::new(py, [f, (json_text(&*self.inner)?,).into_pyobject(py)?.into_any()])
    }
}

/// The solid written by `Solid.to_json` (for unpickling).
#[pyfunction]
pub fn _solid_from_json(py: Python<'_>, text: &str) -> PyResult<PySolid> {
    let k: SolidKind = serde_json::from_str(text)
        .map_err(|e| errors::to_py(py, &tieline::Error::Data(format!("solid: {e}")), None))?;
    Ok(solid(k))
}

/// Molar properties of a solid at one (T, p), library reference state.
#[pyfunction]
pub fn _solid_point<'py>(
    py: Python<'py>,
    solid: PyRef<'py, PySolid>,
    temperature: f64,
    pressure: f64,
) -> PyResult<Bound<'py, PyAny>> {
    let r = check(py, solid.inner.model().properties(temperature, pressure))?;
    let kw = records::kwargs(py, &r)?;
    kw.set_item("species", solid.inner.model().species())?;
    records::build(py, "SolidProperties", &kw)
}

/// Molar properties of a solid at many (T, p) points: flat arrays, NaN and `ok` = False where a
/// point failed.
#[pyfunction]
#[pyo3(signature = (solid, temperature, pressure, raise_errors=true))]
pub fn _solid_sweep<'py>(
    py: Python<'py>,
    solid: PyRef<'py, PySolid>,
    temperature: PyReadonlyArray1<'py, f64>,
    pressure: PyReadonlyArray1<'py, f64>,
    raise_errors: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let t = crate::sweeps::slice(py, &temperature, "temperature")?;
    let p = crate::sweeps::slice(py, &pressure, "pressure")?;
    if t.len() != p.len() {
        return Err(invalid(
            py,
            "pressure",
            &format!("{} values for {} temperatures", p.len(), t.len()),
        ));
    }
    let s = solid.inner.model();
    let names = ["gibbs", "enthalpy", "entropy", "molar_volume", "cp"];
    let mut cols: Vec<Vec<f64>> = names.iter().map(|_| Vec::with_capacity(t.len())).collect();
    let mut ok = Vec::with_capacity(t.len());
    let mut fails = Vec::new();
    for (i, (&ti, &pi)) in t.iter().zip(p).enumerate() {
        match s.properties(ti, pi) {
            Ok(r) => {
                for (c, v) in cols
                    .iter_mut()
                    .zip([r.gibbs, r.enthalpy, r.entropy, r.molar_volume, r.cp])
                {
                    c.push(v);
                }
                ok.push(true);
            }
            Err(e) => {
                for c in cols.iter_mut() {
                    c.push(f64::NAN);
                }
                ok.push(false);
                fails.push((i, e));
            }
        }
    }
    let failures = crate::sweeps::failures_to_py(py, fails, raise_errors, |i| {
        format!("at point {i} (T = {} K, p = {} Pa)", t[i], p[i])
    })?;
    let d = PyDict::new(py);
    for (n, c) in names.iter().zip(cols) {
        d.set_item(*n, numpy::PyArray1::from_vec(py, c))?;
    }
    d.set_item("ok", numpy::PyArray1::from_vec(py, ok))?;
    d.set_item("failures", failures)?;
    Ok(d)
}

/// The solid phase specifications of `solids` in `model` (each solid's species found among the
/// model's components by name).
fn specs<'a>(py: Python<'_>, model: &Model, solids: &'a [Arc<SolidKind>]) -> PyResult<Vec<SolidPhaseSpec<'a>>> {
    solids
        .iter()
        .enumerate()
        .map(|(k, s)| {
            SolidPhaseSpec::matching(model, s.model()).map_err(|e| errors::to_py(py, &e, Some(&format!("solids[{k}]"))))
        })
        .collect()
}

pub(crate) fn solid_list(solids: &[PyRef<'_, PySolid>]) -> Vec<Arc<SolidKind>> {
    solids.iter().map(|s| s.inner.clone()).collect()
}

fn solid_flash_record<'py>(py: Python<'py>, r: &SolidFlashResult) -> PyResult<Bound<'py, PyAny>> {
    let kw = PyDict::new(py);
    kw.set_item("temperature", r.temperature)?;
    kw.set_item("pressure", r.pressure)?;
    kw.set_item("feed", records::arr(py, &r.feed))?;
    match &r.fluid {
        Some(f) => kw.set_item("fluid", crate::results::flash_result(py, f.clone())?)?,
        None => kw.set_item("fluid", py.None())?,
    }
    kw.set_item("fluid_fractions", records::arr(py, &r.fluid_fractions))?;
    let mut present = Vec::with_capacity(r.solids.len());
    for s in &r.solids {
        present.push(records::build(py, "SolidPhase", &records::kwargs(py, s)?)?);
    }
    kw.set_item("solids", PyTuple::new(py, present)?)?;
    let mut margins = Vec::with_capacity(r.margins.len());
    for m in &r.margins {
        margins.push(records::build(py, "SolidMargin", &records::kwargs(py, m)?)?);
    }
    kw.set_item("margins", PyTuple::new(py, margins)?)?;
    kw.set_item(
        "diagnostics",
        records::build(py, "SolidFlashDiagnostics", &records::kwargs(py, &r.diagnostics)?)?,
    )?;
    records::build(py, "SolidFlashResult", &kw)
}

/// PT flash of one point over the fluid phases of `model` and the pure solids `solids`.
#[pyfunction]
#[pyo3(signature = (model, solids, temperature, pressure, amounts, options, tolerance=None))]
#[allow(clippy::too_many_arguments)]
pub fn solid_flash_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    solids: Vec<PyRef<'py, PySolid>>,
    temperature: f64,
    pressure: f64,
    amounts: PyReadonlyArray1<'py, f64>,
    options: PyRef<'py, PyFlashOptions>,
    tolerance: Option<f64>,
) -> PyResult<Bound<'py, PyAny>> {
    let m = model.inner.clone();
    let list = solid_list(&solids);
    let sp = specs(py, &m, &list)?;
    let n = crate::amounts_slice(py, &amounts)?;
    let mut opts = SolidFlashOptions {
        flash: options.inner,
        ..SolidFlashOptions::default()
    };
    if let Some(tol) = tolerance {
        opts.tolerance = tol;
    }
    let r = py.detach(|| flash_pt_with_solids(&*m, &sp, temperature, pressure, n, &opts));
    solid_flash_record(py, &check(py, r)?)
}

/// The frost point (K) of `solid` from the fluid of `amounts` at `pressure` (Pa).
#[pyfunction]
pub fn frost_point<'py>(
    py: Python<'py>,
    model: PyRef<'py, PyModel>,
    solid: PyRef<'py, PySolid>,
    pressure: f64,
    amounts: PyReadonlyArray1<'py, f64>,
    t_guess: f64,
    options: PyRef<'py, PyFlashOptions>,
) -> PyResult<f64> {
    let m = model.inner.clone();
    let s = solid.inner.clone();
    let spec = check(py, SolidPhaseSpec::matching(&*m, s.model()))?;
    let n = crate::amounts_slice(py, &amounts)?;
    let opts: FlashOptions = options.inner;
    check(
        py,
        py.detach(|| frost_point_temperature(&*m, spec, pressure, n, t_guess, &opts)),
    )
}
