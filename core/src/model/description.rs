//! A compact, hand-writable JSON description of a model: component names from a data bank,
//! optional per-component overrides of constants, and interaction parameters. This is the
//! format the command-line tool, the C ABI and the Python package accept for "a model from a
//! description", and the one the shared test vectors use.
//!
//! ```json
//! {"model": "cubic", "kind": "soave_redlich_kwong",
//!  "components": ["methane", {"name": "hydrogen sulfide", "tc": 373.2, "pc": 8.94e6, "acentric": 0.1}],
//!  "kij": [[0, 1, 0.08]], "volume_shift": "peneloux"}
//! ```
//!
//! A γ–φ model ([`super::SolutionModel`]): the components by name, the liquid's activity model
//! with its parameters by kind (its `components` may be left out: the model's are used),
//! the vapour (`"ideal_gas"` or a cubic kind), and the options:
//!
//! ```json
//! {"model": "solution", "components": ["methanol", "methyl acetate"],
//!  "liquid": {"kind": "margules", "a": [[0, 2.771], [2.771, 0]], "b": [[0, -0.00523], [-0.00523, 0]],
//!             "t_min": 273.15, "t_max": 360},
//!  "vapor": "ideal_gas", "poynting": false}
//! ```
//!
//! A cubic may take its attraction parameter from an activity model through an EOS/G^E
//! mixing rule ([`MixingRule`]; the activity model's components must be the cubic's):
//!
//! ```json
//! {"model": "cubic", "kind": "peng_robinson", "components": ["acetone", "water"],
//!  "mixing": {"rule": "mhv1", "activity": {"kind": "nrtl", "components": ["acetone", "water"],
//!             "a": [[0, 0], [0, 0]], "b": [[0, 300], [600, 0]], "c": [[0, 0.3], [0.3, 0]],
//!             "t_min": 273.15, "t_max": 423.15}}}
//! ```

use super::{CubicEos, CubicKind, KijMatrix, MixingRule, Model};
use crate::error::{Error, Result, num};
use crate::substance::DataBank;
use serde::{Deserialize, Serialize};

/// A component reference: a name (alias or CAS) in the bank, optionally with overrides.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum ComponentRef {
    /// Just the name.
    Name(String),
    /// A name with constants replaced (SI units).
    Override {
        /// Name, alias or CAS number in the bank.
        name: String,
        /// Critical temperature, K.
        #[serde(default)]
        tc: Option<f64>,
        /// Critical pressure, Pa.
        #[serde(default)]
        pc: Option<f64>,
        /// Acentric factor.
        #[serde(default)]
        acentric: Option<f64>,
    },
}

/// How to set Péneloux volume shifts.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum ShiftSpec {
    /// `"peneloux"`: the Rackett-based estimate of [`CubicEos::with_peneloux_estimate`].
    Named(String),
    /// Explicit c_i, m3/mol.
    Values(Vec<f64>),
}

/// A model description (see the module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "model", rename_all = "snake_case", deny_unknown_fields)]
#[non_exhaustive]
// Descriptions are parsed once per model, so the size difference between variants does not matter.
#[allow(clippy::large_enum_variant)]
pub enum ModelDescription {
    /// A cubic equation of state.
    Cubic {
        /// Which cubic equation.
        kind: CubicKind,
        /// Components, in order.
        components: Vec<ComponentRef>,
        /// Interaction parameters as `[i, j, k0]` or `[i, j, k0, k1]` (k_ij = k0 + k1·T).
        #[serde(default)]
        kij: Vec<Vec<f64>>,
        /// Optional volume shifts.
        #[serde(default)]
        volume_shift: Option<ShiftSpec>,
        /// The mixing rule (van der Waals with `kij` if absent).
        #[serde(default)]
        mixing: Option<MixingRule>,
    },
    /// Water by IAPWS-95: `{"model": "iapws95"}` (no parameters).
    Iapws95 {},
    /// A γ–φ model: activity-coefficient liquid, ideal-gas or cubic vapour.
    Solution {
        /// Component names (bank names, aliases or CAS numbers), in order.
        components: Vec<String>,
        /// The liquid's activity model as [`super::activity::ActivityModel`] reads it
        /// (`{"kind": "nrtl", ...}`); `components` may be omitted.
        liquid: serde_json::Value,
        /// `"ideal_gas"` (default) or a cubic kind (`"peng_robinson"`, ...).
        #[serde(default)]
        vapor: Option<String>,
        /// Vapour-pressure correlations, one per component, replacing the embedded file's.
        #[serde(default)]
        vapor_pressures: Option<Vec<crate::substance::VaporPressure>>,
        /// Apply Poynting factors.
        #[serde(default)]
        poynting: bool,
        /// Allow vapour-pressure correlations to be extrapolated beyond their ranges.
        #[serde(default)]
        extrapolate_vapor_pressures: bool,
    },
}

