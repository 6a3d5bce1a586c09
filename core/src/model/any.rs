//! [`Model`]: the closed set of built-in fluid models as one concrete, serialisable type,
//! for bindings, files and worker processes.

use super::{
    CriticalConstants, CubicEos, FluidModel, FugacityWork, HelmholtzDerivs, Iapws95, LnPhi, Need, RootChoice,
    VolumeRoots,
};
use crate::error::{Error, Result};
use crate::substance::IdealGasSpecies;
use serde::{Deserialize, Serialize};

/// Any built-in fluid model. Serialises as a JSON object with a `"model"` tag, e.g.
/// `{"model": "cubic", "kind": "peng_robinson", "components": [...], "kij": ...}`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "model", rename_all = "snake_case")]
#[non_exhaustive]
// Models are built once and shared, so the size difference between variants does not matter.
#[allow(clippy::large_enum_variant)]
pub enum Model {
    /// A cubic equation of state.
    Cubic(CubicEos),
    /// Water by IAPWS-95 (one component, "water"); `{"model": "iapws95"}`.
    Iapws95(Iapws95),
    /// A γ–φ model: an activity-coefficient liquid with an ideal-gas or cubic vapour
    /// (`{"model": "solution", ...}`, see [`super::SolutionModel`]).
    Solution(super::SolutionModel),
}

impl Model {
    /// Parses a JSON model description.
    pub fn from_json(text: &str) -> Result<Model> {
        serde_json::from_str(text).map_err(|e| Error::Data(format!("model description: {e}")))
    }

    /// The JSON model description (round-trips through [`Model::from_json`]).
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
    }

    /// The liquid-solution (activity-coefficient) model inside this model, if any: the liquid of
    /// a γ–φ model, or the excess Gibbs model of a cubic's EOS/G^E mixing rule.
    pub fn activity_model(&self) -> Option<&super::ActivityModel> {
        match self {
            Model::Solution(s) => Some(s.liquid()),
            Model::Cubic(c) => c.mixing().activity(),
            Model::Iapws95(_) => None,
        }
    }
}

impl From<CubicEos> for Model {
    fn from(m: CubicEos) -> Self {
        Model::Cubic(m)
    }
}

impl From<super::SolutionModel> for Model {
    fn from(m: super::SolutionModel) -> Self {
        Model::Solution(m)
    }
}

impl From<Iapws95> for Model {
    fn from(m: Iapws95) -> Self {
        Model::Iapws95(m)
    }
}

macro_rules! delegate {
    ($self:ident, $m:ident => $e:expr) => {
        match $self {
            Model::Cubic($m) => $e,
            Model::Iapws95($m) => $e,
            Model::Solution($m) => $e,
        }
    };
}

impl FluidModel for Model {
    fn num_components(&self) -> usize {
        delegate!(self, m => m.num_components())
    }
    fn component_name(&self, i: usize) -> &str {
        delegate!(self, m => m.component_name(i))
    }
    fn molar_mass(&self, i: usize) -> f64 {
        delegate!(self, m => m.molar_mass(i))
    }
    fn critical_constants(&self, i: usize) -> CriticalConstants {
        delegate!(self, m => m.critical_constants(i))
    }
    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
        delegate!(self, m => m.residual(t, v, n, need, out))
    }
    fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
        delegate!(self, m => m.volume_roots(t, p, n, work))
    }
    fn is_liquid_like(&self, t: f64, v: f64, n: &[f64]) -> bool {
        delegate!(self, m => m.is_liquid_like(t, v, n))
    }
    fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies> {
        delegate!(self, m => m.ideal_gas(t, i))
    }
    fn phase_ln_phi(
        &self,
        t: f64,
        p: f64,
        n: &[f64],
        root: RootChoice,
        need: Need,
        work: &mut FugacityWork,
        out: &mut LnPhi,
    ) -> Result<()> {
        delegate!(self, m => m.phase_ln_phi(t, p, n, root, need, work, out))
    }
    fn estimate_ln_k(&self, t: f64, p: f64, out: &mut [f64]) {
        delegate!(self, m => m.estimate_ln_k(t, p, out))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::CubicKind;
    use crate::substance::DataBank;

    #[test]
    fn json_round_trip() {
        let comps = DataBank::embedded().get_many(&["methane", "ethane"]).unwrap();
        let m: Model = CubicEos::new(CubicKind::PengRobinson, comps)
            .unwrap()
            .with_pair(0, 1, 0.01, 0.0)
            .unwrap()
            .into();
        let s = m.to_json();
        assert!(s.contains("\"model\":\"cubic\""));
        let back = Model::from_json(&s).unwrap();
        assert_eq!(back, m);
        assert!(Model::from_json("{\"model\": \"cubic\", \"kind\": \"nope\"}").is_err());
        let w: Model = Iapws95::new().into();
        assert_eq!(w.to_json(), "{\"model\":\"iapws95\"}");
        assert_eq!(Model::from_json("{\"model\": \"iapws95\"}").unwrap(), w);
        assert_eq!(w.component_name(0), "water");
    }
}
