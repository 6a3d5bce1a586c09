//! Pure solid phases: the [`SolidModel`] trait, ice Ih by IAPWS-06 ([`IceIh`]) and a solid
//! built from published fusion data and anchored to a fluid model ([`FusionSolid`]).
//!
//! A solid model gives the molar Gibbs energy of one pure species in the solid state at
//! (T, p) with its first derivatives and heat capacity, **in the library's reference state**
//! (elements at 298.15 K and 1e5 Pa, as for the ideal gases of [`crate::substance`]), so
//! that it can be compared directly with the Gibbs energy of a fluid phase and, through the
//! fluid's ideal-gas part, with the chemical potential of the same species in a mixture.

use super::FluidModel;
use super::fugacity::RootChoice;
use super::iapws95;
use super::state::PhaseState;
use crate::error::{Error, Result, check, num};
use crate::substance::{P_STANDARD, R};
use serde::{Deserialize, Serialize};

/// Molar properties of a pure solid at (T, p), library reference state.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SolidProperties {
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
    /// Molar isobaric heat capacity, J/(mol K).
    pub cp: f64,
}

/// Range of (T, p) over which a solid model may be evaluated (SI units).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SolidValidity {
    /// Lowest temperature, K.
    pub t_min: f64,
    /// Highest temperature, K.
    pub t_max: f64,
    /// Highest pressure, Pa (the lowest is 0 Pa, exclusive).
    pub p_max: f64,
}

impl SolidValidity {
    /// [`Error::OutsideValidity`] unless t_min ≤ T ≤ t_max and 0 < p ≤ p_max.
    pub fn check(&self, t: f64, p: f64, model: &str) -> Result<()> {
        check::temperature(t)?;
        check::pressure(p)?;
        if !(self.t_min..=self.t_max).contains(&t) {
            return Err(Error::OutsideValidity {
                what: "temperature".into(),
                value: t,
                min: self.t_min,
                max: self.t_max,
                detail: model.into(),
            });
        }
        if p > self.p_max {
            return Err(Error::OutsideValidity {
                what: "pressure".into(),
                value: p,
                min: 0.0,
                max: self.p_max,
                detail: model.into(),
            });
        }
        Ok(())
    }
}

/// A pure solid phase of one species.
///
/// Implementations are immutable (`Send + Sync`) and return errors, never panics or
/// non-finite values; outside [`SolidModel::validity`] they return
/// [`Error::OutsideValidity`].
pub trait SolidModel: Send + Sync {
    /// Name of the species (matched against fluid component names, e.g. "water").
    fn species(&self) -> &str;

    /// Molar mass, kg/mol.
    fn molar_mass(&self) -> f64;

    /// Where the model may be evaluated.
    fn validity(&self) -> SolidValidity;

    /// Molar properties at T (K), p (Pa), library reference state.
    fn properties(&self, t: f64, p: f64) -> Result<SolidProperties>;

    /// An estimate (T in K, p in Pa) of the solid–liquid–vapour triple point, used to start
    /// phase-equilibrium searches. Not a constraint.
    fn triple_point_estimate(&self) -> (f64, f64);

    /// ln of the fugacity (Pa) of the pure solid at (T, p), relative to the ideal gas of the
    /// same species whose molar h and s at 1e5 Pa are `ig` (as given by a fluid model's
    /// [`FluidModel::ideal_gas`]): ln f = (g_solid − g_ig(T, 1e5 Pa))/(RT) + ln 1e5.
    fn ln_fugacity(&self, t: f64, p: f64, ig: &crate::substance::IdealGasSpecies) -> Result<f64> {
        let s = self.properties(t, p)?;
        Ok((s.gibbs - (ig.h - t * ig.s)) / (R * t) + P_STANDARD.ln())
    }
}

// ---------------------------------------------------------------------------------------
// IAPWS-06 ice Ih
// ---------------------------------------------------------------------------------------

/// A complex number as an (re, im) pair: the little arithmetic IAPWS-06 needs.
#[derive(Debug, Clone, Copy, PartialEq)]
struct C64 {
    re: f64,
    im: f64,
}