impl ModelDescription {
    /// Parses a description from JSON.
    pub fn from_json(text: &str) -> Result<Self> {
        serde_json::from_str(text).map_err(|e| Error::Data(format!("model description: {e}")))
    }

    /// Builds the model, looking names up in `bank`.
    pub fn build(&self, bank: &DataBank) -> Result<Model> {
        match self {
            ModelDescription::Cubic {
                kind,
                components,
                kij,
                volume_shift,
                mixing,
            } => {
                let mut comps = Vec::with_capacity(components.len());
                for c in components {
                    match c {
                        ComponentRef::Name(n) => comps.push(bank.get(n)?.clone()),
                        ComponentRef::Override { name, tc, pc, acentric } => {
                            let mut comp = bank.get(name)?.clone();
                            if let Some(v) = tc {
                                comp.tc = *v;
                            }
                            if let Some(v) = pc {
                                comp.pc = *v;
                            }
                            if let Some(v) = acentric {
                                comp.acentric = *v;
                            }
                            comps.push(comp);
                        }
                    }
                }
                let nc = comps.len();
                let mut k = KijMatrix::zeros(nc);
                for row in kij {
                    if row.len() != 3 && row.len() != 4 {
                        return Err(Error::invalid(
                            "kij",
                            format!("entry {row:?}; [i, j, k0] or [i, j, k0, k1] is required"),
                        ));
                    }
                    let idx = |x: f64| -> Result<usize> {
                        if x >= 0.0 && x.fract() == 0.0 && (x as usize) < nc {
                            Ok(x as usize)
                        } else {
                            Err(Error::invalid(
                                "kij",
                                format!("index {x} for {nc} components", x = num(x)),
                            ))
                        }
                    };
                    k.set(idx(row[0])?, idx(row[1])?, row[2], row.get(3).copied().unwrap_or(0.0))?;
                }
                let mut m = CubicEos::new(*kind, comps)?.with_kij(k)?;
                if let Some(rule) = mixing {
                    m = m.with_mixing(rule.clone())?;
                }
                match volume_shift {
                    None => {}
                    Some(ShiftSpec::Named(s)) if s == "peneloux" => m = m.with_peneloux_estimate()?,
                    Some(ShiftSpec::Named(s)) => {
                        return Err(Error::invalid(
                            "volume_shift",
                            format!("'{s}'; \"peneloux\" or a list of values is required"),
                        ));
                    }
                    Some(ShiftSpec::Values(v)) => m = m.with_volume_shift(v.clone())?,
                }
                Ok(Model::Cubic(m))
            }
            ModelDescription::Iapws95 {} => Ok(Model::Iapws95(super::Iapws95::new())),
            ModelDescription::Solution {
                components,
                liquid,
                vapor,
                vapor_pressures,
                poynting,
                extrapolate_vapor_pressures,
            } => {
                let comps = bank.get_many(components)?;
                let mut liquid = liquid.clone();
                match liquid.as_object_mut() {
                    Some(obj) => {
                        if !obj.contains_key("components") {
                            let names: Vec<serde_json::Value> = comps
                                .iter()
                                .map(|c| serde_json::Value::String(c.name.clone()))
                                .collect();
                            obj.insert("components".into(), serde_json::Value::Array(names));
                        }
                    }
                    None => {
                        return Err(Error::invalid(
                            "liquid",
                            "an object {\"kind\": \"nrtl\" | \"wilson\" | \"uniquac\" | \"margules\", ...} is required",
                        ));
                    }
                }
                let act = liquid_from_description(liquid, &comps)?;
                let mut m = super::SolutionModel::new(comps.clone(), act)?
                    .with_poynting(*poynting)
                    .with_extrapolated_vapor_pressures(*extrapolate_vapor_pressures);
                if let Some(vp) = vapor_pressures {
                    m = m.with_vapor_pressures(vp.clone())?;
                }
                match vapor.as_deref() {
                    None | Some("ideal_gas") | Some("ideal") => {}
                    Some(k) => {
                        let kind: CubicKind = serde_json::from_value(serde_json::Value::String(k.into())).map_err(|_| {
                            Error::invalid(
                                "vapor",
                                format!("'{k}'; \"ideal_gas\" or a cubic kind (\"peng_robinson\", \"peng_robinson78\", \"soave_redlich_kwong\") is required"),
                            )
                        })?;
                        m = m.with_vapor(super::VaporPhase::Cubic(CubicEos::new(kind, comps)?))?;
                    }
                }
                Ok(Model::Solution(m))
            }
        }
    }
}

