//! State-function flashes: the equilibrium state at given pressure and enthalpy (PH),
//! pressure and entropy (PS), temperature and volume (TV), or internal energy and volume (UV),
//! built on the PT flash.
//!
//! The stationary conditions are those of M. L. Michelsen, "Multiphase isenthalpic and
//! isentropic flash algorithms", Fluid Phase Equilib. 33 (1987) 13–27, and M. L. Michelsen,
//! "State function based flash specifications", Fluid Phase Equilib. 158–160 (1999) 617–626:
//! at the solution the PT flash at the unknown (T, p) is the Gibbs-energy minimum and the
//! specified state function of the equilibrium mixture equals its target (∂Q/∂T = 0 of
//! Michelsen's Q-functions, e.g. Q = (G − H_spec)/T for PH).
//!
//! # Formulation: nested, bracketed Newton
//! Every specification is solved as a one-dimensional monotone equation around a warm-started
//! PT flash ([`FlashContext`]):
//! * **PH**: outer Newton on T at fixed p on H(T) − H_spec (H increases with T: dH/dT = C_p > 0).
//! * **PS**: outer Newton on T on S(T) − S_spec (dS/dT = C_p/T > 0).
//! * **TV**: outer Newton on ln p at fixed T on V_spec − V(p) (V decreases with p).
//! * **UV**: outer Newton on T on U(T) − U_spec, each evaluation a TV flash at V_spec (U at
//!   fixed V increases with T: dU/dT = C_v > 0); its inner search on ln p is warm-started from
//!   the previous outer step.
//!
//! The slopes are those of the equilibrium mixture: for one phase, its c_p, (∂v/∂T)_p and
//! (∂v/∂p)_T; for two phases the frozen sums plus the phase-change terms from the
//! implicit-function derivatives of the converged split (Michelsen & Mollerup, *Thermodynamic
//! Models: Fundamentals and Computational Aspects*, 2nd ed., 2007, from memory): with the
//! Gibbs Hessian H in the amounts of one phase, d = ∂ln φ'/∂T − ∂ln φ''/∂T and
//! e = ∂ln φ'/∂p − ∂ln φ''/∂p, dH/dT = Σ C_p + RT² dᵀH⁻¹d and dV/dp = Σ ∂V/∂p − RT eᵀH⁻¹e. For
//! three phases the frozen sums are used. Each Newton step is kept inside a bracket
//! [x_lo, x_hi] of opposite residual signs; a step that leaves it, or does not reduce the
//! residual, is replaced by regula falsi and, if that repeats, by bisection, so the iteration
//! converges whatever the slopes. Before a bracket exists, steps are limited to 30 % of T or a
//! factor e² in p. Since the equilibrium dH/dT and −dV/dp are at least their frozen values, a
//! residual that already passes the convergence test with the frozen slope is accepted without
//! the composition derivatives. A trial point where the inner flash fails (e.g. a state with
//! more phases than [`FlashOptions::max_phases`]) is retreated from towards the last point that
//! worked; the edge of the model's domain found that way ends the reachable range.
//!
//! A [`StateFlashContext`] starts from the previous solution by a Newton step with its slopes
//! (for PH, T₀ = T + (h − h_prev − (∂H/∂p)_T Δp)/(∂H/∂T)_p), and its inner [`FlashContext`]
//! from the previous K-values; after warm-up a warm call allocates nothing. A cold call starts
//! from the temperature where the feed as one homogeneous phase (its stable root; at fixed V
//! for UV) meets the specification, with the ideal-gas temperature, Kay's pseudo-critical
//! temperature and the middle of the range as further starts.
//!
//! # Pure components
//! For a feed of one component H(T) at fixed p jumps by the enthalpy of vaporisation at
//! T_sat(p), and V(p) at fixed T jumps at p_sat(T): no outer root may exist. Such feeds are
//! detected first (one amount > 0). Below the critical point the saturation state is computed
//! ([`saturation_temperature`] for PH and PS, [`saturation_pressure`] for TV); if the
//! specification lies between the saturated-liquid and saturated-vapour values, the answer is
//! the two-phase state at saturation with the lever-rule vapour fraction
//! β = (q − q′)/(q″ − q′), re-evaluated to check the specification; otherwise the search is
//! confined to the liquid or vapour side of the saturation point. For mixtures H(T) is
//! continuous; if a bracket still collapses onto a jump the flash reports
//! [`Error::NotConverged`] and says where.
//!
//! # Search ranges and unreachable specifications
//! Energies need the ideal-gas heat capacities, which are valid only in a temperature range:
//! T is searched in the intersection of the ranges of the components present (read from the
//! [`Error::OutsideValidity`] that [`FluidModel::ideal_gas`] returns outside them), narrowed
//! further where the model itself reports a temperature limit (e.g. IAPWS-95 liquid-like
//! states below 200 K). A specified h, s or u beyond the values at the ends of that range is an
//! [`Error::OutsideValidity`] giving the reachable interval. A molar volume at or below the
//! model's limiting volume (for cubic equations the co-volume b of the feed) is
//! [`Error::NoSolution`] with the limit; one that needs a pressure outside the pressure search
//! range is [`Error::OutsideValidity`] with the reachable volumes.
//!
//! Solid phases (freezing, frost) are not considered: the flashes are fluid-phase only.

use super::flash::{FlashContext, FlashOptions, FlashResult, Phase};
use super::saturation::{SaturationOptions, saturation_pressure, saturation_temperature};
use crate::error::{Error, ErrorKind, Result, check};
use crate::model::fugacity::evaluate_at_volume;
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, PhaseKind, RootChoice, ln_phi};
use crate::numerics::linalg::{cholesky, cholesky_solve};
use crate::substance::{IdealGasSpecies, P_STANDARD, R, T_REFERENCE};
use serde::{Deserialize, Serialize};

/// What is specified besides the feed, per mol of feed: enthalpy J/mol, entropy J/(mol K),
/// volume m3/mol, internal energy J/mol; pressure in Pa and temperature in K. Serialises with
/// a `"spec"` tag, e.g. `{"spec": "pressure_enthalpy", "pressure": 1e5, "enthalpy": -2.4e5}`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "spec", rename_all = "snake_case")]
pub enum StateSpec {
    /// Pressure (Pa) and molar enthalpy (J/mol of feed).
    PressureEnthalpy {
        /// Pressure, Pa.
        pressure: f64,
        /// Enthalpy per mol of feed, J/mol.
        enthalpy: f64,
    },
    /// Pressure (Pa) and molar entropy (J/(mol K) of feed).
    PressureEntropy {
        /// Pressure, Pa.
        pressure: f64,
        /// Entropy per mol of feed, J/(mol K).
        entropy: f64,
    },
    /// Temperature (K) and molar volume (m3/mol of feed: total volume over total amount).
    TemperatureVolume {
        /// Temperature, K.
        temperature: f64,
        /// Volume per mol of feed, m3/mol.
        volume: f64,
    },
    /// Molar internal energy (J/mol of feed) and molar volume (m3/mol of feed).
    EnergyVolume {
        /// Internal energy per mol of feed, J/mol.
        internal_energy: f64,
        /// Volume per mol of feed, m3/mol.
        volume: f64,
    },
}

/// Options of the state-function flashes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct StateFlashOptions {
    /// Options of the inner PT flashes.
    pub flash: FlashOptions,
    /// Relative tolerance on the specified quantities: |q − q_spec| ≤ tolerance · scale, with
    /// scale max(|h|, R·298.15 K) for h and u (J/mol), max(|s|, R) for s (J/(mol K)) and v for
    /// V (m3/mol); the outer unknown must also have settled to tolerance·T (K) or tolerance in
    /// ln p. In (0, 1e-2); default 1e-10.
    pub tolerance: f64,
    /// Maximum outer iterations (for UV, of the outer temperature loop and of each inner
    /// pressure search); default 100.
    pub max_iterations: usize,
    /// Temperature search range, K (default: the components' ideal-gas correlation range
    /// intersected with the model's).
    pub temperature_range: Option<(f64, f64)>,
    /// Pressure search range for TV/UV, Pa (default [1e-2, 1e10] Pa, narrowed to the model's
    /// own pressure limit where it reports one).
    pub pressure_range: Option<(f64, f64)>,
}

impl Default for StateFlashOptions {
    fn default() -> Self {
        StateFlashOptions {
            flash: FlashOptions::default(),
            tolerance: 1e-10,
            max_iterations: 100,
            temperature_range: None,
            pressure_range: None,
        }
    }
}

/// Default pressure search range of TV and UV flashes, Pa.
const DEFAULT_PRESSURE_RANGE: (f64, f64) = (1e-2, 1e10);
/// Temperature search range for a model whose ideal-gas part states no limits, K.
const UNLIMITED_TEMPERATURE_RANGE: (f64, f64) = (1.0, 1e4);

impl StateFlashOptions {
    fn validate(&self) -> Result<()> {
        if !(self.tolerance > 0.0 && self.tolerance < 1e-2) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in (0, 1e-2) is required", self.tolerance),
            ));
        }
        if self.max_iterations == 0 {
            return Err(Error::invalid("max_iterations", "0; at least 1 is required"));
        }
        for (what, r, unit) in [
            ("temperature_range", self.temperature_range, "K"),
            ("pressure_range", self.pressure_range, "Pa"),
        ] {
            if let Some((a, b)) = r
                && !(a.is_finite() && b.is_finite() && a > 0.0 && b > a)
            {
                return Err(Error::invalid(
                    what,
                    format!("[{a}, {b}] {unit}; finite bounds with 0 < lower < upper are required"),
                ));
            }
        }
        Ok(())
    }
}

