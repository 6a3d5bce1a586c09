//! Derivatives of a converged PT flash with respect to temperature, pressure and the feed
//! amounts, by the implicit function theorem applied to the equilibrium equations — no extra
//! flash per derivative (M. L. Michelsen and J. M. Mollerup, "Thermodynamic Models:
//! Fundamentals and Computational Aspects", 2nd ed., Tie-Line Publications, 2007, the chapter
//! on the two-phase flash, from memory).
//!
//! Formulation for P fluid phases. The unknowns are the amounts n^k_i (mol) of each component
//! in P − 1 of the phases; its amount in the remaining phase L_i (the one holding most of it,
//! so that trace amounts never enter through the mass balance) follows from
//! n^{L_i}_i = n_i − Σ_{k≠L_i} n^k_i. At equilibrium
//!
//! g_(k,i) = ln f^k_i(T, p, n^k) − ln f^{L_i}_i(T, p, n^{L_i}) = 0,   k ≠ L_i,
//!
//! which is the gradient of G/RT in the unknowns. With
//! Φ^k_ij = (∂ln f^k_i/∂n^k_j)_{T,p} = δ_ij/n^k_i − 1/N^k + (∂ln φ^k_i/∂n^k_j)_{T,p}, its
//! Jacobian is the Hessian of G/RT,
//!
//! H_(k,i),(m,j) = Φ^k_ij (δ_km − [k = L_j]) − Φ^{L_i}_ij (δ_{L_i m} − [L_i = L_j]),
//!
//! symmetric and positive definite at a strict minimum of G (with one dependent phase L for
//! every component it is blockdiag(Φ^k, k ≠ L) + (1 1ᵀ) ⊗ Φ^L). Differentiating g = 0:
//!
//! H dn/dT = −(∂ln φ^k_i/∂T − ∂ln φ^{L_i}_i/∂T),  H dn/dp = −(∂ln φ^k_i/∂p − ∂ln φ^{L_i}_i/∂p),
//! H dn/dn_j = −∂g/∂n_j = −Φ^k_ij [k = L_j] + Φ^{L_i}_ij [L_i = L_j] (the added n_j enters L_j).
//!
//! H is factorised once (Cholesky after a symmetric diagonal scaling by the ideal-solution
//! curvature 1/n^k_i + 1/n^{L_i}_i) and the nc + 2 right-hand sides are solved together by
//! one back-substitution with the factor. Phase amounts and mole fractions follow by the
//! quotient rule; an extensive property X = Σ_k X^k(T, p, n^k) changes by its frozen part
//! (each phase at fixed n^k) plus the transfer term Σ_k Σ_i x̄^k_i dn^k_i with the partial
//! molar quantities of each phase:
//!
//! h̄_i = h_i^ig(T) − RT² (∂ln φ_i/∂T)_{p,n},
//! s̄_i = s_i^ig(T, p°) − R ln(x_i p/p°) − R ln φ_i − RT (∂ln φ_i/∂T)_{p,n},
//! v̄_i = −(∂p/∂n_i)_{T,V}/(∂p/∂V)_{T,n}.
//!
//! For example dH/dT = Σ_k C_p^k + Σ_i Σ_{k≠L_i} (h̄^k_i − h̄^{L_i}_i) dn^k_i/dT: the frozen heat
//! capacity plus the latent heat of the phase change the temperature step causes.
//!
//! The derivatives do not exist where H is singular: at a critical point, for a pure
//! substance split between two phases (the phase amounts are then not functions of T and p),
//! or at a limit of stability. There the routines return [`Error::NoSolution`] with the
//! smallest pivot, never a non-finite number.

use super::flash::FlashResult;
use crate::error::{Error, Result, check};
use crate::model::fugacity::evaluate_at_volume;
use crate::model::{FluidModel, FugacityWork, LnPhi, Need};
use crate::substance::{P_STANDARD, R};
use serde::{Deserialize, Serialize};

