//! Chemical equilibrium by Gibbs-energy minimisation under element balances.
//!
//! Minimises the total Gibbs energy G = Σ_gas n_j μ_j + Σ_cond n_c μ°_c over the species
//! amounts n ≥ 0 subject to the element balances A n = b (A the formula matrix of the
//! [`ReactionSystem`], b the element totals of the feed), for an ideal-gas mixture, a real
//! gas through any [`FluidModel`]'s fugacity coefficients, and pure condensed species
//! (graphite, liquid water ...) that appear and disappear.
//!
//! **Method.** The Lagrangian Newton method of S. Gordon and B. J. McBride, *Computer Program
//! for Calculation of Complex Chemical Equilibrium Compositions and Applications, I. Analysis*,
//! NASA Reference Publication 1311 (1994), §2–3: Newton iterations on the gas amounts (in
//! ln n_j), the total gas amount, the condensed amounts and the element potentials
//! π_k = λ_k/(RT), reduced to a linear system of size (elements + condensed species + 1);
//! the step control of that report (λ = min(1, λ1, λ2), which keeps the amounts positive and
//! lets trace species fall to 1e-300 without breaking); condensed species inserted, after
//! convergence, when their reduced Gibbs energy μ°_c/RT − Σ_k a_kc π_k is negative, and
//! removed when their amount reaches zero. The element potentials are the Lagrange
//! multipliers: at the solution μ_j = Σ_k a_kj λ_k for every present species, and the
//! certificate reports μ_c/RT − Σ_k a_kc π_k ≥ 0 for every absent condensed species.
//! Species containing an element that the feed does not carry are excluded (with the
//! reason), and linearly dependent element rows of the formula matrix are dropped (their
//! potentials are reported as 0, since they are not unique).
//!
//! Real gases: ln φ_j of the gas mixture from the model (vapour-like root) enters μ_j; within
//! a Newton iteration φ is held at its current value (the ideal-solution Jacobian), so the
//! iteration converges linearly rather than quadratically, to the same tolerance.
//!
//! Specifications: TP ([`equilibrate_tp`]), HP (adiabatic flame temperature at constant
//! pressure, [`equilibrate_hp`]) and SP (isentropic, [`equilibrate_sp`]), the last two by a
//! bracketed outer Newton iteration on T with the analytic equilibrium heat capacity
//! (Gordon & McBride 1994, §2.5, the derivatives (∂ln n_j/∂ln T)_p from the same matrix).
//!
//! Constant volume: TV ([`equilibrate_tv`], a closed rigid vessel at known T) and UV
//! ([`equilibrate_uv`], the constant-volume explosion). At fixed T and total volume V the
//! equilibrium minimises the Helmholtz energy A = G − pV; since (∂G/∂p)_T = V, the minimum of
//! A at (T, V) is the minimum of G at (T, p) for the p at which the equilibrium volume
//! equals V (Gordon & McBride 1994, §2.2, state their (T, V) and (U, V) problems in these
//! terms; cited from memory). The TP solver therefore runs inside a safeguarded Newton
//! iteration on ln p with the analytic slope (∂ln V/∂ln p)_T of the reacting mixture, the
//! composition shift (∂ln n_j/∂ln p)_T from the same Gordon–McBride matrix with the pressure
//! right-hand side (1994, eq. 2.58; equation numbers here from memory), bracketed by the
//! pressure search range. UV (U = H − pV at fixed V) runs a bracketed Newton iteration on T
//! with the TV solver inside and the analytic equilibrium heat capacity at constant volume
//! c_v = c_p + p (∂V/∂ln T)_p² / (T (∂V/∂ln p)_T) (1994, eq. 2.70, from memory) as slope.
//! Reactive phase equilibrium with a fluid liquid phase (reaction and a vapour–liquid or
//! liquid–liquid split together, both phases from the fluid model; TP only):
//! [`equilibrate_tp_fluid_phases`], see the [`phases`] module. Elsewhere a condensate is a
//! pure condensed species.
//!
//! Units: T in K, p in Pa, amounts in mol, energies in J (per the whole system) or J/mol.
//!
//! **Caution.** Equilibrium is a limit, not a prediction of kinetics: a combustion,
//! explosion or synthesis mixture may stay far from it (frozen NO, unburnt CO, slow ammonia
//! synthesis without catalyst). Results for combustion, explosions and toxic gases (CO, NH3,
//! NO) are aids to judgement; the design of burners, vents and relief systems defers to the
//! applicable codes and licensed engineering practice.

use crate::error::{Error, Result, check};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use crate::numerics::linalg::lu_solve;
use crate::substance::{P_STANDARD, R, Species, SpeciesBank, SpeciesPhase};
use serde::{Deserialize, Serialize};

pub mod phases;
pub use phases::{ReactivePhase, ReactivePhaseResult, equilibrate_tp_fluid_phases};

/// Species list and formula matrix of a reacting system.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReactionSystem {
    species: Vec<Species>,
    elements: Vec<String>,
    /// elements × species, row-major.
    formula: Vec<f64>,
    gas: Vec<usize>,
}

impl ReactionSystem {
    /// A system from species names or aliases, looked up in the embedded species file and,
    /// failing that, among the embedded components as ideal gases ([`SpeciesBank::get`]).
    pub fn from_names<S: AsRef<str>>(names: &[S]) -> Result<Self> {
        let bank = SpeciesBank::embedded();
        let sp = names.iter().map(|n| bank.get(n.as_ref())).collect::<Result<Vec<_>>>()?;
        Self::new(sp)
    }

    /// A system from species given in code; each is validated, names must be distinct.
    pub fn new(species: Vec<Species>) -> Result<Self> {
        if species.is_empty() {
            return Err(Error::invalid("species", "at least one species is required"));
        }
        for (i, s) in species.iter().enumerate() {
            s.validate()?;
            if species[..i].iter().any(|o| o.name.eq_ignore_ascii_case(&s.name)) {
                return Err(Error::invalid("species", format!("'{}' is listed twice", s.name)));
            }
        }
        let mut elements: Vec<String> = Vec::new();
        for s in &species {
            for (e, &v) in &s.elements {
                if v != 0.0 && !elements.contains(e) {
                    elements.push(e.clone());
                }
            }
        }
        elements.sort();
        let ns = species.len();
        let mut formula = vec![0.0; elements.len() * ns];
        for (j, s) in species.iter().enumerate() {
            for (k, e) in elements.iter().enumerate() {
                formula[k * ns + j] = s.elements.get(e).copied().unwrap_or(0.0);
            }
        }
        let gas = (0..ns)
            .filter(|&j| species[j].phase == SpeciesPhase::Gas)
            .collect::<Vec<_>>();
        if gas.is_empty() {
            return Err(Error::invalid("species", "at least one gas species is required"));
        }
        Ok(ReactionSystem {
            species,
            elements,
            formula,
            gas,
        })
    }

    /// The species, in the order amounts are given and returned.
    pub fn species(&self) -> &[Species] {
        &self.species
    }

    /// The element symbols (sorted), in the order of the element potentials.
    pub fn elements(&self) -> &[String] {
        &self.elements
    }

    /// The formula matrix, elements × species, row-major: atoms of element k per molecule of
    /// species j at `[k * num_species + j]`.
    pub fn formula_matrix(&self) -> &[f64] {
        &self.formula
    }

    /// Number of species.
    pub fn num_species(&self) -> usize {
        self.species.len()
    }

    /// Indices of the gas species, in order (the component order a fluid model must have).
    pub fn gas_species(&self) -> &[usize] {
        &self.gas
    }