/// Result of a state-function flash.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct StateFlashResult {
    /// The equilibrium state found (its temperature (K) and pressure (Pa) are the solution).
    pub flash: FlashResult,
    /// The specification solved (`None` only in a default-constructed result).
    pub spec: Option<StateSpec>,
    /// Outer iterations used (for UV, those of the outer temperature loop).
    pub iterations: usize,
    /// Inner PT flashes used.
    pub pt_flashes: usize,
    /// Final relative residual of the specification, |q − q_spec|/scale (see
    /// [`StateFlashOptions::tolerance`]).
    pub residual: f64,
}

/// Mixture state functions of a flash result, per mol of feed (SI units).
#[derive(Debug, Clone, Copy, Default)]
struct Values {
    t: f64,
    p: f64,
    h: f64,
    s: f64,
    u: f64,
    v: f64,
    /// Whether h, s and u were evaluated.
    energies: bool,
}

/// Derivatives of the equilibrium mixture per mol of feed: (∂H/∂T)_p (J/(mol K)),
/// (∂H/∂p)_T (m3/mol), (∂V/∂T)_p (m3/(mol K)), (∂V/∂p)_T (m3/(mol Pa)).
#[derive(Debug, Clone, Copy, Default)]
struct Slopes {
    h_t: f64,
    h_p: f64,
    v_t: f64,
    v_p: f64,
}

impl Slopes {
    fn finite(&self) -> bool {
        self.h_t.is_finite() && self.h_p.is_finite() && self.v_t.is_finite() && self.v_p.is_finite()
    }
    /// (∂U/∂T)_p, J/(mol K).
    fn u_t(&self, p: f64) -> f64 {
        self.h_t - p * self.v_t
    }
    /// (∂U/∂p)_T, m3/mol.
    fn u_p(&self, p: f64, v: f64) -> f64 {
        self.h_p - p * self.v_p - v
    }
    /// (∂p/∂T)_V, Pa/K.
    fn p_t_at_v(&self) -> f64 {
        -self.v_t / self.v_p
    }
    /// (∂U/∂T)_V, J/(mol K).
    fn cv(&self, p: f64, v: f64) -> f64 {
        self.u_t(p) + self.u_p(p, v) * self.p_t_at_v()
    }
}

/// One phase evaluated at its (T, p, x, v): ln φ with derivatives and molar properties.
#[derive(Debug, Clone, Default)]
struct PhaseEval {
    phi: LnPhi,
    h: f64,
    s: f64,
    v: f64,
    cp: f64,
    v_t: f64,
    v_p: f64,
}

/// Storage of the property and slope evaluations (allocation-free after the first call).
#[derive(Debug, Clone, Default)]
struct Work {
    fw: FugacityWork,
    ph: Vec<PhaseEval>,
    /// Ideal-gas properties of each component at `ig_t` (valid where the feed has it).
    ig: Vec<IdealGasSpecies>,
    ig_t: f64,
    hess: Vec<f64>,
    a: Vec<f64>,
    b: Vec<f64>,
    d: Vec<f64>,
    e: Vec<f64>,
    z: Vec<f64>,
    nc: usize,
}

impl Work {
    fn resize(&mut self, nc: usize) {
        if self.nc == nc && !self.z.is_empty() {
            return;
        }
        self.nc = nc;
        self.fw = FugacityWork::new(nc);
        self.ph = (0..3)
            .map(|_| PhaseEval {
                phi: LnPhi::new(nc),
                ..Default::default()
            })
            .collect();
        self.ig = vec![IdealGasSpecies::default(); nc];
        self.ig_t = f64::NAN;
        self.hess = vec![0.0; nc * nc];
        for v in [&mut self.a, &mut self.b, &mut self.d, &mut self.e, &mut self.z] {
            *v = vec![0.0; nc];
        }
    }
}

/// Fills `w.ig` at T for the components present in `z`.
fn ideal_gas_at<M: FluidModel + ?Sized>(model: &M, t: f64, w: &mut Work) -> Result<()> {
    if w.ig_t == t {
        return Ok(());
    }
    w.ig_t = f64::NAN;
    for i in 0..w.nc {
        if w.z[i] > 0.0 {
            w.ig[i] = model.ideal_gas(t, i)?;
        }
    }
    w.ig_t = t;
    Ok(())
}

/// Evaluates every phase of `r` (with composition, T and p derivatives of ln φ when there are
/// two phases and `derivs` is set, as [`slopes`] needs) and returns the mixture values and frozen slopes.
/// With `energies` false, h, s and u are left at zero (the ideal-gas part is not needed).
/// The same formulas as [`crate::model::PhaseState::properties`].
fn evaluate<M: FluidModel + ?Sized>(
    model: &M,
    r: &FlashResult,
    energies: bool,
    derivs: bool,
    w: &mut Work,
) -> Result<(Values, Slopes)> {
    let (t, p) = (r.temperature, r.pressure);
    let ntot: f64 = r.feed.iter().sum();
    if energies {
        ideal_gas_at(model, t, w)?;
    }
    let two = r.phases.len() == 2 && derivs;
    let need = Need {
        composition: two,
        temperature: true,
        pressure: two,
    };
    let rt = R * t;
    let mut val = Values {
        t,
        p,
        energies,
        ..Default::default()
    };
    let mut sl = Slopes::default();
    for (k, phase) in r.phases.iter().enumerate() {
        let x = &phase.composition;
        let nx: f64 = x.iter().sum();
        let vt = phase.molar_volume * nx;
        let pe = &mut w.ph[k];
        evaluate_at_volume(model, t, p, vt, x, nx, need, &mut w.fw, &mut pe.phi)?;
        let d = &w.fw.derivs;
        let p_v = -rt * d.f_vv - nx * rt / (vt * vt);
        let p_t = p / t - rt * d.f_tv;
        pe.v = phase.molar_volume;
        pe.v_t = -p_t / p_v / nx;
        pe.v_p = 1.0 / p_v / nx;
        if energies {
            let u_r = -rt * t * d.f_t;
            let h_r = u_r + p * vt - nx * rt;
            let s_r = -R * (t * d.f_t + d.f) + nx * R * pe.phi.z.ln();
            let cv_r = -rt * (2.0 * d.f_t + t * d.f_tt);
            let cp_r = cv_r - t * p_t * p_t / p_v - nx * R;
            let (mut h_ig, mut s_ig, mut cp_ig) = (0.0, 0.0, 0.0);
            for i in 0..x.len() {
                if x[i] > 0.0 {
                    let ig = &w.ig[i];
                    h_ig += x[i] * ig.h;
                    s_ig += x[i] * (ig.s - R * (x[i] / nx * p / P_STANDARD).ln());
                    cp_ig += x[i] * ig.cp;
                }
            }
            pe.h = (h_ig + h_r) / nx;
            pe.s = (s_ig + s_r) / nx;
            pe.cp = (cp_ig + cp_r) / nx;
        } else {
            pe.h = 0.0;
            pe.s = 0.0;
            pe.cp = 0.0;
        }
        let f = phase.amount / ntot;
        val.h += f * pe.h;
        val.s += f * pe.s;
        val.u += f * (pe.h - p * pe.v);
        val.v += f * pe.v;
        sl.h_t += f * pe.cp;
        sl.h_p += f * (pe.v - t * pe.v_t);
        sl.v_t += f * pe.v_t;
        sl.v_p += f * pe.v_p;
    }
    Ok((val, sl))
}

/// Slopes of the equilibrium state `flash` per mol of feed, from the phase evaluations
/// `evaluate` left in `w` and its frozen sums `frozen`: for two phases the phase-change terms
/// of the implicit-function derivatives of the split are added (module docs); otherwise, or
/// if the split's Hessian is not positive definite, the frozen slopes are returned.
fn slopes<M: FluidModel + ?Sized>(_model: &M, flash: &FlashResult, frozen: Slopes, w: &mut Work) -> Slopes {
    if flash.phases.len() != 2 {
        return frozen;
    }
    let nc = w.nc;
    let t = flash.temperature;
    let (b0, b1) = (flash.phases[0].fraction, flash.phases[1].fraction);
    let (y, x) = (&flash.phases[0].composition, &flash.phases[1].composition);
    let (p0, p1) = (&w.ph[0].phi, &w.ph[1].phi);
    if !(b0 > 0.0 && b1 > 0.0) {
        return frozen;
    }
    for i in 0..nc {
        let present = w.z[i] > 0.0 && y[i] > 0.0 && x[i] > 0.0;
        for j in 0..nc {
            w.hess[i * nc + j] = if present && w.z[j] > 0.0 && y[j] > 0.0 && x[j] > 0.0 {
                let mut h = p0.dn[i * nc + j] / b0 + p1.dn[i * nc + j] / b1 - 1.0 / b0 - 1.0 / b1;
                if i == j {
                    h += 1.0 / (b0 * y[i]) + 1.0 / (b1 * x[i]);
                }
                h
            } else if i == j {
                1.0
            } else {
                0.0
            };
        }
        if present {
            w.d[i] = p0.dt[i] - p1.dt[i];
            w.e[i] = p0.dp[i] - p1.dp[i];
        } else {
            w.d[i] = 0.0;
            w.e[i] = 0.0;
        }
    }
    if !cholesky(&mut w.hess, nc) {
        return frozen;
    }
    w.a.copy_from_slice(&w.d);
    w.b.copy_from_slice(&w.e);
    cholesky_solve(&w.hess, nc, &mut w.a);
    cholesky_solve(&w.hess, nc, &mut w.b);
    let dot = |u: &[f64], v: &[f64]| u.iter().zip(v).map(|(a, b)| a * b).sum::<f64>();
    let rt = R * t;
    let out = Slopes {
        h_t: frozen.h_t + rt * t * dot(&w.d, &w.a),
        h_p: frozen.h_p + rt * t * dot(&w.d, &w.b),
        v_t: frozen.v_t - rt * dot(&w.e, &w.a),
        v_p: frozen.v_p - rt * dot(&w.e, &w.b),
    };
    if out.finite() { out } else { frozen }
}

