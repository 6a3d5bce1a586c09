//! The isothermal–isobaric (PT) flash: the phases, amounts and compositions of least Gibbs
//! energy at given T, p and feed.
//!
//! Method (M. L. Michelsen, "The isothermal flash problem. Part I. Stability" and "Part II.
//! Phase-split calculation", Fluid Phase Equilib. 9 (1982) 1–19 and 21–40):
//! 1. tangent-plane stability test of the feed from several trial phases;
//! 2. for each distinct negative stationary point, a two-phase split started from
//!    K_i = W_i/z_i: successive substitution on ln K with a Rachford–Rice solve per step,
//!    accelerated by the dominant-eigenvalue method (Crowe & Nishio, AIChE J. 21 (1975) 528)
//!    and accepted only when G falls, then Newton steps on G in the vapour amounts with a
//!    Levenberg shift and a backtracking line search (quadratic convergence);
//! 3. the split of least G is kept, and a certificate is computed: the minimum tangent-plane
//!    distance from an independent stability test of a converged phase (≥ 0 up to round-off
//!    when the result is the global minimum among two-phase states);
//! 4. if the certificate still finds a lower tangent plane after one retry, the state has a
//!    third phase: with [`FlashOptions::max_phases`] = 3 its stationary point joins the two
//!    phases of the split and the three-phase problem is solved by the multiphase machinery
//!    of [`super::nphase`] (multiphase Rachford–Rice successive substitution, then Newton on
//!    G in the phase amounts, phase removal and a certificate); otherwise the flash reports
//!    `Error::NoSolution`.
//!
//! A [`FlashContext`] keeps the workspaces and the previous solution: its warm start begins
//! from the previous K-values and skips the feed stability test (simulators' time-stepping
//! use), falling back to the cold path whenever the warm split collapses. Its first step reuses
//! the Cholesky factor of the previous solution's Hessian (a chord step, so the starting point
//! needs no composition derivatives), and the certificate's trials that return to the split's
//! other phase are abandoned as trials returning to the phase under test are.

use super::EquilibriumWork;
use super::nphase::{Plan, Previous, Solver};
use super::rachford_rice;
use super::stability::{StabilityOptions, StabilityResult, stability_for_split, stability_with_known};
use crate::error::{Error, Result, check, num};
use crate::model::{FluidModel, LnPhi, Need, PhaseKind, RootChoice};
use crate::numerics::linalg::{cholesky_solve, shifted_cholesky_solve};
use serde::{Deserialize, Serialize};

/// Options of the PT flash.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct FlashOptions {
    /// Convergence tolerance on max_i |ln f_i^V − ln f_i^L| (dimensionless).
    pub tolerance: f64,
    /// Maximum successive-substitution iterations (all stages together).
    pub max_ss_iterations: usize,
    /// Maximum Newton iterations.
    pub max_newton_iterations: usize,
    /// Also report the tie-line extension (β outside [0, 1]) for single-phase feeds.
    pub negative_flash: bool,
    /// Compute the stability certificate of the result (an extra stability test).
    pub certificate: bool,
    /// Options of the stability tests.
    pub stability: StabilityOptions,
    /// Most fluid phases the result may have: 2, or 3 to add a third phase when the
    /// certificate of the best two-phase split finds a lower tangent plane (needs
    /// `certificate`). With 2 such a state is reported as `Error::NoSolution`.
    pub max_phases: usize,
}

impl Default for FlashOptions {
    fn default() -> Self {
        FlashOptions {
            tolerance: 1e-10,
            max_ss_iterations: 400,
            max_newton_iterations: 40,
            negative_flash: false,
            certificate: true,
            stability: StabilityOptions::default(),
            max_phases: 2,
        }
    }
}

impl FlashOptions {
    fn validate(&self) -> Result<()> {
        if !(self.tolerance > 0.0 && self.tolerance < 1e-2) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in (0, 1e-2) is required", num(self.tolerance)),
            ));
        }
        let most = crate::limits::MAX_ITERATIONS;
        check::count("max_ss_iterations", self.max_ss_iterations, 0, most)?;
        check::count("max_newton_iterations", self.max_newton_iterations, 0, most)?;
        check::count("stability max_iterations", self.stability.max_iterations, 0, most)?;
        if !(2..=3).contains(&self.max_phases) {
            return Err(Error::invalid(
                "max_phases",
                format!("{}; 2 or 3 is required", self.max_phases),
            ));
        }
        if !(self.stability.tolerance > 0.0 && self.stability.tolerance < 1e-2) {
            return Err(Error::invalid(
                "stability tolerance",
                format!("{}; a value in (0, 1e-2) is required", num(self.stability.tolerance)),
            ));
        }
        self.stability.check_threshold()
    }
}

/// One phase of a flash result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct Phase {
    /// Kind of phase (naming rule: see [`PhaseKind`]).
    pub kind: Option<PhaseKind>,
    /// Amount, mol.
    pub amount: f64,
    /// Phase fraction: amount of this phase over the total feed amount.
    pub fraction: f64,
    /// Mole fractions.
    pub composition: Vec<f64>,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Compressibility factor.
    pub z: f64,
    /// ln φ_i.
    pub ln_phi: Vec<f64>,
}

impl Phase {
    /// The phase as a [`PhaseState`](crate::model::PhaseState) at (T, p), for properties.
    pub fn state(&self, t: f64, p: f64) -> crate::model::PhaseState {
        crate::model::PhaseState {
            t,
            p,
            n: self.composition.iter().map(|x| x * self.amount).collect(),
            v: self.molar_volume * self.amount,
            kind: self.kind.unwrap_or(PhaseKind::Vapor),
        }
    }
}

/// The extension of the tie line through a single-phase feed (negative flash): β outside
/// [0, 1] with the equilibrium compositions of the extended tie line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TieLine {
    /// Vapour-side fraction β (outside [0, 1] for a single-phase feed).
    pub beta: f64,
    /// Liquid-side composition.
    pub x: Vec<f64>,
    /// Vapour-side composition.
    pub y: Vec<f64>,
}

