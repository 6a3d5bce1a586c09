//! Phase equilibrium of a pure substance over any set of phase models: one fluid model
//! (its liquid and vapour roots) and any number of solid models of the same species.
//!
//! Everything follows from the molar Gibbs energies g(T, p) of the phases, all in the
//! library's reference state:
//! * the stable phase at (T, p) is the one of least g;
//! * two phases coexist where their g are equal: at fixed T this is solved for p by Newton
//!   steps on Δg with slope Δv (in ln p when a vapour takes part), at fixed p for T with
//!   slope −Δs; each boundary point reports the Clapeyron slope dp/dT = Δs/Δv = Δh/(TΔv);
//! * the solid–liquid–vapour triple point is where all three g are equal: the vapour
//!   pressure p_σ(T) is followed and T adjusted until the solid's g equals the liquid's
//!   (Newton with the total derivative along the saturation curve);
//! * for plotting, the g(T) curves of every phase at fixed p (or g(p) at fixed T) with their
//!   crossings, each refined by the coexistence solve and marked stable when no other phase
//!   lies lower there.
//!
//! Fluid roots are taken from [`FluidModel::volume_roots`]: with two roots the denser is the
//! liquid and the lighter the vapour (metastable branches included); with one root, it is
//! the liquid or the vapour by the model's [`FluidModel::is_liquid_like`] rule.

use crate::error::{Error, Result, check, num};
use crate::model::solid::SolidModel;
use crate::model::{FluidModel, HelmholtzDerivs, PhaseKind, PhaseState};
use crate::substance::R;
use serde::{Deserialize, Serialize};

/// Which phase of a [`PurePhases`] set.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PurePhase {
    /// The fluid's liquid root.
    Liquid,
    /// The fluid's vapour root.
    Vapor,
    /// Solid number `k` of the set (in the order given).
    Solid(usize),
}

impl PurePhase {
    /// The [`PhaseKind`] of this phase.
    pub fn kind(self) -> PhaseKind {
        match self {
            PurePhase::Liquid => PhaseKind::Liquid,
            PurePhase::Vapor => PhaseKind::Vapor,
            PurePhase::Solid(_) => PhaseKind::Solid,
        }
    }
}

/// One phase evaluated at (T, p): molar quantities in the library reference state.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PhasePoint {
    /// Which phase.
    pub phase: PurePhase,
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Molar Gibbs energy, J/mol.
    pub gibbs: f64,
    /// Molar enthalpy, J/mol.
    pub enthalpy: f64,
    /// Molar entropy, J/(mol K).
    pub entropy: f64,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
}

/// The stable phase at (T, p) and every candidate that exists there.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StablePhase {
    /// The phase of least Gibbs energy.
    pub stable: PhasePoint,
    /// All phases that exist at (T, p), by increasing Gibbs energy.
    pub candidates: Vec<PhasePoint>,
}

/// A point of a two-phase boundary.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Coexistence {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// The two phases, `b` being the one stable at higher temperature (liquid over solid,
    /// vapour over liquid or solid) when the pair is of that kind.
    pub phases: (PurePhase, PurePhase),
    /// The phases' states.
    pub states: (PhasePoint, PhasePoint),
    /// Enthalpy of transition h_b − h_a, J/mol.
    pub delta_h: f64,
    /// Entropy of transition s_b − s_a, J/(mol K).
    pub delta_s: f64,
    /// Volume change v_b − v_a, m3/mol.
    pub delta_v: f64,
    /// Clapeyron slope of the boundary dp/dT = Δs/Δv, Pa/K.
    pub clapeyron_slope: f64,
    /// Newton iterations used.
    pub iterations: usize,
}

/// A point where three phases coexist.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TriplePoint {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// The three phases (solid, liquid, vapour).
    pub phases: [PhasePoint; 3],
    /// max |g_i − g_j|/(RT) at the solution.
    pub residual: f64,
    /// Outer iterations.
    pub iterations: usize,
}