/// A point of a one-dimensional search: unknown x and scaled residual f.
#[derive(Debug, Clone, Copy)]
struct Point {
    x: f64,
    f: f64,
}

/// How a one-dimensional search ended.
#[derive(Debug, Clone, Copy)]
enum Outcome {
    Converged,
    /// The residual is > 0 at the lower limit: the specification is below the reachable range.
    Below(Point),
    /// The residual is < 0 at the upper limit: above the reachable range.
    Above(Point),
    /// The bracket shrank to round-off with the residual still large: a jump.
    Collapsed(Point, Point),
    Exhausted(f64),
}

/// The unknown of a search: T (K), or ln p (p in Pa).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Unknown {
    Temperature,
    LnPressure,
}

impl Unknown {
    fn xtol(self, x: f64, tol: f64) -> f64 {
        match self {
            Unknown::Temperature => tol * x.abs(),
            Unknown::LnPressure => tol,
        }
    }
    fn max_step(self, x: f64) -> f64 {
        match self {
            Unknown::Temperature => 0.3 * x.abs(),
            Unknown::LnPressure => 2.0,
        }
    }
    /// A tighter limit for x from a model's validity error met at x, if it states one.
    fn limit_from(self, e: &Error, x: f64) -> Option<(bool, f64)> {
        if let Error::OutsideValidity { what, min, max, .. } = e {
            let (name, lo, hi) = match self {
                Unknown::Temperature => ("temperature", *min, *max),
                Unknown::LnPressure => ("pressure", min.max(f64::MIN_POSITIVE).ln(), max.ln()),
            };
            if what == name {
                if x < lo && lo.is_finite() {
                    return Some((true, lo));
                }
                if x > hi && hi.is_finite() {
                    return Some((false, hi));
                }
            }
        }
        None
    }
}

/// Search state and settings of [`solve_monotone`].
struct Search {
    unknown: Unknown,
    tol: f64,
    max_iter: usize,
    lim: (f64, f64),
    lo: Option<Point>,
    hi: Option<Point>,
    iterations: usize,
    last_f: f64,
    /// Further starts, tried in turn while no evaluation has succeeded (the first met a state
    /// with more phases than allowed, or an inner solver did not converge there).
    alt_starts: [Option<f64>; 3],
}

impl Search {
    fn new(unknown: Unknown, opts: &StateFlashOptions, lim: (f64, f64)) -> Self {
        Search {
            unknown,
            tol: opts.tolerance,
            max_iter: opts.max_iterations,
            lim,
            lo: None,
            hi: None,
            iterations: 0,
            last_f: f64::INFINITY,
            alt_starts: [None; 3],
        }
    }
}

/// Solves f(x) = 0 for a non-decreasing f on [lim.0, lim.1] by Newton steps kept inside a
/// bracket, with regula falsi and bisection as fallbacks (module docs). `eval` returns
/// (f, df/dx) at x; a non-positive or non-finite slope is replaced by the secant slope.
/// On `Converged` the last evaluation was at the solution.
fn solve_monotone<E>(s: &mut Search, x0: f64, mut eval: E) -> Result<Outcome>
where
    E: FnMut(f64) -> Result<(f64, f64)>,
{
    let mut x = x0.clamp(s.lim.0, s.lim.1);
    // A seeded end (a saturation point) is known already: start inside, next to it.
    if let Some(h) = s.hi
        && x >= h.x
    {
        x = h.x - (0.02 * s.unknown.max_step(h.x)).min(0.5 * (h.x - s.lim.0));
    }
    if let Some(l) = s.lo
        && x <= l.x
    {
        x = l.x + (0.02 * s.unknown.max_step(l.x)).min(0.5 * (s.lim.1 - l.x));
    }
    let mut prev: Option<Point> = None;
    let mut fallbacks = 0usize;
    let mut limit_moves = 0usize;
    let mut soft_failures = 0usize;
    // The last point that evaluated (a seeded saturation point counts).
    let mut good: Option<Point> = s.hi.or(s.lo);
    // The nearest points below and above the working region where the inner solve failed.
    let (mut bad_lo, mut bad_hi) = (f64::NEG_INFINITY, f64::INFINITY);
    let mut f_abs = f64::INFINITY;
    while s.iterations < s.max_iter {
        let (f, slope) = match eval(x) {
            Ok(v) => v,
            Err(e) => {
                // A validity limit of the model inside the search range: move the range.
                if limit_moves < 4
                    && let Some((lower, lim)) = s.unknown.limit_from(&e, x)
                    && lim > s.lim.0
                    && lim < s.lim.1
                {
                    limit_moves += 1;
                    if lower {
                        s.lim.0 = lim;
                    } else {
                        s.lim.1 = lim;
                    }
                    x = lim;
                    continue;
                }
                // A failure of the inner solve at a trial point: retreat towards the last
                // point that worked, or try the second start.
                if soft_failures < 60 && matches!(e.kind(), ErrorKind::NoSolution | ErrorKind::NotConverged) {
                    soft_failures += 1;
                    if let Some(g) = good {
                        if x < g.x {
                            bad_lo = bad_lo.max(x);
                        } else {
                            bad_hi = bad_hi.min(x);
                        }
                        // Narrowed down to the edge of the model's domain next to a point that
                        // works: that point is the end of the reachable range.
                        if (x - g.x).abs() <= 1e-9 * g.x.abs().max(1.0) {
                            if x < g.x && g.f > 0.0 {
                                s.lim.0 = g.x;
                                return Ok(Outcome::Below(g));
                            }
                            if x > g.x && g.f < 0.0 {
                                s.lim.1 = g.x;
                                return Ok(Outcome::Above(g));
                            }
                            return Err(e);
                        }
                        x = 0.5 * (x + g.x);
                        continue;
                    }
                    if let Some(a) = s.alt_starts.iter_mut().find_map(|a| a.take()) {
                        x = a.clamp(s.lim.0, s.lim.1);
                        continue;
                    }
                }
                return Err(e);
            }
        };
        s.iterations += 1;
        s.last_f = f;
        good = Some(Point { x, f });
        if !f.is_finite() {
            return Err(Error::NoSolution(format!(
                "non-finite specification residual at x = {x}"
            )));
        }
        let xtol = s.unknown.xtol(x, s.tol);
        let mut slope = slope;
        if !(slope > 0.0 && slope.is_finite())
            && let Some(q) = prev
            && q.x != x
        {
            slope = (f - q.f) / (x - q.x);
        }
        let good_slope = slope > 0.0 && slope.is_finite();
        if f == 0.0 || (f.abs() <= s.tol && good_slope && (f / slope).abs() <= xtol) {
            return Ok(Outcome::Converged);
        }
        if f < 0.0 {
            s.lo = Some(Point { x, f });
        } else {
            s.hi = Some(Point { x, f });
        }
        if f > 0.0 && x <= s.lim.0 {
            return Ok(Outcome::Below(Point { x, f }));
        }
        if f < 0.0 && x >= s.lim.1 {
            return Ok(Outcome::Above(Point { x, f }));
        }
        let newton = if good_slope { x - f / slope } else { f64::NAN };
        let next = match (s.lo, s.hi) {
            (Some(lo), Some(hi)) => {
                let width = hi.x - lo.x;
                if width <= 4.0 * f64::EPSILON * x.abs().max(1.0) || width <= 1e-3 * xtol {
                    if f.abs() <= s.tol {
                        return Ok(Outcome::Converged);
                    }
                    return Ok(Outcome::Collapsed(lo, hi));
                }
                let progress = f.abs() <= 0.7 * f_abs;
                if newton > lo.x && newton < hi.x && (progress || fallbacks == 0) {
                    fallbacks = 0;
                    newton
                } else {
                    fallbacks += 1;
                    if fallbacks >= 2 {
                        0.5 * (lo.x + hi.x)
                    } else {
                        let rf = lo.x - lo.f * width / (hi.f - lo.f);
                        rf.clamp(lo.x + 0.05 * width, hi.x - 0.05 * width)
                    }
                }
            }
            _ => {
                let max = s.unknown.max_step(x);
                let up = f < 0.0;
                let step = if newton.is_finite() {
                    (newton - x).clamp(-max, max)
                } else if up {
                    max
                } else {
                    -max
                };
                x + step
            }
        };
        f_abs = f.abs();
        prev = Some(Point { x, f });
        let mut next = next;
        if next <= bad_lo {
            next = 0.5 * (bad_lo + x);
        }
        if next >= bad_hi {
            next = 0.5 * (bad_hi + x);
        }
        x = next.clamp(s.lim.0, s.lim.1);
    }
    Ok(Outcome::Exhausted(s.last_f))
}

/// The single component present in `z`, if only one amount is > 0.
fn single_component(z: &[f64]) -> Option<usize> {
    let mut it = z.iter().enumerate().filter(|(_, x)| **x > 0.0);
    let first = it.next()?.0;
    if it.next().is_some() { None } else { Some(first) }
}

/// Temperature search range (K): the option, or the intersection of the ideal-gas
/// correlation ranges of the components present.
fn temperature_range<M: FluidModel + ?Sized>(model: &M, z: &[f64], opts: &StateFlashOptions) -> Result<(f64, f64)> {
    if let Some(r) = opts.temperature_range {
        return Ok(r);
    }
    let (mut lo, mut hi) = (0.0f64, f64::INFINITY);
    for (i, &zi) in z.iter().enumerate() {
        if zi <= 0.0 {
            continue;
        }
        for probe in [1e-6, 1e7] {
            match model.ideal_gas(probe, i) {
                Ok(_) => {}
                Err(Error::OutsideValidity { min, max, .. }) => {
                    lo = lo.max(min);
                    hi = hi.min(max);
                }
                Err(e) => return Err(e),
            }
        }
    }
    if lo == 0.0 {
        lo = UNLIMITED_TEMPERATURE_RANGE.0;
    }
    if hi == f64::INFINITY {
        hi = UNLIMITED_TEMPERATURE_RANGE.1;
    }
    if !(lo < hi) {
        return Err(Error::NoSolution(format!(
            "the ideal-gas heat-capacity ranges of the components do not overlap (highest lower limit {lo} K, \
             lowest upper limit {hi} K): no temperature has defined energies"
        )));
    }
    Ok((lo, hi))
}

