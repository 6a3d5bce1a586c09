//! Water and steam by IAPWS-95: "Revised Release on the IAPWS Formulation 1995 for the
//! Thermodynamic Properties of Ordinary Water Substance for General and Scientific Use",
//! IAPWS R6-95(2018); W. Wagner, A. Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387–535.
//!
//! The formulation is a dimensionless Helmholtz energy φ(δ, τ) = f/(RT) = φ°(δ, τ) + φ^r(δ, τ),
//! with δ = ρ/ρc and τ = Tc/T (Tc = 647.096 K, ρc = 322 kg/m3, specific gas constant
//! R = 461.51805 J/(kg K)). The ideal-gas part has 8 terms, the residual part 56: 7
//! polynomial, 44 exponential, 3 Gaussian bell-shaped and 2 non-analytic terms that shape
//! the critical region. Every derivative up to second order (φ, φ_δ, φ_δδ, φ_τ, φ_ττ, φ_δτ)
//! is analytic here, including those of the non-analytic terms 55–56. The coefficients are
//! those of the release's Tables 1 and 2 (from memory + recomputed: they reproduce the
//! release's check Tables 6–8 to the printed digits).
//!
//! # Two interfaces
//! * **IAPWS-native**, per kilogram, in the IAPWS-95 reference state (internal energy and
//!   entropy of the saturated liquid at the triple point are zero): [`Iapws95::state_td`],
//!   [`Iapws95::state_tp`], [`Iapws95::density`], [`Iapws95::saturation_at_temperature`],
//!   [`Iapws95::saturation_at_pressure`]. These are what the release's tables check.
//! * **Library (molar)**: [`Iapws95`] implements [`FluidModel`] for one component, "water",
//!   with M = 18.015268 g/mol, so every solver of the library (stability, flash, saturation,
//!   pure-substance phase equilibrium) works with it, and [`PhaseState::properties`](crate::model::PhaseState::properties)
//!   gives molar properties in J/mol, J/(mol K).
//!
//! # Reference state of the molar interface
//! The library's reference (ideal gases at 298.15 K and 1e5 Pa with h = ΔfH°, g = ΔfG°; see
//! [`crate::substance`]) is reached by adding constants to the IAPWS-95 energies:
//! h_molar = M·h_IAPWS + H0 and s_molar = M·s_IAPWS + S0, with H0, S0 ([`library_shift`])
//! chosen so that the IAPWS-95 ideal gas at 298.15 K, 1e5 Pa has h = ΔfH°(H2O, g) =
//! −241.826 kJ/mol and g = ΔfG°(H2O, g) = −228.582 kJ/mol (CODATA/JANAF, published-values
//! §7a, the Gibbs energy from memory). The same constants shift the ice model
//! ([`crate::model::solid::IceIh`]), so water, ice and their Gibbs-energy curves share one
//! reference. Pressures, densities, heat capacities and speeds of sound are unaffected.
//!
//! The molar gas constant of IAPWS-95 (M·R = 8.314371 J/(mol K)) differs from the library's
//! R (CODATA 2018) by 1.1e-5 relative. The molar residual function is written so that the
//! library's generic formulas reproduce IAPWS-95 exactly: F = r·n·φ^r + (r − 1)·n·ln δ with
//! r = M R_IAPWS / R, and the ideal-gas part returned by [`FluidModel::ideal_gas`] is the
//! matching one (see the implementation notes there).
//!
//! # Validity policy
//! IAPWS-95 is valid in the stable fluid region from the melting and sublimation curves to
//! 1273.15 K at pressures up to 1000 MPa (R6-95, Sect. 6, from memory); the release also
//! describes reasonable behaviour of metastable states (supercooled liquid, superheated
//! liquid, supersaturated vapour). This module evaluates for
//! * 130 K ≤ T ≤ 1273.15 K for states of density ρ ≤ ρc (vapour-like),
//! * 200 K ≤ T ≤ 1273.15 K for states of density ρ > ρc (liquid-like; below the melting
//!   temperature these are supercooled-liquid extrapolations, used for Gibbs-energy curves),
//! * 0 < ρ ≤ 1400 kg/m3, and p ≤ 1000 MPa wherever a pressure is an input,
//!
//! and returns [`Error::OutsideValidity`] elsewhere. The lower temperature limits are the
//! library's choice (the ideal-gas part is fitted from 130 K; 200 K lies below the lowest
//! homogeneous-nucleation temperature of supercooled water); common practice, no source.

use super::fugacity::RootChoice;
use super::{CriticalConstants, FluidModel, HelmholtzDerivs, Need, VolumeRoots};
use crate::error::{Error, Result, check, num};
use crate::substance::{IdealGasSpecies, P_STANDARD, R, T_REFERENCE};
use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

/// Critical temperature of IAPWS-95, K (R6-95 Eq. 1).
pub const TC: f64 = 647.096;
/// Critical density of IAPWS-95, kg/m3 (R6-95 Eq. 2).
pub const RHOC: f64 = 322.0;
/// Specific gas constant of IAPWS-95, J/(kg K) (R6-95 Eq. 3).
pub const R_SPECIFIC: f64 = 461.518_05;
/// Molar mass of water, kg/mol (R6-95; 18.015268 g/mol).
pub const MOLAR_MASS: f64 = 0.018_015_268;
/// Critical pressure given by IAPWS-95 at (TC, RHOC), Pa (22.064 MPa in the release).
pub const PC: f64 = 22.064e6;
/// Triple-point temperature, K (ITS-90 defining point).
pub const T_TRIPLE: f64 = 273.16;
/// Lowest temperature of evaluation for vapour-like states, K (see the module docs).
pub const T_MIN_VAPOR: f64 = 130.0;
/// Lowest temperature of evaluation for liquid-like states (ρ > ρc), K.
pub const T_MIN_LIQUID: f64 = 200.0;
/// Highest temperature of validity, K.
pub const T_MAX: f64 = 1273.15;
/// Highest pressure of validity, Pa.
pub const P_MAX: f64 = 1000e6;
/// Highest density of evaluation, kg/m3.
pub const RHO_MAX: f64 = 1400.0;

/// Standard enthalpy of formation of H2O(g) at 298.15 K, 1e5 Pa, J/mol (CODATA, equal to
/// JANAF; published-values §7a, from memory).
pub const HF298_GAS: f64 = -241.826e3;
/// Standard Gibbs energy of formation of H2O(g) at 298.15 K, 1e5 Pa, J/mol (JANAF;
/// published-values §7a, from memory, consistency-checked).
pub const GF298_GAS: f64 = -228.582e3;

// ---------------------------------------------------------------------------------------
// Coefficients (R6-95 Tables 1 and 2; published-values Appendix A, from memory + recomputed)
// ---------------------------------------------------------------------------------------

