//! The multiphase PT flash: any number of fluid phases (a vapour and up to three liquids) at
//! fixed T and p, for every [`FluidModel`] — equations of state and liquid-solution
//! (activity-coefficient) models alike, since phases are evaluated only through
//! [`FluidModel::phase_ln_phi`] and started from [`FluidModel::estimate_ln_k`].
//!
//! Method:
//! 1. stability of the feed by the tangent-plane test (M. L. Michelsen, "The isothermal flash
//!    problem. Part I. Stability", Fluid Phase Equilib. 9 (1982) 1–19) from vapour- and
//!    liquid-like K-value trials and nearly pure trial phases (the latter find liquid–liquid
//!    splits of activity models), stopped at the first negative stationary point; only if no
//!    split from the points found stands is the test completed with every trial;
//! 2. stepwise phase addition (Michelsen, "Part II. Phase-split calculation", Fluid Phase
//!    Equilib. 9 (1982) 21–40): a split of the feed with a negative stationary point, then,
//!    for each converged phase set, one stability test of one phase (all phases share one
//!    tangent plane), whose most negative stationary point joins the phases as the new
//!    phase's estimate, until the test finds none or the phase limit is reached. The negative
//!    stationary points of earlier tests are remembered: one whose tangent-plane distance
//!    from the new set's plane (one ln φ evaluation) is still negative joins the phases
//!    without a new test, so a test runs once per phase set that no remembered point
//!    destabilises — and always on the answer, as its certificate. A warm start from the
//!    previous answer skips the search when its split converges with every phase present
//!    and that certificate passes;
//! 3. for each phase set, successive substitution in which the phase fractions solve
//!    Michelsen's convex multiphase Rachford–Rice problem (M. L. Michelsen, "Calculation of
//!    multiphase equilibrium", Comput. Chem. Eng. 18 (1994) 545–550):
//!    Q(β) = Σ_k β_k − Σ_i z_i ln E_i, E_i = Σ_k β_k/φ_ik, β_k ≥ 0, minimised by Newton steps
//!    with an active set from the previous step's fractions (exact coordinate sweeps first
//!    only for guessed fractions), x_ik = z_i/(φ_ik E_i); Newton on G takes over once the
//!    successive substitution is close (residual below 1e-3) or stalls there (below 0.1);
//!    accelerated by the dominant-eigenvalue
//!    method (Crowe & Nishio, AIChE J. 21 (1975) 528); a phase whose fraction stays at zero
//!    (Σ_i x_ik < 1: a positive tangent-plane distance) is removed, phases whose
//!    compositions coincide are merged;
//! 4. Newton's method on the Gibbs energy in the independent phase amounts (Michelsen &
//!    Mollerup, "Thermodynamic Models: Fundamentals and Computational Aspects", 2nd ed.,
//!    Tie-Line Publications 2007, ch. 11–12): each component's amount in its most abundant
//!    phase is eliminated by the mass balance, the Hessian is assembled from each phase's
//!    ∂ln φ/∂n, with a Levenberg shift where it is not positive definite and a line search on
//!    G; convergence is quadratic;
//! 5. a certificate: a stability test of the largest phase of the answer (tpd ≥ −threshold).

use super::EquilibriumWork;
use super::flash::{Diagnostics, FlashResult, Phase};
use super::stability::{StabilityOptions, StabilityResult, stability_for_split, stability_on, stability_with_known};
use crate::error::{Error, Result, check, num};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, PhaseKind, RootChoice};
use crate::numerics::linalg::shifted_cholesky_solve;
use serde::{Deserialize, Serialize};

/// The most fluid phases a multiphase result may have: a vapour and three liquids.
pub const MAX_FLUID_PHASES: usize = 4;

const MAXP: usize = MAX_FLUID_PHASES;

/// Successive-substitution iterations after which a phase still at β = 0 is removed.
const ABSENT_AFTER: usize = 25;

/// Two phases whose mole fractions differ by less than this everywhere are one phase.
const MERGE_DISTANCE: f64 = 1e-7;

/// Options of [`flash_multiphase`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct MultiphaseOptions {
    /// Convergence tolerance on max_{i,k} |ln f_ik − ln f_i,ref| over the phases
    /// (dimensionless); a value in (0, 1e-2).
    pub tolerance: f64,
    /// Most liquid phases of the result: 1, 2 or 3.
    pub max_liquids: usize,
    /// Whether a vapour phase may form. With `false` every phase (the feed's stability test,
    /// the trial phases and the result's phases) is evaluated on the liquid branch of the
    /// model: liquid–liquid equilibrium only.
    pub allow_vapor: bool,
    /// Maximum successive-substitution iterations per phase set.
    pub max_ss_iterations: usize,
    /// Maximum Newton iterations per phase set.
    pub max_newton_iterations: usize,
    /// Options of the stability tests (of the feed, of each converged phase set, and the
    /// certificate).
    pub stability: StabilityOptions,
    /// Compute the certificate: the stability test of the answer is run even when the phase
    /// limit is reached, and its least tangent-plane distance is reported. Without it the
    /// test of a converged phase set still runs while more phases are allowed (it is how
    /// phases are added), but the result carries no certificate.
    pub certificate: bool,
}

impl Default for MultiphaseOptions {
    fn default() -> Self {
        MultiphaseOptions {
            tolerance: 1e-10,
            max_liquids: 3,
            allow_vapor: true,
            max_ss_iterations: 400,
            max_newton_iterations: 40,
            stability: StabilityOptions::default(),
            certificate: true,
        }
    }
}

impl MultiphaseOptions {
    /// Checks every option, naming the offending one.
    pub fn validate(&self) -> Result<()> {
        if !(self.tolerance > 0.0 && self.tolerance < 1e-2) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in (0, 1e-2) is required", num(self.tolerance)),
            ));
        }
        check::count("max_liquids", self.max_liquids, 1, 3)?;
        let most = crate::limits::MAX_ITERATIONS;
        check::count("max_ss_iterations", self.max_ss_iterations, 1, most)?;
        check::count("max_newton_iterations", self.max_newton_iterations, 0, most)?;
        check::count("stability max_iterations", self.stability.max_iterations, 1, most)?;
        if !(self.stability.tolerance > 0.0 && self.stability.tolerance < 1e-2) {
            return Err(Error::invalid(
                "stability tolerance",
                format!("{}; a value in (0, 1e-2) is required", num(self.stability.tolerance)),
            ));
        }
        if !(self.stability.threshold >= 0.0 && self.stability.threshold < 1e-2) {
            return Err(Error::invalid(
                "stability threshold",
                format!("{}; a value in [0, 1e-2) is required", num(self.stability.threshold)),
            ));
        }
        Ok(())
    }

    fn plan(&self) -> Plan {
        Plan {
            tolerance: self.tolerance,
            max_ss: self.max_ss_iterations,
            max_newton: self.max_newton_iterations,
            stability: self.stability,
            certificate: self.certificate,
            limit: self.max_liquids + usize::from(self.allow_vapor),
            max_liquids: self.max_liquids,
            root: if self.allow_vapor {
                RootChoice::Stable
            } else {
                RootChoice::Liquid
            },
        }
    }
}

/// What the solver is asked for, shared by [`flash_multiphase`] and the PT flash's
/// third-phase path.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Plan {
    pub tolerance: f64,
    pub max_ss: usize,
    pub max_newton: usize,
    pub stability: StabilityOptions,
    pub certificate: bool,
    /// Most phases in all.
    pub limit: usize,
    /// Most liquid phases among them.
    pub max_liquids: usize,
    /// Branch every phase is evaluated on (`Stable`, or `Liquid` for liquid–liquid only).
    pub root: RootChoice,
}

/// How a phase-set solve ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum SetOutcome {
    Converged,
    /// Every phase merged into one: the trivial solution.
    Trivial,
    NotConverged,
}