/// Smallest admissible Cholesky pivot of the scaled Hessian (diagonal scaling by the
/// ideal-solution curvature 1/n^k_i + 1/n^{L_i}_i, so an ideal solution has pivots of order 1). Below it
/// the derivatives are dominated by round-off (relative errors up to ~1e-16/pivot) and the
/// state is treated as singular (common practice, no source).
pub const MIN_RELATIVE_PIVOT: f64 = 1e-10;

/// Largest equilibrium residual max |ln f^k_i − ln f^L_i| accepted in a flash result before
/// its derivatives are computed (a converged flash is far below it).
const MAX_RESIDUAL: f64 = 1e-6;

/// Derivatives of a flash result with respect to one variable X (T in K, p in Pa, or feed
/// amount n_j in mol).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct Derivative {
    /// d(amount of phase k)/dX, mol per unit of X, in the order of FlashResult::phases.
    pub phase_amounts: Vec<f64>,
    /// d(mole fraction i in phase k)/dX, per unit of X; `compositions[k][i]`.
    pub compositions: Vec<Vec<f64>>,
    /// d(total volume of the system)/dX, m3 per unit of X.
    pub volume: f64,
    /// d(total enthalpy)/dX, J per unit of X.
    pub enthalpy: f64,
    /// d(total entropy)/dX, J/K per unit of X.
    pub entropy: f64,
}

impl Derivative {
    /// Shapes the vectors for `np` phases of `nc` components, reusing their storage.
    fn shape(&mut self, np: usize, nc: usize) {
        self.phase_amounts.resize(np, 0.0);
        self.compositions.resize_with(np, Vec::new);
        for c in &mut self.compositions {
            c.resize(nc, 0.0);
        }
    }
}

/// Derivatives of a converged PT flash result along the equilibrium surface (the phases stay
/// in equilibrium while T, p or the feed change), from [`flash_sensitivities`] or
/// [`SensitivityWork::compute`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct FlashSensitivities {
    /// ∂/∂T at fixed p and feed.
    pub temperature: Derivative,
    /// ∂/∂p at fixed T and feed.
    pub pressure: Derivative,
    /// ∂/∂n_j at fixed T, p and the other feed amounts, one per component.
    pub feed: Vec<Derivative>,
    /// Total feed amount of the result, mol.
    pub total_amount: f64,
    /// Total volume of the result (all phases), m3.
    pub total_volume: f64,
}

impl FlashSensitivities {
    /// Equilibrium isobaric heat capacity (dH/dT)_{p,n} / n, J/(mol K): the frozen heat
    /// capacity of the phases plus the latent heat of the phase change with temperature.
    pub fn equilibrium_heat_capacity(&self) -> f64 {
        self.temperature.enthalpy / self.total_amount
    }

    /// Equilibrium isothermal compressibility −(1/V)(dV/dp)_{T,n}, 1/Pa, including the
    /// volume change by phase change.
    pub fn equilibrium_isothermal_compressibility(&self) -> f64 {
        -self.pressure.volume / self.total_volume
    }

    /// Equilibrium isobaric thermal expansion (1/V)(dV/dT)_{p,n}, 1/K.
    pub fn equilibrium_thermal_expansion(&self) -> f64 {
        self.temperature.volume / self.total_volume
    }

    /// Equilibrium Joule–Thomson coefficient (∂T/∂p)_{H,n} = −(dH/dp)_T/(dH/dT)_p, K/Pa.
    pub fn equilibrium_joule_thomson(&self) -> f64 {
        -self.pressure.enthalpy / self.temperature.enthalpy
    }

    /// Shapes every vector for `np` phases of `nc` components, reusing storage.
    fn shape(&mut self, np: usize, nc: usize) {
        self.temperature.shape(np, nc);
        self.pressure.shape(np, nc);
        self.feed.resize_with(nc, Derivative::default);
        for d in &mut self.feed {
            d.shape(np, nc);
        }
    }
}

/// Frozen (fixed-amount) derivatives of one phase, totals in SI units.
#[derive(Debug, Clone, Copy, Default)]
struct Frozen {
    /// (∂V/∂T)_{p,n}, m3/K.
    v_t: f64,
    /// (∂V/∂p)_{T,n}, m3/Pa.
    v_p: f64,
    /// Total volume, m3.
    v: f64,
    /// C_p, J/K.
    cp: f64,
}