    /// Index of a species by name or alias.
    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.species.iter().position(|s| s.is_named(name))
    }

    /// Element totals b_k = Σ_j a_kj n_j of the amounts `n` (mol of atoms), after checking them.
    pub fn element_totals(&self, n: &[f64]) -> Result<Vec<f64>> {
        check_feed(self, n)?;
        let ns = self.num_species();
        Ok((0..self.elements.len())
            .map(|k| (0..ns).map(|j| self.formula[k * ns + j] * n[j]).sum())
            .collect())
    }

    /// Standard-state enthalpy of the amounts `n` (mol) at T (K): Σ n_j h°_j(T), J; each gas
    /// as an ideal gas, each condensed species pure. The enthalpy of a feed at its inlet
    /// temperature, for [`equilibrate_hp`].
    pub fn enthalpy(&self, n: &[f64], t: f64) -> Result<f64> {
        check_feed(self, n)?;
        check::temperature(t)?;
        let mut h = 0.0;
        for (j, s) in self.species.iter().enumerate() {
            if n[j] > 0.0 {
                h += n[j] * s.standard(t)?.h;
            }
        }
        Ok(h)
    }
}

fn check_feed(sys: &ReactionSystem, n: &[f64]) -> Result<f64> {
    if n.len() != sys.num_species() {
        return Err(Error::invalid(
            "feed",
            format!("{} amounts given for {} species", n.len(), sys.num_species()),
        ));
    }
    let mut tot = 0.0;
    for (j, &v) in n.iter().enumerate() {
        if !(v.is_finite() && v >= 0.0) {
            return Err(Error::invalid(
                "feed",
                format!(
                    "amount of '{}' is {v} mol; finite amounts >= 0 mol are required",
                    sys.species[j].name
                ),
            ));
        }
        tot += v;
    }
    if !(tot > 0.0) {
        return Err(Error::invalid("feed", "all amounts are zero; some feed is required"));
    }
    Ok(tot)
}

/// Options of the reaction-equilibrium solvers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ReactionOptions {
    /// Convergence tolerance on the relative Newton corrections n_j |Δln n_j| / n, the
    /// relative element-balance residual and, for HP/SP, |ΔT|/T (dimensionless).
    pub tolerance: f64,
    /// Largest number of Newton iterations per equilibrium (all condensed-set changes
    /// together).
    pub max_iterations: usize,
    /// Whether condensed species may form (false: gas only, condensed species excluded).
    pub condensed: bool,
    /// Lower temperature bound of the HP/SP search, K (`None`: the gas species' common cp
    /// range).
    pub t_min: Option<f64>,
    /// Upper temperature bound of the HP/SP search, K (`None`: the gas species' common cp
    /// range).
    pub t_max: Option<f64>,
    /// First temperature of the HP/SP/UV search, K (`None`: 1500 K, or the last solution of
    /// a warm context).
    pub t_guess: Option<f64>,
    /// Lower pressure bound of the TV/UV pressure search, Pa (`None`: 1e-3 Pa).
    pub p_min: Option<f64>,
    /// Upper pressure bound of the TV/UV pressure search, Pa (`None`: 1e10 Pa).
    pub p_max: Option<f64>,
}

/// Default lower bound of the TV/UV pressure search, Pa.
const P_SEARCH_MIN: f64 = 1e-3;
/// Default upper bound of the TV/UV pressure search, Pa.
const P_SEARCH_MAX: f64 = 1e10;

impl Default for ReactionOptions {
    fn default() -> Self {
        ReactionOptions {
            tolerance: 1e-11,
            max_iterations: 500,
            condensed: true,
            t_min: None,
            t_max: None,
            t_guess: None,
            p_min: None,
            p_max: None,
        }
    }
}

/// A species left out of the minimisation, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExcludedSpecies {
    /// Species name.
    pub name: String,
    /// Why it was left out.
    pub reason: String,
}

/// The evidence that the result is the constrained Gibbs-energy minimum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct ReactionCertificate {
    /// Reduced Gibbs energy μ_j/(RT) − Σ_k a_kj π_k of each species (dimensionless); ≈ 0 for
    /// gas species and present condensed species, ≥ 0 for absent condensed species at the
    /// minimum; `None` for excluded species.
    pub reduced_gibbs: Vec<Option<f64>>,
    /// The least reduced Gibbs energy over the absent (but eligible) condensed species; the
    /// result is certified when this is ≥ 0 (within the tolerance). `None` if there is none.
    pub min_absent: Option<f64>,
    /// Largest |reduced Gibbs energy| over the gas and present condensed species.
    pub max_present: f64,
    /// Largest relative element-balance residual |Σ_j a_kj n_j − b_k| / max b.
    pub element_residual: f64,
    /// Species left out, with reasons.
    pub excluded: Vec<ExcludedSpecies>,
    /// Elements whose rows were linearly dependent and dropped (potential reported as 0).
    pub dependent_elements: Vec<String>,
}

/// The result of a reaction-equilibrium calculation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReactionResult {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Amount of each species (system order), mol; 0 for absent condensed and excluded species.
    pub amounts: Vec<f64>,
    /// Mole fraction of each species in the gas phase (0 for condensed species).
    pub mole_fractions: Vec<f64>,
    /// Total amount of gas, mol.
    pub gas_amount: f64,
    /// Names of the condensed species present.
    pub condensed: Vec<String>,
    /// Element potentials λ_k = RT π_k (the Lagrange multipliers of the element balances),
    /// J/mol, in the order of [`ReactionSystem::elements`]; 0 for elements absent from the
    /// feed or with dependent rows.
    pub element_potentials: Vec<f64>,
    /// Enthalpy of the equilibrium mixture, J.
    pub enthalpy: f64,
    /// Internal energy of the equilibrium mixture, U = H − pV, J.
    #[serde(default)]
    pub internal_energy: f64,
    /// Entropy of the equilibrium mixture, J/K.
    pub entropy: f64,
    /// Gibbs energy of the equilibrium mixture, J.
    pub gibbs: f64,
    /// Equilibrium (reacting) isobaric heat capacity (dH/dT)_p with the composition
    /// shifting, J/K (ideal-gas part; the residual part's temperature derivative is not
    /// included).
    pub cp_equilibrium: f64,
    /// Frozen isobaric heat capacity Σ n_j cp_j, J/K (ideal-gas and condensed standard state).
    pub cp_frozen: f64,
    /// Equilibrium (reacting) isochoric heat capacity (dU/dT)_V with the composition
    /// shifting, J/K: c_v = c_p + p (∂V/∂ln T)_p² / (T (∂V/∂ln p)_T), the volume derivatives
    /// from the Gordon–McBride derivative systems (ideal-gas part, as for
    /// `cp_equilibrium`).
    #[serde(default)]
    pub cv_equilibrium: f64,
    /// Volume of the gas phase plus the condensed species, m3.
    pub volume: f64,
    /// Newton iterations spent (for HP/SP: summed over the temperature iterations).
    pub iterations: usize,
    /// Outer temperature iterations (HP/SP/UV; 0 for TP and TV).
    pub temperature_iterations: usize,
    /// Outer pressure iterations (TV; for UV summed over the temperature iterations; 0
    /// otherwise).
    #[serde(default)]
    pub pressure_iterations: usize,
    /// The minimum's certificate.
    pub certificate: ReactionCertificate,
}

