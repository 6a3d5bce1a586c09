//! Phase envelopes of mixtures: the bubble and dew curves in (T, p) through the critical
//! point, the cricondenbar and cricondentherm, and lines of constant vapour fraction.
//!
//! Method: M. L. Michelsen, "Calculation of phase envelopes and critical points for
//! multicomponent mixtures", Fluid Phase Equilib. 4 (1980) 1–10. The unknowns are
//! X = (ln K_1 … ln K_N, ln T, ln p) and the equations, at fixed vapour fraction β,
//!
//! - g_i = ln K_i + ln φ_i(T, p, y) − ln φ_i(T, p, x) = 0, with x_i = z_i/(1 − β + β K_i),
//!   y_i = K_i x_i;
//! - g_{N+1} = Σ (y_i − x_i) = 0;
//! - g_{N+2} = X_s − S = 0, the specified variable X_s set to the value S.
//!
//! Each point is found by Newton's method with the analytic Jacobian (∂ln φ/∂T, ∂ln φ/∂p and
//! ∂ln φ/∂n from [`ln_phi`](crate::model::ln_phi)'s derivatives). The sensitivities dX/dS = J⁻¹
//! e_{N+2} come from the Jacobian at the converged point; the next specified variable is the one
//! with the largest sensitivity, and the next point is predicted by the cubic (Hermite)
//! polynomial through the last two points and their sensitivities. The step in the specified
//! variable grows by 1.5 after a corrector of at most 3 iterations, shrinks by 0.6 after more
//! than 4, is halved after a failure, and never exceeds [`EnvelopeOptions::max_step`]. Each
//! phase stays on the volume root nearest its volume at the previous point, so a phase keeps
//! its identity through the critical region.
//!
//! The trace starts at the bubble point at [`EnvelopeOptions::start_pressure`] (from
//! [`bubble_temperature`]; if there is none, at the dew point from
//! [`dew_temperature`], and the points are then reported in the same
//! bubble-to-dew order), climbs the bubble branch and, where every ln K_i changes sign, crosses
//! a critical point: the crossing is located by converging four points at ln K_k = ±δ, ±2δ
//! (δ = 2e-3; k the component of largest sensitivity) and interpolating ln T and ln p to
//! ln K_k = 0 by the cubic through them; the trace then continues with the phase labels swapped
//! (the bubble line becomes the dew line). It ends at the start pressure on the other branch.
//!
//! The cricondenbar and cricondentherm are the zeros of d ln p/dS and d ln T/dS between the
//! points where they change sign, found by Brent's method on the specified variable with every
//! trial point re-converged; they are inserted in the trace and returned separately. Quality
//! lines (0 < β < 1) start at the start pressure from a PT flash with that vapour fraction and
//! end at the critical point.
//!
//! Limits: the trace stops with [`Error::NoSolution`] if the pressure exceeds 1e9 Pa or the
//! temperature leaves [1, 1e4] K (an envelope that does not close), and with
//! [`Error::NotConverged`] if it needs more than [`EnvelopeOptions::max_points`] points or the
//! step falls below 1e-9 without a converged point. The traced curve is the solution of the
//! two-phase equations: where a third phase would appear (a liquid–liquid split at low
//! temperature) part of it is metastable; no stability test is made along it.

use super::critical::CriticalPoint;
use super::saturation::{SaturationOptions, bubble_temperature, dew_temperature};
use super::{FlashContext, FlashOptions};
use crate::error::{Error, Result, check};
use crate::model::fugacity::evaluate_at_volume;
use crate::model::{FluidModel, FugacityWork, LnPhi, Need};
use crate::numerics::linalg::lu_solve;
use crate::numerics::roots::brent;
use serde::{Deserialize, Serialize};

/// Highest pressure a trace may reach, Pa.
const P_MAX: f64 = 1e9;
/// Temperature range of a trace, K.
const T_RANGE: (f64, f64) = (1.0, 1e4);
/// Half-spacing of the points that locate a critical point, in ln K.
const CRIT_DELTA: f64 = 1e-2;
/// Most Newton iterations of one corrector.
const MAX_CORRECTOR: usize = 12;
/// Correctors that need more iterations than this are rejected and the step is cut.
const MAX_ACCEPTED: usize = 7;

/// Options of [`phase_envelope`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct EnvelopeOptions {
    /// Pressure at which the trace starts and ends, Pa (default 1e5; allowed (0, 1e8]).
    pub start_pressure: f64,
    /// Most points on one trace (default 1000, allowed 10..=100000); exceeding it is an
    /// error, not a truncated answer.
    pub max_points: usize,
    /// Vapour fractions of extra quality lines, each in (0, 1) (default empty).
    pub quality_lines: Vec<f64>,
    /// Largest step in the specified variable (ln units: ln K, ln T or ln p; default 0.3,
    /// allowed (0, 2]).
    pub max_step: f64,
    /// Convergence tolerance of the Newton corrector on max |g_i| (dimensionless; default
    /// 1e-10, allowed [1e-14, 1e-4]).
    pub tolerance: f64,
}

impl Default for EnvelopeOptions {
    fn default() -> Self {
        EnvelopeOptions {
            start_pressure: 1e5,
            max_points: 1000,
            quality_lines: Vec::new(),
            max_step: 0.3,
            tolerance: 1e-10,
        }
    }
}

