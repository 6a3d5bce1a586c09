//! The NRTL (non-random two-liquid) model of Renon & Prausnitz (1968), *AIChE J.* 14:135–144.

use super::{
    ExcessDerivs, ExcessGibbs, ParamId, check_call, check_names, check_range, dot, finish, mul_abt, rows, scratch,
    square,
};
use crate::error::{Error, Result};
use crate::model::Need;
use serde::{Deserialize, Serialize};

/// Celsius offset of the temperature form of the non-randomness α_ij, 273.15 K.
const ALPHA_T_REF: f64 = 273.15;

/// Parameters of an [`Nrtl`] model as a caller gives them (and as they serialise).
///
/// Temperature forms (T in K):
/// - τ_ij = a_ij + b_ij/T + e_ij ln(T/K) + f_ij T (dimensionless; b in K, f in 1/K), τ_ii = 0,
///   so the diagonals of a, b, e, f must be 0. With g_ij − g_jj = Δg_ij in J/mol,
///   b_ij = Δg_ij/R and a = e = f = 0.
/// - α_ij = c_ij + d_ij (T − 273.15 K) (c dimensionless, d in 1/K); the diagonal is unused.
///   α is usually symmetric (α_ij = α_ji), but that is not required.
///
/// `a` and `c` must be given in full (nc rows of nc values); `b`, `d`, `e`, `f` may be empty,
/// meaning all zero.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NrtlParams {
    /// Component names, in order.
    pub components: Vec<String>,
    /// a_ij, dimensionless.
    pub a: Vec<Vec<f64>>,
    /// b_ij, K.
    #[serde(default)]
    pub b: Vec<Vec<f64>>,
    /// c_ij (α at 273.15 K), dimensionless.
    pub c: Vec<Vec<f64>>,
    /// d_ij, 1/K.
    #[serde(default)]
    pub d: Vec<Vec<f64>>,
    /// e_ij (coefficient of ln T), dimensionless.
    #[serde(default)]
    pub e: Vec<Vec<f64>>,
    /// f_ij, 1/K.
    #[serde(default)]
    pub f: Vec<Vec<f64>>,
    /// Lowest temperature at which the parameters may be used, K.
    pub t_min: f64,
    /// Highest temperature at which the parameters may be used, K.
    pub t_max: f64,
}

/// The NRTL model (Renon & Prausnitz 1968, *AIChE J.* 14:135):
///
/// g^E/RT = Σ_i x_i (Σ_j τ_ji G_ji x_j)/(Σ_k G_ki x_k),  G_ij = exp(−α_ij τ_ij),
///
/// with the temperature forms of [`NrtlParams`]. ln γ, its composition and temperature
/// derivatives, h^E and s^E are analytic; evaluations allocate nothing after the first with
/// the same [`ExcessDerivs`].
///
/// ```
/// use tieline::model::activity::{Nrtl, NrtlParams};
/// use tieline::model::{ExcessDerivs, ExcessGibbs, Need};
/// let p = NrtlParams {
///     components: vec!["a".into(), "b".into()],
///     a: vec![vec![0.0, 0.5], vec![1.2, 0.0]],
///     b: vec![],
///     c: vec![vec![0.0, 0.3], vec![0.3, 0.0]],
///     d: vec![],
///     e: vec![],
///     f: vec![],
///     t_min: 250.0,
///     t_max: 400.0,
/// };
/// let m = Nrtl::new(p).unwrap();
/// let mut out = ExcessDerivs::new(2);
/// m.excess(300.0, &[0.4, 0.6], Need::ALL, &mut out).unwrap();
/// assert!(out.ln_gamma[0] > 0.0);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "NrtlParams", into = "NrtlParams")]
pub struct Nrtl {
    names: Vec<String>,
    a: Vec<f64>,
    b: Vec<f64>,
    c: Vec<f64>,
    d: Vec<f64>,
    e: Vec<f64>,
    f: Vec<f64>,
    t_range: (f64, f64),
    id: ParamId,
}