/// The multiphase solver's storage: the current phase set and every workspace, sized once per
/// component count.
#[derive(Debug, Clone, Default)]
pub(crate) struct Solver {
    nc: usize,
    /// Feed mole fractions.
    z: Vec<f64>,
    /// Number of phases in the set.
    np: usize,
    beta: [f64; MAXP],
    x: [Vec<f64>; MAXP],
    phi: [LnPhi; MAXP],
    /// Branch each phase is held on during Newton steps.
    roots: [RootChoice; MAXP],
    /// SS iterations a phase has spent at β = 0.
    absent: [usize; MAXP],
    /// Whether `beta` holds guessed fractions (a new phase set), not those of a solve.
    guessed_beta: bool,
    /// Phase amounts per mol of feed (Newton variables and their last accepted values).
    n: [Vec<f64>; MAXP],
    n0: [Vec<f64>; MAXP],
    /// For each component, the phase whose amount is eliminated by the mass balance.
    reference: Vec<usize>,
    /// Newton variable index of (i, k) (usize::MAX where not a variable).
    var: Vec<usize>,
    hess: Vec<f64>,
    chol: Vec<f64>,
    rhs: Vec<f64>,
    step: Vec<f64>,
    /// Diagonal scaling of the Newton system.
    scale: Vec<f64>,
    /// a_ik = 1/φ_ik scaled per component, row-major nc × MAXP.
    a: Vec<f64>,
    /// ln φ (extrapolation history: current, previous differences), nc × MAXP.
    lnphi: Vec<f64>,
    dhist: [Vec<f64>; 2],
    save_x: [Vec<f64>; MAXP],
    save_beta: [f64; MAXP],
    pub(crate) gibbs: f64,
    pub(crate) residual: f64,
    fw: FugacityWork,
    pub(crate) ws: EquilibriumWork,
    pub(crate) stab: StabilityResult,
    /// Least tangent-plane distance of the last stability test of the answer.
    pub(crate) certificate: Option<f64>,
    /// Compositions of negative stationary points of earlier stability tests of this call
    /// (row-major, `known_count` × nc), not yet in the phase set: candidates for a new phase
    /// that a cheap tangent-plane distance checks before a stability test is run.
    known: Vec<f64>,
    known_count: usize,
}

impl Solver {
    pub(crate) fn resize(&mut self, nc: usize) {
        if self.nc == nc && !self.z.is_empty() {
            return;
        }
        self.nc = nc;
        self.z = vec![0.0; nc];
        for k in 0..MAXP {
            self.x[k] = vec![0.0; nc];
            self.phi[k] = LnPhi::new(nc);
            self.n[k] = vec![0.0; nc];
            self.n0[k] = vec![0.0; nc];
            self.save_x[k] = vec![0.0; nc];
        }
        self.reference = vec![0; nc];
        self.var = vec![usize::MAX; nc * MAXP];
        // The Newton matrices grow to the size a phase set needs (`newton`).
        self.hess.clear();
        self.chol.clear();
        self.rhs = vec![0.0; nc * (MAXP - 1)];
        self.step = vec![0.0; nc * (MAXP - 1)];
        self.scale = vec![0.0; nc * (MAXP - 1)];
        self.a = vec![0.0; nc * MAXP];
        self.lnphi = vec![0.0; nc * MAXP];
        self.dhist = [vec![0.0; nc * MAXP], vec![0.0; nc * MAXP]];
        self.fw = FugacityWork::new(nc);
        self.ws = EquilibriumWork::new(nc);
    }

    /// Sets the feed (mole fractions).
    pub(crate) fn set_feed(&mut self, z: &[f64]) {
        self.z.copy_from_slice(z);
    }

    /// Number of phases of the current set.
    pub(crate) fn phases(&self) -> usize {
        self.np
    }

    /// Replaces the phase set by the compositions `init` (each normalised here), with equal
    /// fractions.
    pub(crate) fn start_from(&mut self, init: &[&[f64]]) {
        self.np = init.len().min(MAXP);
        for (k, w) in init.iter().take(MAXP).enumerate() {
            let s: f64 = (0..self.nc).filter(|&i| self.z[i] > 0.0).map(|i| w[i].max(0.0)).sum();
            for i in 0..self.nc {
                self.x[k][i] = if self.z[i] > 0.0 && s > 0.0 {
                    w[i].max(0.0) / s
                } else {
                    0.0
                };
            }
            self.beta[k] = 1.0 / self.np as f64;
            self.absent[k] = 0;
        }
        self.guessed_beta = true;
        self.known_count = 0;
    }

    /// Remembers the negative stationary points of `self.stab` (from `first` on) that are not
    /// phases of the set, as candidates for later phase additions.
    fn remember_points(&mut self, first: usize, threshold: f64) {
        for k in first..self.stab.points.len() {
            if self.stab.points[k].tpd >= -threshold || self.is_member(k) {
                continue;
            }
            let w = std::mem::take(&mut self.stab.points[k].composition);
            self.remember(&w);
            self.stab.points[k].composition = w;
        }
    }

    /// Remembers composition `w` as a candidate for a later phase addition.
    fn remember(&mut self, w: &[f64]) {
        let nc = self.nc;
        let at = self.known_count * nc;
        if self.known.len() < at + nc {
            self.known.resize(at + nc, 0.0);
        }
        self.known[at..at + nc].copy_from_slice(w);
        self.known_count += 1;
    }

