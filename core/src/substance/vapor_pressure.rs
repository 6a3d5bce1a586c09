//! Vapour-pressure correlations of pure liquids, p_sat(T), with their validity ranges, and
//! the embedded file of published constants (`core/data/vapor_pressure.toml`).
//!
//! Two forms are supported, both with the analytic derivative d ln p_sat/dT:
//!
//! - **Antoine** (Antoine, C. R. Acad. Sci. 107, 681 and 836 (1888)):
//!   log p = A − B/(T + C), with the logarithm's base, the pressure unit and the temperature
//!   unit stated with the constants exactly as the source prints them ([`AntoineUnits`]): the
//!   constants are never converted, so they can be checked against the source digit by digit.
//! - **Wagner** (Wagner, Cryogenics 13, 470 (1973); the "2.5–5" and "3–6" forms of Poling,
//!   Prausnitz & O'Connell, *The Properties of Gases and Liquids*, 5th ed., 2001, eq. 7-3.2):
//!   ln(p/p_c) = (T_c/T) Σ_k a_k τ^{e_k}, τ = 1 − T/T_c, with the exponents given with the
//!   coefficients. The same form with exponents 1, 1.5, 3, 3.5, 4, 7.5 is the saturation
//!   equation of water of Wagner & Pruß, J. Phys. Chem. Ref. Data 22, 783 (1993).
//!
//! Every correlation has its validity range [t_min, t_max] (K). Evaluation outside it is an
//! [`Error::OutsideValidity`] naming the component, T and the range; a caller that wants to
//! extrapolate says so explicitly with [`VaporPressure::ln_pressure_extrapolated`].

use super::bank::Reference;
use crate::error::{Error, Result, num};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::f64::consts::LN_10;
use std::sync::OnceLock;

/// The embedded data file, compiled into the library.
const EMBEDDED: &str = include_str!("../../data/vapor_pressure.toml");

/// The base of the logarithm of an Antoine equation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LogBase {
    /// Natural logarithm, ln p = A − B/(T + C).
    Ln,
    /// Decimal logarithm, log10 p = A − B/(T + C).
    Log10,
}

/// The pressure unit of a published correlation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PressureUnit {
    /// Pa.
    Pa,
    /// kPa (1e3 Pa).
    #[serde(rename = "kPa")]
    KPa,
    /// bar (1e5 Pa).
    Bar,
    /// mmHg (torr, 101325/760 Pa).
    #[serde(rename = "mmHg")]
    MmHg,
}

impl PressureUnit {
    /// The unit in Pa.
    pub fn pascals(self) -> f64 {
        match self {
            PressureUnit::Pa => 1.0,
            PressureUnit::KPa => 1e3,
            PressureUnit::Bar => 1e5,
            PressureUnit::MmHg => 101_325.0 / 760.0,
        }
    }
}

/// The temperature scale of a published correlation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TemperatureUnit {
    /// Kelvin.
    Kelvin,
    /// Degrees Celsius (t = T − 273.15 K).
    Celsius,
}

/// The units an Antoine equation's constants refer to, as printed by its source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AntoineUnits {
    /// Base of the logarithm.
    pub base: LogBase,
    /// Unit of p.
    pub pressure: PressureUnit,
    /// Scale of T.
    pub temperature: TemperatureUnit,
}

/// The functional form and constants of a vapour-pressure correlation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "form", rename_all = "snake_case", deny_unknown_fields)]
pub enum VaporPressureEquation {
    /// log p = A − B/(T + C) in the stated units.
    Antoine {
        /// A (in the stated base and pressure unit).
        a: f64,
        /// B (in the stated temperature unit).
        b: f64,
        /// C (in the stated temperature unit).
        c: f64,
        /// The units of the constants.
        units: AntoineUnits,
    },
    /// ln(p/p_c) = (T_c/T) Σ a_k τ^{e_k}, τ = 1 − T/T_c.
    Wagner {
        /// The correlation's critical temperature, K.
        tc: f64,
        /// The correlation's critical pressure, Pa.
        pc: f64,
        /// Coefficients a_k.
        a: Vec<f64>,
        /// Exponents e_k (each ≥ 1, so that the derivative is finite at T_c).
        exponents: Vec<f64>,
    },
}

/// A vapour-pressure correlation of one component with its validity range and source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct VaporPressure {
    /// The component's canonical name in the component bank.
    pub component: String,
    /// Form and constants.
    pub equation: VaporPressureEquation,
    /// Lowest temperature of validity, K.
    pub t_min: f64,
    /// Highest temperature of validity, K.
    pub t_max: f64,
    /// The stated relative accuracy of p_sat within the range (dimensionless), if the
    /// source (or the data file's note) gives one.
    #[serde(default)]
    pub accuracy: Option<f64>,
    /// Reference key (in the file's `[references]`) with an optional confidence note.
    pub source: String,
}