/// Reusable storage and warm-start state for reaction-equilibrium calculations on one
/// system: repeated calls reuse its buffers and start from the last solution.
#[derive(Debug, Clone, Default)]
pub struct ReactionContext {
    ns: usize,
    // per species
    g0: Vec<f64>,    // μ°/RT (condensed: incl. v (p − p°)/RT)
    h0: Vec<f64>,    // h°/RT
    s0: Vec<f64>,    // s°/R
    cp0: Vec<f64>,   // cp°/R
    lnn: Vec<f64>,   // ln n_j (gas)
    nc: Vec<f64>,    // amounts of condensed species
    mu: Vec<f64>,    // μ_j/RT (gas)
    dln: Vec<f64>,   // Δ ln n_j
    lnphi: Vec<f64>, // ln φ_j (gas)
    dlnphi_dt: Vec<f64>,
    active: Vec<bool>,
    eligible: Vec<bool>,
    in_set: Vec<bool>, // condensed present
    excluded: Vec<ExcludedSpecies>,
    rows: Vec<usize>,
    dependent: Vec<String>,
    b: Vec<f64>,
    pi: Vec<f64>,
    mat: Vec<f64>,
    rhs: Vec<f64>,
    set: Vec<usize>,
    ngas_tot: f64,
    lnn_tot: f64,
    warm: bool,
    last_t: Option<f64>,
    /// Last (T, p) of a TV solution, K and Pa (warm start of the pressure search).
    last_tp: Option<(f64, f64)>,
    /// (∂V/∂ln T)_p and (∂V/∂ln p)_T of the last result, m3.
    dv_dlnt: f64,
    dv_dlnp: f64,
    // real-gas scratch
    fw: FugacityWork,
    phi: LnPhi,
    gas_n: Vec<f64>,
}

/// One evaluation of a temperature search: the equilibrium at T (K), the residual and its
/// slope with respect to T.
type TemperatureEval<'a> = dyn FnMut(&mut ReactionContext, f64) -> Result<(ReactionResult, f64, f64)> + 'a;

struct Spec {
    t: f64,
    p: f64,
}

impl ReactionContext {
    /// A context for `system`.
    pub fn new(system: &ReactionSystem) -> Self {
        let mut c = ReactionContext::default();
        c.size(system);
        c
    }

    fn size(&mut self, sys: &ReactionSystem) {
        let ns = sys.num_species();
        if self.ns == ns && !self.g0.is_empty() {
            return;
        }
        self.ns = ns;
        for v in [
            &mut self.g0,
            &mut self.h0,
            &mut self.s0,
            &mut self.cp0,
            &mut self.lnn,
            &mut self.nc,
            &mut self.mu,
            &mut self.dln,
            &mut self.lnphi,
            &mut self.dlnphi_dt,
        ] {
            v.clear();
            v.resize(ns, 0.0);
        }
        self.active = vec![false; ns];
        self.eligible = vec![false; ns];
        self.in_set = vec![false; ns];
        self.b = vec![0.0; sys.elements.len()];
        self.pi = vec![0.0; sys.elements.len()];
        self.warm = false;
    }

    /// Forgets the last solution (the next call starts cold).
    pub fn reset(&mut self) {
        self.warm = false;
        self.last_t = None;
        self.last_tp = None;
    }

    /// TP equilibrium: see [`equilibrate_tp`].
    pub fn equilibrate_tp(
        &mut self,
        system: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        t: f64,
        p: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        check::temperature(t)?;
        check::pressure(p)?;
        check_model(system, model)?;
        self.prepare(system, feed, opts)?;
        self.standard(system, t, p, opts)?;
        let it = self.solve(system, model, &Spec { t, p }, opts)?;
        self.result(system, model, t, p, it, 0)
    }

    /// Equilibrium with standard chemical potentials given directly: `g0_rt[j]` = μ°_j/(RT)
    /// at T and p° = 1e5 Pa (dimensionless; for condensed species the value at p), for
    /// published problems that state them and for data of one's own. Energies in the result
    /// are then 0 (no enthalpies are known); amounts, element potentials and the
    /// certificate are as for [`equilibrate_tp`].
    pub fn equilibrate_with_potentials(
        &mut self,
        system: &ReactionSystem,
        g0_rt: &[f64],
        t: f64,
        p: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        check::temperature(t)?;
        check::pressure(p)?;
        if g0_rt.len() != system.num_species() || g0_rt.iter().any(|g| !g.is_finite()) {
            return Err(Error::invalid(
                "g0_rt",
                format!("{} finite values are required", system.num_species()),
            ));
        }
        self.prepare(system, feed, opts)?;
        self.g0.copy_from_slice(g0_rt);
        self.eligible.copy_from_slice(&self.active);
        self.h0.iter_mut().for_each(|h| *h = 0.0);
        self.s0.iter_mut().for_each(|s| *s = 0.0);
        self.cp0.iter_mut().for_each(|c| *c = 0.0);
        let it = self.solve(system, None, &Spec { t, p }, opts)?;
        let mut r = self.result(system, None, t, p, it, 0)?;
        r.enthalpy = 0.0;
        r.internal_energy = 0.0;
        r.entropy = 0.0;
        r.cp_equilibrium = 0.0;
        r.cp_frozen = 0.0;
        r.cv_equilibrium = 0.0;
        Ok(r)
    }

    /// HP equilibrium: see [`equilibrate_hp`].
    pub fn equilibrate_hp(
        &mut self,
        system: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        p: f64,
        h: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        self.state_function(system, model, p, h, feed, opts, false)
    }

    /// SP equilibrium: see [`equilibrate_sp`].
    pub fn equilibrate_sp(
        &mut self,
        system: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        p: f64,
        s: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        self.state_function(system, model, p, s, feed, opts, true)
    }

    #[allow(clippy::too_many_arguments)]
    fn state_function(
        &mut self,
        sys: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        p: f64,
        target: f64,
        feed: &[f64],
        opts: &ReactionOptions,
        entropy: bool,
    ) -> Result<ReactionResult> {
        check::pressure(p)?;
        check_model(sys, model)?;
        let what = if entropy { "entropy" } else { "enthalpy" };
        if !target.is_finite() {
            return Err(Error::invalid(what, format!("{target} is not finite")));
        }
        self.prepare(sys, feed, opts)?;
        let label = if entropy { "SP" } else { "HP" };
        self.search_temperature(sys, opts, what, label, target, &mut |c, t| {
            c.standard(sys, t, p, opts)?;
            let it = c.solve(sys, model, &Spec { t, p }, opts)?;
            let r = c.result(sys, model, t, p, it, 0)?;
            Ok(if entropy {
                let (f, df) = (r.entropy - target, r.cp_equilibrium / t);
                (r, f, df)
            } else {
                let (f, df) = (r.enthalpy - target, r.cp_equilibrium);
                (r, f, df)
            })
        })
    }

    /// The temperature search range: the common cp range of the gas species that can be
    /// present, narrowed by the options, K.
    fn temperature_bounds(&self, sys: &ReactionSystem, opts: &ReactionOptions) -> Result<(f64, f64)> {
        let (mut lo, mut hi) = (0.0f64, f64::INFINITY);
        for &j in &sys.gas {
            if self.active[j] {
                let (a, b) = sys.species[j].t_range();
                lo = lo.max(a);
                hi = hi.min(b);
            }
        }
        if let Some(v) = opts.t_min {
            check::temperature(v)?;
            lo = lo.max(v);
        }
        if let Some(v) = opts.t_max {
            check::temperature(v)?;
            hi = hi.min(v);
        }
        if !(lo < hi) {
            return Err(Error::invalid(
                "temperature bounds",
                format!("empty range [{lo}, {hi}] K"),
            ));
        }
        Ok((lo, hi))
    }