/// The liquid of a solution description: `{"kind": "nrtl" | "wilson" | "uniquac",
/// "parameters": "bank"}` takes the binary pairs of the embedded table
/// ([`super::activity::ActivityPairs::embedded`]; a missing pair is an error), `{"kind":
/// "unifac"}` without groups takes the molecules' groups from the embedded UNIFAC table, and
/// anything else is read as [`super::activity::ActivityModel`].
fn liquid_from_description(
    liquid: serde_json::Value,
    comps: &[crate::substance::Component],
) -> Result<super::activity::ActivityModel> {
    use super::activity::{ActivityPairs, MissingPairs, Nrtl, Unifac, Uniquac, Wilson};
    let names: Vec<&str> = comps.iter().map(|c| c.name.as_str()).collect();
    let obj = liquid
        .as_object()
        .ok_or_else(|| Error::invalid("liquid", "an object is required"))?;
    let kind = obj.get("kind").and_then(|k| k.as_str()).unwrap_or("");
    let from_bank = obj.get("parameters").and_then(|p| p.as_str()) == Some("bank");
    if from_bank {
        if obj
            .keys()
            .any(|k| !matches!(k.as_str(), "kind" | "parameters" | "components"))
        {
            return Err(Error::invalid(
                "liquid",
                "with \"parameters\": \"bank\" only \"kind\" may be given",
            ));
        }
        let t = ActivityPairs::embedded();
        return Ok(match kind {
            "nrtl" => Nrtl::from_pairs(&names, t, MissingPairs::Refuse)?.into(),
            "wilson" => Wilson::from_pairs(&names, t, MissingPairs::Refuse, None)?.into(),
            "uniquac" => Uniquac::from_pairs(&names, t, MissingPairs::Refuse, None)?.into(),
            k => {
                return Err(Error::invalid(
                    "liquid",
                    format!("kind '{k}' with \"parameters\": \"bank\"; nrtl, wilson or uniquac is required"),
                ));
            }
        });
    }
    if kind == "unifac" && obj.keys().all(|k| matches!(k.as_str(), "kind" | "components")) {
        return Ok(Unifac::from_names(&names)?.into());
    }
    serde_json::from_value(liquid).map_err(|e| Error::Data(format!("model description: liquid: {e}")))
}

/// Builds a model from a JSON text that is either a description ([`ModelDescription`],
/// components by name) or a full model ([`Model`], as written by [`Model::to_json`]).
pub fn model_from_json(text: &str, bank: &DataBank) -> Result<Model> {
    match ModelDescription::from_json(text) {
        Ok(d) => d.build(bank),
        Err(e1) => Model::from_json(text)
            .map_err(|e2| Error::Data(format!("{}; as a full model: {}", e1.message(), e2.message()))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::FluidModel;

    #[test]
    fn description_builds() {
        let text = r#"{"model": "cubic", "kind": "soave_redlich_kwong",
            "components": ["methane", {"name": "H2S", "tc": 373.2, "pc": 8.94e6, "acentric": 0.1}],
            "kij": [[0, 1, 0.08]], "volume_shift": "peneloux"}"#;
        let m = model_from_json(text, DataBank::embedded()).unwrap();
        assert_eq!(m.num_components(), 2);
        assert_eq!(m.critical_constants(1).tc, 373.2);
        let bad = r#"{"model": "cubic", "kind": "peng_robinson", "components": ["methane"], "kij": [[0, 3, 0.1]]}"#;
        assert!(model_from_json(bad, DataBank::embedded()).is_err());
        let unknown = r#"{"model": "cubic", "kind": "peng_robinson", "components": ["methanee"]}"#;
        let e = model_from_json(unknown, DataBank::embedded()).unwrap_err();
        assert!(e.to_string().contains("methane"), "{e}");
        let w = model_from_json(r#"{"model": "iapws95"}"#, DataBank::embedded()).unwrap();
        assert_eq!(w.component_name(0), "water");
        // A full model round-trips through the same entry point.
        let full = m.to_json();
        assert_eq!(model_from_json(&full, DataBank::embedded()).unwrap(), m);
    }

    #[test]
    fn solution_description_builds_and_round_trips() {
        let text = r#"{"model": "solution", "components": ["methanol", "methyl acetate"],
            "liquid": {"kind": "margules", "a": [[0, 2.771], [2.771, 0]], "b": [[0, -0.00523], [-0.00523, 0]],
                       "t_min": 273.15, "t_max": 360},
            "vapor": "peng_robinson", "poynting": true}"#;
        let m = model_from_json(text, DataBank::embedded()).unwrap();
        assert_eq!(m.num_components(), 2);
        assert!(matches!(m, Model::Solution(_)));
        let full = m.to_json();
        assert!(full.contains("\"model\":\"solution\""));
        assert_eq!(model_from_json(&full, DataBank::embedded()).unwrap(), m);
        let bad = text.replace("peng_robinson", "van_der_waals");
        assert!(model_from_json(&bad, DataBank::embedded()).is_err());
    }
}