impl EnvelopeOptions {
    fn validate(&self) -> Result<()> {
        if !(self.start_pressure.is_finite() && self.start_pressure > 0.0 && self.start_pressure <= 1e8) {
            return Err(Error::invalid(
                "start_pressure",
                format!("{} Pa; a value in (0, 1e8] Pa is required", self.start_pressure),
            ));
        }
        if !(10..=100_000).contains(&self.max_points) {
            return Err(Error::invalid(
                "max_points",
                format!("{}; a value in 10..=100000 is required", self.max_points),
            ));
        }
        for &b in &self.quality_lines {
            if !(b > 0.0 && b < 1.0) {
                return Err(Error::invalid(
                    "quality_lines",
                    format!("vapour fraction {b}; each value must lie in the open interval (0, 1)"),
                ));
            }
        }
        if !(self.max_step > 0.0 && self.max_step <= 2.0) {
            return Err(Error::invalid(
                "max_step",
                format!("{}; a value in (0, 2] is required", self.max_step),
            ));
        }
        if !(self.tolerance >= 1e-14 && self.tolerance <= 1e-4) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in [1e-14, 1e-4] is required", self.tolerance),
            ));
        }
        Ok(())
    }
}

/// One point of a phase envelope or quality line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnvelopePoint {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Vapour fraction of the line: 0 on the bubble branch, 1 on the dew branch, else a
    /// quality line.
    pub vapor_fraction: f64,
    /// Composition of the incipient phase (mole fractions): the vapour on the bubble branch,
    /// the liquid on the dew branch; on a quality line the vapour. At a critical point that
    /// ends a quality line, the feed.
    pub incipient: Vec<f64>,
    /// ln K_i = ln(y_i/x_i), vapour over liquid (0 for components absent from the feed).
    pub ln_k: Vec<f64>,
}

/// A phase envelope: the saturation boundary of a feed, its critical points, cricondenbar,
/// cricondentherm and quality lines.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PhaseEnvelope {
    /// The saturation boundary in trace order (bubble branch, through the critical point,
    /// dew branch), the cricondenbar and cricondentherm included.
    pub points: Vec<EnvelopePoint>,
    /// Points where the trace crossed a critical point (interpolated to ln K = 0).
    pub critical: Vec<CriticalPoint>,
    /// The point of highest pressure on the boundary (None if the trace has no interior
    /// maximum of pressure).
    pub cricondenbar: Option<EnvelopePoint>,
    /// The point of highest temperature on the boundary (None if the trace has no interior
    /// maximum of temperature).
    pub cricondentherm: Option<EnvelopePoint>,
    /// Quality lines, one per requested vapour fraction, each a sequence of points from the
    /// start pressure to the critical point.
    pub quality_lines: Vec<Vec<EnvelopePoint>>,
}

/// Traces the phase envelope of the feed `feed` (mol; any positive total) with Michelsen's
/// (1980) method (see the module documentation).
///
/// Errors: a feed of the wrong length, non-finite or without a positive amount, or options out
/// of range: [`Error::InvalidInput`]; a feed with fewer than two components present (use
/// [`saturation_pressure`](super::saturation_pressure) for a pure component), a feed with no
/// bubble or dew point at the start pressure, or an envelope that does not close within
/// p ≤ 1e9 Pa: [`Error::NoSolution`]; a trace that does not converge or needs more than
/// `max_points` points: [`Error::NotConverged`].
///
/// ```
/// use tieline::prelude::*;
/// use tieline::equilibrium::{EnvelopeOptions, phase_envelope};
/// let bank = DataBank::embedded();
/// let model = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "n-butane"])?)?;
/// let env = phase_envelope(&model, &[0.7, 0.3], &EnvelopeOptions::default())?;
/// assert_eq!(env.critical.len(), 1);
/// let pmax = env.cricondenbar.as_ref().unwrap().pressure;
/// assert!(env.points.iter().all(|p| p.pressure <= pmax * (1.0 + 1e-9)));
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn phase_envelope<M: FluidModel + ?Sized>(
    model: &M,
    feed: &[f64],
    opts: &EnvelopeOptions,
) -> Result<PhaseEnvelope> {
    let nc = model.num_components();
    let total = check::amounts(feed, nc)?;
    opts.validate()?;
    let z: Vec<f64> = feed.iter().map(|x| x / total).collect();
    let present = z.iter().filter(|&&x| x > 0.0).count();
    if present < 2 {
        return Err(Error::NoSolution(
            "a phase envelope needs at least two components present in the feed; for a pure component use the \
             saturation curve (saturation_pressure / saturation_temperature)"
                .into(),
        ));
    }
    let p0 = opts.start_pressure;
    let sat = SaturationOptions::default();
    // Start on the bubble side if it exists at p0, else on the dew side.
    let (beta, bd) = match bubble_temperature(model, p0, &z, &sat) {
        Ok(b) => (0.0, b),
        Err(eb) if matches!(eb.kind(), crate::ErrorKind::NoSolution | crate::ErrorKind::NotConverged) => {
            match dew_temperature(model, p0, &z, &sat) {
                Ok(d) => (1.0, d),
                Err(ed) if matches!(ed.kind(), crate::ErrorKind::NoSolution | crate::ErrorKind::NotConverged) => {
                    return Err(Error::NoSolution(format!(
                        "the feed has no bubble or dew point at the start pressure {p0} Pa (is it above the \
                         cricondenbar?): bubble point: {eb}; dew point: {ed}"
                    )));
                }
                Err(ed) => return Err(ed),
            }
        }
        Err(eb) => return Err(eb),
    };
    let mut tr = Tracer::new(model, z.clone(), beta, opts);
    let mut x0 = vec![0.0; nc + 2];
    for i in 0..nc {
        if tr.active[i] {
            x0[i] = bd.k_values[i].ln();
        }
    }
    x0[nc] = bd.temperature.ln();
    x0[nc + 1] = p0.ln();
    let (vx, vy) = if beta == 0.0 {
        (bd.feed_molar_volume, bd.incipient_molar_volume)
    } else {
        (bd.incipient_molar_volume, bd.feed_molar_volume)
    };
    let start = tr.start_node(x0, vx, vy)?;
    let mut line = tr.trace(start, false)?;
    let (bar, therm) = tr.extrema(&mut line.nodes, &line.crossings)?;
    let mut points: Vec<EnvelopePoint> = line.nodes.iter().map(|n| tr.point(n)).collect();
    let cricondenbar = bar.map(|n| tr.point(&n));
    let cricondentherm = therm.map(|n| tr.point(&n));
    if beta == 1.0 {
        points.reverse();
    }

    // Quality lines from the start pressure, between the bubble and dew temperatures there.
    let mut quality_lines = Vec::with_capacity(opts.quality_lines.len());
    if !opts.quality_lines.is_empty() {
        let (first, last) = (&line.nodes[0], &line.nodes[line.nodes.len() - 1]);
        let (t_first, t_last) = (first.x[nc].exp(), last.x[nc].exp());
        let closed = (last.x[nc + 1] - p0.ln()).abs() < 1e-9 && line.critical.len() == 1;
        if !closed {
            return Err(Error::NoSolution(
                "quality lines need an envelope that closes at the start pressure through one critical point".into(),
            ));
        }
        let (tb, td) = if beta == 0.0 {
            (t_first, t_last)
        } else {
            (t_last, t_first)
        };
        for &b in &opts.quality_lines {
            let mut q = Tracer::new(model, z.clone(), b, opts);
            let start = q.quality_start(p0, tb, td)?;
            let ql = q.trace(start, true)?;
            quality_lines.push(ql.nodes.iter().map(|n| q.point(n)).collect());
        }
    }
    Ok(PhaseEnvelope {
        points,
        critical: line.critical,
        cricondenbar,
        cricondentherm,
        quality_lines,
    })
}

