//! Phase stability by tangent-plane analysis (M. L. Michelsen, "The isothermal flash problem.
//! Part I. Stability", Fluid Phase Equilib. 9 (1982) 1–19).
//!
//! For a phase of composition z, with d_i = ln z_i + ln φ_i(z), the modified tangent-plane
//! distance of trial amounts W is tm(W) = 1 + Σ W_i (ln W_i + ln φ_i(W) − d_i − 1). Its
//! stationary points satisfy ln W_i + ln φ_i(W) = d_i, where tm* = 1 − ΣW and the normalised
//! distance is tpd = −ln ΣW (per mole of trial phase, in units of RT). The phase is unstable
//! if any stationary point has tpd < 0. Each trial is driven by successive substitution, then
//! by Newton steps in α_i = 2√W_i with a Levenberg shift (trust region) that keeps tm
//! decreasing; trials heading to the trivial solution W = z are abandoned.

use super::EquilibriumWork;
use crate::error::{Result, check};
use crate::model::{FluidModel, LnPhi, Need, RootChoice};
use crate::numerics::linalg::shifted_cholesky_solve;
use serde::{Deserialize, Serialize};

/// Which initial trial phases to start from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct TrialSet {
    /// Wilson K-value vapour-like (W = zK) and liquid-like (W = z/K) trials.
    pub wilson: bool,
    /// The K^(1/3) and K^(−1/3) variants (Li & Firoozabadi, SPE J. 2012), for liquid–liquid.
    pub cube_root: bool,
    /// Nearly pure trials of each component (all of them up to `pure_limit` components, else
    /// the lightest and the heaviest by critical temperature).
    pub pure: bool,
    /// See `pure`.
    pub pure_limit: usize,
}

impl Default for TrialSet {
    fn default() -> Self {
        TrialSet {
            wilson: true,
            cube_root: true,
            pure: true,
            pure_limit: 4,
        }
    }
}

/// Options of the stability test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StabilityOptions {
    /// Convergence tolerance on max |ln W_i + ln φ_i(W) − d_i|.
    pub tolerance: f64,
    /// Successive-substitution steps before switching to Newton.
    pub ss_steps: usize,
    /// Maximum total iterations per trial.
    pub max_iterations: usize,
    /// Trial phases.
    pub trials: TrialSet,
    /// A stationary point counts as unstable if tpd < −`threshold` (dimensionless).
    pub threshold: f64,
    /// Stop at the first converged stationary point with tpd < −threshold instead of
    /// running every trial (enough to prove instability; the flash uses it).
    pub early_exit: bool,
}

impl Default for StabilityOptions {
    fn default() -> Self {
        StabilityOptions {
            tolerance: 1e-10,
            ss_steps: 6,
            max_iterations: 100,
            trials: TrialSet::default(),
            threshold: 1e-10,
            early_exit: false,
        }
    }
}

/// One stationary point of the tangent-plane distance.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StationaryPoint {
    /// Normalised composition w = W/ΣW.
    pub composition: Vec<f64>,
    /// Trial amounts W (unnormalised), whose ratio to z gives K-values for a split.
    pub amounts: Vec<f64>,
    /// Normalised tangent-plane distance tpd = −ln ΣW (dimensionless, per RT per mol).
    pub tpd: f64,
    /// Whether the point is liquid-like by the model's rule.
    pub liquid_like: bool,
    /// Iterations spent.
    pub iterations: usize,
}

/// Result of a stability test.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct StabilityResult {
    /// Whether the phase is stable (no stationary point with tpd < −threshold).
    pub stable: bool,
    /// Minimum tpd over the non-trivial stationary points found (0 if all trials were trivial).
    pub min_tpd: f64,
    /// The distinct non-trivial stationary points, most negative tpd first.
    pub points: Vec<StationaryPoint>,
    /// Total iterations over all trials.
    pub iterations: usize,
    /// Trials that collapsed to the trivial solution (or, in the certificate of a flash, to
    /// the other phase of the split, a known stationary point of zero distance).
    pub trivial_trials: usize,
    /// Trials that reached the iteration limit without converging (their last point is
    /// still used if it has negative tpd, which proves instability).
    pub unconverged_trials: usize,
}

