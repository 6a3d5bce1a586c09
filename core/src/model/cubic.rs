//! Two-parameter cubic equations of state: Peng–Robinson (1976, and the 1978 κ for
//! ω > 0.49), Soave–Redlich–Kwong, with van der Waals one-fluid mixing
//! (a = ΣΣ x_i x_j √(a_i a_j)(1 − k_ij), k_ij = k0_ij + k1_ij·T; b = Σ x_i b_i) and optional
//! Péneloux volume translation.
//!
//! The residual Helmholtz energy is written in the form of Michelsen & Mollerup,
//! *Thermodynamic Models: Fundamentals and Computational Aspects*, 2nd ed. (2007), ch. 3:
//!
//! F = −n·g(V, B) − D(T, n)·f(V, B)/T,  g = ln(1 − B/V),
//! f = ln((V + δ1 B)/(V + δ2 B))/(R B (δ1 − δ2)),  B = Σ n_i b_i,  D = ΣΣ n_i n_j a_ij(T),
//!
//! and every derivative is analytic (chain rule through g, f, B and D).
//!
//! Instead of the van der Waals rule, the attraction parameter may come from an excess Gibbs
//! energy model through the modified Huron–Vidal rules ([`MixingRule::Mhv1`],
//! [`MixingRule::Mhv2`]); D then changes, and everything else (B, the volume dependence, the
//! roots) stays as it is.
//!
//! References: D.-Y. Peng, D. B. Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59–64;
//! D. B. Robinson, D.-Y. Peng, GPA Research Report RR-28 (1978) (κ for ω > 0.49, from memory);
//! G. Soave, Chem. Eng. Sci. 27 (1972) 1197–1203; A. Péneloux, E. Rauzy, R. Fréze, Fluid
//! Phase Equilib. 8 (1982) 7–23; M. L. Michelsen, Fluid Phase Equilib. 60 (1990) 213–219
//! (MHV1); S. Dahl, M. L. Michelsen, AIChE J. 36 (1990) 1829–1836 (MHV2).

use super::{ActivityModel, CriticalConstants, ExcessGibbs, FluidModel, HelmholtzDerivs, MixCache, Need, VolumeRoots};
use crate::error::{Error, Result, check, num};
use crate::numerics::roots::cubic_real_roots;
use crate::substance::{Component, IdealGasSpecies, R};
use serde::{Deserialize, Serialize};
use std::sync::atomic::{AtomicU64, Ordering};

/// Which cubic equation of state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CubicKind {
    /// Peng–Robinson (1976) with κ = 0.37464 + 1.54226ω − 0.26992ω² for every component.
    PengRobinson,
    /// Peng–Robinson with the 1978 κ = 0.379642 + 1.48503ω − 0.164423ω² + 0.016666ω³ for
    /// components with ω > 0.49 (the 1976 κ otherwise).
    PengRobinson78,
    /// Soave–Redlich–Kwong (1972), m = 0.480 + 1.574ω − 0.176ω².
    SoaveRedlichKwong,
}

impl CubicKind {
    /// (δ1, δ2) of the generic form p = RT/(v − b) − a/((v + δ1 b)(v + δ2 b)).
    pub fn deltas(self) -> (f64, f64) {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => {
                (1.0 + std::f64::consts::SQRT_2, 1.0 - std::f64::consts::SQRT_2)
            }
            CubicKind::SoaveRedlichKwong => (1.0, 0.0),
        }
    }

    /// (Ω_a, Ω_b): a_c = Ω_a R² Tc²/pc, b = Ω_b R Tc/pc.
    pub fn omegas(self) -> (f64, f64) {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => (0.45724, 0.07780),
            CubicKind::SoaveRedlichKwong => (0.42748, 0.08664),
        }
    }

    /// Critical compressibility factor of the equation itself (0.3074 for PR, 1/3 for SRK).
    pub fn zc(self) -> f64 {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => 0.307_401,
            CubicKind::SoaveRedlichKwong => 1.0 / 3.0,
        }
    }

    /// κ (or m) of the α function for acentric factor ω.
    pub fn kappa(self, w: f64) -> f64 {
        match self {
            CubicKind::PengRobinson => 0.37464 + 1.54226 * w - 0.26992 * w * w,
            CubicKind::PengRobinson78 if w > 0.49 => 0.379642 + w * (1.48503 + w * (-0.164423 + 0.016666 * w)),
            CubicKind::PengRobinson78 => 0.37464 + 1.54226 * w - 0.26992 * w * w,
            CubicKind::SoaveRedlichKwong => 0.480 + 1.574 * w - 0.176 * w * w,
        }
    }
}

/// Largest |k_ij(T)| (dimensionless) at which a model is evaluated: above 1 the cross
/// attraction a_ij = (1 − k_ij)·√(a_i a_j) changes sign and the mixture's attraction parameter
/// can turn negative, which makes the equation meaningless; published fits lie well inside
/// (common practice, no source).
pub const KIJ_MAX: f64 = 1.0;

/// Largest |k1| (1/K) of k_ij(T) = k0 + k1·T accepted: published temperature slopes are of
/// order 1e-4 to 1e-3 1/K (common practice, no source); 0.01 1/K moves k_ij by 1 over 100 K.
pub const KIJ_SLOPE_MAX: f64 = 0.01;

/// The temperatures (K) at which |k0 + k1·T| <= [`KIJ_MAX`], as (min, max), or `None` if
/// there are none above 0 K.
pub fn kij_temperature_range(k0: f64, k1: f64) -> Option<(f64, f64)> {
    let (lo, hi) = if k1 == 0.0 {
        if k0.abs() <= KIJ_MAX {
            (0.0, f64::INFINITY)
        } else {
            return None;
        }
    } else {
        let a = (-KIJ_MAX - k0) / k1;
        let b = (KIJ_MAX - k0) / k1;
        (a.min(b).max(0.0), a.max(b))
    };
    (hi > lo).then_some((lo, hi))
}

fn check_pair(i: usize, j: usize, k0: f64, k1: f64) -> Result<()> {
    if !(k0.is_finite() && k1.is_finite()) {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k0 = {}, k1 = {}; finite values are required",
                num(k0),
                num(k1)
            ),
        ));
    }
    if k1.abs() > KIJ_SLOPE_MAX {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k1 = {} 1/K; |k1| <= {} 1/K is required (k_ij(T) = k0 + k1·T)",
                num(k1),
                num(KIJ_SLOPE_MAX)
            ),
        ));
    }
    if kij_temperature_range(k0, k1).is_none() {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k0 = {}, k1 = {} 1/K give |k_ij(T)| > {} at every T > 0 K; \
                 beyond it the cross attraction changes sign and the model is meaningless",
                num(k0),
                num(k1),
                num(KIJ_MAX)
            ),
        ));
    }
    Ok(())
}

/// Binary interaction parameters k_ij(T) = k0_ij + k1_ij·T (T in K), symmetric, zero diagonal,
/// with |k1| <= [`KIJ_SLOPE_MAX`] and |k_ij(T)| <= [`KIJ_MAX`] for some T > 0 (checked when
/// set); a model evaluated at a T where |k_ij(T)| > [`KIJ_MAX`] reports
/// [`Error::OutsideValidity`] with the temperature range of the pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct KijMatrix {
    /// Number of components.
    pub nc: usize,
    /// k0, row-major nc×nc (dimensionless).
    pub k0: Vec<f64>,
    /// k1, row-major nc×nc (1/K).
    pub k1: Vec<f64>,
}

impl KijMatrix {
    /// All-zero interaction parameters for `nc` components.
    pub fn zeros(nc: usize) -> Self {
        KijMatrix {
            nc,
            k0: vec![0.0; nc * nc],
            k1: vec![0.0; nc * nc],
        }
    }

    /// Sets k_ij = k_ji = k0 + k1·T.
    pub fn set(&mut self, i: usize, j: usize, k0: f64, k1: f64) -> Result<()> {
        if i >= self.nc || j >= self.nc {
            return Err(Error::invalid(
                "k_ij index",
                format!("({i}, {j}) for {} components", self.nc),
            ));
        }
        if i == j {
            return Err(Error::invalid(
                "k_ij index",
                "a component does not interact with itself (i == j)",
            ));
        }
        check_pair(i, j, k0, k1)?;
        for (a, b) in [(i, j), (j, i)] {
            self.k0[a * self.nc + b] = k0;
            self.k1[a * self.nc + b] = k1;
        }
        Ok(())
    }

    fn validate(&self) -> Result<()> {
        let n2 = self.nc * self.nc;
        if self.k0.len() != n2 || self.k1.len() != n2 {
            return Err(Error::invalid("k_ij", format!("matrices must hold {n2} values")));
        }
        for i in 0..self.nc {
            for j in 0..self.nc {
                let (a, b) = (i * self.nc + j, j * self.nc + i);
                if !(self.k0[a].is_finite() && self.k1[a].is_finite()) {
                    return Err(Error::invalid("k_ij", format!("non-finite value at ({i}, {j})")));
                }
                if self.k0[a] != self.k0[b] || self.k1[a] != self.k1[b] {
                    return Err(Error::invalid("k_ij", format!("not symmetric at ({i}, {j})")));
                }
                if i == j && (self.k0[a] != 0.0 || self.k1[a] != 0.0) {
                    return Err(Error::invalid("k_ij", format!("diagonal ({i}, {i}) must be zero")));
                }
                if i != j {
                    check_pair(i, j, self.k0[a], self.k1[a])?;
                }
            }
        }
        Ok(())
    }
}