/// A converged point of a trace.
#[derive(Debug, Clone)]
struct Node {
    /// (ln K, ln T, ln p).
    x: Vec<f64>,
    /// dX/dS scaled to unit max-norm, oriented along the trace.
    t: Vec<f64>,
    /// Whether the trace has crossed a critical point (labels swapped) at this point.
    swapped: bool,
    /// Molar volumes of the x and y phases, m3/mol.
    vx: f64,
    vy: f64,
    /// Newton iterations of the corrector.
    iters: usize,
    /// Whether this node is an exact critical point (end of a quality line).
    critical: bool,
}

struct Line {
    nodes: Vec<Node>,
    critical: Vec<CriticalPoint>,
    crossings: Vec<Crossing>,
}

/// The points that located a critical point: ln K_k at each and the whole node.
#[derive(Debug, Clone)]
struct Crossing {
    k: usize,
    s: Vec<f64>,
    nodes: Vec<Node>,
}

impl Crossing {
    /// The interpolating polynomial through the points and its derivative, component `i`, at s.
    fn eval(&self, i: usize, at: f64, f: impl Fn(&Node) -> f64) -> (f64, f64) {
        let _ = i;
        let np = self.s.len();
        let (mut v, mut d) = (0.0, 0.0);
        for a in 0..np {
            let mut w = 1.0;
            let mut dw = 0.0;
            for b in 0..np {
                if a == b {
                    continue;
                }
                let den = self.s[a] - self.s[b];
                // Product rule on Π (at − s_b)/(s_a − s_b).
                dw = dw * (at - self.s[b]) / den + w / den;
                w *= (at - self.s[b]) / den;
            }
            let fa = f(&self.nodes[a]);
            v += w * fa;
            d += dw * fa;
        }
        (v, d)
    }

    /// A node interpolated at ln K_k = at.
    fn node(&self, at: f64) -> Node {
        let m = self.nodes[0].x.len();
        let mut x = vec![0.0; m];
        let mut t = vec![0.0; m];
        for i in 0..m {
            let (v, d) = self.eval(i, at, |n| n.x[i]);
            x[i] = v;
            t[i] = d;
        }
        let big = t.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        t.iter_mut().for_each(|v| *v /= big);
        // Orient along the trace (from the first point towards the last).
        let dir = (self.s[self.s.len() - 1] - self.s[0]).signum();
        if t[self.k] * dir < 0.0 {
            t.iter_mut().for_each(|v| *v = -*v);
        }
        let before = at * self.s[0] > 0.0;
        let (first, last) = (&self.nodes[0], &self.nodes[self.nodes.len() - 1]);
        Node {
            x,
            t,
            swapped: if before { first.swapped } else { last.swapped },
            vx: self.eval(0, at, |n| n.vx.ln()).0.exp(),
            vy: self.eval(0, at, |n| n.vy.ln()).0.exp(),
            iters: 0,
            critical: false,
        }
    }
}

struct Tracer<'a, M: ?Sized> {
    model: &'a M,
    z: Vec<f64>,
    active: Vec<bool>,
    nc: usize,
    beta: f64,
    opts: &'a EnvelopeOptions,
    w: FugacityWork,
    py: LnPhi,
    px: LnPhi,
    xs: Vec<f64>,
    ys: Vec<f64>,
    g: Vec<f64>,
    jac: Vec<f64>,
    lu: Vec<f64>,
    rhs: Vec<f64>,
    /// Newton steps taken after the tolerance is met (for the points next to a critical
    /// point, whose ln T and ln p are ill-conditioned).
    polish: usize,
}