/// How a flash reached its answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct Diagnostics {
    /// Iterations of the stability test of the feed (0 on a warm start).
    pub stability_iterations: usize,
    /// Successive-substitution iterations.
    pub ss_iterations: usize,
    /// Accepted dominant-eigenvalue accelerations.
    pub accelerations: usize,
    /// Newton iterations.
    pub newton_iterations: usize,
    /// Final max_i |ln f_i^V − ln f_i^L| (0 for a single phase).
    pub residual: f64,
    /// Minimum tangent-plane distance from an independent stability test of the result
    /// (dimensionless; `None` when switched off). ≥ 0 up to round-off for a certified minimum.
    pub certificate: Option<f64>,
    /// Iterations of the certificate's stability test.
    pub certificate_iterations: usize,
    /// Whether the warm start was used and kept.
    pub warm_start: bool,
    /// Number of two-phase splits tried (one per distinct negative stationary point).
    pub splits_tried: usize,
    /// Reduced Gibbs energy of the result, Σ_phases Σ_i n_i (ln x_i + ln φ_i) per mol of feed
    /// (dimensionless; relative to the pure ideal gases at T and p).
    pub gibbs: f64,
}

/// Result of a PT flash.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct FlashResult {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Feed amounts, mol.
    pub feed: Vec<f64>,
    /// The phases present, vapour first, then liquids by increasing density.
    pub phases: Vec<Phase>,
    /// Tie-line extension for a single-phase feed, when requested with
    /// [`FlashOptions::negative_flash`] and found.
    pub tie_line: Option<TieLine>,
    /// How the answer was reached.
    pub diagnostics: Diagnostics,
}

impl FlashResult {
    /// Vapour-phase fraction (0 if no vapour).
    pub fn vapor_fraction(&self) -> f64 {
        self.phases
            .iter()
            .filter(|p| p.kind == Some(PhaseKind::Vapor))
            .map(|p| p.fraction)
            .sum()
    }

    /// Mixture properties of the whole multiphase result (amount-weighted molar h, s, g, u, a,
    /// v, cp; per mol of feed). The two-phase cp is the sum of the phase cps at frozen phase
    /// amounts and compositions.
    pub fn mixture_properties<M: FluidModel + ?Sized>(&self, model: &M) -> Result<MixtureProperties> {
        let ntot: f64 = self.feed.iter().sum();
        let mut m = MixtureProperties::default();
        for ph in &self.phases {
            let pr = ph.state(self.temperature, self.pressure).properties(model)?;
            let f = ph.amount / ntot;
            m.molar_volume += f * pr.molar_volume;
            m.enthalpy += f * pr.enthalpy;
            m.entropy += f * pr.entropy;
            m.gibbs += f * pr.gibbs;
            m.internal_energy += f * pr.internal_energy;
            m.helmholtz += f * pr.helmholtz;
            m.cp_frozen += f * pr.cp;
            m.mass += ph.amount * pr.molar_mass;
        }
        m.mass_density = m.mass / (m.molar_volume * ntot);
        Ok(m)
    }
}

/// Amount-weighted properties of a multiphase result, per mol of feed (SI units).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
pub struct MixtureProperties {
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Molar enthalpy, J/mol.
    pub enthalpy: f64,
    /// Molar entropy, J/(mol K).
    pub entropy: f64,
    /// Molar Gibbs energy, J/mol.
    pub gibbs: f64,
    /// Molar internal energy, J/mol.
    pub internal_energy: f64,
    /// Molar Helmholtz energy, J/mol.
    pub helmholtz: f64,
    /// Frozen-composition isobaric heat capacity, J/(mol K).
    pub cp_frozen: f64,
    /// Total mass, kg.
    pub mass: f64,
    /// Overall mass density, kg/m3.
    pub mass_density: f64,
}

/// State of a converged or candidate two-phase split (per mol of feed).
#[derive(Debug, Clone, Default)]
struct Split {
    beta: f64,
    omb: f64,
    x: Vec<f64>,
    y: Vec<f64>,
    phi_x: LnPhi,
    phi_y: LnPhi,
    gibbs: f64,
    residual: f64,
    /// Roots the Newton steps keep each phase on (`Stable` until first decided).
    root_x: RootChoice,
    root_y: RootChoice,
}

impl Split {
    fn new(nc: usize) -> Self {
        Split {
            x: vec![0.0; nc],
            y: vec![0.0; nc],
            phi_x: LnPhi::new(nc),
            phi_y: LnPhi::new(nc),
            ..Default::default()
        }
    }

