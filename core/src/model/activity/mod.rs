//! Liquid-solution (excess Gibbs energy, activity-coefficient) models.
//!
//! An [`ExcessGibbs`] model gives the molar excess Gibbs energy g^E/(RT) of a liquid mixture
//! as a function of T and composition, with the activity coefficients ln γ_i = ∂(n g^E/RT)/∂n_i
//! and their temperature and composition derivatives, all analytic. The models describe the
//! liquid only; a phase-equilibrium model combines one with pure-liquid reference fugacities
//! (vapour pressures, Poynting corrections) and a vapour model, or feeds it to a cubic
//! equation of state through an EOS/G^E mixing rule.

use super::Need;
use crate::error::Result;

/// Excess properties of a liquid at (T, n), filled by [`ExcessGibbs::excess`]. Vectors are
/// sized by [`ExcessDerivs::new`] and reused between calls.
#[derive(Debug, Clone, Default)]
pub struct ExcessDerivs {
    /// Molar excess Gibbs energy over RT, g^E/(RT) (dimensionless, per mol of mixture).
    pub g_excess: f64,
    /// ln γ_i (dimensionless).
    pub ln_gamma: Vec<f64>,
    /// (∂ln γ_i/∂n_j) at fixed T and the other amounts, 1/mol, row-major nc×nc, for the
    /// amounts passed (with [`Need::composition`]). Symmetric, and Σ_j n_j ∂ln γ_i/∂n_j = 0.
    pub dn: Vec<f64>,
    /// (∂ln γ_i/∂T) at fixed composition, 1/K (with [`Need::temperature`]).
    pub dt: Vec<f64>,
    /// Molar excess enthalpy h^E = −RT² ∂(g^E/RT)/∂T, J/mol (with [`Need::temperature`]).
    pub h_excess: f64,
    /// Molar excess entropy s^E = (h^E − g^E)/T, J/(mol K) (with [`Need::temperature`]).
    pub s_excess: f64,
    /// Scratch storage free for the model to use, so evaluations allocate nothing after
    /// the first.
    pub scratch: Vec<f64>,
}

impl ExcessDerivs {
    /// Storage for `nc` components.
    pub fn new(nc: usize) -> Self {
        let mut d = ExcessDerivs::default();
        d.resize(nc);
        d
    }

    /// Resizes the per-component vectors for `nc` components (no-op if already that size).
    pub fn resize(&mut self, nc: usize) {
        if self.ln_gamma.len() != nc {
            self.ln_gamma.resize(nc, 0.0);
            self.dn.resize(nc * nc, 0.0);
            self.dt.resize(nc, 0.0);
        }
    }
}

/// A liquid-solution model defined by its molar excess Gibbs energy g^E(T, x).
///
/// Implementations are immutable once built (`Send + Sync`, shared between threads) and
/// return typed errors rather than panicking or producing non-finite values.
pub trait ExcessGibbs: Send + Sync {
    /// Number of components.
    fn num_components(&self) -> usize;

    /// Name of component `i`.
    fn component_name(&self, i: usize) -> &str;

    /// The temperature range (K) in which the model's parameters may be used, (lowest,
    /// highest); evaluations outside it are `Error::OutsideValidity`.
    fn temperature_range(&self) -> (f64, f64);

    /// Fills `out` with g^E/RT and ln γ at T (K) for amounts `n` (mol, any positive total; the
    /// values depend on the mole fractions only), plus the derivatives asked for by `need`
    /// (`need.pressure` is ignored: the models are pressure-independent).
    fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()>;
}

mod margules;
mod nrtl;
mod pairs;
mod unifac;
mod uniquac;
mod wilson;

pub use margules::{Margules, MargulesParams};
pub use nrtl::{Nrtl, NrtlParams};
pub use pairs::{ActivityPairs, MissingPairs, NrtlPair, UniquacPair, WilsonPair};
pub use unifac::{Unifac, UnifacInteraction, UnifacParams, UnifacSubgroup, UnifacTable};
pub use uniquac::{COORDINATION_NUMBER, Uniquac, UniquacParams};
pub use wilson::{Wilson, WilsonParams};

use crate::error::{Error, check, num};
use crate::substance::R;
use serde::{Deserialize, Serialize};