    /// The most negative tangent-plane distance, from the current (converged) phase set, of
    /// the remembered compositions, each evaluated once (Michelsen 1982a: any composition
    /// below the tangent plane proves the set unstable and is a starting estimate of the new
    /// phase). Returns its index if below −threshold; forgets the others' order only.
    fn known_below_plane<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
    ) -> Result<Option<usize>> {
        let nc = self.nc;
        let r = (0..self.np)
            .max_by(|&a, &b| self.beta[a].total_cmp(&self.beta[b]))
            .unwrap_or(0);
        let mut best: Option<(usize, f64)> = None;
        for j in 0..self.known_count {
            let w = &self.known[j * nc..(j + 1) * nc];
            let member = (0..self.np).any(|m| (0..nc).map(|i| (w[i] - self.x[m][i]).abs()).fold(0.0, f64::max) < 1e-6);
            if member {
                continue;
            }
            model.phase_ln_phi(t, p, w, plan.root, Need::VALUES, &mut self.fw, &mut self.ws.phi_a)?;
            // tpd(w) = Σ_i w_i (ln w_i + ln φ_i(w) − ln x_ri − ln φ_ri), per mol, in RT.
            let mut tpd = 0.0;
            for i in 0..nc {
                if self.z[i] > 0.0 && w[i] > 0.0 {
                    tpd += w[i] * (w[i].ln() + self.ws.phi_a.ln_phi[i] - self.x[r][i].ln() - self.phi[r].ln_phi[i]);
                }
            }
            if tpd.is_finite() && tpd < -plan.stability.threshold && best.is_none_or(|(_, b)| tpd < b) {
                best = Some((j, tpd));
            }
        }
        Ok(best.map(|(j, _)| j))
    }

    /// Removes remembered composition `j`.
    fn forget_known(&mut self, j: usize) {
        let nc = self.nc;
        let last = self.known_count - 1;
        if j != last {
            self.known.copy_within(last * nc..(last + 1) * nc, j * nc);
        }
        self.known_count = last;
    }

    /// Adds a phase of composition `w` to the set (with fraction 0: the next multiphase
    /// Rachford–Rice solve gives it its share).
    fn add_phase(&mut self, w: &[f64]) {
        let k = self.np;
        let s: f64 = (0..self.nc).filter(|&i| self.z[i] > 0.0).map(|i| w[i].max(0.0)).sum();
        for i in 0..self.nc {
            self.x[k][i] = if self.z[i] > 0.0 { w[i].max(1e-300) / s } else { 0.0 };
        }
        self.beta[k] = 0.0;
        self.absent[k] = 0;
        self.np += 1;
    }

    /// Removes phase `k`, keeping the order of the others.
    fn remove_phase(&mut self, k: usize) {
        for l in k..self.np - 1 {
            self.x.swap(l, l + 1);
            self.phi.swap(l, l + 1);
            self.n.swap(l, l + 1);
            self.beta[l] = self.beta[l + 1];
            self.roots[l] = self.roots[l + 1];
            self.absent[l] = self.absent[l + 1];
        }
        self.np -= 1;
    }

    /// Merges any two phases whose compositions coincide. Returns whether one was merged.
    fn merge_identical(&mut self) -> bool {
        for k in 0..self.np {
            for l in k + 1..self.np {
                let d = (0..self.nc)
                    .map(|i| (self.x[k][i] - self.x[l][i]).abs())
                    .fold(0.0, f64::max);
                if d < MERGE_DISTANCE {
                    self.beta[k] += self.beta[l];
                    self.remove_phase(l);
                    return true;
                }
            }
        }
        false
    }

    /// Evaluates ln φ of every phase of the set (on the plan's branch) and returns G per mol
    /// of feed and the residual max |ln f_ik − ln f_i0|.
    fn evaluate_all<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, root: RootChoice) -> Result<()> {
        for k in 0..self.np {
            model.phase_ln_phi(t, p, &self.x[k], root, Need::VALUES, &mut self.fw, &mut self.phi[k])?;
        }
        self.measure();
        Ok(())
    }

    /// G per mol of feed and the residual of the current x, β and ln φ.
    fn measure(&mut self) {
        let nc = self.nc;
        let (mut g, mut err) = (0.0, 0.0f64);
        // Reference: the first phase present.
        let r = (0..self.np).find(|&k| self.beta[k] > 0.0).unwrap_or(0);
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                continue;
            }
            let mu0 = self.x[r][i].ln() + self.phi[r].ln_phi[i];
            for k in 0..self.np {
                let mu = self.x[k][i].ln() + self.phi[k].ln_phi[i];
                g += self.beta[k] * self.x[k][i] * mu;
                if self.beta[k] > 0.0 {
                    err = err.max((mu - mu0).abs());
                }
            }
        }
        self.gibbs = g;
        self.residual = if err.is_finite() { err } else { f64::INFINITY };
    }

    /// One multiphase Rachford–Rice solve from the ln φ in `self.lnphi`: new β and x.
    /// Returns `false` when Q could not be minimised.
    fn rachford_rice(&mut self) -> bool {
        let (nc, np) = (self.nc, self.np);
        // a_ik = exp(−ln φ_ik + min_k ln φ_ik): a common factor per component leaves the
        // minimiser of Q and the compositions unchanged and keeps a_ik in (0, 1].
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                continue;
            }
            let lo = (0..np).map(|k| self.lnphi[i * MAXP + k]).fold(f64::INFINITY, f64::min);
            for k in 0..np {
                self.a[i * MAXP + k] = (lo - self.lnphi[i * MAXP + k]).exp();
            }
        }
        // Fractions of the last solve are a close start: Newton alone. Guessed fractions, or
        // a phase just added (β = 0, not yet absent, given a small share), take exact
        // coordinate sweeps first; a phase already at β = 0 starts there (Newton's active
        // set frees it if Q falls).
        let mut beta = [0.0; MAXP];
        let mut sweeps = if self.guessed_beta { 4 } else { 0 };
        for k in 0..np {
            beta[k] = if self.beta[k] > 0.0 {
                self.beta[k]
            } else if self.absent[k] == 0 {
                sweeps = 4;
                1e-3
            } else {
                0.0
            };
        }
        if !minimise_q(&self.z, &self.a, np, &mut beta, sweeps) {
            return false;
        }
        self.guessed_beta = false;
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                continue;
            }
            let e: f64 = (0..np).map(|k| beta[k] * self.a[i * MAXP + k]).sum();
            for k in 0..np {
                self.x[k][i] = (self.z[i] * self.a[i * MAXP + k] / e).max(f64::MIN_POSITIVE);
            }
        }
        for k in 0..np {
            self.beta[k] = beta[k];
            let s: f64 = self.x[k].iter().sum();
            if s > 0.0 && s.is_finite() {
                for v in self.x[k].iter_mut() {
                    *v /= s;
                }
            }
        }
        true
    }

    fn load_lnphi(&mut self) {
        for k in 0..self.np {
            for i in 0..self.nc {
                self.lnphi[i * MAXP + k] = self.phi[k].ln_phi[i];
            }
        }
    }

    /// Solves the current phase set: successive substitution with the multiphase
    /// Rachford–Rice problem and acceleration, then Newton on G; phases are removed and
    /// merged on the way. `warm` goes to Newton first.
    fn solve_set<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        warm: bool,
        diag: &mut Diagnostics,
    ) -> Result<SetOutcome> {
        let nc = self.nc;
        // Converge well below the tolerance, so that the certificate's tangent-plane
        // distances at the phases themselves (of the order of the residual) stay inside its
        // threshold, and that the compositions are accurate to about the tolerance; a point at
        // round-off level (see `newton`) ends the iterations before an unreachable target.
        let target = (plan.tolerance * 1e-3).max(1e-16);
        let mut ss_done = 0usize;
        let mut newton_tries = 0usize;
        let mut next_newton = if warm { 0 } else { 3 };
        let mut last_err = f64::INFINITY;
        self.evaluate_all(model, t, p, plan.root)?;
        if warm {
            // β of the previous answer are not a solution here: one Rachford–Rice solve.
            self.load_lnphi();
            if !self.rachford_rice() {
                return Ok(SetOutcome::NotConverged);
            }
            // Newton follows at once and evaluates the phases itself (with derivatives);
            // only a set with a phase at β = 0 needs them here, for successive substitution.
            if self.beta[..self.np].iter().all(|&b| b > 0.0) {
                self.residual = f64::INFINITY;
            } else {
                self.evaluate_all(model, t, p, plan.root)?;
            }
        }
        loop {
            if self.merge_identical() {
                if self.np == 1 {
                    return Ok(SetOutcome::Trivial);
                }
                self.evaluate_all(model, t, p, plan.root)?;
                last_err = f64::INFINITY;
            }
            let err = self.residual;
            let all_present = self.beta[..self.np].iter().all(|&b| b > 0.0);
            if err < target && all_present && ss_done > 0 {
                return Ok(SetOutcome::Converged);
            }
            // Newton once successive substitution has done its cheap work: close to the
            // solution, or stalling within a residual of 0.1 (far from it a damped Newton
            // step on an indefinite G crawls; common practice, no source).
            let slow = ss_done >= 3 && err > 0.6 * last_err;
            if all_present
                && newton_tries < 3
                && plan.max_newton > 0
                && ss_done >= next_newton
                && (err < 1e-3 || (slow && err < 0.1) || ss_done >= next_newton + 15 || (warm && newton_tries == 0))
            {
                newton_tries += 1;
                match self.newton(model, t, p, plan, target, diag)? {
                    SetOutcome::Converged => {
                        if self.merge_identical() {
                            if self.np == 1 {
                                return Ok(SetOutcome::Trivial);
                            }
                            self.evaluate_all(model, t, p, plan.root)?;
                            continue;
                        }
                        return Ok(SetOutcome::Converged);
                    }
                    SetOutcome::Trivial => return Ok(SetOutcome::Trivial),
                    SetOutcome::NotConverged => {
                        // Back to successive substitution from Newton's last accepted point.
                        self.evaluate_all(model, t, p, plan.root)?;
                        next_newton = ss_done + 20;
                        last_err = f64::INFINITY;
                        continue;
                    }
                }
            }
            if ss_done >= plan.max_ss {
                return Ok(SetOutcome::NotConverged);
            }
            ss_done += 1;
            diag.ss_iterations += 1;
            // Successive substitution: β and x from the multiphase Rachford–Rice problem with
            // the current ln φ; the differences of ln φ feed the extrapolation.
            self.load_lnphi();
            self.dhist[1].copy_from_slice(&self.lnphi);
            if !self.rachford_rice() {
                return Ok(SetOutcome::NotConverged);
            }
            // A phase at β = 0 keeps its composition x_ik ∝ z_i/(φ_ik E_i) (a trial phase)
            // for a while; then it is taken as absent: Q's optimality gives Σ_i x_ik ≤ 1 for
            // it, i.e. a non-negative tangent-plane distance from the other phases.
            let mut k = 0;
            while k < self.np {
                if self.beta[k] > 0.0 {
                    self.absent[k] = 0;
                } else {
                    self.absent[k] += 1;
                    if self.absent[k] > ABSENT_AFTER && self.np > 1 {
                        self.remove_phase(k);
                        continue;
                    }
                }
                k += 1;
            }
            self.evaluate_all(model, t, p, plan.root)?;
            // Differences of ln φ over this step (the previous step's are in dhist[0]).
            for k in 0..self.np {
                for i in 0..nc {
                    let j = i * MAXP + k;
                    let prev = self.dhist[1][j];
                    self.dhist[1][j] = self.phi[k].ln_phi[i] - prev;
                }
            }
            if ss_done.is_multiple_of(5) && ss_done >= 5 {
                self.accelerate(model, t, p, plan, diag)?;
            }
            self.dhist.swap(0, 1);
            if !self.residual.is_finite() || !self.gibbs.is_finite() {
                return Err(Error::not_converged(
                    "multiphase split (successive substitution)",
                    vec![("SS".into(), diag.ss_iterations)],
                    self.residual,
                    plan.tolerance,
                ));
            }
            last_err = err;
        }
    }

    /// Dominant-eigenvalue extrapolation of ln φ from the last two steps, kept only if G
    /// falls.
    fn accelerate<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let (nc, np) = (self.nc, self.np);
        let (mut numer, mut denom) = (0.0, 0.0);
        for i in 0..nc {
            for k in 0..np {
                let j = i * MAXP + k;
                numer += self.dhist[1][j] * self.dhist[1][j];
                denom += self.dhist[0][j] * self.dhist[1][j];
            }
        }
        let lambda = numer / denom;
        if !(lambda.is_finite() && lambda > 0.0 && lambda < 0.99) || self.beta[..np].iter().any(|&b| b <= 0.0) {
            return Ok(());
        }
        let fac = lambda / (1.0 - lambda);
        let g0 = self.gibbs;
        for k in 0..np {
            self.save_x[k].copy_from_slice(&self.x[k]);
            self.save_beta[k] = self.beta[k];
            for i in 0..nc {
                let j = i * MAXP + k;
                self.lnphi[j] = self.phi[k].ln_phi[i] + fac * self.dhist[1][j];
            }
        }
        if self.rachford_rice() && self.beta[..np].iter().all(|&b| b > 0.0) {
            self.evaluate_all(model, t, p, plan.root)?;
            if self.gibbs < g0 && self.residual.is_finite() {
                diag.accelerations += 1;
                return Ok(());
            }
        }
        for k in 0..np {
            self.x[k].copy_from_slice(&self.save_x[k]);
            self.beta[k] = self.save_beta[k];
        }
        self.evaluate_all(model, t, p, plan.root)
    }

    /// Newton iterations on G in the independent phase amounts. For each component i the
    /// amount in its most abundant phase r(i) is eliminated, n_{i r(i)} = z_i − Σ_{k≠r(i)} n_ik,
    /// so that trace amounts are variables and never differences. The gradient is
    /// ∂G/∂n_ik = μ_ik − μ_{i r(i)} (μ = ln x + ln φ, per RT) and the Hessian
    /// H_(ik)(jl) = Σ_m M^m_ij e_(ik),m e_(jl),m with M^m_ij = ∂μ_im/∂n_jm =
    /// δ_ij/n_im − 1/β_m + (∂ln φ_im/∂n_j)/β_m and e_(ik),m = δ_km − δ_{r(i) m}.
    fn newton<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        target: f64,
        diag: &mut Diagnostics,
    ) -> Result<SetOutcome> {
        let (nc, np) = (self.nc, self.np);
        for k in 0..np {
            for i in 0..nc {
                self.n[k][i] = self.beta[k] * self.x[k][i];
            }
            self.roots[k] = plan.root;
        }
        // Variables.
        let mut nv = 0;
        for i in 0..nc {
            self.reference[i] = (0..np)
                .max_by(|&a, &b| self.n[a][i].total_cmp(&self.n[b][i]))
                .unwrap_or(0);
            for k in 0..np {
                self.var[i * MAXP + k] = if self.z[i] > 0.0 && k != self.reference[i] {
                    nv += 1;
                    nv - 1
                } else {
                    usize::MAX
                };
            }
        }
        if self.hess.len() < nv * nv {
            self.hess.resize(nv * nv, 0.0);
            self.chol.resize(nv * nv, 0.0);
        }
        if !self.eval_amounts(model, t, p, Need::COMPOSITION)? {
            return Ok(SetOutcome::NotConverged);
        }
        let mut have_dn = true;
        for _ in 0..plan.max_newton {
            let err0 = self.residual;
            if err0 < target {
                if self.roots_still_stable(model, t, p, plan)? {
                    return Ok(SetOutcome::Converged);
                }
                if !self.eval_amounts(model, t, p, Need::COMPOSITION)? {
                    return Ok(SetOutcome::NotConverged);
                }
                continue;
            }
            if !err0.is_finite() {
                return Ok(SetOutcome::NotConverged);
            }
            if !have_dn && !self.eval_amounts(model, t, p, Need::COMPOSITION)? {
                return Ok(SetOutcome::NotConverged);
            }
            diag.newton_iterations += 1;
            self.assemble(nv);
            // Symmetric diagonal scaling to a unit diagonal (the 1/n_ik terms span many
            // decades where a component is a trace in a phase), so that a Levenberg shift acts
            // on every variable alike; the step is scaled back.
            for a in 0..nv {
                let d = self.hess[a * nv + a];
                self.scale[a] = if d > 0.0 && d.is_finite() { 1.0 / d.sqrt() } else { 1.0 };
            }
            for a in 0..nv {
                for b in 0..nv {
                    self.hess[a * nv + b] *= self.scale[a] * self.scale[b];
                }
                self.step[a] = self.rhs[a] * self.scale[a];
            }
            if shifted_cholesky_solve(&self.hess[..nv * nv], nv, &mut self.step[..nv], &mut self.chol, 0.0).is_none() {
                return Ok(SetOutcome::NotConverged);
            }
            for a in 0..nv {
                self.step[a] *= self.scale[a];
            }
            // Fraction to the boundary (0.9): every amount stays positive.
            let mut alpha: f64 = 1.0;
            for i in 0..nc {
                if self.z[i] <= 0.0 {
                    continue;
                }
                let r = self.reference[i];
                let mut dr = 0.0;
                for k in 0..np {
                    let v = self.var[i * MAXP + k];
                    if v == usize::MAX {
                        continue;
                    }
                    let d = self.step[v];
                    dr -= d;
                    if d < 0.0 && self.n[k][i] + d <= 0.0 {
                        alpha = alpha.min(0.9 * self.n[k][i] / -d);
                    }
                }
                if dr < 0.0 && self.n[r][i] + dr <= 0.0 {
                    alpha = alpha.min(0.9 * self.n[r][i] / -dr);
                }
            }
            // The candidate is evaluated with derivatives, ready for the next step (a line
            // search rarely rejects it, so ln φ is evaluated once per phase and step).
            let need = Need::COMPOSITION;
            let g0 = self.gibbs;
            for k in 0..np {
                self.n0[k].copy_from_slice(&self.n[k]);
            }
            let mut accepted = false;
            // Below 1e-9 a Newton step either reduces the residual to round-off or the point
            // is already there (G then changes by round-off only): the step is kept only if
            // the residual falls, so the answer is the most accurate point reached.
            let roundoff = err0 < 1e-9;
            // A step cut by the boundary: first the full step with each amount that would
            // cross zero moved in its logarithm (as in the two-phase Newton of the PT flash).
            if alpha < 1.0 && !roundoff {
                self.move_amounts_log();
                accepted = self.eval_amounts(model, t, p, need)? && self.gibbs <= g0 + 1e-14 * g0.abs().max(1.0);
            }
            for _ in 0..if accepted { 0 } else { 12 } {
                self.move_amounts(alpha);
                if self.eval_amounts(model, t, p, need)? {
                    let (g1, err1) = (self.gibbs, self.residual);
                    // Near convergence G changes by round-off only: a falling residual suffices.
                    let descent = g1 <= g0 + 1e-14 * g0.abs().max(1.0) || (err0 < 1e-6 && err1 < err0);
                    if if roundoff { err1 < err0 } else { descent } {
                        accepted = true;
                        break;
                    }
                }
                if roundoff {
                    break;
                }
                alpha *= 0.5;
            }
            if !accepted {
                self.move_amounts(0.0);
                self.eval_amounts(model, t, p, Need::VALUES)?;
                // Stalled at round-off within the tolerance: that is convergence.
                if self.residual < plan.tolerance && self.roots_still_stable(model, t, p, plan)? {
                    return Ok(SetOutcome::Converged);
                }
                return Ok(SetOutcome::NotConverged);
            }
            have_dn = need.composition;
        }
        Ok(
            if self.residual < plan.tolerance && self.roots_still_stable(model, t, p, plan)? {
                SetOutcome::Converged
            } else {
                SetOutcome::NotConverged
            },
        )
    }

    /// The Newton system H Δ = −g (into `hess` and `rhs`) at the current amounts.
    fn assemble(&mut self, nv: usize) {
        let (nc, np) = (self.nc, self.np);
        self.hess[..nv * nv].fill(0.0);
        // M^m_ij of phase m.
        let m_of = |s: &Self, m: usize, i: usize, j: usize| -> f64 {
            let b = s.beta[m];
            let mut v = (s.phi[m].dn[i * nc + j] - 1.0) / b;
            if i == j {
                v += 1.0 / s.n[m][i];
            }
            v
        };
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                continue;
            }
            let ri = self.reference[i];
            for k in 0..np {
                let a = self.var[i * MAXP + k];
                if a == usize::MAX {
                    continue;
                }
                let mu_k = self.x[k][i].ln() + self.phi[k].ln_phi[i];
                let mu_r = self.x[ri][i].ln() + self.phi[ri].ln_phi[i];
                self.rhs[a] = -(mu_k - mu_r);
                for j in 0..nc {
                    if self.z[j] <= 0.0 {
                        continue;
                    }
                    let rj = self.reference[j];
                    for l in 0..np {
                        let b = self.var[j * MAXP + l];
                        if b == usize::MAX {
                            continue;
                        }
                        // Σ over m ∈ {k, r(i)} of M^m_ij e_(ik),m e_(jl),m.
                        let e_jl =
                            |m: usize| -> f64 { (if l == m { 1.0 } else { 0.0 }) - if rj == m { 1.0 } else { 0.0 } };
                        let mut h = 0.0;
                        let ek = e_jl(k);
                        if ek != 0.0 {
                            h += m_of(self, k, i, j) * ek;
                        }
                        let er = e_jl(ri);
                        if er != 0.0 {
                            h -= m_of(self, ri, i, j) * er;
                        }
                        self.hess[a * nv + b] = h;
                    }
                }
            }
        }
    }

    /// Sets the amounts to n0 + α Δ (the eliminated amounts by the mass balance).
    fn move_amounts(&mut self, alpha: f64) {
        let (nc, np) = (self.nc, self.np);
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                for k in 0..np {
                    self.n[k][i] = 0.0;
                }
                continue;
            }
            let r = self.reference[i];
            let mut rest = 0.0;
            for k in 0..np {
                let v = self.var[i * MAXP + k];
                if v != usize::MAX {
                    self.n[k][i] = self.n0[k][i] + alpha * self.step[v];
                    rest += self.n[k][i];
                }
            }
            self.n[r][i] = self.z[i] - rest;
        }
    }

    /// The full step from `n0`, except that an amount the step would make non-positive moves
    /// in its logarithm, n_ik = n0_ik exp(Δ_ik/n0_ik) (a trace amount changing by orders of
    /// magnitude); the reference phase takes the rest of each component's feed.
    fn move_amounts_log(&mut self) {
        let (nc, np) = (self.nc, self.np);
        for i in 0..nc {
            if self.z[i] <= 0.0 {
                continue;
            }
            let r = self.reference[i];
            let mut rest = 0.0;
            for k in 0..np {
                let v = self.var[i * MAXP + k];
                if v != usize::MAX {
                    let (n0, d) = (self.n0[k][i], self.step[v]);
                    self.n[k][i] = if n0 + d <= 0.0 { n0 * (d / n0).exp() } else { n0 + d };
                    rest += self.n[k][i];
                }
            }
            self.n[r][i] = self.z[i] - rest;
        }
    }

    /// Phase fractions, compositions, ln φ (with `need`), G and residual at the amounts.
    /// Returns `false` if an amount is not positive.
    fn eval_amounts<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, need: Need) -> Result<bool> {
        let (nc, np) = (self.nc, self.np);
        for k in 0..np {
            let mut b = 0.0;
            for i in 0..nc {
                if self.z[i] > 0.0 {
                    if !(self.n[k][i] > 0.0) {
                        return Ok(false);
                    }
                    b += self.n[k][i];
                }
            }
            self.beta[k] = b;
            for i in 0..nc {
                self.x[k][i] = if self.z[i] > 0.0 { self.n[k][i] / b } else { 0.0 };
            }
            model.phase_ln_phi(t, p, &self.x[k], self.roots[k], need, &mut self.fw, &mut self.phi[k])?;
            if self.roots[k] == RootChoice::Stable {
                self.roots[k] = self.phi[k].root;
            }
        }
        self.measure();
        Ok(true)
    }

    /// Whether each phase held on a branch during Newton is on its least-Gibbs branch (only
    /// when the plan lets the branch be chosen). Resets a phase that is not and returns
    /// `false`.
    fn roots_still_stable<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, plan: &Plan) -> Result<bool> {
        if plan.root != RootChoice::Stable {
            return Ok(true);
        }
        let mut ok = true;
        for k in 0..self.np {
            if self.roots[k] == RootChoice::Stable {
                continue;
            }
            model.phase_ln_phi(
                t,
                p,
                &self.x[k],
                RootChoice::Stable,
                Need::VALUES,
                &mut self.fw,
                &mut self.ws.phi_a,
            )?;
            if self.ws.phi_a.two_roots && self.ws.phi_a.root != self.roots[k] {
                self.roots[k] = RootChoice::Stable;
                ok = false;
            }
        }
        Ok(ok)
    }

    /// Stability test of the largest phase of the set into `self.stab`. Returns the
    /// composition index of the largest phase.
    fn test_largest<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let big = (0..self.np)
            .max_by(|&a, &b| self.beta[a].total_cmp(&self.beta[b]))
            .unwrap_or(0);
        // The other phases of the set are stationary points of zero distance: trials heading
        // to one are abandoned. A stationary point at a phase of the set is that phase (its
        // distance is of the order of the residual), not a new one: if the test that stops at
        // its first negative point stopped there, run all trials.
        for early_exit in [true, false] {
            let sopts = StabilityOptions {
                early_exit,
                ..plan.stability
            };
            let x = std::mem::take(&mut self.x[big]);
            let (known, m) = other_phases(&self.x, self.np, big);
            let out = stability_with_known(
                model,
                t,
                p,
                &x,
                plan.root,
                &sopts,
                &known[..m],
                self.np < plan.limit,
                &mut self.ws,
                &mut self.stab,
            );
            self.x[big] = x;
            out?;
            diag.certificate_iterations += self.stab.iterations;
            if self.stab.stable || !self.is_member(0) {
                break;
            }
        }
        let mut min_tpd = 0.0f64;
        let mut k = 0;
        while k < self.stab.points.len() {
            if self.is_member(k) {
                self.stab.points.remove(k);
                continue;
            }
            min_tpd = min_tpd.min(self.stab.points[k].tpd);
            k += 1;
        }
        self.stab.min_tpd = min_tpd + 0.0;
        self.stab.stable = min_tpd >= -plan.stability.threshold;
        self.certificate = Some(self.stab.min_tpd);
        Ok(())
    }

    /// Whether stationary point `k` of `self.stab` coincides with a phase of the set.
    fn is_member(&self, k: usize) -> bool {
        let Some(pt) = self.stab.points.get(k) else {
            return false;
        };
        (0..self.np).any(|m| {
            (0..self.nc)
                .map(|i| (pt.composition[i] - self.x[m][i]).abs())
                .fold(0.0, f64::max)
                < 1e-6
        })
    }

    /// Solves the current phase set, then adds phases from the negative stationary points of
    /// the answer's stability test until it is stable or the plan's limit is reached.
    /// Returns `Trivial` when the set collapsed to one phase.
    pub(crate) fn solve_and_add<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        warm: bool,
        diag: &mut Diagnostics,
    ) -> Result<bool> {
        let mut warm = warm;
        // Each addition either raises the phase count or, if a phase leaves again, is
        // bounded: at most 2 × limit + 2 phase sets.
        for _ in 0..2 * plan.limit + 2 {
            match self.solve_set(model, t, p, plan, warm, diag)? {
                SetOutcome::Converged => {}
                SetOutcome::Trivial => return Ok(false),
                SetOutcome::NotConverged => {
                    return Err(Error::not_converged(
                        format!("multiphase split of {} phases", self.np),
                        vec![
                            ("SS".into(), diag.ss_iterations),
                            ("Newton".into(), diag.newton_iterations),
                        ],
                        self.residual,
                        plan.tolerance,
                    ));
                }
            }
            warm = false;
            let present = (0..self.nc).filter(|&i| self.z[i] > 0.0).count();
            let room = self.np < plan.limit && self.np < present;
            if !room && !plan.certificate {
                self.certificate = None;
                return Ok(true);
            }
            // A remembered stationary point below this set's tangent plane is the new phase's
            // estimate, found without a stability test; the test runs once no remembered
            // point qualifies (and always on the answer, as its certificate).
            if room && self.known_count > 0 {
                if let Some(j) = self.known_below_plane(model, t, p, plan)? {
                    diag.splits_tried += 1;
                    let nc = self.nc;
                    let mut w = std::mem::take(&mut self.ws.y);
                    w.copy_from_slice(&self.known[j * nc..(j + 1) * nc]);
                    self.forget_known(j);
                    self.add_phase(&w);
                    self.ws.y = w;
                    continue;
                }
                self.known_count = 0;
            }
            self.test_largest(model, t, p, plan, diag)?;
            if self.stab.stable {
                return Ok(true);
            }
            if !room {
                return Err(Error::NoSolution(format!(
                    "at T = {t} K, p = {p} Pa the least-Gibbs state has more than {np} phases \
                     (a further phase lowers G: tangent-plane distance {tpd})",
                    t = num(t),
                    p = num(p),
                    np = self.np,
                    tpd = num(self.stab.min_tpd)
                )));
            }
            diag.splits_tried += 1;
            self.remember_points(1, plan.stability.threshold);
            let w = std::mem::take(&mut self.stab.points[0].composition);
            self.add_phase(&w);
            self.stab.points[0].composition = w;
        }
        Err(Error::not_converged(
            "multiphase split (phases added and removed again)",
            vec![
                ("SS".into(), diag.ss_iterations),
                ("Newton".into(), diag.newton_iterations),
            ],
            self.residual,
            plan.tolerance,
        ))
    }

    /// Writes the converged set into `r` (phases ordered vapour first, then liquids by
    /// increasing density), the residual and G into `diag`.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn write<M: FluidModel + ?Sized>(
        &self,
        model: &M,
        t: f64,
        p: f64,
        ntot: f64,
        plan: &Plan,
        diag: &mut Diagnostics,
        r: &mut FlashResult,
    ) -> Result<()> {
        let (nc, np) = (self.nc, self.np);
        let mut order = [0usize; MAXP];
        for (k, o) in order.iter_mut().enumerate().take(np) {
            *o = k;
        }
        // Lightest first (largest molar volume).
        order[..np].sort_by(|&a, &b| self.phi[b].v.total_cmp(&self.phi[a].v));
        let light = order[0];
        // The lightest phase is the vapour unless it is liquid-like and below its
        // pseudo-critical temperature by Kay's rule, T_pc = Σ x_i Tc_i (W. B. Kay, Ind. Eng.
        // Chem. 28 (1936) 1014, from memory), as in the two-phase flash; a single phase is
        // named by the model's rule alone.
        let kay: f64 = (0..nc).map(|i| self.x[light][i] * model.critical_constants(i).tc).sum();
        let vapor = plan.root == RootChoice::Stable
            && if np == 1 {
                !self.phi[light].liquid_like
            } else {
                !(self.phi[light].liquid_like && t < kay)
            };
        let liquids = np - usize::from(vapor);
        if liquids > plan.max_liquids {
            return Err(Error::NoSolution(format!(
                "at T = {t} K, p = {p} Pa the least-Gibbs state found has {liquids} liquid phases; \
                 at most {} are allowed",
                plan.max_liquids,
                t = num(t),
                p = num(p)
            )));
        }
        const LIQ: [PhaseKind; 3] = [PhaseKind::Liquid, PhaseKind::Liquid2, PhaseKind::Liquid3];
        r.phases.truncate(np);
        while r.phases.len() < np {
            r.phases.push(Phase {
                composition: vec![0.0; nc],
                ln_phi: vec![0.0; nc],
                ..Default::default()
            });
        }
        for (slot, &k) in order[..np].iter().enumerate() {
            let kind = if vapor && slot == 0 {
                PhaseKind::Vapor
            } else {
                // The densest liquid (last) is `Liquid`, the next lighter `Liquid2`, ...
                LIQ[np - 1 - slot]
            };
            let ph = &mut r.phases[slot];
            ph.kind = Some(kind);
            ph.fraction = self.beta[k];
            ph.amount = self.beta[k] * ntot;
            ph.composition.clear();
            ph.composition.extend_from_slice(&self.x[k]);
            ph.ln_phi.clear();
            ph.ln_phi.extend_from_slice(&self.phi[k].ln_phi);
            ph.molar_volume = self.phi[k].v;
            ph.z = self.phi[k].z;
        }
        diag.residual = if np > 1 { self.residual } else { 0.0 };
        diag.gibbs = self.gibbs;
        diag.certificate = self.certificate;
        Ok(())
    }

    /// A single phase of the feed's composition, evaluated on the plan's branch.
    fn single<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, plan: &Plan) -> Result<()> {
        self.np = 1;
        self.beta[0] = 1.0;
        let z = std::mem::take(&mut self.z);
        self.x[0].copy_from_slice(&z);
        self.z = z;
        self.evaluate_all(model, t, p, plan.root)?;
        self.residual = 0.0;
        Ok(())
    }
}

