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
    let mut ok = out.g_excess.is_finite() && all_finite(&out.ln_gamma);
    if need.composition {
        ok &= all_finite(&out.dn[..nc * nc]);
    }
    if need.temperature {
        out.h_excess = -R * t * t * dg_dt;
        out.s_excess = (out.h_excess - R * t * out.g_excess) / t;
        ok &= all_finite(&out.dt) && out.h_excess.is_finite();
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

/// Whether every value of `v` is finite: x·0 is 0 for a finite x and NaN otherwise, and the
/// sum of those products (over two independent lanes, which the compiler vectorises) is NaN
/// exactly when some value is not finite.
#[inline]
pub(crate) fn all_finite(v: &[f64]) -> bool {
    let (pairs, tail) = v.as_chunks::<2>();
    let mut acc = [0.0f64; 2];
    for c in pairs {
        acc[0] += c[0] * 0.0;
        acc[1] += c[1] * 0.0;
    }
    let mut t = acc[0] + acc[1];
    for x in tail {
        t += x * 0.0;
    }
    t == 0.0
}

/// Σ_j a_j b_j over the common length, with two-lane partial sums (which the compiler
/// vectorises).
#[inline]
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    let len = a.len().min(b.len());
    let (a, b) = (&a[..len], &b[..len]);
    let (pa, ta) = a.as_chunks::<2>();
    let (pb, tb) = b.as_chunks::<2>();
    let mut acc = [0.0f64; 2];
    for (x, y) in pa.iter().zip(pb) {
        acc[0] += x[0] * y[0];
        acc[1] += x[1] * y[1];
    }
    let mut t = acc[0] + acc[1];
    for (x, y) in ta.iter().zip(tb) {
        t += x * y;
    }
    t
}

/// The product A Bᵀ of row-major matrices with rows of length `m`: A is r × m, B is c × m,
/// and `out` (r × c, row-major) receives out_ik = Σ_j A_ij B_kj. Blocks of two rows of each
/// share their loads (four sums per pass, vectorised in pairs), so the product runs at about
/// twice the speed of r·c separate dot products.
pub(crate) fn mul_abt(a: &[f64], b: &[f64], m: usize, out: &mut [f64]) {
    if m == 0 {
        out.fill(0.0);
        return;
    }
    let (r, c) = (a.len() / m, b.len() / m);
    let out = &mut out[..r * c];
    let mut i = 0;
    while i + 2 <= r {
        let (a0, a1) = (&a[i * m..(i + 1) * m], &a[(i + 1) * m..(i + 2) * m]);
        let mut k = 0;
        while k + 2 <= c {
            let (b0, b1) = (&b[k * m..(k + 1) * m], &b[(k + 1) * m..(k + 2) * m]);
            let (p0, t0) = a0.as_chunks::<2>();
            let (p1, t1) = a1.as_chunks::<2>();
            let (q0, u0) = b0.as_chunks::<2>();
            let (q1, u1) = b1.as_chunks::<2>();
            let h = p0.len();
            let (p1, q0, q1) = (&p1[..h], &q0[..h], &q1[..h]);
            let mut s = [[0.0f64; 2]; 4];
            for j in 0..h {
                let (x0, x1, y0, y1) = (p0[j], p1[j], q0[j], q1[j]);
                for l in 0..2 {
                    s[0][l] += x0[l] * y0[l];
                    s[1][l] += x0[l] * y1[l];
                    s[2][l] += x1[l] * y0[l];
                    s[3][l] += x1[l] * y1[l];
                }
            }
            let mut v = [
                s[0][0] + s[0][1],
                s[1][0] + s[1][1],
                s[2][0] + s[2][1],
                s[3][0] + s[3][1],
            ];
            if let (Some(x0), Some(x1), Some(y0), Some(y1)) = (t0.first(), t1.first(), u0.first(), u1.first()) {
                v[0] += x0 * y0;
                v[1] += x0 * y1;
                v[2] += x1 * y0;
                v[3] += x1 * y1;
            }
            out[i * c + k] = v[0];
            out[i * c + k + 1] = v[1];
            out[(i + 1) * c + k] = v[2];
            out[(i + 1) * c + k + 1] = v[3];
            k += 2;
        }
        if k < c {
            let bk = &b[k * m..(k + 1) * m];
            out[i * c + k] = dot(a0, bk);
            out[(i + 1) * c + k] = dot(a1, bk);
        }
        i += 2;
    }
    if i < r {
        let ai = &a[i * m..(i + 1) * m];
        for k in 0..c {
            out[i * c + k] = dot(ai, &b[k * m..(k + 1) * m]);
        }
    }
}