    /// Bracketed Newton iteration on T for a state function that increases with T: `eval`
    /// returns the equilibrium at T, the residual f(T) (value − `target`) and its slope
    /// df/dT > 0. Newton steps leaving the bracket try the untested bound, else bisect.
    fn search_temperature(
        &mut self,
        sys: &ReactionSystem,
        opts: &ReactionOptions,
        what: &str,
        label: &str,
        target: f64,
        eval: &mut TemperatureEval<'_>,
    ) -> Result<ReactionResult> {
        let (mut lo, mut hi) = self.temperature_bounds(sys, opts)?;
        let (blo, bhi) = (lo, hi);
        let mut t = opts.t_guess.or(self.last_t).unwrap_or(1500.0).clamp(lo, hi);
        let (mut total_it, mut total_p) = (0, 0);
        let (mut f_lo, mut f_hi): (Option<f64>, Option<f64>) = (None, None);
        for outer in 1..=100 {
            let (mut r, f, df) = eval(self, t)?;
            total_it += r.iterations;
            total_p += r.pressure_iterations;
            r.iterations = total_it;
            r.pressure_iterations = total_p;
            r.temperature_iterations = outer;
            if f > 0.0 {
                hi = t;
                f_hi = Some(f);
            } else {
                lo = t;
                f_lo = Some(f);
            }
            let step = if df > 0.0 { -f / df } else { f64::NAN };
            if step.abs() <= opts.tolerance.max(1e-14) * t * 10.0 || f == 0.0 {
                self.last_t = Some(t);
                return Ok(r);
            }
            let mut next = t + step;
            if !(next > lo && next < hi) || !next.is_finite() {
                // Outside the bracket: try the untested bound, else bisect.
                if next >= hi && f_hi.is_none() {
                    next = hi;
                } else if next <= lo && f_lo.is_none() {
                    next = lo;
                } else {
                    next = 0.5 * (lo + hi);
                }
            }
            if next == t {
                // At a bound of the search with the specification beyond it.
                let (bound, side) = if f < 0.0 { (bhi, "above") } else { (blo, "below") };
                return Err(Error::NoSolution(format!(
                    "the {what} specification {target} needs a temperature {side} the bound {bound} K of the search \
                     range [{blo}, {bhi}] K (the gas species' common heat-capacity range, narrowed by the options); \
                     at {t} K the equilibrium {what} differs from it by {f}"
                )));
            }
            t = next;
        }
        Err(Error::not_converged(
            format!("{label} equilibrium temperature iteration"),
            vec![("temperature".into(), 100), ("Newton".into(), total_it)],
            hi - lo,
            opts.tolerance,
        ))
    }

    /// TV equilibrium: see [`equilibrate_tv`].
    pub fn equilibrate_tv(
        &mut self,
        system: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        t: f64,
        v: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        check::temperature(t)?;
        check::volume(v)?;
        check_model(system, model)?;
        self.prepare(system, feed, opts)?;
        self.volume_search(system, model, t, v, feed, opts)
    }

    /// UV equilibrium: see [`equilibrate_uv`].
    pub fn equilibrate_uv(
        &mut self,
        system: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        u: f64,
        v: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        check::volume(v)?;
        check_model(system, model)?;
        if !u.is_finite() {
            return Err(Error::invalid("internal energy", format!("{u} J is not finite")));
        }
        self.prepare(system, feed, opts)?;
        self.search_temperature(system, opts, "internal energy", "UV", u, &mut |c, t| {
            let r = c.volume_search(system, model, t, v, feed, opts)?;
            let (f, df) = (r.internal_energy - u, r.cv_equilibrium);
            Ok((r, f, df))
        })
    }

    /// The pressure search range of TV/UV, Pa.
    fn pressure_bounds(opts: &ReactionOptions) -> Result<(f64, f64)> {
        let lo = opts.p_min.unwrap_or(P_SEARCH_MIN);
        let hi = opts.p_max.unwrap_or(P_SEARCH_MAX);
        check::pressure(lo)?;
        check::pressure(hi)?;
        if !(lo < hi) {
            return Err(Error::invalid(
                "pressure bounds",
                format!("empty range [{lo}, {hi}] Pa"),
            ));
        }
        Ok((lo, hi))
    }

    /// Safeguarded Newton iteration on ln p at fixed T for the equilibrium volume V (m3):
    /// f(ln p) = ln V_eq(T, p) − ln V, which decreases with p (mechanical stability), with the
    /// analytic slope (∂ln V/∂ln p)_T of the reacting mixture. Steps are limited to a factor
    /// 10 in p; steps leaving the bracket try the untested bound, else bisect. Assumes
    /// [`Self::prepare`] has run.
    fn volume_search(
        &mut self,
        sys: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        t: f64,
        v: f64,
        feed: &[f64],
        opts: &ReactionOptions,
    ) -> Result<ReactionResult> {
        let (pmin, pmax) = Self::pressure_bounds(opts)?;
        let (blo, bhi) = (pmin.ln(), pmax.ln());
        let (mut lo, mut hi) = (blo, bhi);
        // First pressure: the last solution scaled to this T at fixed V (ideal gas), else the
        // ideal-gas pressure of the feed's gas amount (of all its amounts if it has no gas).
        let p0 = match self.last_tp {
            Some((t0, p0)) if self.warm => p0 * t / t0,
            _ => {
                let ng: f64 = sys.gas.iter().map(|&j| feed[j]).sum();
                let n = if ng > 0.0 { ng } else { feed.iter().sum() };
                n * R * t / v
            }
        };
        let mut x = p0.ln().clamp(lo, hi);
        let mut total_it = 0;
        let (mut f_lo, mut f_hi): (Option<f64>, Option<f64>) = (None, None);
        let mut last_f = f64::NAN;
        for outer in 1..=100 {
            let p = x.exp();
            self.standard(sys, t, p, opts)?;
            total_it += self.solve(sys, model, &Spec { t, p }, opts)?;
            let mut r = self.result(sys, model, t, p, total_it, 0)?;
            r.pressure_iterations = outer;
            let f = (r.volume / v).ln();
            last_f = f;
            let df = self.dv_dlnp / r.volume;
            if f > 0.0 {
                lo = x;
                f_lo = Some(f);
            } else {
                hi = x;
                f_hi = Some(f);
            }
            let step = if df < 0.0 {
                (-f / df).clamp(-std::f64::consts::LN_10, std::f64::consts::LN_10)
            } else {
                f64::NAN
            };
            if step.abs() <= opts.tolerance.max(1e-14) * 10.0 || f == 0.0 {
                self.last_tp = Some((t, p));
                return Ok(r);
            }
            let mut next = x + step;
            if !(next > lo && next < hi) || !next.is_finite() {
                if next >= hi && f_hi.is_none() {
                    next = hi;
                } else if next <= lo && f_lo.is_none() {
                    next = lo;
                } else {
                    next = 0.5 * (lo + hi);
                }
            }
            if next == x {
                let (bound, side) = if f > 0.0 { (pmax, "above") } else { (pmin, "below") };
                return Err(Error::NoSolution(format!(
                    "the volume specification {v} m3 at {t} K needs a pressure {side} the bound {bound} Pa of the \
                     search range [{pmin}, {pmax}] Pa (options p_min/p_max); at {p} Pa the equilibrium volume is {} m3",
                    r.volume
                )));
            }
            x = next;
        }
        Err(Error::not_converged(
            "TV equilibrium pressure iteration",
            vec![("pressure".into(), 100), ("Newton".into(), total_it)],
            last_f.abs(),
            opts.tolerance,
        ))
    }

