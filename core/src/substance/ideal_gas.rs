//! Ideal-gas heat-capacity correlations and the absolute ideal-gas properties built on them.
//!
//! Reference state (used for every absolute h, s, g in the library): each species' ideal gas
//! at 298.15 K and 1e5 Pa has h = ΔfH°(298.15 K) and g = ΔfG°(298.15 K), i.e. the elements in
//! their standard states at 298.15 K and 1e5 Pa have h = 0 and g = 0, and s is the entropy
//! relative to those elements. This makes energies of different species, and of reactions
//! between them, directly comparable.

use super::{R, T_REFERENCE};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// The functional form of a heat-capacity correlation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CpForm {
    /// cp/R = a0 + a1 T + a2 T² + a3 T³ + a4 T⁴ (T in K); the form of Poling, Prausnitz &
    /// O'Connell, *The Properties of Gases and Liquids*, 5th ed., Appendix A.
    Poly4,
}

/// An ideal-gas isobaric heat-capacity correlation cp°(T) with its validity range.
///
/// Evaluating outside `[t_min, t_max]` is an [`Error::OutsideValidity`]: the library never
/// extrapolates a correlation silently. Phase-equilibrium calculations (fugacities, flashes,
/// saturation) do not use the ideal-gas part and so are not limited by this range; energies
/// (h, s, g, u, a, cp, cv, speed of sound) are.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CpCorrelation {
    /// Functional form.
    pub form: CpForm,
    /// Coefficients of the form (for `poly4`, a0..a4 of cp/R in powers of T/K).
    pub coefficients: Vec<f64>,
    /// Lowest temperature of validity, K.
    pub t_min: f64,
    /// Highest temperature of validity, K.
    pub t_max: f64,
}

impl CpCorrelation {
    pub(crate) fn validate(&self, name: &str) -> Result<()> {
        let ok_len = match self.form {
            CpForm::Poly4 => self.coefficients.len() == 5,
        };
        if !ok_len {
            return Err(Error::Data(format!(
                "component '{name}': cp correlation {:?} needs 5 coefficients, got {}",
                self.form,
                self.coefficients.len()
            )));
        }
        if self.coefficients.iter().any(|c| !c.is_finite())
            || !(self.t_min.is_finite() && self.t_max.is_finite())
            || !(self.t_min > 0.0 && self.t_max > self.t_min)
        {
            return Err(Error::Data(format!(
                "component '{name}': cp: the coefficients must be finite and t_min < t_max with \
                 t_min > 0 K (t_min = {}, t_max = {})",
                crate::error::num(self.t_min),
                crate::error::num(self.t_max)
            )));
        }
        if !(self.t_min <= T_REFERENCE && T_REFERENCE <= self.t_max) {
            return Err(Error::Data(format!(
                "component '{name}': cp range [{}, {}] K must include 298.15 K",
                crate::error::num(self.t_min),
                crate::error::num(self.t_max)
            )));
        }
        Ok(())
    }

    fn check_range(&self, t: f64, name: &str) -> Result<()> {
        if t >= self.t_min && t <= self.t_max {
            Ok(())
        } else {
            Err(Error::OutsideValidity {
                what: "temperature".into(),
                value: t,
                min: self.t_min,
                max: self.t_max,
                detail: format!("ideal-gas heat capacity correlation of {name}"),
            })
        }
    }

    /// cp°/R and its integrals at T: returns (cp/R, ∫cp/R dT from 298.15 K to T (K),
    /// ∫cp/(R T) dT from 298.15 K to T (-), d(cp/R)/dT (1/K)).
    pub fn integrals(&self, t: f64, name: &str) -> Result<(f64, f64, f64, f64)> {
        self.check_range(t, name)?;
        let a = &self.coefficients;
        match self.form {
            CpForm::Poly4 => {
                let cp = a[0] + t * (a[1] + t * (a[2] + t * (a[3] + t * a[4])));
                let dcp = a[1] + t * (2.0 * a[2] + t * (3.0 * a[3] + t * 4.0 * a[4]));
                let h = |x: f64| x * (a[0] + x * (a[1] / 2.0 + x * (a[2] / 3.0 + x * (a[3] / 4.0 + x * a[4] / 5.0))));
                let s = |x: f64| a[0] * x.ln() + x * (a[1] + x * (a[2] / 2.0 + x * (a[3] / 3.0 + x * a[4] / 4.0)));
                Ok((cp, h(t) - h(T_REFERENCE), s(t) - s(T_REFERENCE), dcp))
            }
        }
    }
}

/// Ideal-gas molar properties of one pure species at T and the standard pressure 1e5 Pa.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct IdealGasSpecies {
    /// Molar enthalpy, J/mol (reference state: see the module docs).
    pub h: f64,
    /// Molar entropy at 1e5 Pa, J/(mol K).
    pub s: f64,
    /// Molar isobaric heat capacity, J/(mol K).
    pub cp: f64,
}

impl super::Component {
    /// Ideal-gas h, s (at 1e5 Pa) and cp of this species at T (K).
    pub fn ideal_gas(&self, t: f64) -> Result<IdealGasSpecies> {
        let (cp, ih, is, _) = self.cp.integrals(t, &self.name)?;
        Ok(IdealGasSpecies {
            h: self.hf298 + R * ih,
            s: self.sf298() + R * is,
            cp: R * cp,
        })
    }
}