impl C64 {
    const fn new(re: f64, im: f64) -> Self {
        C64 { re, im }
    }
    fn add(self, o: C64) -> C64 {
        C64::new(self.re + o.re, self.im + o.im)
    }
    fn sub(self, o: C64) -> C64 {
        C64::new(self.re - o.re, self.im - o.im)
    }
    fn mul(self, o: C64) -> C64 {
        C64::new(self.re * o.re - self.im * o.im, self.re * o.im + self.im * o.re)
    }
    fn scale(self, k: f64) -> C64 {
        C64::new(self.re * k, self.im * k)
    }
    fn inv(self) -> C64 {
        let d = self.re * self.re + self.im * self.im;
        C64::new(self.re / d, -self.im / d)
    }
    /// Principal logarithm.
    fn ln(self) -> C64 {
        C64::new(self.re.hypot(self.im).ln(), self.im.atan2(self.re))
    }
}

/// Triple-point temperature of IAPWS-06, K (R10-06 Table 1).
pub const ICE_T_TRIPLE: f64 = 273.16;
/// Triple-point pressure of IAPWS-06, Pa (R10-06 Table 1; IAPWS-95 itself gives 611.655 Pa).
pub const ICE_P_TRIPLE: f64 = 611.657;
/// Normal pressure p0 of IAPWS-06, Pa.
pub const ICE_P0: f64 = 101_325.0;
/// Highest pressure of validity of IAPWS-06, Pa (R10-06: 210 MPa).
pub const ICE_P_MAX: f64 = 210e6;

// R10-06 coefficients (published-values §2a, from memory + recomputed).
const G0: [f64; 5] = [
    -0.632_020_233_335_886e6,
    0.655_022_213_658_955,
    -0.189_369_929_326_131e-7,
    0.339_746_123_271_053e-14,
    -0.556_464_869_058_991e-21,
];
const S0: f64 = -0.332_733_756_492_168e4;
const T1: C64 = C64::new(0.368_017_112_855_051e-1, 0.510_878_114_959_572e-1);
const R1: C64 = C64::new(0.447_050_716_285_388e2, 0.656_876_847_463_481e2);
const T2: C64 = C64::new(0.337_315_741_065_416, 0.335_449_415_919_309);
const R2: [C64; 3] = [
    C64::new(-0.725_974_574_329_220e2, -0.781_008_427_112_870e2),
    C64::new(-0.557_107_698_030_123e-4, 0.464_578_634_580_806e-4),
    C64::new(0.234_801_409_215_913e-10, -0.285_651_142_904_972e-10),
];

/// The specific Gibbs energy of ice Ih and its derivatives at (T, p), IAPWS-06 reference
/// (consistent with IAPWS-95: u = s = 0 for liquid water at the triple point).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct IceGibbs {
    /// g, J/kg.
    pub g: f64,
    /// (∂g/∂T)_p, J/(kg K).
    pub g_t: f64,
    /// (∂g/∂p)_T, m3/kg.
    pub g_p: f64,
    /// (∂²g/∂T²)_p, J/(kg K²).
    pub g_tt: f64,
    /// ∂²g/∂T∂p, m3/(kg K).
    pub g_tp: f64,
    /// (∂²g/∂p²)_T, m3/(kg Pa).
    pub g_pp: f64,
}

/// Properties of ice Ih per kg (IAPWS-06 reference), R10-06 Table 3 relations.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct IceProperties {
    /// Specific Gibbs energy, J/kg.
    pub gibbs: f64,
    /// Specific enthalpy, J/kg.
    pub enthalpy: f64,
    /// Specific Helmholtz energy, J/kg.
    pub helmholtz: f64,
    /// Specific internal energy, J/kg.
    pub internal_energy: f64,
    /// Specific entropy, J/(kg K).
    pub entropy: f64,
    /// Specific isobaric heat capacity, J/(kg K).
    pub cp: f64,
    /// Density, kg/m3.
    pub density: f64,
    /// Cubic expansion coefficient, 1/K.
    pub thermal_expansion: f64,
    /// Pressure coefficient (∂p/∂T)_ρ, Pa/K.
    pub pressure_coefficient: f64,
    /// Isothermal compressibility, 1/Pa.
    pub isothermal_compressibility: f64,
    /// Isentropic compressibility, 1/Pa.
    pub isentropic_compressibility: f64,
}