    /// Element totals, exclusions and the independent element rows for this feed.
    fn prepare(&mut self, sys: &ReactionSystem, feed: &[f64], opts: &ReactionOptions) -> Result<()> {
        self.size(sys);
        check_feed(sys, feed)?;
        if !(opts.tolerance.is_finite() && opts.tolerance > 0.0 && opts.tolerance < 1e-2) {
            return Err(Error::invalid(
                "tolerance",
                format!("{} must lie in (0, 0.01)", opts.tolerance),
            ));
        }
        let ns = sys.num_species();
        let ne = sys.elements.len();
        for k in 0..ne {
            self.b[k] = (0..ns).map(|j| sys.formula[k * ns + j] * feed[j]).sum();
        }
        let was_active = self.active.clone();
        self.excluded.clear();
        for j in 0..ns {
            let missing = (0..ne).find(|&k| sys.formula[k * ns + j] != 0.0 && self.b[k] <= 0.0);
            self.active[j] = missing.is_none();
            if let Some(k) = missing {
                self.excluded.push(ExcludedSpecies {
                    name: sys.species[j].name.clone(),
                    reason: format!("contains {}, which no feed species carries", sys.elements[k]),
                });
            } else if sys.species[j].phase == SpeciesPhase::Condensed && !opts.condensed {
                self.active[j] = false;
                self.excluded.push(ExcludedSpecies {
                    name: sys.species[j].name.clone(),
                    reason: "condensed species disabled by the options".into(),
                });
            }
        }
        if !sys.gas.iter().any(|&j| self.active[j]) {
            return Err(Error::invalid(
                "feed",
                "no gas species can form from the feed's elements (a gas phase is required)",
            ));
        }
        // Independent element rows (Gaussian elimination with partial pivoting over the
        // active columns).
        self.rows.clear();
        self.dependent.clear();
        let cand: Vec<usize> = (0..ne).filter(|&k| self.b[k] > 0.0).collect();
        let cols: Vec<usize> = (0..ns).filter(|&j| self.active[j]).collect();
        let mut m: Vec<Vec<f64>> = cand
            .iter()
            .map(|&k| cols.iter().map(|&j| sys.formula[k * ns + j]).collect())
            .collect();
        let mut used = vec![false; cand.len()];
        for c in 0..cols.len() {
            let mut best = None;
            let mut bv = 1e-10;
            for (r, row) in m.iter().enumerate() {
                if !used[r] && row[c].abs() > bv {
                    bv = row[c].abs();
                    best = Some(r);
                }
            }
            if let Some(r) = best {
                used[r] = true;
                let pr = m[r].clone();
                for (r2, row) in m.iter_mut().enumerate() {
                    if r2 != r && !used[r2] {
                        let f = row[c] / pr[c];
                        for (x, y) in row.iter_mut().zip(&pr) {
                            *x -= f * y;
                        }
                    }
                }
            }
        }
        for (r, &k) in cand.iter().enumerate() {
            if used[r] {
                self.rows.push(k);
            } else {
                self.dependent.push(sys.elements[k].clone());
            }
        }
        if was_active != self.active {
            self.warm = false;
        }
        Ok(())
    }

    /// Standard potentials at (T, p) for the active species.
    fn standard(&mut self, sys: &ReactionSystem, t: f64, p: f64, opts: &ReactionOptions) -> Result<()> {
        self.excluded.retain(|e| !e.reason.starts_with("outside"));
        for (j, s) in sys.species.iter().enumerate() {
            self.eligible[j] = self.active[j];
            if !self.active[j] {
                continue;
            }
            let st = match s.standard(t) {
                Ok(st) => st,
                Err(e) => {
                    if s.phase == SpeciesPhase::Condensed {
                        // A condensed species outside its data range cannot be considered.
                        self.eligible[j] = false;
                        self.in_set[j] = false;
                        self.nc[j] = 0.0;
                        let (a, b) = s.t_range();
                        self.excluded.push(ExcludedSpecies {
                            name: s.name.clone(),
                            reason: format!("outside its heat-capacity range [{a}, {b}] K"),
                        });
                        continue;
                    }
                    return Err(e);
                }
            };
            let rt = R * t;
            self.g0[j] = st.g / rt + s.molar_volume.map_or(0.0, |v| v * (p - P_STANDARD) / rt);
            self.h0[j] = (st.h + s.molar_volume.map_or(0.0, |v| v * (p - P_STANDARD))) / rt;
            self.s0[j] = st.s / R;
            self.cp0[j] = st.cp / R;
        }
        let _ = opts;
        Ok(())
    }

    fn eval_mu(&mut self, sys: &ReactionSystem, model: Option<&dyn FluidModel>, sp: &Spec) -> Result<()> {
        let lnp = (sp.p / P_STANDARD).ln();
        if let Some(m) = model {
            self.gas_n.clear();
            for &j in &sys.gas {
                self.gas_n.push(if self.eligible[j] { self.lnn[j].exp() } else { 0.0 });
            }
            if self.fw_size() != sys.gas.len() {
                self.fw = FugacityWork::new(sys.gas.len());
                self.phi = LnPhi::new(sys.gas.len());
            }
            ln_phi(
                m,
                sp.t,
                sp.p,
                &self.gas_n,
                RootChoice::Vapor,
                Need::VALUES,
                &mut self.fw,
                &mut self.phi,
            )?;
            for (i, &j) in sys.gas.iter().enumerate() {
                self.lnphi[j] = self.phi.ln_phi[i];
            }
        }
        for &j in &sys.gas {
            if self.eligible[j] {
                self.mu[j] = self.g0[j] + self.lnn[j] - self.lnn_tot + lnp + self.lnphi[j];
            }
        }
        Ok(())
    }

    fn fw_size(&self) -> usize {
        self.phi.ln_phi.len()
    }

    /// Builds the reduced Gordon–McBride matrix (rows: elements, condensed, total moles).
    fn build(&mut self, sys: &ReactionSystem) -> usize {
        let ns = sys.num_species();
        let m = self.rows.len();
        self.set.clear();
        for j in 0..ns {
            if self.in_set[j] {
                self.set.push(j);
            }
        }
        let nn = m + self.set.len() + 1;
        self.mat.clear();
        self.mat.resize(nn * nn, 0.0);
        self.rhs.clear();
        self.rhs.resize(nn, 0.0);
        let a = |k: usize, j: usize| sys.formula[k * ns + j];
        let mut sum_n = 0.0;
        let mut sum_nmu = 0.0;
        for &j in &sys.gas {
            if self.eligible[j] {
                let nj = self.lnn[j].exp();
                sum_n += nj;
                sum_nmu += nj * self.mu[j];
            }
        }
        for (r, &k) in self.rows.iter().enumerate() {
            let mut cur = 0.0;
            let mut bg = 0.0;
            let mut rhs = 0.0;
            for &j in &sys.gas {
                if !self.eligible[j] {
                    continue;
                }
                let akj = a(k, j);
                if akj == 0.0 {
                    continue;
                }
                let nj = self.lnn[j].exp();
                cur += akj * nj;
                bg += akj * nj;
                rhs += akj * nj * self.mu[j];
                for (r2, &i) in self.rows.iter().enumerate() {
                    self.mat[r * nn + r2] += akj * a(i, j) * nj;
                }
            }
            for (c, &j) in self.set.iter().enumerate() {
                cur += a(k, j) * self.nc[j];
                self.mat[r * nn + m + c] = a(k, j);
                self.mat[(m + c) * nn + r] = a(k, j);
            }
            self.mat[r * nn + nn - 1] = bg;
            self.mat[(nn - 1) * nn + r] = bg;
            self.rhs[r] = self.b[k] - cur + rhs;
        }
        for (c, &j) in self.set.iter().enumerate() {
            self.rhs[m + c] = self.g0[j];
        }
        self.mat[nn * nn - 1] = sum_n - self.ngas_tot;
        self.rhs[nn - 1] = self.ngas_tot - sum_n + sum_nmu;
        nn
    }

