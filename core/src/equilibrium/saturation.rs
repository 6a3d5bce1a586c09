//! Saturation states: vapour pressure and boiling temperature of a pure component, and
//! bubble and dew points of mixtures.
//!
//! Pure components: the equal-fugacity condition ln φ_L = ln φ_V is solved by Newton steps
//! in ln p, Δln p = −(ln φ_L − ln φ_V)/(Z_L − Z_V) (equivalent to Maxwell's equal-area rule),
//! kept inside a bracket that is narrowed whenever only one volume root exists (Michelsen &
//! Mollerup 2007, ch. 9). The boiling temperature solves ln p_sat(T) = ln p by Newton in 1/T
//! with the exact Clapeyron slope d ln p_sat/d(1/T) = −Δh_vap/(R ΔZ).
//!
//! Mixtures: Newton on the (N + 1) equations ln K_i + ln φ_i^V(y) − ln φ_i^L(x) = 0,
//! Σ y_i − Σ x_i = 0 in the unknowns (ln K, ln p) or (ln K, ln T), with an analytic Jacobian,
//! started from Wilson K-values refined by successive substitution (M. L. Michelsen,
//! "Saturation point calculations", Fluid Phase Equilib. 23 (1985) 181–192, from memory).

use crate::error::{Error, Result, check, num};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, RootChoice};
use crate::numerics::linalg::lu_solve;
use crate::substance::R;
use serde::{Deserialize, Serialize};

/// The lowest vapour pressure the pure-component solver computes, Pa: below it the
/// coefficients of a cubic equation of state (A·B ∝ p²) underflow double precision.
pub const P_FLOOR: f64 = 1e-100;
const LN_P_FLOOR: f64 = -230.258_509_299_404_56; // ln(1e-100)

/// Options of the saturation solvers.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct SaturationOptions {
    /// Tolerance on the fugacity residual max |ln f_i^V − ln f_i^L| (dimensionless).
    pub tolerance: f64,
    /// Maximum iterations.
    pub max_iterations: usize,
}

impl SaturationOptions {
    /// Checks the options: tolerance in (0, 1e-2), at most [`crate::limits::MAX_ITERATIONS`]
    /// iterations.
    pub fn validate(&self) -> Result<()> {
        if !(self.tolerance > 0.0 && self.tolerance < 1e-2) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in (0, 1e-2) is required", num(self.tolerance)),
            ));
        }
        check::count("max_iterations", self.max_iterations, 1, crate::limits::MAX_ITERATIONS)
    }
}

impl Default for SaturationOptions {
    fn default() -> Self {
        SaturationOptions {
            tolerance: 1e-11,
            max_iterations: 200,
        }
    }
}

/// A saturation state of a pure component.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SaturationPoint {
    /// Temperature, K.
    pub temperature: f64,
    /// Vapour pressure, Pa.
    pub pressure: f64,
    /// Saturated-liquid molar volume, m3/mol.
    pub liquid_molar_volume: f64,
    /// Saturated-vapour molar volume, m3/mol.
    pub vapor_molar_volume: f64,
    /// Saturated-liquid molar density, mol/m3.
    pub liquid_density: f64,
    /// Saturated-vapour molar density, mol/m3.
    pub vapor_density: f64,
    /// Enthalpy of vaporisation h_V − h_L, J/mol.
    pub enthalpy_of_vaporization: f64,
    /// Final |ln φ_L − ln φ_V|.
    pub residual: f64,
    /// Iterations used.
    pub iterations: usize,
}

fn unit_amounts<M: FluidModel + ?Sized>(model: &M, i: usize) -> Result<Vec<f64>> {
    let nc = model.num_components();
    if i >= nc {
        return Err(Error::invalid(
            "component",
            format!("index {i} for a model of {nc} components"),
        ));
    }
    let mut n = vec![0.0; nc];
    n[i] = 1.0;
    Ok(n)
}

/// Residual enthalpy H^r = −RT² F_T + pV − nRT of the phase (J) at a known volume.
fn residual_enthalpy<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    v: f64,
    n: &[f64],
    w: &mut FugacityWork,
) -> Result<f64> {
    model.residual(
        t,
        v,
        n,
        Need {
            composition: false,
            temperature: true,
            pressure: false,
        },
        &mut w.derivs,
    )?;
    let ntot: f64 = n.iter().sum();
    Ok(-R * t * t * w.derivs.f_t + p * v - ntot * R * t)
}