/// q1 of MHV1 for Soave–Redlich–Kwong, −0.593 (Michelsen, Fluid Phase Equilib. 60 (1990) 213).
pub const MHV1_Q1_SRK: f64 = -0.593;
/// q1 of MHV1 for Peng–Robinson, −0.53 (the value usually quoted with PR, e.g.
/// Kontogeorgis & Coutsikos, Ind. Eng. Chem. Res. 51 (2012) 4119; from memory).
pub const MHV1_Q1_PR: f64 = -0.53;
/// (q1, q2) of MHV2 for Soave–Redlich–Kwong, (−0.478, −0.0047) (Dahl & Michelsen, AIChE J. 36
/// (1990) 1829).
pub const MHV2_Q_SRK: (f64, f64) = (-0.478, -0.0047);

/// How the mixture's attraction parameter a is formed from the components' (the co-volume is
/// always b = Σ x_i b_i). Serialises with a `"rule"` tag; a model description without one
/// uses the van der Waals rule:
///
/// ```json
/// {"rule": "mhv1", "activity": {"kind": "nrtl", "components": ["acetone", "water"], ...}}
/// ```
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(tag = "rule", rename_all = "snake_case", deny_unknown_fields)]
#[allow(clippy::large_enum_variant)]
pub enum MixingRule {
    /// van der Waals one-fluid: a = ΣΣ x_i x_j √(a_i a_j)(1 − k_ij(T)).
    #[default]
    VanDerWaals,
    /// First-order modified Huron–Vidal (Michelsen 1990, Fluid Phase Equilib. 60:213):
    /// α = Σ x_i α_i + (1/q1)[g^E/RT + Σ x_i ln(b/b_i)], α = a/(bRT), with g^E from the
    /// activity model at zero pressure. k_ij are not used (they must be zero).
    Mhv1 {
        /// The liquid model; its components must be the equation's, in the same order.
        activity: ActivityModel,
        /// q1 (dimensionless, negative); default [`MHV1_Q1_SRK`] for SRK and [`MHV1_Q1_PR`]
        /// for both Peng–Robinson forms.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        q1: Option<f64>,
    },
    /// Second-order modified Huron–Vidal (Dahl & Michelsen 1990, AIChE J. 36:1829):
    /// q1(α − Σ x_i α_i) + q2(α² − Σ x_i α_i²) = g^E/RT + Σ x_i ln(b/b_i), solved for the root
    /// continuous with MHV1. k_ij are not used (they must be zero).
    Mhv2 {
        /// The liquid model; its components must be the equation's, in the same order.
        activity: ActivityModel,
        /// q1 (dimensionless, negative); default [`MHV2_Q_SRK`] for SRK. No default is built
        /// in for Peng–Robinson: give q1 and q2.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        q1: Option<f64>,
        /// q2 (dimensionless, <= 0); default [`MHV2_Q_SRK`] for SRK.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        q2: Option<f64>,
    },
}

impl MixingRule {
    /// Whether this is the van der Waals one-fluid rule.
    pub fn is_van_der_waals(&self) -> bool {
        matches!(self, MixingRule::VanDerWaals)
    }

    /// The activity model of an EOS/G^E rule.
    pub fn activity(&self) -> Option<&ActivityModel> {
        match self {
            MixingRule::VanDerWaals => None,
            MixingRule::Mhv1 { activity, .. } | MixingRule::Mhv2 { activity, .. } => Some(activity),
        }
    }

    /// (q1, q2) of an EOS/G^E rule for the equation `kind`, defaults filled in and checked
    /// (q1 < 0, q2 <= 0, finite); `None` for the van der Waals rule.
    pub fn constants(&self, kind: CubicKind) -> Result<Option<(f64, f64)>> {
        let q = match self {
            MixingRule::VanDerWaals => return Ok(None),
            MixingRule::Mhv1 { q1, .. } => (
                q1.unwrap_or(match kind {
                    CubicKind::SoaveRedlichKwong => MHV1_Q1_SRK,
                    CubicKind::PengRobinson | CubicKind::PengRobinson78 => MHV1_Q1_PR,
                }),
                0.0,
            ),
            MixingRule::Mhv2 { q1, q2, .. } => match (kind, q1, q2) {
                (_, Some(a), Some(b)) => (*a, *b),
                (CubicKind::SoaveRedlichKwong, a, b) => (a.unwrap_or(MHV2_Q_SRK.0), b.unwrap_or(MHV2_Q_SRK.1)),
                _ => {
                    return Err(Error::invalid(
                        "mixing",
                        "MHV2 with Peng–Robinson needs both q1 and q2 (only the SRK constants of \
                         Dahl & Michelsen 1990 are built in)",
                    ));
                }
            },
        };
        if !(q.0.is_finite() && q.0 < 0.0 && q.1.is_finite() && q.1 <= 0.0) {
            return Err(Error::invalid(
                "mixing",
                format!(
                    "q1 = {}, q2 = {}; finite q1 < 0 and q2 <= 0 are required (the zero-pressure \
                     liquid root's q(α) decreases with α)",
                    num(q.0),
                    num(q.1)
                ),
            ));
        }
        Ok(Some(q))
    }
}

/// Plain, serialisable description of a cubic model: what a user writes in a JSON model file
/// and what [`CubicEos`] serialises to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CubicSpec {
    /// Which equation.
    pub kind: CubicKind,
    /// The components, with their constants.
    pub components: Vec<Component>,
    /// Interaction parameters (zeros if absent).
    #[serde(default)]
    pub kij: Option<KijMatrix>,
    /// Péneloux volume shifts c_i, m3/mol (none if absent): v = v_EOS − Σ x_i c_i.
    #[serde(default)]
    pub volume_shift: Option<Vec<f64>>,
    /// The mixing rule (van der Waals if absent).
    #[serde(default, skip_serializing_if = "MixingRule::is_van_der_waals")]
    pub mixing: MixingRule,
}

/// A process-unique identity of a cubic model's parameter set: the key of the
/// per-temperature terms it caches in the caller's [`HelmholtzDerivs`], renewed whenever a
/// parameter changes, so a cache is never read for another parameter set. Ignored by `==`.
#[derive(Debug, Clone, Copy)]
struct ParamId(u64);

impl ParamId {
    fn fresh() -> Self {
        static NEXT: AtomicU64 = AtomicU64::new(1);
        ParamId(NEXT.fetch_add(1, Ordering::Relaxed))
    }
}