/// Gibbs-energy curves of all phases along T (at fixed p) or along p (at fixed T).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GibbsCurves {
    /// The grid: temperatures (K) for isobaric curves, pressures (Pa) for isothermal ones.
    pub grid: Vec<f64>,
    /// One curve per phase: g (J/mol) at each grid point, `None` where the phase does not
    /// exist or is outside its model's range.
    pub curves: Vec<(PurePhase, Vec<Option<f64>>)>,
    /// Where two curves cross, refined by the coexistence solve.
    pub crossings: Vec<Crossing>,
}

/// A crossing of two Gibbs-energy curves.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Crossing {
    /// The coexistence point.
    pub point: Coexistence,
    /// Gibbs energy at the crossing, J/mol.
    pub gibbs: f64,
    /// Whether no other phase has a lower Gibbs energy there (a real phase transition);
    /// otherwise a metastable crossing.
    pub stable: bool,
}

/// A pure substance described by one fluid model (component `component` of it, taken pure)
/// and a set of solid models of the same species.
pub struct PurePhases<'a, F: FluidModel + ?Sized> {
    fluid: &'a F,
    component: usize,
    solids: Vec<&'a dyn SolidModel>,
    amounts: Vec<f64>,
}

impl<'a, F: FluidModel + ?Sized> PurePhases<'a, F> {
    /// The set of phases. Fails if `component` is not a component of `fluid` or a solid's
    /// species name differs from the component's name.
    pub fn new(fluid: &'a F, component: usize, solids: Vec<&'a dyn SolidModel>) -> Result<Self> {
        let nc = fluid.num_components();
        if component >= nc {
            return Err(Error::invalid(
                "component",
                format!("index {component} for a model of {nc} components"),
            ));
        }
        for s in &solids {
            if s.species() != fluid.component_name(component) {
                return Err(Error::invalid(
                    "solid",
                    format!(
                        "a solid of '{}' cannot coexist with the fluid component '{}'",
                        s.species(),
                        fluid.component_name(component)
                    ),
                ));
            }
        }
        let mut amounts = vec![0.0; nc];
        amounts[component] = 1.0;
        Ok(PurePhases {
            fluid,
            component,
            solids,
            amounts,
        })
    }

    /// All phases of the set: liquid, vapour, then the solids.
    pub fn phases(&self) -> Vec<PurePhase> {
        let mut v = vec![PurePhase::Liquid, PurePhase::Vapor];
        v.extend((0..self.solids.len()).map(PurePhase::Solid));
        v
    }

    /// The phase at (T (K), p (Pa)), or `None` if that fluid root does not exist there or the
    /// phase's model is not valid there (outside its range, or no density root). Errors only
    /// for invalid input.
    pub fn evaluate(&self, phase: PurePhase, t: f64, p: f64) -> Result<Option<PhasePoint>> {
        check::temperature(t)?;
        check::pressure(p)?;
        match phase {
            PurePhase::Solid(k) => {
                let s = self
                    .solids
                    .get(k)
                    .ok_or_else(|| Error::invalid("solid", format!("index {k} of {}", self.solids.len())))?;
                match s.properties(t, p) {
                    Ok(pr) => Ok(Some(PhasePoint {
                        phase,
                        temperature: t,
                        pressure: p,
                        gibbs: pr.gibbs,
                        enthalpy: pr.enthalpy,
                        entropy: pr.entropy,
                        molar_volume: pr.molar_volume,
                    })),
                    Err(e) if e.kind() == crate::ErrorKind::InvalidInput => Err(e),
                    Err(_) => Ok(None),
                }
            }
            PurePhase::Liquid | PurePhase::Vapor => {
                let n = &self.amounts;
                let mut w = HelmholtzDerivs::new(n.len());
                let roots = match self.fluid.volume_roots(t, p, n, &mut w) {
                    Ok(r) => r,
                    Err(e) if e.kind() == crate::ErrorKind::InvalidInput => return Err(e),
                    Err(_) => return Ok(None),
                };
                let v = match (roots.count, phase) {
                    (2, PurePhase::Liquid) => roots.v[0],
                    (2, _) => roots.v[1],
                    (_, PurePhase::Liquid) if self.fluid.is_liquid_like(t, roots.v[0], n) => roots.v[0],
                    (_, PurePhase::Vapor) if !self.fluid.is_liquid_like(t, roots.v[0], n) => roots.v[0],
                    _ => return Ok(None),
                };
                let st = PhaseState {
                    t,
                    p,
                    n: n.clone(),
                    v,
                    kind: phase.kind(),
                };
                match st.properties(self.fluid) {
                    Ok(pr) => Ok(Some(PhasePoint {
                        phase,
                        temperature: t,
                        pressure: p,
                        gibbs: pr.gibbs,
                        enthalpy: pr.enthalpy,
                        entropy: pr.entropy,
                        molar_volume: pr.molar_volume,
                    })),
                    Err(e) if e.kind() == crate::ErrorKind::InvalidInput => Err(e),
                    Err(_) => Ok(None),
                }
            }
        }
    }