/// Which quantity a temperature search at fixed p matches.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Energy {
    Enthalpy,
    Entropy,
}

impl Energy {
    fn of(self, v: &Values) -> f64 {
        match self {
            Energy::Enthalpy => v.h,
            Energy::Entropy => v.s,
        }
    }
    fn of_phase(self, ph: &PhaseEval) -> f64 {
        match self {
            Energy::Enthalpy => ph.h,
            Energy::Entropy => ph.s,
        }
    }
    fn slope(self, s: &Slopes, t: f64) -> f64 {
        match self {
            Energy::Enthalpy => s.h_t,
            Energy::Entropy => s.h_t / t,
        }
    }
    fn scale(self, q: f64) -> f64 {
        match self {
            Energy::Enthalpy => q.abs().max(R * T_REFERENCE),
            Energy::Entropy => q.abs().max(R),
        }
    }
    fn name(self) -> &'static str {
        match self {
            Energy::Enthalpy => "enthalpy",
            Energy::Entropy => "entropy",
        }
    }
    fn unit(self) -> &'static str {
        match self {
            Energy::Enthalpy => "J/mol",
            Energy::Entropy => "J/(mol K)",
        }
    }
    fn method(self) -> &'static str {
        match self {
            Energy::Enthalpy => "PH flash (Newton on T)",
            Energy::Entropy => "PS flash (Newton on T)",
        }
    }
}

/// Copies a flash result into `dst`, reusing its storage.
fn copy_flash(dst: &mut FlashResult, src: &FlashResult) {
    dst.temperature = src.temperature;
    dst.pressure = src.pressure;
    dst.feed.clear();
    dst.feed.extend_from_slice(&src.feed);
    dst.phases.truncate(src.phases.len());
    for (k, ph) in src.phases.iter().enumerate() {
        if k == dst.phases.len() {
            dst.phases.push(ph.clone());
            continue;
        }
        let d = &mut dst.phases[k];
        d.kind = ph.kind;
        d.amount = ph.amount;
        d.fraction = ph.fraction;
        d.composition.clear();
        d.composition.extend_from_slice(&ph.composition);
        d.molar_volume = ph.molar_volume;
        d.z = ph.z;
        d.ln_phi.clear();
        d.ln_phi.extend_from_slice(&ph.ln_phi);
    }
    dst.tie_line.clone_from(&src.tie_line);
    dst.diagnostics.clone_from(&src.diagnostics);
}

/// Reusable state-flash solver: a [`FlashContext`] for the inner PT flashes, storage for the
/// property evaluations, and the last solution (its T (K), p (Pa), state functions and
/// slopes) from which the next call starts — the simulator's time-stepping use. Used by one
/// thread at a time.
#[derive(Debug, Clone, Default)]
pub struct StateFlashContext {
    flash: FlashContext,
    work: Work,
    /// The last solution and its slopes (none after a pure-component two-phase answer).
    last: Option<(Values, Option<Slopes>)>,
    /// State functions and slopes of the latest inner evaluation.
    cur: (Values, Slopes),
    result: StateFlashResult,
    /// A one-phase result used for cold-start estimates.
    scratch: FlashResult,
    nc: usize,
    pt_flashes: usize,
    /// Whether `cur.1` holds equilibrium (not frozen) slopes.
    cur_exact: bool,
    /// The default temperature range found for the components named in `range_names` with
    /// the feed's support `range_support` (probing the correlations allocates error messages,
    /// so it is done once per model and feed support).
    range: Option<(f64, f64)>,
    range_names: Vec<String>,
    range_support: Vec<bool>,
}

impl StateFlashContext {
    /// A context for models of `nc` components (resized automatically if used with another).
    pub fn new(nc: usize) -> Self {
        let mut c = StateFlashContext {
            flash: FlashContext::new(nc),
            ..Default::default()
        };
        c.work.resize(nc);
        c.nc = nc;
        c
    }

    /// Forgets the previous solution, so the next call starts cold.
    pub fn reset(&mut self) {
        self.last = None;
        self.cur_exact = false;
        self.range = None;
        self.flash.reset();
    }

    /// The last result (valid after a successful call).
    pub fn last(&self) -> &StateFlashResult {
        &self.result
    }

