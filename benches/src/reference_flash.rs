//! A plain textbook two-phase PT flash, the yardstick of the instruction-count benchmark: the
//! same model calls (`FluidModel::phase_ln_phi`) and the same tolerance as tieline's flash, with
//! none of its refinements, so that the ratio of the two counts measures what those buy.
//!
//! Method, as published:
//! 1. Wilson K-values, ln K_i = ln(pc_i/p) + 5.373 (1 + ω_i)(1 − Tc_i/T) (G. M. Wilson, 1968;
//!    the model's `estimate_ln_k`);
//! 2. tangent-plane stability test of the feed (M. L. Michelsen, "The isothermal flash problem.
//!    Part I. Stability", Fluid Phase Equilib. 9 (1982) 1–19) from the vapour-like (W = zK) and
//!    the liquid-like (W = z/K) trial, each by plain successive substitution
//!    ln W_i ← ln z_i + ln φ_i(z) − ln φ_i(w), to the flash tolerance or until the trial
//!    approaches the feed, Σ (ln W_i − ln z_i)² < 1e-4 (Michelsen & Mollerup, "Thermodynamic
//!    Models: Fundamentals and Computational Aspects", 2nd ed. 2007, ch. 10, from memory);
//! 3. for an unstable feed, the split from the K-values of the stationary point of least
//!    tangent-plane distance (K = W/z for the vapour-like trial, z/W for the liquid-like one):
//!    successive substitution ln K_i ← ln φ_i^L(x) − ln φ_i^V(y) with a Rachford–Rice solve per
//!    step until the residual is below 1e-3 (common practice, no source), then Newton–Raphson
//!    on the equations g_i = ln K_i + ln φ_i^V(y) − ln φ_i^L(x) = 0 in the variables ln K_i,
//!    x and y following K through the Rachford–Rice solution (M. L. Michelsen, "The isothermal
//!    flash problem. Part II. Phase-split calculation", Fluid Phase Equilib. 9 (1982) 21–40);
//!    the Jacobian is analytic, from the model's composition derivatives of ln φ.
//!
//! A warm call starts the split from the previous call's K-values, without a stability test,
//! and falls back to the cold path when the split collapses. No acceleration, no line search,
//! no trial beyond the two Wilson ones.

use tieline::equilibrium::rachford_rice;
use tieline::model::{FluidModel, FugacityWork, LnPhi, Need, RootChoice};
use tieline::numerics::linalg::lu_solve;
use tieline::{Error, Result};

/// Convergence tolerance on max_i |ln f_i^V − ln f_i^L| and of the stability trials, the
/// default of tieline's `FlashOptions::tolerance` (dimensionless).
pub const TOLERANCE: f64 = 1e-10;

/// Successive-substitution iterations allowed per stability trial and per split.
pub const MAX_SS: usize = 400;

/// Newton iterations allowed per split.
pub const MAX_NEWTON: usize = 40;

/// The answer of the reference flash.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReferenceOutcome {
    /// Number of phases (1 or 2).
    pub phases: usize,
    /// Fraction of the feed in the phase of larger molar volume (1 for one phase).
    pub light_fraction: f64,
    /// Successive-substitution iterations of the stability trials.
    pub stability_iterations: usize,
    /// Successive-substitution iterations of the split.
    pub ss_iterations: usize,
    /// Newton iterations of the split.
    pub newton_iterations: usize,
}

/// Storage of the reference flash and the K-values of its last two-phase answer.
#[derive(Debug, Clone)]
pub struct ReferenceFlash {
    nc: usize,
    z: Vec<f64>,
    lnz: Vec<f64>,
    d: Vec<f64>,
    w: Vec<f64>,
    lnk: Vec<f64>,
    k: Vec<f64>,
    x: Vec<f64>,
    y: Vec<f64>,
    den: Vec<f64>,
    g: Vec<f64>,
    jac: Vec<f64>,
    dx: Vec<f64>,
    dy: Vec<f64>,
    best_lnk: Vec<f64>,
    prev_lnk: Vec<f64>,
    prev_two_phase: bool,
    fw: FugacityWork,
    phi_z: LnPhi,
    phi_w: LnPhi,
    phi_x: LnPhi,
    phi_y: LnPhi,
}