/// Which variable a right-hand side belongs to.
#[derive(Debug, Clone, Copy)]
enum Var {
    T,
    P,
    Feed(usize),
}

/// Reusable storage of [`SensitivityWork::compute`]: after the first call with a given
/// number of components and phases, further calls allocate nothing.
#[derive(Debug, Clone, Default)]
pub struct SensitivityWork {
    fw: FugacityWork,
    /// ln φ of each phase with all derivatives.
    phi: Vec<LnPhi>,
    frozen: Vec<Frozen>,
    /// Component amounts of each phase, `n[k * nc + i]`, mol.
    n: Vec<f64>,
    /// Phase amounts, mol.
    ntot: Vec<f64>,
    /// Residual partial molar enthalpies −RT² ∂ln φ_i/∂T, J/mol, per phase.
    h_res: Vec<f64>,
    /// Partial molar entropies without the composition-independent ideal part
    /// −R ln x_i − R ln φ_i − RT ∂ln φ_i/∂T, J/(mol K), per phase.
    s_res: Vec<f64>,
    /// Ideal-gas h_i(T), J/mol.
    h_ig: Vec<f64>,
    /// Ideal-gas s_i(T, p°) − R ln(p/p°), J/(mol K).
    s_ig: Vec<f64>,
    /// Ideal-gas c_p,i(T), J/(mol K).
    cp_ig: Vec<f64>,
    /// For each component, the phase whose amount of it follows from the mass balance.
    dep: Vec<usize>,
    /// (component, phase) of each unknown, in order: component-major, phases ascending.
    unk: Vec<(usize, usize)>,
    /// Φ^k_ij = (∂ln f^k_i/∂n^k_j)_{T,p}, `phif[(k * nc + i) * nc + j]`, 1/mol.
    phif: Vec<f64>,
    /// Scaled Hessian, then its Cholesky factor, row-major d×d.
    hess: Vec<f64>,
    /// Diagonal scaling 1/√(1/n^k_i + 1/n^{L_i}_i).
    scale: Vec<f64>,
    /// Right-hand sides, then solutions, row-major d × (nc + 2): column 0 for T, 1 for p,
    /// 2 + j for the feed amount n_j.
    rhs: Vec<f64>,
    /// Amount changes of every phase for the current variable, `dn[k * nc + i]`.
    dn: Vec<f64>,
    min_pivot: f64,
    nc: usize,
    np: usize,
}

impl SensitivityWork {
    /// Storage for `nc` components (grown automatically if used with another size).
    pub fn new(nc: usize) -> Self {
        let mut w = SensitivityWork::default();
        w.resize(nc, 2);
        w
    }

    /// The smallest Cholesky pivot of the scaled Hessian (see [`MIN_RELATIVE_PIVOT`]) of the last
    /// successful [`compute`](Self::compute): a measure of the distance to a singular point
    /// (dimensionless; 1 for a single phase, which has no Hessian).
    pub fn min_pivot(&self) -> f64 {
        self.min_pivot
    }

    fn resize(&mut self, nc: usize, np: usize) {
        if self.nc == nc && self.np == np && !self.phi.is_empty() {
            return;
        }
        self.nc = nc;
        self.np = np;
        if self.fw.derivs.f_n.len() != nc {
            self.fw = FugacityWork::new(nc);
        }
        self.phi.resize_with(np, LnPhi::default);
        for p in &mut self.phi {
            if p.ln_phi.len() != nc {
                *p = LnPhi::new(nc);
            }
        }
        self.frozen.resize(np, Frozen::default());
        let d = np.saturating_sub(1) * nc;
        for (v, len) in [
            (&mut self.n, np * nc),
            (&mut self.ntot, np),
            (&mut self.h_res, np * nc),
            (&mut self.s_res, np * nc),
            (&mut self.h_ig, nc),
            (&mut self.s_ig, nc),
            (&mut self.cp_ig, nc),
            (&mut self.hess, d * d),
            (&mut self.scale, d),
            (&mut self.rhs, d * (nc + 2)),
            (&mut self.dn, np * nc),
        ] {
            v.clear();
            v.resize(len, 0.0);
        }
        self.dep.resize(nc, 0);
        self.unk.clear();
        self.unk.reserve(d);
        self.phif.clear();
        self.phif.resize(np * nc * nc, 0.0);
    }