    /// The equilibrium state of feed amounts `feed` (mol) at the specification `spec`
    /// (per mol of feed; see [`StateSpec`]), warm-started from this context's previous
    /// solution. The result lives in the context.
    pub fn flash<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        spec: &StateSpec,
        feed: &[f64],
        opts: &StateFlashOptions,
    ) -> Result<&StateFlashResult> {
        opts.validate()?;
        let nc = model.num_components();
        let ntot = check::amounts(feed, nc)?;
        if self.nc != nc {
            self.nc = nc;
            self.last = None;
        }
        self.work.resize(nc);
        for i in 0..nc {
            self.work.z[i] = feed[i] / ntot;
        }
        self.work.ig_t = f64::NAN;
        self.pt_flashes = 0;
        self.result.iterations = 0;
        let out = match *spec {
            StateSpec::PressureEnthalpy { pressure, enthalpy } => {
                check::pressure(pressure)?;
                finite("enthalpy", enthalpy, "J/mol")?;
                self.solve_p(model, pressure, Energy::Enthalpy, enthalpy, feed, opts)
            }
            StateSpec::PressureEntropy { pressure, entropy } => {
                check::pressure(pressure)?;
                finite("entropy", entropy, "J/(mol K)")?;
                self.solve_p(model, pressure, Energy::Entropy, entropy, feed, opts)
            }
            StateSpec::TemperatureVolume { temperature, volume } => {
                check::temperature(temperature)?;
                check::volume(volume)?;
                self.solve_tv(model, temperature, volume, feed, opts, false, None)
                    .map(|its| self.result.iterations = its)
            }
            StateSpec::EnergyVolume {
                internal_energy,
                volume,
            } => {
                finite("internal energy", internal_energy, "J/mol")?;
                check::volume(volume)?;
                self.solve_uv(model, internal_energy, volume, feed, opts)
            }
        };
        if let Err(e) = out {
            self.last = None;
            return Err(e);
        }
        self.result.spec = Some(*spec);
        self.result.pt_flashes = self.pt_flashes;
        Ok(&self.result)
    }

    /// One inner PT flash at (T, p) and the state functions and slopes of its result, kept
    /// in `self.cur`.
    fn pt<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        feed: &[f64],
        opts: &StateFlashOptions,
        energies: bool,
        done: impl Fn(&Values, &Slopes) -> bool,
    ) -> Result<()> {
        self.pt_flashes += 1;
        let r = self.flash.flash(model, t, p, feed, &opts.flash)?;
        let two = r.phases.len() == 2;
        let (val, frozen) = evaluate(model, r, energies, false, &mut self.work)?;
        if !two {
            self.cur = (val, frozen);
            self.cur_exact = true;
            return Ok(());
        }
        // The equilibrium slope is at least the frozen one (module docs), so a residual that
        // passes the convergence test with the frozen slope needs no derivatives; the slopes
        // kept for the next warm start are then those of the previous, nearby iterate.
        if done(&val, &frozen) {
            let kept = if self.cur_exact { self.cur.1 } else { frozen };
            self.cur = (val, kept);
            return Ok(());
        }
        let (val, frozen) = evaluate(model, r, energies, true, &mut self.work)?;
        let sl = slopes(model, r, frozen, &mut self.work);
        self.cur = (val, sl);
        self.cur_exact = true;
        Ok(())
    }

    /// Stores the current inner flash as the answer.
    fn accept(&mut self, residual: f64) {
        copy_flash(&mut self.result.flash, self.flash.last());
        self.result.residual = residual;
        self.last = Some((self.cur.0, Some(self.cur.1)));
    }

    /// The temperature search range (K), from the cache when the components and the feed's
    /// support are those it was found for.
    fn temperature_range<M: FluidModel + ?Sized>(&mut self, model: &M, opts: &StateFlashOptions) -> Result<(f64, f64)> {
        if let Some(r) = opts.temperature_range {
            return Ok(r);
        }
        let z = &self.work.z;
        let nc = z.len();
        let same = self.range.is_some()
            && self.range_names.len() == nc
            && (0..nc).all(|i| self.range_names[i] == model.component_name(i) && self.range_support[i] == (z[i] > 0.0));
        if let (true, Some(r)) = (same, self.range) {
            return Ok(r);
        }
        let r = temperature_range(model, z, opts)?;
        self.range = Some(r);
        self.range_names = (0..nc).map(|i| model.component_name(i).to_string()).collect();
        self.range_support = z.iter().map(|x| *x > 0.0).collect();
        Ok(r)
    }

    /// PH and PS: temperature search at fixed p.
    fn solve_p<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        p: f64,
        kind: Energy,
        q: f64,
        feed: &[f64],
        opts: &StateFlashOptions,
    ) -> Result<()> {
        let lim = self.temperature_range(model, opts)?;
        let scale = kind.scale(q);
        let full = lim;
        let mut search = Search::new(Unknown::Temperature, opts, lim);
        if let Some(i) = single_component(&self.work.z)
            && let Some(done) = self.pure_at_pressure(model, p, kind, q, scale, i, feed, &mut search)?
        {
            return done;
        }
        // First estimate: a Newton step from the previous solution, or the frozen-feed T.
        let t0 = match self.last {
            Some((v, Some(s))) if v.energies => {
                let dq = match kind {
                    Energy::Enthalpy => q - v.h - s.h_p * (p - v.p),
                    Energy::Entropy => q - v.s + s.v_t * (p - v.p),
                };
                let t = v.t + dq / kind.slope(&s, v.t);
                if t.is_finite() { t } else { v.t }
            }
            Some((v, _)) => v.t,
            None => self.frozen_temperature(model, p, kind, q, scale, search.lim),
        };
        let cold = self.last.is_none();
        search.alt_starts = [
            cold.then(|| ideal_gas_temperature(model, &self.work.z, kind, q, 0.0, search.lim))
                .flatten(),
            Some(pseudo_critical_temperature(model, &self.work.z)),
            Some((search.lim.0 * search.lim.1).sqrt()),
        ];
        let tol = opts.tolerance;
        let outcome = solve_monotone(&mut search, t0, |t| {
            let done = |v: &Values, s: &Slopes| {
                let f = (kind.of(v) - q) / scale;
                f.abs() <= tol && (f * scale / kind.slope(s, t)).abs() <= tol * t
            };
            self.pt(model, t, p, feed, opts, true, done)?;
            let (v, s) = self.cur;
            Ok(((kind.of(&v) - q) / scale, kind.slope(&s, t) / scale))
        })?;
        self.result.iterations += search.iterations;
        match outcome {
            Outcome::Converged => {
                let r = (kind.of(&self.cur.0) - q).abs() / scale;
                self.accept(r);
                Ok(())
            }
            Outcome::Below(pt) | Outcome::Above(pt) => {
                let below = matches!(outcome, Outcome::Below(_));
                let at = q + pt.f * scale;
                // The value at the other end of the range, for the message.
                let other_t = if below { full.1 } else { search.lim.0 };
                let other = self
                    .pt(model, other_t, p, feed, opts, true, |_, _| false)
                    .map(|_| kind.of(&self.cur.0))
                    .unwrap_or(if below { f64::INFINITY } else { f64::NEG_INFINITY });
                let (min, max) = if below { (at, other) } else { (other, at) };
                Err(Error::OutsideValidity {
                    what: kind.name().into(),
                    value: q,
                    min,
                    max,
                    detail: format!(
                        "{} {} at p = {p} Pa: the feed's {} spans [{min}, {max}] {} over the temperature search \
                         range [{}, {}] K (the components' ideal-gas heat-capacity range intersected with the \
                         model's; solid phases are not modelled)",
                        kind.unit(),
                        if below {
                            "is below the lowest reachable value"
                        } else {
                            "is above the highest reachable value"
                        },
                        kind.name(),
                        kind.unit(),
                        search.lim.0,
                        search.lim.1
                    ),
                })
            }
            Outcome::Collapsed(lo, hi) => Err(Error::not_converged(
                format!(
                    "{}: the temperature bracket collapsed onto a jump of the {} at T = {} K (scaled residuals {} and {})",
                    kind.method(),
                    kind.name(),
                    lo.x,
                    lo.f,
                    hi.f
                ),
                vec![
                    ("outer".into(), search.iterations),
                    ("PT flash".into(), self.pt_flashes),
                ],
                lo.f.abs().min(hi.f.abs()),
                opts.tolerance,
            )),
            Outcome::Exhausted(f) => Err(Error::not_converged(
                kind.method(),
                vec![
                    ("outer".into(), search.iterations),
                    ("PT flash".into(), self.pt_flashes),
                ],
                f.abs(),
                opts.tolerance,
            )),
        }
    }

    /// The temperature at which the feed as one homogeneous phase (its stable root) has the
    /// specified h or s at p: a cheap first estimate for a cold start (no flash), by Newton
    /// steps kept in a bracket. Falls back to the geometric middle of the range.
    fn frozen_temperature<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        p: f64,
        kind: Energy,
        q: f64,
        scale: f64,
        lim: (f64, f64),
    ) -> f64 {
        let mut r = std::mem::take(&mut self.scratch);
        r.pressure = p;
        r.feed.clear();
        r.feed.extend_from_slice(&self.work.z);
        r.phases.truncate(1);
        if r.phases.is_empty() {
            r.phases.push(Phase::default());
        }
        r.phases[0].amount = 1.0;
        r.phases[0].fraction = 1.0;
        r.phases[0].composition.clear();
        r.phases[0].composition.extend_from_slice(&self.work.z);
        let mut t = (lim.0 * lim.1).sqrt().clamp(lim.0, lim.1);
        let (mut lo, mut hi) = lim;
        for _ in 0..30 {
            let ok = ln_phi(
                model,
                t,
                p,
                &r.phases[0].composition,
                RootChoice::Stable,
                Need::VALUES,
                &mut self.work.fw,
                &mut self.work.ph[0].phi,
            )
            .is_ok();
            if !ok {
                break;
            }
            r.temperature = t;
            r.phases[0].molar_volume = self.work.ph[0].phi.v;
            let Ok((v, s)) = evaluate(model, &r, true, false, &mut self.work) else {
                break;
            };
            let f = (kind.of(&v) - q) / scale;
            if f.abs() < 1e-6 {
                break;
            }
            if f < 0.0 {
                lo = t;
            } else {
                hi = t;
            }
            let mut nt = t - f * scale / kind.slope(&s, t);
            if !(nt > lo && nt < hi) || !nt.is_finite() {
                nt = 0.5 * (lo + hi);
            }
            if (nt - t).abs() < 1e-6 * t {
                t = nt;
                break;
            }
            t = nt;
        }
        self.scratch = r;
        t
    }

    /// Pure component at fixed p below its critical pressure: the two-phase answer when h or
    /// s lies between the saturated values, else the search confined to one side of T_sat.
    /// `None` when there is no usable saturation state (the general search then runs).
    #[allow(clippy::too_many_arguments)]
    fn pure_at_pressure<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        p: f64,
        kind: Energy,
        q: f64,
        scale: f64,
        i: usize,
        feed: &[f64],
        search: &mut Search,
    ) -> Result<Option<Result<()>>> {
        if p >= model.critical_constants(i).pc {
            return Ok(None);
        }
        let sat = match saturation_temperature(model, p, i, &SaturationOptions::default()) {
            Ok(s) => s,
            Err(e)
                if matches!(
                    e.kind(),
                    ErrorKind::NoSolution | ErrorKind::OutsideValidity | ErrorKind::NotConverged
                ) =>
            {
                return Ok(None);
            }
            Err(e) => return Err(e),
        };
        let ts = sat.temperature;
        if !(ts > search.lim.0 && ts < search.lim.1) {
            return Ok(None);
        }
        let ntot: f64 = feed.iter().sum();
        self.saturated_pair(model, ts, p, feed, ntot, 0.5, true)?;
        let (qv, ql) = (kind.of_phase(&self.work.ph[0]), kind.of_phase(&self.work.ph[1]));
        if !(qv > ql) {
            return Ok(None);
        }
        if q > ql && q < qv {
            let beta = (q - ql) / (qv - ql);
            self.saturated_pair(model, ts, p, feed, ntot, beta, true)?;
            let (v, _) = evaluate(model, &self.result.flash, true, false, &mut self.work)?;
            let residual = (kind.of(&v) - q).abs() / scale;
            let fug = self.result.flash.diagnostics.residual;
            if residual > opts_tolerance_check(search.tol) || fug > 1e-8 {
                return Err(Error::not_converged(
                    format!("{} at the saturation temperature {ts} K", kind.method()),
                    vec![("saturation".into(), sat.iterations)],
                    residual.max(fug),
                    search.tol,
                ));
            }
            self.result.residual = residual;
            self.last = Some((v, None));
            return Ok(Some(Ok(())));
        }
        // One side of the saturation point: the seed is the saturated phase of that side.
        if q <= ql {
            search.lim.1 = ts;
            search.hi = Some(Point {
                x: ts,
                f: (ql - q) / scale,
            });
        } else {
            search.lim.0 = ts;
            search.lo = Some(Point {
                x: ts,
                f: (qv - q) / scale,
            });
        }
        Ok(None)
    }

    /// Writes into `self.result.flash` the two-phase state of the pure feed at saturation
    /// (T (K), p (Pa)) with vapour fraction β (vapour first), and evaluates both phases into
    /// `self.work.ph[0]` (vapour) and `[1]` (liquid).
    fn saturated_pair<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        p: f64,
        feed: &[f64],
        ntot: f64,
        beta: f64,
        energies: bool,
    ) -> Result<()> {
        let nc = self.nc;
        let z = &self.work.z;
        let r = &mut self.result.flash;
        r.temperature = t;
        r.pressure = p;
        r.feed.clear();
        r.feed.extend_from_slice(feed);
        r.tie_line = None;
        r.phases.truncate(2);
        while r.phases.len() < 2 {
            r.phases.push(Phase {
                composition: vec![0.0; nc],
                ln_phi: vec![0.0; nc],
                ..Default::default()
            });
        }
        let mut g = 0.0;
        for (k, (root, kind, frac)) in [
            (RootChoice::Vapor, PhaseKind::Vapor, beta),
            (RootChoice::Liquid, PhaseKind::Liquid, 1.0 - beta),
        ]
        .into_iter()
        .enumerate()
        {
            let phi = &mut self.work.ph[k].phi;
            ln_phi(model, t, p, z, root, Need::VALUES, &mut self.work.fw, phi)?;
            let ph = &mut r.phases[k];
            ph.kind = Some(kind);
            ph.fraction = frac;
            ph.amount = frac * ntot;
            ph.composition.clear();
            ph.composition.extend_from_slice(z);
            ph.ln_phi.clear();
            ph.ln_phi.extend_from_slice(&phi.ln_phi);
            ph.molar_volume = phi.v;
            ph.z = phi.z;
            g = phi.g_res;
        }
        let fug = (0..nc)
            .filter(|&i| z[i] > 0.0)
            .map(|i| (r.phases[0].ln_phi[i] - r.phases[1].ln_phi[i]).abs())
            .fold(0.0, f64::max);
        if !(r.phases[1].molar_volume < r.phases[0].molar_volume) {
            return Err(Error::NoSolution(format!(
                "no distinct liquid and vapour volume roots at the saturation point T = {t} K, p = {p} Pa"
            )));
        }
        r.diagnostics = Default::default();
        r.diagnostics.residual = fug;
        r.diagnostics.gibbs = g;
        // Both phases have the feed's composition and equal fugacity by construction; no
        // stability test is run.
        r.diagnostics.certificate = None;
        let _ = evaluate(model, r, energies, false, &mut self.work)?;
        Ok(())
    }

    /// TV: pressure search at fixed T. With `energies` the state functions h, s, u are also
    /// evaluated (for UV). `p0` is a first pressure estimate (Pa).
    #[allow(clippy::too_many_arguments)]
    fn solve_tv<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        t: f64,
        v: f64,
        feed: &[f64],
        opts: &StateFlashOptions,
        energies: bool,
        p0: Option<f64>,
    ) -> Result<usize> {
        let plim = opts.pressure_range.unwrap_or(DEFAULT_PRESSURE_RANGE);
        let mut search = Search::new(Unknown::LnPressure, opts, (plim.0.ln(), plim.1.ln()));
        // The homogeneous feed at (T, v): its pressure, or why the volume cannot be reached.
        let p_h = self.homogeneous_pressure(model, t, v)?;
        if let Some(i) = single_component(&self.work.z)
            && t < model.critical_constants(i).tc
        {
            match saturation_pressure(model, t, i, &SaturationOptions::default()) {
                Ok(sat) if sat.pressure > plim.0 && sat.pressure < plim.1 => {
                    let (vl, vv) = (sat.liquid_molar_volume, sat.vapor_molar_volume);
                    let ln_ps = sat.pressure.ln();
                    if v > vl && v < vv {
                        let ntot: f64 = feed.iter().sum();
                        let beta = (v - vl) / (vv - vl);
                        self.saturated_pair(model, t, sat.pressure, feed, ntot, beta, energies)?;
                        let (val, _) = evaluate(model, &self.result.flash, energies, false, &mut self.work)?;
                        let residual = (val.v - v).abs() / v;
                        if residual > opts_tolerance_check(opts.tolerance)
                            || self.result.flash.diagnostics.residual > 1e-8
                        {
                            return Err(Error::not_converged(
                                format!("TV flash at the vapour pressure {} Pa", sat.pressure),
                                vec![("saturation".into(), sat.iterations)],
                                residual,
                                opts.tolerance,
                            ));
                        }
                        self.result.residual = residual;
                        self.cur = (val, Slopes::default());
                        self.cur_exact = false;
                        self.last = Some((val, None));
                        return Ok(0);
                    }
                    if v <= vl {
                        search.lim.0 = ln_ps;
                        search.lo = Some(Point {
                            x: ln_ps,
                            f: (v - vl) / v,
                        });
                    } else {
                        search.lim.1 = ln_ps;
                        search.hi = Some(Point {
                            x: ln_ps,
                            f: (v - vv) / v,
                        });
                    }
                }
                Ok(_) => {}
                Err(e)
                    if matches!(
                        e.kind(),
                        ErrorKind::NoSolution | ErrorKind::OutsideValidity | ErrorKind::NotConverged
                    ) => {}
                Err(e) => return Err(e),
            }
        }
        let guess = match (p0, self.last) {
            (Some(p), _) => p,
            (None, Some((l, Some(s)))) => {
                let dp = (v - l.v - s.v_t * (t - l.t)) / s.v_p;
                (l.p + dp).clamp(0.1 * l.p, 10.0 * l.p)
            }
            (None, Some((l, None))) => l.p,
            (None, None) => p_h.unwrap_or(R * t / v),
        };
        let guess = if guess > 0.0 && guess.is_finite() {
            guess
        } else {
            R * t / v
        };
        let outcome = solve_monotone(&mut search, guess.ln(), |lnp| {
            let p = lnp.exp();
            let tol = opts.tolerance;
            let done = |val: &Values, s: &Slopes| {
                let f = (v - val.v) / v;
                f.abs() <= tol && (f * v / (p * s.v_p)).abs() <= tol
            };
            self.pt(model, t, p, feed, opts, energies, done)?;
            let (val, s) = self.cur;
            Ok(((v - val.v) / v, -p * s.v_p / v))
        })?;
        let its = search.iterations;
        match outcome {
            Outcome::Converged => {
                let r = (self.cur.0.v - v).abs() / v;
                self.accept(r);
                Ok(its)
            }
            Outcome::Below(pt) | Outcome::Above(pt) => {
                let below = matches!(outcome, Outcome::Below(_));
                let at = v - pt.f * v;
                let other_p = if below { search.lim.1 } else { search.lim.0 }.exp();
                let other = self
                    .pt(model, t, other_p, feed, opts, false, |_, _| false)
                    .map(|_| self.cur.0.v)
                    .unwrap_or(if below { 0.0 } else { f64::INFINITY });
                let (min, max) = if below { (other, at) } else { (at, other) };
                Err(Error::OutsideValidity {
                    what: "volume".into(),
                    value: v,
                    min,
                    max,
                    detail: format!(
                        "m3/mol at T = {t} K: the feed's equilibrium molar volume spans [{min}, {max}] m3/mol over the \
                         pressure search range [{}, {}] Pa",
                        search.lim.0.exp(),
                        search.lim.1.exp()
                    ),
                })
            }
            Outcome::Collapsed(lo, hi) => Err(Error::not_converged(
                format!(
                    "TV flash (Newton on ln p): the pressure bracket collapsed onto a jump of the volume at p = {} Pa \
                     (scaled residuals {} and {})",
                    lo.x.exp(),
                    lo.f,
                    hi.f
                ),
                vec![("outer".into(), its), ("PT flash".into(), self.pt_flashes)],
                lo.f.abs().min(hi.f.abs()),
                opts.tolerance,
            )),
            Outcome::Exhausted(f) => Err(Error::not_converged(
                "TV flash (Newton on ln p)",
                vec![("outer".into(), its), ("PT flash".into(), self.pt_flashes)],
                f.abs(),
                opts.tolerance,
            )),
        }
    }

    /// Pressure (Pa) of the feed as one homogeneous phase at (T, v), when positive and
    /// mechanically stable; an error when the model cannot hold the feed in that volume at
    /// all (at or below its co-volume).
    fn homogeneous_pressure<M: FluidModel + ?Sized>(&mut self, model: &M, t: f64, v: f64) -> Result<Option<f64>> {
        let z = &self.work.z;
        let d = &mut self.work.fw.derivs;
        match model.residual(t, v, z, Need::VALUES, d) {
            Ok(()) => {}
            Err(Error::InvalidInput { what, detail }) if what == "volume" => {
                return Err(Error::NoSolution(format!(
                    "a molar volume of {v} m3/mol cannot hold the feed at T = {t} K at any pressure > 0: {detail}"
                )));
            }
            Err(e) => return Err(e),
        }
        let rt = R * t;
        let p = rt / v - rt * d.f_v;
        let p_v = -rt * d.f_vv - rt / (v * v);
        Ok((p > 0.0 && p_v < 0.0 && p.is_finite()).then_some(p))
    }

    /// UV: temperature search at fixed V, each evaluation a TV flash.
    fn solve_uv<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        u: f64,
        v: f64,
        feed: &[f64],
        opts: &StateFlashOptions,
    ) -> Result<()> {
        let lim = self.temperature_range(model, opts)?;
        let scale = u.abs().max(R * T_REFERENCE);
        // The volume must be reachable at all (co-volume), checked once.
        self.homogeneous_pressure(model, lim.0.max(T_REFERENCE.min(lim.1)), v)?;
        let (t0, mut p_next) = match self.last {
            Some((l, Some(s))) if l.energies => {
                // Newton step on (T, p) from the previous solution.
                let (a, b, c, d) = (s.u_t(l.p), s.u_p(l.p, l.v), s.v_t, s.v_p);
                let det = a * d - b * c;
                let (du, dv) = (u - l.u, v - l.v);
                let dt = (du * d - b * dv) / det;
                let dp = (a * dv - c * du) / det;
                let t = l.t + dt;
                let p = l.p + dp;
                (
                    if t.is_finite() { t } else { l.t },
                    if p > 0.0 && p.is_finite() { Some(p) } else { Some(l.p) },
                )
            }
            Some((l, _)) => (l.t, Some(l.p)),
            None => (self.homogeneous_temperature(model, u, v, scale, lim), None),
        };
        let mut search = Search::new(Unknown::Temperature, opts, lim);
        let cold = self.last.is_none();
        search.alt_starts = [
            Some(pseudo_critical_temperature(model, &self.work.z)),
            cold.then(|| ideal_gas_temperature(model, &self.work.z, Energy::Enthalpy, u, 1.0, lim))
                .flatten(),
            Some((lim.0 * lim.1).sqrt()),
        ];
        let mut prev: Option<(f64, f64, f64)> = None; // (T, p, (∂p/∂T)_V)
        let mut inner = 0usize;
        let outcome = solve_monotone(&mut search, t0, |t| {
            let p0 = match prev {
                Some((tp, pp, dpdt)) if dpdt.is_finite() => {
                    let p = pp + dpdt * (t - tp);
                    Some(if p > 0.1 * pp && p < 10.0 * pp { p } else { pp })
                }
                Some((_, pp, _)) => Some(pp),
                None => p_next.take(),
            };
            // A volume out of reach at this trial T (e.g. the pressures it needs cross a
            // region of more phases than allowed) is a failure of this trial point only.
            inner += match self.solve_tv(model, t, v, feed, opts, true, p0) {
                Err(Error::OutsideValidity { what, detail, .. }) if what == "volume" => {
                    return Err(Error::NoSolution(format!("TV flash at T = {t} K: {detail}")));
                }
                r => r?,
            };
            let (val, s) = self.cur;
            let two_phase_pure = self.result.flash.phases.len() == 2 && single_component(&self.work.z).is_some();
            let cv = if two_phase_pure { f64::NAN } else { s.cv(val.p, val.v) };
            prev = Some((t, val.p, if two_phase_pure { f64::NAN } else { s.p_t_at_v() }));

            Ok(((val.u - u) / scale, cv / scale))
        })?;
        self.result.iterations = search.iterations;
        match outcome {
            Outcome::Converged => {
                // `solve_tv` has stored the state; only the residual is that of U.
                self.result.residual = (self.cur.0.u - u).abs() / scale;
                Ok(())
            }
            Outcome::Below(pt) | Outcome::Above(pt) => {
                let below = matches!(outcome, Outcome::Below(_));
                let at = u + pt.f * scale;
                let other_t = if below { search.lim.1 } else { search.lim.0 };
                let other = self
                    .solve_tv(model, other_t, v, feed, opts, true, None)
                    .map(|_| self.cur.0.u)
                    .unwrap_or(if below { f64::INFINITY } else { f64::NEG_INFINITY });
                let (min, max) = if below { (at, other) } else { (other, at) };
                Err(Error::OutsideValidity {
                    what: "internal energy".into(),
                    value: u,
                    min,
                    max,
                    detail: format!(
                        "J/mol at v = {v} m3/mol: the feed's internal energy spans [{min}, {max}] J/mol over the \
                         temperature search range [{}, {}] K (the components' ideal-gas heat-capacity range \
                         intersected with the model's; solid phases are not modelled)",
                        search.lim.0, search.lim.1
                    ),
                })
            }
            Outcome::Collapsed(lo, hi) => Err(Error::not_converged(
                format!(
                    "UV flash (Newton on T over TV flashes): the temperature bracket collapsed at T = {} K \
                     (scaled residuals {} and {})",
                    lo.x, lo.f, hi.f
                ),
                vec![
                    ("outer".into(), search.iterations),
                    ("inner".into(), inner),
                    ("PT flash".into(), self.pt_flashes),
                ],
                lo.f.abs().min(hi.f.abs()),
                opts.tolerance,
            )),
            Outcome::Exhausted(f) => Err(Error::not_converged(
                "UV flash (Newton on T over TV flashes)",
                vec![
                    ("outer".into(), search.iterations),
                    ("inner".into(), inner),
                    ("PT flash".into(), self.pt_flashes),
                ],
                f.abs(),
                opts.tolerance,
            )),
        }
    }

    /// The temperature at which the homogeneous feed at molar volume v has internal energy u
    /// (a cold first estimate; no flash). Falls back to the middle of the range.
    fn homogeneous_temperature<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        u: f64,
        v: f64,
        scale: f64,
        lim: (f64, f64),
    ) -> f64 {
        let need = Need {
            composition: false,
            temperature: true,
            pressure: false,
        };
        let (mut lo, mut hi) = lim;
        let mut t = (lim.0 * lim.1).sqrt();
        for _ in 0..40 {
            if model
                .residual(t, v, &self.work.z, need, &mut self.work.fw.derivs)
                .is_err()
                || ideal_gas_at(model, t, &mut self.work).is_err()
            {
                break;
            }
            let d = &self.work.fw.derivs;
            let rt = R * t;
            let (mut u_ig, mut cv_ig) = (0.0, 0.0);
            for i in 0..self.nc {
                if self.work.z[i] > 0.0 {
                    u_ig += self.work.z[i] * (self.work.ig[i].h - rt);
                    cv_ig += self.work.z[i] * (self.work.ig[i].cp - R);
                }
            }
            let uu = u_ig - rt * t * d.f_t;
            let cv = cv_ig - rt * (2.0 * d.f_t + t * d.f_tt);
            let f = (uu - u) / scale;
            if f.abs() < 1e-8 {
                break;
            }
            if f < 0.0 {
                lo = t;
            } else {
                hi = t;
            }
            let mut nt = t - (uu - u) / cv;
            if !(nt > lo && nt < hi) || !nt.is_finite() {
                nt = 0.5 * (lo + hi);
            }
            if (nt - t).abs() < 1e-8 * t {
                t = nt;
                break;
            }
            t = nt;
        }
        self.work.ig_t = f64::NAN;
        t.clamp(lim.0, lim.1)
    }
}