/// Wilson K-values ln K_i = ln(pc_i/p) + 5.373 (1 + ω_i)(1 − Tc_i/T) (G. M. Wilson, 1968).
pub fn wilson_ln_k<M: FluidModel + ?Sized>(model: &M, t: f64, p: f64, out: &mut [f64]) {
    for (i, o) in out.iter_mut().enumerate() {
        let c = model.critical_constants(i);
        *o = (c.pc / p).ln() + 5.373 * (1.0 + c.acentric) * (1.0 - c.tc / t);
    }
}

impl StabilityOptions {
    /// The threshold must be finite and in [0, 1): a negative one would call a phase with no
    /// stationary point below its tangent plane unstable.
    pub(crate) fn check_threshold(&self) -> Result<()> {
        if !(self.threshold >= 0.0 && self.threshold < 1.0) {
            return Err(crate::error::Error::invalid(
                "stability threshold",
                format!("{}; a value in [0, 1) is required", crate::error::num(self.threshold)),
            ));
        }
        Ok(())
    }
}

/// Tests the stability of a phase of amounts `n` (mol) at (T (K), p (Pa)).
pub fn stability<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    opts: &StabilityOptions,
) -> Result<StabilityResult> {
    check::temperature(t)?;
    check::pressure(p)?;
    check::amounts(n, model.num_components())?;
    opts.check_threshold()?;
    let mut ws = EquilibriumWork::new(model.num_components());
    let mut res = StabilityResult::default();
    stability_with(model, t, p, n, opts, &[], &mut ws, &mut res).map_err(|e| {
        let its = vec![("stability".into(), res.iterations)];
        e.from_inside("stability test", t, p, its, opts.tolerance)
    })?;
    Ok(res)
}

/// Allocation-reusing stability test: `extra_trials` are additional trial compositions
/// (e.g. a previous stationary point); results go to `res`.
pub(crate) fn stability_with<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    opts: &StabilityOptions,
    extra_trials: &[&[f64]],
    ws: &mut EquilibriumWork,
    res: &mut StabilityResult,
) -> Result<()> {
    stability_on(model, t, p, n, RootChoice::Stable, opts, extra_trials, ws, res)
}

/// As [`stability_with`], with the phase under test and every trial phase evaluated on the
/// branch `root` (`RootChoice::Liquid` for a liquid–liquid-only search).
#[allow(clippy::too_many_arguments)]
pub(crate) fn stability_on<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    root: RootChoice,
    opts: &StabilityOptions,
    extra_trials: &[&[f64]],
    ws: &mut EquilibriumWork,
    res: &mut StabilityResult,
) -> Result<()> {
    stability_impl(model, t, p, n, root, opts, extra_trials, &[], false, ws, res)
}

/// As [`stability_on`], for a phase in equilibrium with other phases of mole fractions
/// `known` (a converged split or phase set). Each of those phases is a further stationary
/// point of zero tangent-plane distance (tm = 1 − Σ y_i = 0 where ln y_i + ln φ_i(y) = d_i),
/// so a trial that approaches one is abandoned by the test that abandons a trial approaching
/// the phase itself (Michelsen & Mollerup 2007, ch. 10: near a zero of tm, tm ≈ β/2 with
/// β = Σ (W_i − y_i)(ln W_i − ln y_i)), applied at y. The test's trials are those of `opts`;
/// only the iterations that lead back to the set's own phases are saved. A known phase lacking
/// a component present in the tested one is not used. With `stop_at_proof` (and
/// `opts.early_exit`), a trial stops once it proves instability, as in
/// [`stability_for_split`]: for a test whose negative point starts a larger phase set.
#[allow(clippy::too_many_arguments)]
pub(crate) fn stability_with_known<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    root: RootChoice,
    opts: &StabilityOptions,
    known: &[&[f64]],
    stop_at_proof: bool,
    ws: &mut EquilibriumWork,
    res: &mut StabilityResult,
) -> Result<()> {
    let rough = stop_at_proof && opts.early_exit;
    stability_impl(model, t, p, n, root, opts, &[], known, rough, ws, res)
}