impl VaporPressure {
    /// An Antoine correlation `log p = A − B/(T + C)` in the stated `units`, valid on
    /// [t_min, t_max] (K).
    pub fn antoine(
        component: &str,
        a: f64,
        b: f64,
        c: f64,
        units: AntoineUnits,
        t_min: f64,
        t_max: f64,
        source: &str,
    ) -> Result<VaporPressure> {
        let v = VaporPressure {
            component: component.to_string(),
            equation: VaporPressureEquation::Antoine { a, b, c, units },
            t_min,
            t_max,
            accuracy: None,
            source: source.to_string(),
        };
        v.validate()?;
        Ok(v)
    }

    /// Checks the constants: finite, 0 < t_min < t_max, T + C > 0 over the range (Antoine),
    /// matching lengths, exponents ≥ 1 and t_max ≤ T_c (Wagner).
    pub fn validate(&self) -> Result<()> {
        let bad = |msg: String| Err(Error::Data(format!("vapour pressure of '{}': {msg}", self.component)));
        if !(self.t_min.is_finite() && self.t_max.is_finite() && self.t_min > 0.0 && self.t_max > self.t_min) {
            return bad(format!(
                "the range must satisfy 0 < t_min < t_max (t_min = {} K, t_max = {} K)",
                num(self.t_min),
                num(self.t_max)
            ));
        }
        if let Some(acc) = self.accuracy
            && !(acc.is_finite() && acc > 0.0)
        {
            return bad(format!("accuracy {} must be finite and > 0", num(acc)));
        }
        match &self.equation {
            VaporPressureEquation::Antoine { a, b, c, units } => {
                if !(a.is_finite() && b.is_finite() && c.is_finite()) {
                    return bad("the Antoine constants must be finite".into());
                }
                let shift = match units.temperature {
                    TemperatureUnit::Kelvin => 0.0,
                    TemperatureUnit::Celsius => -273.15,
                };
                if self.t_min + shift + c <= 0.0 {
                    return bad(format!(
                        "T + C must be positive over the range; it is {} at t_min",
                        num(self.t_min + shift + c)
                    ));
                }
            }
            VaporPressureEquation::Wagner { tc, pc, a, exponents } => {
                if !(tc.is_finite() && *tc > 0.0 && pc.is_finite() && *pc > 0.0) {
                    return bad("the Wagner T_c and p_c must be finite and > 0".into());
                }
                if a.is_empty() || a.len() != exponents.len() {
                    return bad(format!(
                        "{} coefficients and {} exponents; one exponent per coefficient is required",
                        a.len(),
                        exponents.len()
                    ));
                }
                if a.iter().any(|x| !x.is_finite()) || exponents.iter().any(|e| !(e.is_finite() && *e >= 1.0)) {
                    return bad("the Wagner coefficients must be finite and the exponents ≥ 1".into());
                }
                if self.t_max > *tc {
                    return bad(format!(
                        "t_max = {} K lies above the correlation's T_c = {} K",
                        num(self.t_max),
                        num(*tc)
                    ));
                }
            }
        }
        Ok(())
    }

    /// ln p_sat (p in Pa) and d ln p_sat/dT (1/K) at T (K), inside the validity range;
    /// outside it, [`Error::OutsideValidity`] naming the component, T and the range.
    pub fn ln_pressure(&self, t: f64) -> Result<(f64, f64)> {
        if !(t >= self.t_min && t <= self.t_max) {
            return Err(Error::OutsideValidity {
                what: "temperature".into(),
                value: t,
                min: self.t_min,
                max: self.t_max,
                detail: format!(
                    "vapour-pressure correlation of {} ({}); outside its range call \
                     ln_pressure_extrapolated to extrapolate deliberately",
                    self.component, self.source
                ),
            });
        }
        self.ln_pressure_extrapolated(t)
    }