impl<'a, M: FluidModel + ?Sized> Tracer<'a, M> {
    fn new(model: &'a M, z: Vec<f64>, beta: f64, opts: &'a EnvelopeOptions) -> Self {
        let nc = z.len();
        let m = nc + 2;
        Tracer {
            model,
            active: z.iter().map(|&v| v > 0.0).collect(),
            z,
            nc,
            beta,
            opts,
            w: FugacityWork::new(nc),
            py: LnPhi::new(nc),
            px: LnPhi::new(nc),
            xs: vec![0.0; nc],
            ys: vec![0.0; nc],
            g: vec![0.0; m],
            jac: vec![0.0; m * m],
            lu: vec![0.0; m * m],
            rhs: vec![0.0; m],
            polish: 0,
        }
    }

    /// Evaluates one phase of amounts `n` on the volume root nearest `hint` (m3/mol).
    fn phase(model: &M, t: f64, p: f64, n: &[f64], hint: f64, w: &mut FugacityWork, out: &mut LnPhi) -> Result<()> {
        let ntot: f64 = n.iter().sum();
        let roots = model.volume_roots(t, p, n, &mut w.derivs)?;
        let mut v = roots.v[0];
        if roots.count == 2 {
            let d = |v: f64| (v / ntot / hint).ln().abs();
            if d(roots.v[1]) < d(roots.v[0]) {
                v = roots.v[1];
            }
        }
        evaluate_at_volume(model, t, p, v, n, ntot, Need::ALL, w, out)
    }

    /// Residuals and Jacobian at X with X[spec] = s; returns max |g|.
    fn evaluate(&mut self, x: &[f64], spec: usize, s: f64, vx: f64, vy: f64) -> Result<f64> {
        let nc = self.nc;
        let m = nc + 2;
        let (t, p) = (x[nc].exp(), x[nc + 1].exp());
        if !(t > T_RANGE.0 && t < T_RANGE.1 && p > 0.0 && p < P_MAX) {
            return Err(Error::NoSolution(format!(
                "the trace left the range T in ({}, {}) K, p < {P_MAX} Pa (T = {t} K, p = {p} Pa)",
                T_RANGE.0, T_RANGE.1
            )));
        }
        let b = self.beta;
        let (mut sx, mut sy) = (0.0, 0.0);
        for i in 0..nc {
            if self.active[i] {
                let k = x[i].exp();
                self.xs[i] = self.z[i] / (1.0 - b + b * k);
                self.ys[i] = k * self.xs[i];
            } else {
                self.xs[i] = 0.0;
                self.ys[i] = 0.0;
            }
            sx += self.xs[i];
            sy += self.ys[i];
        }
        if !(sx.is_finite() && sy.is_finite() && sx > 0.0 && sy > 0.0) {
            return Err(Error::invalid("K-values", "non-finite phase amounts"));
        }
        Self::phase(self.model, t, p, &self.ys, vy, &mut self.w, &mut self.py)?;
        Self::phase(self.model, t, p, &self.xs, vx, &mut self.w, &mut self.px)?;
        let mut r = 0.0f64;
        for i in 0..nc {
            self.g[i] = if self.active[i] {
                x[i] + self.py.ln_phi[i] - self.px.ln_phi[i]
            } else {
                x[i]
            };
            r = r.max(self.g[i].abs());
        }
        self.g[nc] = sy - sx;
        self.g[nc + 1] = x[spec] - s;
        r = r.max(self.g[nc].abs()).max(self.g[nc + 1].abs());
        // Jacobian.
        self.jac.iter_mut().for_each(|v| *v = 0.0);
        for j in 0..nc {
            if !self.active[j] {
                continue;
            }
            let k = x[j].exp();
            let d = 1.0 - b + b * k;
            let dy = self.ys[j] * (1.0 - b) / d; // ∂y_j/∂ln K_j
            let dx = -self.xs[j] * b * k / d; // ∂x_j/∂ln K_j
            for i in 0..nc {
                if self.active[i] {
                    self.jac[i * m + j] = self.py.dn[i * nc + j] * dy - self.px.dn[i * nc + j] * dx;
                }
            }
            self.jac[nc * m + j] = dy - dx;
        }
        for i in 0..nc {
            self.jac[i * m + i] += 1.0;
            if self.active[i] {
                self.jac[i * m + nc] = t * (self.py.dt[i] - self.px.dt[i]);
                self.jac[i * m + nc + 1] = p * (self.py.dp[i] - self.px.dp[i]);
            }
        }
        self.jac[(nc + 1) * m + spec] = 1.0;
        if !r.is_finite() {
            return Err(Error::invalid("state", "non-finite envelope residual"));
        }
        Ok(r)
    }

