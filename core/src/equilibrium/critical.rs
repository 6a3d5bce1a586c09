//! Critical points of mixtures of known composition.
//!
//! Method: the criteria of R. A. Heidemann and A. M. Khalil, "The calculation of critical
//! points", AIChE J. 26 (1980) 769–779, in the scaled form of M. L. Michelsen, "Calculation of
//! critical points and phase boundaries in the critical region", Fluid Phase Equilib. 16 (1984)
//! 57–76, in the variables temperature and volume at the feed composition z (1 mol):
//!
//! - the stability limit: the smallest eigenvalue λ_min of
//!   B_ij = δ_ij + √(z_i z_j) ∂²F/∂n_i∂n_j (T, V fixed; F = A^r/RT; B is √(z_i z_j) times the
//!   Hessian of A/RT in the amounts at fixed T and V) is zero, with unit eigenvector u;
//! - the critical condition: the cubic form
//!   C = Σ_ijk ∂³(A/RT)/∂n_i∂n_j∂n_k Δn_i Δn_j Δn_k along Δn_i = √z_i u_i is zero.
//!
//! B is analytic (the model's ∂²F/∂n∂n). The cubic form is, as in Michelsen (1984), the
//! directional derivative of the analytic Hessian along Δn: the residual part by a central
//! difference of Δnᵀ F_nn(z ± ε Δn) Δn with ε = 1e-5 mol (reduced where a small amount would
//! turn negative), the ideal-gas part −Σ Δn_i³/z_i² exactly.
//!
//! Solution (the nested loops of Heidemann & Khalil): for a molar volume v, the stability
//! limit temperature T_s(v) is the highest root of λ_min(T, v) = 0 (bracketed, then Brent's
//! method); the critical volume is the root of C(T_s(v), v) = 0, bracketed on a grid of volumes
//! around the initial estimate and refined by Brent's method. The pressure follows from the
//! model, p = RT/v − RT ∂F/∂V. Where several critical points exist, the one whose volume lies
//! nearest the initial estimate is returned. The criteria identify a critical point of the
//! fluid of composition z; they do not test whether it is stable against a third phase.

use crate::error::{Error, Result, check};
use crate::model::{FluidModel, HelmholtzDerivs, Need};
use crate::numerics::roots::brent;
use crate::substance::R;
use serde::{Deserialize, Serialize};

/// Options of [`critical_point`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct CriticalOptions {
    /// Relative tolerance on the critical temperature and volume (dimensionless; default
    /// 1e-11, allowed 1e-14 ≤ tolerance ≤ 1e-3).
    pub tolerance: f64,
    /// Most iterations of the outer (volume) and of each inner (temperature) root search
    /// (default 200, allowed 10..=100000).
    pub max_iterations: usize,
    /// Initial estimate of the critical temperature, K (default: 1.5 Σ z_i Tc_i, the
    /// starting value of Heidemann & Khalil 1980, used only to start the temperature search).
    pub initial_temperature: Option<f64>,
    /// Initial estimate of the critical molar volume, m3/mol (default: 0.3 Σ z_i R Tc_i/pc_i,
    /// about the critical volume of a two-parameter cubic). The volume search starts here.
    pub initial_volume: Option<f64>,
}

impl Default for CriticalOptions {
    fn default() -> Self {
        CriticalOptions {
            tolerance: 1e-11,
            max_iterations: 200,
            initial_temperature: None,
            initial_volume: None,
        }
    }
}

/// A critical point of a mixture (or of a pure component).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CriticalPoint {
    /// Critical temperature, K.
    pub temperature: f64,
    /// Critical pressure, Pa.
    pub pressure: f64,
    /// Critical molar volume, m3/mol.
    pub molar_volume: f64,
    /// Iterations used (model evaluations of the root searches for [`critical_point`]; Newton
    /// iterations of the points that located it for a crossing found by
    /// [`phase_envelope`](super::phase_envelope)).
    pub iterations: usize,
}