const N0: [f64; 8] = [
    -8.320_446_483_749_7,
    6.683_210_527_593_2,
    3.006_32,
    0.012_436,
    0.973_15,
    1.279_50,
    0.969_56,
    0.248_73,
];
const GAMMA0: [f64; 5] = [1.287_289_67, 3.537_342_22, 7.740_737_08, 9.244_377_96, 27.507_510_5];

/// Terms 1–7: (d, t, n).
const POLY: [(i32, f64, f64); 7] = [
    (1, -0.5, 0.125_335_479_355_23e-1),
    (1, 0.875, 0.789_576_347_228_28e1),
    (1, 1.0, -0.878_032_033_035_61e1),
    (2, 0.5, 0.318_025_093_454_18),
    (2, 0.75, -0.261_455_338_593_58),
    (3, 0.375, -0.781_997_516_879_81e-2),
    (4, 1.0, 0.880_894_931_021_34e-2),
];

/// Terms 8–51: (c, d, t, n).
const EXPO: [(i32, i32, i32, f64); 44] = [
    (1, 1, 4, -0.668_565_723_079_65),
    (1, 1, 6, 0.204_338_109_509_65),
    (1, 1, 12, -0.662_126_050_396_87e-4),
    (1, 2, 1, -0.192_327_211_560_02),
    (1, 2, 5, -0.257_090_430_034_38),
    (1, 3, 4, 0.160_748_684_862_51),
    (1, 4, 2, -0.400_928_289_258_07e-1),
    (1, 4, 13, 0.393_434_226_032_54e-6),
    (1, 5, 9, -0.759_413_770_881_44e-5),
    (1, 7, 3, 0.562_509_793_518_88e-3),
    (1, 9, 4, -0.156_086_522_571_35e-4),
    (1, 10, 11, 0.115_379_964_229_51e-8),
    (1, 11, 4, 0.365_821_651_442_04e-6),
    (1, 13, 13, -0.132_511_800_746_68e-11),
    (1, 15, 1, -0.626_395_869_124_54e-9),
    (2, 1, 7, -0.107_936_009_089_32),
    (2, 2, 1, 0.176_114_910_087_52e-1),
    (2, 2, 9, 0.221_322_951_675_46),
    (2, 2, 10, -0.402_476_697_635_28),
    (2, 3, 10, 0.580_833_999_857_59),
    (2, 4, 3, 0.499_691_469_908_06e-2),
    (2, 4, 7, -0.313_587_007_125_49e-1),
    (2, 4, 10, -0.743_159_297_103_41),
    (2, 5, 10, 0.478_073_299_154_80),
    (2, 6, 6, 0.205_279_408_959_48e-1),
    (2, 6, 10, -0.136_364_351_103_43),
    (2, 7, 10, 0.141_806_344_006_17e-1),
    (2, 9, 1, 0.833_265_048_807_13e-2),
    (2, 9, 2, -0.290_523_360_095_85e-1),
    (2, 9, 3, 0.386_150_855_742_06e-1),
    (2, 9, 4, -0.203_934_865_137_04e-1),
    (2, 9, 8, -0.165_540_500_637_34e-2),
    (2, 10, 6, 0.199_555_719_795_41e-2),
    (2, 10, 9, 0.158_703_083_241_57e-3),
    (2, 12, 8, -0.163_885_683_425_30e-4),
    (3, 3, 16, 0.436_136_157_238_11e-1),
    (3, 4, 22, 0.349_940_054_637_65e-1),
    (3, 4, 23, -0.767_881_978_446_21e-1),
    (3, 5, 23, 0.224_462_773_320_06e-1),
    (4, 14, 10, -0.626_897_104_146_85e-4),
    (6, 3, 50, -0.557_111_185_656_45e-9),
    (6, 6, 44, -0.199_057_183_544_08),
    (6, 6, 46, 0.317_774_973_307_38),
    (6, 6, 50, -0.118_411_824_259_81),
];

/// Terms 52–54: (d, t, n, α, β, γ, ε).
const GAUSS: [(i32, i32, f64, f64, f64, f64, f64); 3] = [
    (3, 0, -0.313_062_603_234_35e2, 20.0, 150.0, 1.21, 1.0),
    (3, 1, 0.315_461_402_377_81e2, 20.0, 150.0, 1.21, 1.0),
    (3, 4, -0.252_131_543_416_95e4, 20.0, 250.0, 1.25, 1.0),
];

/// Terms 55–56: (a, b, B, n, C, D, A, β).
#[allow(clippy::type_complexity)]
const NONANALYTIC: [(f64, f64, f64, f64, f64, f64, f64, f64); 2] = [
    (3.5, 0.85, 0.2, -0.148_746_408_567_24, 28.0, 700.0, 0.32, 0.3),
    (3.5, 0.95, 0.2, 0.318_061_108_784_44, 32.0, 800.0, 0.32, 0.3),
];

/// A dimensionless Helmholtz function and its derivatives in (δ, τ).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct PhiDerivs {
    /// φ.
    pub phi: f64,
    /// ∂φ/∂δ.
    pub d: f64,
    /// ∂²φ/∂δ².
    pub dd: f64,
    /// ∂φ/∂τ.
    pub t: f64,
    /// ∂²φ/∂τ².
    pub tt: f64,
    /// ∂²φ/∂δ∂τ.
    pub dt: f64,
}

/// The ideal-gas part φ°(δ, τ) of IAPWS-95 (R6-95 Eq. 5) with its derivatives.
/// δ = ρ/ρc > 0, τ = Tc/T > 0 (dimensionless); no range check.
pub fn ideal_part(delta: f64, tau: f64) -> PhiDerivs {
    let mut o = PhiDerivs {
        phi: delta.ln() + N0[0] + N0[1] * tau + N0[2] * tau.ln(),
        d: 1.0 / delta,
        dd: -1.0 / (delta * delta),
        t: N0[1] + N0[2] / tau,
        tt: -N0[2] / (tau * tau),
        dt: 0.0,
    };
    for k in 0..5 {
        let (n, g) = (N0[k + 3], GAMMA0[k]);
        let e = (-g * tau).exp();
        let one_m = -(-g * tau).exp_m1(); // 1 − e^{−γτ}
        o.phi += n * one_m.ln();
        o.t += n * g * (1.0 / one_m - 1.0);
        o.tt -= n * g * g * e / (one_m * one_m);
    }
    o
}

/// The τ-dependent part ψ(τ) = φ° − ln δ of the ideal part, with ψ_τ and ψ_ττ.
fn ideal_tau(tau: f64) -> (f64, f64, f64) {
    let o = ideal_part(1.0, tau);
    (o.phi, o.t, o.tt)
}