/// Vapour pressure of component `i` of `model` at T (K), with both saturated densities and the
/// enthalpy of vaporisation. At or above the component's critical temperature there is no
/// saturation state: [`Error::NoSolution`].
pub fn saturation_pressure<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    i: usize,
    opts: &SaturationOptions,
) -> Result<SaturationPoint> {
    opts.validate()?;
    check::temperature(t)?;
    let n = unit_amounts(model, i)?;
    let c = model.critical_constants(i);
    if t >= c.tc {
        return Err(Error::NoSolution(format!(
            "T = {t} K is at or above the critical temperature {} K of {}: no vapour–liquid saturation exists",
            num(c.tc),
            model.component_name(i),
            t = num(t)
        )));
    }
    let mut w = FugacityWork::new(n.len());
    let mut liq = LnPhi::new(n.len());
    let mut vap = LnPhi::new(n.len());
    let (mut lo, mut hi) = (f64::NEG_INFINITY, (c.pc * 1.5).ln());
    let mut lnp = ((c.pc / 1.0) * (5.373 * (1.0 + c.acentric) * (1.0 - c.tc / t)).exp()).ln();
    if !lnp.is_finite() || lnp >= hi {
        lnp = hi - 1.0;
    }
    let mut resid = f64::INFINITY;
    // The single roots last met on either side of the two-root window (m3), for the report
    // of a state too close to the critical point to resolve.
    let (mut v_above, mut v_below) = (f64::NAN, f64::NAN);
    for it in 1..=opts.max_iterations {
        let p = lnp.exp();
        let roots = model.volume_roots(t, p, &n, &mut w.derivs).map_err(|e| {
            e.from_inside(
                "pure-component vapour pressure",
                t,
                p,
                vec![("Newton".into(), it)],
                opts.tolerance,
            )
        })?;
        let next;
        if roots.count == 2 {
            model.phase_ln_phi(t, p, &n, RootChoice::Liquid, Need::VALUES, &mut w, &mut liq)?;
            model.phase_ln_phi(t, p, &n, RootChoice::Vapor, Need::VALUES, &mut w, &mut vap)?;
            let h = liq.ln_phi[i] - vap.ln_phi[i];
            resid = h.abs();
            if resid < opts.tolerance {
                let hl = residual_enthalpy(model, t, p, liq.v, &n, &mut w)?;
                let hv = residual_enthalpy(model, t, p, vap.v, &n, &mut w)?;
                return Ok(SaturationPoint {
                    temperature: t,
                    pressure: p,
                    liquid_molar_volume: liq.v,
                    vapor_molar_volume: vap.v,
                    liquid_density: 1.0 / liq.v,
                    vapor_density: 1.0 / vap.v,
                    enthalpy_of_vaporization: hv - hl,
                    residual: resid,
                    iterations: it,
                });
            }
            if h > 0.0 {
                lo = lnp;
            } else {
                hi = lnp;
            }
            next = lnp - h / (liq.z - vap.z);
        } else {
            // One root: decide the side by the model's liquid-like rule.
            if model.is_liquid_like(t, roots.v[0], &n) {
                hi = lnp;
                v_above = roots.v[0];
            } else {
                lo = lnp;
                v_below = roots.v[0];
            }
            next = f64::NAN;
        }
        if hi <= LN_P_FLOOR {
            return Err(Error::NoSolution(format!(
                "the vapour pressure of {} at T = {} K lies below {} Pa, where the equation's \
                 coefficients underflow double precision: no saturation state can be computed \
                 at this temperature (raise T)",
                model.component_name(i),
                num(t),
                num(P_FLOOR)
            )));
        }
        let mut cand = next;
        if !(cand > lo && cand < hi) || !cand.is_finite() {
            cand = if lo.is_finite() {
                0.5 * (lo + hi)
            } else {
                hi - 2.0_f64.max(hi - lnp + 1.0)
            };
        }
        if cand < LN_P_FLOOR {
            cand = LN_P_FLOOR;
        }
        if (hi - lo).abs() < 1e-15 * hi.abs().max(1.0) {
            break;
        }
        lnp = cand;
    }
    if !resid.is_finite() && lo.is_finite() && v_above.is_finite() && v_below.is_finite() {
        // Only one volume root on either side of a pressure interval narrower than double
        // precision resolves: the window of two roots around p_sat has closed to rounding,
        // as it does within about 1e-6 K of the equation's critical temperature.
        let (vl, vv) = (v_above, v_below);
        return Err(Error::NoSolution(format!(
            "T = {} K is {} K below the critical temperature {} K of {}: too close to the critical \
             point to resolve (or above the equation's own critical point, which its rounded \
             constants shift slightly); the saturated phases are identical within a relative \
             density difference of {} at p = {} Pa (pressure resolved to a relative {})",
            num(t),
            num(c.tc - t),
            num(c.tc),
            model.component_name(i),
            num(((vv - vl) / vv).abs()),
            num(lo.exp()),
            num((hi - lo).abs())
        )));
    }
    Err(Error::not_converged(
        "pure-component vapour pressure",
        vec![("Newton".into(), opts.max_iterations)],
        resid,
        opts.tolerance,
    ))
}