    /// ln p_sat (Pa) and d ln p_sat/dT (1/K) at T (K) without the range check: the caller
    /// opts in to extrapolation. Still an error where the equation itself has no value
    /// (T + C ≤ 0 for Antoine, T > T_c or T ≤ 0 for Wagner).
    pub fn ln_pressure_extrapolated(&self, t: f64) -> Result<(f64, f64)> {
        let fail = |why: &str| {
            Err(Error::invalid(
                "temperature",
                format!(
                    "T = {} K: the vapour-pressure equation of {} has no value there ({why})",
                    num(t),
                    self.component
                ),
            ))
        };
        if !(t.is_finite() && t > 0.0) {
            return fail("T must be finite and > 0");
        }
        match &self.equation {
            VaporPressureEquation::Antoine { a, b, c, units } => {
                let tu = match units.temperature {
                    TemperatureUnit::Kelvin => t,
                    TemperatureUnit::Celsius => t - 273.15,
                };
                let den = tu + c;
                if den <= 0.0 {
                    return fail("T + C ≤ 0");
                }
                let s = match units.base {
                    LogBase::Ln => 1.0,
                    LogBase::Log10 => LN_10,
                };
                let lnp = s * (a - b / den) + units.pressure.pascals().ln();
                Ok((lnp, s * b / (den * den)))
            }
            VaporPressureEquation::Wagner { tc, pc, a, exponents } => {
                if t > *tc {
                    return fail("T above the correlation's critical temperature");
                }
                let tau = 1.0 - t / tc;
                let (mut s, mut ds) = (0.0, 0.0);
                for (ak, ek) in a.iter().zip(exponents) {
                    s += ak * tau.powf(*ek);
                    ds += ak * ek * tau.powf(ek - 1.0);
                }
                let lnp = pc.ln() + tc / t * s;
                // d/dT [(Tc/T) S(τ)] with dτ/dT = −1/Tc.
                let d = -tc / (t * t) * s - ds / t;
                Ok((lnp, d))
            }
        }
    }

    /// p_sat (Pa) at T (K), inside the validity range.
    pub fn pressure(&self, t: f64) -> Result<f64> {
        Ok(self.ln_pressure(t)?.0.exp())
    }