    /// Newton corrector at X[spec] = s from the predicted `x`. On success returns the
    /// iterations, leaves the Jacobian at the solution in `jac` and the phase volumes in the
    /// returned pair.
    fn correct(&mut self, x: &mut [f64], spec: usize, s: f64, vx: f64, vy: f64, tol: f64) -> Option<(usize, f64, f64)> {
        let nc = self.nc;
        let m = nc + 2;
        x[spec] = s;
        let mut prev = f64::INFINITY;
        let mut extra = 0;
        for it in 0..MAX_CORRECTOR + self.polish {
            let r = self.evaluate(x, spec, s, vx, vy).ok()?;
            if r < tol {
                if extra >= self.polish {
                    let nx: f64 = self.xs.iter().sum();
                    let ny: f64 = self.ys.iter().sum();
                    return Some((it, self.px.v / nx, self.py.v / ny));
                }
                extra += 1;
            } else if it > 2 && r > prev {
                return None;
            }
            prev = r;
            // Trivial solution: every ln K ~ 0 while the specification is not a ln K.
            if spec >= nc && (0..nc).filter(|&i| self.active[i]).all(|i| x[i].abs() < 1e-7) {
                return None;
            }
            self.lu.copy_from_slice(&self.jac);
            for i in 0..m {
                self.rhs[i] = -self.g[i];
            }
            if !lu_solve(&mut self.lu, m, &mut self.rhs) {
                return None;
            }
            let big_tp = self.rhs[nc].abs().max(self.rhs[nc + 1].abs());
            let big_k = self.rhs[..nc].iter().fold(0.0f64, |a, v| a.max(v.abs()));
            let scale = (0.2 / big_tp).min(2.0 / big_k).min(1.0);
            for i in 0..m {
                x[i] += scale * self.rhs[i];
            }
        }
        None
    }

    /// Tangent dX/dS at the point whose Jacobian is in `jac`, scaled to unit max-norm.
    fn tangent(&mut self) -> Option<Vec<f64>> {
        let m = self.nc + 2;
        self.lu.copy_from_slice(&self.jac);
        self.rhs.iter_mut().for_each(|v| *v = 0.0);
        self.rhs[m - 1] = 1.0;
        if !lu_solve(&mut self.lu, m, &mut self.rhs) {
            return None;
        }
        let big = self.rhs.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        if !(big > 0.0 && big.is_finite()) {
            return None;
        }
        Some(self.rhs.iter().map(|v| v / big).collect())
    }

    /// Converges a point at X[spec] = s from `pred`, with its tangent oriented so that
    /// t[spec] has the sign `dir`.
    fn node_at(
        &mut self,
        mut pred: Vec<f64>,
        spec: usize,
        s: f64,
        from: &Node,
        dir: f64,
        swapped: bool,
        tol: f64,
    ) -> Option<Node> {
        let (iters, vx, vy) = self.correct(&mut pred, spec, s, from.vx, from.vy, tol)?;
        let mut t = self.tangent()?;
        if t[spec] * dir < 0.0 {
            t.iter_mut().for_each(|v| *v = -*v);
        }
        Some(Node {
            x: pred,
            t,
            swapped,
            vx,
            vy,
            iters,
            critical: false,
        })
    }

    /// The first point of a trace: re-converged at ln p = ln p0, oriented towards rising p.
    fn start_node(&mut self, x0: Vec<f64>, vx: f64, vy: f64) -> Result<Node> {
        let nc = self.nc;
        let seed = Node {
            x: x0.clone(),
            t: vec![0.0; nc + 2],
            swapped: false,
            vx,
            vy,
            iters: 0,
            critical: false,
        };
        let s = x0[nc + 1];
        self.node_at(x0, nc + 1, s, &seed, 1.0, false, self.opts.tolerance)
            .ok_or_else(|| {
                Error::not_converged(
                    "phase envelope (first point)",
                    vec![("Newton".into(), MAX_CORRECTOR)],
                    self.g.iter().fold(0.0f64, |a, v| a.max(v.abs())),
                    self.opts.tolerance,
                )
            })
    }

    /// The first point of a quality line at p0: the temperature where a PT flash gives the
    /// line's vapour fraction (Brent's method between the bubble and dew temperatures),
    /// re-converged on the envelope equations.
    fn quality_start(&mut self, p0: f64, tb: f64, td: f64) -> Result<Node> {
        let nc = self.nc;
        let beta = self.beta;
        let fopts = FlashOptions {
            certificate: false,
            ..Default::default()
        };
        let mut ctx = FlashContext::new(nc);
        let z = self.z.clone();
        let model = self.model;
        let mut f = |t: f64| -> f64 {
            match ctx.flash(model, t, p0, &z, &fopts) {
                Ok(r) => r.vapor_fraction() - beta,
                Err(_) => f64::NAN,
            }
        };
        let (lo, hi) = (tb.min(td), tb.max(td));
        let (flo, fhi) = (f(lo), f(hi));
        let t = brent(&mut f, lo, flo, hi, fhi, 1e-9, 200).ok_or_else(|| {
            Error::NoSolution(format!(
                "no temperature between {lo} K and {hi} K at {p0} Pa gives the vapour fraction {beta} by a PT flash"
            ))
        })?;
        let r = ctx.flash(model, t, p0, &z, &fopts)?;
        if r.phases.len() != 2 {
            return Err(Error::NoSolution(format!(
                "the feed is not two-phase at T = {t} K, p = {p0} Pa for the quality line {beta}"
            )));
        }
        let (y, xl) = (&r.phases[0], &r.phases[1]);
        let mut x0 = vec![0.0; nc + 2];
        for i in 0..nc {
            if self.active[i] {
                x0[i] = (y.composition[i] / xl.composition[i]).ln();
            }
        }
        x0[nc] = t.ln();
        x0[nc + 1] = p0.ln();
        self.start_node(x0, xl.molar_volume, y.molar_volume)
    }