/// Boiling (saturation) temperature of component `i` at p (Pa). At or above the critical
/// pressure there is none: [`Error::NoSolution`].
pub fn saturation_temperature<M: FluidModel + ?Sized>(
    model: &M,
    p: f64,
    i: usize,
    opts: &SaturationOptions,
) -> Result<SaturationPoint> {
    opts.validate()?;
    check::pressure(p)?;
    let _ = unit_amounts(model, i)?;
    let c = model.critical_constants(i);
    if p >= c.pc {
        return Err(Error::NoSolution(format!(
            "p = {p} Pa is at or above the critical pressure {} Pa of {}: no vapour–liquid saturation exists",
            num(c.pc),
            model.component_name(i),
            p = num(p)
        )));
    }
    if p < P_FLOOR {
        return Err(Error::NoSolution(format!(
            "p = {} Pa is below {} Pa, the lowest vapour pressure the solver computes (the \
             equation's coefficients underflow double precision there)",
            num(p),
            num(P_FLOOR)
        )));
    }
    // Wilson/Lee–Kesler-type first guess, then Newton in 1/T with a bracket.
    let a = 5.373 * (1.0 + c.acentric);
    let mut t = c.tc / (1.0 - (p / c.pc).ln() / a);
    let (mut lo, mut hi) = (0.0f64, c.tc);
    if !(t > lo && t < hi) {
        t = 0.7 * c.tc;
    }
    let mut resid = f64::INFINITY;
    for it in 1..=opts.max_iterations {
        let sat = match saturation_pressure(model, t, i, opts) {
            Ok(s) => s,
            Err(e)
                if it < opts.max_iterations
                    && (e.kind() == crate::ErrorKind::NotConverged
                        || (e.kind() == crate::ErrorKind::NoSolution && t > 0.99 * c.tc)) =>
            {
                // Too close to the critical point for the inner solve: step back.
                hi = t;
                t = 0.5 * (lo.max(0.2 * c.tc) + hi);
                continue;
            }
            Err(e) if e.kind() == crate::ErrorKind::NoSolution && t < 0.5 * c.tc && it < opts.max_iterations => {
                // The vapour pressure at t lies below the solver's floor, and p above it:
                // the boiling temperature lies higher.
                lo = t;
                t = 0.5 * (lo + hi);
                continue;
            }
            Err(e) => return Err(e),
        };
        let f = sat.pressure.ln() - p.ln();
        resid = f.abs();
        if resid < 1e-12 {
            return Ok(SaturationPoint {
                iterations: it + sat.iterations,
                ..sat
            });
        }
        if f > 0.0 {
            hi = t;
        } else {
            lo = t;
        }
        let dz = p * (sat.vapor_molar_volume - sat.liquid_molar_volume) / (R * t);
        let slope = -sat.enthalpy_of_vaporization / (R * dz); // d ln p/d(1/T)
        let inv = 1.0 / t - f / slope;
        let mut tn = 1.0 / inv;
        if !(tn > lo && tn < hi) || !tn.is_finite() {
            tn = 0.5 * (lo.max(0.05 * c.tc) + hi);
        }
        if (tn - t).abs() < 1e-13 * t {
            t = tn;
            continue;
        }
        t = tn;
    }
    Err(Error::not_converged(
        "pure-component boiling temperature",
        vec![("Newton".into(), opts.max_iterations)],
        resid,
        1e-12,
    ))
}