/// Takes `len` values of scratch storage (grown once, then reused).
pub(crate) fn scratch(v: &mut Vec<f64>, len: usize) -> &mut [f64] {
    if v.len() < len {
        v.resize(len, 0.0);
    }
    &mut v[..len]
}

/// A process-unique identity of a model's parameter set: the key of the per-temperature
/// terms cached in the caller's scratch storage ([`ExcessDerivs`], the fugacity work).
/// Models have no setters, so a parameter set never changes under its identity; clones share
/// it. Ignored by `==`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ParamId(pub(crate) u64);

impl ParamId {
    pub(crate) fn fresh() -> Self {
        static NEXT: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(1);
        ParamId(NEXT.fetch_add(1, std::sync::atomic::Ordering::Relaxed))
    }

    /// Whether the 3-value `key` (written by [`ParamId::store`]) marks terms cached for this
    /// parameter set at exactly T (K), including the T-derivatives if `with_dt`.
    pub(crate) fn cached(self, key: &[f64], t: f64, with_dt: bool) -> bool {
        key[0].to_bits() == self.0 && key[1].to_bits() == t.to_bits() && (key[2] == 1.0 || !with_dt)
    }

    /// Marks the terms in the storage behind `key` as those of this parameter set at T (K).
    pub(crate) fn store(self, key: &mut [f64], t: f64, with_dt: bool) {
        key[0] = f64::from_bits(self.0);
        key[1] = t;
        key[2] = if with_dt { 1.0 } else { 0.0 };
    }
}

impl PartialEq for ParamId {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

/// The residual term shared by UNIQUAC (over components) and UNIFAC (over groups), after
/// Abrams & Prausnitz (1975), *AIChE J.* 21:116, eq. for ln γ^R: for weights w_i (q'_i or
/// Q_k), amounts y_i (any scale) and interaction factors P_ij (τ_ij or Ψ_mn),
///
/// v_i = w_i [1 − ln(U_i/W) − Σ_j w_j y_j P_ij/U_j],  U_i = Σ_j w_j y_j P_ji,  W = Σ_j w_j y_j.
///
/// Fills `val` (v_i), with `dy` the derivatives ∂v_i/∂y_k (row-major, symmetric; v is
/// homogeneous of degree 0 in y) and with `dp` (∂P/∂T) the temperature derivatives `dval`.
/// `work` is scratch of [`Residual::work_len`] values.
pub(crate) struct Residual<'a> {
    pub w: &'a [f64],
    pub y: &'a [f64],
    pub p: &'a [f64],
    pub dp: Option<&'a [f64]>,
}

impl Residual<'_> {
    /// Scratch values [`Residual::eval`] needs for `m` weights.
    pub(crate) fn work_len(m: usize) -> usize {
        m * m + 4 * m
    }

    pub(crate) fn eval(&self, val: &mut [f64], dy: Option<&mut [f64]>, dval: Option<&mut [f64]>, work: &mut [f64]) {
        let m = self.w.len();
        let (w, y, p) = (self.w, &self.y[..m], &self.p[..m * m]);
        let (wy, rest) = work.split_at_mut(m);
        let (u, rest) = rest.split_at_mut(m);
        let (r, rest) = rest.split_at_mut(m);
        let (du, rest) = rest.split_at_mut(m);
        let (pc, _) = rest.split_at_mut(m * m);
        let mut wsum = 0.0;
        for j in 0..m {
            wy[j] = w[j] * y[j];
            wsum += wy[j];
        }
        // U_i = Σ_j (w_j y_j) P_ji, accumulated over the rows of P; r_j = w_j y_j/U_j.
        u.fill(0.0);
        for j in 0..m {
            axpy(u, wy[j], &p[j * m..][..m]);
        }
        for j in 0..m {
            r[j] = wy[j] / u[j];
        }
        for i in 0..m {
            val[i] = w[i] * (1.0 - (u[i] / wsum).ln() - dot(&p[i * m..][..m], r));
        }
        if let Some(dy) = dy {
            // ∂v_i/∂y_k = w_i w_k [1/W − P_ki/U_i − P_ik/U_k + Σ_j (w_j y_j/U_j²) P_ij P_kj], the
            // last sum as the product (P C) Pᵀ with C = diag(w_j y_j/U_j²).
            for i in 0..m {
                let (pi, ci) = (&p[i * m..][..m], &mut pc[i * m..][..m]);
                for j in 0..m {
                    ci[j] = pi[j] * (r[j] / u[j]);
                }
            }
            mul_abt(pc, p, m, dy);
            let inv_w = 1.0 / wsum;
            for i in 0..m {
                for k in i..m {
                    let v = (inv_w - p[k * m + i] / u[i] - p[i * m + k] / u[k] + dy[i * m + k]) * (w[i] * w[k]);
                    dy[i * m + k] = v;
                    dy[k * m + i] = v;
                }
            }
        }
        if let (Some(dval), Some(dp)) = (dval, self.dp) {
            // ∂U_i/∂T = Σ_j (w_j y_j) ∂P_ji/∂T; ∂v_i/∂T = w_i [−(∂U_i/∂T)/U_i
            // − Σ_j r_j ∂P_ij/∂T + Σ_j P_ij r_j (∂U_j/∂T)/U_j], the last weight kept in `pc`.
            let dp = &dp[..m * m];
            du.fill(0.0);
            for j in 0..m {
                axpy(du, wy[j], &dp[j * m..][..m]);
            }
            let rd = &mut pc[..m];
            for j in 0..m {
                rd[j] = r[j] * du[j] / u[j];
            }
            for i in 0..m {
                let row = i * m..(i + 1) * m;
                dval[i] = w[i] * (-du[i] / u[i] - dot(&dp[row.clone()], r) + dot(&p[row], rd));
            }
        }
    }
}

