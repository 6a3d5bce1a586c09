//! Reactive phase equilibrium: chemical reaction and a split into two fluid phases together,
//! at fixed temperature and pressure, with every fluid phase described by one [`FluidModel`]
//! over the gas species of the [`ReactionSystem`].
//!
//! **Stability of the reacting equilibrium.** At the converged one-fluid-phase equilibrium
//! every species satisfies μ_i = Σ_k a_ki λ_k (λ_k the element potentials): the
//! element-potential plane Σ_k a_ki λ_k is the tangent plane of the phase's Gibbs energy at
//! its composition. A second fluid phase of composition w lowers G exactly when the
//! tangent-plane distance tm(w) = Σ_i w_i [ln w_i + ln φ_i(w) + μ°_i/RT + ln(p/p°) −
//! Σ_k a_ki λ_k/RT] is negative somewhere, which is the ordinary tangent-plane-distance test
//! of the phase (M. L. Michelsen, "The isothermal flash problem. Part I. Stability", Fluid
//! Phase Equilib. 9 (1982) 1–19) run on the model at T, p and the equilibrium composition
//! ([`crate::equilibrium::stability::stability`]). Reaction does not change the test: the
//! element balances only fix which tangent plane is the right one.
//!
//! **The split.** When the test finds a negative distance, the Lagrangian Newton method of
//! Gordon & McBride (NASA RP-1311, 1994, §2–3) is extended to several fluid phases, as in the
//! multiphase ideal-solution chemical equilibrium of M. L. Michelsen, "Calculation of
//! multiphase ideal solution chemical equilibrium", Fluid Phase Equilib. 53 (1989) 73–80
//! (cited from memory): each phase π has its own amounts n_iπ and total n_π, with
//! μ_iπ/RT = μ°_i/RT + ln(n_iπ/n_π) + ln φ_iπ + ln(p/p°), ln φ_iπ from the model on the
//! phase's stable volume root and held fixed within a Newton step (as the one-phase real-gas
//! path does; the iteration converges linearly). The corrections
//! Δln n_iπ = −μ_iπ/RT + Σ_k a_ki π_k + Δln n_π reduce the Newton system to the element
//! rows and one row per phase (size elements + phases). The second phase starts from the
//! stationary point of the stability test (its composition w, amount a fraction of what the
//! first phase can give). Converged when every species in every phase satisfies
//! μ_iπ = Σ_k a_ki λ_k and the element balances hold; the stability test is then run again on
//! the phases (the certificate: min tpd ≥ 0 within the tolerance). A phase whose amount
//! falls below 1e-10 of the total, or whose composition becomes that of the other phase, is
//! merged back and dropped.
//!
//! Scope: two fluid phases (vapour–liquid or liquid–liquid by the model's rule); pure
//! condensed species of the system are left out (listed among the excluded species); a
//! third fluid phase is not attempted (a two-phase answer that is itself unstable is
//! reported with `stable == false`). Units: T in K, p in Pa, amounts in mol, energies in J.

use super::{ExcludedSpecies, ReactionContext, ReactionOptions, ReactionSystem, Spec, check_model};
use crate::equilibrium::stability::{StabilityOptions, stability};
use crate::error::{Error, Result, check};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, PhaseKind, RootChoice};
use crate::numerics::linalg::lu_solve;
use crate::substance::{P_STANDARD, R};
use serde::{Deserialize, Serialize};

/// Most fluid phases the split considers.
const MAX_FLUID_PHASES: usize = 2;
/// A phase below this fraction of the total amount is merged back (dimensionless).
const VANISHING_FRACTION: f64 = 1e-10;
/// Two phases whose mole fractions differ by less than this everywhere are one phase.
const SAME_COMPOSITION: f64 = 1e-7;

