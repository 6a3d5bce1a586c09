//! The UNIQUAC model (Abrams & Prausnitz 1975, *AIChE J.* 21:116–128).

use super::{
    ExcessDerivs, ExcessGibbs, ParamId, Residual, check_call, check_names, check_range, finish, positive_vector, rows,
    scratch, square,
};
use crate::error::{Error, Result};
use crate::model::Need;
use serde::{Deserialize, Serialize};

/// Lattice coordination number z of the UNIQUAC combinatorial term (Abrams & Prausnitz 1975).
pub const COORDINATION_NUMBER: f64 = 10.0;

/// Parameters of a [`Uniquac`] model as a caller gives them (and as they serialise).
///
/// τ_ij = exp(a_ij + b_ij/T + c_ij ln(T/K) + d_ij T) (T in K; a, c dimensionless, b in K, d in
/// 1/K). In Abrams & Prausnitz's notation τ_ij = exp(−(u_ij − u_jj)/RT), so b_ij =
/// −(u_ij − u_jj)/R; the diagonals must be 0 (τ_ii = 1). r_i and q_i are the relative van der
/// Waals volume and surface area (dimensionless, Bondi's increments, e.g. from the UNIFAC
/// group sums); q'_i, the interaction area of the residual term (Anderson & Prausnitz 1978,
/// *Ind. Eng. Chem. Process Des. Dev.* 17:552), defaults to q_i when `q_prime` is empty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniquacParams {
    /// Component names, in order.
    pub components: Vec<String>,
    /// r_i, dimensionless.
    pub r: Vec<f64>,
    /// q_i, dimensionless.
    pub q: Vec<f64>,
    /// q'_i, dimensionless (empty: q'_i = q_i).
    #[serde(default)]
    pub q_prime: Vec<f64>,
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

/// The UNIQUAC model (Abrams & Prausnitz 1975, *AIChE J.* 21:116), with z = 10,
/// Φ_i = r_i x_i/Σ_j r_j x_j, θ_i = q_i x_i/Σ_j q_j x_j, θ'_i likewise with q'_i:
///
/// g^E/RT = Σ x_i ln(Φ_i/x_i) + (z/2) Σ q_i x_i ln(θ_i/Φ_i) − Σ q'_i x_i ln(Σ_j θ'_j τ_ji).
///
/// Derivatives are analytic; evaluations allocate nothing after the first with the same
/// [`ExcessDerivs`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "UniquacParams", into = "UniquacParams")]
pub struct Uniquac {
    names: Vec<String>,
    r: Vec<f64>,
    q: Vec<f64>,
    q_prime: Vec<f64>,
    q_prime_given: bool,
    a: Vec<f64>,
    b: Vec<f64>,
    c: Vec<f64>,
    d: Vec<f64>,
    t_range: (f64, f64),
    id: ParamId,
}

impl Uniquac {
    /// Builds the model from caller-given parameters. Wrong sizes, non-finite entries,
    /// non-positive r, q, q', non-zero diagonals, repeated names or a bad temperature range
    /// are [`Error::InvalidInput`].
    pub fn new(p: UniquacParams) -> Result<Uniquac> {
        check_names(&p.components)?;
        check_range(p.t_min, p.t_max)?;
        let nc = p.components.len();
        positive_vector("UNIQUAC r", &p.r, nc)?;
        positive_vector("UNIQUAC q", &p.q, nc)?;
        let q_prime_given = !p.q_prime.is_empty();
        let q_prime = if q_prime_given {
            positive_vector("UNIQUAC q'", &p.q_prime, nc)?;
            p.q_prime
        } else {
            p.q.clone()
        };
        if p.a.is_empty() {
            return Err(Error::invalid(
                "UNIQUAC a",
                "the matrix must be given (nc rows of nc values)",
            ));
        }
        Ok(Uniquac {
            r: p.r,
            q: p.q,
            q_prime,
            q_prime_given,
            a: square("UNIQUAC a", &p.a, nc, true)?,
            b: square("UNIQUAC b", &p.b, nc, true)?,
            c: square("UNIQUAC c", &p.c, nc, true)?,
            d: square("UNIQUAC d", &p.d, nc, true)?,
            t_range: (p.t_min, p.t_max),
            names: p.components,
            id: ParamId::fresh(),
        })
    }