/// Minimises Q(β) = Σ_k β_k − Σ_i z_i ln E_i, E_i = Σ_k β_k a_ik, over β ≥ 0 (Michelsen 1994)
/// for the first `np` phases: `sweeps` exact coordinate sweeps first (for a poor start), then
/// Newton steps on the free fractions with an active set and backtracking (Q is convex),
/// falling back to a sweep where Newton fails. `a` is row-major nc × MAXP. Returns `false`
/// if the minimum could not be found to 1e-6 in the gradient.
fn minimise_q(z: &[f64], a: &[f64], np: usize, beta: &mut [f64; MAXP], sweeps: usize) -> bool {
    let q = |b: &[f64; MAXP]| -> f64 {
        let mut s: f64 = b[..np].iter().sum();
        for (i, zi) in z.iter().enumerate() {
            if *zi > 0.0 {
                let e: f64 = (0..np).map(|k| b[k] * a[i * MAXP + k]).sum();
                if !(e > 0.0) {
                    return f64::INFINITY;
                }
                s -= zi * e.ln();
            }
        }
        s
    };
    for _ in 0..sweeps {
        coordinate_sweep(z, a, np, beta);
    }
    if beta[..np].iter().all(|&b| !(b > 0.0)) {
        coordinate_sweep(z, a, np, beta);
    }
    // Largest |∂Q/∂β_k| over the phases not held at zero by the bound.
    let grad_max = |b: &[f64; MAXP]| -> f64 {
        let mut g = [1.0; MAXP];
        for (i, zi) in z.iter().enumerate() {
            if *zi > 0.0 {
                let ai = &a[i * MAXP..i * MAXP + MAXP];
                let e: f64 = (0..np).map(|k| b[k] * ai[k]).sum();
                for k in 0..np {
                    g[k] -= zi * ai[k] / e;
                }
            }
        }
        (0..np)
            .filter(|&k| b[k] > 0.0 || g[k] < 0.0)
            .map(|k| g[k].abs())
            .fold(0.0, f64::max)
    };
    let mut gmax = f64::INFINITY;
    for _ in 0..100 {
        let mut g = [1.0; MAXP];
        let mut h = [[0.0; MAXP]; MAXP];
        for (i, zi) in z.iter().enumerate() {
            if *zi <= 0.0 {
                continue;
            }
            let ai = &a[i * MAXP..i * MAXP + MAXP];
            let e: f64 = (0..np).map(|k| beta[k] * ai[k]).sum();
            let w = zi / e;
            for k in 0..np {
                g[k] -= w * ai[k];
                for l in 0..np {
                    h[k][l] += w * ai[k] * ai[l] / e;
                }
            }
        }
        // Active set: a phase at β = 0 whose gradient points outward stays out.
        let mut free = [0usize; MAXP];
        let mut m = 0;
        for k in 0..np {
            if beta[k] > 0.0 || g[k] < 0.0 {
                free[m] = k;
                m += 1;
            }
        }
        gmax = free[..m].iter().map(|&k| g[k].abs()).fold(0.0, f64::max);
        if gmax < 1e-15 {
            return true;
        }
        // Newton step on the free fractions (a small SPD system, Gaussian elimination).
        let mut mat = [[0.0; MAXP]; MAXP];
        let mut rhs = [0.0; MAXP];
        for r in 0..m {
            rhs[r] = -g[free[r]];
            for c in 0..m {
                mat[r][c] = h[free[r]][free[c]];
            }
        }
        let mut singular = false;
        for col in 0..m {
            let piv = mat[col][col];
            if !(piv.abs() > 0.0) || !piv.is_finite() {
                singular = true;
                break;
            }
            for r in col + 1..m {
                let f = mat[r][col] / piv;
                for c in col..m {
                    mat[r][c] -= f * mat[col][c];
                }
                rhs[r] -= f * rhs[col];
            }
        }
        if singular {
            coordinate_sweep(z, a, np, beta);
            continue;
        }
        let mut d = [0.0; MAXP];
        for r in (0..m).rev() {
            let mut s = rhs[r];
            for c in r + 1..m {
                s -= mat[r][c] * d[c];
            }
            d[r] = s / mat[r][r];
        }
        let mut step = [0.0; MAXP];
        for r in 0..m {
            step[free[r]] = d[r];
        }
        // Largest step keeping β ≥ 0; the fraction that would cross zero stops at zero.
        let mut t_max: f64 = 1.0;
        let mut blocking = None;
        for k in 0..np {
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
            for k in 0..np {
                cand[k] = (beta[k] + t * step[k]).max(0.0);
            }
            if t == t_max
                && let Some(k) = blocking
            {
                cand[k] = 0.0;
            }
            // Near the minimum Q changes by less than its round-off: there a step that
            // reduces the gradient is taken instead.
            if q(&cand) <= q0 || (gmax < 1e-6 && grad_max(&cand) < 0.5 * gmax) {
                *beta = cand;
                moved = true;
                break;
            }
            if gmax < 1e-6 {
                break;
            }
            t *= 0.5;
        }
        if !moved {
            if gmax < 1e-10 {
                return true;
            }
            let before = *beta;
            coordinate_sweep(z, a, np, beta);
            if *beta == before {
                // Neither Newton nor the sweep moves: stuck.
                break;
            }
        }
    }
    gmax < 1e-6
}