impl PartialEq for ParamId {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

/// Σ_j a_j b_j with four partial sums (so that the compiler can vectorise it).
#[inline]
fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 4];
    let mut ca = a.chunks_exact(4);
    let mut cb = b.chunks_exact(4);
    for (x, y) in (&mut ca).zip(&mut cb) {
        for k in 0..4 {
            acc[k] += x[k] * y[k];
        }
    }
    let mut tail = 0.0;
    for (x, y) in ca.remainder().iter().zip(cb.remainder()) {
        tail += x * y;
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// A cubic equation of state for a mixture, ready to evaluate. Immutable and `Send + Sync`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "CubicSpec", into = "CubicSpec")]
pub struct CubicEos {
    kind: CubicKind,
    components: Vec<Component>,
    kij: KijMatrix,
    shift: Vec<f64>,
    has_shift: bool,
    ac: Vec<f64>,
    sqrt_ac: Vec<f64>,
    b: Vec<f64>,
    kappa: Vec<f64>,
    d1: f64,
    d2: f64,
    has_k1: bool,
    mixing: MixingRule,
    q: (f64, f64),
    id: ParamId,
}

impl TryFrom<CubicSpec> for CubicEos {
    type Error = Error;
    fn try_from(s: CubicSpec) -> Result<Self> {
        let mut eos = CubicEos::new(s.kind, s.components)?;
        if let Some(k) = s.kij {
            eos = eos.with_kij(k)?;
        }
        if let Some(c) = s.volume_shift {
            eos = eos.with_volume_shift(c)?;
        }
        if !s.mixing.is_van_der_waals() {
            eos = eos.with_mixing(s.mixing)?;
        }
        Ok(eos)
    }
}

impl From<CubicEos> for CubicSpec {
    fn from(e: CubicEos) -> Self {
        CubicSpec {
            kind: e.kind,
            kij: Some(e.kij),
            volume_shift: e.has_shift.then_some(e.shift),
            components: e.components,
            mixing: e.mixing,
        }
    }
}

impl CubicEos {
    /// A cubic model of the given kind over `components`, with k_ij = 0 and no volume shift.
    pub fn new(kind: CubicKind, components: Vec<Component>) -> Result<Self> {
        if components.is_empty() {
            return Err(Error::invalid("components", "at least one component is required"));
        }
        check::count("components", components.len(), 1, crate::limits::MAX_COMPONENTS)?;
        for c in &components {
            c.validate()?;
        }
        check::distinct(&components)?;
        let nc = components.len();
        let (oa, ob) = kind.omegas();
        let ac: Vec<f64> = components.iter().map(|c| oa * (R * c.tc).powi(2) / c.pc).collect();
        let (d1, d2) = kind.deltas();
        Ok(CubicEos {
            kind,
            sqrt_ac: ac.iter().map(|a| a.sqrt()).collect(),
            ac,
            b: components.iter().map(|c| ob * R * c.tc / c.pc).collect(),
            kappa: components.iter().map(|c| kind.kappa(c.acentric)).collect(),
            kij: KijMatrix::zeros(nc),
            shift: vec![0.0; nc],
            has_shift: false,
            components,
            d1,
            d2,
            has_k1: false,
            mixing: MixingRule::VanDerWaals,
            q: (0.0, 0.0),
            id: ParamId::fresh(),
        })
    }

    /// Replaces the mixing rule. An EOS/G^E rule needs an activity model over the same
    /// components in the same order (names compared without regard to case) and all k_ij
    /// zero; its constants are checked ([`MixingRule::constants`]).
    pub fn with_mixing(mut self, mixing: MixingRule) -> Result<Self> {
        let q = mixing.constants(self.kind)?;
        if let Some(act) = mixing.activity() {
            let names = act.component_names();
            let nc = self.components.len();
            if names.len() != nc {
                return Err(Error::invalid(
                    "mixing",
                    format!(
                        "the activity model has {} components, the equation of state {nc}",
                        names.len()
                    ),
                ));
            }
            for (i, (a, c)) in names.iter().zip(&self.components).enumerate() {
                if !a.trim().eq_ignore_ascii_case(c.name.trim()) {
                    return Err(Error::invalid(
                        "mixing",
                        format!(
                            "component {i} is '{a}' in the activity model and '{}' in the equation of \
                             state; the same components in the same order are required",
                            c.name
                        ),
                    ));
                }
            }
            if self.kij.k0.iter().chain(&self.kij.k1).any(|&k| k != 0.0) {
                return Err(Error::invalid(
                    "mixing",
                    "k_ij are not used by an EOS/G^E mixing rule; they must all be zero",
                ));
            }
        }
        self.q = q.unwrap_or((0.0, 0.0));
        self.mixing = mixing;
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// The mixing rule.
    pub fn mixing(&self) -> &MixingRule {
        &self.mixing
    }

    /// Replaces the interaction parameters (validated: symmetric, finite, zero diagonal).
    pub fn with_kij(mut self, kij: KijMatrix) -> Result<Self> {
        if kij.nc != self.components.len() {
            return Err(Error::invalid(
                "k_ij",
                format!(
                    "matrix for {} components given to a model of {}",
                    kij.nc,
                    self.components.len()
                ),
            ));
        }
        kij.validate()?;
        self.check_kij_allowed(&kij)?;
        self.has_k1 = kij.k1.iter().any(|&k| k != 0.0);
        self.kij = kij;
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// Sets one pair k_ij = k_ji = k0 + k1·T.
    pub fn with_pair(mut self, i: usize, j: usize, k0: f64, k1: f64) -> Result<Self> {
        self.kij.set(i, j, k0, k1)?;
        let k = self.kij.clone();
        self.check_kij_allowed(&k)?;
        self.has_k1 = self.kij.k1.iter().any(|&k| k != 0.0);
        self.id = ParamId::fresh();
        Ok(self)
    }

    fn check_kij_allowed(&self, kij: &KijMatrix) -> Result<()> {
        if !self.mixing.is_van_der_waals() && kij.k0.iter().chain(&kij.k1).any(|&k| k != 0.0) {
            return Err(Error::invalid(
                "k_ij",
                "k_ij are not used by an EOS/G^E mixing rule; they must all be zero",
            ));
        }
        Ok(())
    }

    /// Sets Péneloux volume shifts c_i (m3/mol): v = v_EOS − Σ x_i c_i. Fugacity
    /// coefficients change by the factor exp(−c_i p/RT) in every phase, so K-values are unchanged.
    pub fn with_volume_shift(mut self, c: Vec<f64>) -> Result<Self> {
        if c.len() != self.components.len() {
            return Err(Error::invalid(
                "volume_shift",
                format!("{} values for {} components", c.len(), self.components.len()),
            ));
        }
        for (i, &ci) in c.iter().enumerate() {
            if !ci.is_finite() || ci.abs() >= self.b[i] {
                return Err(Error::invalid(
                    "volume_shift",
                    format!(
                        "c_{i} = {ci} m3/mol; a finite value smaller in magnitude than the co-volume b_i = {} is required",
                        self.b[i]
                    ),
                ));
            }
        }
        self.has_shift = c.iter().any(|&x| x != 0.0);
        self.shift = c;
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// Péneloux shifts estimated from the Rackett compressibility Z_RA = 0.29056 − 0.08775ω
    /// (Yamada & Gunn, J. Chem. Eng. Data 18 (1973) 234, from memory):
    /// SRK: c = 0.40768 (0.29441 − Z_RA) R Tc/pc (Péneloux et al. 1982, from memory);
    /// PR: c = 0.50033 (0.25969 − Z_RA) R Tc/pc (the same construction for PR, from memory).
    pub fn with_peneloux_estimate(self) -> Result<Self> {
        let c = self
            .components
            .iter()
            .map(|c| {
                let zra = 0.29056 - 0.08775 * c.acentric;
                let rt = R * c.tc / c.pc;
                match self.kind {
                    CubicKind::SoaveRedlichKwong => 0.40768 * (0.29441 - zra) * rt,
                    _ => 0.50033 * (0.25969 - zra) * rt,
                }
            })
            .collect();
        self.with_volume_shift(c)
    }

    /// The kind of equation.
    pub fn kind(&self) -> CubicKind {
        self.kind
    }

    /// The components.
    pub fn components(&self) -> &[Component] {
        &self.components
    }

    /// The interaction parameters.
    pub fn kij(&self) -> &KijMatrix {
        &self.kij
    }

    /// Co-volumes b_i, m3/mol.
    pub fn covolumes(&self) -> &[f64] {
        &self.b
    }

    /// Volume shifts c_i, m3/mol (zeros when none).
    pub fn volume_shift(&self) -> &[f64] {
        &self.shift
    }

    /// Fills r_i = √a_i(T) and, if `deriv`, r_i' and r_i'' into `s` (3·nc values).
    fn sqrt_a(&self, t: f64, deriv: bool, s: &mut [f64]) -> Result<()> {
        let nc = self.b.len();
        for i in 0..nc {
            let tc = self.components[i].tc;
            let k = self.kappa[i];
            let sr = (t / tc).sqrt();
            let m = 1.0 + k * (1.0 - sr);
            if !(m > 0.0) {
                return Err(Error::OutsideValidity {
                    what: "temperature".into(),
                    value: t,
                    min: 0.0,
                    max: tc * (1.0 + 1.0 / k).powi(2),
                    detail: format!(
                        "the α(T) function of {} passes its minimum there; the cubic equation is not valid",
                        self.components[i].name
                    ),
                });
            }
            s[i] = self.sqrt_ac[i] * m;
            if deriv {
                // m' = −κ/(2√(T Tc)), m'' = κ/(4 √Tc T^{3/2})
                s[nc + i] = self.sqrt_ac[i] * (-k / (2.0 * (t * tc).sqrt()));
                s[2 * nc + i] = self.sqrt_ac[i] * (k / (4.0 * tc.sqrt() * t * t.sqrt()));
            }
        }
        Ok(())
    }

    /// The cross terms a_ij = (1 − k_ij(T)) √a_i √a_j at T into `cache` (row-major nc×nc),
    /// followed, if `deriv`, by ∂a_ij/∂T and ∂²a_ij/∂T²; kept while the model and T repeat.
    fn cross_terms<'c>(
        &self,
        t: f64,
        deriv: bool,
        scratch: &mut Vec<f64>,
        cache: &'c mut MixCache,
    ) -> Result<&'c [f64]> {
        let nc = self.b.len();
        let nn = nc * nc;
        let fresh = matches!(cache.key, Some((id, tb, d)) if id == self.id.0 && tb == t.to_bits() && (d || !deriv));
        if !fresh {
            cache.key = None;
            if scratch.len() < 3 * nc {
                scratch.resize(3 * nc, 0.0);
            }
            self.sqrt_a(t, deriv, scratch)?;
            let (r, rest) = scratch.split_at(nc);
            let (r1, r2) = rest.split_at(nc);
            cache.a.resize(if deriv { 3 * nn } else { nn }, 0.0);
            let a = &mut cache.a;
            for i in 0..nc {
                for j in 0..nc {
                    let idx = i * nc + j;
                    let k1 = if self.has_k1 { self.kij.k1[idx] } else { 0.0 };
                    let k = self.kij.k0[idx] + k1 * t;
                    if k.abs() > KIJ_MAX {
                        return Err(self.kij_outside(i, j, t));
                    }
                    let omk = 1.0 - k;
                    let q = r[i] * r[j];
                    a[idx] = omk * q;
                    if deriv {
                        let q1 = r1[i] * r[j] + r[i] * r1[j];
                        let q2 = r2[i] * r[j] + 2.0 * r1[i] * r1[j] + r[i] * r2[j];
                        a[nn + idx] = omk * q1 - k1 * q;
                        a[2 * nn + idx] = omk * q2 - 2.0 * k1 * q1;
                    }
                }
            }
            cache.key = Some((self.id.0, t.to_bits(), deriv));
        }
        Ok(&cache.a)
    }

    fn kij_outside(&self, i: usize, j: usize, t: f64) -> Error {
        let idx = i * self.b.len() + j;
        let (k0, k1) = (self.kij.k0[idx], self.kij.k1[idx]);
        let (min, max) = kij_temperature_range(k0, k1).unwrap_or((0.0, 0.0));
        Error::OutsideValidity {
            what: "temperature".into(),
            value: t,
            min,
            max,
            detail: format!(
                "k_ij of {}–{} = {} + {}·T is {} there; |k_ij| <= {} is required, beyond it \
                 the cross attraction changes sign and the cubic equation is meaningless",
                self.components[i].name,
                self.components[j].name,
                num(k0),
                num(k1),
                num(k0 + k1 * t),
                num(KIJ_MAX)
            ),
        }
    }

    /// D = ΣΣ n_i n_j a_ij and B = Σ n_i b_i, with D_i = 2Σ_j n_j a_ij written into `di`
    /// (and, if `deriv`, D_T, D_TT, D_iT into `dit`, and if `hess`, D_ij = 2 a_ij into `dij`).
    #[allow(clippy::type_complexity, clippy::too_many_arguments)]
    fn mix(
        &self,
        t: f64,
        n: &[f64],
        deriv: bool,
        hess: Option<&mut [f64]>,
        scratch: &mut Vec<f64>,
        cache: &mut MixCache,
        di: &mut [f64],
        dit: &mut [f64],
    ) -> Result<(f64, f64, f64, f64)> {
        let nc = self.b.len();
        let nn = nc * nc;
        let a = self.cross_terms(t, deriv, scratch, cache)?;
        let n = &n[..nc];
        let mut d = 0.0;
        let mut dt = 0.0;
        let mut dtt = 0.0;
        let bsum = dot(n, &self.b);
        for i in 0..nc {
            let row = i * nc..(i + 1) * nc;
            let si = dot(&a[row.clone()], n);
            di[i] = 2.0 * si;
            d += n[i] * si;
            if deriv {
                let sit = dot(&a[nn + row.start..nn + row.end], n);
                let sitt = dot(&a[2 * nn + row.start..2 * nn + row.end], n);
                dit[i] = 2.0 * sit;
                dt += n[i] * sit;
                dtt += n[i] * sitt;
            }
        }
        if let Some(h) = hess {
            for (hij, aij) in h[..nn].iter_mut().zip(&a[..nn]) {
                *hij = 2.0 * aij;
            }
        }
        Ok((d, dt, dtt, bsum))
    }

    /// The EOS/G^E rule of this model, if any (`None`: van der Waals one-fluid mixing).
    fn ge_rule(&self) -> Option<GeRule<'_>> {
        self.mixing.activity().map(|a| GeRule {
            model: a,
            q1: self.q.0,
            q2: self.q.1,
        })
    }

    /// D = n²a and B = Σ n_i b_i under an EOS/G^E mixing rule of the modified Huron–Vidal
    /// family, with the same outputs as [`CubicEos::mix`] (D_i into `di`; with `deriv`, D_T,
    /// D_TT and D_iT into `dit`; with `hess`, D_ij).
    ///
    /// With α = a/(bRT), α_i = a_i/(b_i RT), b = Σ x_i b_i, the rule reads
    /// q1(α − Σ x_i α_i) + q2(α² − Σ x_i α_i²) = g^E/RT + Σ x_i ln(b/b_i)
    /// (MHV1: q2 = 0, Michelsen, Fluid Phase Equilib. 60 (1990) 213–219; MHV2: Dahl &
    /// Michelsen, AIChE J. 36 (1990) 1829–1836). Written as h(α) = s with
    /// h(α) = q1 α + q2 α² and s = S/n,
    /// S = Σ n_i (q1 α_i + q2 α_i²) + n g^E/RT + Σ n_i ln(B/(n b_i)),
    /// every derivative of α follows implicitly: h'(α) α_x = s_x and
    /// h'(α) α_xy = s_xy − 2 q2 α_x α_y, with s_i = (S_i − s)/n and
    /// s_ij = (S_ij − s_i − s_j)/n, where S_i = q1 α_i + q2 α_i² + ln γ_i + ln(b/b_i) + b_i/b − 1
    /// and S_ij = ∂ln γ_i/∂n_j + (b_i + b_j)/B − n b_i b_j/B² − 1/n. Then A = nα and
    /// D = RT·B·A, D_i = RT(b_i A + B A_i), D_ij = RT(b_i A_j + b_j A_i + B A_ij),
    /// D_T = RB(A + T A_T), D_TT = RB(2A_T + T A_TT), D_iT = R(b_i A + B A_i) + RT(b_i A_T + B A_iT).
    ///
    /// The T-derivatives of g^E/RT come from the excess model: ∂(g^E/RT)/∂T = −h^E/(RT²)
    /// analytically; the second derivative, which enters D_TT only (so F_TT, heat capacities),
    /// is the central difference of that analytic first derivative with step 1e-4·T (one-sided
    /// second-order differences where T ± step leaves the model's temperature range): a
    /// truncation error of order 1e-8 relative for parameters smooth in T, round-off of order
    /// 1e-12.
    #[allow(clippy::too_many_arguments)]
    fn mix_ge(
        &self,
        rule: GeRule<'_>,
        t: f64,
        n: &[f64],
        deriv: bool,
        hess: Option<&mut [f64]>,
        scratch: &mut Vec<f64>,
        cache: &mut MixCache,
        di: &mut [f64],
        dit: &mut [f64],
    ) -> Result<(f64, f64, f64, f64)> {
        let nc = self.b.len();
        let GeRule { model: ge, q1, q2 } = rule;
        let n = &n[..nc];
        // The a_ij cache is not used by this rule; clear its key so that a classic model
        // sharing the storage never reads stale terms.
        cache.key = None;
        if scratch.len() < 5 * nc {
            scratch.resize(5 * nc, 0.0);
        }
        self.sqrt_a(t, deriv, scratch)?;
        let (r, rest) = scratch.split_at_mut(nc);
        let (r1, rest) = rest.split_at_mut(nc);
        let (r2, rest) = rest.split_at_mut(nc);
        let (an, rest) = rest.split_at_mut(nc); // ∂α/∂n_i, 1/mol
        let big_a_n = &mut rest[..nc]; // A_i = ∂(nα)/∂n_i
        let ntot: f64 = n.iter().sum();
        let bsum = dot(n, &self.b);
        let bm = bsum / ntot;
        let rt = R * t;
        let ex = &mut cache.excess;
        ex.resize(nc);
        // Second T-derivative of g^E/RT (only with `deriv`): difference of −h^E/(RT²).
        let mut g_tt = 0.0;
        if deriv {
            let tn = Need {
                composition: false,
                temperature: true,
                pressure: false,
            };
            let h = 1e-4 * t;
            let (lo, hi) = ge.temperature_range();
            let mut g_t_at = |tt: f64| -> Result<f64> {
                ge.excess(tt, n, tn, ex)?;
                Ok(-ex.h_excess / (R * tt * tt))
            };
            g_tt = if t - h >= lo && t + h <= hi {
                (g_t_at(t + h)? - g_t_at(t - h)?) / (2.0 * h)
            } else if t + 2.0 * h <= hi {
                (-3.0 * g_t_at(t)? + 4.0 * g_t_at(t + h)? - g_t_at(t + 2.0 * h)?) / (2.0 * h)
            } else {
                (3.0 * g_t_at(t)? - 4.0 * g_t_at(t - h)? + g_t_at(t - 2.0 * h)?) / (2.0 * h)
            };
        }
        ge.excess(
            t,
            n,
            Need {
                composition: hess.is_some(),
                temperature: deriv,
                pressure: false,
            },
            ex,
        )?;
        if !ex.g_excess.is_finite() {
            return Err(Error::invalid(
                "state",
                format!("non-finite excess Gibbs energy at T = {} K", num(t)),
            ));
        }
        // α_i = r_i²/(b_i RT) and its T-derivatives.
        let alpha = |i: usize| r[i] * r[i] / (self.b[i] * rt);
        let mut big_s = ntot * ex.g_excess;
        let mut big_s_t = 0.0;
        let mut big_s_tt = 0.0;
        for i in 0..nc {
            let ai = alpha(i);
            // ln(b/b_i), kept in `an` until ∂α/∂n_i replaces it below.
            an[i] = (bm / self.b[i]).ln();
            big_s += n[i] * (q1 * ai + q2 * ai * ai + an[i]);
        }
        let s = big_s / ntot;
        let (al, c) = if q2 == 0.0 {
            (s / q1, q1)
        } else {
            let disc = q1 * q1 + 4.0 * q2 * s;
            if !(disc > 0.0) {
                return Err(Error::OutsideValidity {
                    what: "temperature".into(),
                    value: t,
                    min: 0.0,
                    max: f64::INFINITY,
                    detail: format!(
                        "the second-order mixing rule q1·α + q2·α² = {} has no real root \
                         (q1 = {}, q2 = {}); the EOS/G^E model is not valid at this state",
                        num(s),
                        num(q1),
                        num(q2)
                    ),
                });
            }
            // The root continuous with α = s/q1 as q2 → 0.
            let a = 2.0 * s / (q1 + q1.signum() * disc.sqrt());
            (a, q1 + 2.0 * q2 * a)
        };
        let big_a = ntot * al;
        for i in 0..nc {
            let ai = alpha(i);
            let bi = self.b[i];
            let s_i = q1 * ai + q2 * ai * ai + ex.ln_gamma[i] + an[i] + bi / bm - 1.0;
            an[i] = (s_i - s) / (ntot * c);
            big_a_n[i] = al + ntot * an[i];
            di[i] = rt * (bi * big_a + bsum * big_a_n[i]);
        }
        let d = rt * bsum * big_a;
        let (mut d_t, mut d_tt) = (0.0, 0.0);
        if deriv {
            // α_i' = a_i'/(b_i RT) − α_i/T, α_i'' = a_i''/(b_i RT) − 2a_i'/(b_i RT²) + 2α_i/T².
            let g_t = -ex.h_excess / (R * t * t);
            let dal = |i: usize| {
                let ai = alpha(i);
                let a1 = 2.0 * r[i] * r1[i];
                let a2 = 2.0 * (r1[i] * r1[i] + r[i] * r2[i]);
                let bi = self.b[i];
                (
                    ai,
                    a1 / (bi * rt) - ai / t,
                    a2 / (bi * rt) - 2.0 * a1 / (bi * rt * t) + 2.0 * ai / (t * t),
                )
            };
            big_s_t += ntot * g_t;
            big_s_tt += ntot * g_tt;
            for i in 0..nc {
                let (ai, ai1, ai2) = dal(i);
                big_s_t += n[i] * (q1 + 2.0 * q2 * ai) * ai1;
                big_s_tt += n[i] * ((q1 + 2.0 * q2 * ai) * ai2 + 2.0 * q2 * ai1 * ai1);
            }
            let s_t = big_s_t / ntot;
            let al_t = s_t / c;
            let al_tt = (big_s_tt / ntot - 2.0 * q2 * al_t * al_t) / c;
            let (big_a_t, big_a_tt) = (ntot * al_t, ntot * al_tt);
            d_t = R * bsum * (big_a + t * big_a_t);
            d_tt = R * bsum * (2.0 * big_a_t + t * big_a_tt);
            for i in 0..nc {
                let (ai, ai1, _) = dal(i);
                let bi = self.b[i];
                let s_it = ((q1 + 2.0 * q2 * ai) * ai1 + ex.dt[i] - s_t) / ntot;
                let al_it = (s_it - 2.0 * q2 * an[i] * al_t) / c;
                let big_a_it = al_t + ntot * al_it;
                dit[i] = R * (bi * big_a + bsum * big_a_n[i]) + rt * (bi * big_a_t + bsum * big_a_it);
            }
        }
        if let Some(hm) = hess {
            for i in 0..nc {
                let bi = self.b[i];
                for j in i..nc {
                    let bj = self.b[j];
                    let s_ij = ex.dn[i * nc + j] + (bi + bj) / bsum - ntot * bi * bj / (bsum * bsum) - 1.0 / ntot;
                    // s_ij of the intensive s, then α_ij and A_ij.
                    let si = an[i] * c;
                    let sj = an[j] * c;
                    let s2 = (s_ij - si - sj) / ntot;
                    let al_ij = (s2 - 2.0 * q2 * an[i] * an[j]) / c;
                    let big_a_ij = an[i] + an[j] + ntot * al_ij;
                    let val = rt * (bi * big_a_n[j] + bj * big_a_n[i] + bsum * big_a_ij);
                    hm[i * nc + j] = val;
                    hm[j * nc + i] = val;
                }
            }
        }
        Ok((d, d_t, d_tt, bsum))
    }
}

/// An EOS/G^E mixing rule as the residual evaluation sees it: the excess Gibbs model and the
/// rule's constants (q2 = 0 for MHV1).
#[derive(Clone, Copy)]
pub(crate) struct GeRule<'a> {
    /// The liquid model giving g^E/RT at zero pressure.
    pub(crate) model: &'a dyn ExcessGibbs,
    /// q1 (dimensionless, negative).
    pub(crate) q1: f64,
    /// q2 (dimensionless; zero for MHV1).
    pub(crate) q2: f64,
}