    /// Computes the derivatives of the converged flash `result` of `model` into `out`
    /// (storage reused: no allocation once `self` and `out` have seen this number of
    /// components and phases). See [`flash_sensitivities`] for the method and the errors; on
    /// an error the contents of `out` are unspecified.
    ///
    /// ```
    /// use tieline::prelude::*;
    /// use tieline::equilibrium::{FlashContext, FlashSensitivities, SensitivityWork};
    ///
    /// let bank = DataBank::embedded();
    /// let model = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"])?)?;
    /// let mut ctx = FlashContext::new(2);
    /// let mut work = SensitivityWork::new(2);
    /// let mut s = FlashSensitivities::default();
    /// for t in [250.0, 255.0, 260.0] {
    ///     let r = ctx.flash(&model, t, 3.0e6, &[0.6, 0.4], &FlashOptions::default())?;
    ///     work.compute(&model, r, &mut s)?;
    ///     // Mass balance: the phase amounts change by opposite amounts (mol/K).
    ///     let d = &s.temperature.phase_amounts;
    ///     assert!((d.iter().sum::<f64>()).abs() < 1e-12);
    /// }
    /// # Ok::<(), tieline::Error>(())
    /// ```
    pub fn compute<M: FluidModel + ?Sized>(
        &mut self,
        model: &M,
        result: &FlashResult,
        out: &mut FlashSensitivities,
    ) -> Result<()> {
        let (t, p) = (result.temperature, result.pressure);
        check::temperature(t)?;
        check::pressure(p)?;
        let nc = model.num_components();
        let ntot = check::amounts(&result.feed, nc)?;
        let np = result.phases.len();
        if np == 0 {
            return Err(Error::invalid("result", "the flash result has no phase"));
        }
        if let Some(i) = result.feed.iter().position(|&x| x == 0.0) {
            return Err(Error::NoSolution(format!(
                "component {i} ({}) is absent from the feed: the derivatives with respect to its \
                 amount do not exist there (the entropy of mixing −R ln x_{i} diverges); leave \
                 absent components out of the model",
                model.component_name(i)
            )));
        }
        self.resize(nc, np);
        self.evaluate_phases(model, result, ntot)?;

        // For each component, the phase holding most of it follows from the mass balance, so
        // that the trace amounts (large 1/n^k_i terms) sit only on the Hessian's diagonal.
        self.unk.clear();
        for i in 0..nc {
            let li = (0..np)
                .max_by(|&a, &b| self.n[a * nc + i].total_cmp(&self.n[b * nc + i]))
                .unwrap_or(0);
            self.dep[i] = li;
            self.unk.extend((0..np).filter(|&k| k != li).map(|k| (i, k)));
        }
        // Φ^k_ij = (∂ln φ^k_i/∂n^k_j) + δ_ij/n^k_i − 1/N^k.
        for k in 0..np {
            let inv_n = 1.0 / self.ntot[k];
            let block = &mut self.phif[k * nc * nc..(k + 1) * nc * nc];
            for (b, dn) in block.iter_mut().zip(&self.phi[k].dn) {
                *b = dn - inv_n;
            }
            for i in 0..nc {
                block[i * nc + i] += 1.0 / self.n[k * nc + i];
            }
        }
        self.check_equilibrium(t, p)?;
        self.min_pivot = 1.0;
        if np > 1 {
            self.factorise(t, p)?;
        }

        out.shape(np, nc);
        out.total_amount = ntot;
        out.total_volume = self.frozen.iter().map(|f| f.v).sum();
        self.solve_all();
        self.write(Var::T, t, &mut out.temperature);
        self.write(Var::P, t, &mut out.pressure);
        for j in 0..nc {
            self.write(Var::Feed(j), t, &mut out.feed[j]);
        }
        let finite = |d: &Derivative| {
            d.volume.is_finite()
                && d.enthalpy.is_finite()
                && d.entropy.is_finite()
                && d.phase_amounts.iter().all(|x| x.is_finite())
                && d.compositions.iter().flatten().all(|x| x.is_finite())
        };
        if !(finite(&out.temperature) && finite(&out.pressure) && out.feed.iter().all(finite)) {
            return Err(Error::NoSolution(format!(
                "the derivatives of the equilibrium state at T = {t} K, p = {p} Pa are not \
                 finite (smallest relative pivot of the Gibbs-energy Hessian {:.3e})",
                self.min_pivot
            )));
        }
        Ok(())
    }