    fn solve(
        &mut self,
        sys: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        sp: &Spec,
        opts: &ReactionOptions,
    ) -> Result<usize> {
        let ns = sys.num_species();
        let btot: f64 = self.rows.iter().map(|&k| self.b[k]).fold(0.0, f64::max);
        if !self.warm {
            // Cold start (Gordon & McBride 1994, §3.4): equal gas amounts, no condensed phase.
            let ng = sys.gas.iter().filter(|&&j| self.eligible[j]).count() as f64;
            let n0 = btot.max(1e-300);
            for j in 0..ns {
                self.in_set[j] = false;
                self.nc[j] = 0.0;
                self.lnphi[j] = 0.0;
                self.lnn[j] = (n0 / ng).ln();
            }
            self.ngas_tot = n0;
            self.lnn_tot = n0.ln();
        }
        for j in 0..ns {
            if self.in_set[j] && !self.eligible[j] {
                self.in_set[j] = false;
                self.nc[j] = 0.0;
            }
            if !self.eligible[j] {
                self.lnphi[j] = 0.0;
            }
        }
        let size = 18.420_680_743_952_367; // −ln 1e-8
        let floor = -690.0; // ln n ≥ ln 1e-300
        let mut it = 0;
        let mut changes = 0;
        let mut last_res = f64::INFINITY;
        loop {
            it += 1;
            if it > opts.max_iterations {
                self.warm = false;
                return Err(Error::not_converged(
                    "reaction equilibrium (Gordon-McBride Newton)",
                    vec![("Newton".into(), it - 1), ("condensed-set changes".into(), changes)],
                    last_res,
                    opts.tolerance,
                ));
            }
            self.eval_mu(sys, model, sp)?;
            let nn = self.build(sys);
            let m = self.rows.len();
            if !lu_solve(&mut self.mat, nn, &mut self.rhs) {
                // Singular: a condensed set violating the phase rule; drop the last added.
                if let Some(&j) = self.set.last() {
                    self.in_set[j] = false;
                    self.nc[j] = 0.0;
                    changes += 1;
                    continue;
                }
                self.warm = false;
                return Err(Error::not_converged(
                    "reaction equilibrium (Gordon-McBride Newton): singular system",
                    vec![("Newton".into(), it)],
                    last_res,
                    opts.tolerance,
                ));
            }
            for (r, &k) in self.rows.iter().enumerate() {
                self.pi[k] = self.rhs[r];
            }
            let dlntot = self.rhs[nn - 1];
            let ln_tot = self.lnn_tot;
            let mut sum_n = 0.0;
            for &j in &sys.gas {
                if self.eligible[j] {
                    sum_n += self.lnn[j].exp();
                }
            }
            // Corrections and the step size (Gordon & McBride 1994, eqs. 3.1–3.3).
            let mut big = 5.0 * dlntot.abs();
            let mut lam2 = f64::INFINITY;
            let mut res: f64 = (self.ngas_tot * dlntot).abs() / sum_n.max(1e-300);
            for &j in &sys.gas {
                if !self.eligible[j] {
                    continue;
                }
                let mut d = -self.mu[j] + dlntot;
                for &k in &self.rows {
                    d += sys.formula[k * ns + j] * self.pi[k];
                }
                self.dln[j] = d;
                let rel = self.lnn[j] - ln_tot;
                if rel > -size {
                    big = big.max(d.abs());
                } else if d > 0.0 {
                    // λ2 keeps a trace species from rising above 1e-4 of the gas.
                    let l = ((-rel - 9.210_340_371_976_184) / (d - dlntot)).abs();
                    lam2 = lam2.min(l);
                }
                res = res.max((self.lnn[j].exp() * d).abs() / sum_n);
            }
            let cur_tot: f64 = sum_n + self.set.iter().map(|&j| self.nc[j]).sum::<f64>();
            for c in 0..self.set.len() {
                res = res.max(self.rhs[m + c].abs() / cur_tot.max(1e-300));
            }
            let lam1 = if big > 2.0 { 2.0 / big } else { 1.0 };
            let lam = 1.0f64.min(lam1).min(lam2);
            for &j in &sys.gas {
                if self.eligible[j] {
                    self.lnn[j] = (self.lnn[j] + lam * self.dln[j]).max(floor);
                }
            }
            self.lnn_tot += lam * dlntot;
            self.ngas_tot = self.lnn_tot.exp();
            let mut removed = false;
            for (c, &j) in self.set.clone().iter().enumerate() {
                self.nc[j] += lam * self.rhs[m + c];
                if self.nc[j] <= 0.0 {
                    self.nc[j] = 0.0;
                    self.in_set[j] = false;
                    removed = true;
                }
            }
            if removed {
                changes += 1;
                continue;
            }
            last_res = res;
            if lam == 1.0 && res <= opts.tolerance {
                // Converged for this condensed set; check the element balances.
                let mut eres: f64 = 0.0;
                for &k in &self.rows {
                    let mut cur = 0.0;
                    for j in 0..ns {
                        if self.eligible[j] {
                            let nj = if self.in_set[j] {
                                self.nc[j]
                            } else if sys.species[j].phase == SpeciesPhase::Gas {
                                self.lnn[j].exp()
                            } else {
                                0.0
                            };
                            cur += sys.formula[k * ns + j] * nj;
                        }
                    }
                    eres = eres.max((cur - self.b[k]).abs() / btot);
                }
                if eres > opts.tolerance * 10.0 {
                    continue;
                }
                // Condensed species whose reduced Gibbs energy is negative enter.
                let mut best: Option<(usize, f64)> = None;
                for j in 0..ns {
                    if !self.eligible[j] || self.in_set[j] || sys.species[j].phase != SpeciesPhase::Condensed {
                        continue;
                    }
                    let mut d = self.g0[j];
                    for &k in &self.rows {
                        d -= sys.formula[k * ns + j] * self.pi[k];
                    }
                    if d < -1e-9 && best.is_none_or(|(_, bd)| d < bd) {
                        best = Some((j, d));
                    }
                }
                if let Some((j, _)) = best {
                    // A present condensed species of the same formula gives way.
                    for c in 0..ns {
                        if self.in_set[c]
                            && (0..sys.elements.len()).all(|k| sys.formula[k * ns + c] == sys.formula[k * ns + j])
                        {
                            self.in_set[c] = false;
                            self.nc[c] = 0.0;
                        }
                    }
                    self.in_set[j] = true;
                    self.nc[j] = 0.0;
                    changes += 1;
                    if changes > 4 * ns + 10 {
                        self.warm = false;
                        return Err(Error::not_converged(
                            "reaction equilibrium: the condensed-phase set does not settle",
                            vec![("Newton".into(), it), ("condensed-set changes".into(), changes)],
                            res,
                            opts.tolerance,
                        ));
                    }
                    continue;
                }
                self.warm = true;
                return Ok(it);
            }
        }
    }