    /// Predicts X at X[k] = s from the current node `c` and the one before it, `p`.
    fn predict(p: Option<&Node>, c: &Node, k: usize, s: f64) -> Vec<f64> {
        let m = c.x.len();
        let d1: Vec<f64> = c.t.iter().map(|v| v / c.t[k]).collect();
        let mut out = vec![0.0; m];
        let hermite = p.filter(|p| p.t[k].abs() > 0.2 && (p.x[k] - c.x[k]).abs() > 1e-12 && !p.critical);
        if let Some(p) = hermite {
            let (s0, s1) = (p.x[k], c.x[k]);
            let l = s1 - s0;
            let tau = (s - s0) / l;
            let (t2, t3) = (tau * tau, tau * tau * tau);
            let h00 = 2.0 * t3 - 3.0 * t2 + 1.0;
            let h10 = t3 - 2.0 * t2 + tau;
            let h01 = -2.0 * t3 + 3.0 * t2;
            let h11 = t3 - t2;
            for i in 0..m {
                let d0 = p.t[i] / p.t[k];
                out[i] = h00 * p.x[i] + h10 * l * d0 + h01 * c.x[i] + h11 * l * d1[i];
            }
        } else {
            for i in 0..m {
                out[i] = c.x[i] + (s - c.x[k]) * d1[i];
            }
        }
        out[k] = s;
        out
    }

    /// Whether every ln K of the present components has the opposite sign in `b` from `a`.
    fn crosses(&self, a: &[f64], b: &[f64]) -> bool {
        (0..self.nc).filter(|&i| self.active[i]).all(|i| a[i] * b[i] < 0.0)
    }

    fn too_many(&self, n: usize) -> Error {
        Error::not_converged(
            format!(
                "phase envelope: the trace needs more than max_points = {} points (raise max_points or max_step)",
                self.opts.max_points
            ),
            vec![("points".into(), n)],
            f64::NAN,
            self.opts.tolerance,
        )
    }

    /// Traces a line from `start` until the pressure falls back to the start pressure (or,
    /// with `stop_at_critical`, until the critical point).
    fn trace(&mut self, start: Node, stop_at_critical: bool) -> Result<Line> {
        let nc = self.nc;
        let lnp_stop = start.x[nc + 1];
        let max_step = self.opts.max_step;
        let tol = self.opts.tolerance;
        let mut nodes = vec![start];
        let mut critical = Vec::new();
        let mut crossings = Vec::new();
        let mut ds = (0.05f64).min(max_step);
        loop {
            if nodes.len() > self.opts.max_points {
                return Err(self.too_many(nodes.len()));
            }
            if ds < 1e-9 {
                let c = nodes.last().unwrap();
                return Err(Error::not_converged(
                    format!(
                        "phase envelope: no converged point beyond T = {} K, p = {} Pa",
                        c.x[nc].exp(),
                        c.x[nc + 1].exp()
                    ),
                    vec![("points".into(), nodes.len())],
                    self.g.iter().fold(0.0f64, |a, v| a.max(v.abs())),
                    tol,
                ));
            }
            let nn = nodes.len();
            let c = &nodes[nn - 1];
            let prev = if nn > 1 { Some(&nodes[nn - 2]) } else { None };
            let k = (0..nc + 2)
                .filter(|&i| i >= nc || self.active[i])
                .max_by(|&a, &b| c.t[a].abs().total_cmp(&c.t[b].abs()))
                .unwrap();
            let dir = c.t[k].signum();
            let s = c.x[k] + dir * ds;
            let pred = Self::predict(prev, c, k, s);
            // End of the trace: the pressure falls below the start pressure.
            if pred[nc + 1] < lnp_stop && c.t[nc + 1] < 0.0 && nn > 2 {
                let pred = Self::predict(prev, c, nc + 1, lnp_stop);
                let (c, swapped) = (c.clone(), c.swapped);
                match self.node_at(pred, nc + 1, lnp_stop, &c, -1.0, swapped, tol) {
                    Some(n) if !self.crosses(&c.x, &n.x) => {
                        nodes.push(n);
                        break;
                    }
                    _ => {
                        ds *= 0.5;
                        continue;
                    }
                }
            }
            if self.crosses(&c.x, &pred) {
                let c = c.clone();
                let prev = prev.cloned();
                let done = self.cross_critical(&mut nodes, prev, c, &mut critical, &mut crossings, stop_at_critical)?;
                ds = (0.02f64).min(max_step);
                if done {
                    break;
                }
                continue;
            }
            let (c_owned, swapped) = (c.clone(), c.swapped);
            match self.node_at(pred, k, s, &c_owned, dir, swapped, tol) {
                Some(n) if n.iters <= MAX_ACCEPTED => {
                    if self.crosses(&c_owned.x, &n.x) {
                        // The corrector crossed the critical point: approach it explicitly.
                        let prev = prev.cloned();
                        let done = self.cross_critical(
                            &mut nodes,
                            prev,
                            c_owned,
                            &mut critical,
                            &mut crossings,
                            stop_at_critical,
                        )?;
                        ds = (0.02f64).min(max_step);
                        if done {
                            break;
                        }
                        continue;
                    }
                    if n.iters <= 3 {
                        ds = (ds * 1.5).min(max_step);
                    } else if n.iters > 4 {
                        ds *= 0.6;
                    }
                    nodes.push(n);
                }
                _ => ds *= 0.5,
            }
        }
        Ok(Line {
            nodes,
            critical,
            crossings,
        })
    }

