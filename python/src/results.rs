//! Compact result classes of the single-point calls: `FlashResult`, `Phase`, `TieLine`,
//! `FlashDiagnostics`, `Properties` and `SaturationPoint`.
//!
//! Each is a frozen Rust class that holds the numbers of the core result as they are; numpy
//! arrays are built only when an attribute is read, so a scalar call costs a few object
//! allocations instead of a Python dataclass (and its dicts) per record. They behave as the
//! records of `tieline._results` do: keyword construction in field order, read-only
//! attributes, `to_dict()`, `to_json()`, equality with NaN equal to NaN, a dataclass-style
//! `repr`, no hash, pickling. Units are SI: K, Pa, mol, m3, J.

use crate::records::{class, kind_name};
use numpy::PyArray1;
use pyo3::prelude::*;
use pyo3::types::{PyFloat, PyList, PyString, PyTuple};
use tieline::equilibrium::{FlashResult as CoreFlash, Phase as CorePhase, SaturationPoint as CoreSaturation};
use tieline::model::{PhaseKind, Properties as CoreProperties};

/// How a stored field reads in Python (`to_py`) and in `to_dict()` (`plain`).
pub trait Field {
    /// The attribute value.
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>>;
    /// The value as plain Python data (lists instead of arrays, records as dicts).
    fn plain<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.to_py(py)
    }
}

impl Field for f64 {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(PyFloat::new(py, *self).into_any())
    }
}

impl Field for usize {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(self.into_pyobject(py)?.into_any())
    }
}

impl Field for bool {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(pyo3::types::PyBool::new(py, *self).to_owned().into_any())
    }
}

impl Field for String {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(PyString::new(py, self).into_any())
    }
}

impl Field for Option<f64> {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        match self {
            Some(x) => x.to_py(py),
            None => Ok(py.None().into_bound(py)),
        }
    }
}

impl Field for Vec<f64> {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(PyArray1::from_slice(py, self).into_any())
    }
    fn plain<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(PyList::new(py, self)?.into_any())
    }
}

impl Field for Py<PyAny> {
    fn to_py<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        Ok(self.bind(py).clone())
    }
    fn plain<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        class(py, "_plain")?.call1((self.bind(py),))
    }
}

/// A frozen record class with the common behaviour; `extra` holds further methods.
macro_rules! record_class {
    (
        $(#[$meta:meta])*
        $rs:ident, $name:literal {
            $( $(#[$fmeta:meta])* $f:ident : $t:ty ),* $(,)?
        }
        extra { $($extra:tt)* }
    ) => {
        $(#[$meta])*
        #[pyclass(frozen, name = $name, module = "tieline")]
        pub struct $rs {
            $( pub(crate) $f: $t, )*
        }

        #[pymethods]
        impl $rs {
            #[new]
            #[allow(clippy::too_many_arguments)]
            fn new($($f: $t),*) -> Self {
                $rs { $($f),* }
            }

            $(
                $(#[$fmeta])*
                #[getter]
                fn $f<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
                    Field::to_py(&self.$f, py)
                }
            )*

            /// The names of the fields, in order.
            #[classattr]
            fn _fields(py: Python<'_>) -> PyResult<Py<PyTuple>> {
                Ok(PyTuple::new(py, [$(stringify!($f)),*])?.unbind())
            }

            /// The record as plain Python data (lists instead of arrays), SI units.
            fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, pyo3::types::PyDict>> {
                let d = pyo3::types::PyDict::new(py);
                $( d.set_item(stringify!($f), Field::plain(&self.$f, py)?)?; )*
                Ok(d)
            }

            /// The record as JSON text (see `to_dict`); non-finite numbers become null.
            fn to_json(&self, py: Python<'_>) -> PyResult<String> {
                class(py, "_json_text")?.call1((self.to_dict(py)?,))?.extract()
            }

            fn __eq__(&self, py: Python<'_>, other: &Bound<'_, PyAny>) -> PyResult<Py<PyAny>> {
                match other.cast::<$rs>() {
                    Ok(o) if other.get_type().is(py.get_type::<$rs>()) => {
                        let same = class(py, "_same")?.call1((self.to_dict(py)?, o.get().to_dict(py)?))?;
                        Ok(same.unbind())
                    }
                    _ => Ok(py.NotImplemented()),
                }
            }

            fn __repr__(&self, py: Python<'_>) -> PyResult<String> {
                let mut s = String::from(concat!($name, "("));
                let mut first = true;
                $(
                    if !first {
                        s.push_str(", ");
                    }
                    first = false;
                    s.push_str(concat!(stringify!($f), "="));
                    s.push_str(&Field::to_py(&self.$f, py)?.repr()?.to_cow()?);
                )*
                let _ = first;
                s.push(')');
                Ok(s)
            }

            fn __reduce__<'py>(slf: &Bound<'py, Self>) -> PyResult<Bound<'py, PyTuple>> {
                let py = slf.py();
                let me = slf.get();
                let args = PyTuple::new(py, [$(Field::to_py(&me.$f, py)?),*])?;
                PyTuple::new(py, [slf.get_type().into_any(), args.into_any()])
            }

            $($extra)*
        }
    };
}

record_class! {
    /// One phase of a flash result (SI units). Array attributes are built when read.
    PyPhase, "Phase" {
        /// "vapor", "liquid", "liquid2" or "liquid3" (liquids by decreasing density).
        kind: String,
        /// Amount of the phase, mol.
        amount: f64,
        /// Amount of the phase over the total feed amount.
        fraction: f64,
        /// Mole fractions, one per component.
        composition: Vec<f64>,
        /// Molar volume, m3/mol.
        molar_volume: f64,
        /// Compressibility factor pv/(RT).
        z: f64,
        /// Natural logarithms of the fugacity coefficients.
        ln_phi: Vec<f64>,
    }
    extra {
        /// Molar density, mol/m3.
        #[getter]
        fn molar_density(&self) -> f64 {
            1.0 / self.molar_volume
        }

        /// Fugacities f_i = x_i φ_i p, Pa, at the flash pressure `pressure` (Pa).
        fn fugacities<'py>(&self, py: Python<'py>, pressure: f64) -> Bound<'py, PyArray1<f64>> {
            let v: Vec<f64> = self
                .composition
                .iter()
                .zip(&self.ln_phi)
                .map(|(x, l)| x * l.exp() * pressure)
                .collect();
            PyArray1::from_vec(py, v)
        }
    }
}