    fn result(
        &mut self,
        sys: &ReactionSystem,
        model: Option<&dyn FluidModel>,
        t: f64,
        p: f64,
        iterations: usize,
        t_iterations: usize,
    ) -> Result<ReactionResult> {
        let ns = sys.num_species();
        let ne = sys.elements.len();
        let rt = R * t;
        let lnp = (p / P_STANDARD).ln();
        let mut amounts = vec![0.0; ns];
        let mut ngas = 0.0;
        for &j in &sys.gas {
            if self.eligible[j] {
                amounts[j] = self.lnn[j].exp();
                ngas += amounts[j];
            }
        }
        for j in 0..ns {
            if self.in_set[j] {
                amounts[j] = self.nc[j];
            }
        }
        let mole_fractions: Vec<f64> = (0..ns)
            .map(|j| {
                if sys.species[j].phase == SpeciesPhase::Gas {
                    amounts[j] / ngas
                } else {
                    0.0
                }
            })
            .collect();
        // Residual (real-gas) parts at the solution.
        let (mut hr, mut gr, mut z) = (0.0, 0.0, 1.0);
        if let Some(m) = model {
            self.gas_n.clear();
            for &j in &sys.gas {
                self.gas_n.push(amounts[j]);
            }
            ln_phi(
                m,
                t,
                p,
                &self.gas_n,
                RootChoice::Vapor,
                Need {
                    temperature: true,
                    ..Need::VALUES
                },
                &mut self.fw,
                &mut self.phi,
            )?;
            for (i, &j) in sys.gas.iter().enumerate() {
                self.lnphi[j] = self.phi.ln_phi[i];
                self.dlnphi_dt[j] = self.phi.dt[i];
                gr += amounts[j] * self.phi.ln_phi[i];
                hr -= t * amounts[j] * self.phi.dt[i];
            }
            z = self.phi.z;
        }
        // Certificate.
        let mut reduced = vec![None; ns];
        let mut min_absent: Option<f64> = None;
        let mut max_present: f64 = 0.0;
        for j in 0..ns {
            if !self.eligible[j] {
                continue;
            }
            let mut d = if sys.species[j].phase == SpeciesPhase::Gas {
                self.g0[j] + (amounts[j] / ngas).ln() + lnp + self.lnphi[j]
            } else {
                self.g0[j]
            };
            for &k in &self.rows {
                d -= sys.formula[k * ns + j] * self.pi[k];
            }
            reduced[j] = Some(d);
            if sys.species[j].phase == SpeciesPhase::Condensed && !self.in_set[j] {
                min_absent = Some(min_absent.map_or(d, |m: f64| m.min(d)));
            } else {
                max_present = max_present.max(d.abs());
            }
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
        // Energies (J) and the equilibrium heat capacity from the derivative system.
        let (mut h, mut s, mut g, mut cpf) = (0.0, 0.0, 0.0, 0.0);
        for j in 0..ns {
            let nj = amounts[j];
            if nj <= 0.0 {
                continue;
            }
            h += nj * self.h0[j] * rt;
            cpf += nj * self.cp0[j] * R;
            if sys.species[j].phase == SpeciesPhase::Gas {
                let x = (nj / ngas).ln() + lnp;
                s += nj * (self.s0[j] - x) * R;
                g += nj * (self.g0[j] + x + self.lnphi[j]) * rt;
            } else {
                s += nj * (self.s0[j] * R);
                g += nj * self.g0[j] * rt;
            }
        }
        h += hr * R * t;
        s += (hr - gr) * R;
        let cpe = self.equilibrium_cp(sys, &amounts) * R + (cpf - 0.0);
        let vgas = ngas * R * t * z / p;
        let volume = vgas
            + (0..ns)
                .filter(|&j| self.in_set[j])
                .map(|j| amounts[j] * sys.species[j].molar_volume.unwrap_or(0.0))
                .sum::<f64>();
        let (dv_dlnt, dv_dlnp) = self.volume_derivatives(sys, &amounts, t, p, vgas);
        self.dv_dlnt = dv_dlnt;
        self.dv_dlnp = dv_dlnp;
        let cve = if dv_dlnp < 0.0 {
            cpe + p * dv_dlnt * dv_dlnt / (t * dv_dlnp)
        } else {
            f64::NAN
        };
        let mut excluded = self.excluded.clone();
        excluded.dedup();
        Ok(ReactionResult {
            temperature: t,
            pressure: p,
            condensed: (0..ns)
                .filter(|&j| self.in_set[j])
                .map(|j| sys.species[j].name.clone())
                .collect(),
            amounts,
            mole_fractions,
            gas_amount: ngas,
            element_potentials: lam,
            enthalpy: h,
            internal_energy: h - p * volume,
            entropy: s,
            gibbs: g,
            cp_equilibrium: cpe,
            cp_frozen: cpf,
            cv_equilibrium: cve,
            volume,
            iterations,
            temperature_iterations: t_iterations,
            pressure_iterations: 0,
            certificate: ReactionCertificate {
                reduced_gibbs: reduced,
                min_absent,
                max_present,
                element_residual: eres,
                excluded,
                dependent_elements: self.dependent.clone(),
            },
        })
    }

    /// (∂V/∂ln T)_p and (∂V/∂ln p)_T of the equilibrium mixture, m3, with the composition
    /// shifting: V = V_gas + Σ_c v_c n_c, (∂V_gas/∂ln X) = V_gas (δ_XT − δ_Xp + ∂ln n/∂ln X)
    /// with n the gas amount (ideal-gas part: the compressibility factor is held). The
    /// derivatives ∂ln n/∂ln X and ∂n_c/∂ln X solve the Gordon–McBride matrix with the
    /// temperature right-hand side (1994, eq. 2.56) and with the pressure right-hand side
    /// (eq. 2.58): element rows Σ_j a_kj n_j, condensed rows v_c p/(RT), total row Σ_j n_j.
    /// NaN when a system is singular.
    fn volume_derivatives(&mut self, sys: &ReactionSystem, amounts: &[f64], t: f64, p: f64, vgas: f64) -> (f64, f64) {
        let ns = sys.num_species();
        let m = self.rows.len();
        let a = |k: usize, j: usize| sys.formula[k * ns + j];
        let mut out = [f64::NAN; 2];
        for (which, o) in out.iter_mut().enumerate() {
            let pressure = which == 1;
            let nn = self.build(sys);
            for (r, &k) in self.rows.iter().enumerate() {
                self.rhs[r] = sys
                    .gas
                    .iter()
                    .filter(|&&j| self.eligible[j])
                    .map(|&j| a(k, j) * amounts[j] * if pressure { 1.0 } else { -self.h0[j] })
                    .sum::<f64>();
            }
            for c in 0..self.set.len() {
                let j = self.set[c];
                self.rhs[m + c] = if pressure {
                    sys.species[j].molar_volume.unwrap_or(0.0) * p / (R * t)
                } else {
                    -self.h0[j]
                };
            }
            self.rhs[nn - 1] = sys
                .gas
                .iter()
                .filter(|&&j| self.eligible[j])
                .map(|&j| amounts[j] * if pressure { 1.0 } else { -self.h0[j] })
                .sum::<f64>();
            if !lu_solve(&mut self.mat, nn, &mut self.rhs) {
                continue;
            }
            let mut dv = vgas * (self.rhs[nn - 1] + if pressure { -1.0 } else { 1.0 });
            for c in 0..self.set.len() {
                dv += sys.species[self.set[c]].molar_volume.unwrap_or(0.0) * self.rhs[m + c];
            }
            *o = dv;
        }
        (out[0], out[1])
    }

    /// The reaction part of the equilibrium heat capacity, (cp_eq − cp_frozen)/R (mol):
    /// Σ_j n_j (h_j/RT) (∂ln n_j/∂ln T)_p + Σ_c (h_c/RT)(∂n_c/∂ln T)_p, the derivatives
    /// from the Gordon–McBride matrix with the temperature right-hand side (1994, eq. 2.56).
    fn equilibrium_cp(&mut self, sys: &ReactionSystem, amounts: &[f64]) -> f64 {
        let ns = sys.num_species();
        let nn = self.build(sys);
        let m = self.rows.len();
        // Right-hand side −(Σ a n h/RT, h_c/RT, Σ n h/RT) and the same matrix.
        let a = |k: usize, j: usize| sys.formula[k * ns + j];
        for (r, &k) in self.rows.iter().enumerate() {
            self.rhs[r] = -sys
                .gas
                .iter()
                .filter(|&&j| self.eligible[j])
                .map(|&j| a(k, j) * amounts[j] * self.h0[j])
                .sum::<f64>();
        }
        for (c, &j) in self.set.clone().iter().enumerate() {
            self.rhs[m + c] = -self.h0[j];
        }
        self.rhs[nn - 1] = -sys
            .gas
            .iter()
            .filter(|&&j| self.eligible[j])
            .map(|&j| amounts[j] * self.h0[j])
            .sum::<f64>();
        if !lu_solve(&mut self.mat, nn, &mut self.rhs) {
            return 0.0;
        }
        let dlntot = self.rhs[nn - 1];
        let mut cp = 0.0;
        for &j in &sys.gas {
            if !self.eligible[j] {
                continue;
            }
            let mut d = dlntot + self.h0[j];
            for (r, &k) in self.rows.iter().enumerate() {
                d += a(k, j) * self.rhs[r];
            }
            cp += amounts[j] * self.h0[j] * d;
        }
        for (c, &j) in self.set.iter().enumerate() {
            cp += self.h0[j] * self.rhs[m + c];
        }
        cp
    }
}

fn check_model(sys: &ReactionSystem, model: Option<&dyn FluidModel>) -> Result<()> {
    if let Some(m) = model {
        if m.num_components() != sys.gas.len() {
            return Err(Error::invalid(
                "model",
                format!(
                    "the model has {} components but the system has {} gas species; the model's components must be the gas species, in order",
                    m.num_components(),
                    sys.gas.len()
                ),
            ));
        }
        for (i, &j) in sys.gas.iter().enumerate() {
            let name = m.component_name(i);
            let s = &sys.species[j];
            if !s.is_named(name) {
                return Err(Error::invalid(
                    "model",
                    format!("model component {i} is '{name}' but gas species {i} is '{}'", s.name),
                ));
            }
        }
    }
    Ok(())
}

/// Chemical equilibrium at temperature `t` (K) and pressure `p` (Pa) of the feed amounts
/// `feed` (mol of each species of `system`; element totals follow from them).
///
/// `model`: `None` for an ideal-gas mixture; otherwise a fluid model whose components are the
/// gas species of the system, in order (its ln φ enter the chemical potentials). Condensed
/// species are pure phases at p (with their molar volume, if given). Returns amounts, gas
/// mole fractions, element potentials and the certificate; errors: bad feed (negative,
/// non-finite, all zero, wrong length) or no possible gas species is
/// [`Error::InvalidInput`], a gas species' cp range not covering `t` is
/// [`Error::OutsideValidity`], a failed iteration [`Error::NotConverged`].
///
/// ```
/// use tieline::equilibrium::reaction::{ReactionOptions, ReactionSystem, equilibrate_tp};
/// let sys = ReactionSystem::from_names(&["CO", "H2O", "CO2", "H2"])?;
/// let r = equilibrate_tp(&sys, None, 1000.0, 1.0e5, &[1.0, 1.0, 0.0, 0.0], &ReactionOptions::default())?;
/// let k = r.mole_fractions[2] * r.mole_fractions[3] / (r.mole_fractions[0] * r.mole_fractions[1]);
/// assert!((k - 1.44).abs() < 0.05); // water-gas shift at 1000 K
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn equilibrate_tp(
    system: &ReactionSystem,
    model: Option<&dyn FluidModel>,
    t: f64,
    p: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactionResult> {
    ReactionContext::new(system).equilibrate_tp(system, model, t, p, feed, opts)
}

/// Equilibrium at pressure `p` (Pa) and total enthalpy `h` (J, of the whole feed, in the
/// library's reference state; e.g. [`ReactionSystem::enthalpy`] of the reactants at their
/// inlet temperature): the adiabatic flame temperature of constant-pressure combustion.
/// The temperature is searched within the gas species' common cp range (narrowed by
/// `opts.t_min`/`t_max`); a specification with no solution there is [`Error::NoSolution`]
/// naming the bound.
pub fn equilibrate_hp(
    system: &ReactionSystem,
    model: Option<&dyn FluidModel>,
    p: f64,
    h: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactionResult> {
    ReactionContext::new(system).equilibrate_hp(system, model, p, h, feed, opts)
}

/// Equilibrium at pressure `p` (Pa) and total entropy `s` (J/K, library reference state):
/// e.g. the isentropic expansion of equilibrium products to `p`. Bracketing and errors as
/// for [`equilibrate_hp`].
pub fn equilibrate_sp(
    system: &ReactionSystem,
    model: Option<&dyn FluidModel>,
    p: f64,
    s: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactionResult> {
    ReactionContext::new(system).equilibrate_sp(system, model, p, s, feed, opts)
}

/// Equilibrium at temperature `t` (K) in a closed rigid vessel of total volume `v` (m3,
/// gas plus condensed species) holding the feed amounts `feed` (mol): the minimum of the
/// Helmholtz energy at (T, V), found as the TP equilibrium at the pressure whose
/// equilibrium volume is `v` (see the module documentation). The pressure is searched in
/// [`ReactionOptions::p_min`], [`ReactionOptions::p_max`] (default 1e-3 Pa to 1e10 Pa).
/// Errors: `v` not finite and > 0 m3, or a bad feed, is [`Error::InvalidInput`]; a volume
/// that needs a pressure outside the search range is [`Error::NoSolution`] naming the
/// bound; otherwise as for [`equilibrate_tp`].
///
/// ```
/// use tieline::equilibrium::reaction::{ReactionOptions, ReactionSystem, equilibrate_tv};
/// let sys = ReactionSystem::from_names(&["CO", "H2O", "CO2", "H2"])?;
/// // 2 mol of gas (the shift keeps the amount) in 0.1663 m3 at 1000 K: about 1e5 Pa.
/// let r = equilibrate_tv(&sys, None, 1000.0, 0.1663, &[1.0, 1.0, 0.0, 0.0], &ReactionOptions::default())?;
/// assert!((r.pressure / 1.0e5 - 1.0).abs() < 1e-3 && (r.volume / 0.1663 - 1.0).abs() < 1e-9);
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn equilibrate_tv(
    system: &ReactionSystem,
    model: Option<&dyn FluidModel>,
    t: f64,
    v: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactionResult> {
    ReactionContext::new(system).equilibrate_tv(system, model, t, v, feed, opts)
}

/// Equilibrium at total internal energy `u` (J, of the whole feed, library reference state:
/// U = H − pV, e.g. [`ReactionSystem::enthalpy`] of an ideal-gas feed minus n R T) and total
/// volume `v` (m3): the adiabatic constant-volume explosion. The temperature is searched
/// within the gas species' common cp range (narrowed by `opts.t_min`/`t_max`) with
/// [`equilibrate_tv`] inside; an internal energy with no solution there is
/// [`Error::NoSolution`] naming the temperature bound. Other errors as for
/// [`equilibrate_tv`].
pub fn equilibrate_uv(
    system: &ReactionSystem,
    model: Option<&dyn FluidModel>,
    u: f64,
    v: f64,
    feed: &[f64],
    opts: &ReactionOptions,
) -> Result<ReactionResult> {
    ReactionContext::new(system).equilibrate_uv(system, model, u, v, feed, opts)
}
