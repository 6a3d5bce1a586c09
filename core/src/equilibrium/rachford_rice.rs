//! The Rachford–Rice equation of a two-phase split,
//! f(β) = Σ z_i (K_i − 1)/(1 + β(K_i − 1)) = 0,
//! solved with guaranteed convergence: Newton steps kept inside a shrinking bracket that starts
//! from the window of Leibovici & Neoschil (Fluid Phase Equilib. 74 (1992) 303, from memory),
//! falling back to bisection. Round-off near β = 1 is avoided by solving for whichever of β and
//! 1 − β is smaller, with the denominators written so that no cancellation occurs
//! (1 + β(K−1) = K + (1−β)(1−K)); the idea of Nielsen & Lia, Fluid Phase Equilib. (2023),
//! "Avoiding round-off error in the Rachford–Rice equation" (from memory).

use crate::error::{Error, Result, num};

/// Solution of the Rachford–Rice equation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RrSolution {
    /// Vapour (or "K-phase") fraction β.
    pub beta: f64,
    /// 1 − β, computed without cancellation.
    pub one_minus_beta: f64,
    /// Newton/bisection iterations.
    pub iterations: usize,
    /// Where the solution lies.
    pub region: RrRegion,
}

/// Where the Rachford–Rice root lies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RrRegion {
    /// 0 < β < 1: two phases.
    TwoPhase,
    /// The feed lies on the liquid side (f(0) ≤ 0); β = 0 when not solving a negative flash.
    AllLiquid,
    /// The feed lies on the vapour side (f(1) ≥ 0); β = 1 when not solving a negative flash.
    AllVapor,
}

/// Solves the Rachford–Rice equation for feed fractions `z` and K-values `k`.
///
/// With `negative = false`, β is confined to [0, 1] and the region says whether the feed is
/// one-phase. With `negative = true`, β may lie anywhere between the poles
/// 1/(1 − K_max) and 1/(1 − K_min) (negative flash, Whitson & Michelsen 1989), and the region
/// still says on which side of [0, 1] it lies. Errors if all K are on one side of 1 in the
/// negative case (no root exists).
pub fn solve(z: &[f64], k: &[f64], negative: bool) -> Result<RrSolution> {
    let (mut kmin, mut kmax) = (f64::INFINITY, 0.0f64);
    let (mut f0, mut f1) = (0.0, 0.0);
    for (&zi, &ki) in z.iter().zip(k) {
        if zi <= 0.0 {
            continue;
        }
        if !(ki > 0.0 && ki.is_finite()) {
            return Err(Error::invalid(
                "K-values",
                format!("K = {ki}; finite positive values are required", ki = num(ki)),
            ));
        }
        kmin = kmin.min(ki);
        kmax = kmax.max(ki);
        f0 += zi * (ki - 1.0);
        f1 += zi * (1.0 - 1.0 / ki);
    }
    let region = if f0 <= 0.0 {
        RrRegion::AllLiquid
    } else if f1 >= 0.0 {
        RrRegion::AllVapor
    } else {
        RrRegion::TwoPhase
    };
    if !negative && region != RrRegion::TwoPhase {
        let beta = if region == RrRegion::AllLiquid { 0.0 } else { 1.0 };
        return Ok(RrSolution {
            beta,
            one_minus_beta: 1.0 - beta,
            iterations: 0,
            region,
        });
    }
    if !(kmax > 1.0 && kmin < 1.0) {
        return Err(Error::NoSolution(
            "the Rachford–Rice equation has no root: all K-values lie on one side of 1".into(),
        ));
    }
    // Bracket: poles (negative flash) or [0, 1], tightened by the Leibovici–Neoschil window.
    let (mut lo, mut hi) = if negative {
        (1.0 / (1.0 - kmax), 1.0 / (1.0 - kmin))
    } else {
        (0.0, 1.0)
    };
    for (&zi, &ki) in z.iter().zip(k) {
        if zi <= 0.0 {
            continue;
        }
        if ki > 1.0 {
            lo = lo.max((ki * zi - 1.0) / (ki - 1.0));
        } else if ki < 1.0 {
            hi = hi.min((1.0 - zi) / (1.0 - ki));
        }
    }
    // Decide the variable: u = β (root in the lower half) or u = 1 − β (upper half).
    let upper = region == RrRegion::AllVapor || (region == RrRegion::TwoPhase && f_beta(z, k, 0.5) > 0.0);
    let (mut ulo, mut uhi) = if upper { (1.0 - hi, 1.0 - lo) } else { (lo, hi) };
    // In u, g(u) = f for the lower variable (decreasing), −f for the upper (decreasing too).
    let g = |u: f64| -> (f64, f64) {
        let (mut f, mut df) = (0.0, 0.0);
        for (&zi, &ki) in z.iter().zip(k) {
            if zi <= 0.0 {
                continue;
            }
            let km1 = ki - 1.0;
            let den = if upper { ki - u * km1 } else { 1.0 + u * km1 };
            let t = zi * km1 / den;
            f += t;
            df += t * km1 / den;
        }
        if upper { (-f, -df) } else { (f, -df) }
    };
    let mut u = 0.5 * (ulo + uhi);
    if !u.is_finite() {
        u = 0.0;
    }
    let mut iterations = 0;
    for it in 1..=200 {
        iterations = it;
        let (gu, dgu) = g(u);
        if gu == 0.0 {
            break;
        }
        if gu > 0.0 {
            ulo = u;
        } else {
            uhi = u;
        }
        let mut un = u - gu / dgu;
        if !(un > ulo && un < uhi) || !un.is_finite() {
            un = 0.5 * (ulo + uhi);
        }
        let done = (un - u).abs() <= 1e-15 * u.abs().max(1e-300) || uhi - ulo <= 1e-15 * u.abs().max(1e-300);
        u = un;
        if done {
            break;
        }
    }
    let (beta, omb) = if upper { (1.0 - u, u) } else { (u, 1.0 - u) };
    Ok(RrSolution {
        beta,
        one_minus_beta: omb,
        iterations,
        region,
    })
}

