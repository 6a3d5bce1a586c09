//! Three fluid phases at fixed T and p: successive substitution on the phase compositions
//! with the multiphase Rachford–Rice problem solved, at every step, as the minimisation of
//! Michelsen's convex function (M. L. Michelsen, "Calculation of multiphase equilibrium",
//! Comput. Chem. Eng. 18 (1994) 545–550):
//!
//! Q(β) = Σ_k β_k − Σ_i z_i ln E_i,  E_i = Σ_k β_k / φ_ik,  β_k ≥ 0,
//!
//! whose stationary point gives the phase fractions, and x_ik = z_i / (φ_ik E_i) the phase
//! compositions. A third phase is added to a two-phase split when the split's certificate
//! finds a tangent plane below it (stepwise phase addition, Michelsen 1982b).

use crate::error::{Error, Result};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, RootChoice};

/// Number of phases handled here.
pub(crate) const NP: usize = 3;

/// Iterations after which a phase still at β = 0 is taken as absent.
const ABSENT_AFTER: usize = 30;

/// A converged three-phase split (per mol of feed).
#[derive(Debug, Clone, Default)]
pub(crate) struct ThreePhase {
    /// Phase fractions β_k.
    pub beta: [f64; NP],
    /// Phase compositions (mole fractions).
    pub x: [Vec<f64>; NP],
    /// ln φ of each phase.
    pub phi: [LnPhi; NP],
    /// max_{i,k} |ln f_ik − ln f_i0| at the solution.
    pub residual: f64,
    /// G/(RT n) of the split.
    pub gibbs: f64,
    /// Successive-substitution iterations used.
    pub iterations: usize,
}

/// How the three-phase search ended.
pub(crate) enum ThreeOutcome {
    /// Three phases with positive fractions and distinct compositions.
    Converged(Box<ThreePhase>),
    /// A phase fraction went to zero (with the compositions of the two phases left), or
    /// two phases merged (`None`): no three-phase state here.
    Collapsed(Option<[Vec<f64>; 2]>),
}

/// Minimises Q(β) over β ≥ 0 by Newton steps on the free fractions with an active set and
/// backtracking (Q is convex). `a[i][k]` = 1/φ_ik. `beta` is the start and the answer.
/// Returns `false` if no descent was possible (degenerate data).
/// One sweep of exact minimisation of Q over each β_k in turn, the others fixed: Q is convex
/// in β_k and ∂Q/∂β_k = 1 − Σ_i z_i a_ik/(E_i^(−k) + β_k a_ik) increases with β_k, is ≥ 0 at
/// β_k = 1, so the minimiser is 0 or the root in (0, 1], found by bisection in ln β_k.
/// Robust where Newton is badly scaled (a phase entering where E_i is tiny).
fn coordinate_sweep(z: &[f64], a: &[[f64; NP]], beta: &mut [f64; NP]) {
    for k in 0..NP {
        let g = |b: f64| -> f64 {
            let mut s = 1.0;
            for (zi, ai) in z.iter().zip(a) {
                if *zi > 0.0 {
                    let e: f64 = (0..NP).filter(|&l| l != k).map(|l| beta[l] * ai[l]).sum::<f64>() + b * ai[k];
                    s -= zi * ai[k] / e;
                }
            }
            s
        };
        if !(g(0.0) < 0.0) {
            beta[k] = 0.0;
            continue;
        }
        let (mut lo, mut hi) = (1e-300f64, 1.0f64);
        if g(lo) >= 0.0 {
            beta[k] = lo;
            continue;
        }
        for _ in 0..200 {
            let mid = if hi / lo > 4.0 {
                (lo * hi).sqrt()
            } else {
                0.5 * (lo + hi)
            };
            if g(mid) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-15 * hi {
                break;
            }
        }
        beta[k] = 0.5 * (lo + hi);
    }
}