    /// Crosses (or, with `stop`, ends at) a critical point ahead of node `c`: converges points
    /// at ln K_k = ±2δ, ±δ, interpolates ln T, ln p and the feed-phase ln v to ln K_k = 0 by
    /// the cubic through them, and continues with the labels swapped. Returns whether the line
    /// ends here.
    fn cross_critical(
        &mut self,
        nodes: &mut Vec<Node>,
        prev: Option<Node>,
        c: Node,
        critical: &mut Vec<CriticalPoint>,
        crossings: &mut Vec<Crossing>,
        stop: bool,
    ) -> Result<bool> {
        let nc = self.nc;
        let k = (0..nc)
            .filter(|&i| self.active[i])
            .max_by(|&a, &b| c.t[a].abs().total_cmp(&c.t[b].abs()))
            .unwrap();
        let sgn = c.x[k].signum();
        let tol = self.opts.tolerance.min(1e-12);
        // Spacing: CRIT_DELTA, or less if the last point is already that close.
        let d = CRIT_DELTA.min(c.x[k].abs() / 3.5);
        let targets = [3.0 * d, 2.0 * d, d, -d, -2.0 * d, -3.0 * d];
        let mut prev = prev;
        let sw0 = c.swapped;
        let mut cur = c;
        let mut iterations = 0;
        let mut used = Vec::with_capacity(targets.len());
        for &tg in &targets {
            let target = tg * sgn;
            // Approach the target, halving the remaining distance while the corrector fails.
            let mut s = target;
            let mut tries = 0;
            loop {
                if nodes.len() > self.opts.max_points {
                    return Err(self.too_many(nodes.len()));
                }
                let pred = Self::predict(prev.as_ref(), &cur, k, s);
                let sw = if s * sgn > 0.0 { sw0 } else { !sw0 };
                self.polish = 2;
                let attempt = self.node_at(pred, k, s, &cur, -sgn, sw, tol);
                self.polish = 0;
                match attempt {
                    Some(n) => {
                        iterations += n.iters;
                        prev = Some(cur);
                        cur = n.clone();
                        nodes.push(n);
                        if s == target {
                            used.push(nodes.len() - 1);
                            break;
                        }
                        s = target;
                    }
                    None => {
                        tries += 1;
                        if tries > 40 || s * sgn < 0.0 {
                            return Err(Error::not_converged(
                                format!(
                                    "phase envelope: no converged point at ln K_{k} = {s} next to the critical point near \
                                     T = {} K, p = {} Pa",
                                    cur.x[nc].exp(),
                                    cur.x[nc + 1].exp()
                                ),
                                vec![("critical approach".into(), tries)],
                                self.g.iter().fold(0.0f64, |a, v| a.max(v.abs())),
                                tol,
                            ));
                        }
                        s = 0.5 * (cur.x[k] + s);
                    }
                }
            }
        }
        // Interpolate the six points to ln K_k = 0 by the quintic through them.
        let near: Vec<&Node> = used.iter().map(|&i| &nodes[i]).collect();
        let sv: Vec<f64> = near.iter().map(|n| n.x[k]).collect();
        let np = sv.len();
        let lag = |f: &dyn Fn(&Node) -> f64| -> f64 {
            let mut acc = 0.0;
            for a in 0..np {
                let mut wgt = 1.0;
                for b in 0..np {
                    if a != b {
                        wgt *= -sv[b] / (sv[a] - sv[b]);
                    }
                }
                acc += wgt * f(near[a]);
            }
            acc
        };
        let lnt = lag(&|n: &Node| n.x[nc]);
        let lnp = lag(&|n: &Node| n.x[nc + 1]);
        let feed_is_x = self.beta < 0.5;
        let lnv = lag(&|n: &Node| if feed_is_x { n.vx.ln() } else { n.vy.ln() });
        let cp = CriticalPoint {
            temperature: lnt.exp(),
            pressure: lnp.exp(),
            molar_volume: lnv.exp(),
            iterations,
        };
        critical.push(cp);
        crossings.push(Crossing {
            k,
            s: sv.clone(),
            nodes: near.iter().map(|&n| n.clone()).collect(),
        });
        if stop {
            // Keep the points before the critical point and end there.
            while nodes.len() > 1 && nodes[nodes.len() - 1].x[k] * sgn < 0.0 {
                nodes.pop();
            }
            let mut x = vec![0.0; nc + 2];
            x[nc] = lnt;
            x[nc + 1] = lnp;
            let last = nodes[nodes.len() - 1].clone();
            nodes.push(Node {
                x,
                t: last.t.clone(),
                swapped: last.swapped,
                vx: lnv.exp(),
                vy: lnv.exp(),
                iters: 0,
                critical: true,
            });
            return Ok(true);
        }
        Ok(false)
    }