/// One sweep of exact minimisation of Q over each β_k in turn, the others fixed: Q is convex
/// in β_k and ∂Q/∂β_k = g(β_k) = 1 − Σ_i z_i a_ik/(E_i^(−k) + β_k a_ik) increases with β_k,
/// so the minimiser is 0 or the root of g. g is also concave, so Newton's method from a
/// point left of the root climbs to it monotonically; the root is bracketed and a step
/// leaving the bracket is replaced by bisection (in ln β_k while the bracket spans decades).
/// Robust where the multivariate Newton step is badly scaled (a phase entering where E_i is
/// tiny).
fn coordinate_sweep(z: &[f64], a: &[f64], np: usize, beta: &mut [f64; MAXP]) {
    for k in 0..np {
        // g(b) and g'(b) = Σ_i z_i a_ik² / (E_i^(−k) + b a_ik)².
        let g = |b: f64| -> (f64, f64) {
            let (mut s, mut d) = (1.0, 0.0);
            for (i, zi) in z.iter().enumerate() {
                let ai = &a[i * MAXP..i * MAXP + MAXP];
                if *zi > 0.0 && ai[k] > 0.0 {
                    let e: f64 = (0..np).filter(|&l| l != k).map(|l| beta[l] * ai[l]).sum::<f64>() + b * ai[k];
                    let r = zi * ai[k] / e;
                    s -= r;
                    d += r * ai[k] / e;
                }
            }
            (s, d)
        };
        if !(g(0.0).0 < 0.0) {
            beta[k] = 0.0;
            continue;
        }
        // g(lo) < 0 ≤ g(hi).
        let (mut lo, mut hi) = (0.0f64, f64::INFINITY);
        let mut b = if beta[k] > 0.0 { beta[k] } else { 1e-3 };
        for _ in 0..200 {
            let (gb, db) = g(b);
            if gb < 0.0 {
                lo = b;
            } else {
                hi = b;
            }
            let mut next = b - gb / db;
            if !(next > lo && next < hi) {
                next = if hi.is_infinite() {
                    16.0 * b
                } else if lo == 0.0 {
                    hi / 16.0
                } else if hi / lo > 4.0 {
                    (lo * hi).sqrt()
                } else {
                    0.5 * (lo + hi)
                };
            }
            let done = (next - b).abs() <= 1e-15 * b || hi - lo <= 1e-15 * hi || !(next < 1e300 && next > 1e-300);
            b = next;
            if done {
                break;
            }
        }
        beta[k] = b.clamp(1e-300, 1e300);
    }
}