    /// The saturation temperature (K) at p (Pa), by Newton's method on ln p_sat(T) bracketed by
    /// the validity range; [`Error::OutsideValidity`] (in pressure) when p lies outside
    /// [p_sat(t_min), p_sat(t_max)].
    pub fn temperature(&self, p: f64) -> Result<f64> {
        crate::error::check::pressure(p)?;
        let (l0, _) = self.ln_pressure(self.t_min)?;
        let (l1, _) = self.ln_pressure(self.t_max)?;
        let target = p.ln();
        if !(target >= l0 && target <= l1) {
            return Err(Error::OutsideValidity {
                what: "pressure".into(),
                value: p,
                min: l0.exp(),
                max: l1.exp(),
                detail: format!(
                    "vapour-pressure correlation of {} ({}), valid on [{}, {}] K",
                    self.component,
                    self.source,
                    num(self.t_min),
                    num(self.t_max)
                ),
            });
        }
        let (mut lo, mut hi) = (self.t_min, self.t_max);
        let mut t = lo + (hi - lo) * (target - l0) / (l1 - l0).max(f64::MIN_POSITIVE);
        for _ in 0..100 {
            let (l, d) = self.ln_pressure(t)?;
            let r = l - target;
            if r > 0.0 {
                hi = t;
            } else {
                lo = t;
            }
            if r.abs() < 1e-13 {
                return Ok(t);
            }
            let mut next = t - r / d;
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            if (hi - lo) < 1e-12 * t {
                return Ok(next);
            }
            t = next;
        }
        Err(Error::not_converged(
            "saturation temperature from a vapour-pressure correlation",
            vec![("Newton".into(), 100)],
            (hi - lo) / t,
            1e-12,
        ))
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct VaporPressureFile {
    #[serde(default)]
    references: BTreeMap<String, Reference>,
    #[serde(default)]
    vapor_pressure: Vec<VaporPressure>,
}

/// A set of vapour-pressure correlations with their references, looked up by component name.
/// A component may have several; the first in the file is the preferred one.
#[derive(Debug, Clone, PartialEq)]
pub struct VaporPressureBank {
    references: BTreeMap<String, Reference>,
    entries: Vec<VaporPressure>,
}

impl VaporPressureBank {
    /// The correlations compiled into the library from `core/data/vapor_pressure.toml`.
    pub fn embedded() -> &'static VaporPressureBank {
        static BANK: OnceLock<VaporPressureBank> = OnceLock::new();
        BANK.get_or_init(|| {
            // The embedded file is checked by the test suite; a failure here is a build defect.
            VaporPressureBank::from_toml_str(EMBEDDED)
                .unwrap_or_else(|e| panic!("the embedded vapour-pressure file is invalid: {e}"))
        })
    }

    /// Parses and validates a file of the embedded schema: `[references.<key>]` tables with a
    /// `citation`, and `[[vapor_pressure]]` entries (fields of [`VaporPressure`]) whose
    /// `source` starts with one of the reference keys.
    pub fn from_toml_str(text: &str) -> Result<VaporPressureBank> {
        let file: VaporPressureFile =
            toml::from_str(text).map_err(|e| Error::Data(format!("vapour-pressure file: {e}")))?;
        for (k, v) in file.vapor_pressure.iter().enumerate() {
            v.validate()
                .map_err(|e| Error::Data(format!("vapour-pressure file: entry {k}: {}", e.message())))?;
            let key = v.source.split_whitespace().next().unwrap_or("");
            if !file.references.contains_key(key) {
                return Err(Error::Data(format!(
                    "vapour-pressure file: entry {k} ('{}'): source '{}' names no reference in [references]",
                    v.component, v.source
                )));
            }
        }
        Ok(VaporPressureBank {
            references: file.references,
            entries: file.vapor_pressure,
        })
    }

    /// All correlations, in file order.
    pub fn entries(&self) -> &[VaporPressure] {
        &self.entries
    }

    /// The references, by key.
    pub fn references(&self) -> &BTreeMap<String, Reference> {
        &self.references
    }

    /// The preferred correlation of the component named `name` (its canonical bank name,
    /// case-insensitive).
    pub fn get(&self, name: &str) -> Result<&VaporPressure> {
        let key = name.trim().to_lowercase();
        self.entries
            .iter()
            .find(|e| e.component.to_lowercase() == key)
            .ok_or_else(|| {
                let have: Vec<&str> = self.entries.iter().map(|e| e.component.as_str()).collect();
                Error::Data(format!(
                    "no vapour-pressure correlation for '{name}' in the data file; it has: {}",
                    have.join(", ")
                ))
            })
    }

    /// Every correlation of the component named `name`, preferred first.
    pub fn all(&self, name: &str) -> impl Iterator<Item = &VaporPressure> {
        let key = name.trim().to_lowercase();
        self.entries.iter().filter(move |e| e.component.to_lowercase() == key)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::substance::DataBank;

    #[test]
    fn embedded_file_is_valid_and_names_bank_components() {
        let b = VaporPressureBank::embedded();
        for e in b.entries() {
            assert!(DataBank::embedded().get(&e.component).is_ok(), "{}", e.component);
        }
        for name in [
            "water",
            "methanol",
            "ethanol",
            "1-propanol",
            "1-butanol",
            "acetone",
            "benzene",
            "toluene",
            "n-hexane",
            "n-heptane",
            "cyclohexane",
            "methyl acetate",
        ] {
            assert!(b.get(name).is_ok(), "{name}");
        }
    }

    #[test]
    fn derivative_matches_central_difference() {
        for e in VaporPressureBank::embedded().entries() {
            let t = 0.5 * (e.t_min + e.t_max);
            let h = 1e-4;
            let (_, d) = e.ln_pressure(t).unwrap();
            let fd = (e.ln_pressure(t + h).unwrap().0 - e.ln_pressure(t - h).unwrap().0) / (2.0 * h);
            assert!((d - fd).abs() < 1e-7 * d.abs().max(1.0), "{}: {d} vs {fd}", e.component);
            let p = e.pressure(t).unwrap();
            let back = e.temperature(p).unwrap();
            assert!((back - t).abs() < 1e-8, "{}: {back} vs {t}", e.component);
        }
    }

    #[test]
    fn outside_range_is_refused_with_the_range() {
        let w = VaporPressureBank::embedded().get("water").unwrap();
        let e = w.ln_pressure(w.t_max + 1.0).unwrap_err();
        let msg = e.to_string();
        assert_eq!(e.kind(), crate::error::ErrorKind::OutsideValidity);
        assert!(
            msg.contains("water") && msg.contains(&num(w.t_max).to_string()),
            "{msg}"
        );
        assert!(w.ln_pressure(w.t_min - 1.0).is_err());
        assert!(w.ln_pressure_extrapolated(w.t_min - 1.0).is_ok());
        let bad = VaporPressureBank::from_toml_str(
            "[references.x]\ncitation = \"c\"\n[[vapor_pressure]]\ncomponent = \"a\"\nt_min = 300.0\nt_max = 200.0\nsource = \"x\"\nequation = { form = \"antoine\", a = 1.0, b = 1.0, c = 0.0, units = { base = \"ln\", pressure = \"kPa\", temperature = \"kelvin\" } }\n",
        );
        assert!(bad.is_err());
    }
}

#[cfg(test)]
mod water_tests {
    use super::*;
    use crate::model::Iapws95;

    /// Water's correlations against the library's IAPWS-95 saturation pressure (IAPWS R6-95,
    /// the phase-equilibrium condition of the formulation) over each correlation's range,
    /// within the accuracy the data file states for it.
    #[test]
    fn water_correlations_agree_with_iapws95_within_their_stated_accuracy() {
        let w = Iapws95::new();
        for e in VaporPressureBank::embedded().all("water") {
            let acc = e.accuracy.expect("water entries state an accuracy");
            let mut worst: f64 = 0.0;
            for k in 0..=40 {
                let t = (e.t_min + (e.t_max - e.t_min) * k as f64 / 40.0).clamp(273.16, 647.0);
                let p_ref = w.saturation_at_temperature(t).unwrap().pressure;
                let p = e.pressure(t).unwrap();
                worst = worst.max((p / p_ref - 1.0).abs());
            }
            assert!(worst < acc, "{}: worst relative deviation {worst} > {acc}", e.source);
        }
    }
}