/// Which saturation point of a mixture.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PointKind {
    /// Bubble point at given T: the pressure where the first vapour appears.
    BubblePressure,
    /// Bubble point at given p: the temperature where the first vapour appears.
    BubbleTemperature,
    /// Dew point at given T: the pressure where the first liquid appears.
    DewPressure,
    /// Dew point at given p: the temperature where the first liquid appears.
    DewTemperature,
}

impl PointKind {
    fn bubble(self) -> bool {
        matches!(self, PointKind::BubblePressure | PointKind::BubbleTemperature)
    }
    fn pressure_unknown(self) -> bool {
        matches!(self, PointKind::BubblePressure | PointKind::DewPressure)
    }
}

/// A bubble or dew point of a mixture, with the incipient phase.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BubbleDew {
    /// Which point.
    pub kind: PointKind,
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Feed (bulk phase) mole fractions.
    pub feed: Vec<f64>,
    /// Incipient-phase mole fractions (vapour at a bubble point, liquid at a dew point).
    pub incipient: Vec<f64>,
    /// K-values y_i/x_i.
    pub k_values: Vec<f64>,
    /// Molar volume of the bulk phase, m3/mol.
    pub feed_molar_volume: f64,
    /// Molar volume of the incipient phase, m3/mol.
    pub incipient_molar_volume: f64,
    /// Final max |ln f_i^V − ln f_i^L|.
    pub residual: f64,
    /// Successive-substitution iterations.
    pub ss_iterations: usize,
    /// Newton iterations.
    pub newton_iterations: usize,
}

/// Bubble-point pressure of the liquid `n` (mol) at T (K).
pub fn bubble_pressure<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    check::temperature(t)?;
    mixture_point(model, PointKind::BubblePressure, t, n, opts)
}

/// Dew-point pressure of the vapour `n` (mol) at T (K). Where two dew points exist
/// (retrograde region) the one reached from the low-pressure Wilson estimate is returned.
pub fn dew_pressure<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    check::temperature(t)?;
    mixture_point(model, PointKind::DewPressure, t, n, opts)
}

/// Bubble-point temperature of the liquid `n` (mol) at p (Pa).
pub fn bubble_temperature<M: FluidModel + ?Sized>(
    model: &M,
    p: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    check::pressure(p)?;
    mixture_point(model, PointKind::BubbleTemperature, p, n, opts)
}

/// Dew-point temperature of the vapour `n` (mol) at p (Pa).
pub fn dew_temperature<M: FluidModel + ?Sized>(
    model: &M,
    p: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    check::pressure(p)?;
    mixture_point(model, PointKind::DewTemperature, p, n, opts)
}

fn wilson_k<M: FluidModel + ?Sized>(model: &M, t: f64, p: f64, out: &mut [f64]) {
    model.estimate_ln_k(t, p, out);
}

/// Σ z K (bubble) or Σ z/K (dew) for Wilson K at (T, p), and its derivative in ln T.
fn wilson_sum<M: FluidModel + ?Sized>(model: &M, z: &[f64], t: f64, p: f64, bubble: bool) -> (f64, f64) {
    let (mut s, mut ds) = (0.0, 0.0);
    for (i, &zi) in z.iter().enumerate() {
        if zi <= 0.0 {
            continue;
        }
        let c = model.critical_constants(i);
        let lnk = (c.pc / p).ln() + 5.373 * (1.0 + c.acentric) * (1.0 - c.tc / t);
        let dlnk = 5.373 * (1.0 + c.acentric) * c.tc / t; // d ln K/d ln T
        let (term, dterm) = if bubble {
            (zi * lnk.exp(), zi * lnk.exp() * dlnk)
        } else {
            (zi * (-lnk).exp(), -zi * (-lnk).exp() * dlnk)
        };
        s += term;
        ds += dterm;
    }
    (s, ds)
}

fn mixture_point<M: FluidModel + ?Sized>(
    model: &M,
    kind: PointKind,
    spec: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    match solve_point(model, kind, spec, n, opts, None) {
        Ok(r) => Ok(r),
        Err(e) if matches!(e.kind(), crate::ErrorKind::NoSolution | crate::ErrorKind::NotConverged) => {
            // The estimate from Wilson K-values led nowhere (typically to the trivial
            // solution near a critical region): locate the phase boundaries by flashes along
            // the unknown, then converge on the one of the requested kind.
            scan_for_point(model, kind, spec, n, opts).map_err(|scan| match scan {
                Error::NoSolution(m) => Error::NoSolution(format!(
                    "{}; a search along the {} found: {m}",
                    e.message(),
                    if kind.pressure_unknown() {
                        "pressure"
                    } else {
                        "temperature"
                    }
                )),
                other => other,
            })
        }
        Err(e) => Err(e),
    }
}

