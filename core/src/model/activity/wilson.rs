//! The Wilson model (Wilson 1964, *J. Am. Chem. Soc.* 86:127–130).

use super::{
    ExcessDerivs, ExcessGibbs, ParamId, check_call, check_names, check_range, dot, finish, mul_abt, positive_vector,
    rows, scratch, square,
};
use crate::error::{Error, Result};
use crate::model::Need;
use serde::{Deserialize, Serialize};

/// Parameters of a [`Wilson`] model as a caller gives them (and as they serialise).
///
/// Temperature form (T in K):
/// Λ_ij = (V_j/V_i) exp(−(a_ij + b_ij/T + c_ij ln(T/K) + d_ij T)),
/// with the liquid molar volumes V_i (m3/mol) taken as constant. With (λ_ij − λ_ii) in J/mol,
/// b_ij = (λ_ij − λ_ii)/R and a = c = d = 0. The diagonals of a, b, c, d must be 0 (Λ_ii = 1).
/// `a` must be given in full; `b`, `c`, `d` may be empty (all zero).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WilsonParams {
    /// Component names, in order.
    pub components: Vec<String>,
    /// Liquid molar volumes V_i, m3/mol.
    pub volumes: Vec<f64>,
    /// a_ij, dimensionless.
    pub a: Vec<Vec<f64>>,
    /// b_ij, K.
    #[serde(default)]
    pub b: Vec<Vec<f64>>,
    /// c_ij (coefficient of ln T), dimensionless.
    #[serde(default)]
    pub c: Vec<Vec<f64>>,
    /// d_ij, 1/K.
    #[serde(default)]
    pub d: Vec<Vec<f64>>,
    /// Lowest temperature at which the parameters may be used, K.
    pub t_min: f64,
    /// Highest temperature at which the parameters may be used, K.
    pub t_max: f64,
}

/// The Wilson model (Wilson 1964, *J. Am. Chem. Soc.* 86:127):
///
/// g^E/RT = −Σ_i x_i ln(Σ_j x_j Λ_ij),  ln γ_i = 1 − ln Σ_j x_j Λ_ij − Σ_k x_k Λ_ki/Σ_j x_j Λ_kj,
///
/// with Λ_ij of [`WilsonParams`]. The model cannot represent liquid–liquid equilibrium: for
/// any Λ_ij > 0 its g^E gives a mixture that is stable at every composition, so it is for
/// miscible liquids (VLE) only. Derivatives are analytic; evaluations allocate nothing after
/// the first with the same [`ExcessDerivs`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "WilsonParams", into = "WilsonParams")]
pub struct Wilson {
    names: Vec<String>,
    volumes: Vec<f64>,
    a: Vec<f64>,
    b: Vec<f64>,
    c: Vec<f64>,
    d: Vec<f64>,
    t_range: (f64, f64),
    id: ParamId,
}

impl Wilson {
    /// Builds the model from caller-given parameters. Wrong sizes, non-finite entries,
    /// non-positive volumes, non-zero diagonals, repeated names or a bad temperature range
    /// are [`Error::InvalidInput`].
    pub fn new(p: WilsonParams) -> Result<Wilson> {
        check_names(&p.components)?;
        check_range(p.t_min, p.t_max)?;
        let nc = p.components.len();
        positive_vector("Wilson molar volumes", &p.volumes, nc)?;
        if p.a.is_empty() {
            return Err(Error::invalid(
                "Wilson a",
                "the matrix must be given (nc rows of nc values)",
            ));
        }
        Ok(Wilson {
            volumes: p.volumes,
            a: square("Wilson a", &p.a, nc, true)?,
            b: square("Wilson b", &p.b, nc, true)?,
            c: square("Wilson c", &p.c, nc, true)?,
            d: square("Wilson d", &p.d, nc, true)?,
            t_range: (p.t_min, p.t_max),
            names: p.components,
            id: ParamId::fresh(),
        })
    }

