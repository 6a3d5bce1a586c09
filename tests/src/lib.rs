//! Shared helpers of the validation suite: loading the JSON test vectors under
//! `tests/vectors/` and building the models they describe.

use serde::Deserialize;
use std::path::PathBuf;

/// Path of a file under `tests/vectors/`.
pub fn vector_path(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("vectors").join(name)
}

/// Reads and parses a JSON vector file.
pub fn load_vectors<T: for<'de> Deserialize<'de>>(name: &str) -> T {
    let text = std::fs::read_to_string(vector_path(name)).unwrap_or_else(|e| panic!("reading {name}: {e}"));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("parsing {name}: {e}"))
}

use tieline::model::{CubicEos, CubicKind, KijMatrix};
use tieline::substance::{Component, DataBank};

/// A component of the embedded bank with its critical constants replaced by the values a
/// published example pins (Tc in K, pc in bar, ω), so that the check reproduces the example.
pub fn pinned(name: &str, tc: f64, pc_bar: f64, omega: f64) -> Component {
    let mut c = DataBank::embedded().get(name).unwrap_or_else(|e| panic!("{e}")).clone();
    c.tc = tc;
    c.pc = pc_bar * 1e5;
    c.acentric = omega;
    c
}

/// A component in a vector file: a bank name with optional pinned constants.
#[derive(Debug, Clone, Deserialize)]
pub struct VectorComponent {
    /// Name in the embedded bank.
    pub name: String,
    /// Pinned critical temperature, K.
    pub tc: Option<f64>,
    /// Pinned critical pressure, Pa.
    pub pc: Option<f64>,
    /// Pinned acentric factor.
    pub acentric: Option<f64>,
}

/// A model in a vector file.
#[derive(Debug, Clone, Deserialize)]
pub struct VectorModel {
    /// "peng_robinson", "peng_robinson78" or "soave_redlich_kwong".
    pub kind: CubicKind,
    /// Components.
    pub components: Vec<VectorComponent>,
    /// Non-zero interaction parameters as (i, j, k0).
    #[serde(default)]
    pub kij: Vec<(usize, usize, f64)>,
}

impl VectorModel {
    /// Builds the cubic model.
    pub fn build(&self) -> CubicEos {
        let comps: Vec<Component> = self
            .components
            .iter()
            .map(|vc| {
                let mut c = DataBank::embedded()
                    .get(&vc.name)
                    .unwrap_or_else(|e| panic!("{e}"))
                    .clone();
                if let Some(v) = vc.tc {
                    c.tc = v;
                }
                if let Some(v) = vc.pc {
                    c.pc = v;
                }
                if let Some(v) = vc.acentric {
                    c.acentric = v;
                }
                c
            })
            .collect();
        let nc = comps.len();
        let mut k = KijMatrix::zeros(nc);
        for &(i, j, v) in &self.kij {
            k.set(i, j, v, 0.0).unwrap();
        }
        CubicEos::new(self.kind, comps).unwrap().with_kij(k).unwrap()
    }
}