    /// ln φ with all derivatives, frozen derivatives and partial molar quantities of every
    /// phase, evaluated on the phase's own volume.
    fn evaluate_phases<M: FluidModel + ?Sized>(&mut self, model: &M, result: &FlashResult, feed: f64) -> Result<()> {
        let (t, p) = (result.temperature, result.pressure);
        let nc = self.nc;
        let rt = R * t;
        for i in 0..nc {
            let ig = model.ideal_gas(t, i)?;
            self.h_ig[i] = ig.h;
            self.s_ig[i] = ig.s - R * (p / P_STANDARD).ln();
            self.cp_ig[i] = ig.cp;
        }
        for (k, ph) in result.phases.iter().enumerate() {
            if ph.composition.len() != nc {
                return Err(Error::invalid(
                    "result",
                    format!(
                        "phase {k} has {} mole fractions for a model of {nc} components",
                        ph.composition.len()
                    ),
                ));
            }
            if !(ph.amount > 0.0 && ph.amount.is_finite() && ph.molar_volume > 0.0 && ph.molar_volume.is_finite()) {
                return Err(Error::invalid(
                    "result",
                    format!(
                        "phase {k} has amount {} mol and molar volume {} m3/mol; positive finite \
                         values are required",
                        ph.amount, ph.molar_volume
                    ),
                ));
            }
            let nk = &mut self.n[k * nc..(k + 1) * nc];
            for i in 0..nc {
                let x = ph.composition[i];
                if !(x > 0.0) || !x.is_finite() {
                    return Err(Error::NoSolution(format!(
                        "component {i} has mole fraction {x} in phase {k}: the derivatives of the \
                         equilibrium state need every component present in every phase"
                    )));
                }
                nk[i] = x * ph.amount;
            }
            let nt: f64 = nk.iter().sum();
            self.ntot[k] = nt;
            let v = ph.molar_volume * ph.amount;
            evaluate_at_volume(model, t, p, v, nk, nt, Need::ALL, &mut self.fw, &mut self.phi[k])?;
            let d = &self.fw.derivs;
            // The volume must solve p(T, V, n) = p: otherwise the result is not of this model.
            let p_calc = nt * rt / v - rt * d.f_v;
            if !((p_calc - p).abs() <= 1e-6 * p) {
                return Err(Error::invalid(
                    "result",
                    format!(
                        "phase {k}: the model gives p = {p_calc} Pa at the phase's volume, not the \
                         result's {p} Pa; pass a flash result of this model"
                    ),
                ));
            }
            let p_v = -rt * d.f_vv - nt * rt / (v * v);
            let p_t = p / t - rt * d.f_tv;
            if !(p_v < 0.0) {
                return Err(Error::NoSolution(format!(
                    "phase {k} at T = {t} K, p = {p} Pa is at or beyond its limit of mechanical \
                     stability ((∂p/∂V)_T = {p_v} Pa/m3): the derivatives do not exist there"
                )));
            }
            let cv_r = -rt * (2.0 * d.f_t + t * d.f_tt);
            let cp_ig: f64 = (0..nc).map(|i| nk[i] * self.cp_ig[i]).sum();
            let v_t = -p_t / p_v;
            self.frozen[k] = Frozen {
                v_t,
                v_p: 1.0 / p_v,
                v,
                cp: cp_ig + cv_r - t * p_t * p_t / p_v - nt * R,
            };
            let phi = &self.phi[k];
            for i in 0..nc {
                let h = -rt * t * phi.dt[i];
                self.h_res[k * nc + i] = h;
                self.s_res[k * nc + i] = -R * (ph.composition[i].ln() + phi.ln_phi[i]) + h / t;
            }
        }
        // Mass balance of the phases against the feed.
        for i in 0..nc {
            let s: f64 = (0..self.np).map(|k| self.n[k * nc + i]).sum();
            if !((s - result.feed[i]).abs() <= 1e-8 * feed) {
                return Err(Error::invalid(
                    "result",
                    format!(
                        "the phases hold {s} mol of component {i} but the feed {} mol; pass a \
                         converged flash result",
                        result.feed[i]
                    ),
                ));
            }
        }
        Ok(())
    }