/// Ice Ih by the IAPWS-06 Gibbs function: "Revised Release on the Equation of State 2006
/// for H2O Ice Ih", IAPWS R10-06(2009); R. Feistel, W. Wagner, J. Phys. Chem. Ref. Data 35
/// (2006) 1021. Coefficients from published-values §2a (from memory + recomputed).
///
/// g(T, p) = g0(p) − s0·Tt·τ + Tt·Re Σ_k r_k [(t_k − τ) ln(t_k − τ) + (t_k + τ) ln(t_k + τ)
/// − 2 t_k ln t_k − τ²/t_k], τ = T/Tt, with complex t_k, r_k (r2 depends on p); all
/// derivatives are analytic, the complex terms evaluated with a small internal complex type.
///
/// Validity: 0 < T ≤ 273.16 K, 0 < p ≤ 210 MPa (R10-06); this covers metastable ice above
/// the melting curve at pressures above 611.657 Pa, which the release's range includes.
/// Outside: [`Error::OutsideValidity`].
///
/// As a [`SolidModel`] (species "water", molar, M = 18.015268 g/mol) its energies are moved
/// to the library reference by the same constants as the IAPWS-95 water model
/// ([`iapws95::library_shift`]), so ice and water share one reference.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IceIh {}

impl IceIh {
    /// The model (stateless).
    pub fn new() -> Self {
        IceIh {}
    }

    fn validity_range() -> SolidValidity {
        SolidValidity {
            t_min: 1e-9,
            t_max: ICE_T_TRIPLE,
            p_max: ICE_P_MAX,
        }
    }