/// Any built-in excess-Gibbs model, as one concrete, serialisable type for bindings, files
/// and other models that embed a liquid-solution model. Serialises as a JSON object with a
/// `"kind"` tag, e.g. `{"kind": "nrtl", "components": [...], "a": [[...]], ...}`; the
/// parameters are checked again when read.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum ActivityModel {
    /// Non-random two-liquid model ([`Nrtl`]).
    Nrtl(Nrtl),
    /// Wilson model ([`Wilson`]).
    Wilson(Wilson),
    /// UNIQUAC model ([`Uniquac`]).
    Uniquac(Uniquac),
    /// UNIFAC group-contribution model ([`Unifac`]).
    Unifac(Unifac),
    /// Two-suffix Margules model ([`Margules`]).
    Margules(Margules),
}

impl ActivityModel {
    /// Parses a JSON description (the form written by [`ActivityModel::to_json`]).
    pub fn from_json(text: &str) -> Result<ActivityModel> {
        serde_json::from_str(text).map_err(|e| Error::Data(format!("activity model description: {e}")))
    }

    /// The JSON description (round-trips through [`ActivityModel::from_json`]).
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
    }

    /// The component names, in the model's order.
    pub fn component_names(&self) -> &[String] {
        delegate!(self, m => m.component_names())
    }
}

macro_rules! delegate {
    ($self:ident, $m:ident => $e:expr) => {
        match $self {
            ActivityModel::Nrtl($m) => $e,
            ActivityModel::Wilson($m) => $e,
            ActivityModel::Uniquac($m) => $e,
            ActivityModel::Unifac($m) => $e,
            ActivityModel::Margules($m) => $e,
        }
    };
}
use delegate;

impl ExcessGibbs for ActivityModel {
    fn num_components(&self) -> usize {
        delegate!(self, m => m.num_components())
    }
    fn component_name(&self, i: usize) -> &str {
        delegate!(self, m => m.component_name(i))
    }
    fn temperature_range(&self) -> (f64, f64) {
        delegate!(self, m => m.temperature_range())
    }
    fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()> {
        delegate!(self, m => m.excess(t, n, need, out))
    }
}

impl From<Nrtl> for ActivityModel {
    fn from(m: Nrtl) -> Self {
        ActivityModel::Nrtl(m)
    }
}

impl From<Wilson> for ActivityModel {
    fn from(m: Wilson) -> Self {
        ActivityModel::Wilson(m)
    }
}

impl From<Uniquac> for ActivityModel {
    fn from(m: Uniquac) -> Self {
        ActivityModel::Uniquac(m)
    }
}

impl From<Unifac> for ActivityModel {
    fn from(m: Unifac) -> Self {
        ActivityModel::Unifac(m)
    }
}

impl From<Margules> for ActivityModel {
    fn from(m: Margules) -> Self {
        ActivityModel::Margules(m)
    }
}

// ---------------------------------------------------------------------------------------------
// Checks and helpers shared by the models.

/// Checks component names: at least one, none empty, no two alike.
pub(crate) fn check_names(names: &[String]) -> Result<()> {
    if names.is_empty() {
        return Err(Error::invalid("components", "at least one component is required"));
    }
    for (i, a) in names.iter().enumerate() {
        if a.trim().is_empty() {
            return Err(Error::invalid("components", format!("name of component {i} is empty")));
        }
        if names[..i].contains(a) {
            return Err(Error::invalid("components", format!("'{a}' is given twice")));
        }
    }
    Ok(())
}

/// Checks a parameter temperature range (K): finite, 0 < lowest < highest.
pub(crate) fn check_range(t_min: f64, t_max: f64) -> Result<()> {
    if !(t_min > 0.0) || !t_min.is_finite() || !t_max.is_finite() || !(t_max > t_min) {
        return Err(Error::invalid(
            "temperature range",
            format!(
                "[{}, {}] K; finite limits with 0 < lowest < highest are required",
                num(t_min),
                num(t_max)
            ),
        ));
    }
    Ok(())
}