    /// Equal fugacities of every component in every phase, to [`MAX_RESIDUAL`].
    fn check_equilibrium(&self, t: f64, p: f64) -> Result<()> {
        let nc = self.nc;
        let lnf = |k: usize, i: usize| (self.n[k * nc + i] / self.ntot[k]).ln() + self.phi[k].ln_phi[i];
        let mut worst = 0.0f64;
        for i in 0..nc {
            for k in 0..self.np {
                worst = worst.max((lnf(k, i) - lnf(self.dep[i], i)).abs());
            }
        }
        if !(worst <= MAX_RESIDUAL) {
            return Err(Error::invalid(
                "result",
                format!(
                    "the phases at T = {t} K, p = {p} Pa are not in equilibrium (max |Δ ln f| = \
                     {worst:.3e} > {MAX_RESIDUAL:e}); pass a converged flash result of this model"
                ),
            ));
        }
        Ok(())
    }

    /// Builds the Hessian of G/RT in the unknown amounts, scales it to unit diagonal and
    /// factorises it, recording the smallest pivot.
    ///
    /// Unknown r = (i, k): the amount of component i in phase k ≠ L_i, at index
    /// i (P − 1) + (k or k − 1). With g_(k,i) = ln f^k_i − ln f^{L_i}_i = ∂(G/RT)/∂n^k_i,
    /// H_(k,i),(m,j) = Φ^k_ij (δ_km − [k = L_j]) − Φ^{L_i}_ij (δ_{L_i m} − [L_i = L_j]).
    fn factorise(&mut self, t: f64, p: f64) -> Result<()> {
        let nc = self.nc;
        let nf = self.np - 1;
        let d = nf * nc;
        let phif = &self.phif;
        for (r, &(i, k)) in self.unk.iter().enumerate() {
            let li = self.dep[i];
            let row_k = &phif[(k * nc + i) * nc..(k * nc + i + 1) * nc];
            let row_l = &phif[(li * nc + i) * nc..(li * nc + i + 1) * nc];
            let hrow = &mut self.hess[r * d..(r + 1) * d];
            for (h, &(j, m)) in hrow.iter_mut().zip(&self.unk) {
                let lj = self.dep[j];
                let a = f64::from(u8::from(k == m)) - f64::from(u8::from(k == lj));
                let b = f64::from(u8::from(li == m)) - f64::from(u8::from(li == lj));
                *h = a * row_k[j] - b * row_l[j];
            }
        }
        // Scale by the ideal-solution part of the diagonal, 1/n^k_i + 1/n^{L_i}_i, which is
        // free of cancellation: the pivots then measure the curvature of G relative to that of
        // ideal mixing (a pure substance split between two phases gives zero, not round-off
        // scaled up to one).
        for (r, &(i, k)) in self.unk.iter().enumerate() {
            let ideal = 1.0 / self.n[k * nc + i] + 1.0 / self.n[self.dep[i] * nc + i];
            let h = self.hess[r * d + r];
            if !(h > 0.0) || !h.is_finite() || !ideal.is_finite() {
                return Err(self.singular(t, p, h / ideal));
            }
            self.scale[r] = 1.0 / ideal.sqrt();
        }
        for r in 0..d {
            for c in 0..d {
                self.hess[r * d + c] *= self.scale[r] * self.scale[c];
            }
        }
        match cholesky_min_pivot(&mut self.hess, d) {
            Ok(min) => {
                self.min_pivot = min;
                Ok(())
            }
            Err(piv) => Err(self.singular(t, p, piv)),
        }
    }

