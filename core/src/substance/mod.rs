//! Component constants and correlations, and the embedded data bank.
//!
//! A [`Component`] holds the constants the models need (critical point, acentric factor,
//! molar mass ...) and an ideal-gas heat-capacity correlation with its validity range. The
//! embedded bank ([`DataBank::embedded`]) is compiled into the library from
//! `core/data/components.toml`; users can load their own file of the same schema with
//! [`DataBank::from_toml_str`] or build components in code.
//!
//! All values are stored in SI units: K, Pa, m3/mol, kg/mol, J/mol.

mod bank;
pub(crate) mod ideal_gas;
pub mod liquid_volume;
pub mod species;
pub mod vapor_pressure;
pub use ideal_gas::IdealGasSpecies;

pub use bank::{DataBank, Reference};
pub use ideal_gas::{CpCorrelation, CpForm};
pub use liquid_volume::RackettVolume;
pub use species::{CpRange, Species, SpeciesBank, SpeciesPhase, StandardState};
pub use vapor_pressure::{
    AntoineUnits, LogBase, PressureUnit, TemperatureUnit, VaporPressure, VaporPressureBank, VaporPressureEquation,
};

use crate::error::{Error, Result, num};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Molar gas constant R, J/(mol K) (CODATA 2018, exact since the 2019 SI redefinition).
pub const R: f64 = 8.314_462_618_153_24;

/// Standard-state pressure p° = 1e5 Pa (IUPAC standard pressure, 1 bar).
pub const P_STANDARD: f64 = 1.0e5;

/// Reference temperature of the formation properties, 298.15 K.
pub const T_REFERENCE: f64 = 298.15;

/// One pure component with its constants, each with the key of the reference it came from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Component {
    /// Canonical name (lower case, e.g. "n-butane").
    pub name: String,
    /// Other names it can be looked up by (formula, common and trade names).
    #[serde(default)]
    pub aliases: Vec<String>,
    /// Hill-order or common molecular formula, e.g. "C4H10".
    pub formula: String,
    /// CAS registry number, e.g. "106-97-8".
    pub cas: String,
    /// Molar mass, kg/mol.
    pub molar_mass: f64,
    /// Critical temperature, K.
    pub tc: f64,
    /// Critical pressure, Pa.
    pub pc: f64,
    /// Pitzer acentric factor, dimensionless.
    pub acentric: f64,
    /// Critical molar volume, m3/mol.
    pub vc: f64,
    /// Normal boiling point at 101325 Pa, K (`None` for substances that sublime at 1 atm).
    #[serde(default)]
    pub tb: Option<f64>,
    /// Standard enthalpy of formation of the ideal gas at 298.15 K, 1e5 Pa, J/mol.
    pub hf298: f64,
    /// Standard Gibbs energy of formation of the ideal gas at 298.15 K, 1e5 Pa, J/mol.
    pub gf298: f64,
    /// Elemental composition, atoms per molecule, keyed by element symbol.
    pub elements: BTreeMap<String, f64>,
    /// Ideal-gas isobaric heat capacity correlation.
    pub cp: CpCorrelation,
    /// The reference key for each value, keyed by field name
    /// (molar_mass, tc, pc, acentric, vc, tb, hf298, gf298, cp), with an optional
    /// confidence note ("from memory") after the key.
    pub sources: BTreeMap<String, String>,
}

/// Field names whose source must be given.
pub(crate) const SOURCED_FIELDS: &[&str] = &["molar_mass", "tc", "pc", "acentric", "vc", "hf298", "gf298", "cp"];

impl Component {
    /// Checks that every constant is finite and physically possible.
    pub fn validate(&self) -> Result<()> {
        let bad = |what: &str, v: f64, allowed: &str| {
            Err(Error::Data(format!(
                "component '{}': {what} = {v} ({allowed})",
                self.name,
                v = num(v)
            )))
        };
        for (what, v) in [
            ("molar_mass", self.molar_mass),
            ("tc", self.tc),
            ("pc", self.pc),
            ("vc", self.vc),
        ] {
            if !(v.is_finite() && v > 0.0) {
                return bad(what, v, "must be finite and > 0");
            }
        }
        if !(self.acentric.is_finite() && self.acentric > -1.0 && self.acentric < 2.0) {
            return bad("acentric", self.acentric, "must lie in (-1, 2)");
        }
        if let Some(tb) = self.tb
            && !(tb.is_finite() && tb > 0.0 && tb < self.tc)
        {
            return bad("tb", tb, "must be finite, > 0 and below tc");
        }
        for (what, v) in [("hf298", self.hf298), ("gf298", self.gf298)] {
            if !v.is_finite() {
                return bad(what, v, "must be finite");
            }
        }
        if self.name.trim().is_empty() {
            return Err(Error::Data("component with an empty name".into()));
        }
        self.cp.validate(&self.name)?;
        Ok(())
    }

    /// Standard entropy of formation of the ideal gas at 298.15 K, J/(mol K),
    /// (ΔfH° − ΔfG°)/298.15 K: the entropy relative to the elements in their standard states.
    pub fn sf298(&self) -> f64 {
        (self.hf298 - self.gf298) / T_REFERENCE
    }
}