/// A square parameter matrix given as rows, flattened row-major; an empty matrix means all
/// zeros. Every entry must be finite; with `zero_diagonal` the diagonal must be zero.
pub(crate) fn square(what: &str, rows: &[Vec<f64>], nc: usize, zero_diagonal: bool) -> Result<Vec<f64>> {
    if rows.is_empty() {
        return Ok(vec![0.0; nc * nc]);
    }
    if rows.len() != nc || rows.iter().any(|r| r.len() != nc) {
        return Err(Error::invalid(
            what,
            format!(
                "a {nc}×{nc} matrix is required (one row of {nc} values per component); {} rows of lengths {:?} given",
                rows.len(),
                rows.iter().map(Vec::len).collect::<Vec<_>>()
            ),
        ));
    }
    let mut flat = Vec::with_capacity(nc * nc);
    for (i, r) in rows.iter().enumerate() {
        for (j, &v) in r.iter().enumerate() {
            if !v.is_finite() {
                return Err(Error::invalid(
                    what,
                    format!("entry ({i}, {j}) is {}; finite values are required", num(v)),
                ));
            }
            if zero_diagonal && i == j && v != 0.0 {
                return Err(Error::invalid(
                    what,
                    format!(
                        "diagonal entry ({i}, {i}) is {}; a component does not interact with itself, so it must be 0",
                        num(v)
                    ),
                ));
            }
            flat.push(v);
        }
    }
    Ok(flat)
}

/// A row-major flat matrix as rows.
pub(crate) fn rows(flat: &[f64], nc: usize) -> Vec<Vec<f64>> {
    flat.chunks(nc.max(1)).map(<[f64]>::to_vec).collect()
}

/// A vector of per-component values: length `nc`, each finite and > 0.
pub(crate) fn positive_vector(what: &str, v: &[f64], nc: usize) -> Result<()> {
    if v.len() != nc {
        return Err(Error::invalid(
            what,
            format!("{} values given for {nc} components", v.len()),
        ));
    }
    for (i, &x) in v.iter().enumerate() {
        if !(x > 0.0) || !x.is_finite() {
            return Err(Error::invalid(
                what,
                format!("value for component {i} is {}; finite values > 0 are required", num(x)),
            ));
        }
    }
    Ok(())
}

/// Checks the arguments of [`ExcessGibbs::excess`] (T finite and in the model's range,
/// amounts of the right length, finite, >= 0, positive sum) and sizes `out`. Returns the
/// total amount (mol).
pub(crate) fn check_call<M: ExcessGibbs + ?Sized>(model: &M, t: f64, n: &[f64], out: &mut ExcessDerivs) -> Result<f64> {
    check::temperature(t)?;
    let (lo, hi) = model.temperature_range();
    if !(t >= lo && t <= hi) {
        return Err(Error::OutsideValidity {
            what: "temperature".into(),
            value: t,
            min: lo,
            max: hi,
            detail: "range of the liquid-solution model's parameters".into(),
        });
    }
    let total = check::amounts(n, model.num_components())?;
    out.resize(model.num_components());
    Ok(total)
}

/// Fills h^E and s^E from g^E/RT and d(g^E/RT)/dT at T (K), then checks that every value
/// asked for is finite (parameters that overflow at this temperature are a typed error, not
/// a NaN returned).
pub(crate) fn finish(t: f64, need: Need, dg_dt: f64, out: &mut ExcessDerivs) -> Result<()> {
    let nc = out.ln_gamma.len();
    let mut ok = out.g_excess.is_finite() && out.ln_gamma.iter().all(|v| v.is_finite());
    if need.composition {
        ok &= out.dn[..nc * nc].iter().all(|v| v.is_finite());
    }
    if need.temperature {
        out.h_excess = -R * t * t * dg_dt;
        out.s_excess = (out.h_excess - R * t * out.g_excess) / t;
        ok &= out.dt.iter().all(|v| v.is_finite()) && out.h_excess.is_finite();
    }
    if ok {
        Ok(())
    } else {
        Err(Error::OutsideValidity {
            what: "temperature".into(),
            value: t,
            min: t,
            max: t,
            detail: "the model's parameters give non-finite activity coefficients at this temperature and composition"
                .into(),
        })
    }
}

/// Takes `len` values of scratch storage (grown once, then reused).
pub(crate) fn scratch(v: &mut Vec<f64>, len: usize) -> &mut [f64] {
    if v.len() < len {
        v.resize(len, 0.0);
    }
    &mut v[..len]
}