/// Critical point of the mixture `feed` (mol; any positive total) by the Heidemann & Khalil
/// (1980) criteria in Michelsen's (1984) form (see the module documentation).
///
/// Errors: a feed of the wrong length, non-finite or without a positive amount, or options out
/// of range: [`Error::InvalidInput`]; no critical point found for molar volumes within a factor
/// of 3 of the initial estimate: [`Error::NoSolution`]; a root search that does not reach the
/// tolerance: [`Error::NotConverged`].
pub fn critical_point<M: FluidModel + ?Sized>(
    model: &M,
    feed: &[f64],
    opts: &CriticalOptions,
) -> Result<CriticalPoint> {
    let nc = model.num_components();
    let total = check::amounts(feed, nc)?;
    if !(opts.tolerance >= 1e-14 && opts.tolerance <= 1e-3) {
        return Err(Error::invalid(
            "tolerance",
            format!("{}; a value in [1e-14, 1e-3] is required", opts.tolerance),
        ));
    }
    if !(10..=100_000).contains(&opts.max_iterations) {
        return Err(Error::invalid(
            "max_iterations",
            format!("{}; a value in 10..=100000 is required", opts.max_iterations),
        ));
    }
    if let Some(t) = opts.initial_temperature {
        check::temperature(t)?;
    }
    if let Some(v) = opts.initial_volume {
        check::volume(v)?;
    }
    let z: Vec<f64> = feed.iter().map(|x| x / total).collect();
    let mut cx = Crit::new(model, z);
    let v_scale: f64 = cx
        .active
        .iter()
        .map(|&i| {
            let c = model.critical_constants(i);
            cx.z[i] * R * c.tc / c.pc
        })
        .sum();
    let t_scale: f64 = cx
        .active
        .iter()
        .map(|&i| cx.z[i] * model.critical_constants(i).tc)
        .sum();
    let v0 = opts.initial_volume.unwrap_or(0.3 * v_scale);
    let t0 = opts.initial_temperature.unwrap_or(1.5 * t_scale);
    cx.t_guess = t0;
    cx.max_it = opts.max_iterations;
    cx.tol = opts.tolerance;

    // Grid of volumes outward from v0 (alternately above and below), looking for the sign
    // change of the cubic form nearest v0.
    let ratio: f64 = 1.08;
    let steps = (3.0f64.ln() / ratio.ln()).ceil() as i32;
    let mut up: Option<(f64, f64)> = None; // last (v, C) going up
    let mut down: Option<(f64, f64)> = None;
    let mut bracket: Option<(f64, f64, f64, f64)> = None;
    let mut first_error: Option<Error> = None;
    let start = match cx.cubic_at(v0) {
        Ok(c) => Some((v0, c)),
        Err(e) => {
            first_error = Some(e);
            None
        }
    };
    up = up.or(start);
    down = down.or(start);
    'grid: for k in 1..=steps {
        for dir in [1.0f64, -1.0] {
            let v = v0 * ratio.powf(dir * k as f64);
            let last = if dir > 0.0 { &mut up } else { &mut down };
            match cx.cubic_at(v) {
                Ok(c) => {
                    if let Some((vp, cp)) = *last
                        && cp.signum() != c.signum()
                    {
                        bracket = Some((vp, cp, v, c));
                        break 'grid;
                    }
                    *last = Some((v, c));
                }
                Err(e) => {
                    if first_error.is_none() {
                        first_error = Some(e);
                    }
                    *last = None;
                }
            }
        }
    }
    let Some((va, ca, vb, cb)) = bracket else {
        if let Some(e) = first_error
            && e.kind() == crate::ErrorKind::NotConverged
        {
            return Err(e);
        }
        return Err(Error::NoSolution(format!(
            "no critical point found for molar volumes in [{:.6e}, {:.6e}] m3/mol (within a factor of 3 of the \
             initial estimate {v0:.6e} m3/mol): the cubic form of Heidemann & Khalil (1980) does not change sign there",
            v0 / 3.0,
            v0 * 3.0
        )));
    };
    // Brent's method on C(v) in ln v.
    let tol = opts.tolerance;
    let mut err: Option<Error> = None;
    let lnv = brent(
        |x| match cx.cubic_at(x.exp()) {
            Ok(c) => c,
            Err(e) => {
                err.get_or_insert(e);
                f64::NAN
            }
        },
        va.ln(),
        ca,
        vb.ln(),
        cb,
        tol,
        opts.max_iterations,
    );
    if let Some(e) = err {
        return Err(e);
    }
    let Some(lnv) = lnv else {
        return Err(Error::not_converged(
            "critical point (volume search)",
            vec![("Brent".into(), opts.max_iterations)],
            (va / vb).ln().abs(),
            tol,
        ));
    };
    let v = lnv.exp();
    let t = cx.spinodal(v)?;
    cx.eval(t, v, Need::VALUES)?;
    let p = R * t / v - R * t * cx.d.f_v;
    if !(p.is_finite() && p > 0.0) {
        return Err(Error::NoSolution(format!(
            "the critical point found at T = {t} K, v = {v} m3/mol has pressure {p} Pa"
        )));
    }
    Ok(CriticalPoint {
        temperature: t,
        pressure: p,
        molar_volume: v,
        iterations: cx.evaluations,
    })
}