    fn singular(&self, t: f64, p: f64, pivot: f64) -> Error {
        Error::NoSolution(format!(
            "the derivatives of the equilibrium state do not exist at T = {t} K, p = {p} Pa: the \
             Gibbs-energy Hessian of the {}-phase split is singular to working precision \
             (smallest relative Cholesky pivot {pivot:.3e} < {MIN_RELATIVE_PIVOT:e}); a critical \
             point, a limit of stability, or a pure substance split between phases",
            self.np
        ))
    }

    /// Builds the nc + 2 right-hand sides and solves them with the one factor.
    fn solve_all(&mut self) {
        let nc = self.nc;
        let d = (self.np - 1) * nc;
        let m = nc + 2;
        if d == 0 {
            return;
        }
        for (r, &(i, k)) in self.unk.iter().enumerate() {
            let li = self.dep[i];
            let (pk, pl) = (&self.phi[k], &self.phi[li]);
            let sc = self.scale[r];
            let row = &mut self.rhs[r * m..(r + 1) * m];
            row[0] = -(pk.dt[i] - pl.dt[i]) * sc;
            row[1] = -(pk.dp[i] - pl.dp[i]) * sc;
            // −∂g_(k,i)/∂n_j: the feed change enters phase L_j.
            let row_k = &self.phif[(k * nc + i) * nc..(k * nc + i + 1) * nc];
            let row_l = &self.phif[(li * nc + i) * nc..(li * nc + i + 1) * nc];
            for (j, b) in row[2..].iter_mut().enumerate() {
                let lj = self.dep[j];
                let mut v = 0.0;
                if k == lj {
                    v -= row_k[j];
                }
                if li == lj {
                    v += row_l[j];
                }
                *b = v * sc;
            }
        }
        cholesky_solve_many(&self.hess, d, &mut self.rhs[..d * m], m);
    }

    /// Writes the derivative along `var` from the solved amount changes.
    fn write(&mut self, var: Var, t: f64, out: &mut Derivative) {
        let nc = self.nc;
        let m = nc + 2;
        let col = match var {
            Var::T => 0,
            Var::P => 1,
            Var::Feed(j) => 2 + j,
        };
        // Amount changes: unknowns from the solve, each component's dependent phase by mass
        // balance.
        for (i, &li) in self.dep.iter().enumerate() {
            self.dn[li * nc + i] = match var {
                Var::Feed(j) if j == i => 1.0,
                _ => 0.0,
            };
        }
        for (r, &(i, k)) in self.unk.iter().enumerate() {
            let v = self.rhs[r * m + col] * self.scale[r];
            self.dn[k * nc + i] = v;
            self.dn[self.dep[i] * nc + i] -= v;
        }
        let (mut vol, mut h, mut s) = (0.0, 0.0, 0.0);
        for k in 0..self.np {
            let dn = &self.dn[k * nc..(k + 1) * nc];
            let nk = &self.n[k * nc..(k + 1) * nc];
            let dnt: f64 = dn.iter().sum();
            out.phase_amounts[k] = dnt;
            let inv = 1.0 / self.ntot[k];
            for ((c, &dni), &nki) in out.compositions[k].iter_mut().zip(dn).zip(nk) {
                *c = (dni - nki * inv * dnt) * inv;
            }
            let f = &self.frozen[k];
            match var {
                Var::T => {
                    vol += f.v_t;
                    h += f.cp;
                    s += f.cp / t;
                }
                Var::P => {
                    vol += f.v_p;
                    h += f.v - t * f.v_t;
                    s -= f.v_t;
                }
                Var::Feed(_) => {}
            }
            let (vbar, hr, sr) = (
                &self.phi[k].vbar,
                &self.h_res[k * nc..(k + 1) * nc],
                &self.s_res[k * nc..(k + 1) * nc],
            );
            for (i, &dni) in dn.iter().enumerate() {
                vol += vbar[i] * dni;
                h += hr[i] * dni;
                s += sr[i] * dni;
            }
        }
        // The ideal-gas parts are the same in every phase: only the feed change adds them.
        if let Var::Feed(j) = var {
            h += self.h_ig[j];
            s += self.s_ig[j];
        }
        out.volume = vol;
        out.enthalpy = h;
        out.entropy = s;
    }
}