/// The temperature (K) in `lim` at which the ideal-gas feed `z` has enthalpy (`kind` =
/// Enthalpy; with `c` = 1 internal energy h − RT) or entropy at 1e5 Pa equal to `q`; `None` if
/// the correlations fail. Ideal-gas mixing and pressure terms are left out: an estimate.
fn ideal_gas_temperature<M: FluidModel + ?Sized>(
    model: &M,
    z: &[f64],
    kind: Energy,
    q: f64,
    c: f64,
    lim: (f64, f64),
) -> Option<f64> {
    let (mut lo, mut hi) = lim;
    let mut t = (lim.0 * lim.1).sqrt();
    for _ in 0..60 {
        let (mut f, mut df) = (-q, 0.0);
        for (i, &zi) in z.iter().enumerate() {
            if zi > 0.0 {
                let ig = model.ideal_gas(t, i).ok()?;
                match kind {
                    Energy::Enthalpy => {
                        f += zi * (ig.h - c * R * t);
                        df += zi * (ig.cp - c * R);
                    }
                    Energy::Entropy => {
                        f += zi * ig.s;
                        df += zi * ig.cp / t;
                    }
                }
            }
        }
        if f < 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        let mut nt = t - f / df;
        if !(nt > lo && nt < hi) || !nt.is_finite() {
            nt = 0.5 * (lo + hi);
        }
        if (nt - t).abs() < 1e-6 * t {
            return Some(nt);
        }
        t = nt;
    }
    Some(t)
}