/// Working storage of the critical-point search.
struct Crit<'a, M: ?Sized> {
    model: &'a M,
    z: Vec<f64>,
    active: Vec<usize>,
    d: HelmholtzDerivs,
    b: Vec<f64>,
    vecs: Vec<f64>,
    eig: Vec<f64>,
    u_ref: Vec<f64>,
    n: Vec<f64>,
    t_guess: f64,
    tol: f64,
    max_it: usize,
    evaluations: usize,
}

impl<'a, M: FluidModel + ?Sized> Crit<'a, M> {
    fn new(model: &'a M, z: Vec<f64>) -> Self {
        let nc = z.len();
        let active: Vec<usize> = (0..nc).filter(|&i| z[i] > 0.0).collect();
        let m = active.len();
        Crit {
            model,
            active,
            d: HelmholtzDerivs::new(nc),
            b: vec![0.0; m * m],
            vecs: vec![0.0; m * m],
            eig: vec![0.0; m],
            u_ref: Vec::new(),
            n: z.clone(),
            z,
            t_guess: 0.0,
            tol: 1e-11,
            max_it: 200,
            evaluations: 0,
        }
    }

    fn eval(&mut self, t: f64, v: f64, need: Need) -> Result<()> {
        self.evaluations += 1;
        self.model.residual(t, v, &self.z, need, &mut self.d)
    }

    /// λ_min of B at (T, v); the eigenvector is left in `u_ref`'s orientation in `eig_vec()`.
    fn lambda_min(&mut self, t: f64, v: f64) -> Result<f64> {
        self.eval(t, v, Need::COMPOSITION)?;
        let nc = self.z.len();
        let m = self.active.len();
        for (a, &i) in self.active.iter().enumerate() {
            for (b, &j) in self.active.iter().enumerate() {
                let delta = if a == b { 1.0 } else { 0.0 };
                self.b[a * m + b] = delta + (self.z[i] * self.z[j]).sqrt() * self.d.f_nn[i * nc + j];
            }
        }
        let k = jacobi_eigen(&mut self.b, m, &mut self.vecs, &mut self.eig);
        let lam = self.eig[k];
        if !lam.is_finite() {
            return Err(Error::invalid(
                "state",
                format!("non-finite stability matrix at T = {t} K, v = {v} m3/mol"),
            ));
        }
        Ok(lam)
    }

    /// The unit eigenvector of the smallest eigenvalue from the last [`Self::lambda_min`],
    /// oriented along the previous one (so the cubic form changes continuously).
    fn eigenvector(&mut self) -> Vec<f64> {
        let m = self.active.len();
        let k = (0..m).min_by(|&a, &b| self.eig[a].total_cmp(&self.eig[b])).unwrap_or(0);
        let mut u: Vec<f64> = (0..m).map(|a| self.vecs[a * m + k]).collect();
        let dot: f64 = if self.u_ref.len() == m {
            u.iter().zip(&self.u_ref).map(|(a, b)| a * b).sum()
        } else {
            u.iter().sum()
        };
        if dot < 0.0 {
            u.iter_mut().for_each(|x| *x = -*x);
        }
        self.u_ref.clone_from(&u);
        u
    }

    /// The stability-limit temperature at molar volume v: the highest root of λ_min(T) = 0.
    fn spinodal(&mut self, v: f64) -> Result<f64> {
        // Bracket: step down from above the current estimate until λ_min < 0.
        let t_min = 0.05
            * self
                .active
                .iter()
                .map(|&i| self.model.critical_constants(i).tc)
                .fold(f64::INFINITY, f64::min);
        let mut hi = self.t_guess * 1.05;
        let mut lam_hi = self.lambda_min(hi, v)?;
        let mut grow = 0;
        while lam_hi <= 0.0 {
            hi *= 1.5;
            grow += 1;
            if grow > 40 {
                return Err(Error::NoSolution(format!(
                    "the feed is unstable at molar volume {v} m3/mol up to T = {hi} K"
                )));
            }
            lam_hi = self.lambda_min(hi, v)?;
        }
        let mut lo = hi;
        let mut lam_lo = lam_hi;
        let mut step = 0.97;
        while lam_lo > 0.0 {
            hi = lo;
            lam_hi = lam_lo;
            lo *= step;
            step = (step * step).max(0.7);
            if lo < t_min {
                return Err(Error::NoSolution(format!(
                    "no stability limit at molar volume {v} m3/mol between {t_min} K and {hi} K"
                )));
            }
            lam_lo = self.lambda_min(lo, v)?;
        }
        let (tol, max_it) = (self.tol.min(1e-13), self.max_it);
        let mut err = None;
        let t = brent(
            |t| match self.lambda_min(t, v) {
                Ok(l) => l,
                Err(e) => {
                    err.get_or_insert(e);
                    f64::NAN
                }
            },
            lo,
            lam_lo,
            hi,
            lam_hi,
            tol,
            max_it,
        );
        if let Some(e) = err {
            return Err(e);
        }
        let t = t.ok_or_else(|| {
            Error::not_converged(
                "critical point (stability-limit temperature)",
                vec![("Brent".into(), max_it)],
                (hi - lo) / hi,
                tol,
            )
        })?;
        self.t_guess = t;
        Ok(t)
    }