fn minimise_q(z: &[f64], a: &[[f64; NP]], beta: &mut [f64; NP]) -> bool {
    let q = |b: &[f64; NP]| -> f64 {
        let mut s = b.iter().sum::<f64>();
        for (zi, ai) in z.iter().zip(a) {
            if *zi > 0.0 {
                let e: f64 = (0..NP).map(|k| b[k] * ai[k]).sum();
                if !(e > 0.0) {
                    return f64::INFINITY;
                }
                s -= zi * e.ln();
            }
        }
        s
    };
    for _ in 0..4 {
        coordinate_sweep(z, a, beta);
    }
    let mut gmax = f64::INFINITY;
    for _ in 0..100 {
        // Gradient and Hessian.
        let mut g = [1.0; NP];
        let mut h = [[0.0; NP]; NP];
        for (zi, ai) in z.iter().zip(a) {
            if *zi <= 0.0 {
                continue;
            }
            let e: f64 = (0..NP).map(|k| beta[k] * ai[k]).sum();
            let w = zi / e;
            for k in 0..NP {
                g[k] -= w * ai[k];
                for l in 0..NP {
                    h[k][l] += w * ai[k] * ai[l] / e;
                }
            }
        }
        // Active set: a phase at β = 0 whose gradient points outward stays out.
        let free: Vec<usize> = (0..NP).filter(|&k| beta[k] > 0.0 || g[k] < 0.0).collect();
        gmax = free.iter().map(|&k| g[k].abs()).fold(0.0, f64::max);
        if gmax < 1e-15 {
            return true;
        }
        // Newton step on the free fractions (a 1×1 to 3×3 SPD system, by Gaussian elimination).
        let m = free.len();
        let mut mat = [[0.0; NP]; NP];
        let mut rhs = [0.0; NP];
        for (r, &k) in free.iter().enumerate() {
            rhs[r] = -g[k];
            for (c, &l) in free.iter().enumerate() {
                mat[r][c] = h[k][l];
            }
        }
        for col in 0..m {
            let piv = mat[col][col];
            if !(piv.abs() > 0.0) || !piv.is_finite() {
                return false;
            }
            for r in col + 1..m {
                let f = mat[r][col] / piv;
                for c in col..m {
                    mat[r][c] -= f * mat[col][c];
                }
                rhs[r] -= f * rhs[col];
            }
        }
        let mut d = [0.0; NP];
        for r in (0..m).rev() {
            let mut s = rhs[r];
            for c in r + 1..m {
                s -= mat[r][c] * d[c];
            }
            d[r] = s / mat[r][r];
        }
        let mut step = [0.0; NP];
        for (r, &k) in free.iter().enumerate() {
            step[k] = d[r];
        }
        // Largest step keeping β ≥ 0; the fraction that would cross zero stops at zero.
        let mut t_max: f64 = 1.0;
        let mut blocking = None;
        for k in 0..NP {
            if step[k] < 0.0 && beta[k] / -step[k] < t_max {
                t_max = beta[k] / -step[k];
                blocking = Some(k);
            }
        }
        let q0 = q(beta);
        let mut t = t_max;
        let mut moved = false;
        for _ in 0..60 {
            let mut cand = *beta;
            for k in 0..NP {
                cand[k] = (beta[k] + t * step[k]).max(0.0);
            }
            if t == t_max
                && let Some(k) = blocking
            {
                cand[k] = 0.0;
            }
            if q(&cand) <= q0 {
                *beta = cand;
                moved = true;
                break;
            }
            t *= 0.5;
        }
        if !moved {
            // No descent within round-off: at the minimum to working precision, or a badly
            // scaled Newton step: one exact coordinate sweep, then on.
            if gmax < 1e-10 {
                return true;
            }
            coordinate_sweep(z, a, beta);
        }
    }
    // An inexact minimum still serves a successive-substitution step; the converged split is
    // accepted only with its mass balance closed (see `three_phase`).
    gmax < 1e-6
}