impl ReferenceFlash {
    /// Storage for a model of `nc` components.
    pub fn new(nc: usize) -> Self {
        let v = || vec![0.0; nc];
        ReferenceFlash {
            nc,
            z: v(),
            lnz: v(),
            d: v(),
            w: v(),
            lnk: v(),
            k: v(),
            x: v(),
            y: v(),
            den: v(),
            g: v(),
            jac: vec![0.0; nc * nc],
            dx: vec![0.0; nc * nc],
            dy: vec![0.0; nc * nc],
            best_lnk: v(),
            prev_lnk: v(),
            prev_two_phase: false,
            fw: FugacityWork::new(nc),
            phi_z: LnPhi::new(nc),
            phi_w: LnPhi::new(nc),
            phi_x: LnPhi::new(nc),
            phi_y: LnPhi::new(nc),
        }
    }

    /// Forgets the previous answer: the next call starts cold.
    pub fn reset(&mut self) {
        self.prev_two_phase = false;
    }

    /// Flash of feed mole fractions `z` (all > 0, summing to 1) at T (K) and p (Pa), warm from
    /// the previous two-phase answer of this storage if there is one.
    pub fn flash<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, z: &[f64]) -> Result<ReferenceOutcome> {
        let nc = self.nc;
        if model.num_components() != nc || z.len() != nc || z.iter().any(|v| !(*v > 0.0)) {
            return Err(Error::invalid(
                "feed",
                format!("{nc} positive mole fractions are required by the reference flash"),
            ));
        }
        let zs: f64 = z.iter().sum();
        for i in 0..nc {
            self.z[i] = z[i] / zs;
            self.lnz[i] = self.z[i].ln();
        }
        let mut out = ReferenceOutcome {
            phases: 1,
            light_fraction: 1.0,
            stability_iterations: 0,
            ss_iterations: 0,
            newton_iterations: 0,
        };
        if self.prev_two_phase {
            self.lnk.copy_from_slice(&self.prev_lnk);
            if let Some(f) = self.split(model, t, p, &mut out)? {
                out.phases = 2;
                out.light_fraction = f;
                return Ok(out);
            }
        }
        self.prev_two_phase = false;
        if self.stability(model, t, p, &mut out)? {
            return Ok(out);
        }
        self.lnk.copy_from_slice(&self.best_lnk);
        match self.split(model, t, p, &mut out)? {
            Some(f) => {
                out.phases = 2;
                out.light_fraction = f;
                Ok(out)
            }
            None => Err(Error::not_converged(
                "reference two-phase split (collapsed to one phase from an unstable feed)",
                vec![
                    ("SS".into(), out.ss_iterations),
                    ("Newton".into(), out.newton_iterations),
                ],
                f64::NAN,
                TOLERANCE,
            )),
        }
    }

    /// Stability test of the feed from the two Wilson trials. Returns whether the feed is
    /// stable; if not, `best_lnk` holds the K-values of the stationary point of least tpd.
    fn stability<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        out: &mut ReferenceOutcome,
    ) -> Result<bool> {
        let nc = self.nc;
        model.phase_ln_phi(
            t,
            p,
            &self.z,
            RootChoice::Stable,
            Need::VALUES,
            &mut self.fw,
            &mut self.phi_z,
        )?;
        for i in 0..nc {
            self.d[i] = self.lnz[i] + self.phi_z.ln_phi[i];
        }
        model.estimate_ln_k(t, p, &mut self.lnk);
        let mut best_tpd = -TOLERANCE;
        let mut stable = true;
        for sign in [1.0, -1.0] {
            // ln W of the trial, kept in `w` as logarithms.
            for i in 0..nc {
                self.w[i] = self.lnz[i] + sign * self.lnk[i];
            }
            let mut converged = false;
            let mut tpd = 0.0;
            for _ in 0..MAX_SS {
                out.stability_iterations += 1;
                let sw: f64 = self.w.iter().map(|l| l.exp()).sum();
                for i in 0..nc {
                    self.x[i] = self.w[i].exp() / sw;
                }
                model.phase_ln_phi(
                    t,
                    p,
                    &self.x,
                    RootChoice::Stable,
                    Need::VALUES,
                    &mut self.fw,
                    &mut self.phi_w,
                )?;
                let mut err = 0.0f64;
                let mut dist = 0.0;
                for i in 0..nc {
                    let next = self.d[i] - self.phi_w.ln_phi[i];
                    err = err.max((next - self.w[i]).abs());
                    self.w[i] = next;
                    dist += (next - self.lnz[i]).powi(2);
                }
                if err < TOLERANCE {
                    converged = true;
                    tpd = -self.w.iter().map(|l| l.exp()).sum::<f64>().ln();
                    break;
                }
                if dist < 1e-4 {
                    break;
                }
            }
            if converged && tpd < best_tpd {
                best_tpd = tpd;
                stable = false;
                for i in 0..nc {
                    // K = W/z for the vapour-like trial, z/W for the liquid-like one.
                    self.best_lnk[i] = sign * (self.w[i] - self.lnz[i]);
                }
            }
        }
        Ok(stable)
    }

    /// Rachford–Rice solve at the current ln K: x, y (normalised) and the denominators
    /// 1 + β(K_i − 1). Returns β, or `None` when no root exists.
    fn rr(&mut self) -> Option<(f64, f64)> {
        for i in 0..self.nc {
            self.k[i] = self.lnk[i].exp();
        }
        let rr = rachford_rice::solve(&self.z, &self.k, true).ok()?;
        rachford_rice::compositions(&self.z, &self.k, &rr, &mut self.x, &mut self.y);
        for i in 0..self.nc {
            self.den[i] = self.z[i] / self.x[i];
        }
        let (sx, sy): (f64, f64) = (self.x.iter().sum(), self.y.iter().sum());
        self.x.iter_mut().for_each(|v| *v /= sx);
        self.y.iter_mut().for_each(|v| *v /= sy);
        Some((rr.beta, rr.one_minus_beta))
    }

    /// The split from the current ln K. Returns the fraction of the lighter phase, or `None`
    /// when it collapses (no Rachford–Rice root in (0, 1), or the trivial solution).
    fn split<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        out: &mut ReferenceOutcome,
    ) -> Result<Option<f64>> {
        let nc = self.nc;
        let mut newton = false;
        loop {
            let Some((beta, omb)) = self.rr() else {
                return Ok(None);
            };
            let need = if newton { Need::COMPOSITION } else { Need::VALUES };
            model.phase_ln_phi(t, p, &self.x, RootChoice::Stable, need, &mut self.fw, &mut self.phi_x)?;
            model.phase_ln_phi(t, p, &self.y, RootChoice::Stable, need, &mut self.fw, &mut self.phi_y)?;
            let mut err = 0.0f64;
            for i in 0..nc {
                self.g[i] = self.lnk[i] + self.phi_y.ln_phi[i] - self.phi_x.ln_phi[i];
                err = err.max(self.g[i].abs());
            }
            if !err.is_finite() {
                return Err(Error::not_converged(
                    "reference two-phase split (diverged)",
                    vec![
                        ("SS".into(), out.ss_iterations),
                        ("Newton".into(), out.newton_iterations),
                    ],
                    err,
                    TOLERANCE,
                ));
            }
            if err < TOLERANCE {
                if !(beta > 0.0 && omb > 0.0) || self.lnk.iter().all(|l| l.abs() < 1e-4) {
                    return Ok(None);
                }
                self.prev_lnk.copy_from_slice(&self.lnk);
                self.prev_two_phase = true;
                return Ok(Some(if self.phi_y.v >= self.phi_x.v { beta } else { omb }));
            }
            if self.lnk.iter().all(|l| l.abs() < 1e-4) {
                return Ok(None);
            }
            if newton {
                if out.newton_iterations >= MAX_NEWTON {
                    return Err(Error::not_converged(
                        "reference two-phase split (Newton)",
                        vec![
                            ("SS".into(), out.ss_iterations),
                            ("Newton".into(), out.newton_iterations),
                        ],
                        err,
                        TOLERANCE,
                    ));
                }
                out.newton_iterations += 1;
                self.newton_step(beta);
            } else {
                if out.ss_iterations >= MAX_SS {
                    return Err(Error::not_converged(
                        "reference two-phase split (successive substitution)",
                        vec![
                            ("SS".into(), out.ss_iterations),
                            ("Newton".into(), out.newton_iterations),
                        ],
                        err,
                        TOLERANCE,
                    ));
                }
                out.ss_iterations += 1;
                for i in 0..nc {
                    self.lnk[i] = self.phi_x.ln_phi[i] - self.phi_y.ln_phi[i];
                }
                // Newton from the next point on, with derivatives in its evaluation.
                newton = err < 1e-3;
            }
        }
    }

    /// One Newton step on g(ln K) = 0 with x(ln K), y(ln K) from the Rachford–Rice solution:
    /// ∂x_k/∂ln K_j = −(x_k/t_k)(δ_kj β K_j + (K_k − 1) ∂β/∂ln K_j), y_k = K_k x_k, with
    /// t_k = 1 + β(K_k − 1) and ∂β/∂ln K_j = (z_j K_j/t_j²)/Σ_i z_i (K_i − 1)²/t_i² from the
    /// implicit derivative of the Rachford–Rice equation. Unnormalised x and y sum to 1 at the
    /// root, so the composition derivatives of ln φ at unit amount apply to them directly.
    fn newton_step(&mut self, beta: f64) {
        let nc = self.nc;
        let s: f64 = (0..nc)
            .map(|i| self.z[i] * (self.k[i] - 1.0).powi(2) / (self.den[i] * self.den[i]))
            .sum();
        for k in 0..nc {
            for j in 0..nc {
                let bj = self.z[j] * self.k[j] / (self.den[j] * self.den[j]) / s;
                let mut dxkj = (self.k[k] - 1.0) * bj;
                if k == j {
                    dxkj += beta * self.k[j];
                }
                dxkj *= -self.x[k] / self.den[k];
                self.dx[k * nc + j] = dxkj;
                self.dy[k * nc + j] = self.k[k] * dxkj + if k == j { self.y[k] } else { 0.0 };
            }
        }
        for i in 0..nc {
            for j in 0..nc {
                let mut v = if i == j { 1.0 } else { 0.0 };
                for k in 0..nc {
                    v += self.phi_y.dn[i * nc + k] * self.dy[k * nc + j]
                        - self.phi_x.dn[i * nc + k] * self.dx[k * nc + j];
                }
                self.jac[i * nc + j] = v;
            }
            self.g[i] = -self.g[i];
        }
        if lu_solve(&mut self.jac, nc, &mut self.g) {
            for i in 0..nc {
                self.lnk[i] += self.g[i];
            }
        } else {
            // A singular Jacobian: one successive-substitution step instead.
            for i in 0..nc {
                self.lnk[i] = self.phi_x.ln_phi[i] - self.phi_y.ln_phi[i];
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{FEED, ONE_PHASE, TWO_PHASE, model, no_certificate};
    use tieline::equilibrium::FlashContext;

    /// The reference flash and tieline's flash reach the same answer on the benchmark points,
    /// cold and warm (an internal consistency check of two independent solvers).
    #[test]
    fn reference_agrees_with_the_flash() {
        let m = model();
        let mut ours = FlashContext::new(10);
        let mut reference = ReferenceFlash::new(10);
        let (t2, p2) = TWO_PHASE;
        let (t1, p1) = ONE_PHASE;
        for (t, p) in [(t2, p2), (t2 + 0.5, p2), (t2 - 0.5, p2), (t2 + 0.5, p2), (t1, p1)] {
            let r = ours.flash(&m, t, p, &FEED, &no_certificate()).expect("flash");
            let q = reference.flash(&m, t, p, &FEED).expect("reference flash");
            assert_eq!(q.phases, r.phases.len(), "at {t} K");
            assert!((q.light_fraction - r.phases[0].fraction).abs() < 1e-8, "{q:?} vs {r:?}");
        }
        assert!(reference.flash(&m, t2, p2, &FEED[..3]).is_err());
    }
}