    /// The cubic form C at the stability limit of molar volume v.
    fn cubic_at(&mut self, v: f64) -> Result<f64> {
        let t = self.spinodal(v)?;
        self.lambda_min(t, v)?;
        let u = self.eigenvector();
        let nc = self.z.len();
        let mut dn = vec![0.0; nc];
        let mut eps: f64 = 1e-5;
        let mut ideal = 0.0;
        for (a, &i) in self.active.iter().enumerate() {
            dn[i] = self.z[i].sqrt() * u[a];
            ideal -= dn[i].powi(3) / (self.z[i] * self.z[i]);
            if dn[i] != 0.0 {
                eps = eps.min(0.1 * self.z[i] / dn[i].abs());
            }
        }
        let mut quad = [0.0; 2];
        for (k, sgn) in [1.0, -1.0].into_iter().enumerate() {
            for i in 0..nc {
                self.n[i] = self.z[i] + sgn * eps * dn[i];
            }
            self.evaluations += 1;
            self.model.residual(t, v, &self.n, Need::COMPOSITION, &mut self.d)?;
            let mut s = 0.0;
            for &i in &self.active {
                for &j in &self.active {
                    s += dn[i] * dn[j] * self.d.f_nn[i * nc + j];
                }
            }
            quad[k] = s;
        }
        let c = (quad[0] - quad[1]) / (2.0 * eps) + ideal;
        if !c.is_finite() {
            return Err(Error::invalid(
                "state",
                format!("non-finite cubic form at T = {t} K, v = {v} m3/mol"),
            ));
        }
        Ok(c)
    }
}

/// Eigen-decomposition of the symmetric m×m matrix `a` (row-major, destroyed) by cyclic
/// Jacobi rotations: eigenvalues in `eig`, eigenvectors in the columns of `vecs`. Returns the
/// index of the smallest eigenvalue.
fn jacobi_eigen(a: &mut [f64], m: usize, vecs: &mut [f64], eig: &mut [f64]) -> usize {
    for i in 0..m {
        for j in 0..m {
            vecs[i * m + j] = if i == j { 1.0 } else { 0.0 };
        }
    }
    let norm: f64 = a.iter().map(|x| x * x).sum::<f64>().sqrt();
    for _sweep in 0..100 {
        let off: f64 = (0..m)
            .flat_map(|i| (0..m).filter(move |&j| j != i).map(move |j| (i, j)))
            .map(|(i, j)| a[i * m + j] * a[i * m + j])
            .sum::<f64>()
            .sqrt();
        if off <= 1e-15 * norm || off == 0.0 {
            break;
        }
        for p in 0..m {
            for q in p + 1..m {
                let apq = a[p * m + q];
                if apq == 0.0 {
                    continue;
                }
                let theta = (a[q * m + q] - a[p * m + p]) / (2.0 * apq);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let t = if theta == 0.0 { 1.0 } else { t };
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for k in 0..m {
                    let akp = a[k * m + p];
                    let akq = a[k * m + q];
                    a[k * m + p] = c * akp - s * akq;
                    a[k * m + q] = s * akp + c * akq;
                }
                for k in 0..m {
                    let apk = a[p * m + k];
                    let aqk = a[q * m + k];
                    a[p * m + k] = c * apk - s * aqk;
                    a[q * m + k] = s * apk + c * aqk;
                }
                for k in 0..m {
                    let vkp = vecs[k * m + p];
                    let vkq = vecs[k * m + q];
                    vecs[k * m + p] = c * vkp - s * vkq;
                    vecs[k * m + q] = s * vkp + c * vkq;
                }
            }
        }
    }
    for i in 0..m {
        eig[i] = a[i * m + i];
    }
    (0..m).min_by(|&x, &y| eig[x].total_cmp(&eig[y])).unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn jacobi_finds_the_smallest_eigenpair() {
        // [[2, 1], [1, 2]]: eigenvalues 1 and 3, the smaller along (1, −1)/√2.
        let mut a = vec![2.0, 1.0, 1.0, 2.0];
        let mut v = vec![0.0; 4];
        let mut e = vec![0.0; 2];
        let k = jacobi_eigen(&mut a, 2, &mut v, &mut e);
        assert!((e[k] - 1.0).abs() < 1e-14);
        assert!((v[k].abs() - 0.5f64.sqrt()).abs() < 1e-14);
        assert!((v[k] + v[2 + k]).abs() < 1e-14);
    }
}
