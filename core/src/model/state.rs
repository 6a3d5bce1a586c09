//! Phase states and their thermodynamic properties.

use super::FluidModel;
use super::fugacity::{FugacityWork, LnPhi, Need, RootChoice, evaluate_at_volume, ln_phi};
use crate::error::{Error, Result, check, num};
use crate::substance::{P_STANDARD, R};
use serde::{Deserialize, Serialize};

/// The kind of a phase.
///
/// Naming rule: a fluid phase is `Liquid` when the model calls its volume liquid-like
/// ([`FluidModel::is_liquid_like`]; for cubic equations, molar volume below the equation's own
/// v_c/b ratio times the mixture co-volume) and `Vapor` otherwise. In a two-phase fluid
/// result the lighter phase is named `Vapor` and the denser `Liquid`, unless both are
/// liquid-like and the temperature is below the lighter phase's pseudo-critical temperature by
/// Kay's rule (T_pc = Σ x_i Tc_i): then it is a liquid–liquid split, reported as `Liquid2`
/// (the lighter, listed first) and `Liquid`. A multiphase result
/// ([`crate::equilibrium::flash_multiphase`]) names its liquids from the densest: `Liquid`,
/// then `Liquid2`, then `Liquid3`, listed after the vapour by increasing density.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum PhaseKind {
    /// A vapour (or supercritical, gas-like) phase.
    Vapor,
    /// A liquid (or dense, liquid-like) phase.
    Liquid,
    /// A second liquid phase (the lighter of two liquids).
    Liquid2,
    /// A third liquid phase (the lightest of three liquids).
    Liquid3,
    /// A solid phase.
    Solid,
}

impl std::fmt::Display for PhaseKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            PhaseKind::Vapor => "vapor",
            PhaseKind::Liquid => "liquid",
            PhaseKind::Liquid2 => "liquid2",
            PhaseKind::Liquid3 => "liquid3",
            PhaseKind::Solid => "solid",
        })
    }
}

/// A fluid phase at (T, p, n) on a definite volume root. Plain data: properties are computed
/// on request from the model that produced it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PhaseState {
    /// Temperature, K.
    pub t: f64,
    /// Pressure, Pa.
    pub p: f64,
    /// Amounts, mol.
    pub n: Vec<f64>,
    /// Total volume, m3.
    pub v: f64,
    /// The kind of phase (by the rule of [`PhaseKind`]).
    pub kind: PhaseKind,
}

/// Thermodynamic properties of a phase (molar quantities per mol of phase; SI units).
///
/// Energies are absolute in the reference state of [`crate::substance`] (ideal gases at
/// 298.15 K, 1e5 Pa with h = ΔfH°, g = ΔfG°).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Properties {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Mole fractions.
    pub composition: Vec<f64>,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Molar density, mol/m3.
    pub molar_density: f64,
    /// Mass density, kg/m3.
    pub mass_density: f64,
    /// Mean molar mass, kg/mol.
    pub molar_mass: f64,
    /// Compressibility factor Z = pv/(RT).
    pub z: f64,
    /// ln φ_i.
    pub ln_phi: Vec<f64>,
    /// Fugacities f_i = x_i φ_i p, Pa.
    pub fugacity: Vec<f64>,
    /// Molar enthalpy, J/mol.
    pub enthalpy: f64,
    /// Molar entropy, J/(mol K).
    pub entropy: f64,
    /// Molar Gibbs energy, J/mol.
    pub gibbs: f64,
    /// Molar internal energy, J/mol.
    pub internal_energy: f64,
    /// Molar Helmholtz energy, J/mol.
    pub helmholtz: f64,
    /// Molar isobaric heat capacity, J/(mol K).
    pub cp: f64,
    /// Molar isochoric heat capacity, J/(mol K).
    pub cv: f64,
    /// Speed of sound, m/s.
    pub speed_of_sound: f64,
    /// Joule–Thomson coefficient (∂T/∂p)_h, K/Pa.
    pub joule_thomson: f64,
    /// Isothermal compressibility −(1/v)(∂v/∂p)_T, 1/Pa.
    pub isothermal_compressibility: f64,
    /// Isobaric thermal expansion (1/v)(∂v/∂T)_p, 1/K.
    pub thermal_expansion: f64,
    /// Residual molar enthalpy h − h^ig, J/mol.
    pub residual_enthalpy: f64,
    /// Residual molar entropy s − s^ig at the same T, p, J/(mol K).
    pub residual_entropy: f64,
    /// Residual molar Gibbs energy, J/mol.
    pub residual_gibbs: f64,
}

impl PhaseState {
    /// The phase at (T (K), p (Pa), n (mol)) on the chosen root.
    pub fn new<M: FluidModel + ?Sized>(model: &M, t: f64, p: f64, n: &[f64], root: RootChoice) -> Result<Self> {
        let nc = model.num_components();
        let mut w = FugacityWork::new(nc);
        let mut out = LnPhi::new(nc);
        ln_phi(model, t, p, n, root, Need::VALUES, &mut w, &mut out)?;
        Ok(PhaseState {
            t,
            p,
            n: n.to_vec(),
            v: out.v,
            kind: if out.liquid_like {
                PhaseKind::Liquid
            } else {
                PhaseKind::Vapor
            },
        })
    }

    /// Total amount, mol.
    pub fn total(&self) -> f64 {
        self.n.iter().sum()
    }

    /// Mole fractions.
    pub fn composition(&self) -> Vec<f64> {
        let s = self.total();
        self.n.iter().map(|x| x / s).collect()
    }