    /// Locates the cricondenbar and cricondentherm on a traced line and inserts them.
    fn extrema(&mut self, nodes: &mut Vec<Node>, crossings: &[Crossing]) -> Result<(Option<Node>, Option<Node>)> {
        let nc = self.nc;
        // (insert position, fraction of the way from the point before, node)
        let mut best: [Option<(usize, f64, Node)>; 2] = [None, None];
        for (slot, var) in [(0usize, nc + 1), (1usize, nc)] {
            for i in 0..nodes.len().saturating_sub(1) {
                let (a, b) = (&nodes[i], &nodes[i + 1]);
                if !(a.t[var] > 0.0 && b.t[var] <= 0.0) || a.critical || b.critical {
                    continue;
                }
                let n = if a.swapped != b.swapped {
                    // Across a critical point the ln K pass through 0 (the trivial solution,
                    // where the corrector cannot work): the extremum of the polynomial through
                    // the points that located the critical point.
                    match crossings.iter().find(|c| c.nodes.iter().any(|n| n.x == a.x)) {
                        Some(c) => Self::extremum_interpolated(c, a, b, var)?,
                        None => continue,
                    }
                } else {
                    let u = (0..nc + 2)
                        .filter(|&j| j != var && (j >= nc || self.active[j]))
                        .max_by(|&p, &q| (a.t[p] + b.t[p]).abs().total_cmp(&(a.t[q] + b.t[q]).abs()))
                        .unwrap();
                    if a.t[u] * b.t[u] <= 0.0 {
                        continue;
                    }
                    self.extremum(a.clone(), b.clone(), var, u)?
                };
                let better = match &best[slot] {
                    Some((_, _, m)) => n.x[var] > m.x[var],
                    None => true,
                };
                if better {
                    let j = (0..nc + 2)
                        .max_by(|&p, &q| (b.x[p] - a.x[p]).abs().total_cmp(&(b.x[q] - a.x[q]).abs()))
                        .unwrap();
                    let frac = (n.x[j] - a.x[j]) / (b.x[j] - a.x[j]);
                    best[slot] = Some((i + 1, frac, n));
                }
            }
        }
        // Insert from the back so earlier positions stay valid; two extrema between the same
        // two points go in the order of their position along the segment.
        let mut found: Vec<&(usize, f64, Node)> = best.iter().flatten().collect();
        found.sort_by(|a, b| b.0.cmp(&a.0).then(b.1.total_cmp(&a.1)));
        let inserts: Vec<(usize, Node)> = found.into_iter().map(|(p, _, n)| (*p, n.clone())).collect();
        for (pos, n) in inserts {
            nodes.insert(pos, n);
        }
        let bar = best[0].take().map(|(_, _, n)| n);
        let therm = best[1].take().map(|(_, _, n)| n);
        Ok((bar, therm))
    }

    /// The zero of dX_var/dS between nodes a and b next to a critical point, on the
    /// interpolating polynomial of the crossing `c` (Brent's method on its derivative).
    fn extremum_interpolated(c: &Crossing, a: &Node, b: &Node, var: usize) -> Result<Node> {
        let f = |s: f64| c.eval(var, s, |n| n.x[var]).1;
        let (sa, sb) = (a.x[c.k], b.x[c.k]);
        let s = brent(f, sa, f(sa), sb, f(sb), 1e-14, 200).ok_or_else(|| {
            Error::not_converged(
                "phase envelope (cricondenbar/cricondentherm next to the critical point)",
                vec![("Brent".into(), 200)],
                f64::NAN,
                1e-14,
            )
        })?;
        Ok(c.node(s))
    }

    /// The zero of dX_var/dS between nodes a and b, by Brent's method on X_u.
    fn extremum(&mut self, a: Node, b: Node, var: usize, u: usize) -> Result<Node> {
        let tol = self.opts.tolerance;
        let fa = a.t[var] / a.t[u];
        let fb = b.t[var] / b.t[u];
        let dir = a.t[u].signum();
        let mut last: Option<Node> = None;
        let s = {
            let mut f = |s: f64| -> f64 {
                let pred = Self::predict(Some(&a), &b, u, s);
                match self.node_at(pred, u, s, &a, dir, a.swapped, tol) {
                    Some(n) => {
                        let v = n.t[var] / n.t[u];
                        last = Some(n);
                        v
                    }
                    None => f64::NAN,
                }
            };
            brent(&mut f, a.x[u], fa, b.x[u], fb, 1e-12, 100)
        };
        let s = s.ok_or_else(|| {
            Error::not_converged(
                "phase envelope (cricondenbar/cricondentherm search)",
                vec![("Brent".into(), 100)],
                f64::NAN,
                tol,
            )
        })?;
        if let Some(n) = last.filter(|n| n.x[u] == s) {
            return Ok(n);
        }
        let pred = Self::predict(Some(&a), &b, u, s);
        self.node_at(pred, u, s, &a, dir, a.swapped, tol).ok_or_else(|| {
            Error::not_converged(
                "phase envelope (cricondenbar/cricondentherm point)",
                vec![("Newton".into(), MAX_CORRECTOR)],
                self.g.iter().fold(0.0f64, |a, v| a.max(v.abs())),
                tol,
            )
        })
    }

    /// The reported point of a node.
    fn point(&self, n: &Node) -> EnvelopePoint {
        let nc = self.nc;
        let b = self.beta;
        let mut x = vec![0.0; nc];
        let mut y = vec![0.0; nc];
        for i in 0..nc {
            if self.active[i] {
                let k = n.x[i].exp();
                x[i] = self.z[i] / (1.0 - b + b * k);
                y[i] = k * x[i];
            }
        }
        let (sx, sy): (f64, f64) = (x.iter().sum(), y.iter().sum());
        x.iter_mut().for_each(|v| *v /= sx);
        y.iter_mut().for_each(|v| *v /= sy);
        let temperature = n.x[nc].exp();
        let pressure = n.x[nc + 1].exp();
        if n.critical {
            return EnvelopePoint {
                temperature,
                pressure,
                vapor_fraction: b,
                incipient: self.z.clone(),
                ln_k: vec![0.0; nc],
            };
        }
        let lnk: Vec<f64> = n.x[..nc].to_vec();
        let (vapor_fraction, incipient, ln_k) = if !n.swapped {
            let inc = if b >= 1.0 { x } else { y };
            (b, inc, lnk)
        } else {
            let inc = if b <= 0.0 { y } else { x };
            (1.0 - b, inc, lnk.iter().map(|v| -v).collect())
        };
        EnvelopePoint {
            temperature,
            pressure,
            vapor_fraction,
            incipient,
            ln_k,
        }
    }
}