    fn copy_from(&mut self, o: &Split) {
        self.beta = o.beta;
        self.omb = o.omb;
        self.x.copy_from_slice(&o.x);
        self.y.copy_from_slice(&o.y);
        self.phi_x.copy_from(&o.phi_x);
        self.phi_y.copy_from(&o.phi_y);
        self.gibbs = o.gibbs;
        self.residual = o.residual;
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum SplitOutcome {
    Converged,
    /// Converged or collapsed with β outside (0, 1), or to the trivial solution.
    Collapsed,
    NotConverged,
}

/// Reusable flash solver state: workspaces plus the previous solution for warm starts.
/// Used by one thread at a time; create one per thread.
#[derive(Debug, Clone, Default)]
pub struct FlashContext {
    ws: EquilibriumWork,
    split: Split,
    best: Split,
    stab: StabilityResult,
    cert: StabilityResult,
    prev_lnk: Vec<f64>,
    prev_two_phase: bool,
    /// Cholesky factor of the Newton Hessian at the split whose K-values are `prev_lnk`
    /// (valid when `prev_factor_valid`), the first step of the next warm start.
    prev_factor: Vec<f64>,
    prev_factor_valid: bool,
    /// The split whose K-values are `prev_lnk` (β, x, y in `prev_split`) and its feed: a warm
    /// start with the same feed begins from it without a Rachford–Rice solve.
    prev_split: Split,
    prev_z: Vec<f64>,
    /// Whether `ws.chol` holds a factor from the Newton iterations of the current split.
    newton_factored: bool,
    /// The multiphase solver, whose phase set is this call's answer when `multi_used`.
    multi: Solver,
    multi_used: bool,
    /// The previous call's answer when it had three phases, the start of the next call's
    /// multiphase solve (with a third phase allowed).
    multi_prev: Option<Previous>,
    /// Whether `ws.phi_feed` holds ln φ of this call's feed (set by the feed's stability test).
    feed_evaluated: bool,
    result: FlashResult,
    nc: usize,
    /// Newton variables: y-phase amounts v and x-phase amounts l = z − v, both carried so
    /// that a component almost wholly in one phase keeps its tiny amount in the other exactly.
    newton_v: Vec<f64>,
    newton_v0: Vec<f64>,
    newton_l: Vec<f64>,
    newton_l0: Vec<f64>,
}

impl FlashContext {
    /// A context for models of `nc` components (resized automatically if used with another).
    pub fn new(nc: usize) -> Self {
        let mut c = FlashContext::default();
        c.resize(nc);
        c
    }

    fn resize(&mut self, nc: usize) {
        if self.nc == nc && !self.prev_lnk.is_empty() {
            return;
        }
        self.nc = nc;
        self.ws = EquilibriumWork::new(nc);
        self.split = Split::new(nc);
        self.best = Split::new(nc);
        self.prev_lnk = vec![0.0; nc];
        self.prev_two_phase = false;
        self.prev_factor = vec![0.0; nc * nc];
        self.prev_factor_valid = false;
        self.prev_split = Split::new(nc);
        self.prev_z = vec![0.0; nc];
        self.newton_v = vec![0.0; nc];
        self.newton_v0 = vec![0.0; nc];
        self.newton_l = vec![0.0; nc];
        self.newton_l0 = vec![0.0; nc];
        self.result.feed = vec![0.0; nc];
        self.result.phases = Vec::with_capacity(2);
    }

    /// Forgets the previous solution, so the next call starts cold.
    pub fn reset(&mut self) {
        self.prev_two_phase = false;
        self.prev_factor_valid = false;
        self.multi_prev = None;
    }

    /// The last result (valid after a successful call).
    pub fn last(&self) -> &FlashResult {
        &self.result
    }

    /// PT flash of feed amounts `n` (mol) at T (K) and p (Pa), warm-started from the
    /// previous call of this context when that was a two-phase result of the same model size.
    /// The result lives in the context (no allocation in steady state without a certificate).
    pub fn flash<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        n: &[f64],
        opts: &FlashOptions,
    ) -> Result<&FlashResult> {
        opts.validate()?;
        check::temperature(t)?;
        check::pressure(p)?;
        let nc = model.num_components();
        let ntot = check::amounts(n, nc)?;
        self.resize(nc);
        for i in 0..nc {
            self.ws.z[i] = n[i] / ntot;
        }
        let mut diag = Diagnostics::default();
        if let Err(e) = self.solve(model, t, p, n, ntot, opts, &mut diag) {
            self.multi_prev = None;
            let its = vec![
                ("stability".into(), diag.stability_iterations),
                ("SS".into(), diag.ss_iterations),
                ("Newton".into(), diag.newton_iterations),
            ];
            return Err(e.from_inside("PT flash", t, p, its, opts.tolerance));
        }
        Ok(&self.result)
    }

    /// The flash proper, on checked inputs (the feed already normalised into `ws.z`).
    #[allow(clippy::too_many_arguments)]
    fn solve<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        n: &[f64],
        ntot: f64,
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let mut found = false;
        self.feed_evaluated = false;
        self.multi_used = false;
        // A three-phase answer last time: the phase set starts from it (no stability test of
        // the feed, the answer certified by the multiphase solver as on its cold path).
        if opts.max_phases >= 3
            && let Some(prev) = &self.multi_prev
        {
            self.multi.resize(self.nc);
            self.multi.set_feed(&self.ws.z);
            if prev.warm_start(&mut self.multi, model, t, p, &three_phase_plan(opts), diag) {
                self.multi_used = true;
                return self.finish(model, t, p, n, ntot, true, opts, diag.clone());
            }
        }
        if self.prev_two_phase {
            self.ws.lnk.copy_from_slice(&self.prev_lnk);
            let out = self.two_phase(model, t, p, opts, true, diag)?;
            if out == SplitOutcome::Converged {
                self.best.copy_from(&self.split);
                diag.warm_start = true;
                diag.splits_tried = 1;
                found = true;
            }
        }
        if !found {
            found = self.cold(model, t, p, opts, diag)?;
        }
        if found && opts.certificate {
            self.certify(model, t, p, opts, diag)?;
        } else if !found {
            diag.certificate = opts.certificate.then_some(self.stab.min_tpd);
        }
        self.finish(model, t, p, n, ntot, found, opts, diag.clone())
    }

    /// Cold path: stability of the feed, then a split per negative stationary point.
    fn cold<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<bool> {
        let nc = self.nc;
        let z = self.ws.z.clone();
        let sopts = StabilityOptions {
            early_exit: true,
            ..opts.stability
        };
        stability_for_split(
            model,
            t,
            p,
            &z,
            RootChoice::Stable,
            &sopts,
            &mut self.ws,
            &mut self.stab,
        )?;
        self.feed_evaluated = true;
        diag.stability_iterations = self.stab.iterations;
        if self.stab.stable {
            return Ok(false);
        }
        let mut found = false;
        let npts = self.stab.points.len();
        let mut last_err: Option<Error> = None;
        for k in 0..npts {
            if self.stab.points[k].tpd >= -opts.stability.threshold {
                continue;
            }
            for i in 0..nc {
                let w = self.stab.points[k].amounts[i];
                self.ws.lnk[i] = if self.ws.z[i] > 0.0 {
                    (w / self.ws.z[i]).ln()
                } else {
                    0.0
                };
            }
            diag.splits_tried += 1;
            match self.two_phase(model, t, p, opts, false, diag) {
                Ok(SplitOutcome::Converged) => {
                    if !found || self.split.gibbs < self.best.gibbs - 1e-12 {
                        self.best.copy_from(&self.split);
                    }
                    found = true;
                }
                Ok(_) => {}
                Err(e) => last_err = Some(e),
            }
        }
        if !found {
            // The feed is unstable but no split converged: report, never guess.
            return Err(last_err.unwrap_or_else(|| {
                Error::not_converged(
                    "two-phase split",
                    vec![
                        ("stability".into(), diag.stability_iterations),
                        ("SS".into(), diag.ss_iterations),
                        ("Newton".into(), diag.newton_iterations),
                    ],
                    self.split.residual,
                    opts.tolerance,
                )
            }));
        }
        Ok(true)
    }