/// One fluid phase of a reactive phase equilibrium.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReactivePhase {
    /// Vapour or liquid by the model's naming rule ([`FluidModel::is_liquid_like`]); of two
    /// liquid-like phases the one of larger molar volume is `Liquid2`.
    pub kind: PhaseKind,
    /// Amount of the phase, mol.
    pub amount: f64,
    /// Amount of each species in the phase (system order; 0 for condensed species), mol.
    pub amounts: Vec<f64>,
    /// Mole fraction of each species in the phase (system order; 0 for condensed species).
    pub mole_fractions: Vec<f64>,
    /// Molar volume of the phase, m3/mol.
    pub molar_volume: f64,
    /// Compressibility factor Z = pV/(nRT) of the phase (dimensionless).
    pub z: f64,
    /// ln φ_i of each gas species in the phase, in the model's component order
    /// (dimensionless).
    pub ln_phi: Vec<f64>,
    /// Reduced chemical potential μ_i/RT − Σ_k a_ki λ_k/RT of each species in the phase
    /// (system order; 0 for condensed and excluded species), dimensionless: ≈ 0 at the
    /// solution.
    pub reduced_gibbs: Vec<f64>,
}

/// The result of a reactive phase equilibrium at fixed T and p.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReactivePhaseResult {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// The fluid phases present, the one of largest molar volume first.
    pub phases: Vec<ReactivePhase>,
    /// Total amount of each species over the phases (system order), mol.
    pub amounts: Vec<f64>,
    /// Element potentials λ_k = RT π_k, J/mol, in the order of
    /// [`ReactionSystem::elements`]; 0 for elements absent from the feed or with dependent
    /// rows.
    pub element_potentials: Vec<f64>,
    /// Gibbs energy of the system, Σ_π Σ_i n_iπ μ_iπ, J (library reference state).
    pub gibbs: f64,
    /// Least tangent-plane distance found by the stability test of the one-fluid-phase
    /// reacting equilibrium (dimensionless, per mole of trial phase in units of RT; < 0: a
    /// second fluid phase lowers G).
    pub one_phase_min_tpd: f64,
    /// The certificate: least tangent-plane distance over the stability tests of the phases
    /// of this answer (dimensionless); ≥ −threshold when the answer is the minimum.
    pub min_tpd: f64,
    /// Whether the certificate passed (no stationary point below −threshold of the stability
    /// options).
    pub stable: bool,
    /// Largest |μ_iπ/RT − Σ_k a_ki π_k| over the phases and their species (dimensionless).
    pub max_reduced_gibbs: f64,
    /// Largest relative element-balance residual |Σ a n − b| / max b.
    pub element_residual: f64,
    /// Newton iterations spent (one-phase and split together).
    pub iterations: usize,
    /// Species left out, with reasons.
    pub excluded: Vec<ExcludedSpecies>,
    /// Elements whose rows were linearly dependent and dropped (potential reported as 0).
    pub dependent_elements: Vec<String>,
}

/// Working state of one fluid phase: ln n_i of the gas species (model order; −∞ for a
/// species the feed cannot form), ln n of the phase, μ_i/RT and the Newton corrections.
#[derive(Debug, Clone)]
struct FluidPhase {
    lnn: Vec<f64>,
    lnn_tot: f64,
    mu: Vec<f64>,
    dln: Vec<f64>,
    phi: LnPhi,
}

impl FluidPhase {
    fn from_amounts(n: &[f64]) -> Self {
        let tot: f64 = n.iter().sum();
        FluidPhase {
            lnn: n.iter().map(|&x| x.ln()).collect(),
            lnn_tot: tot.ln(),
            mu: vec![0.0; n.len()],
            dln: vec![0.0; n.len()],
            phi: LnPhi::new(n.len()),
        }
    }

    fn amounts(&self) -> Vec<f64> {
        self.lnn.iter().map(|&l| l.exp()).collect()
    }

    fn total(&self) -> f64 {
        self.lnn.iter().map(|&l| l.exp()).sum()
    }
}