/// y += a x over the common length.
#[inline]
pub(crate) fn axpy(y: &mut [f64], a: f64, x: &[f64]) {
    for (yv, xv) in y.iter_mut().zip(x) {
        *yv += a * xv;
    }
}

#[cfg(test)]
pub(crate) mod testing;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cached_temperature_terms_are_never_stale_across_models() {
        // One storage shared by every model in turn, at changing temperatures and needs: each
        // result equals a fresh evaluation bit for bit.
        let names = ["water", "ethanol", "acetone"];
        let unifac: ActivityModel = Unifac::from_names(&names).unwrap().into();
        let unifac2: ActivityModel = Unifac::from_names(&["water", "ethanol", "toluene"]).unwrap().into();
        let z = vec![vec![0.0; 3]; 3];
        let off = |v: [[f64; 3]; 3]| v.iter().map(|r| r.to_vec()).collect::<Vec<_>>();
        let nrtl: ActivityModel = Nrtl::new(NrtlParams {
            components: names.iter().map(|s| s.to_string()).collect(),
            a: off([[0.0, 0.4, -0.3], [1.1, 0.0, 0.7], [0.2, -0.5, 0.0]]),
            b: off([[0.0, 120.0, 300.0], [-80.0, 0.0, 150.0], [400.0, 60.0, 0.0]]),
            c: vec![vec![0.3; 3]; 3],
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap()
        .into();
        let wilson: ActivityModel = Wilson::new(WilsonParams {
            components: names.iter().map(|s| s.to_string()).collect(),
            volumes: vec![18e-6, 58e-6, 74e-6],
            a: z.clone(),
            b: off([[0.0, 200.0, 500.0], [60.0, 0.0, -40.0], [300.0, 90.0, 0.0]]),
            c: vec![],
            d: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap()
        .into();
        let uniquac: ActivityModel = Uniquac::new(UniquacParams {
            components: names.iter().map(|s| s.to_string()).collect(),
            r: vec![0.92, 2.1055, 2.5735],
            q: vec![1.4, 1.972, 2.336],
            q_prime: vec![],
            a: z,
            b: off([[0.0, -150.0, -600.0], [-40.0, 0.0, -90.0], [-1200.0, -200.0, 0.0]]),
            c: vec![],
            d: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap()
        .into();
        let n = [0.2, 0.5, 0.3];
        let mut shared = ExcessDerivs::new(3);
        let models = [&unifac, &nrtl, &unifac2, &wilson, &uniquac];
        for (step, t) in [300.0, 300.0, 310.0, 300.0, 310.0, 310.0].into_iter().enumerate() {
            for (k, m) in models.iter().enumerate() {
                for need in [Need::VALUES, Need::ALL, Need::COMPOSITION] {
                    m.excess(t, &n, need, &mut shared).unwrap();
                    let mut fresh = ExcessDerivs::new(3);
                    m.excess(t, &n, need, &mut fresh).unwrap();
                    let at = format!("step {step}, model {k}, {need:?}");
                    assert_eq!(shared.ln_gamma, fresh.ln_gamma, "{at}");
                    if need.composition {
                        assert_eq!(shared.dn, fresh.dn, "{at}");
                    }
                    if need.temperature {
                        assert_eq!(shared.dt, fresh.dt, "{at}");
                    }
                }
            }
        }
    }

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
