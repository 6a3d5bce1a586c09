//! Azeotropes of binary mixtures: the state where the coexisting liquid and vapour have the
//! same composition, x = y, at a given pressure (unknowns T and x1) or temperature (unknowns p
//! and x1).
//!
//! Method: the equal-fugacity conditions with x = y,
//! f_i = ln φ_i^L(T, p, x) − ln φ_i^V(T, p, x) = 0 (i = 1, 2), solved by Newton's method with
//! the analytic derivatives of [`FluidModel::phase_ln_phi`] (composition, temperature,
//! pressure). The start comes from a scan of bubble points over x1: at an azeotrope the
//! relative volatility α12 = K1/K2 passes through 1, so ln(K1/K2) changes sign between two scan
//! points, and the interpolated x1 with its bubble T (or p) starts the Newton iteration (the
//! classical characterisation: e.g. Smith, Van Ness & Abbott, *Introduction to Chemical
//! Engineering Thermodynamics*, 7th ed., 2005, § 10.5, Example 10.3(e)). Works for any
//! [`FluidModel`]: γ–φ models and equations of state (for which x = y on one volume root
//! would be the trivial solution; it is refused).

use super::saturation::{SaturationOptions, bubble_pressure, bubble_temperature};
use crate::error::{Error, Result, check, num};
use crate::model::{FluidModel, FugacityWork, LnPhi, Need, RootChoice};
use serde::{Deserialize, Serialize};

/// Options of the azeotrope solvers.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AzeotropeOptions {
    /// Tolerance on max |ln φ_i^L − ln φ_i^V| (dimensionless).
    pub tolerance: f64,
    /// Maximum Newton iterations.
    pub max_iterations: usize,
    /// Number of interior scan points in x1 (evenly spaced in (0, 1)).
    pub scan_points: usize,
}

impl Default for AzeotropeOptions {
    fn default() -> Self {
        AzeotropeOptions {
            tolerance: 1e-10,
            max_iterations: 60,
            scan_points: 39,
        }
    }
}

impl AzeotropeOptions {
    /// Checks the options: tolerance in (0, 1e-3), 1..=10000 iterations, 3..=10000 scan points.
    pub fn validate(&self) -> Result<()> {
        if !(self.tolerance > 0.0 && self.tolerance < 1e-3) {
            return Err(Error::invalid(
                "tolerance",
                format!("{}; a value in (0, 1e-3) is required", num(self.tolerance)),
            ));
        }
        check::count("max_iterations", self.max_iterations, 1, crate::limits::MAX_ITERATIONS)?;
        check::count("scan_points", self.scan_points, 3, 10_000)
    }
}

/// An azeotrope of a binary mixture.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Azeotrope {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Mole fractions of the liquid and of the vapour (equal).
    pub composition: [f64; 2],
    /// ln φ_i of the liquid (= of the vapour) at the azeotrope.
    pub ln_phi: [f64; 2],
    /// Molar volumes of the liquid and the vapour, m3/mol.
    pub molar_volumes: [f64; 2],
    /// Final max |ln φ_i^L − ln φ_i^V|.
    pub residual: f64,
    /// Newton iterations.
    pub iterations: usize,
}

/// The azeotrope of a binary `model` at pressure p (Pa). `guess_x1` (mole fraction of
/// component 0) skips the scan. [`Error::NoSolution`] when ln(K1/K2) keeps one sign over the
/// scan (the message gives the range seen): the binary has no azeotrope at p.
pub fn azeotrope_at_pressure<M: FluidModel + ?Sized>(
    model: &M,
    p: f64,
    guess_x1: Option<f64>,
    opts: &AzeotropeOptions,
) -> Result<Azeotrope> {
    check::pressure(p)?;
    solve(model, Fixed::Pressure(p), guess_x1, opts)
}

/// The azeotrope of a binary `model` at temperature T (K); as [`azeotrope_at_pressure`]
/// with the pressure unknown.
pub fn azeotrope_at_temperature<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    guess_x1: Option<f64>,
    opts: &AzeotropeOptions,
) -> Result<Azeotrope> {
    check::temperature(t)?;
    solve(model, Fixed::Temperature(t), guess_x1, opts)
}

#[derive(Clone, Copy)]
enum Fixed {
    Pressure(f64),
    Temperature(f64),
}

/// Bubble point of the liquid (x1, 1 − x1): (T, p, ln(K1/K2)).
fn bubble<M: FluidModel + ?Sized>(model: &M, fixed: Fixed, x1: f64) -> Result<(f64, f64, f64)> {
    let n = [x1, 1.0 - x1];
    let so = SaturationOptions::default();
    let b = match fixed {
        Fixed::Pressure(p) => bubble_temperature(model, p, &n, &so)?,
        Fixed::Temperature(t) => bubble_pressure(model, t, &n, &so)?,
    };
    Ok((b.temperature, b.pressure, (b.k_values[0] / b.k_values[1]).ln()))
}