/// The residual term shared by UNIQUAC (over components) and UNIFAC (over groups), after
/// Abrams & Prausnitz (1975), *AIChE J.* 21:116, eq. for ln γ^R: for weights w_i (q'_i or
/// Q_k), amounts y_i (any scale) and interaction factors P_ij (τ_ij or Ψ_mn),
///
/// v_i = w_i [1 − ln(U_i/W) − Σ_j w_j y_j P_ij/U_j],  U_i = Σ_j w_j y_j P_ji,  W = Σ_j w_j y_j.
///
/// Fills `val` (v_i), with `dy` the derivatives ∂v_i/∂y_k (row-major, symmetric; v is
/// homogeneous of degree 0 in y) and with `dp` (∂P/∂T) the temperature derivatives `dval`.
/// `u` and `du` are scratch of length m.
pub(crate) struct Residual<'a> {
    pub w: &'a [f64],
    pub y: &'a [f64],
    pub p: &'a [f64],
    pub dp: Option<&'a [f64]>,
}

impl Residual<'_> {
    pub(crate) fn eval(
        &self,
        val: &mut [f64],
        dy: Option<&mut [f64]>,
        dval: Option<&mut [f64]>,
        u: &mut [f64],
        du: &mut [f64],
    ) {
        let m = self.w.len();
        let (w, y, p) = (self.w, self.y, self.p);
        let mut wsum = 0.0;
        for j in 0..m {
            wsum += w[j] * y[j];
        }
        for i in 0..m {
            let mut v = 0.0;
            for j in 0..m {
                v += w[j] * y[j] * p[j * m + i];
            }
            u[i] = v;
        }
        for i in 0..m {
            let mut v = 1.0 - (u[i] / wsum).ln();
            for j in 0..m {
                v -= w[j] * y[j] * p[i * m + j] / u[j];
            }
            val[i] = w[i] * v;
        }
        if let Some(dy) = dy {
            for i in 0..m {
                for k in i..m {
                    let mut v = 1.0 / wsum - p[k * m + i] / u[i] - p[i * m + k] / u[k];
                    for j in 0..m {
                        v += w[j] * y[j] * p[i * m + j] * p[k * m + j] / (u[j] * u[j]);
                    }
                    v *= w[i] * w[k];
                    dy[i * m + k] = v;
                    dy[k * m + i] = v;
                }
            }
        }
        if let (Some(dval), Some(dp)) = (dval, self.dp) {
            for i in 0..m {
                let mut v = 0.0;
                for j in 0..m {
                    v += w[j] * y[j] * dp[j * m + i];
                }
                du[i] = v;
            }
            for i in 0..m {
                let mut v = -du[i] / u[i];
                for j in 0..m {
                    v -= w[j] * y[j] * (dp[i * m + j] - p[i * m + j] * du[j] / u[j]) / u[j];
                }
                dval[i] = w[i] * v;
            }
        }
    }
}

#[cfg(test)]
pub(crate) mod testing;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_round_trip_and_checked_on_read() {
        let m: ActivityModel = Margules::binary(["methanol", "methyl acetate"], 2.771, -0.00523, (250.0, 400.0))
            .unwrap()
            .into();
        let s = m.to_json();
        assert!(s.starts_with("{\"kind\":\"margules\""), "{s}");
        assert_eq!(ActivityModel::from_json(&s).unwrap(), m);
        assert_eq!(m.component_names()[1], "methyl acetate");
        let bad = s.replace("2.771", "NaN");
        assert!(ActivityModel::from_json(&bad).is_err());
        let bad = s.replace("\"t_min\":250.0", "\"t_min\":-1.0");
        assert!(
            ActivityModel::from_json(&bad)
                .unwrap_err()
                .to_string()
                .contains("temperature range")
        );
        let n = "{\"kind\":\"nrtl\",\"components\":[\"x\",\"y\"],\"a\":[[0,1],[2,0]],\"c\":[[0,0.3],[0.3,0]],\"t_min\":200,\"t_max\":400}";
        let m = ActivityModel::from_json(n).unwrap();
        assert_eq!(m.num_components(), 2);
        assert_eq!(ActivityModel::from_json(&m.to_json()).unwrap(), m);
        let mut out = ExcessDerivs::new(2);
        m.excess(300.0, &[1.0, 1.0], Need::ALL, &mut out).unwrap();
        testing::check_model(&m, 300.0, &[1.0, 3.0]);
    }
}