/// Volume-dependent pieces of F for given V (EOS volume), B, n, and D/T.
struct Pieces {
    g: f64,
    g_v: f64,
    g_b: f64,
    g_vv: f64,
    g_bv: f64,
    g_bb: f64,
    f: f64,
    f_v: f64,
    f_b: f64,
    f_vv: f64,
    f_bv: f64,
    f_bb: f64,
}

fn pieces(v: f64, b: f64, d1: f64, d2: f64) -> Pieces {
    let vmb = v - b;
    let g = (-b / v).ln_1p();
    let g_v = b / (v * vmb);
    let g_b = -1.0 / vmb;
    let g_vv = -1.0 / (vmb * vmb) + 1.0 / (v * v);
    let g_bv = 1.0 / (vmb * vmb);
    let g_bb = -1.0 / (vmb * vmb);
    let p1 = v + d1 * b;
    let p2 = v + d2 * b;
    let f = ((d1 - d2) * b / p2).ln_1p() / (R * b * (d1 - d2));
    let f_v = -1.0 / (R * p1 * p2);
    let f_b = -(f + v * f_v) / b;
    let f_vv = (1.0 / (p1 * p1 * p2) + 1.0 / (p1 * p2 * p2)) / R;
    let f_bv = -(2.0 * f_v + v * f_vv) / b;
    let f_bb = -(2.0 * f_b + v * f_bv) / b;
    Pieces {
        g,
        g_v,
        g_b,
        g_vv,
        g_bv,
        g_bb,
        f,
        f_v,
        f_b,
        f_vv,
        f_bv,
        f_bb,
    }
}