    /// g and its derivatives at T (K), p (Pa), per kg, IAPWS-06 reference.
    pub fn gibbs(&self, t: f64, p: f64) -> Result<IceGibbs> {
        Self::validity_range().check(t, p, "IAPWS-06 ice Ih")?;
        let tt = ICE_T_TRIPLE;
        let pt = ICE_P_TRIPLE;
        let tau = t / tt;
        let dpi = (p - ICE_P0) / pt; // π − π0
        // g0(p) and its p-derivatives.
        let mut g0 = 0.0;
        let mut g0p = 0.0;
        let mut g0pp = 0.0;
        for k in (0..5).rev() {
            g0 = g0 * dpi + G0[k];
        }
        for k in (1..5).rev() {
            g0p = g0p * dpi + k as f64 * G0[k];
        }
        for k in (2..5).rev() {
            g0pp = g0pp * dpi + (k * (k - 1)) as f64 * G0[k];
        }
        g0p /= pt;
        g0pp /= pt * pt;
        // r2(p) and its p-derivatives.
        let r2 = R2[0].add(R2[1].scale(dpi)).add(R2[2].scale(dpi * dpi));
        let r2p = R2[1].add(R2[2].scale(2.0 * dpi)).scale(1.0 / pt);
        let r2pp = R2[2].scale(2.0 / (pt * pt));
        let tauc = C64::new(tau, 0.0);
        // Per-term kernels: K(t_k) and its τ derivatives.
        let kern = |tk: C64| {
            let a = tk.sub(tauc); // t − τ
            let b = tk.add(tauc); // t + τ
            let k = a
                .mul(a.ln())
                .add(b.mul(b.ln()))
                .sub(tk.mul(tk.ln()).scale(2.0))
                .sub(tk.inv().scale(tau * tau));
            let k_t = b.ln().sub(a.ln()).sub(tk.inv().scale(2.0 * tau));
            let k_tt = a.inv().add(b.inv()).sub(tk.inv().scale(2.0));
            (k, k_t, k_tt)
        };
        let (k1, k1t, k1tt) = kern(T1);
        let (k2, k2t, k2tt) = kern(T2);
        let g = g0 - S0 * tt * tau + tt * (R1.mul(k1).add(r2.mul(k2))).re;
        let g_t = -S0 + (R1.mul(k1t).add(r2.mul(k2t))).re;
        let g_p = g0p + tt * r2p.mul(k2).re;
        let g_tt = (R1.mul(k1tt).add(r2.mul(k2tt))).re / tt;
        let g_tp = r2p.mul(k2t).re;
        let g_pp = g0pp + tt * r2pp.mul(k2).re;
        let out = IceGibbs {
            g,
            g_t,
            g_p,
            g_tt,
            g_tp,
            g_pp,
        };
        if [g, g_t, g_p, g_tt, g_tp, g_pp].iter().any(|x| !x.is_finite()) {
            return Err(Error::NoSolution(format!(
                "non-finite IAPWS-06 Gibbs energy at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            )));
        }
        Ok(out)
    }

    /// Properties per kg (IAPWS-06 reference) at T (K), p (Pa).
    pub fn specific_properties(&self, t: f64, p: f64) -> Result<IceProperties> {
        let d = self.gibbs(t, p)?;
        Ok(IceProperties {
            gibbs: d.g,
            enthalpy: d.g - t * d.g_t,
            helmholtz: d.g - p * d.g_p,
            internal_energy: d.g - t * d.g_t - p * d.g_p,
            entropy: -d.g_t,
            cp: -t * d.g_tt,
            density: 1.0 / d.g_p,
            thermal_expansion: d.g_tp / d.g_p,
            pressure_coefficient: -d.g_tp / d.g_pp,
            isothermal_compressibility: -d.g_pp / d.g_p,
            isentropic_compressibility: (d.g_tp * d.g_tp - d.g_tt * d.g_pp) / (d.g_p * d.g_tt),
        })
    }
}

impl SolidModel for IceIh {
    fn species(&self) -> &str {
        "water"
    }

    fn molar_mass(&self) -> f64 {
        iapws95::MOLAR_MASS
    }

    fn validity(&self) -> SolidValidity {
        Self::validity_range()
    }

    fn properties(&self, t: f64, p: f64) -> Result<SolidProperties> {
        let d = self.gibbs(t, p)?;
        let m = iapws95::MOLAR_MASS;
        let (h0, s0) = iapws95::library_shift();
        let h = m * (d.g - t * d.g_t) + h0;
        let s = -m * d.g_t + s0;
        Ok(SolidProperties {
            temperature: t,
            pressure: p,
            gibbs: h - t * s,
            enthalpy: h,
            entropy: s,
            molar_volume: m * d.g_p,
            cp: -m * t * d.g_tt,
        })
    }

    fn triple_point_estimate(&self) -> (f64, f64) {
        (ICE_T_TRIPLE, ICE_P_TRIPLE)
    }
}

// ---------------------------------------------------------------------------------------
// A solid from fusion data
// ---------------------------------------------------------------------------------------

/// Published fusion data of a substance, from which [`FusionSolid`] builds a solid model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FusionData {
    /// Species name (as the fluid model names the component).
    pub species: String,
    /// Triple-point temperature, K.
    pub t_triple: f64,
    /// Published triple-point pressure, Pa (kept for reference and reporting; the model's
    /// own triple point lies at the fluid model's vapour pressure at `t_triple`).
    pub p_triple: f64,
    /// Enthalpy of fusion at the triple point, J/mol (> 0).
    pub enthalpy_of_fusion: f64,
    /// Heat-capacity difference cp(liquid) − cp(solid) at the triple point, J/(mol K).
    pub delta_cp: f64,
    /// Molar volume of the solid, m3/mol (taken constant: incompressible, no expansion).
    pub solid_molar_volume: f64,
    /// Lowest temperature of evaluation, K.
    pub t_min: f64,
    /// Highest temperature of evaluation, K.
    pub t_max: f64,
    /// Highest pressure of evaluation, Pa.
    pub p_max: f64,
    /// Where the numbers come from, with confidence notes.
    pub source: String,
}

impl FusionData {
    /// Solid carbon dioxide ("dry ice"): triple point 216.592 K, 0.51795 MPa (Span & Wagner,
    /// J. Phys. Chem. Ref. Data 25 (1996) 1509, from memory; published-values §9); enthalpy
    /// of fusion 9.0 kJ/mol (from memory; recalled values range 8.6–9.0 kJ/mol); solid
    /// density 1.51 g/cm3 near the triple point (from memory); cp(liquid) − cp(solid)
    /// ≈ 27 J/(mol K) at the triple point (from memory, low confidence: liquid ≈ 86,
    /// solid ≈ 59 J/(mol K)). Evaluation range 150–260 K, up to 50 MPa (the library's choice
    /// for a constant-cp, constant-volume solid; common practice, no source).
    pub fn carbon_dioxide() -> Self {
        FusionData {
            species: "carbon dioxide".into(),
            t_triple: 216.592,
            p_triple: 0.51795e6,
            enthalpy_of_fusion: 9.0e3,
            delta_cp: 27.0,
            solid_molar_volume: 44.0095e-3 / 1510.0,
            t_min: 150.0,
            t_max: 260.0,
            p_max: 50e6,
            source: "triple point: Span & Wagner (1996), from memory; enthalpy of fusion 9.0 kJ/mol, \
                     solid density 1.51 g/cm3, delta cp 27 J/(mol K): from memory (low confidence for delta cp)"
                .into(),
        }
    }

    fn validate(&self) -> Result<()> {
        let pos = [
            ("t_triple", self.t_triple),
            ("p_triple", self.p_triple),
            ("enthalpy_of_fusion", self.enthalpy_of_fusion),
            ("solid_molar_volume", self.solid_molar_volume),
            ("t_min", self.t_min),
            ("p_max", self.p_max),
        ];
        for (what, v) in pos {
            if !(v.is_finite() && v > 0.0) {
                return Err(Error::invalid(
                    what,
                    format!("{v}; a finite value > 0 is required", v = num(v)),
                ));
            }
        }
        if !self.delta_cp.is_finite() {
            return Err(Error::invalid("delta_cp", "a finite value is required"));
        }
        if !(self.t_min < self.t_triple && self.t_triple < self.t_max) {
            return Err(Error::invalid(
                "t_min, t_max",
                format!(
                    "[{}, {}] K must contain the triple point {} K",
                    num(self.t_min),
                    num(self.t_max),
                    num(self.t_triple)
                ),
            ));
        }
        Ok(())
    }
}

/// A pure solid built from fusion data and anchored to a fluid model.
///
/// At the anchor — the fluid model's own saturated liquid at the triple-point temperature
/// T_t, pressure p_a = p_sat,fluid(T_t) — the solid has h_s = h_L − Δh_fus,
/// s_s = s_L − Δh_fus/T_t and cp_s = cp_L − Δcp, with the liquid's molar h, s, cp from the
/// fluid model in the library reference. Elsewhere, with constant cp_s and constant molar
/// volume v_s (an incompressible solid without thermal expansion):
///
/// h(T, p) = h_s + cp_s (T − T_t) + v_s (p − p_a),  s(T) = s_s + cp_s ln(T/T_t),  g = h − T s.
///
/// So g_solid = g_liquid = g_vapour of the fluid at (T_t, p_a): the combined model's triple
/// point is exactly at T_t, at the fluid model's vapour pressure there (not necessarily the
/// published p_t; [`FusionSolid::anchor_pressure`] reports it). The reference states of the
/// solid and the fluid are consistent by construction.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FusionSolid {
    data: FusionData,
    molar_mass: f64,
    anchor_pressure: f64,
    h_anchor: f64,
    s_anchor: f64,
    cp: f64,
}

impl FusionSolid {
    /// Builds the solid of component `component` of `fluid` from `data`. Fails if the data
    /// are invalid, if the fluid has no vapour–liquid saturation at T_t, or if its liquid
    /// properties there cannot be evaluated (e.g. outside its ideal-gas correlation's range).
    pub fn anchored<F: FluidModel + ?Sized>(fluid: &F, component: usize, data: FusionData) -> Result<Self> {
        data.validate()?;
        let nc = fluid.num_components();
        if component >= nc {
            return Err(Error::invalid(
                "component",
                format!("index {component} for a model of {nc} components"),
            ));
        }
        let sat = crate::equilibrium::saturation_pressure(
            fluid,
            data.t_triple,
            component,
            &crate::equilibrium::SaturationOptions::default(),
        )?;
        let mut n = vec![0.0; nc];
        n[component] = 1.0;
        let liq = PhaseState::new(fluid, data.t_triple, sat.pressure, &n, RootChoice::Liquid)?.properties(fluid)?;
        let cp = liq.cp - data.delta_cp;
        if !(cp > 0.0) {
            return Err(Error::invalid(
                "delta_cp",
                format!(
                    "{} J/(mol K) leaves the solid a heat capacity of {cp} J/(mol K); it must stay > 0",
                    data.delta_cp
                ),
            ));
        }
        Ok(FusionSolid {
            molar_mass: fluid.molar_mass(component),
            anchor_pressure: sat.pressure,
            h_anchor: liq.enthalpy - data.enthalpy_of_fusion,
            s_anchor: liq.entropy - data.enthalpy_of_fusion / data.t_triple,
            cp,
            data,
        })
    }