/// Finds the phase boundaries of `n` along p (at T = `spec`) or T (at p = `spec`) by PT
/// flashes on a grid and bisection, classifies each as a bubble point (the vapour vanishes) or
/// a dew point (the liquid vanishes), and converges the first one of the requested kind
/// (lowest pressure, or lowest temperature) by Newton from the nearby split.
fn scan_for_point<M: FluidModel + ?Sized>(
    model: &M,
    kind: PointKind,
    spec: f64,
    n: &[f64],
    opts: &SaturationOptions,
) -> Result<BubbleDew> {
    use crate::equilibrium::{FlashContext, FlashOptions};
    let nc = model.num_components();
    let p_unknown = kind.pressure_unknown();
    let (tc_min, tc_max, pc_max) = (0..nc)
        .filter(|&i| n[i] > 0.0)
        .fold((f64::INFINITY, 0.0f64, 0.0f64), |a, i| {
            let c = model.critical_constants(i);
            (a.0.min(c.tc), a.1.max(c.tc), a.2.max(c.pc))
        });
    let (lo, hi, npts) = if p_unknown {
        (1e3f64, 5.0 * pc_max, 80)
    } else {
        (0.3 * tc_min, 1.3 * tc_max, 80)
    };
    let at = |k: usize| {
        let f = k as f64 / (npts - 1) as f64;
        if p_unknown {
            lo * (hi / lo).powf(f)
        } else {
            lo + (hi - lo) * f
        }
    };
    let fopts = FlashOptions {
        certificate: false,
        ..Default::default()
    };
    let mut ctx = FlashContext::new(nc);
    let phases_at = |x: f64, ctx: &mut FlashContext| -> Option<usize> {
        let (t, p) = if p_unknown { (spec, x) } else { (x, spec) };
        ctx.flash(model, t, p, n, &fopts).ok().map(|r| r.phases.len())
    };
    let mut found: Vec<String> = Vec::new();
    let mut prev: Option<(f64, usize)> = None;
    for k in 0..npts {
        let x = at(k);
        let Some(count) = phases_at(x, &mut ctx) else {
            prev = None;
            continue;
        };
        if let Some((xp, cp)) = prev
            && cp != count
        {
            // Bisect down to a two-phase point very close to the boundary.
            let (mut a, mut b) = if cp == 2 { (xp, x) } else { (x, xp) };
            for _ in 0..40 {
                let m = if p_unknown { (a * b).sqrt() } else { 0.5 * (a + b) };
                match phases_at(m, &mut ctx) {
                    Some(2) => a = m,
                    Some(_) => b = m,
                    None => break,
                }
                if (a - b).abs() < 1e-7 * a.abs() {
                    break;
                }
            }
            let (t, p) = if p_unknown { (spec, a) } else { (a, spec) };
            ctx.reset();
            if let Ok(r) = ctx.flash(model, t, p, n, &fopts)
                && r.phases.len() == 2
            {
                let (light, heavy) = (&r.phases[0], &r.phases[1]);
                let bubble_here = light.fraction < heavy.fraction;
                let here = if bubble_here { "bubble" } else { "dew" };
                found.push(format!(
                    "a {here} point near {a} {}",
                    if p_unknown { "Pa" } else { "K" },
                    a = num(a)
                ));
                if bubble_here == kind.bubble() {
                    let lnk: Vec<f64> = (0..nc)
                        .map(|i| {
                            if n[i] > 0.0 {
                                (light.composition[i] / heavy.composition[i]).ln()
                            } else {
                                0.0
                            }
                        })
                        .collect();
                    if let Ok(point) = solve_point(model, kind, spec, n, opts, Some((a, lnk))) {
                        return Ok(point);
                    }
                }
            }
        }
        prev = Some((x, count));
    }
    Err(Error::NoSolution(if found.is_empty() {
        "no phase boundary".into()
    } else {
        found.join(", ")
    }))
}