/// Reusable multiphase-flash state: the workspaces and the previous answer, from which a
/// call at nearby conditions starts (warm start). Used by one thread at a time.
#[derive(Debug, Clone, Default)]
pub struct MultiphaseContext {
    solver: Solver,
    result: FlashResult,
    /// The previous answer's conditions, feed (mole fractions) and phase compositions.
    prev: Option<Previous>,
}

#[derive(Debug, Clone, Default)]
pub(crate) struct Previous {
    t: f64,
    p: f64,
    z: Vec<f64>,
    np: usize,
    x: [Vec<f64>; MAXP],
    plan_root: Option<RootChoice>,
}

impl Previous {
    /// Remembers the solver's answer at (T (K), p (Pa)) in `slot` when it has more than one
    /// phase (else forgets it), for a warm start of the next call.
    pub(crate) fn record(slot: &mut Option<Previous>, s: &Solver, t: f64, p: f64, plan: &Plan) {
        if s.np <= 1 {
            *slot = None;
            return;
        }
        let prev = slot.get_or_insert_with(Previous::default);
        prev.t = t;
        prev.p = p;
        prev.z.clear();
        prev.z.extend_from_slice(&s.z);
        prev.np = s.np;
        for k in 0..s.np {
            prev.x[k].clear();
            prev.x[k].extend_from_slice(&s.x[k]);
        }
        prev.plan_root = Some(plan.root);
    }