/// The residual part φ^r(δ, τ) of IAPWS-95 (R6-95 Eq. 6) with its derivatives, all analytic.
///
/// At the critical point itself (δ = 1 and τ = 1 exactly) the second derivatives of the
/// non-analytic terms 55–56 diverge, as the isochoric heat capacity does; there the value
/// and first derivatives are returned exactly (their limits) and `dd`, `tt`, `dt` are
/// infinite: the property functions of this module reject such a state with
/// [`Error::NoSolution`]. Everywhere else, including δ = 1 or τ = 1 alone, every
/// derivative is finite and evaluated without division by zero.
pub fn residual_part(delta: f64, tau: f64) -> PhiDerivs {
    let mut o = PhiDerivs::default();
    let ld = delta.ln();
    let lt = tau.ln();
    for &(d, t, n) in &POLY {
        let df = d as f64;
        let v = n * (df * ld + t * lt).exp(); // n δ^d τ^t
        o.phi += v;
        o.d += v * df / delta;
        o.dd += v * df * (df - 1.0) / (delta * delta);
        o.t += v * t / tau;
        o.tt += v * t * (t - 1.0) / (tau * tau);
        o.dt += v * df * t / (delta * tau);
    }
    // δ^c for c = 1, 2, 3, 4, 6 and e^{−δ^c}.
    let dc = [
        0.0,
        delta,
        delta * delta,
        delta * delta * delta,
        delta.powi(4),
        0.0,
        delta.powi(6),
    ];
    let mut ec = [0.0; 7];
    for c in [1usize, 2, 3, 4, 6] {
        ec[c] = (-dc[c]).exp();
    }
    for &(c, d, t, n) in &EXPO {
        let (df, tf, cf) = (d as f64, t as f64, c as f64);
        let dcv = dc[c as usize];
        let v = n * delta.powi(d) * tau.powi(t) * ec[c as usize]; // n δ^d τ^t e^{−δ^c}
        let k = df - cf * dcv;
        o.phi += v;
        o.d += v * k / delta;
        o.dd += v * (k * (k - 1.0) - cf * cf * dcv) / (delta * delta);
        o.t += v * tf / tau;
        o.tt += v * tf * (tf - 1.0) / (tau * tau);
        o.dt += v * k * tf / (delta * tau);
    }
    for &(d, t, n, al, be, ga, ep) in &GAUSS {
        let (df, tf) = (d as f64, t as f64);
        let (xd, xt) = (delta - ep, tau - ga);
        let v = n * delta.powi(d) * tau.powi(t) * (-al * xd * xd - be * xt * xt).exp();
        let gd = df / delta - 2.0 * al * xd;
        let gt = tf / tau - 2.0 * be * xt;
        o.phi += v;
        o.d += v * gd;
        o.dd += v * (gd * gd - df / (delta * delta) - 2.0 * al);
        o.t += v * gt;
        o.tt += v * (gt * gt - tf / (tau * tau) - 2.0 * be);
        o.dt += v * gd * gt;
    }
    let dm = delta - 1.0;
    let dm2 = dm * dm;
    let tm = tau - 1.0;
    for &(a, b, bb, n, cc, dd, aa, beta) in &NONANALYTIC {
        let ib = 1.0 / (2.0 * beta); // exponent 1/(2β)
        // Powers of (δ−1)², written so that none is singular at δ = 1.
        let q1 = if dm2 > 0.0 { dm2.powf(ib - 1.0) } else { 0.0 }; // ((δ−1)²)^{1/(2β)−1}
        let qa1 = if dm2 > 0.0 { dm2.powf(a - 1.0) } else { 0.0 }; // ((δ−1)²)^{a−1}
        let theta = -tm + aa * dm2 * q1; // (1 − τ) + A((δ−1)²)^{1/(2β)}
        let big = theta * theta + bb * dm2 * qa1; // Δ
        let psi = (-cc * dm2 - dd * tm * tm).exp();
        let psi_d = -2.0 * cc * dm * psi;
        let psi_dd = (2.0 * cc * dm2 - 1.0) * 2.0 * cc * psi;
        let psi_t = -2.0 * dd * tm * psi;
        let psi_tt = (2.0 * dd * tm * tm - 1.0) * 2.0 * dd * psi;
        let psi_dt = 4.0 * cc * dd * dm * tm * psi;
        if big <= 0.0 {
            // The critical point: Δ = 0, so Δ^b = 0 and every first derivative vanishes.
            o.dd = f64::INFINITY;
            o.tt = f64::INFINITY;
            o.dt = f64::INFINITY;
            continue;
        }
        // Δ_δ = (δ−1)·g with g = Aθ(2/β)((δ−1)²)^{1/(2β)−1} + 2Ba((δ−1)²)^{a−1}.
        let g = aa * theta * (2.0 / beta) * q1 + 2.0 * bb * a * qa1;
        let big_d = dm * g;
        // Δ_δδ = g + (δ−1)²{4Ba(a−1)((δ−1)²)^{a−2} + 2A²(1/β)²(((δ−1)²)^{1/(2β)−1})²
        //        + Aθ(4/β)(1/(2β) − 1)((δ−1)²)^{1/(2β)−2}}, each (δ−1)² absorbed in a power.
        let big_dd = g
            + 4.0 * bb * a * (a - 1.0) * qa1
            + 2.0 * aa * aa / (beta * beta) * dm2 * q1 * q1
            + aa * theta * (4.0 / beta) * (ib - 1.0) * q1;
        let pb = big.powf(b); // Δ^b
        let pb1 = pb / big; // Δ^{b−1}
        let pb2 = pb1 / big; // Δ^{b−2}
        let db_d = b * pb1 * big_d;
        let db_dd = b * (pb1 * big_dd + (b - 1.0) * pb2 * big_d * big_d);
        let db_t = -2.0 * theta * b * pb1;
        let db_tt = 2.0 * b * pb1 + 4.0 * theta * theta * b * (b - 1.0) * pb2;
        let db_dt = -aa * b * (2.0 / beta) * pb1 * dm * q1 - 2.0 * theta * b * (b - 1.0) * pb2 * big_d;
        o.phi += n * pb * delta * psi;
        o.d += n * (pb * (psi + delta * psi_d) + db_d * delta * psi);
        o.dd += n * (pb * (2.0 * psi_d + delta * psi_dd) + 2.0 * db_d * (psi + delta * psi_d) + db_dd * delta * psi);
        o.t += n * delta * (db_t * psi + pb * psi_t);
        o.tt += n * delta * (db_tt * psi + 2.0 * db_t * psi_t + pb * psi_tt);
        o.dt += n
            * (pb * (psi_t + delta * psi_dt)
                + delta * db_d * psi_t
                + db_t * (psi + delta * psi_d)
                + db_dt * delta * psi);
    }
    o
}

