//! The two-suffix Margules model (Margules 1895, *Sitzungsber. Akad. Wiss. Wien* 104:1243),
//! in its multicomponent quadratic form.

use super::{ExcessDerivs, ExcessGibbs, check_call, check_names, check_range, finish, rows, square};
use crate::error::{Error, Result};
use crate::model::Need;
use serde::{Deserialize, Serialize};

/// Parameters of a [`Margules`] model as a caller gives them (and as they serialise).
///
/// A_ij = a_ij + b_ij T (T in K; a dimensionless, b in 1/K), symmetric with a zero diagonal.
/// `b` may be empty (all zero).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MargulesParams {
    /// Component names, in order.
    pub components: Vec<String>,
    /// a_ij, dimensionless.
    pub a: Vec<Vec<f64>>,
    /// b_ij, 1/K.
    #[serde(default)]
    pub b: Vec<Vec<f64>>,
    /// Lowest temperature at which the parameters may be used, K.
    pub t_min: f64,
    /// Highest temperature at which the parameters may be used, K.
    pub t_max: f64,
}

/// The two-suffix (one-parameter) Margules model, g^E/RT = ½ Σ_i Σ_j A_ij x_i x_j with
/// A_ij = a_ij + b_ij T. For a binary, g^E/RT = A x1 x2, ln γ1 = A x2², ln γ2 = A x1²
/// (as in Smith, Van Ness & Abbott, *Introduction to Chemical Engineering Thermodynamics*,
/// 7th ed., §12.1). In general ln γ_i = Σ_j A_ij x_j − g^E/RT.
///
/// ```
/// use tieline::model::activity::Margules;
/// use tieline::model::{ExcessDerivs, ExcessGibbs, Need};
/// // A = 2.771 − 0.00523 T/K (methanol/methyl acetate, SVNA Example 10.3).
/// let m = Margules::binary(["methanol", "methyl acetate"], 2.771, -0.00523, (250.0, 400.0)).unwrap();
/// let mut out = ExcessDerivs::new(2);
/// m.excess(318.15, &[0.25, 0.75], Need::VALUES, &mut out).unwrap();
/// let a = 2.771 - 0.00523 * 318.15;
/// assert!((out.ln_gamma[0] - a * 0.75 * 0.75).abs() < 1e-14);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "MargulesParams", into = "MargulesParams")]
pub struct Margules {
    names: Vec<String>,
    a: Vec<f64>,
    b: Vec<f64>,
    t_range: (f64, f64),
}

impl Margules {
    /// Builds the model from caller-given matrices. Wrong sizes, non-finite entries, a
    /// non-zero diagonal, an asymmetric matrix or a bad temperature range are
    /// [`Error::InvalidInput`].
    pub fn new(p: MargulesParams) -> Result<Margules> {
        check_names(&p.components)?;
        check_range(p.t_min, p.t_max)?;
        let nc = p.components.len();
        if p.a.is_empty() {
            return Err(Error::invalid(
                "Margules a",
                "the matrix must be given (nc rows of nc values)",
            ));
        }
        let a = square("Margules a", &p.a, nc, true)?;
        let b = square("Margules b", &p.b, nc, true)?;
        for (what, m) in [("Margules a", &a), ("Margules b", &b)] {
            for i in 0..nc {
                for j in 0..i {
                    if m[i * nc + j] != m[j * nc + i] {
                        return Err(Error::invalid(
                            what,
                            format!("entries ({i}, {j}) and ({j}, {i}) differ; the matrix must be symmetric"),
                        ));
                    }
                }
            }
        }
        Ok(Margules {
            names: p.components,
            a,
            b,
            t_range: (p.t_min, p.t_max),
        })
    }

    /// A binary model with A = a + b T (a dimensionless, b in 1/K, T in K), valid over
    /// `t_range` (K).
    pub fn binary(names: [&str; 2], a: f64, b: f64, t_range: (f64, f64)) -> Result<Margules> {
        Margules::new(MargulesParams {
            components: names.iter().map(|s| s.to_string()).collect(),
            a: vec![vec![0.0, a], vec![a, 0.0]],
            b: vec![vec![0.0, b], vec![b, 0.0]],
            t_min: t_range.0,
            t_max: t_range.1,
        })
    }

    /// The component names, in order.
    pub fn component_names(&self) -> &[String] {
        &self.names
    }

    /// The parameters (as [`Margules::new`] takes them).
    pub fn params(&self) -> MargulesParams {
        self.clone().into()
    }
}

impl TryFrom<MargulesParams> for Margules {
    type Error = Error;
    fn try_from(p: MargulesParams) -> Result<Margules> {
        Margules::new(p)
    }
}

impl From<Margules> for MargulesParams {
    fn from(m: Margules) -> MargulesParams {
        let nc = m.names.len();
        MargulesParams {
            a: rows(&m.a, nc),
            b: rows(&m.b, nc),
            t_min: m.t_range.0,
            t_max: m.t_range.1,
            components: m.names,
        }
    }
}

impl ExcessGibbs for Margules {
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
        // (A x)_i and (B x)_i with B = dA/dT, accumulated without storage: two passes.
        let mut ge = 0.0;
        let mut dge = 0.0;
        for i in 0..nc {
            let (mut ax, mut bx) = (0.0, 0.0);
            for j in 0..nc {
                let k = i * nc + j;
                ax += (self.a[k] + self.b[k] * t) * n[j];
                bx += self.b[k] * n[j];
            }
            ax /= total;
            bx /= total;
            out.ln_gamma[i] = ax;
            out.dt[i] = bx;
            ge += 0.5 * ax * n[i] / total;
            dge += 0.5 * bx * n[i] / total;
        }
        out.g_excess = ge;
        if need.composition {
            // n_T ∂ln γ_i/∂n_j = A_ij − (Ax)_i − (Ax)_j + 2 g^E/RT.
            for i in 0..nc {
                for j in 0..nc {
                    let k = i * nc + j;
                    out.dn[k] = (self.a[k] + self.b[k] * t - out.ln_gamma[i] - out.ln_gamma[j] + 2.0 * ge) / total;
                }
            }
        }
        for i in 0..nc {
            out.ln_gamma[i] -= ge;
            out.dt[i] -= dge;
        }
        if !need.temperature {
            out.dt.iter_mut().for_each(|v| *v = 0.0);
        }
        finish(t, need, dge, out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::activity::testing::check_model;

    #[test]
    fn margules_derivatives_and_identities() {
        let m = Margules::new(MargulesParams {
            components: vec!["p".into(), "q".into(), "r".into()],
            a: vec![vec![0.0, 1.3, -0.4], vec![1.3, 0.0, 0.8], vec![-0.4, 0.8, 0.0]],
            b: vec![vec![0.0, -2e-3, 1e-3], vec![-2e-3, 0.0, 0.0], vec![1e-3, 0.0, 0.0]],
            t_min: 200.0,
            t_max: 500.0,
        })
        .unwrap();
        check_model(&m, 320.0, &[0.3, 0.3, 0.4]);
        check_model(&m, 250.0, &[0.0, 2.0, 1.0]);
        let mut p = m.params();
        p.a[0][1] = 1.0;
        assert!(Margules::new(p).unwrap_err().to_string().contains("symmetric"));
    }
}