impl FluidModel for CubicEos {
    fn num_components(&self) -> usize {
        self.components.len()
    }

    fn component_name(&self, i: usize) -> &str {
        &self.components[i].name
    }

    fn molar_mass(&self, i: usize) -> f64 {
        self.components[i].molar_mass
    }

    fn critical_constants(&self, i: usize) -> CriticalConstants {
        let c = &self.components[i];
        CriticalConstants {
            tc: c.tc,
            pc: c.pc,
            acentric: c.acentric,
        }
    }

    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
        self.residual_with(self.ge_rule(), t, v, n, need, out)
    }

    fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
        self.volume_roots_with(self.ge_rule(), t, p, n, work)
    }

    fn is_liquid_like(&self, _t: f64, v: f64, n: &[f64]) -> bool {
        // Rule: liquid-like when the (untranslated) molar volume is below the equation's own
        // critical volume ratio times the mixture co-volume, v_c/b = Zc/Ω_b (3.95 for PR,
        // 3.85 for SRK); common practice, no source.
        let (bm, c) = n
            .iter()
            .enumerate()
            .fold((0.0, 0.0), |(b, c), (i, &x)| (b + x * self.b[i], c + x * self.shift[i]));
        let ratio = self.kind.zc() / self.kind.omegas().1;
        v + c < ratio * bm
    }

    fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies> {
        self.components[i].ideal_gas(t)
    }
}

