//! Water by IAPWS-95 in its own terms: properties per kg in the IAPWS-95 reference state at
//! (T, ρ) or (T, p), and the saturation state with both phases (the engine of
//! `tieline.water_properties` and `tieline.water_saturation`). Units: K, Pa, kg/m3, J/kg.

use crate::errors::{check, invalid};
use crate::{records, root_choice};
use pyo3::prelude::*;
use tieline::model::Iapws95;
use tieline::model::iapws95::{SpecificProperties, WaterSaturation};

fn properties<'py>(py: Python<'py>, s: &SpecificProperties) -> PyResult<Bound<'py, PyAny>> {
    records::build(py, "WaterProperties", &records::kwargs(py, s)?)
}

/// Properties at temperature (K) and `by` = "density" (`value` in kg/m3) or "pressure"
/// (`value` in Pa, on the volume root `root`).
#[pyfunction]
#[pyo3(signature = (temperature, by, value, root="stable"))]
pub fn water_state<'py>(
    py: Python<'py>,
    temperature: f64,
    by: &str,
    value: f64,
    root: &str,
) -> PyResult<Bound<'py, PyAny>> {
    let w = Iapws95::new();
    let s = match by {
        "density" => w.state_td(temperature, value),
        "pressure" => w.state_tp(temperature, value, root_choice(py, root)?),
        _ => {
            return Err(invalid(
                py,
                "by",
                &format!("'{by}'; \"density\" or \"pressure\" is required"),
            ));
        }
    };
    properties(py, &check(py, s)?)
}

/// The saturation state at `by` = "temperature" (`value` in K) or "pressure" (Pa).
#[pyfunction]
pub fn water_saturation_point<'py>(py: Python<'py>, by: &str, value: f64) -> PyResult<Bound<'py, PyAny>> {
    let w = Iapws95::new();
    let s: WaterSaturation = check(
        py,
        match by {
            "temperature" => w.saturation_at_temperature(value),
            "pressure" => w.saturation_at_pressure(value),
            _ => {
                return Err(invalid(
                    py,
                    "by",
                    &format!("'{by}'; \"temperature\" or \"pressure\" is required"),
                ));
            }
        },
    )?;
    let kw = pyo3::types::PyDict::new(py);
    kw.set_item("temperature", s.temperature)?;
    kw.set_item("pressure", s.pressure)?;
    kw.set_item("liquid", properties(py, &s.liquid)?)?;
    kw.set_item("vapor", properties(py, &s.vapor)?)?;
    kw.set_item("iterations", s.iterations)?;
    kw.set_item("residual", s.residual)?;
    records::build(py, "WaterSaturation", &kw)
}