    /// The fusion data the solid was built from.
    pub fn data(&self) -> &FusionData {
        &self.data
    }

    /// The anchor pressure: the fluid model's vapour pressure at the triple-point
    /// temperature, Pa (the combined model's triple-point pressure).
    pub fn anchor_pressure(&self) -> f64 {
        self.anchor_pressure
    }
}

impl SolidModel for FusionSolid {
    fn species(&self) -> &str {
        &self.data.species
    }

    fn molar_mass(&self) -> f64 {
        self.molar_mass
    }

    fn validity(&self) -> SolidValidity {
        SolidValidity {
            t_min: self.data.t_min,
            t_max: self.data.t_max,
            p_max: self.data.p_max,
        }
    }

    fn properties(&self, t: f64, p: f64) -> Result<SolidProperties> {
        self.validity().check(t, p, "solid from fusion data")?;
        let d = &self.data;
        let v = d.solid_molar_volume;
        let h = self.h_anchor + self.cp * (t - d.t_triple) + v * (p - self.anchor_pressure);
        let s = self.s_anchor + self.cp * (t / d.t_triple).ln();
        // Extreme (finite) fusion data, e.g. Δcp = -1.8e308 J/(mol K), overflow here.
        if !(h - t * s).is_finite() {
            return Err(Error::NoSolution(format!(
                "the solid's Gibbs energy overflows at T = {t} K, p = {p} Pa (c_p = {cp} J/(mol K) from the fusion data)",
                t = num(t),
                p = num(p),
                cp = num(self.cp)
            )));
        }
        Ok(SolidProperties {
            temperature: t,
            pressure: p,
            gibbs: h - t * s,
            enthalpy: h,
            entropy: s,
            molar_volume: v,
            cp: self.cp,
        })
    }