/// Newton solution of a bubble or dew point, from Wilson K-values or from `init` = (the
/// unknown p or T, ln K).
fn solve_point<M: FluidModel + ?Sized>(
    model: &M,
    kind: PointKind,
    spec: f64,
    n: &[f64],
    opts: &SaturationOptions,
    init: Option<(f64, Vec<f64>)>,
) -> Result<BubbleDew> {
    opts.validate()?;
    let nc = model.num_components();
    let ntot = check::amounts(n, nc)?;
    let z: Vec<f64> = n.iter().map(|v| v / ntot).collect();
    let active: Vec<bool> = z.iter().map(|&v| v > 0.0).collect();
    if active.iter().filter(|&&a| a).count() < 2 {
        return Err(Error::invalid(
            "amounts",
            "a bubble or dew point needs at least two components present; use saturation_pressure/saturation_temperature for a pure component",
        ));
    }
    let bubble = kind.bubble();
    let p_unknown = kind.pressure_unknown();
    // Initial (T, p) from Wilson K-values.
    let (mut t, mut p) = if p_unknown { (spec, 1e5) } else { (300.0, spec) };
    if p_unknown {
        // Σ z K = 1 with K ∝ 1/p: p = Σ z K(p=1) for bubble, 1/Σ(z/K(p=1)) for dew.
        let (s, _) = wilson_sum(model, &z, t, 1.0, bubble);
        p = if bubble { s } else { 1.0 / s };
    } else {
        // Newton on ln T for Σ = 1, from a mole-averaged critical temperature guess.
        t = z
            .iter()
            .enumerate()
            .map(|(i, zi)| zi * model.critical_constants(i).tc)
            .sum::<f64>()
            * 0.7;
        for _ in 0..100 {
            let (s, ds) = wilson_sum(model, &z, t, p, bubble);
            let f = s.ln();
            let df = ds / s;
            let step = (-f / df).clamp(-0.5, 0.5);
            t *= step.exp();
            if step.abs() < 1e-12 {
                break;
            }
        }
    }
    if !(t.is_finite() && t > 0.0 && p.is_finite() && p > 0.0) {
        return Err(Error::NoSolution(format!(
            "no initial estimate of the {kind:?} point could be formed"
        )));
    }
    let mut lnk = vec![0.0; nc];
    wilson_k(model, t, p, &mut lnk);
    if let Some((x, k)) = init {
        if p_unknown {
            p = x;
        } else {
            t = x;
        }
        lnk = k;
    }
    let mut w = FugacityWork::new(nc);
    let mut bulk = LnPhi::new(nc);
    let mut inc = LnPhi::new(nc);
    let mut xi = vec![0.0; nc]; // incipient-phase composition (normalised)
    let (bulk_root, inc_root) = if bubble {
        (RootChoice::Liquid, RootChoice::Vapor)
    } else {
        (RootChoice::Vapor, RootChoice::Liquid)
    };
    let m = nc + 1;
    let mut jac = vec![0.0; m * m];
    let mut rhs = vec![0.0; m];
    let mut ss_iterations = 0;
    let mut newton_iterations = 0;
    let mut resid = f64::INFINITY;
    let mut newton = false;
    let no_point = |t: f64, p: f64| {
        Error::NoSolution(format!(
            "no {} point: the iteration converged to the trivial solution K = 1 near T = {t} K, p = {p} Pa \
             (the specification may lie beyond the mixture's cricondentherm or cricondenbar)",
            if bubble { "bubble" } else { "dew" },
            t = num(t),
            p = num(p)
        ))
    };
    for it in 0..opts.max_iterations {
        if !(p > 0.0 && p < 1e10 && t > 1.0 && t < 1e4) {
            return Err(no_point(t, p));
        }
        // Incipient phase amounts: bubble y ∝ K z, dew x ∝ z/K.
        let mut s = 0.0;
        for i in 0..nc {
            xi[i] = if active[i] {
                if bubble {
                    z[i] * lnk[i].exp()
                } else {
                    z[i] * (-lnk[i]).exp()
                }
            } else {
                0.0
            };
            s += xi[i];
        }
        for v in xi.iter_mut() {
            *v /= s;
        }
        let need = Need {
            composition: newton,
            temperature: newton && !p_unknown,
            pressure: newton && p_unknown,
        };
        model.phase_ln_phi(t, p, &z, bulk_root, need, &mut w, &mut bulk)?;
        model.phase_ln_phi(t, p, &xi, inc_root, need, &mut w, &mut inc)?;
        let (phi_v, phi_l) = if bubble { (&inc, &bulk) } else { (&bulk, &inc) };
        resid = 0.0f64;
        for i in 0..nc {
            if active[i] {
                let r = lnk[i] + phi_v.ln_phi[i] - phi_l.ln_phi[i];
                resid = resid.max(r.abs());
                rhs[i] = -r;
            } else {
                rhs[i] = 0.0;
            }
        }
        let sum_eq = if bubble { s - 1.0 } else { 1.0 - s };
        rhs[nc] = -sum_eq;
        let trivial = (0..nc).filter(|&i| active[i]).all(|i| lnk[i].abs() < 1e-4);
        if trivial && it > 2 {
            return Err(no_point(t, p));
        }
        if resid < opts.tolerance && sum_eq.abs() < opts.tolerance {
            let k_values: Vec<f64> = lnk.iter().map(|l| l.exp()).collect();
            return Ok(BubbleDew {
                kind,
                temperature: t,
                pressure: p,
                feed: z,
                incipient: xi,
                k_values,
                feed_molar_volume: bulk.v,
                incipient_molar_volume: inc.v,
                residual: resid,
                ss_iterations,
                newton_iterations,
            });
        }
        if !newton {
            // Successive substitution: K from the fugacity coefficients, then the unknown
            // (p or T) from the summation.
            ss_iterations += 1;
            let mut delta = 0.0f64;
            for i in 0..nc {
                if active[i] {
                    let new = phi_l.ln_phi[i] - phi_v.ln_phi[i];
                    delta = delta.max((new - lnk[i]).abs());
                    lnk[i] = new;
                }
            }
            if p_unknown {
                // Bubble: Σ K z ∝ 1/p; dew: Σ z/K ∝ p.
                let f = if bubble { s } else { 1.0 / s };
                p *= f;
            } else {
                // Approximate ln-T update from the Wilson temperature sensitivity.
                let (_, ds) = wilson_sum(model, &z, t, p, bubble);
                let (sw, _) = wilson_sum(model, &z, t, p, bubble);
                let dlnt = (-(s.ln()) / (ds / sw)).clamp(-0.1, 0.1);
                t *= dlnt.exp();
            }
            if (delta < 1e-3 && sum_eq.abs() < 1e-3) || ss_iterations >= 30 {
                newton = true;
            }
            continue;
        }
        // Newton on (ln K, ln p or ln T).
        newton_iterations += 1;
        for v in jac.iter_mut() {
            *v = 0.0;
        }
        for i in 0..nc {
            if !active[i] {
                jac[i * m + i] = 1.0;
                continue;
            }
            for j in 0..nc {
                if !active[j] {
                    continue;
                }
                let d = inc.dn[i * nc + j] * xi[j];
                jac[i * m + j] = if i == j { 1.0 } else { 0.0 } + d;
            }
            jac[i * m + nc] = if p_unknown {
                p * (phi_v.dp[i] - phi_l.dp[i])
            } else {
                t * (phi_v.dt[i] - phi_l.dt[i])
            };
        }
        for j in 0..nc {
            if active[j] {
                jac[nc * m + j] = if bubble {
                    z[j] * lnk[j].exp()
                } else {
                    z[j] * (-lnk[j]).exp()
                };
            }
        }
        if !lu_solve(&mut jac, m, &mut rhs) {
            return Err(Error::not_converged(
                "saturation point (singular Jacobian: near a critical point?)",
                vec![("SS".into(), ss_iterations), ("Newton".into(), newton_iterations)],
                resid,
                opts.tolerance,
            ));
        }
        // Damp large steps.
        let big = rhs.iter().fold(0.0f64, |a, b| a.max(b.abs()));
        let damp = if big > 0.5 { 0.5 / big } else { 1.0 };
        for i in 0..nc {
            lnk[i] += damp * rhs[i];
        }
        if p_unknown {
            p *= (damp * rhs[nc]).exp();
        } else {
            t *= (damp * rhs[nc]).exp();
        }
    }
    Err(Error::not_converged(
        "saturation point",
        vec![("SS".into(), ss_iterations), ("Newton".into(), newton_iterations)],
        resid,
        opts.tolerance,
    ))
}