/// Properties of water at one state, per kilogram, in the IAPWS-95 reference state
/// (saturated liquid at the triple point: u = 0, s = 0).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SpecificProperties {
    /// Temperature, K.
    pub temperature: f64,
    /// Mass density, kg/m3.
    pub density: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Specific internal energy, J/kg.
    pub internal_energy: f64,
    /// Specific enthalpy, J/kg.
    pub enthalpy: f64,
    /// Specific entropy, J/(kg K).
    pub entropy: f64,
    /// Specific Gibbs energy, J/kg.
    pub gibbs: f64,
    /// Specific Helmholtz energy, J/kg.
    pub helmholtz: f64,
    /// Specific isochoric heat capacity, J/(kg K).
    pub cv: f64,
    /// Specific isobaric heat capacity, J/(kg K).
    pub cp: f64,
    /// Speed of sound, m/s.
    pub speed_of_sound: f64,
    /// Joule–Thomson coefficient (∂T/∂p)_h, K/Pa.
    pub joule_thomson: f64,
    /// Isothermal compressibility −(1/v)(∂v/∂p)_T, 1/Pa.
    pub isothermal_compressibility: f64,
    /// Isobaric expansivity (1/v)(∂v/∂T)_p, 1/K.
    pub thermal_expansion: f64,
}

/// A saturation state of water by IAPWS-95: both coexisting phases at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct WaterSaturation {
    /// Temperature, K.
    pub temperature: f64,
    /// Vapour pressure, Pa.
    pub pressure: f64,
    /// Saturated liquid (per kg, IAPWS-95 reference).
    pub liquid: SpecificProperties,
    /// Saturated vapour (per kg, IAPWS-95 reference).
    pub vapor: SpecificProperties,
    /// Newton iterations of the phase-equilibrium solve (Akasaka's method).
    pub iterations: usize,
    /// Final max(|ΔJ|, |ΔK|) of the equal-pressure and equal-Gibbs-energy conditions
    /// (dimensionless, as p/(ρc R T) and g/(RT)).
    pub residual: f64,
}

impl WaterSaturation {
    /// Clapeyron slope dp/dT = (s'' − s')/(v'' − v') along the saturation curve, Pa/K.
    pub fn clapeyron_slope(&self) -> f64 {
        (self.vapor.entropy - self.liquid.entropy) / (1.0 / self.vapor.density - 1.0 / self.liquid.density)
    }
}

/// The IAPWS-95 model of ordinary water, one component named "water".
///
/// Immutable and stateless; serialises as `{}` (inside [`crate::model::Model`] as
/// `{"model": "iapws95"}`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Iapws95 {}

fn outside(what: &str, value: f64, min: f64, max: f64, detail: &str) -> Error {
    Error::OutsideValidity {
        what: what.into(),
        value,
        min,
        max,
        detail: format!("IAPWS-95: {detail}"),
    }
}

/// Range check of a (T, ρ) state under the validity policy of the module docs.
fn check_td(t: f64, rho: f64) -> Result<()> {
    check::temperature(t)?;
    if !(rho.is_finite() && rho > 0.0) {
        return Err(Error::invalid(
            "density",
            format!("{rho} kg/m3; a finite value > 0 is required", rho = num(rho)),
        ));
    }
    if rho > RHO_MAX {
        return Err(outside(
            "density",
            rho,
            0.0,
            RHO_MAX,
            "density above the evaluation limit",
        ));
    }
    let tmin = if rho > RHOC { T_MIN_LIQUID } else { T_MIN_VAPOR };
    if !(tmin..=T_MAX).contains(&t) {
        return Err(outside(
            "temperature",
            t,
            tmin,
            T_MAX,
            if rho > RHOC {
                "liquid-like state (ρ > ρc)"
            } else {
                "vapour-like state (ρ ≤ ρc)"
            },
        ));
    }
    Ok(())
}

fn check_tp(t: f64, p: f64) -> Result<()> {
    check::temperature(t)?;
    check::pressure(p)?;
    if !(T_MIN_VAPOR..=T_MAX).contains(&t) {
        return Err(outside("temperature", t, T_MIN_VAPOR, T_MAX, "temperature range"));
    }
    if p > P_MAX {
        return Err(outside("pressure", p, 0.0, P_MAX, "pressure range"));
    }
    Ok(())
}

/// Pressure and its density derivative at (T, ρ) from φ^r: p = ρRT(1 + δφ_δ),
/// ∂p/∂ρ = RT(1 + 2δφ_δ + δ²φ_δδ). Returns (p, ∂p/∂ρ) in Pa and Pa m3/kg.
fn p_and_dp(t: f64, rho: f64) -> (f64, f64) {
    let delta = rho / RHOC;
    let r = residual_part(delta, TC / t);
    let rt = R_SPECIFIC * t;
    (
        rho * rt * (1.0 + delta * r.d),
        rt * (1.0 + 2.0 * delta * r.d + delta * delta * r.dd),
    )
}

/// The round-off level of p(T, ρ), Pa: the pressure of a dense fluid is a small difference of
/// terms of order ρRT·100 (the sum in δφ^r_δ), so it is known only to ~1e-13·ρRT; 1e-10·ρRT
/// bounds it with a margin (a density error of < 1e-10 relative for a liquid).
fn pressure_noise(t: f64, rho: f64) -> f64 {
    1e-10 * rho * R_SPECIFIC * t
}

/// Constants (H0 in J/mol, S0 in J/(mol K)) that map molar IAPWS-95 energies to the
/// library's reference: h = M·h_IAPWS + H0, s = M·s_IAPWS + S0 (see the module docs).
pub fn library_shift() -> (f64, f64) {
    static SHIFT: OnceLock<(f64, f64)> = OnceLock::new();
    *SHIFT.get_or_init(|| {
        // The library ideal gas of this model at 298.15 K, 1e5 Pa without shift (see
        // `FluidModel::ideal_gas` below) must equal ΔfH° and s° = (ΔfH° − ΔfG°)/298.15 K.
        let (h, s, _) = unshifted_ideal_gas(T_REFERENCE);
        (HF298_GAS - h, (HF298_GAS - GF298_GAS) / T_REFERENCE - s)
    })
}