impl CubicEos {
    /// [`FluidModel::residual`] with the attraction term D from the classic rule (`ge` = None)
    /// or from an EOS/G^E mixing rule.
    pub(crate) fn residual_with(
        &self,
        ge: Option<GeRule<'_>>,
        t: f64,
        v: f64,
        n: &[f64],
        need: Need,
        out: &mut HelmholtzDerivs,
    ) -> Result<()> {
        let nc = self.b.len();
        check::temperature(t)?;
        check::volume(v)?;
        let ntot = check::amounts(n, nc)?;
        out.resize(nc);
        let HelmholtzDerivs {
            f_n,
            f_nv,
            f_nt,
            f_nn,
            scratch,
            mix_cache,
            ..
        } = out;
        // D_i into f_n, D_iT into f_nt temporarily; D_ij into f_nn.
        let hess = if need.composition { Some(&mut f_nn[..]) } else { None };
        let (d, d_t, d_tt, bm) = match ge {
            None => self.mix(t, n, need.temperature, hess, scratch, mix_cache, f_n, f_nt)?,
            Some(rule) => self.mix_ge(rule, t, n, need.temperature, hess, scratch, mix_cache, f_n, f_nt)?,
        };
        let c: f64 = if self.has_shift {
            n.iter().zip(&self.shift).map(|(a, b)| a * b).sum()
        } else {
            0.0
        };
        let w = v + c;
        if !(w > bm) {
            return Err(Error::invalid(
                "volume",
                format!(
                    "{v} m3 is at or below the co-volume limit of the equation ({} m3)",
                    num(bm - c),
                    v = num(v)
                ),
            ));
        }
        let pc = pieces(w, bm, self.d1, self.d2);
        let e = d / t;
        // F and its derivatives in (T, W, n) of the untranslated equation.
        let fe = -ntot * pc.g - e * pc.f;
        let fe_w = -ntot * pc.g_v - e * pc.f_v;
        let fe_ww = -ntot * pc.g_vv - e * pc.f_vv;
        let f_bn = -pc.g_b; // ∂²F/∂n∂B (explicit n)
        let f_b = -ntot * pc.g_b - e * pc.f_b;
        let f_d = -pc.f / t;
        let f_nw = -pc.g_v;
        let f_bw = -ntot * pc.g_bv - e * pc.f_bv;
        let f_bb = -ntot * pc.g_bb - e * pc.f_bb;
        let f_dw = -pc.f_v / t;
        let f_bd = -pc.f_b / t;
        let (e_t, e_tt) = (
            d_t / t - d / (t * t),
            d_tt / t - 2.0 * d_t / (t * t) + 2.0 * d / (t * t * t),
        );

        // Composition Hessian first (it needs D_i before f_n is overwritten).
        if need.composition {
            for i in 0..nc {
                for j in i..nc {
                    let (bi, bj) = (self.b[i], self.b[j]);
                    let val =
                        f_bn * (bi + bj) + f_bd * (bi * f_n[j] + bj * f_n[i]) + f_bb * bi * bj + f_d * f_nn[i * nc + j];
                    f_nn[i * nc + j] = val;
                    f_nn[j * nc + i] = val;
                }
            }
        }
        for i in 0..nc {
            let di = f_n[i];
            let bi = self.b[i];
            f_nv[i] = f_nw + f_bw * bi + f_dw * di;
            if need.temperature {
                let dit = f_nt[i];
                f_nt[i] = -pc.f_b * e_t * bi + pc.f / (t * t) * di + f_d * dit;
            }
            f_n[i] = -pc.g + f_b * bi + f_d * di;
        }
        out.f = fe;
        out.f_v = fe_w;
        out.f_vv = fe_ww;
        if need.temperature {
            out.f_t = -pc.f * e_t;
            out.f_tt = -pc.f * e_tt;
            out.f_tv = -pc.f_v * e_t;
        }
        if self.has_shift {
            // F(T, V, n) = F_e(T, V + C, n) − n ln(W/V), C = Σ n_i c_i.
            let lnwv = (w / v).ln();
            let cs = &self.shift;
            if need.composition {
                for i in 0..nc {
                    for j in 0..nc {
                        out.f_nn[i * nc + j] += out.f_nv[i] * cs[j] + out.f_nv[j] * cs[i] + fe_ww * cs[i] * cs[j]
                            - (cs[i] + cs[j]) / w
                            + ntot * cs[i] * cs[j] / (w * w);
                    }
                }
            }
            for i in 0..nc {
                out.f_n[i] += fe_w * cs[i] - lnwv - ntot * cs[i] / w;
                if need.temperature {
                    out.f_nt[i] += out.f_tv * cs[i];
                }
                out.f_nv[i] += fe_ww * cs[i] - 1.0 / w + ntot * cs[i] / (w * w) + 1.0 / v;
            }
            out.f -= ntot * lnwv;
            out.f_v += -ntot / w + ntot / v;
            out.f_vv += ntot / (w * w) - ntot / (v * v);
        }
        if !out.f.is_finite() || !out.f_v.is_finite() {
            return Err(Error::invalid(
                "state",
                format!(
                    "non-finite Helmholtz energy at T = {t} K, V = {v} m3",
                    t = num(t),
                    v = num(v)
                ),
            ));
        }
        Ok(())
    }