impl Nrtl {
    /// Builds the model from caller-given parameter matrices. Wrong sizes, non-finite
    /// entries, non-zero τ diagonals, repeated names or a bad temperature range are
    /// [`Error::InvalidInput`].
    pub fn new(p: NrtlParams) -> Result<Nrtl> {
        check_names(&p.components)?;
        check_range(p.t_min, p.t_max)?;
        let nc = p.components.len();
        Ok(Nrtl {
            a: square("NRTL a", &p.a, nc, true)?,
            b: square("NRTL b", &p.b, nc, true)?,
            c: required(square("NRTL c (alpha)", &p.c, nc, false)?, &p.c)?,
            d: square("NRTL d", &p.d, nc, false)?,
            e: square("NRTL e", &p.e, nc, true)?,
            f: square("NRTL f", &p.f, nc, true)?,
            t_range: (p.t_min, p.t_max),
            names: p.components,
            id: ParamId::fresh(),
        })
    }

    /// The component names, in order.
    pub fn component_names(&self) -> &[String] {
        &self.names
    }

    /// The parameters (as [`Nrtl::new`] takes them).
    pub fn params(&self) -> NrtlParams {
        self.clone().into()
    }

    /// τ_ij and α_ij at T (K).
    pub fn tau_alpha(&self, t: f64, i: usize, j: usize) -> (f64, f64) {
        let nc = self.names.len();
        let k = i * nc + j;
        (
            self.a[k] + self.b[k] / t + self.e[k] * t.ln() + self.f[k] * t,
            self.c[k] + self.d[k] * (t - ALPHA_T_REF),
        )
    }
}

fn required(flat: Vec<f64>, given: &[Vec<f64>]) -> Result<Vec<f64>> {
    if given.is_empty() {
        return Err(Error::invalid(
            "NRTL c (alpha)",
            "the non-randomness matrix must be given (nc rows of nc values)",
        ));
    }
    Ok(flat)
}

impl TryFrom<NrtlParams> for Nrtl {
    type Error = Error;
    fn try_from(p: NrtlParams) -> Result<Nrtl> {
        Nrtl::new(p)
    }
}

impl From<Nrtl> for NrtlParams {
    fn from(m: Nrtl) -> NrtlParams {
        let nc = m.names.len();
        NrtlParams {
            a: rows(&m.a, nc),
            b: rows(&m.b, nc),
            c: rows(&m.c, nc),
            d: rows(&m.d, nc),
            e: rows(&m.e, nc),
            f: rows(&m.f, nc),
            t_min: m.t_range.0,
            t_max: m.t_range.1,
            components: m.names,
        }
    }
}

impl ExcessGibbs for Nrtl {
    fn num_components(&self) -> usize {
        self.names.len()
    }

    fn component_name(&self, i: usize) -> &str {
        &self.names[i]
    }

    fn temperature_range(&self) -> (f64, f64) {
        self.t_range
    }

    fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()> {
        let total = check_call(self, t, n, out)?;
        let nc = self.names.len();
        let nn = nc * nc;
        let ExcessDerivs {
            g_excess,
            ln_gamma,
            dn,
            dt,
            scratch: store,
            ..
        } = out;
        // Layout: a 3-value key of the cached temperature terms (model identity, T, whether
        // the T-derivatives are included), τ, G, τG, ∂G/∂T, ∂(τG)/∂T, then per-call storage.
        let s = scratch(store, 3 + 8 * nn + 10 * nc);
        let (key, s) = s.split_at_mut(3);
        let (tau, s) = s.split_at_mut(nn);
        let (g, s) = s.split_at_mut(nn);
        let (tg, s) = s.split_at_mut(nn);
        let (dg, s) = s.split_at_mut(nn);
        let (dtg, s) = s.split_at_mut(nn);
        let (m, s) = s.split_at_mut(nn);
        let (pg, s) = s.split_at_mut(nn);
        let (a, s) = s.split_at_mut(nn);
        let (x, s) = s.split_at_mut(nc);
        let (sum_g, s) = s.split_at_mut(nc);
        let (inv_s, s) = s.split_at_mut(nc);
        let (eps, s) = s.split_at_mut(nc);
        let (w, s) = s.split_at_mut(nc);
        let (dsum_g, s) = s.split_at_mut(nc);
        let (deps, s) = s.split_at_mut(nc);
        let (u, s) = s.split_at_mut(nc);
        let (v, s) = s.split_at_mut(nc);
        let (z, _) = s.split_at_mut(nc);

        // τ_ij, G_ij, τ_ij G_ij and their temperature derivatives, reused while T and the model
        // are those of the previous call with this storage.
        let cached = self.id.cached(key, t, need.temperature);
        if !cached {
            let ln_t = t.ln();
            let dtc = t - ALPHA_T_REF;
            for k in 0..nn {
                let tk = self.a[k] + self.b[k] / t + self.e[k] * ln_t + self.f[k] * t;
                let al = self.c[k] + self.d[k] * dtc;
                let gk = (-al * tk).exp();
                tau[k] = tk;
                g[k] = gk;
                tg[k] = tk * gk;
                if need.temperature {
                    let dtau = -self.b[k] / (t * t) + self.e[k] / t + self.f[k];
                    let dgk = -(self.d[k] * tk + al * dtau) * gk;
                    dg[k] = dgk;
                    dtg[k] = dtau * gk + tk * dgk;
                }
            }
            self.id.store(key, t, need.temperature);
        }
        for i in 0..nc {
            x[i] = n[i] / total;
        }
        // S_i = Σ_k x_k G_ki and C_i = Σ_k x_k τ_ki G_ki (in `eps`), with their T-derivatives,
        // accumulated row by row of the cached matrices.
        sum_g.fill(0.0);
        eps.fill(0.0);
        if need.temperature {
            dsum_g.fill(0.0);
            deps.fill(0.0);
        }
        for k in 0..nc {
            let xk = x[k];
            let (gk, tgk) = (&g[k * nc..][..nc], &tg[k * nc..][..nc]);
            for i in 0..nc {
                sum_g[i] += xk * gk[i];
                eps[i] += xk * tgk[i];
            }
            if need.temperature {
                let (dgk, dtgk) = (&dg[k * nc..][..nc], &dtg[k * nc..][..nc]);
                for i in 0..nc {
                    dsum_g[i] += xk * dgk[i];
                    deps[i] += xk * dtgk[i];
                }
            }
        }
        // ε_i = C_i/S_i, g^E/RT = Σ_i x_i ε_i, w_i = x_i/S_i; ∂ε_i/∂T = (∂C_i/∂T − ε_i ∂S_i/∂T)/S_i.
        let (mut ge, mut dge) = (0.0, 0.0);
        for i in 0..nc {
            let is = 1.0 / sum_g[i];
            inv_s[i] = is;
            eps[i] *= is;
            w[i] = x[i] * is;
            ge += x[i] * eps[i];
            if need.temperature {
                deps[i] = (deps[i] - eps[i] * dsum_g[i]) * is;
                dge += x[i] * deps[i];
                u[i] = w[i] * eps[i];
                v[i] = w[i] * deps[i];
                z[i] = w[i] * dsum_g[i];
            }
        }
        *g_excess = ge;
        // M_ij = G_ij (τ_ij − ε_j)/S_j and ln γ_i = ε_i + Σ_j x_j M_ij.
        for i in 0..nc {
            let (gi, ti, mi) = (&g[i * nc..][..nc], &tau[i * nc..][..nc], &mut m[i * nc..][..nc]);
            for j in 0..nc {
                mi[j] = gi[j] * (ti[j] - eps[j]) * inv_s[j];
            }
            ln_gamma[i] = eps[i] + dot(x, mi);
        }
        if need.composition {
            // ln γ_i is homogeneous of degree 0 in x, so ∂ln γ_i/∂n_k = (∂ln γ_i/∂x_k)/n_T with
            // ∂ln γ_i/∂x_k = M_ki + M_ik − Σ_j x_j (G_ij M_kj + G_kj M_ij)/S_j = M_ki + M_ik
            // − A_ik − A_ki, where A = P Mᵀ and P_ij = w_j G_ij.
            for i in 0..nc {
                let (pi, gi) = (&mut pg[i * nc..][..nc], &g[i * nc..][..nc]);
                for j in 0..nc {
                    pi[j] = w[j] * gi[j];
                }
            }
            mul_abt(pg, m, nc, a);
            let r = 1.0 / total;
            for i in 0..nc {
                for k in i..nc {
                    let (ik, ki) = (i * nc + k, k * nc + i);
                    let val = (m[ki] + m[ik] - a[ik] - a[ki]) * r;
                    dn[ik] = val;
                    dn[ki] = val;
                }
            }
        }
        if need.temperature {
            // ∂ln γ_i/∂T = ∂ε_i/∂T + Σ_j x_j [∂G_ij/∂T (τ_ij − ε_j) + G_ij (∂τ_ij/∂T − ∂ε_j/∂T)
            // − M_ij ∂S_j/∂T]/S_j, as four row sums with the weights w_j, w_j ε_j, w_j ∂ε_j/∂T
            // and w_j ∂S_j/∂T.
            for i in 0..nc {
                let (d1, d2, d3, d4) = (
                    &dtg[i * nc..][..nc],
                    &dg[i * nc..][..nc],
                    &g[i * nc..][..nc],
                    &m[i * nc..][..nc],
                );
                let mut acc = [0.0f64; 2];
                let h = nc / 2;
                for q in 0..h {
                    for l in 0..2 {
                        let j = 2 * q + l;
                        acc[l] += w[j] * d1[j] - u[j] * d2[j] - v[j] * d3[j] - z[j] * d4[j];
                    }
                }
                let mut val = deps[i] + acc[0] + acc[1];
                if nc % 2 == 1 {
                    let j = nc - 1;
                    val += w[j] * d1[j] - u[j] * d2[j] - v[j] * d3[j] - z[j] * d4[j];
                }
                dt[i] = val;
            }
        }
        finish(t, need, dge, out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::activity::testing::check_model;

    pub(crate) fn ternary() -> Nrtl {
        // Invented parameters exercising every temperature term.
        Nrtl::new(NrtlParams {
            components: vec!["p".into(), "q".into(), "r".into()],
            a: vec![vec![0.0, 0.4, -0.3], vec![1.1, 0.0, 0.7], vec![0.2, -0.5, 0.0]],
            b: vec![vec![0.0, 120.0, 300.0], vec![-80.0, 0.0, 150.0], vec![400.0, 60.0, 0.0]],
            c: vec![vec![0.0, 0.3, 0.2], vec![0.3, 0.0, 0.47], vec![0.2, 0.47, 0.0]],
            d: vec![vec![0.0, 1e-3, 0.0], vec![1e-3, 0.0, -5e-4], vec![0.0, -5e-4, 0.0]],
            e: vec![vec![0.0, 0.05, 0.0], vec![-0.02, 0.0, 0.01], vec![0.0, 0.03, 0.0]],
            f: vec![vec![0.0, 0.0, 1e-4], vec![0.0, 0.0, 0.0], vec![-2e-4, 0.0, 0.0]],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap()
    }

    #[test]
    fn nrtl_derivatives_and_identities() {
        let m = ternary();
        check_model(&m, 330.0, &[0.2, 0.5, 0.3]);
        check_model(&m, 280.0, &[2.0, 0.1, 0.7]);
        check_model(&m, 400.0, &[0.0, 1.0, 3.0]);
    }

    #[test]
    fn nrtl_cached_temperature_terms_are_never_stale() {
        let m = ternary();
        let other = Nrtl::new(NrtlParams {
            b: vec![],
            ..m.params()
        })
        .unwrap();
        let n = [0.2, 0.5, 0.3];
        let fresh = |model: &Nrtl, t: f64| {
            let mut o = ExcessDerivs::new(3);
            model.excess(t, &n, Need::ALL, &mut o).unwrap();
            o
        };
        let mut shared = ExcessDerivs::new(3);
        for (model, t, need) in [
            (&m, 300.0, Need::VALUES),
            (&m, 300.0, Need::ALL),
            (&other, 300.0, Need::ALL),
            (&m, 310.0, Need::ALL),
            (&m, 300.0, Need::ALL),
        ] {
            model.excess(t, &n, need, &mut shared).unwrap();
            let f = fresh(model, t);
            assert_eq!(shared.ln_gamma, f.ln_gamma);
            if need.temperature {
                assert_eq!(shared.dt, f.dt);
                assert_eq!(shared.dn, f.dn);
            }
        }
    }

    /// The multicomponent NRTL ln γ (Renon & Prausnitz 1968, *AIChE J.* 14:135),
    ///
    /// ln γ_i = Σ_j τ_ji G_ji x_j / Σ_k G_ki x_k
    ///        + Σ_j [x_j G_ij / Σ_k G_kj x_k] (τ_ij − Σ_m x_m τ_mj G_mj / Σ_k G_kj x_k),
    ///
    /// and its derivatives by the same formulas differentiated term by term, evaluated
    /// directly (no cached or rearranged sums): the reference for the fast evaluation.
    fn direct(m: &Nrtl, t: f64, x: &[f64]) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
        let nc = x.len();
        let ta = |i: usize, j: usize| m.tau_alpha(t, i, j);
        let tau = |i, j| ta(i, j).0;
        let g = |i, j| {
            let (tt, al) = ta(i, j);
            (-al * tt).exp()
        };
        let s = |j: usize| (0..nc).map(|k| g(k, j) * x[k]).sum::<f64>();
        let eps = |j: usize| (0..nc).map(|k| tau(k, j) * g(k, j) * x[k]).sum::<f64>() / s(j);
        let mm = |i: usize, j: usize| g(i, j) * (tau(i, j) - eps(j)) / s(j);
        let lng = |i: usize| eps(i) + (0..nc).map(|j| x[j] * mm(i, j)).sum::<f64>();
        let ln_gamma: Vec<f64> = (0..nc).map(lng).collect();
        let mut dx = vec![0.0; nc * nc];
        for i in 0..nc {
            for k in 0..nc {
                let mut v = mm(k, i) + mm(i, k);
                for j in 0..nc {
                    v -= x[j] * (g(i, j) * mm(k, j) + g(k, j) * mm(i, j)) / s(j);
                }
                dx[i * nc + k] = v;
            }
        }
        // T-derivatives by the chain rule on τ(T) and α(T).
        let p = m.params();
        let dtau = |i: usize, j: usize| -p.b[i][j] / (t * t) + p.e[i][j] / t + p.f[i][j];
        let dg = |i: usize, j: usize| {
            let d = if p.d.is_empty() { 0.0 } else { p.d[i][j] };
            -(d * tau(i, j) + ta(i, j).1 * dtau(i, j)) * g(i, j)
        };
        let ds = |j: usize| (0..nc).map(|k| dg(k, j) * x[k]).sum::<f64>();
        let deps = |j: usize| {
            (0..nc)
                .map(|k| x[k] * (dtau(k, j) * g(k, j) + tau(k, j) * dg(k, j)))
                .sum::<f64>()
                / s(j)
                - eps(j) * ds(j) / s(j)
        };
        let dt: Vec<f64> = (0..nc)
            .map(|i| {
                deps(i)
                    + (0..nc)
                        .map(|j| {
                            x[j] * (dg(i, j) * (tau(i, j) - eps(j)) + g(i, j) * (dtau(i, j) - deps(j))
                                - mm(i, j) * ds(j))
                                / s(j)
                        })
                        .sum::<f64>()
            })
            .collect();
        (ln_gamma, dx, dt)
    }

    #[test]
    fn nrtl_fast_evaluation_matches_direct_formulas() {
        // Ten components with invented parameters using every temperature term, and the
        // ternary; odd and even sizes exercise every branch of the blocked sums.
        let nc = 10;
        let mat = |f: &dyn Fn(usize, usize) -> f64| -> Vec<Vec<f64>> {
            (0..nc)
                .map(|i| (0..nc).map(|j| if i == j { 0.0 } else { f(i, j) }).collect())
                .collect()
        };
        let ten = Nrtl::new(NrtlParams {
            components: (0..nc).map(|i| format!("c{i}")).collect(),
            a: mat(&|i, j| 0.1 * ((i * 7 + j * 3) % 5) as f64 - 0.2),
            b: mat(&|i, j| 50.0 * ((i * 3 + j * 5) % 9) as f64 - 100.0),
            c: mat(&|i, j| 0.2 + 0.02 * ((i + j) % 5) as f64),
            d: mat(&|_, _| 1e-4),
            e: mat(&|i, j| 0.01 * ((i + 2 * j) % 3) as f64),
            f: mat(&|i, j| 1e-5 * ((2 * i + j) % 4) as f64),
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        let nine = Nrtl::new(NrtlParams {
            components: (0..9).map(|i| format!("c{i}")).collect(),
            a: ten.params().a[..9].iter().map(|r| r[..9].to_vec()).collect(),
            b: ten.params().b[..9].iter().map(|r| r[..9].to_vec()).collect(),
            c: ten.params().c[..9].iter().map(|r| r[..9].to_vec()).collect(),
            d: vec![],
            e: ten.params().e[..9].iter().map(|r| r[..9].to_vec()).collect(),
            f: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        let close = |a: f64, b: f64, scale: f64| (a - b).abs() <= 1e-13 * scale;
        for (m, t) in [(&ten, 330.0), (&ten, 260.0), (&nine, 400.0), (&ternary(), 300.0)] {
            let nc = m.num_components();
            for shift in [0usize, 3] {
                let n: Vec<f64> = (0..nc).map(|i| 0.05 + 0.01 * ((i + shift) % nc) as f64).collect();
                let total: f64 = n.iter().sum();
                let x: Vec<f64> = n.iter().map(|v| v / total).collect();
                let mut out = ExcessDerivs::new(nc);
                m.excess(t, &n, Need::ALL, &mut out).unwrap();
                let (lg, dx, dt) = direct(m, t, &x);
                let sc = |v: &[f64]| v.iter().fold(0.0f64, |a, b| a.max(b.abs()));
                let (sl, sd, st) = (sc(&lg), sc(&dx), sc(&dt));
                for i in 0..nc {
                    assert!(
                        close(out.ln_gamma[i], lg[i], sl),
                        "ln γ{i}: {} vs {}",
                        out.ln_gamma[i],
                        lg[i]
                    );
                    assert!(close(out.dt[i], dt[i], st), "∂ln γ{i}/∂T: {} vs {}", out.dt[i], dt[i]);
                    for k in 0..nc {
                        let a = out.dn[i * nc + k] * total;
                        assert!(
                            close(a, dx[i * nc + k], sd),
                            "∂ln γ{i}/∂x{k}: {a} vs {}",
                            dx[i * nc + k]
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn nrtl_binary_closed_form() {
        // Binary NRTL (Renon & Prausnitz 1968, eqs. for ln γ1, ln γ2):
        // ln γ1 = x2² [τ21 (G21/(x1 + x2 G21))² + τ12 G12/(x2 + x1 G12)²].
        let m = Nrtl::new(NrtlParams {
            components: vec!["1".into(), "2".into()],
            a: vec![vec![0.0, 0.0], vec![0.0, 0.0]],
            b: vec![vec![0.0, 250.0], vec![600.0, 0.0]],
            c: vec![vec![0.0, 0.3], vec![0.3, 0.0]],
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: 200.0,
            t_max: 500.0,
        })
        .unwrap();
        let t: f64 = 320.0;
        let (x1, x2) = (0.35, 0.65);
        let (t12, t21) = (250.0 / t, 600.0 / t);
        let (g12, g21) = ((-0.3 * t12).exp(), (-0.3 * t21).exp());
        let l1 = x2 * x2 * (t21 * (g21 / (x1 + x2 * g21)).powi(2) + t12 * g12 / (x2 + x1 * g12).powi(2));
        let l2 = x1 * x1 * (t12 * (g12 / (x2 + x1 * g12)).powi(2) + t21 * g21 / (x1 + x2 * g21).powi(2));
        let mut out = ExcessDerivs::new(2);
        m.excess(t, &[x1, x2], Need::VALUES, &mut out).unwrap();
        assert!((out.ln_gamma[0] - l1).abs() < 1e-13);
        assert!((out.ln_gamma[1] - l2).abs() < 1e-13);
        // Infinite dilution: ln γ1^∞ = τ21 + τ12 G12.
        m.excess(t, &[0.0, 1.0], Need::VALUES, &mut out).unwrap();
        assert!((out.ln_gamma[0] - (t21 + t12 * g12)).abs() < 1e-13);
        assert!(out.ln_gamma[1].abs() < 1e-15);
    }

    #[test]
    fn nrtl_ideal_limit_and_bad_input() {
        let z = vec![vec![0.0; 3]; 3];
        let m = Nrtl::new(NrtlParams {
            components: vec!["p".into(), "q".into(), "r".into()],
            a: z.clone(),
            b: vec![],
            c: vec![vec![0.3; 3]; 3],
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        let mut out = ExcessDerivs::new(3);
        m.excess(300.0, &[0.2, 0.3, 0.5], Need::ALL, &mut out).unwrap();
        assert!(
            out.ln_gamma
                .iter()
                .chain(out.dn.iter())
                .chain(out.dt.iter())
                .all(|v| *v == 0.0)
        );
        assert_eq!(out.g_excess, 0.0);
        assert_eq!(out.h_excess, 0.0);

        let t = ternary();
        use crate::error::ErrorKind;
        let k = |r: Result<()>| r.unwrap_err().kind();
        assert_eq!(
            k(t.excess(500.0, &[1.0, 1.0, 1.0], Need::VALUES, &mut out)),
            ErrorKind::OutsideValidity
        );
        assert_eq!(
            k(t.excess(f64::NAN, &[1.0, 1.0, 1.0], Need::VALUES, &mut out)),
            ErrorKind::InvalidInput
        );
        assert_eq!(
            k(t.excess(300.0, &[1.0, -1.0, 1.0], Need::VALUES, &mut out)),
            ErrorKind::InvalidInput
        );
        assert_eq!(
            k(t.excess(300.0, &[1.0, f64::INFINITY, 1.0], Need::VALUES, &mut out)),
            ErrorKind::InvalidInput
        );
        assert_eq!(
            k(t.excess(300.0, &[1.0, 1.0], Need::VALUES, &mut out)),
            ErrorKind::InvalidInput
        );
        let mut p = t.params();
        p.a[0][1] = f64::NAN;
        assert_eq!(Nrtl::new(p).unwrap_err().kind(), ErrorKind::InvalidInput);
        let mut p = t.params();
        p.b.pop();
        assert!(Nrtl::new(p).unwrap_err().to_string().contains("3×3"));
        let mut p = t.params();
        p.a[1][1] = 0.1;
        assert_eq!(Nrtl::new(p).unwrap_err().kind(), ErrorKind::InvalidInput);
        let mut p = t.params();
        p.t_min = 500.0;
        assert_eq!(Nrtl::new(p).unwrap_err().kind(), ErrorKind::InvalidInput);
    }
}