/// Three-phase split of the feed `z` (mole fractions) at T (K) and p (Pa), started from
/// the compositions `init` (each normalised here). Successive substitution until
/// max |ln f_ik − ln f_i0| < `tol`, at most `max_iter` steps.
#[allow(clippy::too_many_arguments)]
pub(crate) fn three_phase<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    z: &[f64],
    init: [&[f64]; NP],
    tol: f64,
    max_iter: usize,
    fw: &mut FugacityWork,
) -> Result<ThreeOutcome> {
    let nc = z.len();
    let mut x: [Vec<f64>; NP] = std::array::from_fn(|k| {
        let s: f64 = init[k].iter().sum();
        init[k].iter().map(|v| v / s).collect()
    });
    let mut phi: [LnPhi; NP] = std::array::from_fn(|_| LnPhi::new(nc));
    let mut beta = [1.0 / NP as f64; NP];
    let mut a = vec![[0.0; NP]; nc];
    let mut residual = f64::INFINITY;
    for it in 1..=max_iter {
        for k in 0..NP {
            model.phase_ln_phi(t, p, &x[k], RootChoice::Stable, Need::VALUES, fw, &mut phi[k])?;
        }
        // Residual of the current compositions.
        residual = 0.0;
        for i in 0..nc {
            if z[i] <= 0.0 {
                continue;
            }
            let f0 = x[0][i].ln() + phi[0].ln_phi[i];
            for k in 1..NP {
                residual = residual.max((x[k][i].ln() + phi[k].ln_phi[i] - f0).abs());
            }
        }
        if !residual.is_finite() {
            return Err(Error::not_converged(
                "three-phase split",
                vec![("SS".into(), it)],
                residual,
                tol,
            ));
        }
        let balance = (0..nc)
            .map(|i| ((0..NP).map(|k| beta[k] * x[k][i]).sum::<f64>() - z[i]).abs())
            .fold(0.0, f64::max);
        if residual < tol && balance < 1e-12 && beta.iter().all(|&b| b > 0.0) && it > 1 {
            let gibbs = (0..NP)
                .map(|k| {
                    beta[k]
                        * (0..nc)
                            .filter(|&i| z[i] > 0.0)
                            .map(|i| x[k][i] * (x[k][i].ln() + phi[k].ln_phi[i]))
                            .sum::<f64>()
                })
                .sum();
            if merged(&x) {
                return Ok(ThreeOutcome::Collapsed(None));
            }
            return Ok(ThreeOutcome::Converged(Box::new(ThreePhase {
                beta,
                x,
                phi,
                residual,
                gibbs,
                iterations: it,
            })));
        }
        for i in 0..nc {
            for k in 0..NP {
                a[i][k] = (-phi[k].ln_phi[i]).exp();
            }
        }
        if !minimise_q(z, &a, &mut beta) {
            return Err(Error::not_converged(
                "three-phase Rachford–Rice",
                vec![("SS".into(), it)],
                residual,
                tol,
            ));
        }
        // A phase at β = 0 keeps its composition x_ik ∝ z_i/(φ_ik E_i) (a trial phase) for
        // a while: poor starting compositions can put a present phase there at first.
        if beta.iter().any(|&b| b <= 0.0) && it > ABSENT_AFTER {
            let left: Vec<usize> = (0..NP).filter(|&k| beta[k] > 0.0).collect();
            return Ok(ThreeOutcome::Collapsed(
                (left.len() == 2).then(|| [x[left[0]].clone(), x[left[1]].clone()]),
            ));
        }
        for i in 0..nc {
            let e: f64 = (0..NP).map(|k| beta[k] * a[i][k]).sum();
            for k in 0..NP {
                x[k][i] = if z[i] > 0.0 { z[i] * a[i][k] / e } else { 0.0 };
            }
        }
        for xk in x.iter_mut() {
            let s: f64 = xk.iter().sum();
            for v in xk.iter_mut() {
                *v /= s;
            }
        }
        if merged(&x) {
            return Ok(ThreeOutcome::Collapsed(None));
        }
    }
    Err(Error::not_converged(
        "three-phase split (successive substitution)",
        vec![("SS".into(), max_iter)],
        residual,
        tol,
    ))
}

/// Whether two of the phases have (practically) the same composition.
fn merged(x: &[Vec<f64>; NP]) -> bool {
    (0..NP).any(|k| (k + 1..NP).any(|l| x[k].iter().zip(&x[l]).all(|(a, b)| (a - b).abs() < 1e-9)))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Q's minimum for constant φ reproduces the two-phase Rachford–Rice answer when the
    /// third phase's 1/φ is dominated (it must leave with β = 0).
    #[test]
    fn q_minimum_matches_two_phase_rachford_rice() {
        // K = φ_L/φ_V: K = (2, 0.5); z = (0.5, 0.5) gives β_V = 0.5 exactly.
        let z = [0.5, 0.5];
        // Phase 0 liquid (φ = 1), phase 1 vapour (φ = 1/K), phase 2 with φ large (absent).
        let a = [[1.0, 2.0, 1e-3], [1.0, 0.5, 1e-3]];
        let mut beta = [0.3, 0.3, 0.3];
        assert!(minimise_q(&z, &a, &mut beta));
        assert!(
            (beta[1] - 0.5).abs() < 1e-12 && (beta[0] - 0.5).abs() < 1e-12,
            "{beta:?}"
        );
        assert_eq!(beta[2], 0.0);
    }
}