    /// Certificate: stability test of the liquid-side phase of the best split; if it reveals
    /// a lower tangent plane, try once more from that stationary point.
    fn certify<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let nc = self.nc;
        for attempt in 0..2 {
            let x = self.best.x.clone();
            let y = self.best.y.clone();
            self.certificate_of(model, t, p, &x, &y, opts, diag)?;
            // With a third phase allowed and at least three components, the multiphase solver
            // starts from the split and the new stationary point at once (it removes a phase
            // that does not belong) rather than after a second two-phase attempt. A binary has
            // three phases only on a line of (T, p) (the phase rule), so there the second
            // two-phase attempt comes first.
            if self.cert.stable || attempt == 1 || (opts.max_phases >= 3 && nc >= 3) {
                if !self.cert.stable && opts.max_phases >= 3 {
                    return self.add_third_phase(model, t, p, opts, diag);
                }
                if !self.cert.stable {
                    return Err(Error::NoSolution(format!(
                        "at T = {t} K, p = {p} Pa the least-Gibbs state has more than two phases \
                         (a third phase lowers G: tangent-plane distance {}); \
                         allow a third phase (max_phases = 3) to compute it",
                        num(self.cert.min_tpd),
                        t = num(t),
                        p = num(p)
                    )));
                }
                return Ok(());
            }
            // Retry: K from the new stationary point against the feed.
            let w = self.cert.points[0].composition.clone();
            let z = self.ws.z.clone();
            model.phase_ln_phi(
                t,
                p,
                &z,
                RootChoice::Stable,
                Need::VALUES,
                &mut self.ws.fw,
                &mut self.ws.phi_a,
            )?;
            model.phase_ln_phi(
                t,
                p,
                &w,
                RootChoice::Stable,
                Need::VALUES,
                &mut self.ws.fw,
                &mut self.ws.phi_b,
            )?;
            for i in 0..nc {
                self.ws.lnk[i] = self.ws.phi_a.ln_phi[i] - self.ws.phi_b.ln_phi[i];
            }
            diag.splits_tried += 1;
            if let Ok(SplitOutcome::Converged) = self.two_phase(model, t, p, opts, false, diag)
                && self.split.gibbs < self.best.gibbs
            {
                self.best.copy_from(&self.split);
            }
        }
        Ok(())
    }

    /// Evaluates the split at the current ln K: Rachford–Rice (negative region allowed),
    /// compositions, ln φ of both phases, G, and the residual. Returns `false` when the
    /// Rachford–Rice equation has no root.
    fn eval_split<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64) -> Result<bool> {
        if !self.rr_split() {
            return Ok(false);
        }
        let nc = self.nc;
        let ws = &mut self.ws;
        let s = &mut self.split;
        model.phase_ln_phi(t, p, &s.x, RootChoice::Stable, Need::VALUES, &mut ws.fw, &mut s.phi_x)?;
        model.phase_ln_phi(t, p, &s.y, RootChoice::Stable, Need::VALUES, &mut ws.fw, &mut s.phi_y)?;
        s.gibbs = gibbs(&ws.z, s);
        let mut err = 0.0f64;
        for i in 0..nc {
            if ws.z[i] > 0.0 {
                let r = ws.lnk[i] + s.phi_y.ln_phi[i] - s.phi_x.ln_phi[i];
                err = err.max(r.abs());
                ws.g[i] = s.phi_x.ln_phi[i] - s.phi_y.ln_phi[i];
            } else {
                ws.g[i] = 0.0;
            }
        }
        s.residual = err;
        Ok(true)
    }

    /// Sets the split's β, x, y from the current ln K by Rachford–Rice alone (no fugacity
    /// evaluation). Returns `false` when no root exists.
    fn rr_split(&mut self) -> bool {
        let ws = &mut self.ws;
        for i in 0..self.nc {
            ws.k[i] = ws.lnk[i].exp();
        }
        let Ok(rr) = rachford_rice::solve(&ws.z, &ws.k, true) else {
            return false;
        };
        let s = &mut self.split;
        s.beta = rr.beta;
        s.omb = rr.one_minus_beta;
        rachford_rice::compositions(&ws.z, &ws.k, &rr, &mut s.x, &mut s.y);
        normalise(&mut s.x);
        normalise(&mut s.y);
        true
    }

    /// The stability test of phase composition `x` into `self.cert` (stopping at the first
    /// negative stationary point), recorded as the certificate in `diag`; `y` is the other
    /// phase of the split, whose neighbourhood the test's trials need not explore again.
    #[allow(clippy::too_many_arguments)]
    fn certificate_of<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        x: &[f64],
        y: &[f64],
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let sopts = StabilityOptions {
            early_exit: true,
            ..opts.stability
        };
        stability_with_known(
            model,
            t,
            p,
            x,
            RootChoice::Stable,
            &sopts,
            &[y],
            false,
            &mut self.ws,
            &mut self.cert,
        )?;
        diag.certificate_iterations += self.cert.iterations;
        diag.certificate = Some(self.cert.min_tpd);
        Ok(())
    }

    /// The certificate of the best two-phase split found a lower tangent plane at the
    /// stationary point `cert.points[0]`: add it as a third phase to the split's two and solve
    /// with the multiphase solver (which removes a phase that leaves and certifies the
    /// answer by a stability test of its largest phase).
    fn add_third_phase<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<()> {
        let tpd = self.cert.min_tpd;
        let plan = three_phase_plan(opts);
        self.multi.resize(self.nc);
        self.multi.set_feed(&self.ws.z);
        let w = &self.cert.points[0].composition;
        self.multi.start_from(&[&self.best.y, &self.best.x, w]);
        diag.splits_tried += 1;
        if self.multi.solve_and_add(model, t, p, &plan, false, diag)? {
            self.multi_used = true;
            return Ok(());
        }
        Err(Error::NoSolution(format!(
            "at T = {t} K, p = {p} Pa a third phase lowers G below the best two-phase split \
             (tangent-plane distance {tpd}), but the multiphase search from it collapsed",
            t = num(t),
            p = num(p),
            tpd = num(tpd)
        )))
    }

    /// Two-phase split from `ws.lnk`. On `Converged`, `self.split` holds the split and
    /// `prev_lnk` the K-values. A warm start goes straight to Newton.
    fn two_phase<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        warm: bool,
        diag: &mut Diagnostics,
    ) -> Result<SplitOutcome> {
        let nc = self.nc;
        self.newton_factored = false;
        if warm {
            if self.prev_z == self.ws.z {
                // The Rachford–Rice solution of `prev_lnk` for this feed is the previous split.
                let (s, q) = (&mut self.split, &self.prev_split);
                s.beta = q.beta;
                s.omb = q.omb;
                s.x.copy_from_slice(&q.x);
                s.y.copy_from_slice(&q.y);
            } else if !self.rr_split() {
                return Ok(SplitOutcome::Collapsed);
            }
            let chord = self.prev_factor_valid;
            return match self.newton_from(model, t, p, opts, chord, diag)? {
                SplitOutcome::Converged => self.accept(),
                other => Ok(other),
            };
        }
        let mut ss_done = 0usize;
        let mut last_g = f64::INFINITY;
        let mut last_err = f64::INFINITY;
        let mut newton_tries = 0;
        let mut next_newton = 0usize;
        let mut evaluated = false;
        loop {
            if !evaluated && !self.eval_split(model, t, p)? {
                return Ok(SplitOutcome::Collapsed);
            }
            evaluated = false;
            let err = self.split.residual;
            if err < opts.tolerance {
                return self.accept();
            }
            let trivial = self
                .ws
                .lnk
                .iter()
                .zip(&self.ws.z)
                .filter(|(_, z)| **z > 0.0)
                .all(|(l, _)| l.abs() < 1e-4);
            if trivial {
                return Ok(SplitOutcome::Collapsed);
            }
            // Switch to Newton once successive substitution has done its cheap work: the
            // residual is small, or SS is slow (near-critical; Michelsen 1982b).
            let slow = ss_done >= 3 && err > 0.6 * last_err;
            if newton_tries < 3 && ss_done >= next_newton.max(3) && (err < 1e-3 || slow || ss_done >= next_newton + 15)
            {
                newton_tries += 1;
                match self.newton(model, t, p, opts, diag)? {
                    SplitOutcome::Converged => return self.accept(),
                    SplitOutcome::Collapsed => return Ok(SplitOutcome::Collapsed),
                    SplitOutcome::NotConverged => {
                        // Back to (accelerated) successive substitution from Newton's last
                        // accepted point; Newton may be tried again later.
                        next_newton = ss_done + 20;
                        last_err = f64::INFINITY;
                        continue;
                    }
                }
            }
            if ss_done >= opts.max_ss_iterations {
                return Err(Error::not_converged(
                    "two-phase split",
                    vec![
                        ("SS".into(), diag.ss_iterations),
                        ("Newton".into(), diag.newton_iterations),
                    ],
                    self.split.residual,
                    opts.tolerance,
                ));
            }
            // Successive substitution: ln K ← ln φ^x − ln φ^y (held in ws.g).
            ss_done += 1;
            diag.ss_iterations += 1;
            let ws = &mut self.ws;
            ws.hist.swap(0, 1);
            for i in 0..nc {
                ws.hist[1][i] = ws.g[i] - ws.lnk[i];
                ws.lnk[i] = ws.g[i];
            }
            // Dominant-eigenvalue extrapolation every fifth step, kept only if G falls.
            if ss_done.is_multiple_of(5) {
                let (mut num, mut den) = (0.0, 0.0);
                for i in 0..nc {
                    num += ws.hist[1][i] * ws.hist[1][i];
                    den += ws.hist[0][i] * ws.hist[1][i];
                }
                let lambda = num / den;
                if lambda.is_finite() && lambda > 0.0 && lambda < 0.99 {
                    let fac = lambda / (1.0 - lambda);
                    for i in 0..nc {
                        ws.w_old[i] = ws.lnk[i];
                        ws.lnk[i] += fac * ws.hist[1][i];
                    }
                    let g_before = self.split.gibbs.min(last_g);
                    if self.eval_split(model, t, p)? && self.split.gibbs < g_before {
                        diag.accelerations += 1;
                        evaluated = true;
                    } else {
                        let ws = &mut self.ws;
                        ws.lnk.copy_from_slice(&ws.w_old);
                    }
                }
            }
            last_g = self.split.gibbs;
            last_err = err;
        }
    }

    fn accept(&mut self) -> Result<SplitOutcome> {
        let s = &self.split;
        let trivial = s.x.iter().zip(&s.y).all(|(a, b)| (a - b).abs() < 1e-9);
        if !(s.beta > 0.0 && s.omb > 0.0) || trivial {
            return Ok(SplitOutcome::Collapsed);
        }
        self.prev_lnk.copy_from_slice(&self.ws.lnk);
        self.prev_z.copy_from_slice(&self.ws.z);
        let (q, s) = (&mut self.prev_split, &self.split);
        q.beta = s.beta;
        q.omb = s.omb;
        q.x.copy_from_slice(&s.x);
        q.y.copy_from_slice(&s.y);
        self.prev_factor_valid = self.newton_factored;
        if self.newton_factored {
            self.prev_factor.copy_from_slice(&self.ws.chol);
        }
        Ok(SplitOutcome::Converged)
    }

    /// Whether each phase of the split is on its least-Gibbs volume root. Resets a phase that
    /// is not to `RootChoice::Stable` and returns `false`.
    fn roots_still_stable<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64) -> Result<bool> {
        let mut ok = true;
        let s = &mut self.split;
        for (comp, root) in [(&s.x, &mut s.root_x), (&s.y, &mut s.root_y)] {
            if *root == RootChoice::Stable {
                continue;
            }
            model.phase_ln_phi(
                t,
                p,
                comp,
                RootChoice::Stable,
                Need::VALUES,
                &mut self.ws.fw,
                &mut self.ws.phi_a,
            )?;
            if self.ws.phi_a.two_roots && self.ws.phi_a.root != *root {
                *root = RootChoice::Stable;
                ok = false;
            }
        }
        Ok(ok)
    }

    /// Sets the Newton point to v0 + α Δv, l0 − α Δv.
    fn move_newton(&mut self, alpha: f64) {
        for i in 0..self.nc {
            self.newton_v[i] = self.newton_v0[i] + alpha * self.ws.step[i];
            self.newton_l[i] = self.newton_l0[i] - alpha * self.ws.step[i];
        }
    }

    /// Sets the Newton point to v0 + Δv, l0 − Δv, except that a component whose amount in a
    /// phase the step would make non-positive moves in the logarithm of that amount:
    /// v_i = v0_i exp(Δv_i/v0_i) (or l_i = l0_i exp(−Δv_i/l0_i)), the other phase taking the
    /// rest of the component's feed.
    fn move_newton_log(&mut self) {
        for i in 0..self.nc {
            let (v0, l0, dv) = (self.newton_v0[i], self.newton_l0[i], self.ws.step[i]);
            let (v, l) = if dv < 0.0 && v0 + dv <= 0.0 {
                let v = v0 * (dv / v0).exp();
                (v, l0 + (v0 - v))
            } else if dv > 0.0 && l0 - dv <= 0.0 {
                let l = l0 * (-dv / l0).exp();
                (v0 + (l0 - l), l)
            } else {
                (v0 + dv, l0 - dv)
            };
            self.newton_v[i] = v;
            self.newton_l[i] = l;
        }
    }

    /// Evaluates the split at y-phase amounts `newton_v` with composition derivatives: phase
    /// compositions, ln φ, G, the gradient (into `ws.rhs`, negated) and the residual.
    /// Returns `false` if a phase amount is not positive.
    fn eval_newton<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64) -> Result<bool> {
        self.eval_newton_with(model, t, p, Need::COMPOSITION)
    }

    /// As [`Self::eval_newton`], with the derivatives of `need` (values only for a point
    /// expected to be final, or to be left by a chord step).
    fn eval_newton_with<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, p: f64, need: Need) -> Result<bool> {
        let nc = self.nc;
        let ws = &mut self.ws;
        let s = &mut self.split;
        let beta: f64 = self.newton_v.iter().sum();
        let omb: f64 = self.newton_l.iter().sum();
        if (0..nc).any(|i| ws.z[i] > 0.0 && !(self.newton_v[i] > 0.0 && self.newton_l[i] > 0.0)) {
            return Ok(false);
        }
        if !(beta > 0.0 && omb > 0.0) {
            return Ok(false);
        }
        for i in 0..nc {
            s.y[i] = self.newton_v[i] / beta;
            s.x[i] = self.newton_l[i] / omb;
        }
        // Each phase stays on the root it took at the previous step (one evaluation with
        // derivatives instead of two); `newton` re-checks the choice at convergence.
        model.phase_ln_phi(t, p, &s.x, s.root_x, need, &mut ws.fw, &mut s.phi_x)?;
        model.phase_ln_phi(t, p, &s.y, s.root_y, need, &mut ws.fw, &mut s.phi_y)?;
        if s.root_x == RootChoice::Stable {
            s.root_x = s.phi_x.root;
        }
        if s.root_y == RootChoice::Stable {
            s.root_y = s.phi_y.root;
        }
        s.beta = beta;
        s.omb = omb;
        // G (as `gibbs`) and the gradient ln f^y − ln f^x from one logarithm per entry
        // (every y_i, x_i of a present component is positive here).
        let mut err = 0.0f64;
        let mut g = 0.0;
        for i in 0..nc {
            if ws.z[i] > 0.0 {
                let mu_y = s.y[i].ln() + s.phi_y.ln_phi[i];
                let mu_x = s.x[i].ln() + s.phi_x.ln_phi[i];
                g += beta * s.y[i] * mu_y + omb * s.x[i] * mu_x;
                let gi = mu_y - mu_x;
                ws.rhs[i] = -gi;
                err = err.max(gi.abs());
            } else {
                ws.rhs[i] = 0.0;
            }
        }
        s.gibbs = g;
        s.residual = if err.is_finite() { err } else { f64::INFINITY };
        Ok(true)
    }

    /// Newton iterations on G in the y-phase amounts v_i = β y_i (per mol of feed) from the
    /// current split's β and y: H Δv = −g with H_ij = ∂ln f_i^y/∂v_j + ∂ln f_i^x/∂l_j, a
    /// Levenberg shift where H is not positive definite, a fraction-to-boundary rule and a
    /// backtracking line search on G. Every candidate is evaluated with derivatives, so an
    /// accepted one is ready for the next step. On return `ws.lnk` holds ln K of the last
    /// accepted point.
    fn newton<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        diag: &mut Diagnostics,
    ) -> Result<SplitOutcome> {
        self.newton_from(model, t, p, opts, false, diag)
    }

    /// As [`Self::newton`]; with `chord`, the first step is a chord step with the Hessian
    /// factor of the previous call's converged split (`prev_factor`), so that the starting
    /// point is evaluated without derivatives. A warm start at a nearby (T, p) begins so: the
    /// step −H_prev⁻¹ g is the first-order predictor of the change of the solution, and a
    /// step that does not lower G falls back to a full Newton step from the same point.
    fn newton_from<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
        chord_start: bool,
        diag: &mut Diagnostics,
    ) -> Result<SplitOutcome> {
        let nc = self.nc;
        if !(self.split.beta > 0.0 && self.split.omb > 0.0) {
            return Ok(SplitOutcome::NotConverged);
        }
        for i in 0..nc {
            self.newton_v[i] = self.split.beta * self.split.y[i];
            self.newton_l[i] = self.split.omb * self.split.x[i];
        }
        self.split.root_x = RootChoice::Stable;
        self.split.root_y = RootChoice::Stable;
        let need = if chord_start { Need::VALUES } else { Need::COMPOSITION };
        if !self.eval_newton_with(model, t, p, need)? {
            return Ok(SplitOutcome::NotConverged);
        }
        if chord_start {
            self.ws.chol.copy_from_slice(&self.prev_factor);
            self.newton_factored = true;
        }
        let set_lnk = |me: &mut Self| {
            for i in 0..me.nc {
                me.ws.lnk[i] = if me.ws.z[i] > 0.0 {
                    me.split.phi_x.ln_phi[i] - me.split.phi_y.ln_phi[i]
                } else {
                    0.0
                };
            }
        };
        set_lnk(self);
        // Whether the current point carries composition derivatives. In the quadratic regime
        // the last points are evaluated without them, and a point without them is left by a
        // chord step: the previous Hessian's factor (still in `ws.chol`) with the new
        // gradient (a simplified Newton step; Kelley, "Iterative Methods for Linear and
        // Nonlinear Equations", SIAM 1995, §5.4, from memory).
        let mut have_dn = !chord_start;
        for _ in 0..opts.max_newton_iterations {
            let err0 = self.split.residual;
            if err0 < opts.tolerance {
                if self.roots_still_stable(model, t, p)? {
                    return Ok(SplitOutcome::Converged);
                }
                // A phase sits on the wrong root: re-evaluate on the stable ones and go on.
                if !self.eval_newton(model, t, p)? {
                    return Ok(SplitOutcome::NotConverged);
                }
                have_dn = true;
                set_lnk(self);
                continue;
            }
            if !err0.is_finite() {
                return Ok(SplitOutcome::NotConverged);
            }
            diag.newton_iterations += 1;
            let chord = !have_dn;
            if chord {
                self.ws.step.copy_from_slice(&self.ws.rhs);
                cholesky_solve(&self.ws.chol, nc, &mut self.ws.step);
            } else {
                let ws = &mut self.ws;
                let s = &self.split;
                // Only the lower triangle: the factorisation reads no more.
                let (ib, io) = (1.0 / s.beta, 1.0 / s.omb);
                let c = ib + io;
                for i in 0..nc {
                    let row = i * nc;
                    let zi = ws.z[i] > 0.0;
                    for j in 0..=i {
                        ws.hess[row + j] = if zi && ws.z[j] > 0.0 {
                            s.phi_y.dn[row + j] * ib + s.phi_x.dn[row + j] * io - c
                        } else {
                            0.0
                        };
                    }
                    ws.hess[row + i] += if zi {
                        1.0 / self.newton_v[i] + 1.0 / self.newton_l[i]
                    } else {
                        1.0
                    };
                }
                ws.step.copy_from_slice(&ws.rhs);
                if shifted_cholesky_solve(&ws.hess, nc, &mut ws.step, &mut ws.chol, 0.0).is_none() {
                    return Ok(SplitOutcome::NotConverged);
                }
                self.newton_factored = true;
            }
            // Quadratic regime (common practice, no source: a residual below 1e-3 before a
            // Newton step): the candidate is evaluated without derivatives.
            let need = if err0 < 1e-3 { Need::VALUES } else { Need::COMPOSITION };
            // Keep 0 < v_i < z_i (fraction to the boundary 0.9).
            let mut alpha: f64 = 1.0;
            for i in 0..nc {
                let z = self.ws.z[i];
                if z <= 0.0 {
                    continue;
                }
                let (v, l, dv) = (self.newton_v[i], self.newton_l[i], self.ws.step[i]);
                if dv < 0.0 && v + dv <= 0.0 {
                    alpha = alpha.min(0.9 * v / -dv);
                } else if dv > 0.0 && l - dv <= 0.0 {
                    alpha = alpha.min(0.9 * l / dv);
                }
            }
            let g0 = self.split.gibbs;
            self.newton_v0.copy_from_slice(&self.newton_v);
            self.newton_l0.copy_from_slice(&self.newton_l);
            let mut accepted = false;
            // A full step that would empty a phase of a component asks for a change of its
            // amount by orders of magnitude (a trace component: the diagonal 1/v_i dominates
            // its row of H, and Δv_i/v_i ≈ −(ln f_i^y − ln f_i^x)). Cutting the whole step
            // to the boundary lets that amount fall by a factor of ten per iteration; first
            // try the full step with such an amount moved in its logarithm instead,
            // v_i ← v_i exp(Δv_i/v_i) (the same first-order change; likewise l_i), kept if
            // G falls (common practice, no source).
            if alpha < 1.0 && !chord {
                self.move_newton_log();
                if self.eval_newton_with(model, t, p, need)? && self.split.gibbs <= g0 + 1e-14 * g0.abs().max(1.0) {
                    accepted = true;
                }
            }
            for _ in 0..if accepted { 0 } else { 12 } {
                self.move_newton(alpha);
                if self.eval_newton_with(model, t, p, need)? {
                    let g1 = self.split.gibbs;
                    let err1 = self.split.residual;
                    // Near convergence G changes by round-off only: a falling residual suffices.
                    if g1 <= g0 + 1e-14 * g0.abs().max(1.0) || (err0 < 1e-6 && err1 < err0) {
                        accepted = true;
                        break;
                    }
                }
                if chord {
                    break;
                }
                alpha *= 0.5;
            }
            if !accepted && chord {
                // The chord step did not descend: back to the point it left, with derivatives,
                // for a full Newton step.
                self.move_newton(0.0);
                if !self.eval_newton(model, t, p)? {
                    return Ok(SplitOutcome::NotConverged);
                }
                have_dn = true;
                set_lnk(self);
                continue;
            }
            if !accepted {
                // Restore the last accepted point (its ln K is still in ws.lnk).
                self.move_newton(0.0);
                return Ok(SplitOutcome::NotConverged);
            }
            have_dn = need.composition;
            if self.split.residual >= opts.tolerance && !have_dn && self.split.residual > 0.1 * err0 {
                // Not in the quadratic regime after all (or the chord contracts slowly): the
                // next step is a full Newton step from here.
                if !self.eval_newton(model, t, p)? {
                    return Ok(SplitOutcome::NotConverged);
                }
                have_dn = true;
            }
            // A full step that barely reduced the residual means a long, nearly flat valley of
            // G (close to a critical point): expand the step while G keeps falling.
            if !chord && alpha == 1.0 && self.split.residual > 0.5 * err0 {
                let mut best_alpha = 1.0;
                let mut best_g = self.split.gibbs;
                let mut a = 2.0;
                for _ in 0..30 {
                    self.move_newton(a);
                    if !self.eval_newton(model, t, p)? || self.split.gibbs >= best_g {
                        break;
                    }
                    best_g = self.split.gibbs;
                    best_alpha = a;
                    a *= 2.0;
                }
                self.move_newton(best_alpha);
                if !self.eval_newton(model, t, p)? {
                    return Ok(SplitOutcome::NotConverged);
                }
                have_dn = true;
            }
            set_lnk(self);
        }
        Ok(if self.split.residual < opts.tolerance {
            SplitOutcome::Converged
        } else {
            SplitOutcome::NotConverged
        })
    }

    /// Writes the result into `self.result`, reusing its storage.
    fn finish<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        n: &[f64],
        ntot: f64,
        two: bool,
        opts: &FlashOptions,
        mut diag: Diagnostics,
    ) -> Result<()> {
        let nc = self.nc;
        let r = &mut self.result;
        r.temperature = t;
        r.pressure = p;
        r.feed.clear();
        r.feed.extend_from_slice(n);
        r.tie_line = None;
        let count = if self.multi_used {
            self.multi.phases()
        } else if two {
            2
        } else {
            1
        };
        r.phases.truncate(count);
        while r.phases.len() < count {
            r.phases.push(Phase {
                composition: vec![0.0; nc],
                ln_phi: vec![0.0; nc],
                ..Default::default()
            });
        }
        if self.multi_used {
            // Vapour first, then the liquids by increasing density (`Liquid2`, `Liquid`).
            let plan = three_phase_plan(opts);
            self.multi.write(model, t, p, ntot, &plan, &mut diag, r)?;
            self.prev_two_phase = false;
            Previous::record(&mut self.multi_prev, &self.multi, t, p, &plan);
        } else if two {
            let s = &self.best;
            diag.residual = s.residual;
            diag.gibbs = s.gibbs;
            // Order: lighter phase first.
            let y_first = s.phi_y.v >= s.phi_x.v;
            let parts = [(s.beta, &s.y, &s.phi_y), (s.omb, &s.x, &s.phi_x)];
            let (a, b) = if y_first {
                (parts[0], parts[1])
            } else {
                (parts[1], parts[0])
            };
            // Both liquid-like by volume is a liquid–liquid split only if the lighter phase is
            // also below its pseudo-critical temperature by Kay's rule, T_pc = Σ x_i Tc_i
            // (W. B. Kay, Ind. Eng. Chem. 28 (1936) 1014, from memory); near a vapour–liquid
            // critical point both phases are dense but the lighter one is the vapour.
            let kay: f64 = (0..nc).map(|i| a.1[i] * model.critical_constants(i).tc).sum();
            let kinds = if a.2.liquid_like && b.2.liquid_like && t < kay {
                [PhaseKind::Liquid2, PhaseKind::Liquid]
            } else {
                [PhaseKind::Vapor, PhaseKind::Liquid]
            };
            for (k, (frac, comp, phi)) in [a, b].into_iter().enumerate() {
                let ph = &mut r.phases[k];
                ph.kind = Some(kinds[k]);
                ph.fraction = frac;
                ph.amount = frac * ntot;
                ph.composition.copy_from_slice(comp);
                ph.ln_phi.copy_from_slice(&phi.ln_phi);
                ph.molar_volume = phi.v;
                ph.z = phi.z;
            }
            self.prev_two_phase = true;
            self.multi_prev = None;
        } else {
            self.multi_prev = None;
            let ws = &mut self.ws;
            let z = &ws.z;
            // The feed's stability test has evaluated it already at this (T, p).
            if !self.feed_evaluated {
                model.phase_ln_phi(t, p, z, RootChoice::Stable, Need::VALUES, &mut ws.fw, &mut ws.phi_feed)?;
            }
            let phi = &ws.phi_feed;
            let ph = &mut r.phases[0];
            ph.kind = Some(if phi.liquid_like {
                PhaseKind::Liquid
            } else {
                PhaseKind::Vapor
            });
            ph.fraction = 1.0;
            ph.amount = ntot;
            ph.composition.copy_from_slice(z);
            ph.ln_phi.copy_from_slice(&phi.ln_phi);
            ph.molar_volume = phi.v;
            ph.z = phi.z;
            diag.residual = 0.0;
            diag.gibbs = z
                .iter()
                .zip(&phi.ln_phi)
                .filter(|(z, _)| **z > 0.0)
                .map(|(z, l)| z * (z.ln() + l))
                .sum();
            self.prev_two_phase = false;
        }
        r.diagnostics = diag;
        if !two && opts.negative_flash {
            let tl = self.tie_line_extension(model, t, p, opts)?;
            self.result.tie_line = tl;
        }
        Ok(())
    }

    /// Negative flash from Wilson K-values for a single-phase feed.
    fn tie_line_extension<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        opts: &FlashOptions,
    ) -> Result<Option<TieLine>> {
        let nc = self.nc;
        model.estimate_ln_k(t, p, &mut self.ws.lnk);
        for _ in 0..opts.max_ss_iterations {
            if !self.eval_split(model, t, p)? {
                return Ok(None);
            }
            if self.split.residual < opts.tolerance {
                let s = &self.split;
                if s.x.iter().zip(&s.y).all(|(a, b)| (a - b).abs() < 1e-8) {
                    return Ok(None);
                }
                return Ok(Some(TieLine {
                    beta: s.beta,
                    x: s.x.clone(),
                    y: s.y.clone(),
                }));
            }
            if self.ws.lnk.iter().all(|l| l.abs() < 1e-4) {
                return Ok(None);
            }
            for i in 0..nc {
                self.ws.lnk[i] = self.ws.g[i];
            }
        }
        Ok(None)
    }
}