    /// The component names, in order.
    pub fn component_names(&self) -> &[String] {
        &self.names
    }

    /// The parameters (as [`Wilson::new`] takes them).
    pub fn params(&self) -> WilsonParams {
        self.clone().into()
    }

    /// Λ_ij at T (K).
    pub fn lambda(&self, t: f64, i: usize, j: usize) -> f64 {
        let k = i * self.names.len() + j;
        self.volumes[j] / self.volumes[i] * (-(self.a[k] + self.b[k] / t + self.c[k] * t.ln() + self.d[k] * t)).exp()
    }
}

impl TryFrom<WilsonParams> for Wilson {
    type Error = Error;
    fn try_from(p: WilsonParams) -> Result<Wilson> {
        Wilson::new(p)
    }
}

impl From<Wilson> for WilsonParams {
    fn from(m: Wilson) -> WilsonParams {
        let nc = m.names.len();
        WilsonParams {
            volumes: m.volumes,
            a: rows(&m.a, nc),
            b: rows(&m.b, nc),
            c: rows(&m.c, nc),
            d: rows(&m.d, nc),
            t_min: m.t_range.0,
            t_max: m.t_range.1,
            components: m.names,
        }
    }
}

impl ExcessGibbs for Wilson {
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
        // the T-derivatives are included), Λ, its transpose, ∂Λ/∂T, then per-call storage.
        let s = scratch(store, 3 + 5 * nn + 4 * nc);
        let (key, s) = s.split_at_mut(3);
        let (lam, s) = s.split_at_mut(nn);
        let (lamt, s) = s.split_at_mut(nn);
        let (dlam, s) = s.split_at_mut(nn);
        let (pc, s) = s.split_at_mut(nn);
        let (prod, s) = s.split_at_mut(nn);
        let (x, s) = s.split_at_mut(nc);
        let (sum, s) = s.split_at_mut(nc);
        let (dsum, s) = s.split_at_mut(nc);
        let (r, _) = s.split_at_mut(nc);
        if !self.id.cached(key, t, need.temperature) {
            let ln_t = t.ln();
            for i in 0..nc {
                for j in 0..nc {
                    let k = i * nc + j;
                    let l = self.volumes[j] / self.volumes[i]
                        * (-(self.a[k] + self.b[k] / t + self.c[k] * ln_t + self.d[k] * t)).exp();
                    lam[k] = l;
                    lamt[j * nc + i] = l;
                    if need.temperature {
                        dlam[k] = -l * (-self.b[k] / (t * t) + self.c[k] / t + self.d[k]);
                    }
                }
            }
            self.id.store(key, t, need.temperature);
        }
        for i in 0..nc {
            x[i] = n[i] / total;
        }
        // S_i = Σ_j x_j Λ_ij; r_k = x_k/S_k.
        let mut ge = 0.0;
        for i in 0..nc {
            let v = dot(x, &lam[i * nc..][..nc]);
            sum[i] = v;
            r[i] = x[i] / v;
            ge -= x[i] * v.ln();
        }
        *g_excess = ge;
        for i in 0..nc {
            ln_gamma[i] = 1.0 - sum[i].ln() - dot(r, &lamt[i * nc..][..nc]);
        }
        if need.composition {
            // n_T ∂ln γ_i/∂n_j = 1 − Λ_ij/S_i − Λ_ji/S_j + Σ_k x_k Λ_ki Λ_kj/S_k², the sum as
            // the product (Λᵀ C) Λ with C = diag(x_k/S_k²).
            for i in 0..nc {
                let (ci, li) = (&mut pc[i * nc..][..nc], &lamt[i * nc..][..nc]);
                for k in 0..nc {
                    ci[k] = li[k] * (r[k] / sum[k]);
                }
            }
            mul_abt(pc, lamt, nc, prod);
            for i in 0..nc {
                for j in i..nc {
                    let v = (1.0 - lam[i * nc + j] / sum[i] - lam[j * nc + i] / sum[j] + prod[i * nc + j]) / total;
                    dn[i * nc + j] = v;
                    dn[j * nc + i] = v;
                }
            }
        }
        let mut dge = 0.0;
        if need.temperature {
            for i in 0..nc {
                let v = dot(x, &dlam[i * nc..][..nc]);
                dsum[i] = v;
                dge -= x[i] * v / sum[i];
            }
            for i in 0..nc {
                let mut v = -dsum[i] / sum[i];
                for k in 0..nc {
                    v -= r[k] * (dlam[k * nc + i] - lam[k * nc + i] * dsum[k] / sum[k]);
                }
                dt[i] = v;
            }
        }
        finish(t, need, dge, out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::activity::testing::check_model;

    #[test]
    fn wilson_derivatives_and_identities() {
        // Invented parameters exercising every temperature term.
        let m = Wilson::new(WilsonParams {
            components: vec!["p".into(), "q".into(), "r".into()],
            volumes: vec![4.0e-5, 1.8e-5, 9.0e-5],
            a: vec![vec![0.0, 0.2, -0.1], vec![0.3, 0.0, 0.1], vec![-0.2, 0.4, 0.0]],
            b: vec![vec![0.0, 50.0, 300.0], vec![240.0, 0.0, -40.0], vec![120.0, 500.0, 0.0]],
            c: vec![vec![0.0, 0.01, 0.0], vec![0.0, 0.0, 0.02], vec![-0.01, 0.0, 0.0]],
            d: vec![vec![0.0, 0.0, 1e-4], vec![-1e-4, 0.0, 0.0], vec![0.0, 2e-4, 0.0]],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        check_model(&m, 340.0, &[0.2, 0.5, 0.3]);
        check_model(&m, 260.0, &[0.0, 0.4, 0.6]);
        let mut p = m.params();
        p.volumes[1] = 0.0;
        assert!(Wilson::new(p).is_err());
    }

    #[test]
    fn wilson_binary_closed_form_and_ideal_limit() {
        // Binary Wilson (Wilson 1964): ln γ1 = −ln(x1 + x2Λ12) + x2 [Λ12/(x1 + x2Λ12) − Λ21/(x2 + x1Λ21)];
        // ln γ1^∞ = −ln Λ12 + 1 − Λ21.
        let m = Wilson::new(WilsonParams {
            components: vec!["1".into(), "2".into()],
            volumes: vec![4.073e-5, 1.807e-5],
            a: vec![vec![0.0; 2]; 2],
            b: vec![vec![0.0, 54.0], vec![236.3, 0.0]],
            c: vec![],
            d: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        let t: f64 = 330.0;
        let (l12, l21) = (m.lambda(t, 0, 1), m.lambda(t, 1, 0));
        let (x1, x2) = (0.3, 0.7);
        let l1 = -(x1 + x2 * l12).ln() + x2 * (l12 / (x1 + x2 * l12) - l21 / (x2 + x1 * l21));
        let mut out = ExcessDerivs::new(2);
        m.excess(t, &[x1, x2], Need::VALUES, &mut out).unwrap();
        assert!((out.ln_gamma[0] - l1).abs() < 1e-13);
        m.excess(t, &[0.0, 2.0], Need::VALUES, &mut out).unwrap();
        assert!((out.ln_gamma[0] - (1.0 - l12.ln() - l21)).abs() < 1e-13);
        // Λ = 1 (equal volumes, zero energies): ideal.
        let mut p = m.params();
        p.volumes = vec![1e-5, 1e-5];
        p.b = vec![];
        let m = Wilson::new(p).unwrap();
        m.excess(t, &[x1, x2], Need::ALL, &mut out).unwrap();
        assert!(
            out.ln_gamma
                .iter()
                .chain(&out.dn)
                .chain(&out.dt)
                .all(|v| v.abs() < 1e-15)
        );
    }
}