/// Reactive phase equilibrium at temperature `t` (K) and pressure `p` (Pa) of the feed
/// amounts `feed` (mol of each species of `system`): chemical equilibrium with up to two
/// fluid phases described by `model`, whose components must be the gas species of the
/// system, in order. See [`ReactionContext::equilibrate_tp_fluid_phases`].
///
/// ```
/// use tieline::equilibrium::reaction::{ReactionOptions, ReactionSystem, equilibrate_tp_fluid_phases};
/// use tieline::model::{CubicEos, CubicKind};
/// use tieline::substance::DataBank;
/// let names = ["hydrogen", "oxygen", "nitrogen", "water"];
/// let sys = ReactionSystem::from_names(&names)?;
/// let pr = CubicEos::new(CubicKind::PengRobinson, DataBank::embedded().get_many(&names)?)?;
/// // 2 H2 + O2 with 4 N2 at 298.15 K, 1e5 Pa: the water formed condenses.
/// let r = equilibrate_tp_fluid_phases(&sys, &pr, 298.15, 1.0e5, &[2.0, 1.0, 4.0, 0.0], &ReactionOptions::default())?;
/// assert_eq!(r.phases.len(), 2);
/// assert!(r.one_phase_min_tpd < 0.0 && r.stable);
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn equilibrate_tp_fluid_phases(
    system: &ReactionSystem,
    model: &dyn FluidModel,
    t: f64,
    p: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactivePhaseResult> {
    ReactionContext::new(system).equilibrate_tp_fluid_phases(system, model, t, p, feed, opts)
}

impl ReactionContext {
    /// Reactive phase equilibrium at temperature `t` (K) and pressure `p` (Pa): the one-fluid
    /// phase reacting equilibrium (the TP solver with `model`, then re-converged on each
    /// phase's stable volume root), its stability test, and if that finds a tangent-plane
    /// distance below −threshold the two-phase split (see the module documentation). Pure
    /// condensed species of the system are excluded. Errors: bad input as for
    /// [`ReactionContext::equilibrate_tp`]; a failed Newton iteration or stability test is
    /// [`Error::NotConverged`].
    pub fn equilibrate_tp_fluid_phases(
        &mut self,
        system: &ReactionSystem,
        model: &dyn FluidModel,
        t: f64,
        p: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactivePhaseResult> {
        check::temperature(t)?;
        check::pressure(p)?;
        check_model(system, Some(model))?;
        let mut o = opts.clone();
        o.condensed = false;
        self.prepare(system, feed, &o)?;
        for e in &mut self.excluded {
            if e.reason == "condensed species disabled by the options" {
                e.reason = "pure condensed species are not considered with fluid phases".into();
            }
        }
        self.standard(system, t, p, &o)?;
        let mut iterations = self.solve(system, Some(model), &Spec { t, p }, &o)?;
        let gas = system.gas.clone();
        let start: Vec<f64> = gas
            .iter()
            .map(|&j| if self.eligible[j] { self.lnn[j].exp() } else { 0.0 })
            .collect();
        let mut phases = vec![FluidPhase::from_amounts(&start)];
        iterations += self.solve_phases(system, model, t, p, &mut phases, &o)?;
        let sopts = StabilityOptions::default();
        let first = stability(model, t, p, &phases[0].amounts(), &sopts)?;
        let one_phase_min_tpd = first.min_tpd;
        let mut test = first;
        for _attempt in 0..3 {
            if test.stable || phases.len() >= MAX_FLUID_PHASES || test.points.is_empty() {
                break;
            }
            let w = &test.points[0].composition;
            let z = phases[0].amounts();
            // The trial phase takes 0.9 of the most the present phase can give of w.
            let mut beta = f64::INFINITY;
            for i in 0..z.len() {
                if w[i] > 0.0 && z[i] > 0.0 {
                    beta = beta.min(z[i] / w[i]);
                }
            }
            if !beta.is_finite() {
                break;
            }
            beta *= 0.9;
            let n1: Vec<f64> = (0..z.len())
                .map(|i| if z[i] > 0.0 { z[i] - beta * w[i] } else { 0.0 })
                .collect();
            let n2: Vec<f64> = (0..z.len())
                .map(|i| if z[i] > 0.0 { beta * w[i] } else { 0.0 })
                .collect();
            phases = vec![FluidPhase::from_amounts(&n1), FluidPhase::from_amounts(&n2)];
            iterations += self.solve_phases(system, model, t, p, &mut phases, &o)?;
            if merge_degenerate(&mut phases) {
                iterations += self.solve_phases(system, model, t, p, &mut phases, &o)?;
            }
            test = self.certify(model, t, p, &phases, &sopts)?;
        }
        if phases.len() == 1 {
            test = self.certify(model, t, p, &phases, &sopts)?;
        }
        self.phase_result(system, model, t, p, &mut phases, iterations, one_phase_min_tpd, &test)
    }

    /// Stability tests of every phase; the least tpd and whether all passed.
    fn certify(
        &self,
        model: &dyn FluidModel,
        t: f64,
        p: f64,
        phases: &[FluidPhase],
        sopts: &StabilityOptions,
    ) -> Result<crate::equilibrium::StabilityResult> {
        let mut worst: Option<crate::equilibrium::StabilityResult> = None;
        for ph in phases {
            let r = stability(model, t, p, &ph.amounts(), sopts)?;
            if worst.as_ref().is_none_or(|w| r.min_tpd < w.min_tpd) {
                worst = Some(r);
            }
        }
        worst.ok_or_else(|| Error::invalid("phases", "no phase to test"))
    }

    /// Gordon–McBride Newton iteration over several fluid phases with ln φ held within a
    /// step; updates `phases` and the element potentials `self.pi`. Returns the iterations.
    fn solve_phases(
        &mut self,
        sys: &ReactionSystem,
        model: &dyn FluidModel,
        t: f64,
        p: f64,
        phases: &mut [FluidPhase],
        opts: &ReactionOptions,
    ) -> Result<usize> {
        let ns = sys.num_species();
        let gas = &sys.gas;
        let nc = gas.len();
        let m = self.rows.len();
        let np = phases.len();
        let nn = m + np;
        let lnp = (p / P_STANDARD).ln();
        let a = |k: usize, i: usize| sys.formula[k * ns + gas[i]];
        let btot: f64 = self.rows.iter().map(|&k| self.b[k]).fold(0.0, f64::max);
        let elig: Vec<bool> = gas.iter().map(|&j| self.eligible[j]).collect();
        let size = 18.420_680_743_952_367; // −ln 1e-8
        let floor = -690.0; // ln n ≥ ln 1e-300
        let mut fw = FugacityWork::new(nc);
        let mut n = vec![0.0; nc];
        let mut last_res = f64::INFINITY;
        for it in 1..=opts.max_iterations {
            for ph in phases.iter_mut() {
                for i in 0..nc {
                    n[i] = if elig[i] { ph.lnn[i].exp() } else { 0.0 };
                }
                model.phase_ln_phi(t, p, &n, RootChoice::Stable, Need::VALUES, &mut fw, &mut ph.phi)?;
                for i in 0..nc {
                    if elig[i] {
                        ph.mu[i] = self.g0[gas[i]] + ph.lnn[i] - ph.lnn_tot + lnp + ph.phi.ln_phi[i];
                    }
                }
            }
            self.mat.clear();
            self.mat.resize(nn * nn, 0.0);
            self.rhs.clear();
            self.rhs.resize(nn, 0.0);
            for (r, &k) in self.rows.iter().enumerate() {
                let mut rhs = self.b[k];
                for (q, ph) in phases.iter().enumerate() {
                    let mut bg = 0.0;
                    for i in 0..nc {
                        let aki = a(k, i);
                        if !elig[i] || aki == 0.0 {
                            continue;
                        }
                        let ni = ph.lnn[i].exp();
                        bg += aki * ni;
                        rhs += aki * ni * (ph.mu[i] - 1.0);
                        for (r2, &k2) in self.rows.iter().enumerate() {
                            self.mat[r * nn + r2] += aki * a(k2, i) * ni;
                        }
                    }
                    self.mat[r * nn + m + q] = bg;
                    self.mat[(m + q) * nn + r] = bg;
                }
                self.rhs[r] = rhs;
            }
            for (q, ph) in phases.iter().enumerate() {
                let (mut sum_n, mut sum_nmu) = (0.0, 0.0);
                for i in 0..nc {
                    if elig[i] {
                        let ni = ph.lnn[i].exp();
                        sum_n += ni;
                        sum_nmu += ni * ph.mu[i];
                    }
                }
                let tot = ph.lnn_tot.exp();
                self.mat[(m + q) * nn + m + q] = sum_n - tot;
                self.rhs[m + q] = tot - sum_n + sum_nmu;
            }
            if !lu_solve(&mut self.mat, nn, &mut self.rhs) {
                return Err(Error::not_converged(
                    "reactive phase equilibrium (multiphase Gordon-McBride Newton): singular system",
                    vec![("Newton".into(), it)],
                    last_res,
                    opts.tolerance,
                ));
            }
            for (r, &k) in self.rows.iter().enumerate() {
                self.pi[k] = self.rhs[r];
            }
            let total: f64 = phases.iter().map(|ph| ph.total()).sum();
            let mut big: f64 = 0.0;
            let mut lam2 = f64::INFINITY;
            let mut res: f64 = 0.0;
            for (q, ph) in phases.iter_mut().enumerate() {
                let dlt = self.rhs[m + q];
                big = big.max(5.0 * dlt.abs());
                res = res.max((ph.lnn_tot.exp() * dlt).abs() / total);
                for i in 0..nc {
                    if !elig[i] {
                        continue;
                    }
                    let mut d = -ph.mu[i] + dlt;
                    for (r, &k) in self.rows.iter().enumerate() {
                        d += a(k, i) * self.rhs[r];
                    }
                    ph.dln[i] = d;
                    let rel = ph.lnn[i] - ph.lnn_tot;
                    if rel > -size {
                        big = big.max(d.abs());
                    } else if d > 0.0 {
                        // λ2 keeps a trace species from rising above 1e-4 of its phase.
                        let l = ((-rel - 9.210_340_371_976_184) / (d - dlt)).abs();
                        lam2 = lam2.min(l);
                    }
                    res = res.max((ph.lnn[i].exp() * d).abs() / total);
                }
            }
            // The phase split of every species, trace or not: the spread of the corrections
            // over the phases (the element potentials of a trace species' elements may be
            // fixed only to rounding, which moves all phases alike).
            let mut unweighted: f64 = 0.0;
            for i in (0..nc).filter(|&i| elig[i]) {
                let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
                for ph in phases.iter() {
                    if !(ph.lnn[i] <= floor + 1.0 && ph.dln[i] < 0.0) {
                        lo = lo.min(ph.dln[i]);
                        hi = hi.max(ph.dln[i]);
                    }
                }
                if hi > lo {
                    unweighted = unweighted.max(hi - lo);
                }
            }
            let lam1 = if big > 2.0 { 2.0 / big } else { 1.0 };
            let lam = 1.0f64.min(lam1).min(lam2);
            for (q, ph) in phases.iter_mut().enumerate() {
                for i in 0..nc {
                    if elig[i] {
                        ph.lnn[i] = (ph.lnn[i] + lam * ph.dln[i]).max(floor);
                    }
                }
                ph.lnn_tot += lam * self.rhs[m + q];
            }
            last_res = res.max(unweighted * 1e-3);
            if lam == 1.0 && res <= opts.tolerance && unweighted <= 1e3 * opts.tolerance {
                let mut eres: f64 = 0.0;
                for &k in &self.rows {
                    let cur: f64 = phases
                        .iter()
                        .map(|ph| {
                            (0..nc)
                                .filter(|&i| elig[i])
                                .map(|i| a(k, i) * ph.lnn[i].exp())
                                .sum::<f64>()
                        })
                        .sum();
                    eres = eres.max((cur - self.b[k]).abs() / btot);
                }
                // Tighter than the one-phase solver's 10 × tolerance: a Newton step leaves a
                // residual quadratic in the last correction, so this costs a step at most.
                if eres <= opts.tolerance * 1e-2 {
                    return Ok(it);
                }
            }
        }
        Err(Error::not_converged(
            "reactive phase equilibrium (multiphase Gordon-McBride Newton)",
            vec![("Newton".into(), opts.max_iterations), ("phases".into(), np)],
            last_res,
            opts.tolerance,
        ))
    }

    #[allow(clippy::too_many_arguments)]
    fn phase_result(
        &mut self,
        sys: &ReactionSystem,
        model: &dyn FluidModel,
        t: f64,
        p: f64,
        phases: &mut [FluidPhase],
        iterations: usize,
        one_phase_min_tpd: f64,
        test: &crate::equilibrium::StabilityResult,
    ) -> Result<ReactivePhaseResult> {
        let ns = sys.num_species();
        let ne = sys.elements.len();
        let gas = &sys.gas;
        let nc = gas.len();
        let lnp = (p / P_STANDARD).ln();
        let rt = R * t;
        let mut fw = FugacityWork::new(nc);
        let mut amounts = vec![0.0; ns];
        let mut out = Vec::with_capacity(phases.len());
        let (mut gibbs, mut max_red) = (0.0, 0.0f64);
        for ph in phases.iter_mut() {
            let n = ph.amounts();
            let tot: f64 = n.iter().sum();
            model.phase_ln_phi(t, p, &n, RootChoice::Stable, Need::VALUES, &mut fw, &mut ph.phi)?;
            let mut pa = vec![0.0; ns];
            let mut x = vec![0.0; ns];
            let mut red = vec![0.0; ns];
            for (i, &j) in gas.iter().enumerate() {
                if !self.eligible[j] {
                    continue;
                }
                pa[j] = n[i];
                x[j] = n[i] / tot;
                amounts[j] += n[i];
                let mu = self.g0[j] + (n[i] / tot).ln() + lnp + ph.phi.ln_phi[i];
                let mut d = mu;
                for &k in &self.rows {
                    d -= sys.formula[k * ns + j] * self.pi[k];
                }
                red[j] = d;
                if n[i] > 0.0 {
                    gibbs += n[i] * mu * rt;
                    max_red = max_red.max(d.abs());
                }
            }
            out.push(ReactivePhase {
                kind: if ph.phi.liquid_like {
                    PhaseKind::Liquid
                } else {
                    PhaseKind::Vapor
                },
                amount: tot,
                amounts: pa,
                mole_fractions: x,
                molar_volume: ph.phi.v / tot,
                z: ph.phi.z,
                ln_phi: ph.phi.ln_phi.clone(),
                reduced_gibbs: red,
            });
        }
        out.sort_by(|a, b| b.molar_volume.total_cmp(&a.molar_volume));
        if out.len() > 1 && out.iter().all(|ph| ph.kind == PhaseKind::Liquid) {
            out[0].kind = PhaseKind::Liquid2;
        }
        let btot: f64 = self.b.iter().copied().fold(0.0, f64::max);
        let mut eres: f64 = 0.0;
        for k in 0..ne {
            let cur: f64 = (0..ns).map(|j| sys.formula[k * ns + j] * amounts[j]).sum();
            eres = eres.max((cur - self.b[k]).abs() / btot);
        }
        let mut lam = vec![0.0; ne];
        for &k in &self.rows {
            lam[k] = rt * self.pi[k];
        }
        let mut excluded = self.excluded.clone();
        excluded.dedup();
        // The context's one-phase warm start no longer matches its state.
        self.warm = false;
        Ok(ReactivePhaseResult {
            temperature: t,
            pressure: p,
            phases: out,
            amounts,
            element_potentials: lam,
            gibbs,
            one_phase_min_tpd,
            min_tpd: test.min_tpd,
            stable: test.stable,
            max_reduced_gibbs: max_red,
            element_residual: eres,
            iterations,
            excluded,
            dependent_elements: self.dependent.clone(),
        })
    }
}

/// Merges a vanishing phase, or two phases of the same composition, into one; whether it did.
fn merge_degenerate(phases: &mut Vec<FluidPhase>) -> bool {
    if phases.len() < 2 {
        return false;
    }
    let (n0, n1) = (phases[0].amounts(), phases[1].amounts());
    let (t0, t1) = (n0.iter().sum::<f64>(), n1.iter().sum::<f64>());
    let total = t0 + t1;
    let same = n0
        .iter()
        .zip(&n1)
        .all(|(a, b)| (a / t0 - b / t1).abs() < SAME_COMPOSITION);
    if same || t0 < VANISHING_FRACTION * total || t1 < VANISHING_FRACTION * total {
        let merged: Vec<f64> = n0.iter().zip(&n1).map(|(a, b)| a + b).collect();
        *phases = vec![FluidPhase::from_amounts(&merged)];
        return true;
    }
    false
}