/// Molar ideal-gas (h, s at 1e5 Pa, cp) of the library-consistent ideal part, before the
/// reference shift. With ψ(τ) = φ° − ln δ, R95 = M·R_IAPWS and R the library constant:
/// g°(T) = R95 T ψ + R T (1 + c0 − ln T), c0 = ln(M p°/(ρc R)), which makes
/// A = A°(library) + R T F equal to the IAPWS-95 Helmholtz energy (molar) exactly.
fn unshifted_ideal_gas(t: f64) -> (f64, f64, f64) {
    let r95 = MOLAR_MASS * R_SPECIFIC;
    let tau = TC / t;
    let (psi, psi_t, psi_tt) = ideal_tau(tau);
    let c0 = (MOLAR_MASS * P_STANDARD / (RHOC * R)).ln();
    let h = r95 * t * tau * psi_t + R * t;
    let s = -r95 * (psi - tau * psi_t) - R * (c0 - t.ln());
    let cp = -r95 * tau * tau * psi_tt + R;
    (h, s, cp)
}

impl Iapws95 {
    /// The model (stateless).
    pub fn new() -> Self {
        Iapws95 {}
    }

    /// All properties at temperature T (K) and mass density ρ (kg/m3), per kg in the IAPWS-95
    /// reference state (R6-95 Table 3 relations). Fails with [`Error::OutsideValidity`]
    /// outside the module's validity policy, and with [`Error::NoSolution`] at the critical
    /// point itself, where c_v diverges.
    pub fn state_td(&self, t: f64, rho: f64) -> Result<SpecificProperties> {
        check_td(t, rho)?;
        let delta = rho / RHOC;
        let tau = TC / t;
        let o = ideal_part(delta, tau);
        let r = residual_part(delta, tau);
        if !(r.dd.is_finite() && r.tt.is_finite() && r.dt.is_finite()) {
            return Err(Error::NoSolution(format!(
                "T = {t} K, ρ = {rho} kg/m3 is the critical point of IAPWS-95, where the heat \
                 capacities diverge and the speed of sound vanishes",
                t = num(t),
                rho = num(rho)
            )));
        }
        let rt = R_SPECIFIC * t;
        let a1 = 1.0 + delta * r.d; // p/(ρRT)
        let a2 = 1.0 + 2.0 * delta * r.d + delta * delta * r.dd; // (∂p/∂ρ)_T/(RT)
        let a3 = 1.0 + delta * r.d - delta * tau * r.dt; // (∂p/∂T)_ρ/(ρR)
        let ctt = -tau * tau * (o.tt + r.tt); // c_v/R
        let p = rho * rt * a1;
        let u = rt * tau * (o.t + r.t);
        let s = R_SPECIFIC * (tau * (o.t + r.t) - o.phi - r.phi);
        let h = u + p / rho;
        let a = rt * (o.phi + r.phi);
        let g = a + p / rho;
        let cv = R_SPECIFIC * ctt;
        if !(a2 > 0.0) || !(ctt > 0.0) {
            return Err(Error::NoSolution(format!(
                "T = {t} K, ρ = {rho} kg/m3 is inside the spinodal of IAPWS-95 \
                 (mechanically or thermally unstable: (∂p/∂ρ)_T/(RT) = {a2}, c_v/R = {ctt})",
                t = num(t),
                rho = num(rho)
            )));
        }
        let cp = cv + R_SPECIFIC * a3 * a3 / a2;
        let w2 = rt * (a2 + a3 * a3 / ctt);
        // μ_JT = −(δφ_δ + δ²φ_δδ + δτφ_δτ)/((1 + δφ_δ − δτφ_δτ)² − τ²(φ°_ττ+φ_ττ)(1 + 2δφ_δ + δ²φ_δδ))/(Rρ)
        let jt_num = -(delta * r.d + delta * delta * r.dd + delta * tau * r.dt);
        let jt_den = a3 * a3 + ctt * a2;
        let dp_drho = rt * a2;
        let dp_dt = rho * R_SPECIFIC * a3;
        let out = SpecificProperties {
            temperature: t,
            density: rho,
            pressure: p,
            internal_energy: u,
            enthalpy: h,
            entropy: s,
            gibbs: g,
            helmholtz: a,
            cv,
            cp,
            speed_of_sound: w2.sqrt(),
            joule_thomson: jt_num / jt_den / (R_SPECIFIC * rho),
            isothermal_compressibility: 1.0 / (rho * dp_drho),
            thermal_expansion: dp_dt / (rho * dp_drho),
        };
        if [
            out.pressure,
            out.enthalpy,
            out.entropy,
            out.cp,
            out.speed_of_sound,
            out.joule_thomson,
        ]
        .iter()
        .any(|x| !x.is_finite())
        {
            return Err(Error::NoSolution(format!(
                "non-finite IAPWS-95 properties at T = {t} K, ρ = {rho} kg/m3",
                t = num(t),
                rho = num(rho)
            )));
        }
        Ok(out)
    }

    /// Pressure at (T (K), ρ (kg/m3)), Pa. Same checks as [`Iapws95::state_td`].
    pub fn pressure(&self, t: f64, rho: f64) -> Result<f64> {
        check_td(t, rho)?;
        Ok(p_and_dp(t, rho).0)
    }