/// Kay's pseudo-critical temperature Σ z_i Tc_i, K (W. B. Kay, Ind. Eng. Chem. 28 (1936)
/// 1014, from memory): a start where the feed is near its two-phase region.
fn pseudo_critical_temperature<M: FluidModel + ?Sized>(model: &M, z: &[f64]) -> f64 {
    z.iter()
        .enumerate()
        .map(|(i, zi)| zi * model.critical_constants(i).tc)
        .sum()
}

/// The check applied to a pure-component answer built from the lever rule: the
/// specification is met to the round-off of its evaluation, well inside the tolerance.
fn opts_tolerance_check(tol: f64) -> f64 {
    tol.max(1e-12)
}

fn finite(what: &str, x: f64, unit: &str) -> Result<()> {
    if x.is_finite() {
        Ok(())
    } else {
        Err(Error::invalid(what, format!("{x} {unit}; a finite value is required")))
    }
}

/// PH flash: the equilibrium state of feed amounts `feed` (mol) at pressure `pressure` (Pa)
/// with enthalpy `enthalpy` (J/mol of feed). For repeated calls use a [`StateFlashContext`].
pub fn flash_ph<M: FluidModel + ?Sized>(
    model: &M,
    pressure: f64,
    enthalpy: f64,
    feed: &[f64],
    opts: &StateFlashOptions,
) -> Result<StateFlashResult> {
    flash_state(model, &StateSpec::PressureEnthalpy { pressure, enthalpy }, feed, opts)
}

/// PS flash: the equilibrium state of `feed` (mol) at `pressure` (Pa) with entropy `entropy`
/// (J/(mol K) of feed).
pub fn flash_ps<M: FluidModel + ?Sized>(
    model: &M,
    pressure: f64,
    entropy: f64,
    feed: &[f64],
    opts: &StateFlashOptions,
) -> Result<StateFlashResult> {
    flash_state(model, &StateSpec::PressureEntropy { pressure, entropy }, feed, opts)
}

/// TV flash: the equilibrium state of `feed` (mol) at `temperature` (K) in volume `volume`
/// (m3 per mol of feed).
pub fn flash_tv<M: FluidModel + ?Sized>(
    model: &M,
    temperature: f64,
    volume: f64,
    feed: &[f64],
    opts: &StateFlashOptions,
) -> Result<StateFlashResult> {
    flash_state(model, &StateSpec::TemperatureVolume { temperature, volume }, feed, opts)
}

/// UV flash: the equilibrium state of `feed` (mol) with internal energy `internal_energy`
/// (J/mol of feed) in volume `volume` (m3 per mol of feed).
pub fn flash_uv<M: FluidModel + ?Sized>(
    model: &M,
    internal_energy: f64,
    volume: f64,
    feed: &[f64],
    opts: &StateFlashOptions,
) -> Result<StateFlashResult> {
    flash_state(
        model,
        &StateSpec::EnergyVolume {
            internal_energy,
            volume,
        },
        feed,
        opts,
    )
}