fn f_beta(z: &[f64], k: &[f64], beta: f64) -> f64 {
    z.iter()
        .zip(k)
        .filter(|(zi, _)| **zi > 0.0)
        .map(|(&zi, &ki)| zi * (ki - 1.0) / (1.0 + beta * (ki - 1.0)))
        .sum()
}

/// Phase compositions from a Rachford–Rice solution: x_i = z_i/(1 + β(K_i − 1)), y_i = K_i x_i,
/// with the denominator written in the cancellation-free form for the larger of β, 1 − β.
pub fn compositions(z: &[f64], k: &[f64], sol: &RrSolution, x: &mut [f64], y: &mut [f64]) {
    for i in 0..z.len() {
        let km1 = k[i] - 1.0;
        let den = if sol.beta > 0.5 {
            k[i] - sol.one_minus_beta * km1
        } else {
            1.0 + sol.beta * km1
        };
        x[i] = if z[i] > 0.0 { z[i] / den } else { 0.0 };
        y[i] = k[i] * x[i];
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn simple_two_phase() {
        let z = [0.5, 0.5];
        let k = [2.0, 0.5];
        let s = solve(&z, &k, false).unwrap();
        // Symmetric case: β = 0.5 exactly.
        assert!((s.beta - 0.5).abs() < 1e-14);
        assert_eq!(s.region, RrRegion::TwoPhase);
    }

    #[test]
    fn near_pole_is_accurate() {
        // A root extremely close to β = 1: 1 − β must be accurate relative to itself.
        let z = [0.999_999, 1e-6];
        let k = [1.000_002, 1e-8];
        let s = solve(&z, &k, false).unwrap();
        let mut x = [0.0; 2];
        let mut y = [0.0; 2];
        compositions(&z, &k, &s, &mut x, &mut y);
        let sx: f64 = x.iter().sum();
        let sy: f64 = y.iter().sum();
        assert!((sx - 1.0).abs() < 1e-12, "Σx = {sx}");
        assert!((sy - 1.0).abs() < 1e-12, "Σy = {sy}");
        for i in 0..2 {
            let back = s.beta * y[i] + s.one_minus_beta * x[i];
            assert!(
                (back - z[i]).abs() <= 1e-14 * z[i].max(1e-300) * 10.0,
                "{back} vs {}",
                z[i]
            );
        }
    }

    #[test]
    fn negative_flash_extends_the_tie_line() {
        let z = [0.9, 0.1];
        let k = [1.5, 0.9];
        let s = solve(&z, &k, true).unwrap();
        assert!(s.beta > 1.0);
        assert_eq!(s.region, RrRegion::AllVapor);
        assert!(f_beta(&z, &k, s.beta).abs() < 1e-12);
        let s = solve(&z, &k, false).unwrap();
        assert_eq!(s.beta, 1.0);
    }

    #[test]
    fn no_root_is_an_error() {
        assert!(solve(&[0.5, 0.5], &[2.0, 3.0], true).is_err());
        assert!(solve(&[0.5, 0.5], &[f64::NAN, 3.0], false).is_err());
    }
}