record_class! {
    /// The extension of the tie line through a single-phase feed (negative flash): `beta` the
    /// vapour-side fraction (outside [0, 1]), `x` and `y` the liquid- and vapour-side mole
    /// fractions.
    PyTieLine, "TieLine" {
        /// Vapour-side fraction, outside [0, 1] for a single-phase feed.
        beta: f64,
        /// Liquid-side mole fractions.
        x: Vec<f64>,
        /// Vapour-side mole fractions.
        y: Vec<f64>,
    }
    extra {}
}

record_class! {
    /// How a flash reached its answer: iterations, the final residual, the stability
    /// certificate (minimum tangent-plane distance of the result, dimensionless; None when
    /// switched off), whether a warm start was kept, splits tried and the reduced Gibbs energy
    /// Σ n_i (ln x_i + ln φ_i) per mol of feed (dimensionless).
    PyFlashDiagnostics, "FlashDiagnostics" {
        /// Iterations of the feed stability test.
        stability_iterations: usize,
        /// Successive-substitution iterations.
        ss_iterations: usize,
        /// Accepted accelerations.
        accelerations: usize,
        /// Newton iterations.
        newton_iterations: usize,
        /// Final max_i |ln f_i^V − ln f_i^L| (0 for a single phase).
        residual: f64,
        /// Minimum tangent-plane distance of an independent stability test of the result, or None.
        certificate: Option<f64>,
        /// Iterations of that test.
        certificate_iterations: usize,
        /// Whether a warm start from the previous point was used and kept.
        warm_start: bool,
        /// Two-phase splits tried.
        splits_tried: usize,
        /// Reduced Gibbs energy of the result per mol of feed (dimensionless).
        gibbs: f64,
    }
    extra {}
}