    fn triple_point_estimate(&self) -> (f64, f64) {
        (self.data.t_triple, self.anchor_pressure)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn complex_helpers() {
        let z = C64::new(0.3, -1.2);
        let w = z.mul(z.inv());
        assert!((w.re - 1.0).abs() < 1e-15 && w.im.abs() < 1e-15);
        let l = C64::new(-1.0, 0.0).ln();
        assert!((l.im - std::f64::consts::PI).abs() < 1e-15);
    }

    #[test]
    fn ice_validity() {
        let ice = IceIh::new();
        assert_eq!(
            ice.gibbs(280.0, 1e5).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        assert_eq!(
            ice.gibbs(250.0, 3e8).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        assert_eq!(
            ice.gibbs(250.0, -1.0).unwrap_err().kind(),
            crate::ErrorKind::InvalidInput
        );
        assert!(ice.gibbs(1.0, 1e5).is_ok());
    }

    #[test]
    fn fusion_data_checked() {
        let mut d = FusionData::carbon_dioxide();
        d.enthalpy_of_fusion = -1.0;
        assert!(d.validate().is_err());
        let mut d = FusionData::carbon_dioxide();
        d.t_max = 200.0;
        assert!(d.validate().is_err());
        assert!(FusionData::carbon_dioxide().validate().is_ok());
    }
}