    fn must(&self, phase: PurePhase, t: f64, p: f64) -> Result<PhasePoint> {
        self.evaluate(phase, t, p)?.ok_or_else(|| {
            Error::NoSolution(format!(
                "the {phase:?} phase does not exist (or is outside its model's range) at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            ))
        })
    }

    /// The stable phase at (T (K), p (Pa)): least molar Gibbs energy among the fluid roots and
    /// the solids that exist there.
    pub fn stable_phase(&self, t: f64, p: f64) -> Result<StablePhase> {
        let mut c = Vec::new();
        for ph in self.phases() {
            if let Some(pt) = self.evaluate(ph, t, p)? {
                c.push(pt);
            }
        }
        c.sort_by(|a, b| a.gibbs.total_cmp(&b.gibbs));
        let stable = *c.first().ok_or_else(|| {
            Error::NoSolution(format!(
                "no phase of the set can be evaluated at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            ))
        })?;
        Ok(StablePhase { stable, candidates: c })
    }

    fn coexistence_from(&self, a: PhasePoint, b: PhasePoint, iterations: usize) -> Result<Coexistence> {
        let (dh, ds, dv) = (
            b.enthalpy - a.enthalpy,
            b.entropy - a.entropy,
            b.molar_volume - a.molar_volume,
        );
        // Two phases with the same state (e.g. one solid model given twice) have equal Gibbs
        // energies everywhere: no boundary, and Δs/Δv would be 0/0.
        if !(ds / dv).is_finite() {
            return Err(Error::NoSolution(format!(
                "{:?} and {:?} have the same molar volume at T = {t} K, p = {p} Pa (Δv = {dv} m3/mol, \
                 Δs = {ds} J/(mol K)): no boundary between them (the same solid given twice?)",
                a.phase,
                b.phase,
                t = num(a.temperature),
                p = num(a.pressure),
                dv = num(dv),
                ds = num(ds)
            )));
        }
        Ok(Coexistence {
            temperature: a.temperature,
            pressure: a.pressure,
            phases: (a.phase, b.phase),
            states: (a, b),
            delta_h: dh,
            delta_s: ds,
            delta_v: dv,
            clapeyron_slope: ds / dv,
            iterations,
        })
    }

    /// Coexistence of phases `a` and `b` at temperature T (K): the pressure (Pa) where their
    /// Gibbs energies are equal, by Newton steps in p (in ln p when a vapour takes part)
    /// with slope Δv, from `p_guess` (Pa) or from the solids' triple-point estimate.
    /// [`Error::NoSolution`] if the phases do not coexist at T within their models' ranges.
    pub fn coexistence_at_temperature(
        &self,
        a: PurePhase,
        b: PurePhase,
        t: f64,
        p_guess: Option<f64>,
    ) -> Result<Coexistence> {
        check::temperature(t)?;
        if a == b {
            return Err(Error::invalid("phases", "two different phases are required"));
        }
        let log = a == PurePhase::Vapor || b == PurePhase::Vapor;
        let mut p = match p_guess {
            Some(p) => {
                check::pressure(p)?;
                p
            }
            None => self.default_pressure(a, b, t)?,
        };
        let tol = 1e-12;
        let mut resid = f64::INFINITY;
        let mut last_ok: Option<f64> = None;
        for it in 1..=100 {
            let (pa, pb) = match (self.evaluate(a, t, p)?, self.evaluate(b, t, p)?) {
                (Some(x), Some(y)) => (x, y),
                _ => {
                    // Stepped to where a phase does not exist: go halfway back.
                    match last_ok {
                        Some(q) if (q - p).abs() > 1e-14 * q => {
                            p = if log { (q * p).sqrt() } else { 0.5 * (q + p) };
                            continue;
                        }
                        _ => break,
                    }
                }
            };
            last_ok = Some(p);
            let rt = R * t;
            let f = (pa.gibbs - pb.gibbs) / rt;
            resid = f.abs();
            let dv = pa.molar_volume - pb.molar_volume;
            if resid < tol {
                return self.coexistence_from(pa, pb, it);
            }
            let pn = if log {
                let slope = p * dv / rt; // d f/d ln p
                let step = (-f / slope).clamp(-3.0, 3.0);
                p * step.exp()
            } else {
                let step = -f * rt / dv;
                let pn = p + step;
                if pn <= 0.0 { 0.1 * p } else { pn }
            };
            if !pn.is_finite() {
                break;
            }
            p = pn;
        }
        Err(if resid.is_finite() {
            Error::not_converged(
                "pure-substance coexistence at T",
                vec![("Newton".into(), 100)],
                resid,
                tol,
            )
        } else {
            Error::NoSolution(format!(
                "{a:?} and {b:?} do not coexist at T = {t} K within the models' ranges",
                t = num(t)
            ))
        })
    }

    fn default_pressure(&self, a: PurePhase, b: PurePhase, t: f64) -> Result<f64> {
        let solid_hint = [a, b].iter().find_map(|ph| match ph {
            PurePhase::Solid(k) => Some(self.solids[*k].triple_point_estimate()),
            _ => None,
        });
        if let Some((tt, pt)) = solid_hint {
            if a == PurePhase::Vapor || b == PurePhase::Vapor {
                // Clausius–Clapeyron from the triple-point estimate with a sublimation enthalpy
                // guess of 10 RT_t (Trouton-like; common practice, no source).
                return Ok(pt * (-10.0 * tt * (1.0 / t - 1.0 / tt)).exp());
            }
            return Ok(pt.max(1e3));
        }
        // Liquid and vapour: the fluid's own vapour pressure.
        let s = super::saturation_pressure(self.fluid, t, self.component, &super::SaturationOptions::default())?;
        Ok(s.pressure)
    }

    /// Coexistence of phases `a` and `b` at pressure p (Pa): the temperature (K) where their
    /// Gibbs energies are equal, by Newton steps in T with slope −Δs, from `t_guess` (K) or
    /// from the solids' triple-point estimate (the fluid's boiling point for liquid–vapour).
    pub fn coexistence_at_pressure(
        &self,
        a: PurePhase,
        b: PurePhase,
        p: f64,
        t_guess: Option<f64>,
    ) -> Result<Coexistence> {
        check::pressure(p)?;
        if a == b {
            return Err(Error::invalid("phases", "two different phases are required"));
        }
        let mut t = match t_guess {
            Some(t) => {
                check::temperature(t)?;
                t
            }
            None => {
                let hint = [a, b].iter().find_map(|ph| match ph {
                    PurePhase::Solid(k) => Some(self.solids[*k].triple_point_estimate().0),
                    _ => None,
                });
                match hint {
                    Some(t) => t,
                    None => {
                        super::saturation_temperature(
                            self.fluid,
                            p,
                            self.component,
                            &super::SaturationOptions::default(),
                        )?
                        .temperature
                    }
                }
            }
        };
        let tol = 1e-12;
        let mut resid = f64::INFINITY;
        let mut last_ok: Option<f64> = None;
        for it in 1..=100 {
            let (pa, pb) = match (self.evaluate(a, t, p)?, self.evaluate(b, t, p)?) {
                (Some(x), Some(y)) => (x, y),
                _ => match last_ok {
                    Some(q) if (q - t).abs() > 1e-14 * q => {
                        t = 0.5 * (q + t);
                        continue;
                    }
                    _ => break,
                },
            };
            last_ok = Some(t);
            let rt = R * t;
            let f = (pa.gibbs - pb.gibbs) / rt;
            resid = f.abs();
            if resid < tol {
                return self.coexistence_from(pa, pb, it);
            }
            // d(Δg)/dT = −Δs.
            let ds = pa.entropy - pb.entropy;
            let step = (f * rt / ds).clamp(-0.2 * t, 0.2 * t);
            t += step;
            if !(t > 0.0) || !t.is_finite() {
                break;
            }
        }
        Err(if resid.is_finite() {
            Error::not_converged(
                "pure-substance coexistence at p",
                vec![("Newton".into(), 100)],
                resid,
                tol,
            )
        } else {
            Error::NoSolution(format!(
                "{a:?} and {b:?} do not coexist at p = {p} Pa within the models' ranges",
                p = num(p)
            ))
        })
    }

    /// A boundary traced along the temperatures `ts` (K): the coexistence of `a` and `b` at
    /// each, each solve started from the previous pressure (first from `p_guess`).
    pub fn trace_along_temperature(
        &self,
        a: PurePhase,
        b: PurePhase,
        ts: &[f64],
        p_guess: Option<f64>,
    ) -> Result<Vec<Coexistence>> {
        let mut out: Vec<Coexistence> = Vec::with_capacity(ts.len());
        let mut guess = p_guess;
        for (i, &t) in ts.iter().enumerate() {
            // Extrapolate from the previous point with its Clapeyron slope: linearly in p for
            // a condensed pair, and for a pair with the vapour in the Clausius–Clapeyron form
            // ln p = ln p0 − (Δh/R)(1/T − 1/T0), with Δh/R = (dp/dT) T0² / p0 (ideal vapour,
            // negligible condensed volume).
            if let Some(prev) = out.last() {
                let (t0, p0) = (prev.temperature, prev.pressure);
                let p_lin = p0 + prev.clapeyron_slope * (t - t0);
                let log = a == PurePhase::Vapor || b == PurePhase::Vapor;
                guess = Some(if log || p_lin <= 0.0 {
                    let dh_r = prev.clapeyron_slope * t0 * t0 / p0;
                    p0 * (dh_r * (1.0 / t0 - 1.0 / t)).exp()
                } else {
                    p_lin
                });
            }
            // A guess from a long extrapolation may miss; the solver's own start is the fallback.
            let c = self
                .coexistence_at_temperature(a, b, t, guess)
                .or_else(|e| match guess {
                    Some(_) if out.last().is_some() => self.coexistence_at_temperature(a, b, t, None),
                    _ => Err(e),
                })
                .map_err(|e| match e {
                    Error::NoSolution(m) => Error::NoSolution(format!("point {i} of the trace: {m}")),
                    e => e,
                })?;
            out.push(c);
        }
        Ok(out)
    }

    /// A boundary traced along the pressures `ps` (Pa), each solve started from the previous
    /// temperature (first from `t_guess`).
    pub fn trace_along_pressure(
        &self,
        a: PurePhase,
        b: PurePhase,
        ps: &[f64],
        t_guess: Option<f64>,
    ) -> Result<Vec<Coexistence>> {
        let mut out: Vec<Coexistence> = Vec::with_capacity(ps.len());
        let mut guess = t_guess;
        for (i, &p) in ps.iter().enumerate() {
            if let Some(prev) = out.last() {
                let (t0, p0) = (prev.temperature, prev.pressure);
                let log = a == PurePhase::Vapor || b == PurePhase::Vapor;
                // The inverse of the extrapolations of `trace_along_temperature`.
                let t_next = if log {
                    let dh_r = prev.clapeyron_slope * t0 * t0 / p0;
                    1.0 / (1.0 / t0 - (p / p0).ln() / dh_r)
                } else {
                    t0 + (p - p0) / prev.clapeyron_slope
                };
                guess = (t_next.is_finite() && t_next > 0.0).then_some(t_next);
            }
            let c = self
                .coexistence_at_pressure(a, b, p, guess)
                .or_else(|e| match guess {
                    Some(_) if out.last().is_some() => self.coexistence_at_pressure(a, b, p, None),
                    _ => Err(e),
                })
                .map_err(|e| match e {
                    Error::NoSolution(m) => Error::NoSolution(format!("point {i} of the trace: {m}")),
                    e => e,
                })?;
            out.push(c);
        }
        Ok(out)
    }

    /// The triple point where solid `solid`, the liquid and the vapour coexist, started from
    /// the solid's triple-point estimate or `t_guess` (K).
    pub fn triple_point(&self, solid: usize, t_guess: Option<f64>) -> Result<TriplePoint> {
        let s = PurePhase::Solid(solid);
        let sm = self
            .solids
            .get(solid)
            .ok_or_else(|| Error::invalid("solid", format!("index {solid} of {}", self.solids.len())))?;
        let mut t = t_guess.unwrap_or(sm.triple_point_estimate().0);
        check::temperature(t)?;
        // The triple point lies where the solid model is valid: iterate inside its range.
        let range = sm.validity();
        t = t.clamp(range.t_min, range.t_max);
        let tol = 1e-13;
        let mut resid = f64::INFINITY;
        let mut p_guess = None;
        for it in 1..=60 {
            // The liquid–vapour boundary at T, then the solid's distance from it.
            let lv = self.coexistence_at_temperature(PurePhase::Liquid, PurePhase::Vapor, t, p_guess)?;
            let p = lv.pressure;
            p_guess = Some(p);
            let ps = self.must(s, t, p)?;
            let pl = lv.states.0;
            let rt = R * t;
            let f = (ps.gibbs - pl.gibbs) / rt;
            resid = f.abs().max(((pl.gibbs - lv.states.1.gibbs) / rt).abs());
            if f.abs() < tol {
                return Ok(TriplePoint {
                    temperature: t,
                    pressure: p,
                    phases: [ps, pl, lv.states.1],
                    residual: resid,
                    iterations: it,
                });
            }
            // d(g_s − g_l)/dT along p_σ(T) = −(s_s − s_l) + (v_s − v_l) dp_σ/dT.
            let df = -(ps.entropy - pl.entropy) + (ps.molar_volume - pl.molar_volume) * lv.clapeyron_slope;
            let step = (-f * rt / df).clamp(-0.05 * t, 0.05 * t);
            let next = (t + step).clamp(range.t_min, range.t_max);
            if next == t && next != t + step {
                return Err(Error::NoSolution(format!(
                    "the triple point lies outside the solid model's range [{}, {}] K",
                    range.t_min, range.t_max
                )));
            }
            t = next;
        }
        Err(Error::not_converged(
            "solid–liquid–vapour triple point",
            vec![("Newton".into(), 60)],
            resid,
            tol,
        ))
    }

    /// Gibbs-energy curves g(T) of every phase at pressure p (Pa) on the temperature grid
    /// `ts` (K, ascending), with their crossings.
    pub fn gibbs_curves_isobaric(&self, p: f64, ts: &[f64]) -> Result<GibbsCurves> {
        check::pressure(p)?;
        self.curves(
            ts,
            |ph, t| self.evaluate(ph, t, p),
            |a, b, t0| self.coexistence_at_pressure(a, b, p, Some(t0)),
        )
    }

    /// Gibbs-energy curves g(p) of every phase at temperature T (K) on the pressure grid `ps`
    /// (Pa, ascending), with their crossings.
    pub fn gibbs_curves_isothermal(&self, t: f64, ps: &[f64]) -> Result<GibbsCurves> {
        check::temperature(t)?;
        self.curves(
            ps,
            |ph, p| self.evaluate(ph, t, p),
            |a, b, p0| self.coexistence_at_temperature(a, b, t, Some(p0)),
        )
    }

    /// From `x_in` (both phases exist) towards `x_out` (one does not), the last point where
    /// both exist, by bisection, with g_a − g_b there.
    fn edge(
        &self,
        eval: &impl Fn(PurePhase, f64) -> Result<Option<PhasePoint>>,
        a: PurePhase,
        b: PurePhase,
        x_in: f64,
        x_out: f64,
    ) -> Result<Option<(f64, f64)>> {
        let (mut xi, mut xo) = (x_in, x_out);
        let mut last = None;
        for _ in 0..60 {
            let xm = 0.5 * (xi + xo);
            match (eval(a, xm)?, eval(b, xm)?) {
                (Some(pa), Some(pb)) => {
                    xi = xm;
                    last = Some((xm, pa.gibbs - pb.gibbs));
                }
                _ => xo = xm,
            }
            if (xo - xi).abs() <= 1e-12 * xi.abs() {
                break;
            }
        }
        Ok(last)
    }

    fn curves(
        &self,
        grid: &[f64],
        eval: impl Fn(PurePhase, f64) -> Result<Option<PhasePoint>>,
        refine: impl Fn(PurePhase, PurePhase, f64) -> Result<Coexistence>,
    ) -> Result<GibbsCurves> {
        if grid.len() < 2 || grid.windows(2).any(|w| !(w[1] > w[0])) {
            return Err(Error::invalid(
                "grid",
                "at least two strictly ascending values are required",
            ));
        }
        let phases = self.phases();
        let mut curves = Vec::with_capacity(phases.len());
        for &ph in &phases {
            let mut g = Vec::with_capacity(grid.len());
            for &x in grid {
                g.push(eval(ph, x)?.map(|p| p.gibbs));
            }
            curves.push((ph, g));
        }
        let mut crossings = Vec::new();
        for i in 0..phases.len() {
            for j in (i + 1)..phases.len() {
                let (ga, gb) = (&curves[i].1, &curves[j].1);
                for k in 0..grid.len() - 1 {
                    let both = |m: usize| match (ga[m], gb[m]) {
                        (Some(a), Some(b)) => Some(a - b),
                        _ => None,
                    };
                    // The interval to test: the grid interval when both phases exist at both
                    // ends, else from the end where both exist to the edge of existence of
                    // the one that ends inside the interval (found by bisection), so a
                    // crossing just inside a model's validity limit is not missed.
                    let (x0, d0, x1, d1) = match (both(k), both(k + 1)) {
                        (Some(d0), Some(d1)) => (grid[k], d0, grid[k + 1], d1),
                        (Some(d0), None) => match self.edge(&eval, phases[i], phases[j], grid[k], grid[k + 1])? {
                            Some((x, d)) => (grid[k], d0, x, d),
                            None => continue,
                        },
                        (None, Some(d1)) => match self.edge(&eval, phases[i], phases[j], grid[k + 1], grid[k])? {
                            Some((x, d)) => (x, d, grid[k + 1], d1),
                            None => continue,
                        },
                        (None, None) => continue,
                    };
                    if d0 == 0.0 || d0.signum() != d1.signum() {
                        let xg = x0 + (x1 - x0) * d0 / (d0 - d1);
                        let c = refine(phases[i], phases[j], xg)?;
                        let gc = c.states.0.gibbs;
                        let (t, p) = (c.temperature, c.pressure);
                        let mut stable = true;
                        for &other in &phases {
                            if other != phases[i]
                                && other != phases[j]
                                && let Some(o) = self.evaluate(other, t, p)?
                                && o.gibbs < gc - 1e-9 * gc.abs()
                            {
                                stable = false;
                            }
                        }
                        crossings.push(Crossing {
                            point: c,
                            gibbs: gc,
                            stable,
                        });
                    }
                }
            }
        }
        Ok(GibbsCurves {
            grid: grid.to_vec(),
            curves,
            crossings,
        })
    }
}