record_class! {
    /// Result of a PT flash: temperature (K), pressure (Pa), feed amounts (mol), the phases
    /// present (vapour first, then liquids by increasing density), the tie-line extension of a
    /// single-phase feed when asked for (or None), and the diagnostics.
    PyFlashResult, "FlashResult" {
        /// Temperature, K.
        temperature: f64,
        /// Pressure, Pa.
        pressure: f64,
        /// Feed amounts, mol.
        feed: Vec<f64>,
        /// The phases present (a tuple of Phase).
        phases: Py<PyAny>,
        /// The tie-line extension of a single-phase feed, or None.
        tie_line: Py<PyAny>,
        /// Iterations, residual and stability certificate.
        diagnostics: Py<PyAny>,
    }
    extra {
        /// Number of phases present.
        #[getter]
        fn num_phases(&self, py: Python<'_>) -> PyResult<usize> {
            self.phases.bind(py).len()
        }

        /// Vapour amount over feed amount (0 when there is no vapour).
        #[getter]
        fn vapor_fraction(&self, py: Python<'_>) -> PyResult<f64> {
            let mut s = 0.0;
            for p in self.phases.bind(py).try_iter()? {
                let p = p?;
                if let Ok(ph) = p.cast::<PyPhase>()
                    && ph.get().kind == "vapor"
                {
                    s += ph.get().fraction;
                }
            }
            Ok(s)
        }

        /// The first phase of `kind` ("vapor", "liquid", "liquid2", "liquid3"), or None.
        fn phase<'py>(&self, py: Python<'py>, kind: &str) -> PyResult<Option<Bound<'py, PyAny>>> {
            for p in self.phases.bind(py).try_iter()? {
                let p = p?;
                if let Ok(ph) = p.cast::<PyPhase>()
                    && ph.get().kind == kind
                {
                    return Ok(Some(p));
                }
            }
            Ok(None)
        }

        /// The phases as PhaseState objects of `model` (the model that was flashed).
        fn phase_states<'py>(slf: &Bound<'py, Self>, model: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyAny>> {
            class(slf.py(), "_flash_phase_states")?.call1((slf, model))
        }

        /// Thermodynamic properties of each phase (a list of Properties), SI units.
        fn properties<'py>(slf: &Bound<'py, Self>, model: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyAny>> {
            class(slf.py(), "_flash_properties")?.call1((slf, model))
        }

        /// One row per phase: kind, amount (mol), fraction, molar volume (m3/mol), Z and the
        /// mole fractions `x[i]` (needs pandas).
        fn to_dataframe<'py>(slf: &Bound<'py, Self>) -> PyResult<Bound<'py, PyAny>> {
            class(slf.py(), "_flash_frame")?.call1((slf,))
        }
    }
}

record_class! {
    /// Thermodynamic properties of one phase (molar quantities per mol of phase, SI units).
    /// Energies are absolute, referred to the ideal gases at 298.15 K and 1e5 Pa with h equal
    /// to the enthalpy of formation and g to the Gibbs energy of formation.
    PyProperties, "Properties" {
        /// "vapor" or "liquid".
        kind: String,
        /// Temperature, K.
        temperature: f64,
        /// Pressure, Pa.
        pressure: f64,
        /// Mole fractions.
        composition: Vec<f64>,
        /// Molar volume, m3/mol.
        molar_volume: f64,
        /// Molar density, mol/m3.
        molar_density: f64,
        /// Mass density, kg/m3.
        mass_density: f64,
        /// Molar mass, kg/mol.
        molar_mass: f64,
        /// Compressibility factor.
        z: f64,
        /// ln φ_i.
        ln_phi: Vec<f64>,
        /// Fugacities f_i = x_i φ_i p, Pa.
        fugacity: Vec<f64>,
        /// Enthalpy, J/mol.
        enthalpy: f64,
        /// Entropy, J/(mol K).
        entropy: f64,
        /// Gibbs energy, J/mol.
        gibbs: f64,
        /// Internal energy, J/mol.
        internal_energy: f64,
        /// Helmholtz energy, J/mol.
        helmholtz: f64,
        /// Isobaric heat capacity, J/(mol K).
        cp: f64,
        /// Isochoric heat capacity, J/(mol K).
        cv: f64,
        /// Speed of sound, m/s.
        speed_of_sound: f64,
        /// Joule–Thomson coefficient (∂T/∂p)_h, K/Pa.
        joule_thomson: f64,
        /// Isothermal compressibility, 1/Pa.
        isothermal_compressibility: f64,
        /// Thermal expansion coefficient, 1/K.
        thermal_expansion: f64,
        /// Residual enthalpy (departure from the ideal gas at T and p), J/mol.
        residual_enthalpy: f64,
        /// Residual entropy, J/(mol K).
        residual_entropy: f64,
        /// Residual Gibbs energy, J/mol.
        residual_gibbs: f64,
    }
    extra {}
}