    /// Mass density (kg/m3) at T (K) and p (Pa) on the requested root:
    /// * [`RootChoice::Liquid`]: the liquid-branch root (ρ > ρc below Tc), stable or
    ///   metastable (superheated liquid); [`Error::NoSolution`] beyond the liquid spinodal;
    /// * [`RootChoice::Vapor`]: the vapour-branch root, stable or metastable (supersaturated
    ///   vapour); [`Error::NoSolution`] beyond the vapour spinodal;
    /// * [`RootChoice::Stable`]: of the roots that exist, the one of least Gibbs energy.
    ///
    /// Above Tc there is one root, returned for every choice. Each branch is searched inside
    /// its own bracket, bounded by the spinodal (∂p/∂ρ ≤ 0) and by ρc below Tc, with Newton
    /// steps that fall back to bisection, so no root of the wrong branch can be returned.
    pub fn density(&self, t: f64, p: f64, root: RootChoice) -> Result<f64> {
        check_tp(t, p)?;
        let roots = self.density_roots(t, p)?;
        match (root, roots) {
            (_, (Some(l), None)) => Ok(l),
            (_, (None, Some(v))) => Ok(v),
            (RootChoice::Liquid, (Some(l), Some(_))) => Ok(l),
            (RootChoice::Vapor, (Some(_), Some(v))) => Ok(v),
            (RootChoice::Stable, (Some(l), Some(v))) => {
                let gl = self.gibbs_td(t, l);
                let gv = self.gibbs_td(t, v);
                Ok(if gl <= gv { l } else { v })
            }
            (_, (None, None)) => Err(Error::NoSolution(format!(
                "no IAPWS-95 density root at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            ))),
        }
    }

    /// Liquid-like (or supercritical) and vapour-branch roots of p(T, ρ) = p, kg/m3.
    /// Above Tc the single root is returned as the liquid entry when ρ > ρc, else as vapour.
    fn density_roots(&self, t: f64, p: f64) -> Result<(Option<f64>, Option<f64>)> {
        if t >= TC {
            let rho = self.single_root(t, p)?;
            return Ok(if rho > RHOC {
                (Some(rho), None)
            } else {
                (None, Some(rho))
            });
        }
        let v = self.vapor_root(t, p);
        let l = if t >= T_MIN_LIQUID {
            self.liquid_root(t, p)
        } else {
            None
        };
        Ok((l, v))
    }

    /// Vapour branch below Tc: p(ρ) rises from 0 to the vapour spinodal, where ∂p/∂ρ = 0;
    /// the search is confined to (0, min(spinodal, ρc)).
    fn vapor_root(&self, t: f64, p: f64) -> Option<f64> {
        let mut lo = 0.0;
        let mut hi = RHOC; // upper end: beyond the spinodal or p(hi) > p
        let mut x = p / (R_SPECIFIC * t);
        if x >= hi {
            x = 0.5 * hi;
        }
        let mut best: Option<(f64, f64)> = None;
        let mut lo_state = (0.0, 0.0); // (p, ∂p/∂ρ) at `lo`
        for _ in 0..200 {
            let (px, dpx) = p_and_dp(t, x);
            if !(dpx > 0.0) || !px.is_finite() {
                hi = x; // past the spinodal
            } else {
                let f = px - p;
                if best.is_none_or(|(bf, _)| f.abs() < bf) {
                    best = Some((f.abs(), x));
                }
                if f.abs() <= (1e-15 * p).max(1e-2 * pressure_noise(t, x)) {
                    return Some(x);
                }
                if f < 0.0 {
                    lo = x;
                    lo_state = (px, dpx);
                } else {
                    hi = x;
                }
                let xn = x - f / dpx;
                if xn > lo && xn < hi {
                    if (xn - x).abs() <= 1e-14 * x {
                        return Some(xn);
                    }
                    x = xn;
                    continue;
                }
            }
            if hi - lo <= 1e-11 * hi {
                break;
            }
            // p is concave on the vapour branch: its tangent at `lo` bounds it from above, so
            // if even the tangent stays below p up to `hi`, there is no vapour root.
            if lo > 0.0 && lo_state.0 + lo_state.1 * (hi - lo) < p {
                return None;
            }
            x = 0.5 * (lo + hi);
        }
        // Converged onto the spinodal without reaching p means no vapour root; a residual at
        // the evaluation's noise level (see `liquid_root`) is a root.
        match best {
            Some((bf, bx)) if bf <= pressure_noise(t, bx) => Some(bx),
            _ => None,
        }
    }

    /// Liquid branch below Tc: p(ρ) rises from the liquid spinodal upward; the search is
    /// confined to (max(spinodal, ρc), RHO_MAX] and proceeds downward from dense states.
    fn liquid_root(&self, t: f64, p: f64) -> Option<f64> {
        let mut lo = RHOC; // lower end: below the spinodal or p(lo) < p
        let mut hi = RHO_MAX;
        let (phi, _) = p_and_dp(t, hi);
        if !(phi > p) {
            return None;
        }
        // Start from a dense guess on the stable liquid side: p is convex in ρ there, so
        // Newton from above approaches the root monotonically.
        let mut x = (1.0 - 1e-9) * hi.min(1100.0_f64.max(RHOC * 1.5));
        let mut best: Option<(f64, f64)> = None;
        for _ in 0..200 {
            let (px, dpx) = p_and_dp(t, x);
            if !(dpx > 0.0) || !px.is_finite() {
                lo = x;
            } else {
                let f = px - p;
                if best.is_none_or(|(bf, _)| f.abs() < bf) {
                    best = Some((f.abs(), x));
                }
                if f.abs() <= (1e-15 * p).max(1e-2 * pressure_noise(t, x)) {
                    return Some(x);
                }
                if f > 0.0 {
                    hi = x;
                } else {
                    lo = x;
                }
                let xn = x - f / dpx;
                if xn > lo && xn < hi {
                    if (xn - x).abs() <= 1e-14 * x {
                        return Some(xn);
                    }
                    x = xn;
                    continue;
                }
            }
            if hi - lo <= 1e-11 * hi {
                break;
            }
            x = 0.5 * (lo + hi);
        }
        match best {
            Some((bf, bx)) if bf <= pressure_noise(t, bx) => Some(bx),
            _ => None,
        }
    }

    /// The single root at T ≥ Tc, where p rises monotonically with ρ.
    fn single_root(&self, t: f64, p: f64) -> Result<f64> {
        let (mut lo, mut hi) = (0.0, RHO_MAX);
        let (phi, _) = p_and_dp(t, hi);
        if !(phi > p) {
            return Err(outside(
                "density",
                RHO_MAX,
                0.0,
                RHO_MAX,
                &format!(
                    "p = {p} Pa at T = {t} K needs a density above the evaluation limit",
                    p = num(p),
                    t = num(t)
                ),
            ));
        }
        let mut x = (p / (R_SPECIFIC * t)).min(0.5 * RHO_MAX);
        for _ in 0..300 {
            let (px, dpx) = p_and_dp(t, x);
            let f = px - p;
            if f.abs() <= (1e-15 * p).max(1e-2 * pressure_noise(t, x)) {
                return Ok(x);
            }
            if f < 0.0 {
                lo = x;
            } else {
                hi = x;
            }
            let xn = x - f / dpx;
            if dpx > 0.0 && xn > lo && xn < hi {
                if (xn - x).abs() <= 1e-14 * x {
                    return Ok(xn);
                }
                x = xn;
            } else {
                x = 0.5 * (lo + hi);
            }
            if hi - lo <= 4e-16 * hi {
                return Ok(x);
            }
        }
        Err(Error::not_converged(
            "IAPWS-95 density at (T, p)",
            vec![("Newton–bisection".into(), 300)],
            (hi - lo) / hi,
            1e-14,
        ))
    }

    /// g/(RT) at (T, ρ) without checks (for root selection).
    fn gibbs_td(&self, t: f64, rho: f64) -> f64 {
        let delta = rho / RHOC;
        let r = residual_part(delta, TC / t);
        // g/(RT) = φ° + φ^r + 1 + δφ^r_δ; φ° differs between roots only through ln δ.
        delta.ln() + r.phi + delta * r.d
    }

    /// All properties at T (K) and p (Pa) on the requested root (see [`Iapws95::density`]),
    /// per kg in the IAPWS-95 reference state.
    pub fn state_tp(&self, t: f64, p: f64, root: RootChoice) -> Result<SpecificProperties> {
        let rho = self.density(t, p, root)?;
        self.state_td(t, rho)
    }

    /// The saturation state at T (K), 273.16 K ≤ T < Tc, by Akasaka's method (Y. Akasaka,
    /// "A reliable and useful method to determine the saturation state from Helmholtz energy
    /// equations of state", J. Therm. Sci. Technol. 3 (2008) 442–451): Newton steps in
    /// (δ', δ'') on J(δ') = J(δ''), K(δ') = K(δ''), with J = δ(1 + δφ^r_δ) and
    /// K = δφ^r_δ + φ^r + ln δ (equal pressure and equal Gibbs energy at fixed T).
    ///
    /// The start is the IF97 region-4 vapour pressure (IAPWS R7-97, Eq. 30) and the two
    /// IAPWS-95 density roots there; within 0.5 K of Tc, where those roots may not exist, the
    /// start is the critical scaling form δ = 1 ± 2(1 − T/Tc)^0.35 (common practice, no
    /// source) with a relaxed step. Below 273.16 K the liquid is not stable (ice is), so the
    /// range is [`Error::OutsideValidity`]; at or above Tc, [`Error::NoSolution`].
    pub fn saturation_at_temperature(&self, t: f64) -> Result<WaterSaturation> {
        check::temperature(t)?;
        if t < T_TRIPLE {
            return Err(outside(
                "temperature",
                t,
                T_TRIPLE,
                TC,
                "vapour–liquid saturation exists from the triple point to the critical point",
            ));
        }
        if t >= TC {
            return Err(Error::NoSolution(format!(
                "T = {t} K is at or above the critical temperature {TC} K: no vapour–liquid saturation",
                t = num(t)
            )));
        }
        let tau = TC / t;
        let theta = 1.0 - t / TC;
        let mut start = None;
        if t <= crate::model::if97::T_MAX {
            let p0 = crate::model::if97::saturation_pressure(t.max(crate::model::if97::T_MIN))?;
            if let (Some(l), Some(v)) = (self.liquid_root(t, p0), self.vapor_root(t, p0)) {
                start = Some((l / RHOC, v / RHOC));
            }
        }
        let near_critical = start.is_none() || theta < 1e-3;
        let (mut dl, mut dv) = match start {
            Some(s) if !near_critical => s,
            _ => {
                let w = 2.0 * theta.powf(0.35);
                (1.0 + w, (1.0 - w).max(1e-3))
            }
        };
        let jk = |d: f64| {
            let r = residual_part(d, tau);
            let j = d * (1.0 + d * r.d);
            let k = d * r.d + r.phi + d.ln();
            let j_d = 1.0 + 2.0 * d * r.d + d * d * r.dd;
            let k_d = 2.0 * r.d + d * r.dd + 1.0 / d;
            (j, k, j_d, k_d)
        };
        let max_it = 200;
        let mut resid = f64::INFINITY;
        for it in 1..=max_it {
            let (jl, kl, jdl, kdl) = jk(dl);
            let (jv, kv, jdv, kdv) = jk(dv);
            let dj = jv - jl;
            let dk = kv - kl;
            // J of the vapour carries no cancellation; that of the dense liquid is a small
            // difference of terms of O(100) and is known only to ~1e-12 absolutely, which at
            // low T is 1e-8 of J itself. That noise moves δ' by ΔJ/J_δ' (the liquid is stiff)
            // and δ'' by only ~ΔJ/δ' relative, so the solution (and the vapour pressure, fixed
            // by the equal-Gibbs condition) stays accurate to ~1e-12: convergence is declared
            // when K agrees and the Newton steps have fallen to that round-off level.
            resid = (dj.abs() / jv.abs()).max(dk.abs());
            let det = jdv * kdl - jdl * kdv;
            if !det.is_finite() || det == 0.0 {
                break;
            }
            let gamma = if near_critical && it < 20 { 0.5 } else { 1.0 };
            let mut step_l = gamma / det * (dk * jdv - dj * kdv);
            let mut step_v = gamma / det * (dk * jdl - dj * kdl);
            let at_roundoff =
                step_l.abs() < 1e-12 * dl && step_v.abs() < 1e-11 * dv && dk.abs() < 1e-12 && resid < 1e-6;
            if resid < 1e-13 || at_roundoff {
                if (dl - dv).abs() < 1e-6 {
                    break; // the trivial solution: report below
                }
                let liquid = self.state_td(t, dl * RHOC)?;
                let vapor = self.state_td(t, dv * RHOC)?;
                return Ok(WaterSaturation {
                    temperature: t,
                    // The vapour's pressure is free of the liquid's cancellation error.
                    pressure: vapor.pressure,
                    liquid,
                    vapor,
                    iterations: it,
                    residual: resid,
                });
            }
            // Keep the liquid above and the vapour below the critical density, and positive.
            for _ in 0..60 {
                let nl = dl + step_l;
                let nv = dv + step_v;
                if nl > 1.0 && nv > 0.0 && nv < 1.0 && nl * RHOC < RHO_MAX {
                    break;
                }
                step_l *= 0.5;
                step_v *= 0.5;
            }
            dl += step_l;
            dv += step_v;
        }
        Err(Error::not_converged(
            "IAPWS-95 saturation (Akasaka)",
            vec![("Newton".into(), max_it)],
            resid,
            1e-13,
        ))
    }

    /// The saturation state at p (Pa), 611.655 Pa ≤ p < 22.064 MPa: Newton in T on
    /// ln p_σ(T) = ln p with the exact Clapeyron slope d ln p_σ/dT = Δs/(p Δv), started from
    /// the IF97 saturation temperature (IAPWS R7-97, Eq. 31), each step an Akasaka solve.
    pub fn saturation_at_pressure(&self, p: f64) -> Result<WaterSaturation> {
        check::pressure(p)?;
        let pt = self.saturation_at_temperature(T_TRIPLE)?.pressure;
        if p < pt * (1.0 - 1e-12) {
            return Err(outside(
                "pressure",
                p,
                pt,
                PC,
                "vapour–liquid saturation exists from the triple-point pressure to the critical pressure",
            ));
        }
        if p >= PC {
            return Err(Error::NoSolution(format!(
                "p = {p} Pa is at or above the critical pressure {PC} Pa: no vapour–liquid saturation",
                p = num(p)
            )));
        }
        let mut t = crate::model::if97::saturation_temperature(p.max(crate::model::if97::P_MIN))
            .unwrap_or(T_TRIPLE)
            .clamp(T_TRIPLE, TC - 1e-6);
        let (mut lo, mut hi) = (T_TRIPLE, TC);
        let mut resid = f64::INFINITY;
        for it in 1..=100 {
            let sat = self.saturation_at_temperature(t)?;
            let f = (sat.pressure / p).ln();
            resid = f.abs();
            if resid < 1e-14 {
                return Ok(WaterSaturation {
                    iterations: sat.iterations + it,
                    ..sat
                });
            }
            if f > 0.0 {
                hi = t;
            } else {
                lo = t;
            }
            let slope = sat.clapeyron_slope() / sat.pressure;
            let mut tn = t - f / slope;
            if !(tn > lo && tn < hi) || !tn.is_finite() {
                tn = 0.5 * (lo + hi);
            }
            if (tn - t).abs() < 1e-13 * t && resid < 1e-12 {
                return Ok(sat);
            }
            t = tn;
        }
        Err(Error::not_converged(
            "IAPWS-95 saturation temperature",
            vec![("Newton".into(), 100)],
            resid,
            1e-14,
        ))
    }
}

/// Molar density (mol/m3) of the one-component amounts `n` in total volume `v`.
fn delta_of(v: f64, n: &[f64]) -> f64 {
    n[0] * MOLAR_MASS / (v * RHOC)
}

impl FluidModel for Iapws95 {
    fn num_components(&self) -> usize {
        1
    }

    fn component_name(&self, _i: usize) -> &str {
        "water"
    }

    fn molar_mass(&self, _i: usize) -> f64 {
        MOLAR_MASS
    }

    fn critical_constants(&self, _i: usize) -> CriticalConstants {
        // Acentric factor of water: 0.344 (Poling et al., 5th ed., from memory; estimates only).
        CriticalConstants {
            tc: TC,
            pc: PC,
            acentric: 0.344,
        }
    }

    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
        check::volume(v)?;
        let ntot = check::amounts(n, 1)?;
        out.resize(1);
        let delta = delta_of(v, n);
        check_td(t, delta * RHOC)?;
        let tau = TC / t;
        let r = residual_part(delta, tau);
        if !(r.dd.is_finite() && r.tt.is_finite() && r.dt.is_finite()) {
            return Err(Error::NoSolution(format!(
                "T = {t} K, V = {v} m3 for {ntot} mol is the critical point of IAPWS-95, where \
                 second derivatives of the Helmholtz energy diverge",
                t = num(t),
                v = num(v)
            )));
        }
        // F = r·n·φ^r + (r − 1)·n·ln δ (see the module docs), δ = nM/(Vρc), τ = Tc/T.
        let rr = MOLAR_MASS * R_SPECIFIC / R;
        let rm1 = rr - 1.0;
        out.f = rr * ntot * r.phi + rm1 * ntot * delta.ln();
        out.f_v = -(ntot / v) * (rr * delta * r.d + rm1);
        out.f_vv = (ntot / (v * v)) * (rr * (delta * delta * r.dd + 2.0 * delta * r.d) + rm1);
        let a = 2.0 * r.d + delta * r.dd;
        out.f_n[0] = rr * (r.phi + delta * r.d) + rm1 * (delta.ln() + 1.0);
        out.f_nv[0] = -(1.0 / v) * (rr * delta * a + rm1);
        if need.composition {
            out.f_nn[0] = (rr * delta * a + rm1) / ntot;
        }
        if need.temperature {
            out.f_t = -rr * ntot * r.t * tau / t;
            out.f_tt = rr * ntot * (tau * tau * r.tt + 2.0 * tau * r.t) / (t * t);
            out.f_tv = rr * ntot * r.dt * (delta / v) * (tau / t);
            out.f_nt[0] = -rr * (r.t + delta * r.dt) * tau / t;
        }
        if !out.f.is_finite() || !out.f_v.is_finite() || !out.f_vv.is_finite() {
            return Err(Error::NoSolution(format!(
                "non-finite IAPWS-95 Helmholtz energy at T = {t} K, V = {v} m3",
                t = num(t),
                v = num(v)
            )));
        }
        Ok(())
    }

    fn volume_roots(&self, t: f64, p: f64, n: &[f64], _work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
        check_tp(t, p)?;
        let ntot = check::amounts(n, 1)?;
        let (l, v) = self.density_roots(t, p)?;
        let mut out = VolumeRoots::default();
        for rho in [l, v].into_iter().flatten() {
            out.v[out.count] = ntot * MOLAR_MASS / rho;
            out.count += 1;
        }
        if out.count == 0 {
            return Err(Error::NoSolution(format!(
                "no IAPWS-95 density root at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            )));
        }
        // Ascending volume: the liquid (dense) root first.
        if out.count == 2 && out.v[0] > out.v[1] {
            out.v.swap(0, 1);
        }
        Ok(out)
    }

    fn is_liquid_like(&self, _t: f64, v: f64, n: &[f64]) -> bool {
        // Liquid-like when denser than the critical density; common practice, no source.
        n[0] * MOLAR_MASS / v > RHOC
    }

    fn ideal_gas(&self, t: f64, _i: usize) -> Result<IdealGasSpecies> {
        check::temperature(t)?;
        if !(T_MIN_VAPOR..=T_MAX).contains(&t) {
            return Err(outside("temperature", t, T_MIN_VAPOR, T_MAX, "ideal-gas part"));
        }
        let (h, s, cp) = unshifted_ideal_gas(t);
        let (h0, s0) = library_shift();
        Ok(IdealGasSpecies {
            h: h + h0,
            s: s + s0,
            cp,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nonanalytic_terms_are_finite_on_the_critical_isochore_and_isotherm() {
        for (d, t) in [(1.0, 1.01), (1.0, 0.99), (1.02, 1.0), (0.97, 1.0)] {
            let r = residual_part(d, t);
            for x in [r.phi, r.d, r.dd, r.t, r.tt, r.dt] {
                assert!(x.is_finite(), "({d}, {t}): {r:?}");
            }
        }
        let c = residual_part(1.0, 1.0);
        assert!(c.phi.is_finite() && c.d.is_finite() && c.t.is_finite());
        let m = Iapws95::new();
        assert_eq!(m.state_td(TC, RHOC).unwrap_err().kind(), crate::ErrorKind::NoSolution);
    }

    #[test]
    fn validity_policy() {
        let m = Iapws95::new();
        assert_eq!(
            m.state_td(1300.0, 1.0).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        assert_eq!(
            m.state_td(150.0, 900.0).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        // Vapour at 150 K near its sublimation pressure (~6e-6 Pa) is a valid state.
        assert!(m.state_td(150.0, 1e-10).is_ok());
        assert_eq!(
            m.state_tp(300.0, 2e9, RootChoice::Stable).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        assert_eq!(
            m.state_td(300.0, -1.0).unwrap_err().kind(),
            crate::ErrorKind::InvalidInput
        );
        assert_eq!(
            m.state_td(f64::NAN, 1.0).unwrap_err().kind(),
            crate::ErrorKind::InvalidInput
        );
        assert_eq!(
            m.saturation_at_temperature(700.0).unwrap_err().kind(),
            crate::ErrorKind::NoSolution
        );
    }
}