fn normalise(v: &mut [f64]) {
    let s: f64 = v.iter().sum();
    if s > 0.0 {
        for x in v.iter_mut() {
            *x /= s;
        }
    }
}

/// Reduced Gibbs energy of a split per mol of feed: β Σ y (ln y + ln φ^y) + (1−β) Σ x (ln x + ln φ^x).
fn gibbs(z: &[f64], s: &Split) -> f64 {
    let mut g = 0.0;
    for i in 0..z.len() {
        if z[i] > 0.0 {
            if s.y[i] > 0.0 {
                g += s.beta * s.y[i] * (s.y[i].ln() + s.phi_y.ln_phi[i]);
            }
            if s.x[i] > 0.0 {
                g += s.omb * s.x[i] * (s.x[i].ln() + s.phi_x.ln_phi[i]);
            }
        }
    }
    g
}

/// The multiphase solver's task for the PT flash's third phase.
fn three_phase_plan(opts: &FlashOptions) -> Plan {
    Plan {
        tolerance: opts.tolerance,
        max_ss: opts.max_ss_iterations.max(1),
        max_newton: opts.max_newton_iterations,
        stability: opts.stability,
        certificate: true,
        limit: 3,
        max_liquids: 3,
        root: RootChoice::Stable,
    }
}

/// One-shot PT flash of feed amounts `n` (mol) at T (K) and p (Pa).
///
/// For repeated calls (simulators, sweeps) use a [`FlashContext`], which warm-starts and
/// reuses its storage.
pub fn flash_pt<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    opts: &FlashOptions,
) -> Result<FlashResult> {
    let mut ctx = FlashContext::new(model.num_components());
    ctx.flash(model, t, p, n, opts).cloned()
}