    /// [`FluidModel::volume_roots`] with the classic rule (`ge` = None) or an EOS/G^E rule.
    pub(crate) fn volume_roots_with(
        &self,
        ge: Option<GeRule<'_>>,
        t: f64,
        p: f64,
        n: &[f64],
        work: &mut HelmholtzDerivs,
    ) -> Result<VolumeRoots> {
        let nc = self.b.len();
        check::temperature(t)?;
        check::pressure(p)?;
        let ntot = check::amounts(n, nc)?;
        work.resize(nc);
        let HelmholtzDerivs {
            f_n,
            f_nt,
            scratch,
            mix_cache,
            ..
        } = work;
        let (d, _, _, bm) = match ge {
            None => self.mix(t, n, false, None, scratch, mix_cache, f_n, f_nt)?,
            Some(rule) => self.mix_ge(rule, t, n, false, None, scratch, mix_cache, f_n, f_nt)?,
        };
        let rt = R * t;
        let a = d / (ntot * ntot) * p / (rt * rt);
        let b = bm / ntot * p / rt;
        let (d1, d2) = (self.d1, self.d2);
        let c2 = (d1 + d2 - 1.0) * b - 1.0;
        let c1 = a + d1 * d2 * b * b - (d1 + d2) * b * (b + 1.0);
        let c0 = -(a * b + d1 * d2 * b * b * (b + 1.0));
        let (z, count) = cubic_real_roots(c2, c1, c0);
        let c: f64 = if self.has_shift {
            n.iter().zip(&self.shift).map(|(a, b)| a * b).sum()
        } else {
            0.0
        };
        let mut out = VolumeRoots::default();
        // Physical roots (Z > B), smallest and largest; the middle root of three is unstable.
        let mut zs = [0.0; 3];
        let mut nz = 0;
        for &zz in &z[..count] {
            if zz > b && zz.is_finite() {
                zs[nz] = zz;
                nz += 1;
            }
        }
        if nz == 3 {
            zs[1] = zs[2];
            nz = 2;
        }
        let pick = &zs[..nz];
        for &zz in pick {
            let v = zz * ntot * rt / p - c;
            if v > 0.0 {
                out.v[out.count] = v;
                out.count += 1;
            }
        }
        if out.count == 0 {
            return Err(Error::NoSolution(format!(
                "no physical volume root of the cubic equation at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            )));
        }
        Ok(out)
    }
}

#[cfg(test)]
mod ge_tests {
    //! The EOS/G^E mixing-rule algebra checked with a test-only excess Gibbs model (a
    //! multicomponent two-suffix Margules form with T-dependent coefficients, invented for
    //! the test), independent of any published activity model.
    use super::*;
    use crate::model::fugacity::{FugacityWork, LnPhi, RootChoice, ln_phi};
    use crate::model::{ExcessDerivs, ExcessGibbs};
    use crate::substance::DataBank;
    use proptest::prelude::*;

    /// g^E/RT = ½ Σ_ij x_i x_j A_ij(T), A_ij = a_ij + c_ij/T (symmetric, zero diagonal).
    struct Margules {
        names: Vec<String>,
        a: Vec<f64>,
        c: Vec<f64>,
    }

    impl ExcessGibbs for Margules {
        fn num_components(&self) -> usize {
            self.names.len()
        }
        fn component_name(&self, i: usize) -> &str {
            &self.names[i]
        }
        fn temperature_range(&self) -> (f64, f64) {
            (100.0, 1000.0)
        }
        fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()> {
            let nc = self.names.len();
            out.resize(nc);
            let nt: f64 = n.iter().sum();
            let am = |i: usize, j: usize| self.a[i * nc + j] + self.c[i * nc + j] / t;
            let am_t = |i: usize, j: usize| -self.c[i * nc + j] / (t * t);
            // Q = n g^E/RT = (1/2n) nᵀAn.
            let mut q2 = 0.0;
            let mut q2t = 0.0;
            let mut an = vec![0.0; nc];
            let mut ant = vec![0.0; nc];
            for i in 0..nc {
                for j in 0..nc {
                    an[i] += am(i, j) * n[j];
                    ant[i] += am_t(i, j) * n[j];
                }
                q2 += n[i] * an[i];
                q2t += n[i] * ant[i];
            }
            out.g_excess = 0.5 * q2 / (nt * nt);
            for i in 0..nc {
                out.ln_gamma[i] = an[i] / nt - 0.5 * q2 / (nt * nt);
                if need.temperature {
                    out.dt[i] = ant[i] / nt - 0.5 * q2t / (nt * nt);
                }
                if need.composition {
                    for j in 0..nc {
                        out.dn[i * nc + j] = am(i, j) / nt - (an[i] + an[j]) / (nt * nt) + q2 / (nt * nt * nt);
                    }
                }
            }
            let g_t = 0.5 * q2t / (nt * nt);
            out.h_excess = -R * t * t * g_t;
            out.s_excess = (out.h_excess - R * t * out.g_excess) / t;
            Ok(())
        }
    }

    fn margules(names: &[&str], pairs: &[(usize, usize, f64, f64)]) -> Margules {
        let nc = names.len();
        let mut a = vec![0.0; nc * nc];
        let mut c = vec![0.0; nc * nc];
        for &(i, j, x, y) in pairs {
            a[i * nc + j] = x;
            a[j * nc + i] = x;
            c[i * nc + j] = y;
            c[j * nc + i] = y;
        }
        Margules {
            names: names.iter().map(|s| s.to_string()).collect(),
            a,
            c,
        }
    }

    /// A cubic model with an EOS/G^E rule given by reference, as a [`FluidModel`].
    struct WithGe<'a> {
        eos: &'a CubicEos,
        rule: GeRule<'a>,
    }

    impl FluidModel for WithGe<'_> {
        fn num_components(&self) -> usize {
            self.eos.num_components()
        }
        fn component_name(&self, i: usize) -> &str {
            self.eos.component_name(i)
        }
        fn molar_mass(&self, i: usize) -> f64 {
            self.eos.molar_mass(i)
        }
        fn critical_constants(&self, i: usize) -> CriticalConstants {
            self.eos.critical_constants(i)
        }
        fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
            self.eos.residual_with(Some(self.rule), t, v, n, need, out)
        }
        fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
            self.eos.volume_roots_with(Some(self.rule), t, p, n, work)
        }
        fn is_liquid_like(&self, t: f64, v: f64, n: &[f64]) -> bool {
            self.eos.is_liquid_like(t, v, n)
        }
        fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies> {
            self.eos.ideal_gas(t, i)
        }
    }

    const NAMES: [&str; 3] = ["acetone", "methanol", "n-hexane"];

    fn eos(kind: CubicKind) -> CubicEos {
        CubicEos::new(kind, DataBank::embedded().get_many(&NAMES).unwrap()).unwrap()
    }

    fn test_ge() -> Margules {
        margules(&NAMES, &[(0, 1, 0.3, 120.0), (0, 2, 0.9, 250.0), (1, 2, 1.2, 400.0)])
    }

    fn rel(a: f64, b: f64) -> f64 {
        (a - b).abs() / (a.abs().max(b.abs()).max(1e-2))
    }

    fn check_residual(m: &dyn FluidModel, t: f64, v: f64, n: &[f64]) {
        let nc = n.len();
        let mut d = HelmholtzDerivs::new(nc);
        m.residual(t, v, n, Need::ALL, &mut d).unwrap();
        // A second evaluation with the same storage (warm) gives the same numbers.
        let f0 = d.f_nn.clone();
        m.residual(t, v, n, Need::ALL, &mut d).unwrap();
        assert_eq!(f0, d.f_nn);
        let f = |t: f64, v: f64, n: &[f64]| {
            let mut e = HelmholtzDerivs::new(nc);
            m.residual(t, v, n, Need::ALL, &mut e).unwrap();
            e
        };
        type Sel<'a> = &'a dyn Fn(&HelmholtzDerivs) -> f64;
        let stencil = |g: &dyn Fn(f64) -> HelmholtzDerivs, h: f64| {
            let (p1, m1, p2, m2) = (g(h), g(-h), g(2.0 * h), g(-2.0 * h));
            move |sel: Sel| (8.0 * (sel(&p1) - sel(&m1)) - (sel(&p2) - sel(&m2))) / (12.0 * h)
        };
        let tol = 1e-7;
        let dv = stencil(&|h| f(t, v + h, n), v * 1e-4);
        let dt = stencil(&|h| f(t + h, v, n), t * 1e-4);
        assert!(rel(d.f_v, dv(&|e| e.f)) < tol, "F_V");
        assert!(rel(d.f_vv, dv(&|e| e.f_v)) < tol, "F_VV");
        assert!(rel(d.f_t, dt(&|e| e.f)) < tol, "F_T {} vs {}", d.f_t, dt(&|e| e.f));
        assert!(
            rel(d.f_tt, dt(&|e| e.f_t)) < tol,
            "F_TT {} vs {}",
            d.f_tt,
            dt(&|e| e.f_t)
        );
        assert!(rel(d.f_tv, dt(&|e| e.f_v)) < tol, "F_TV");
        let hn = n.iter().sum::<f64>() * 1e-4;
        for i in 0..nc {
            let di = stencil(
                &|h| {
                    let mut m = n.to_vec();
                    m[i] += h;
                    f(t, v, &m)
                },
                hn,
            );
            assert!(
                rel(d.f_n[i], di(&|e| e.f)) < tol,
                "F_n{i}: {} vs {}",
                d.f_n[i],
                di(&|e| e.f)
            );
            assert!(rel(d.f_nv[i], di(&|e| e.f_v)) < tol, "F_nV{i}");
            assert!(rel(d.f_nt[i], di(&|e| e.f_t)) < tol, "F_nT{i}");
            assert!(rel(d.f_nt[i], dt(&|e| e.f_n[i])) < tol, "F_nT{i} (via T)");
            for j in 0..nc {
                let fd = di(&|e| e.f_n[j]);
                assert!(
                    rel(d.f_nn[j * nc + i], fd) < tol,
                    "F_n{j}n{i}: {} vs {fd}",
                    d.f_nn[j * nc + i]
                );
            }
        }
    }

    fn kinds() -> impl Strategy<Value = (CubicKind, f64, f64)> {
        prop_oneof![
            Just((CubicKind::PengRobinson, -0.53, 0.0)),
            Just((CubicKind::SoaveRedlichKwong, -0.593, 0.0)),
            Just((CubicKind::SoaveRedlichKwong, -0.478, -0.0047)),
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(48))]

        #[test]
        fn mhv_helmholtz_derivatives_match_finite_differences(
            (kind, q1, q2) in kinds(),
            t in 250.0f64..550.0,
            vfac in 1.2f64..200.0,
            n in prop::collection::vec(0.01f64..2.0, 3),
        ) {
            let e = eos(kind);
            let ge = test_ge();
            let m = WithGe { eos: &e, rule: GeRule { model: &ge, q1, q2 } };
            let b: f64 = n.iter().zip(e.covolumes()).map(|(a, b)| a * b).sum();
            check_residual(&m, t, vfac * b, &n);
        }
    }

    /// The public path: a [`CubicEos`] carrying an NRTL model (invented parameters with every
    /// temperature form, so that the differenced second T-derivative is exercised).
    fn nrtl_model(kind: CubicKind, mhv2: bool) -> CubicEos {
        use crate::model::activity::{Nrtl, NrtlParams};
        let act = ActivityModel::Nrtl(
            Nrtl::new(NrtlParams {
                components: NAMES.iter().map(|s| s.to_string()).collect(),
                a: vec![vec![0.0, 0.4, -0.2], vec![0.1, 0.0, 0.5], vec![0.3, 0.2, 0.0]],
                b: vec![
                    vec![0.0, 150.0, 300.0],
                    vec![-80.0, 0.0, 420.0],
                    vec![200.0, 500.0, 0.0],
                ],
                c: vec![vec![0.0, 0.3, 0.2], vec![0.3, 0.0, 0.47], vec![0.2, 0.47, 0.0]],
                d: vec![vec![0.0, 1e-4, 0.0], vec![1e-4, 0.0, -2e-4], vec![0.0, -2e-4, 0.0]],
                e: vec![vec![0.0, 0.05, 0.0], vec![-0.02, 0.0, 0.0], vec![0.0, 0.01, 0.0]],
                f: vec![vec![0.0, 0.0, 1e-4], vec![0.0, 0.0, 0.0], vec![-1e-4, 0.0, 0.0]],
                t_min: 200.0,
                t_max: 700.0,
            })
            .unwrap(),
        );
        let rule = if mhv2 {
            MixingRule::Mhv2 {
                activity: act,
                q1: Some(-0.478),
                q2: Some(-0.0047),
            }
        } else {
            MixingRule::Mhv1 {
                activity: act,
                q1: None,
            }
        };
        eos(kind).with_mixing(rule).unwrap()
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(32))]

        #[test]
        fn nrtl_mhv_helmholtz_derivatives_match_finite_differences(
            kind in prop_oneof![Just(CubicKind::PengRobinson), Just(CubicKind::SoaveRedlichKwong)],
            mhv2 in any::<bool>(),
            t in 250.0f64..550.0,
            vfac in 1.2f64..200.0,
            n in prop::collection::vec(0.01f64..2.0, 3),
        ) {
            let m = nrtl_model(kind, mhv2);
            let b: f64 = n.iter().zip(m.covolumes()).map(|(a, b)| a * b).sum();
            check_residual(&m, t, vfac * b, &n);
        }
    }

    /// At the ends of the activity model's temperature range the second T-derivative uses
    /// one-sided differences; F_TT still matches.
    #[test]
    fn second_temperature_derivative_at_the_range_ends() {
        let m = nrtl_model(CubicKind::PengRobinson, false);
        let n = [0.3, 0.3, 0.4];
        let b: f64 = n.iter().zip(m.covolumes()).map(|(a, b)| a * b).sum();
        let v = 1.5 * b;
        for t in [200.0, 700.0 - 1e-9] {
            let mut d = HelmholtzDerivs::new(3);
            m.residual(t, v, &n, Need::ALL, &mut d).unwrap();
            let h = t * 1e-5;
            let ft = |tt: f64| {
                let mut e = HelmholtzDerivs::new(3);
                m.residual(tt, v, &n, Need::ALL, &mut e).unwrap();
                e.f_t
            };
            let fd = if t < 300.0 {
                (-3.0 * ft(t) + 4.0 * ft(t + h) - ft(t + 2.0 * h)) / (2.0 * h)
            } else {
                (3.0 * ft(t) - 4.0 * ft(t - h) + ft(t - 2.0 * h)) / (2.0 * h)
            };
            assert!(rel(d.f_tt, fd) < 1e-6, "{t}: {} vs {fd}", d.f_tt);
        }
    }

    /// p = nRT/V − RT F_V is the pressure at which the volume roots were found.
    #[test]
    fn pressure_volume_consistency() {
        let e = eos(CubicKind::PengRobinson);
        let ge = test_ge();
        let m = WithGe {
            eos: &e,
            rule: GeRule {
                model: &ge,
                q1: -0.53,
                q2: 0.0,
            },
        };
        let n = [0.3, 0.5, 0.2];
        let mut w = HelmholtzDerivs::new(3);
        for &(t, p) in &[(300.0, 1e5), (330.0, 2e4), (400.0, 5e6), (480.0, 1e7)] {
            let roots = m.volume_roots(t, p, &n, &mut w).unwrap();
            for &v in roots.as_slice() {
                m.residual(t, v, &n, Need::VALUES, &mut w).unwrap();
                let pv = n.iter().sum::<f64>() * R * t / v - R * t * w.f_v;
                assert!((pv - p).abs() < 1e-8 * p, "p({v}) = {pv} vs {p}");
            }
        }
    }

    /// One component: g^E = 0 and Σ x ln(b/b_i) = 0, so α = α_i and the model is the pure cubic.
    #[test]
    fn pure_component_is_the_pure_cubic() {
        let comps = DataBank::embedded().get_many(&["methanol"]).unwrap();
        let e = CubicEos::new(CubicKind::SoaveRedlichKwong, comps).unwrap();
        let ge = margules(&["methanol"], &[]);
        for (q1, q2) in [(-0.593, 0.0), (-0.478, -0.0047)] {
            let m = WithGe {
                eos: &e,
                rule: GeRule { model: &ge, q1, q2 },
            };
            let mut a = HelmholtzDerivs::new(1);
            let mut b = HelmholtzDerivs::new(1);
            for &(t, v) in &[(300.0, 1.2e-4), (420.0, 1e-3), (600.0, 0.1)] {
                let n = [1.7];
                m.residual(t, v, &n, Need::ALL, &mut a).unwrap();
                e.residual(t, v, &n, Need::ALL, &mut b).unwrap();
                let close = |x: f64, y: f64| (x - y).abs() <= 1e-12 * (1.0 + x.abs().max(y.abs()));
                assert!(close(a.f, b.f) && close(a.f_v, b.f_v) && close(a.f_vv, b.f_vv));
                assert!(close(a.f_t, b.f_t) && close(a.f_tv, b.f_tv));
                // F_TT holds a differenced zero here: g^E ≡ 0 for one component.
                assert!(close(a.f_tt, b.f_tt), "{} {}", a.f_tt, b.f_tt);
                assert!(close(a.f_n[0], b.f_n[0]) && close(a.f_nv[0], b.f_nv[0]) && close(a.f_nt[0], b.f_nt[0]));
                assert!(close(a.f_nn[0], b.f_nn[0]), "{} {}", a.f_nn[0], b.f_nn[0]);
            }
        }
    }

    /// With g^E ≡ 0 and equal co-volumes, MHV1 gives α = Σ x_i α_i, i.e. a = Σ x_i a_i (the
    /// linear rule). For a binary the classic rule with a_12 = (a_1 + a_2)/2, i.e.
    /// k_12 = 1 − (a_1 + a_2)/(2√(a_1 a_2)) at that T, gives D = (n_1 + n_2)(n_1 a_1 + n_2 a_2),
    /// the same function of n, so F and all its V and n derivatives agree exactly at that T.
    #[test]
    fn zero_excess_equal_covolumes_is_linear_in_a() {
        let bank = DataBank::embedded();
        let mut c = bank.get_many(&["n-pentane", "benzene"]).unwrap();
        // Equal b = Ω_b R Tc/pc: give benzene the pentane's Tc/pc ratio by adjusting pc.
        c[1].pc = c[1].tc * c[0].pc / c[0].tc;
        let e = CubicEos::new(CubicKind::PengRobinson, c).unwrap();
        let (b0, b1) = (e.covolumes()[0], e.covolumes()[1]);
        assert!((b0 - b1).abs() < 1e-14 * b0);
        let ge = margules(&["n-pentane", "benzene"], &[]);
        let m = WithGe {
            eos: &e,
            rule: GeRule {
                model: &ge,
                q1: -0.53,
                q2: 0.0,
            },
        };
        let t = 350.0;
        let mut s = vec![0.0; 6];
        e.sqrt_a(t, false, &mut s).unwrap();
        let (a1, a2) = (s[0] * s[0], s[1] * s[1]);
        let k = 1.0 - (a1 + a2) / (2.0 * (a1 * a2).sqrt());
        let classic = e.clone().with_pair(0, 1, k, 0.0).unwrap();
        let mut x = HelmholtzDerivs::new(2);
        let mut y = HelmholtzDerivs::new(2);
        let close = |p: f64, q: f64| (p - q).abs() <= 1e-10 * p.abs().max(q.abs()).max(1e-6);
        for (n, v) in [([0.35, 0.65], 2e-4), ([0.9, 0.1], 5e-3), ([0.5, 0.5], 0.2)] {
            m.residual(t, v, &n, Need::COMPOSITION, &mut x).unwrap();
            classic.residual(t, v, &n, Need::COMPOSITION, &mut y).unwrap();
            assert!(
                close(x.f, y.f) && close(x.f_v, y.f_v) && close(x.f_vv, y.f_vv),
                "{} {}",
                x.f,
                y.f
            );
            for i in 0..2 {
                assert!(close(x.f_n[i], y.f_n[i]) && close(x.f_nv[i], y.f_nv[i]));
                for j in 0..2 {
                    assert!(close(x.f_nn[i * 2 + j], y.f_nn[i * 2 + j]), "{:?} {:?}", x.f_nn, y.f_nn);
                }
            }
        }
    }

    /// The defining property: at low pressure the cubic's own excess Gibbs energy at the liquid
    /// roots, g^E_EOS/RT = Σ x_i (ln φ_i − ln φ_i°), is close to the G^E model's; the match is
    /// approximate (the linearisation of q(α) in MHV1), so the test records the size of the
    /// difference rather than demanding equality.
    #[test]
    fn low_pressure_excess_gibbs_energy_is_close_to_the_model() {
        let e = eos(CubicKind::SoaveRedlichKwong);
        let ge = test_ge();
        let m = WithGe {
            eos: &e,
            rule: GeRule {
                model: &ge,
                q1: -0.593,
                q2: 0.0,
            },
        };
        let (t, p) = (300.0, 1e5);
        let mut w = FugacityWork::new(3);
        let mut o = LnPhi::new(3);
        let mut pure = [0.0; 3];
        for (i, lp) in pure.iter_mut().enumerate() {
            let mut n = [0.0; 3];
            n[i] = 1.0;
            ln_phi(&m, t, p, &n, RootChoice::Liquid, Need::VALUES, &mut w, &mut o).unwrap();
            *lp = o.ln_phi[i];
        }
        let mut ex = ExcessDerivs::new(3);
        let mut worst: f64 = 0.0;
        for x in [[0.2, 0.3, 0.5], [0.6, 0.2, 0.2], [0.1, 0.8, 0.1], [0.45, 0.1, 0.45]] {
            ln_phi(&m, t, p, &x, RootChoice::Liquid, Need::VALUES, &mut w, &mut o).unwrap();
            let g_eos: f64 = (0..3).map(|i| x[i] * (o.ln_phi[i] - pure[i])).sum();
            ge.excess(t, &x, Need::VALUES, &mut ex).unwrap();
            worst = worst.max((g_eos - ex.g_excess).abs() / ex.g_excess.abs());
        }
        // Approximate by construction (the linear q(α) of MHV1, and liquid roots at 1 bar
        // rather than zero pressure): 4.4 % measured for this invented mixture; the bound
        // allows a little more.
        eprintln!("largest relative difference of g^E_EOS from g^E: {worst:.4}");
        assert!(worst < 0.06, "{worst}");
    }
}