fn solve<M: FluidModel + ?Sized>(
    model: &M,
    fixed: Fixed,
    guess_x1: Option<f64>,
    opts: &AzeotropeOptions,
) -> Result<Azeotrope> {
    opts.validate()?;
    if model.num_components() != 2 {
        return Err(Error::invalid(
            "model",
            format!(
                "{} components; the azeotrope solver is for binary mixtures",
                model.num_components()
            ),
        ));
    }
    // Start: (x1, T, p).
    let (mut x1, mut t, mut p) = match guess_x1 {
        Some(g) => {
            if !(g > 0.0 && g < 1.0) {
                return Err(Error::invalid(
                    "guess_x1",
                    format!("{}; a mole fraction in (0, 1) is required", num(g)),
                ));
            }
            let (t, p, _) = bubble(model, fixed, g)?;
            (g, t, p)
        }
        None => {
            let m = opts.scan_points;
            let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
            let mut prev: Option<(f64, f64, f64, f64)> = None;
            let mut found = None;
            let mut last_err = None;
            for k in 1..=m {
                let x = k as f64 / (m + 1) as f64;
                let (t, p, r) = match bubble(model, fixed, x) {
                    Ok(v) => v,
                    Err(e) => {
                        last_err = Some(e);
                        prev = None;
                        continue;
                    }
                };
                lo = lo.min(r);
                hi = hi.max(r);
                if let Some((xp, tp, pp, rp)) = prev
                    && rp * r <= 0.0
                {
                    let w = if rp == r { 0.5 } else { rp / (rp - r) };
                    found = Some((
                        xp + w * (x - xp),
                        tp + w * (t - tp),
                        (pp.ln() + w * (p.ln() - pp.ln())).exp(),
                    ));
                    break;
                }
                prev = Some((x, t, p, r));
            }
            match found {
                Some(s) => s,
                None if lo.is_finite() => {
                    let at = match fixed {
                        Fixed::Pressure(p) => format!("p = {} Pa", num(p)),
                        Fixed::Temperature(t) => format!("T = {} K", num(t)),
                    };
                    return Err(Error::NoSolution(format!(
                        "the binary {}/{} has no azeotrope at {at}: ln(K1/K2) at the bubble point keeps one sign, \
                         ranging over [{}, {}] for x1 in [{}, {}]",
                        model.component_name(0),
                        model.component_name(1),
                        num(lo),
                        num(hi),
                        num(1.0 / (m + 1) as f64),
                        num(m as f64 / (m + 1) as f64)
                    )));
                }
                None => {
                    return Err(last_err.unwrap_or_else(|| Error::NoSolution("no bubble point in the scan".into())));
                }
            }
        }
    };
    let mut w = FugacityWork::new(2);
    let mut liq = LnPhi::new(2);
    let mut vap = LnPhi::new(2);
    let need = Need::ALL;
    let mut resid = f64::INFINITY;
    for it in 1..=opts.max_iterations {
        let n = [x1, 1.0 - x1];
        model.phase_ln_phi(t, p, &n, RootChoice::Liquid, need, &mut w, &mut liq)?;
        model.phase_ln_phi(t, p, &n, RootChoice::Vapor, need, &mut w, &mut vap)?;
        let f = [liq.ln_phi[0] - vap.ln_phi[0], liq.ln_phi[1] - vap.ln_phi[1]];
        resid = f[0].abs().max(f[1].abs());
        if resid < opts.tolerance {
            if (liq.v - vap.v).abs() < 1e-6 * vap.v.abs() {
                return Err(Error::NoSolution(format!(
                    "the azeotrope iteration reached the trivial solution (one phase, molar volume {} m3/mol, at \
                     T = {} K, p = {} Pa, x1 = {}): no azeotrope found from this start",
                    num(liq.v),
                    num(t),
                    num(p),
                    num(x1)
                )));
            }
            return Ok(Azeotrope {
                temperature: t,
                pressure: p,
                composition: [x1, 1.0 - x1],
                ln_phi: [liq.ln_phi[0], liq.ln_phi[1]],
                molar_volumes: [liq.v, vap.v],
                residual: resid,
                iterations: it,
            });
        }
        // Columns: ∂f/∂x1 (n = (x1, 1 − x1), one mole) and ∂f/∂T or ∂f/∂ln p.
        let mut a = [[0.0; 2]; 2];
        for i in 0..2 {
            a[i][0] = (liq.dn[i * 2] - liq.dn[i * 2 + 1]) - (vap.dn[i * 2] - vap.dn[i * 2 + 1]);
            a[i][1] = match fixed {
                Fixed::Pressure(_) => liq.dt[i] - vap.dt[i],
                Fixed::Temperature(_) => p * (liq.dp[i] - vap.dp[i]),
            };
        }
        let det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
        if !(det.abs() > 0.0) || !det.is_finite() {
            break;
        }
        let dx = -(f[0] * a[1][1] - f[1] * a[0][1]) / det;
        let ds = -(a[0][0] * f[1] - a[1][0] * f[0]) / det;
        // Damped: x1 stays inside (0, 1), T moves at most 10 K, ln p at most 0.5.
        let mut lam: f64 = 1.0;
        if x1 + dx <= 0.0 {
            lam = lam.min(0.5 * x1 / -dx);
        }
        if x1 + dx >= 1.0 {
            lam = lam.min(0.5 * (1.0 - x1) / dx);
        }
        match fixed {
            Fixed::Pressure(_) => {
                lam = lam.min(10.0 / ds.abs().max(1e-300));
                x1 += lam * dx;
                t += lam * ds;
            }
            Fixed::Temperature(_) => {
                lam = lam.min(0.5 / ds.abs().max(1e-300));
                x1 += lam * dx;
                p *= (lam * ds).exp();
            }
        }
        if !(t > 0.0 && p > 0.0 && t.is_finite() && p.is_finite()) {
            break;
        }
    }
    Err(Error::not_converged(
        "binary azeotrope (Newton on equal fugacities with x = y)",
        vec![("Newton".into(), opts.max_iterations)],
        resid,
        opts.tolerance,
    ))
}