    /// Starts the solver (its feed already set) from this answer's phase compositions when
    /// the call is close to it in T, p and feed. On `true` the phase set is solved and `diag`
    /// holds its work (marked as a warm start); on `false` the work spent, if any, has been
    /// added to `diag` and the caller starts cold.
    pub(crate) fn warm_start<M: FluidModel + ?Sized>(
        &self,
        s: &mut Solver,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        diag: &mut Diagnostics,
    ) -> bool {
        let close = self.plan_root == Some(plan.root)
            && self.np <= plan.limit
            && self.z.len() == s.z.len()
            && (t - self.t).abs() <= WARM_DT * self.t
            && (p - self.p).abs() <= WARM_DP * self.p
            && self
                .z
                .iter()
                .zip(&s.z)
                .all(|(a, b)| (a - b).abs() <= WARM_DZ && (*a > 0.0) == (*b > 0.0));
        if !close {
            return false;
        }
        let init: [&[f64]; MAXP] = std::array::from_fn(|k| self.x[k].as_slice());
        s.start_from(&init[..self.np]);
        let mut d = Diagnostics::default();
        if let Ok(true) = s.solve_and_add(model, t, p, plan, true, &mut d) {
            d.warm_start = true;
            *diag = d;
            return true;
        }
        // The cold path follows: count the work spent.
        diag.ss_iterations += d.ss_iterations;
        diag.newton_iterations += d.newton_iterations;
        false
    }
}

/// How close a call must be to the previous answer for a warm start: relative changes of T
/// and p and the largest change of a feed mole fraction (common practice, no source).
const WARM_DT: f64 = 0.02;
const WARM_DP: f64 = 0.05;
const WARM_DZ: f64 = 0.02;

impl MultiphaseContext {
    /// A context for models of `nc` components (resized automatically if used with another).
    pub fn new(nc: usize) -> Self {
        let mut c = MultiphaseContext::default();
        c.solver.resize(nc);
        c
    }

    /// Forgets the previous answer, so the next call starts cold.
    pub fn reset(&mut self) {
        self.prev = None;
    }

    /// The last result (valid after a successful call).
    pub fn last(&self) -> &FlashResult {
        &self.result
    }

    /// Multiphase PT flash of feed amounts `n` (mol) at T (K) and p (Pa); see
    /// [`flash_multiphase`]. When the previous call of this context had more than one phase
    /// at nearby T, p and feed, the phase set starts from its compositions (no stability test
    /// of the feed); if that fails or collapses the call starts cold.
    pub fn flash<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        n: &[f64],
        opts: &MultiphaseOptions,
    ) -> Result<&FlashResult> {
        opts.validate()?;
        check::temperature(t)?;
        check::pressure(p)?;
        let nc = model.num_components();
        let ntot = check::amounts(n, nc)?;
        if self.solver.nc != nc {
            self.prev = None;
        }
        self.solver.resize(nc);
        for i in 0..nc {
            self.solver.z[i] = n[i] / ntot;
        }
        let plan = opts.plan();
        let mut diag = Diagnostics::default();
        let out = self.solve(model, t, p, &plan, &mut diag);
        if let Err(e) = out {
            self.prev = None;
            let its = vec![
                ("stability".into(), diag.stability_iterations),
                ("SS".into(), diag.ss_iterations),
                ("Newton".into(), diag.newton_iterations),
            ];
            return Err(e.from_inside("multiphase PT flash", t, p, its, opts.tolerance));
        }
        self.solver
            .write(model, t, p, ntot, &plan, &mut diag, &mut self.result)?;
        let r = &mut self.result;
        r.temperature = t;
        r.pressure = p;
        r.feed.clear();
        r.feed.extend_from_slice(n);
        r.tie_line = None;
        r.diagnostics = diag;
        // Remember a multiphase answer for the next call.
        Previous::record(&mut self.prev, &self.solver, t, p, &plan);
        Ok(&self.result)
    }

    fn solve<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        plan: &Plan,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let s = &mut self.solver;
        if let Some(prev) = &self.prev
            && prev.warm_start(s, model, t, p, plan, diag)
        {
            return Ok(());
        }
        cold(model, t, p, plan, s, diag)
    }
}