/// Solves L Lᵀ X = B in place for the `m` columns of B (row-major n × m) with the factor
/// of [`cholesky_min_pivot`]; the inner loops run along the rows of B.
fn cholesky_solve_many(l: &[f64], n: usize, b: &mut [f64], m: usize) {
    for i in 0..n {
        let (done, rest) = b.split_at_mut(i * m);
        let bi = &mut rest[..m];
        for k in 0..i {
            let f = l[i * n + k];
            for (x, y) in bi.iter_mut().zip(&done[k * m..(k + 1) * m]) {
                *x -= f * y;
            }
        }
        let inv = 1.0 / l[i * n + i];
        bi.iter_mut().for_each(|x| *x *= inv);
    }
    for i in (0..n).rev() {
        let (head, tail) = b.split_at_mut((i + 1) * m);
        let bi = &mut head[i * m..];
        for k in i + 1..n {
            let f = l[k * n + i];
            for (x, y) in bi.iter_mut().zip(&tail[(k - i - 1) * m..(k - i) * m]) {
                *x -= f * y;
            }
        }
        let inv = 1.0 / l[i * n + i];
        bi.iter_mut().for_each(|x| *x *= inv);
    }
}

/// In-place Cholesky factorisation of a scaled symmetric matrix (lower triangle
/// overwritten by L). Returns the smallest pivot (the squared diagonal of L before the square
/// root), or `Err(pivot)` with the first pivot below [`MIN_RELATIVE_PIVOT`].
fn cholesky_min_pivot(a: &mut [f64], n: usize) -> std::result::Result<f64, f64> {
    let mut min = f64::INFINITY;
    for j in 0..n {
        let mut d = a[j * n + j];
        for k in 0..j {
            d -= a[j * n + k] * a[j * n + k];
        }
        if !(d >= MIN_RELATIVE_PIVOT) || !d.is_finite() {
            return Err(d);
        }
        min = min.min(d);
        let d = d.sqrt();
        a[j * n + j] = d;
        for i in j + 1..n {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= a[i * n + k] * a[j * n + k];
            }
            a[i * n + j] = s / d;
        }
    }
    Ok(if n == 0 { 1.0 } else { min })
}

/// Derivatives of the converged flash `result` of `model` with respect to T, p and each feed
/// amount, at constant values of the others, along the equilibrium surface (see the module
/// docs for the method). One, two or three fluid phases.
///
/// Errors: [`Error::InvalidInput`] when `result` is not a converged equilibrium of `model`
/// (sizes, mass balance, pressure of the phase volumes, or fugacity residual above 1e-6);
/// [`Error::NoSolution`] where the derivatives do not exist — a singular or nearly singular
/// Gibbs-energy Hessian (critical point, limit of stability, pure substance in two phases;
/// the message gives the smallest pivot) or a component absent from the feed;
/// [`Error::OutsideValidity`] outside the range of the ideal-gas heat capacities.
///
/// ```
/// use tieline::prelude::*;
/// use tieline::equilibrium::flash_sensitivities;
///
/// let bank = DataBank::embedded();
/// let model = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "n-butane"])?)?;
/// let r = flash_pt(&model, 300.0, 5.0e6, &[0.5, 0.5], &FlashOptions::default())?;
/// let s = flash_sensitivities(&model, &r)?;
/// // Heating at fixed p boils liquid off: the vapour (listed first) grows.
/// assert!(s.temperature.phase_amounts[0] > 0.0);
/// // The equilibrium heat capacity exceeds the frozen one by the latent-heat term.
/// let frozen = r.mixture_properties(&model)?.cp_frozen;
/// assert!(s.equilibrium_heat_capacity() > frozen);
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn flash_sensitivities<M: FluidModel + ?Sized>(model: &M, result: &FlashResult) -> Result<FlashSensitivities> {
    let mut work = SensitivityWork::new(model.num_components());
    let mut out = FlashSensitivities::default();
    work.compute(model, result, &mut out)?;
    Ok(out)
}