/// As [`stability_on`] (with `opts.early_exit`), for a feed whose split follows:
/// a trial stops as soon as it proves instability with a residual below 1e-3 — tm < 0 at any W
/// already proves it (Michelsen, Fluid Phase Equilib. 9 (1982) 1–19) — and its amounts are the
/// split's initial estimate rather than a stationary point converged to the tolerance. Only
/// points with tm below −1e-3 stop early (common practice, no source: the split's own
/// iterations converge the rest at half the cost of a trial's per component pair), so a feed
/// close to its phase boundary still gets a converged point.
#[allow(clippy::too_many_arguments)]
pub(crate) fn stability_for_split<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    root: RootChoice,
    opts: &StabilityOptions,
    ws: &mut EquilibriumWork,
    res: &mut StabilityResult,
) -> Result<()> {
    stability_with_known(model, t, p, n, root, opts, &[], true, ws, res)
}

#[allow(clippy::too_many_arguments)]
fn stability_impl<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    root: RootChoice,
    opts: &StabilityOptions,
    extra_trials: &[&[f64]],
    known: &[&[f64]],
    rough: bool,
    ws: &mut EquilibriumWork,
    res: &mut StabilityResult,
) -> Result<()> {
    check::temperature(t)?;
    check::pressure(p)?;
    let nc = model.num_components();
    let ntot = check::amounts(n, nc)?;
    ws.resize(nc);
    // The previous points' storage is kept for the points of this test (no allocation once
    // warm).
    ws.spare_points.append(&mut res.points);
    res.iterations = 0;
    res.trivial_trials = 0;
    res.unconverged_trials = 0;
    for i in 0..nc {
        ws.sz[i] = n[i] / ntot;
    }
    model.phase_ln_phi(t, p, &ws.sz, root, Need::VALUES, &mut ws.fw, &mut ws.phi_feed)?;
    for i in 0..nc {
        ws.lnz[i] = if ws.sz[i] > 0.0 { ws.sz[i].ln() } else { 0.0 };
        ws.d[i] = if ws.sz[i] > 0.0 {
            ws.lnz[i] + ws.phi_feed.ln_phi[i]
        } else {
            f64::NEG_INFINITY
        };
    }
    model.estimate_ln_k(t, p, &mut ws.lnk);
    // The known stationary points (mole fractions in `ws.known`, their logarithms in
    // `ws.known_ln`, `nc` entries each), each used only if every component present in the
    // phase is present in it.
    ws.known.clear();
    ws.known_ln.clear();
    for y in known {
        if y.len() != nc || !(0..nc).all(|i| ws.sz[i] <= 0.0 || y[i] > 0.0) {
            continue;
        }
        let sy: f64 = y.iter().sum();
        for &yi in y.iter() {
            let yn = yi / sy;
            ws.known.push(yn);
            ws.known_ln.push(if yn > 0.0 { yn.ln() } else { 0.0 });
        }
    }
    let known = ws.known.len() / nc.max(1);
    let trials = build_trials(model, opts, nc, ws);
    for k in 0..trials + extra_trials.len() {
        // Initial W for trial k.
        if k < trials {
            let (kind, idx) = ws.trial_kinds[k];
            for i in 0..nc {
                ws.w[i] = if ws.sz[i] > 0.0 {
                    match kind {
                        Trial::Vapor => ws.sz[i] * ws.lnk[i].exp(),
                        Trial::Liquid => ws.sz[i] * (-ws.lnk[i]).exp(),
                        Trial::VaporCube => ws.sz[i] * (ws.lnk[i] / 3.0).exp(),
                        Trial::LiquidCube => ws.sz[i] * (-ws.lnk[i] / 3.0).exp(),
                        Trial::Pure => {
                            if i == idx {
                                1.0 - 1e-6
                            } else {
                                1e-6 / nc as f64
                            }
                        }
                    }
                } else {
                    0.0
                };
            }
            // Far from the components' critical temperatures the Wilson K-values under- or
            // overflow (ln K of order −1000 at 1 K): scale the trial amounts in logarithms
            // instead, which leaves its composition, and so the trial, unchanged.
            let sw: f64 = ws.w.iter().sum();
            if !(sw.is_normal() && sw < 1e300) && kind != Trial::Pure {
                let f = match kind {
                    Trial::Vapor => 1.0,
                    Trial::Liquid => -1.0,
                    Trial::VaporCube => 1.0 / 3.0,
                    _ => -1.0 / 3.0,
                };
                let top = (0..nc)
                    .filter(|&i| ws.sz[i] > 0.0)
                    .map(|i| ws.sz[i].ln() + f * ws.lnk[i])
                    .fold(f64::NEG_INFINITY, f64::max);
                for i in 0..nc {
                    if ws.sz[i] > 0.0 {
                        ws.w[i] = (ws.sz[i].ln() + f * ws.lnk[i] - top).exp();
                    }
                }
            }
        } else {
            let e = extra_trials[k - trials];
            for i in 0..nc {
                ws.w[i] = if ws.sz[i] > 0.0 { e[i].max(1e-12) } else { 0.0 };
            }
        }
        let outcome = run_trial(model, t, p, root, opts, known, rough, ws)?;
        res.iterations += outcome.iterations;
        match outcome.status {
            TrialStatus::Trivial => res.trivial_trials += 1,
            TrialStatus::Converged | TrialStatus::Unconverged => {
                if outcome.status == TrialStatus::Unconverged {
                    res.unconverged_trials += 1;
                    if outcome.tpd >= 0.0 {
                        continue;
                    }
                }
                record_point(res, ws, nc, outcome);
                if opts.early_exit && outcome.status == TrialStatus::Converged && outcome.tpd < -opts.threshold {
                    break;
                }
            }
        }
    }
    res.points.sort_by(|a, b| a.tpd.total_cmp(&b.tpd));
    // `+ 0.0` turns a −0.0 (ΣW = 1 exactly) into 0.0.
    res.min_tpd = res.points.first().map_or(0.0, |p| p.tpd + 0.0);
    res.stable = res.min_tpd >= -opts.threshold;
    Ok(())
}