    /// Computes every property of [`Properties`].
    ///
    /// Residual quantities need only the model; absolute energies and heat capacities also use
    /// the ideal-gas correlations and fail with [`Error::OutsideValidity`] outside their range.
    pub fn properties<M: FluidModel + ?Sized>(&self, model: &M) -> Result<Properties> {
        let nc = model.num_components();
        check::temperature(self.t)?;
        check::pressure(self.p)?;
        let ntot = check::amounts(&self.n, nc)?;
        let mut w = FugacityWork::new(nc);
        let mut out = LnPhi::new(nc);
        evaluate_at_volume(
            model,
            self.t,
            self.p,
            self.v,
            &self.n,
            ntot,
            Need {
                composition: false,
                temperature: true,
                pressure: false,
            },
            &mut w,
            &mut out,
        )?;
        let d = &w.derivs;
        let (t, p, v) = (self.t, self.p, self.v);
        let rt = R * t;
        let p_v = -rt * d.f_vv - ntot * rt / (v * v);
        let p_t = p / t - rt * d.f_tv;
        // Residual properties of the whole phase (J, J/K).
        let u_r = -rt * t * d.f_t;
        let h_r = u_r + p * v - ntot * rt;
        let s_r = -R * (t * d.f_t + d.f) + ntot * R * out.z.ln();
        let cv_r = -rt * (2.0 * d.f_t + t * d.f_tt);
        let cp_r = cv_r - t * p_t * p_t / p_v - ntot * R;
        // Ideal-gas part.
        let (mut h_ig, mut s_ig, mut cp_ig, mut mass) = (0.0, 0.0, 0.0, 0.0);
        let x: Vec<f64> = self.n.iter().map(|ni| ni / ntot).collect();
        for i in 0..nc {
            mass += self.n[i] * model.molar_mass(i);
            if self.n[i] > 0.0 {
                let ig = model.ideal_gas(t, i)?;
                h_ig += self.n[i] * ig.h;
                // ln(x_i p / p°) from its parts when the product underflows (a subnormal
                // amount such as 5e-324 mol gives x_i = 0 and ln 0 = -inf otherwise).
                let arg = x[i] * p / P_STANDARD;
                let ln_arg = if arg.is_normal() {
                    arg.ln()
                } else {
                    self.n[i].ln() - ntot.ln() + p.ln() - P_STANDARD.ln()
                };
                s_ig += self.n[i] * (ig.s - R * ln_arg);
                cp_ig += self.n[i] * ig.cp;
            }
        }
        let h = h_ig + h_r;
        let s = s_ig + s_r;
        let cp = cp_ig + cp_r;
        let cv = cp_ig - ntot * R + cv_r;
        let dvdt = -p_t / p_v;
        let w2 = -v * v / mass * (cp / cv) * p_v;
        if !(w2 > 0.0) || !(cv > 0.0) {
            return Err(Error::NoSolution(format!(
                "the phase at T = {t} K, p = {p} Pa is mechanically or thermally unstable (cv = {cv} J/K, w² = {w2} m²/s²)",
                t = num(t),
                p = num(p)
            )));
        }
        let props = Properties {
            temperature: t,
            pressure: p,
            molar_volume: v / ntot,
            molar_density: ntot / v,
            mass_density: mass / v,
            molar_mass: mass / ntot,
            z: out.z,
            fugacity: (0..nc).map(|i| x[i] * out.ln_phi[i].exp() * p).collect(),
            ln_phi: out.ln_phi.clone(),
            composition: x,
            enthalpy: h / ntot,
            entropy: s / ntot,
            gibbs: (h - t * s) / ntot,
            internal_energy: (h - p * v) / ntot,
            helmholtz: (h - p * v - t * s) / ntot,
            cp: cp / ntot,
            cv: cv / ntot,
            speed_of_sound: w2.sqrt(),
            joule_thomson: (t * dvdt - v) / cp,
            isothermal_compressibility: -1.0 / (v * p_v),
            thermal_expansion: dvdt / v,
            residual_enthalpy: h_r / ntot,
            residual_entropy: s_r / ntot,
            residual_gibbs: (h_r - t * s_r) / ntot,
        };
        // At extreme states (p = 1e-151 Pa: v² overflows in the speed of sound) a property
        // can leave the floating-point range; that is an error, never an inf or NaN value.
        let scalars = [
            ("molar_volume", props.molar_volume),
            ("molar_density", props.molar_density),
            ("enthalpy", props.enthalpy),
            ("entropy", props.entropy),
            ("gibbs", props.gibbs),
            ("helmholtz", props.helmholtz),
            ("cp", props.cp),
            ("cv", props.cv),
            ("speed_of_sound", props.speed_of_sound),
            ("joule_thomson", props.joule_thomson),
            ("isothermal_compressibility", props.isothermal_compressibility),
            ("thermal_expansion", props.thermal_expansion),
            ("residual_gibbs", props.residual_gibbs),
        ];
        if let Some((name, v)) = scalars.iter().find(|(_, v)| !v.is_finite()) {
            return Err(Error::NoSolution(format!(
                "the properties at T = {t} K, p = {p} Pa leave the floating-point range ({name} = {v})",
                t = num(t),
                p = num(p),
                v = num(*v)
            )));
        }
        if props.ln_phi.iter().any(|v| !v.is_finite()) {
            return Err(Error::NoSolution(format!(
                "the fugacity coefficients at T = {t} K, p = {p} Pa leave the floating-point range",
                t = num(t),
                p = num(p)
            )));
        }
        // ln φ can be finite while φ·x·p is not (ln φ above about 700 - ln p).
        if let Some(i) = props.fugacity.iter().position(|v| !v.is_finite()) {
            return Err(Error::NoSolution(format!(
                "the fugacity of component {i} at T = {t} K, p = {p} Pa leaves the floating-point \
                 range (ln φ = {l})",
                t = num(t),
                p = num(p),
                l = num(props.ln_phi[i])
            )));
        }
        Ok(props)
    }
}