/// The cold path: the stability test of the feed, stopped at its first negative stationary
/// point, and a split from it (the feed's other negative points are remembered for the phase
/// additions); if no split from those points stands, the test is completed with every trial
/// and a split is tried from each further negative point, most negative first, until one is
/// not trivial. Then stepwise phase addition.
fn cold<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    plan: &Plan,
    s: &mut Solver,
    diag: &mut Diagnostics,
) -> Result<()> {
    let mut last_err = None;
    let mut tried: Vec<Vec<f64>> = Vec::new();
    for complete in [false, true] {
        let sopts = StabilityOptions {
            early_exit: !complete,
            ..plan.stability
        };
        let z = std::mem::take(&mut s.z);
        // The first pass stops each trial once it proves instability (its amounts start the
        // split); the complete one converges every trial.
        let out = if complete {
            stability_on(model, t, p, &z, plan.root, &sopts, &[], &mut s.ws, &mut s.stab)
        } else {
            stability_for_split(model, t, p, &z, plan.root, &sopts, &mut s.ws, &mut s.stab)
        };
        s.z = z;
        out?;
        diag.stability_iterations += s.stab.iterations;
        if s.stab.stable || plan.limit < 2 {
            s.certificate = Some(s.stab.min_tpd);
            s.single(model, t, p, plan)?;
            if !s.stab.stable {
                return Err(Error::NoSolution(format!(
                    "at T = {t} K, p = {p} Pa the feed is unstable (tangent-plane distance {}) but \
                     only one phase is allowed",
                    num(s.stab.min_tpd),
                    t = num(t),
                    p = num(p)
                )));
            }
            if !plan.certificate {
                s.certificate = None;
            }
            return Ok(());
        }
        let points = std::mem::take(&mut s.stab.points);
        let negative = |pt: &&super::stability::StationaryPoint| pt.tpd < -plan.stability.threshold;
        let mut done = false;
        for (k, pt) in points.iter().enumerate().filter(|(_, pt)| negative(pt)) {
            let seen = tried.iter().any(|w| {
                w.iter()
                    .zip(&pt.composition)
                    .map(|(a, b)| (a - b).abs())
                    .fold(0.0, f64::max)
                    < 1e-6
            });
            if seen {
                continue;
            }
            tried.push(pt.composition.clone());
            diag.splits_tried += 1;
            let z = s.z.clone();
            s.start_from(&[&z, &pt.composition]);
            for (l, other) in points.iter().enumerate().filter(|(_, pt)| negative(pt)) {
                if l != k {
                    s.remember(&other.composition);
                }
            }
            match s.solve_and_add(model, t, p, plan, false, diag) {
                Ok(true) => {
                    done = true;
                    break;
                }
                Ok(false) => {}
                Err(e) => last_err = Some(e),
            }
        }
        s.stab.points = points;
        if done {
            return Ok(());
        }
    }
    Err(last_err.unwrap_or_else(|| {
        Error::NoSolution(format!(
            "at T = {t} K, p = {p} Pa the feed is unstable (tangent-plane distance {}), but \
             every split from its stationary points collapsed to the feed",
            num(s.stab.min_tpd),
            t = num(t),
            p = num(p)
        ))
    }))
}

/// Multiphase PT flash of feed amounts `n` (mol) at T (K) and p (Pa): the phases (a vapour
/// and up to [`MultiphaseOptions::max_liquids`] liquids), their amounts and compositions, at
/// the least Gibbs energy found, with equal fugacities to [`MultiphaseOptions::tolerance`]
/// and a stability certificate.
///
/// Works for every [`FluidModel`]: phases are evaluated only through
/// [`FluidModel::phase_ln_phi`] (so liquid-solution models with no volume roots qualify).
/// Phases are ordered vapour first, then liquids by increasing density (`Liquid3`, `Liquid2`,
/// `Liquid`: the densest liquid is `Liquid`). A state with more phases than allowed is
/// `Error::NoSolution`; non-convergence is `Error::NotConverged`.
///
/// For repeated calls use a [`MultiphaseContext`], which reuses its storage and warm-starts.
///
/// ```
/// use tieline::equilibrium::{MultiphaseOptions, flash_multiphase};
/// use tieline::model::{CubicEos, CubicKind};
/// use tieline::substance::DataBank;
/// let comps = DataBank::embedded().get_many(&["methane", "n-hexane", "water"])?;
/// let m = CubicEos::new(CubicKind::PengRobinson, comps)?
///     .with_pair(0, 2, 0.5, 0.0)?
///     .with_pair(1, 2, 0.5, 0.0)?;
/// let r = flash_multiphase(&m, 300.0, 2.0e6, &[0.3, 0.2, 0.5], &MultiphaseOptions::default())?;
/// assert_eq!(r.phases.len(), 3);
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn flash_multiphase<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    opts: &MultiphaseOptions,
) -> Result<FlashResult> {
    let mut ctx = MultiphaseContext::new(model.num_components());
    ctx.flash(model, t, p, n, opts).cloned()
}

/// The compositions of the first `np` phases except phase `skip`, up to eight of them (a
/// stability trial heading to a phase not listed is only not abandoned early).
fn other_phases(xs: &[Vec<f64>], np: usize, skip: usize) -> ([&[f64]; 8], usize) {
    let mut buf: [&[f64]; 8] = [&[]; 8];
    let mut m = 0;
    for (k, xk) in xs.iter().enumerate().take(np) {
        if k != skip && m < buf.len() {
            buf[m] = xk;
            m += 1;
        }
    }
    (buf, m)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Q's minimum for constant φ reproduces the two-phase Rachford–Rice answer when the
    /// third phase's 1/φ is dominated (it must leave with β = 0).
    #[test]
    fn q_minimum_matches_two_phase_rachford_rice() {
        // K = φ_L/φ_V = (2, 0.5); z = (0.5, 0.5) gives β_V = 0.5 exactly.
        let z = [0.5, 0.5];
        let mut a = [0.0; 2 * MAXP];
        a[..3].copy_from_slice(&[1.0, 2.0, 1e-3]);
        a[MAXP..MAXP + 3].copy_from_slice(&[1.0, 0.5, 1e-3]);
        let mut beta = [0.3, 0.3, 0.3, 0.0];
        assert!(minimise_q(&z, &a, 3, &mut beta, 4));
        assert!(
            (beta[1] - 0.5).abs() < 1e-12 && (beta[0] - 0.5).abs() < 1e-12,
            "{beta:?}"
        );
        assert_eq!(beta[2], 0.0);
        // The same minimum by Newton alone from every fraction positive, and from a start
        // with the third phase already at zero.
        for start in [[0.3, 0.3, 0.3, 0.0], [0.9, 0.1, 0.0, 0.0]] {
            let mut beta = start;
            assert!(minimise_q(&z, &a, 3, &mut beta, 0));
            assert!(
                (beta[1] - 0.5).abs() < 1e-12 && (beta[0] - 0.5).abs() < 1e-12,
                "{start:?}: {beta:?}"
            );
            assert_eq!(beta[2], 0.0);
        }
    }

    #[test]
    fn options_are_checked() {
        let bad = MultiphaseOptions {
            max_liquids: 4,
            ..Default::default()
        };
        assert!(bad.validate().is_err());
        let bad = MultiphaseOptions {
            tolerance: f64::NAN,
            ..Default::default()
        };
        assert!(bad.validate().is_err());
        assert!(MultiphaseOptions::default().validate().is_ok());
        let o: MultiphaseOptions = serde_json::from_str(r#"{"max_liquids": 2}"#).unwrap();
        assert_eq!(o.max_liquids, 2);
        assert!(o.allow_vapor);
    }
}