fn record_point(res: &mut StabilityResult, ws: &mut EquilibriumWork, nc: usize, outcome: TrialOutcome) {
    let sw: f64 = ws.w.iter().sum();
    // Merge with an existing point of the same composition.
    for pt in res.points.iter_mut() {
        let dist: f64 = (0..nc)
            .map(|i| (pt.composition[i] - ws.w[i] / sw).abs())
            .fold(0.0, f64::max);
        if dist < 1e-6 {
            if outcome.tpd < pt.tpd {
                pt.tpd = outcome.tpd;
            }
            return;
        }
    }
    let mut pt = ws.spare_points.pop().unwrap_or_else(|| StationaryPoint {
        composition: Vec::with_capacity(nc),
        amounts: Vec::with_capacity(nc),
        tpd: 0.0,
        liquid_like: false,
        iterations: 0,
    });
    pt.composition.clear();
    pt.composition.extend(ws.w.iter().map(|w| w / sw));
    pt.amounts.clear();
    pt.amounts.extend_from_slice(&ws.w);
    pt.tpd = outcome.tpd;
    pt.liquid_like = outcome.liquid_like;
    pt.iterations = outcome.iterations;
    res.points.push(pt);
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Trial {
    Vapor,
    Liquid,
    VaporCube,
    LiquidCube,
    Pure,
}

fn build_trials<M: FluidModel + ?Sized>(
    model: &M,
    opts: &StabilityOptions,
    nc: usize,
    ws: &mut EquilibriumWork,
) -> usize {
    ws.trial_kinds.clear();
    let ts = opts.trials;
    // The trial of the other kind than the phase under test first: an incipient phase of a
    // vapour is a liquid and the reverse, and a test that stops at its first negative point
    // then starts the split from the deepest one instead of a shallow point beside the phase
    // (common practice, no source).
    let (first, second, first_cube, second_cube) = if ws.phi_feed.liquid_like {
        (Trial::Vapor, Trial::Liquid, Trial::VaporCube, Trial::LiquidCube)
    } else {
        (Trial::Liquid, Trial::Vapor, Trial::LiquidCube, Trial::VaporCube)
    };
    if ts.wilson {
        ws.trial_kinds.push((first, 0));
        ws.trial_kinds.push((second, 0));
    }
    if ts.cube_root {
        ws.trial_kinds.push((first_cube, 0));
        ws.trial_kinds.push((second_cube, 0));
    }
    if ts.pure && nc > 1 {
        let active = (0..nc).filter(|&i| ws.sz[i] > 0.0).count();
        if active > 1 {
            if active <= ts.pure_limit {
                for i in 0..nc {
                    if ws.sz[i] > 0.0 {
                        ws.trial_kinds.push((Trial::Pure, i));
                    }
                }
            } else {
                let by_tc = |i: &usize| model.critical_constants(*i).tc;
                let act = || (0..nc).filter(|&i| ws.sz[i] > 0.0);
                let light = act().min_by(|a, b| by_tc(a).total_cmp(&by_tc(b))).unwrap_or(0);
                let heavy = act().max_by(|a, b| by_tc(a).total_cmp(&by_tc(b))).unwrap_or(0);
                ws.trial_kinds.push((Trial::Pure, light));
                ws.trial_kinds.push((Trial::Pure, heavy));
            }
        }
    }
    ws.trial_kinds.len()
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum TrialStatus {
    Converged,
    Trivial,
    Unconverged,
}

#[derive(Debug, Clone, Copy)]
struct TrialOutcome {
    status: TrialStatus,
    tpd: f64,
    iterations: usize,
    liquid_like: bool,
}

/// Runs one trial from `ws.w`; on return `ws.w` holds the final W. `ws.known` and
/// `ws.known_ln` hold `known` further stationary points of zero distance and their logarithms.
/// With `rough`, a trial stops once it proves instability (tm < −1e-3, residual below 1e-3).
fn run_trial<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    root: RootChoice,
    opts: &StabilityOptions,
    known: usize,
    rough: bool,
    ws: &mut EquilibriumWork,
) -> Result<TrialOutcome> {
    let nc = ws.sz.len();
    let mut iterations = 0;
    let (mut tm_prev, mut tm_prev2) = (f64::INFINITY, f64::INFINITY);
    // The residuals of the last two iterations.
    let (mut err_prev, mut err_prev2) = (f64::INFINITY, f64::INFINITY);
    let mut last_tpd = f64::INFINITY;
    // Whether ws.phi_b already holds ln φ (and, if `have_dn`, its derivatives) at ws.w.
    let mut evaluated = false;
    let mut have_dn = false;
    // ln W_i in `ws.k`, kept with W (a successive-substitution step gives it exactly).
    for i in 0..nc {
        ws.k[i] = if ws.sz[i] > 0.0 { ws.w[i].ln() } else { 0.0 };
    }
    while iterations < opts.max_iterations {
        iterations += 1;
        let newton = iterations > opts.ss_steps;
        if !evaluated || (newton && !have_dn) {
            let need = if newton { Need::COMPOSITION } else { Need::VALUES };
            eval_trial(model, t, p, root, need, &ws.w, &mut ws.x, &mut ws.fw, &mut ws.phi_b)?;
            have_dn = newton;
        }
        evaluated = false;
        let liquid_like = ws.phi_b.liquid_like;
        // Residuals h_i = ln W_i + ln φ_i(W) − d_i, and tm.
        let (mut err, mut tm, mut sw, mut bt) = (0.0f64, 1.0, 0.0, 0.0);
        for i in 0..nc {
            if ws.sz[i] > 0.0 {
                let lw = ws.k[i];
                let h = lw + ws.phi_b.ln_phi[i] - ws.d[i];
                ws.g[i] = h;
                err = err.max(h.abs());
                tm += ws.w[i] * (h - 1.0);
                sw += ws.w[i];
                bt += (ws.w[i] - ws.sz[i]) * (lw - ws.lnz[i]);
            } else {
                ws.g[i] = 0.0;
            }
        }
        last_tpd = -sw.ln();
        let outcome = |status| TrialOutcome {
            status,
            tpd: if status == TrialStatus::Trivial { 0.0 } else { last_tpd },
            iterations,
            liquid_like,
        };
        // Trivial-solution test (Michelsen & Mollerup 2007, ch. 10): with
        // β_t = Σ (W_i − z_i)(ln W_i − ln z_i), r = 2 tm/β_t tends to 1 near W = z.
        // Where the phase is far from ideal, r near W = z differs from 1 by the non-ideal
        // curvature along the approach (by about the contraction rate of the iteration), so a
        // trial is also abandoned that is that close, has r in (0.5, 1.5) — tm convex along
        // the approach — and whose residual fell by more than half in each of its last two
        // steps, tm positive and falling: it is contracting to the zero of tm, a local
        // minimum (common practice, no source).
        let contracting =
            iterations > 2 && err < 0.5 * err_prev && err_prev < 0.5 * err_prev2 && tm > 0.0 && tm < tm_prev;
        let heading_to = |b: f64| {
            let r = 2.0 * tm / b;
            b < 1e-8
                || (iterations > 1 && b < 5e-3 && ((r - 1.0).abs() < 0.2 || (contracting && (r - 1.0).abs() < 0.5)))
        };
        if heading_to(bt) {
            return Ok(outcome(TrialStatus::Trivial));
        }
        // The same test at each known stationary point y of zero distance.
        if err >= opts.tolerance {
            for m in 0..known {
                let (y, lny) = (&ws.known[m * nc..(m + 1) * nc], &ws.known_ln[m * nc..(m + 1) * nc]);
                let bk: f64 = (0..nc)
                    .filter(|&i| ws.sz[i] > 0.0)
                    .map(|i| (ws.w[i] - y[i]) * (ws.k[i] - lny[i]))
                    .sum();
                if heading_to(bk) {
                    return Ok(outcome(TrialStatus::Trivial));
                }
            }
        }
        if err < opts.tolerance || (rough && err < 1e-3 && tm < -1e-3) {
            return Ok(outcome(TrialStatus::Converged));
        }
        // A trial that has settled next to a stationary point of clearly positive distance
        // (tm ≈ 1 − ΣW, tm no longer falling) cannot prove instability: stop it there. "No
        // longer falling": the last fall below 1 % of tm, or falls shrinking by a ratio
        // q < 1/2 whose geometric remainder, ten times over, leaves more than half of tm
        // (common practice, no source; tm never rises under successive substitution).
        let (fall, fall_before) = (tm_prev - tm, tm_prev2 - tm_prev);
        let q = fall / fall_before;
        let settled = (iterations >= 4 && fall.abs() < 1e-2 * tm)
            || (iterations >= 3 && fall >= 0.0 && q < 0.5 && tm - 10.0 * fall * q / (1.0 - q) > 0.5 * tm);
        if tm > 1e-2 && (tm - (1.0 - sw)).abs() < 1e-2 * tm && settled {
            return Ok(outcome(TrialStatus::Converged));
        }
        if !newton {
            for i in 0..nc {
                if ws.sz[i] > 0.0 {
                    ws.k[i] = ws.d[i] - ws.phi_b.ln_phi[i];
                    ws.w[i] = ws.k[i].exp();
                }
            }
            (tm_prev2, tm_prev) = (tm_prev, tm);
            (err_prev2, err_prev) = (err_prev, err);
            continue;
        }
        // Newton in α = 2√W: gradient g_i = √W_i h_i,
        // H_ij = δ_ij + √(W_i W_j) ∂ln φ_i/∂n_j + δ_ij h_i/2, with a Levenberg shift raised
        // until tm decreases (trust region).
        for i in 0..nc {
            let si = ws.w[i].sqrt();
            ws.rhs[i] = -si * ws.g[i];
            for j in 0..nc {
                ws.hess[i * nc + j] = if ws.sz[i] <= 0.0 || ws.sz[j] <= 0.0 {
                    if i == j { 1.0 } else { 0.0 }
                } else {
                    let mut hij = si * ws.w[j].sqrt() * ws.phi_b.dn[i * nc + j];
                    if i == j {
                        hij += 1.0 + 0.5 * ws.g[i];
                    }
                    hij
                };
            }
        }
        let mut mu = 0.0;
        let mut accepted = false;
        ws.w_old.copy_from_slice(&ws.w);
        for _ in 0..8 {
            ws.step.copy_from_slice(&ws.rhs);
            let Some(used) = shifted_cholesky_solve(&ws.hess, nc, &mut ws.step, &mut ws.chol, mu) else {
                break;
            };
            for i in 0..nc {
                if ws.sz[i] > 0.0 {
                    let a = 2.0 * ws.w_old[i].sqrt() + ws.step[i];
                    ws.w[i] = (0.25 * a * a).max(1e-300);
                }
            }
            // The candidate is evaluated with derivatives, ready for the next step.
            eval_trial(
                model,
                t,
                p,
                root,
                Need::COMPOSITION,
                &ws.w,
                &mut ws.x,
                &mut ws.fw,
                &mut ws.phi_a,
            )?;
            let mut tm_new = 1.0;
            for i in 0..nc {
                if ws.sz[i] > 0.0 {
                    ws.k[i] = ws.w[i].ln();
                    tm_new += ws.w[i] * (ws.k[i] + ws.phi_a.ln_phi[i] - ws.d[i] - 1.0);
                }
            }
            if tm_new.is_finite() && tm_new <= tm + 1e-12 * tm.abs().max(1.0) {
                accepted = true;
                std::mem::swap(&mut ws.phi_a, &mut ws.phi_b);
                evaluated = true;
                have_dn = true;
                break;
            }
            mu = if used == 0.0 { 1.0 } else { used * 10.0 };
        }
        if !accepted {
            // Fall back to one successive-substitution step from the old point (ws.phi_b
            // still holds ln φ there); SS never increases tm.
            for i in 0..nc {
                if ws.sz[i] > 0.0 {
                    ws.k[i] = ws.d[i] - ws.phi_b.ln_phi[i];
                    ws.w[i] = ws.k[i].exp();
                }
            }
        }
        (tm_prev2, tm_prev) = (tm_prev, tm);
        (err_prev2, err_prev) = (err_prev, err);
    }
    Ok(TrialOutcome {
        status: TrialStatus::Unconverged,
        tpd: last_tpd,
        iterations,
        liquid_like: ws.phi_b.liquid_like,
    })
}

#[allow(clippy::too_many_arguments)]
fn eval_trial<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    root: RootChoice,
    need: Need,
    w: &[f64],
    x: &mut [f64],
    fw: &mut crate::model::FugacityWork,
    out: &mut LnPhi,
) -> Result<()> {
    let sw: f64 = w.iter().sum();
    for (xi, wi) in x.iter_mut().zip(w) {
        *xi = wi / sw;
    }
    model.phase_ln_phi(t, p, x, root, need, fw, out)?;
    if need.composition {
        // ∂ln φ/∂n at total amount ΣW: scale the unit-amount derivative by 1/ΣW.
        for v in out.dn.iter_mut() {
            *v /= sw;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::equilibrium::{FlashOptions, flash_pt};
    use crate::model::{CubicEos, CubicKind};
    use crate::substance::DataBank;

    fn gas() -> CubicEos {
        let comps = DataBank::embedded()
            .get_many(&["nitrogen", "methane", "ethane", "propane", "n-butane", "n-hexane"])
            .unwrap();
        CubicEos::new(CubicKind::PengRobinson, comps).unwrap()
    }

    const Z: [f64; 6] = [0.02, 0.70, 0.10, 0.08, 0.06, 0.04];

    /// The early stop of a feed's test for the split gives the verdict of the complete test
    /// on every state of a (T, p) grid across the phase envelope, in no more iterations.
    #[test]
    fn stop_for_split_keeps_the_verdict() {
        let m = gas();
        let (mut unstable, mut stable) = (0, 0);
        for ti in 0..=20 {
            for &p in &[1e6, 3e6, 6e6, 9e6] {
                let t = 180.0 + 10.0 * ti as f64;
                let full = stability(&m, t, p, &Z, &StabilityOptions::default()).unwrap();
                let opts = StabilityOptions {
                    early_exit: true,
                    ..Default::default()
                };
                let mut ws = EquilibriumWork::new(6);
                let mut res = StabilityResult::default();
                stability_for_split(&m, t, p, &Z, RootChoice::Stable, &opts, &mut ws, &mut res).unwrap();
                assert_eq!(res.stable, full.stable, "verdicts differ at {t} K, {p} Pa");
                assert!(
                    res.iterations <= full.iterations,
                    "{} > {} at {t} K, {p} Pa",
                    res.iterations,
                    full.iterations
                );
                if full.stable {
                    stable += 1;
                } else {
                    unstable += 1;
                }
            }
        }
        assert!(
            stable > 10 && unstable > 10,
            "the grid must cross the envelope: {stable} / {unstable}"
        );
    }

    /// A test of one phase of a converged split that abandons trials heading to the other
    /// phase gives the verdict of the complete test, and the split's phase is stable.
    #[test]
    fn known_phase_keeps_the_certificate() {
        let m = gas();
        let opts = FlashOptions {
            certificate: false,
            ..Default::default()
        };
        let mut checked = 0;
        for ti in 0..=12 {
            let t = 190.0 + 10.0 * ti as f64;
            let r = flash_pt(&m, t, 3e6, &Z, &opts).unwrap();
            if r.phases.len() != 2 {
                continue;
            }
            let (x, y) = (&r.phases[1].composition, &r.phases[0].composition);
            for (a, b) in [(x, y), (y, x)] {
                let full = stability(&m, t, 3e6, a, &StabilityOptions::default()).unwrap();
                let mut ws = EquilibriumWork::new(6);
                let mut res = StabilityResult::default();
                let sopts = StabilityOptions::default();
                stability_with_known(
                    &m,
                    t,
                    3e6,
                    a,
                    RootChoice::Stable,
                    &sopts,
                    &[b],
                    false,
                    &mut ws,
                    &mut res,
                )
                .unwrap();
                assert!(full.stable && res.stable, "phase of the split unstable at {t} K");
                assert!(res.iterations <= full.iterations);
                checked += 1;
            }
        }
        assert!(checked >= 6, "only {checked} phases checked");
    }
}