/// The state-function flash of `feed` (mol) at the specification `spec` (per mol of feed).
///
/// ```
/// use tieline::equilibrium::{StateFlashOptions, flash_ph};
/// use tieline::model::{FluidModel, Iapws95};
/// use tieline::equilibrium::saturation_temperature;
///
/// // Water at 1 atm, a third of the way from saturated liquid to saturated vapour.
/// let w = Iapws95::new();
/// let sat = saturation_temperature(&w, 101_325.0, 0, &Default::default())?;
/// let flash = tieline::equilibrium::flash_pt(&w, sat.temperature - 1.0, 101_325.0, &[1.0], &Default::default())?;
/// let h_l = flash.mixture_properties(&w)?.enthalpy;
/// let r = flash_ph(&w, 101_325.0, h_l + 15_000.0, &[1.0], &StateFlashOptions::default())?;
/// assert_eq!(r.flash.phases.len(), 2);
/// assert!((r.flash.temperature - 373.124).abs() < 1e-3);
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn flash_state<M: FluidModel + ?Sized>(
    model: &M,
    spec: &StateSpec,
    feed: &[f64],
    opts: &StateFlashOptions,
) -> Result<StateFlashResult> {
    let mut ctx = StateFlashContext::new(model.num_components());
    ctx.flash(model, spec, feed, opts).cloned()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::equilibrium::flash_pt;
    use crate::model::{CubicEos, CubicKind, PhaseState};
    use crate::substance::DataBank;

    /// METHODS §12 B2 (N2/C1/C2, PR, k_ij of Hua, Brennecke & Stadtherr 1998, from memory).
    fn b2() -> CubicEos {
        let comps = DataBank::embedded()
            .get_many(&["nitrogen", "methane", "ethane"])
            .unwrap();
        CubicEos::new(CubicKind::PengRobinson, comps)
            .and_then(|m| m.with_pair(0, 1, 0.038, 0.0))
            .and_then(|m| m.with_pair(0, 2, 0.08, 0.0))
            .and_then(|m| m.with_pair(1, 2, 0.021, 0.0))
            .unwrap()
    }

    fn state(m: &CubicEos, t: f64, p: f64, z: &[f64]) -> (Values, Slopes) {
        let r = flash_pt(m, t, p, z, &FlashOptions::default()).unwrap();
        let mut w = Work::default();
        w.resize(z.len());
        w.z.copy_from_slice(z);
        let (v, frozen) = evaluate(m, &r, true, true, &mut w).unwrap();
        (v, slopes(m, &r, frozen, &mut w))
    }

    #[test]
    fn two_phase_slopes_match_central_differences() {
        let m = b2();
        let z = [0.3, 0.1, 0.6];
        let (t, p) = (200.0, 2e6);
        let (v0, s) = state(&m, t, p, &z);
        let (dt, dp) = (1e-3, 10.0);
        let (a, b) = (state(&m, t + dt, p, &z).0, state(&m, t - dt, p, &z).0);
        let (c, d) = (state(&m, t, p + dp, &z).0, state(&m, t, p - dp, &z).0);
        let fd_ht = (a.h - b.h) / (2.0 * dt);
        let fd_vt = (a.v - b.v) / (2.0 * dt);
        let fd_vp = (c.v - d.v) / (2.0 * dp);
        let fd_hp = (c.h - d.h) / (2.0 * dp);
        assert!((s.h_t / fd_ht - 1.0).abs() < 1e-5, "{} vs {fd_ht}", s.h_t);
        assert!((s.v_t / fd_vt - 1.0).abs() < 1e-5, "{} vs {fd_vt}", s.v_t);
        assert!((s.v_p / fd_vp - 1.0).abs() < 1e-5, "{} vs {fd_vp}", s.v_p);
        assert!((s.h_p / fd_hp - 1.0).abs() < 1e-4, "{} vs {fd_hp}", s.h_p);
        // The phase change adds to the frozen c_p.
        let r = flash_pt(&m, t, p, &z, &FlashOptions::default()).unwrap();
        assert_eq!(r.phases.len(), 2);
        let cpf = r.mixture_properties(&m).unwrap().cp_frozen;
        assert!(s.h_t > 1.01 * cpf, "{} vs frozen {cpf}", s.h_t);
        assert!(v0.h.is_finite());
    }

    #[test]
    fn propane_ph_and_ps_across_the_dome() {
        let m = CubicEos::new(
            CubicKind::PengRobinson,
            DataBank::embedded().get_many(&["propane"]).unwrap(),
        )
        .unwrap();
        let p = 1e6;
        let sat = saturation_temperature(&m, p, 0, &SaturationOptions::default()).unwrap();
        let ts = sat.temperature;
        let l = PhaseState::new(&m, ts, p, &[1.0], RootChoice::Liquid)
            .unwrap()
            .properties(&m)
            .unwrap();
        let v = PhaseState::new(&m, ts, p, &[1.0], RootChoice::Vapor)
            .unwrap()
            .properties(&m)
            .unwrap();
        let o = StateFlashOptions::default();
        for beta in [1e-6, 0.25, 0.5, 1.0 - 1e-6] {
            let h = l.enthalpy + beta * (v.enthalpy - l.enthalpy);
            let r = flash_ph(&m, p, h, &[1.0], &o).unwrap();
            assert_eq!(r.flash.temperature, ts);
            assert!((r.flash.vapor_fraction() - beta).abs() < 1e-9, "{beta}");
            let s = l.entropy + beta * (v.entropy - l.entropy);
            let r = flash_ps(&m, p, s, &[2.0], &o).unwrap();
            assert!((r.flash.vapor_fraction() - beta).abs() < 1e-9, "{beta}");
            assert!((r.flash.phases[0].amount - 2.0 * beta).abs() < 1e-8);
        }
        // Just outside the dome: one phase, on the right side of T_sat.
        let r = flash_ph(&m, p, l.enthalpy - 1.0, &[1.0], &o).unwrap();
        assert_eq!(r.flash.phases.len(), 1);
        assert!(r.flash.temperature < ts && r.flash.temperature > ts - 0.1);
        assert_eq!(r.flash.phases[0].kind, Some(PhaseKind::Liquid));
        let r = flash_ph(&m, p, v.enthalpy + 1.0, &[1.0], &o).unwrap();
        assert_eq!(r.flash.phases.len(), 1);
        assert!(r.flash.temperature > ts && r.flash.temperature < ts + 0.1);
        assert_eq!(r.flash.phases[0].kind, Some(PhaseKind::Vapor));
        // TV inside the dome at T_sat: the vapour pressure and the lever rule in volume.
        let vm = 0.5 * (l.molar_volume + v.molar_volume);
        let r = flash_tv(&m, ts, vm, &[1.0], &o).unwrap();
        assert!((r.flash.pressure / p - 1.0).abs() < 1e-9, "{}", r.flash.pressure);
        assert!((r.flash.vapor_fraction() - 0.5).abs() < 1e-7);
    }

    #[test]
    fn context_follows_a_heating_path_with_warm_starts() {
        let m = b2();
        let z = [0.3, 0.1, 0.6];
        let p = 2e6;
        let o = StateFlashOptions::default();
        let mut ctx = StateFlashContext::new(3);
        let (mut warm_flashes, mut cold_flashes) = (0, 0);
        for k in 0..40 {
            let t = 150.0 + 2.5 * k as f64;
            let h = state(&m, t, p, &z).0.h;
            let spec = StateSpec::PressureEnthalpy {
                pressure: p,
                enthalpy: h,
            };
            let r = ctx.flash(&m, &spec, &z, &o).unwrap();
            assert!(
                (r.flash.temperature / t - 1.0).abs() < 1e-9,
                "{t}: {}",
                r.flash.temperature
            );
            warm_flashes += r.pt_flashes;
            cold_flashes += flash_state(&m, &spec, &z, &o).unwrap().pt_flashes;
        }
        assert!(warm_flashes < cold_flashes, "{warm_flashes} vs {cold_flashes}");
        ctx.reset();
        assert!(ctx.last().spec.is_some());
    }

    #[test]
    fn bad_input_is_typed() {
        let m = b2();
        let z = [0.3, 0.1, 0.6];
        let o = StateFlashOptions::default();
        let e = flash_ph(&m, 1e6, f64::NAN, &z, &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        assert!(e.to_string().contains("finite"));
        let e = flash_uv(&m, f64::INFINITY, 1e-3, &z, &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        let e = flash_tv(&m, f64::NAN, 1e-3, &z, &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        let e = flash_tv(&m, 250.0, -1e-3, &z, &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        let e = flash_ps(&m, 1e6, -150.0, &[f64::NAN, 0.5, 0.5], &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        let bad = StateFlashOptions {
            temperature_range: Some((300.0, 200.0)),
            ..Default::default()
        };
        let e = flash_ph(&m, 1e6, -6e4, &z, &bad).unwrap_err();
        assert!(e.to_string().contains("temperature_range"));
        let bad = StateFlashOptions {
            tolerance: 0.0,
            ..Default::default()
        };
        assert_eq!(
            flash_ph(&m, 1e6, -6e4, &z, &bad).unwrap_err().kind(),
            ErrorKind::InvalidInput
        );
        // A range too narrow to hold the state: the reachable interval is in the message.
        let narrow = StateFlashOptions {
            temperature_range: Some((250.0, 260.0)),
            ..Default::default()
        };
        let h = state(&m, 300.0, 1e6, &z).0.h;
        let e = flash_ph(&m, 1e6, h, &z, &narrow).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::OutsideValidity);
        assert!(e.to_string().contains("[250, 260] K"), "{e}");
        // Too few iterations: not converged, with diagnostics.
        let few = StateFlashOptions {
            max_iterations: 1,
            ..Default::default()
        };
        let h = state(&m, 200.0, 2e6, &z).0.h;
        let e = flash_ph(&m, 2e6, h, &z, &few).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::NotConverged);
        assert!(e.to_string().contains("outer"), "{e}");
    }

    #[test]
    fn spec_serialises_with_a_tag() {
        let s = StateSpec::PressureEnthalpy {
            pressure: 1e5,
            enthalpy: -2.4e5,
        };
        let j = serde_json::to_string(&s).unwrap();
        assert!(j.contains("\"spec\":\"pressure_enthalpy\""), "{j}");
        assert_eq!(serde_json::from_str::<StateSpec>(&j).unwrap(), s);
    }
}