record_class! {
    /// A vapour–liquid saturation state of a pure component: temperature (K), vapour pressure
    /// (Pa), saturated molar volumes (m3/mol) and densities (mol/m3), the enthalpy of
    /// vaporisation h_V − h_L (J/mol), the final |ln φ_L − ln φ_V| and the iterations.
    PySaturationPoint, "SaturationPoint" {
        /// Temperature, K.
        temperature: f64,
        /// Vapour pressure, Pa.
        pressure: f64,
        /// Saturated liquid molar volume, m3/mol.
        liquid_molar_volume: f64,
        /// Saturated vapour molar volume, m3/mol.
        vapor_molar_volume: f64,
        /// Saturated liquid molar density, mol/m3.
        liquid_density: f64,
        /// Saturated vapour molar density, mol/m3.
        vapor_density: f64,
        /// h_V − h_L, J/mol.
        enthalpy_of_vaporization: f64,
        /// Final |ln φ_L − ln φ_V|.
        residual: f64,
        /// Iterations used.
        iterations: usize,
    }
    extra {}
}

fn phase_object(py: Python<'_>, p: CorePhase) -> PyResult<Bound<'_, PyPhase>> {
    Bound::new(
        py,
        PyPhase {
            kind: kind_name(p.kind).to_string(),
            amount: p.amount,
            fraction: p.fraction,
            composition: p.composition,
            molar_volume: p.molar_volume,
            z: p.z,
            ln_phi: p.ln_phi,
        },
    )
}

/// A core flash result as `tieline.FlashResult` (the vectors are moved, not copied).
pub fn flash_result(py: Python<'_>, r: CoreFlash) -> PyResult<Bound<'_, PyAny>> {
    let phases = r
        .phases
        .into_iter()
        .map(|p| phase_object(py, p))
        .collect::<PyResult<Vec<_>>>()?;
    let tie_line = match r.tie_line {
        Some(t) => Bound::new(
            py,
            PyTieLine {
                beta: t.beta,
                x: t.x,
                y: t.y,
            },
        )?
        .into_any()
        .unbind(),
        None => py.None(),
    };
    let d = r.diagnostics;
    let diagnostics = Bound::new(
        py,
        PyFlashDiagnostics {
            stability_iterations: d.stability_iterations,
            ss_iterations: d.ss_iterations,
            accelerations: d.accelerations,
            newton_iterations: d.newton_iterations,
            residual: d.residual,
            certificate: d.certificate,
            certificate_iterations: d.certificate_iterations,
            warm_start: d.warm_start,
            splits_tried: d.splits_tried,
            gibbs: d.gibbs,
        },
    )?;
    Ok(Bound::new(
        py,
        PyFlashResult {
            temperature: r.temperature,
            pressure: r.pressure,
            feed: r.feed,
            phases: PyTuple::new(py, phases)?.into_any().unbind(),
            tie_line,
            diagnostics: diagnostics.into_any().unbind(),
        },
    )?
    .into_any())
}

/// Core phase properties as `tieline.Properties`, with the phase kind.
pub fn properties(py: Python<'_>, p: CoreProperties, kind: PhaseKind) -> PyResult<Bound<'_, PyAny>> {
    Ok(Bound::new(
        py,
        PyProperties {
            kind: kind_name(Some(kind)).to_string(),
            temperature: p.temperature,
            pressure: p.pressure,
            composition: p.composition,
            molar_volume: p.molar_volume,
            molar_density: p.molar_density,
            mass_density: p.mass_density,
            molar_mass: p.molar_mass,
            z: p.z,
            ln_phi: p.ln_phi,
            fugacity: p.fugacity,
            enthalpy: p.enthalpy,
            entropy: p.entropy,
            gibbs: p.gibbs,
            internal_energy: p.internal_energy,
            helmholtz: p.helmholtz,
            cp: p.cp,
            cv: p.cv,
            speed_of_sound: p.speed_of_sound,
            joule_thomson: p.joule_thomson,
            isothermal_compressibility: p.isothermal_compressibility,
            thermal_expansion: p.thermal_expansion,
            residual_enthalpy: p.residual_enthalpy,
            residual_entropy: p.residual_entropy,
            residual_gibbs: p.residual_gibbs,
        },
    )?
    .into_any())
}

/// A core saturation state as `tieline.SaturationPoint`.
pub fn saturation(py: Python<'_>, s: CoreSaturation) -> PyResult<Bound<'_, PyAny>> {
    Ok(Bound::new(
        py,
        PySaturationPoint {
            temperature: s.temperature,
            pressure: s.pressure,
            liquid_molar_volume: s.liquid_molar_volume,
            vapor_molar_volume: s.vapor_molar_volume,
            liquid_density: s.liquid_density,
            vapor_density: s.vapor_density,
            enthalpy_of_vaporization: s.enthalpy_of_vaporization,
            residual: s.residual,
            iterations: s.iterations,
        },
    )?
    .into_any())
}