    /// The component names, in order.
    pub fn component_names(&self) -> &[String] {
        &self.names
    }

    /// The parameters (as [`Uniquac::new`] takes them).
    pub fn params(&self) -> UniquacParams {
        self.clone().into()
    }

    /// τ_ij at T (K).
    pub fn tau(&self, t: f64, i: usize, j: usize) -> f64 {
        let k = i * self.names.len() + j;
        (self.a[k] + self.b[k] / t + self.c[k] * t.ln() + self.d[k] * t).exp()
    }
}

impl TryFrom<UniquacParams> for Uniquac {
    type Error = Error;
    fn try_from(p: UniquacParams) -> Result<Uniquac> {
        Uniquac::new(p)
    }
}

impl From<Uniquac> for UniquacParams {
    fn from(m: Uniquac) -> UniquacParams {
        let nc = m.names.len();
        UniquacParams {
            r: m.r,
            q: m.q,
            q_prime: if m.q_prime_given { m.q_prime } else { Vec::new() },
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

/// The UNIQUAC combinatorial term (Abrams & Prausnitz 1975; also that of UNIFAC, Fredenslund
/// et al. 1975) with z = 10: writes ln γ_i^C into `ln_gamma` and, if given, *adds*
/// n_T ∂ln γ_i^C/∂n_j into `dn` (row-major, symmetric), for mole fractions `x`.
pub(crate) fn combinatorial(r: &[f64], q: &[f64], x: &[f64], ln_gamma: &mut [f64], dn: Option<&mut [f64]>) {
    let nc = r.len();
    let half_z = 0.5 * COORDINATION_NUMBER;
    let l = |j: usize| half_z * (r[j] - q[j]) - (r[j] - 1.0);
    let (mut rb, mut qb, mut lb) = (0.0, 0.0, 0.0);
    for j in 0..nc {
        rb += r[j] * x[j];
        qb += q[j] * x[j];
        lb += l(j) * x[j];
    }
    for i in 0..nc {
        ln_gamma[i] = (r[i] / rb).ln() + half_z * q[i] * (q[i] * rb / (r[i] * qb)).ln() + l(i) - r[i] / rb * lb;
    }
    if let Some(dn) = dn {
        for i in 0..nc {
            for j in 0..nc {
                dn[i * nc + j] += 1.0 - r[j] / rb + half_z * q[i] * (r[j] / rb - q[j] / qb) - l(j) * r[i] / rb
                    + r[i] * r[j] * lb / (rb * rb);
            }
        }
    }
}

impl ExcessGibbs for Uniquac {
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
        // the T-derivatives are included), τ, ∂τ/∂T, then per-call storage.
        let s = scratch(store, 3 + 3 * nn + 2 * nc + Residual::work_len(nc));
        let (key, s) = s.split_at_mut(3);
        let (tau, s) = s.split_at_mut(nn);
        let (dtau, s) = s.split_at_mut(nn);
        let (dres, s) = s.split_at_mut(nn);
        let (x, s) = s.split_at_mut(nc);
        let (res, work) = s.split_at_mut(nc);
        if !self.id.cached(key, t, need.temperature) {
            let ln_t = t.ln();
            for k in 0..nn {
                let v = (self.a[k] + self.b[k] / t + self.c[k] * ln_t + self.d[k] * t).exp();
                tau[k] = v;
                if need.temperature {
                    dtau[k] = v * (-self.b[k] / (t * t) + self.c[k] / t + self.d[k]);
                }
            }
            self.id.store(key, t, need.temperature);
        }
        for i in 0..nc {
            x[i] = n[i] / total;
        }
        if need.composition {
            dn[..nn].iter_mut().for_each(|v| *v = 0.0);
        }
        combinatorial(&self.r, &self.q, x, ln_gamma, need.composition.then_some(&mut dn[..nn]));
        let kernel = Residual {
            w: &self.q_prime,
            y: x,
            p: tau,
            dp: Some(dtau),
        };
        kernel.eval(
            res,
            need.composition.then_some(&mut *dres),
            need.temperature.then_some(&mut dt[..nc]),
            work,
        );
        let mut ge = 0.0;
        let mut dge = 0.0;
        for i in 0..nc {
            ln_gamma[i] += res[i];
            ge += x[i] * ln_gamma[i];
            if need.temperature {
                dge += x[i] * dt[i];
            }
        }
        *g_excess = ge;
        if need.composition {
            for k in 0..nn {
                dn[k] = (dn[k] + dres[k]) / total;
            }
        }
        finish(t, need, dge, out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::activity::testing::check_model;

    fn ternary(q_prime: Vec<f64>) -> Uniquac {
        // Invented parameters; r, q of the order of water, ethanol, benzene.
        Uniquac::new(UniquacParams {
            components: vec!["p".into(), "q".into(), "r".into()],
            r: vec![0.92, 2.1055, 3.1878],
            q: vec![1.40, 1.972, 2.400],
            q_prime,
            a: vec![vec![0.0, 0.1, -0.2], vec![0.05, 0.0, 0.1], vec![0.3, -0.1, 0.0]],
            b: vec![
                vec![0.0, -150.0, -600.0],
                vec![-40.0, 0.0, -90.0],
                vec![-1200.0, -200.0, 0.0],
            ],
            c: vec![vec![0.0, 0.01, 0.0], vec![0.0, 0.0, -0.01], vec![0.02, 0.0, 0.0]],
            d: vec![vec![0.0, 0.0, 1e-4], vec![0.0, 0.0, 0.0], vec![-1e-4, 0.0, 0.0]],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap()
    }

    #[test]
    fn uniquac_derivatives_and_identities() {
        let m = ternary(vec![]);
        check_model(&m, 330.0, &[0.2, 0.5, 0.3]);
        check_model(&m, 280.0, &[0.0, 1.5, 0.5]);
        let m = ternary(vec![1.0, 0.92, 2.4]);
        check_model(&m, 300.0, &[0.6, 0.1, 0.3]);
        assert_eq!(Uniquac::new(m.params()).unwrap(), m);
    }

    #[test]
    fn uniquac_limits() {
        // τ = 1 and equal r, q: ideal.
        let m = Uniquac::new(UniquacParams {
            components: vec!["1".into(), "2".into()],
            r: vec![2.0, 2.0],
            q: vec![1.5, 1.5],
            q_prime: vec![],
            a: vec![vec![0.0; 2]; 2],
            b: vec![],
            c: vec![],
            d: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap();
        let mut out = ExcessDerivs::new(2);
        m.excess(300.0, &[0.3, 0.7], Need::ALL, &mut out).unwrap();
        assert!(
            out.ln_gamma
                .iter()
                .chain(&out.dn)
                .chain(&out.dt)
                .all(|v| v.abs() < 1e-14),
            "{out:?}"
        );
        // Binary infinite dilution (Abrams & Prausnitz 1975): ln γ1^∞ = ln(r1/r2) + (z/2) q1
        // ln(q1 r2/(q2 r1)) + l1 − (r1/r2) l2 + q'1 (1 − ln τ21 − τ12).
        let m = ternary(vec![]);
        let mut out = ExcessDerivs::new(3);
        let t = 320.0;
        m.excess(t, &[0.0, 1.0, 0.0], Need::VALUES, &mut out).unwrap();
        let (r, q): ([f64; 2], [f64; 2]) = ([0.92, 2.1055], [1.40, 1.972]);
        let l = |j: usize| 5.0 * (r[j] - q[j]) - (r[j] - 1.0);
        let expect = (r[0] / r[1]).ln() + 5.0 * q[0] * (q[0] * r[1] / (q[1] * r[0])).ln() + l(0) - r[0] / r[1] * l(1)
            + q[0] * (1.0 - m.tau(t, 1, 0).ln() - m.tau(t, 0, 1));
        assert!(
            (out.ln_gamma[0] - expect).abs() < 1e-12,
            "{} vs {expect}",
            out.ln_gamma[0]
        );
        assert!(out.ln_gamma[1].abs() < 1e-14);
    }
}
