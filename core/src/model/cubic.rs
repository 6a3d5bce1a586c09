//! Two-parameter cubic equations of state: Peng–Robinson (1976, and the 1978 κ for
//! ω > 0.49), Soave–Redlich–Kwong, with van der Waals one-fluid mixing
//! (a = ΣΣ x_i x_j √(a_i a_j)(1 − k_ij), k_ij = k0_ij + k1_ij·T; b = Σ x_i b_i) and optional
//! Péneloux volume translation.
//!
//! The residual Helmholtz energy is written in the form of Michelsen & Mollerup,
//! *Thermodynamic Models: Fundamentals and Computational Aspects*, 2nd ed. (2007), ch. 3:
//!
//! F = −n·g(V, B) − D(T, n)·f(V, B)/T,  g = ln(1 − B/V),
//! f = ln((V + δ1 B)/(V + δ2 B))/(R B (δ1 − δ2)),  B = Σ n_i b_i,  D = ΣΣ n_i n_j a_ij(T),
//!
//! and every derivative is analytic (chain rule through g, f, B and D).
//!
//! References: D.-Y. Peng, D. B. Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59–64;
//! D. B. Robinson, D.-Y. Peng, GPA Research Report RR-28 (1978) (κ for ω > 0.49, from memory);
//! G. Soave, Chem. Eng. Sci. 27 (1972) 1197–1203; A. Péneloux, E. Rauzy, R. Fréze, Fluid
//! Phase Equilib. 8 (1982) 7–23.

use super::{CriticalConstants, FluidModel, HelmholtzDerivs, MixCache, Need, VolumeRoots};
use crate::error::{Error, Result, check, num};
use crate::numerics::roots::cubic_real_roots;
use crate::substance::{Component, IdealGasSpecies, R};
use serde::{Deserialize, Serialize};
use std::sync::atomic::{AtomicU64, Ordering};

/// Which cubic equation of state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CubicKind {
    /// Peng–Robinson (1976) with κ = 0.37464 + 1.54226ω − 0.26992ω² for every component.
    PengRobinson,
    /// Peng–Robinson with the 1978 κ = 0.379642 + 1.48503ω − 0.164423ω² + 0.016666ω³ for
    /// components with ω > 0.49 (the 1976 κ otherwise).
    PengRobinson78,
    /// Soave–Redlich–Kwong (1972), m = 0.480 + 1.574ω − 0.176ω².
    SoaveRedlichKwong,
}

impl CubicKind {
    /// (δ1, δ2) of the generic form p = RT/(v − b) − a/((v + δ1 b)(v + δ2 b)).
    pub fn deltas(self) -> (f64, f64) {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => {
                (1.0 + std::f64::consts::SQRT_2, 1.0 - std::f64::consts::SQRT_2)
            }
            CubicKind::SoaveRedlichKwong => (1.0, 0.0),
        }
    }

    /// (Ω_a, Ω_b): a_c = Ω_a R² Tc²/pc, b = Ω_b R Tc/pc.
    pub fn omegas(self) -> (f64, f64) {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => (0.45724, 0.07780),
            CubicKind::SoaveRedlichKwong => (0.42748, 0.08664),
        }
    }

    /// Critical compressibility factor of the equation itself (0.3074 for PR, 1/3 for SRK).
    pub fn zc(self) -> f64 {
        match self {
            CubicKind::PengRobinson | CubicKind::PengRobinson78 => 0.307_401,
            CubicKind::SoaveRedlichKwong => 1.0 / 3.0,
        }
    }

    /// κ (or m) of the α function for acentric factor ω.
    pub fn kappa(self, w: f64) -> f64 {
        match self {
            CubicKind::PengRobinson => 0.37464 + 1.54226 * w - 0.26992 * w * w,
            CubicKind::PengRobinson78 if w > 0.49 => 0.379642 + w * (1.48503 + w * (-0.164423 + 0.016666 * w)),
            CubicKind::PengRobinson78 => 0.37464 + 1.54226 * w - 0.26992 * w * w,
            CubicKind::SoaveRedlichKwong => 0.480 + 1.574 * w - 0.176 * w * w,
        }
    }
}

/// Largest |k_ij(T)| (dimensionless) at which a model is evaluated: above 1 the cross
/// attraction a_ij = (1 − k_ij)·√(a_i a_j) changes sign and the mixture's attraction parameter
/// can turn negative, which makes the equation meaningless; published fits lie well inside
/// (common practice, no source).
pub const KIJ_MAX: f64 = 1.0;

/// Largest |k1| (1/K) of k_ij(T) = k0 + k1·T accepted: published temperature slopes are of
/// order 1e-4 to 1e-3 1/K (common practice, no source); 0.01 1/K moves k_ij by 1 over 100 K.
pub const KIJ_SLOPE_MAX: f64 = 0.01;

/// The temperatures (K) at which |k0 + k1·T| <= [`KIJ_MAX`], as (min, max), or `None` if
/// there are none above 0 K.
pub fn kij_temperature_range(k0: f64, k1: f64) -> Option<(f64, f64)> {
    let (lo, hi) = if k1 == 0.0 {
        if k0.abs() <= KIJ_MAX {
            (0.0, f64::INFINITY)
        } else {
            return None;
        }
    } else {
        let a = (-KIJ_MAX - k0) / k1;
        let b = (KIJ_MAX - k0) / k1;
        (a.min(b).max(0.0), a.max(b))
    };
    (hi > lo).then_some((lo, hi))
}

fn check_pair(i: usize, j: usize, k0: f64, k1: f64) -> Result<()> {
    if !(k0.is_finite() && k1.is_finite()) {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k0 = {}, k1 = {}; finite values are required",
                num(k0),
                num(k1)
            ),
        ));
    }
    if k1.abs() > KIJ_SLOPE_MAX {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k1 = {} 1/K; |k1| <= {} 1/K is required (k_ij(T) = k0 + k1·T)",
                num(k1),
                num(KIJ_SLOPE_MAX)
            ),
        ));
    }
    if kij_temperature_range(k0, k1).is_none() {
        return Err(Error::invalid(
            "k_ij",
            format!(
                "({i}, {j}): k0 = {}, k1 = {} 1/K give |k_ij(T)| > {} at every T > 0 K; \
                 beyond it the cross attraction changes sign and the model is meaningless",
                num(k0),
                num(k1),
                num(KIJ_MAX)
            ),
        ));
    }
    Ok(())
}

/// Binary interaction parameters k_ij(T) = k0_ij + k1_ij·T (T in K), symmetric, zero diagonal,
/// with |k1| <= [`KIJ_SLOPE_MAX`] and |k_ij(T)| <= [`KIJ_MAX`] for some T > 0 (checked when
/// set); a model evaluated at a T where |k_ij(T)| > [`KIJ_MAX`] reports
/// [`Error::OutsideValidity`] with the temperature range of the pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct KijMatrix {
    /// Number of components.
    pub nc: usize,
    /// k0, row-major nc×nc (dimensionless).
    pub k0: Vec<f64>,
    /// k1, row-major nc×nc (1/K).
    pub k1: Vec<f64>,
}

impl KijMatrix {
    /// All-zero interaction parameters for `nc` components.
    pub fn zeros(nc: usize) -> Self {
        KijMatrix {
            nc,
            k0: vec![0.0; nc * nc],
            k1: vec![0.0; nc * nc],
        }
    }

    /// Sets k_ij = k_ji = k0 + k1·T.
    pub fn set(&mut self, i: usize, j: usize, k0: f64, k1: f64) -> Result<()> {
        if i >= self.nc || j >= self.nc {
            return Err(Error::invalid(
                "k_ij index",
                format!("({i}, {j}) for {} components", self.nc),
            ));
        }
        if i == j {
            return Err(Error::invalid(
                "k_ij index",
                "a component does not interact with itself (i == j)",
            ));
        }
        check_pair(i, j, k0, k1)?;
        for (a, b) in [(i, j), (j, i)] {
            self.k0[a * self.nc + b] = k0;
            self.k1[a * self.nc + b] = k1;
        }
        Ok(())
    }

    fn validate(&self) -> Result<()> {
        let n2 = self.nc * self.nc;
        if self.k0.len() != n2 || self.k1.len() != n2 {
            return Err(Error::invalid("k_ij", format!("matrices must hold {n2} values")));
        }
        for i in 0..self.nc {
            for j in 0..self.nc {
                let (a, b) = (i * self.nc + j, j * self.nc + i);
                if !(self.k0[a].is_finite() && self.k1[a].is_finite()) {
                    return Err(Error::invalid("k_ij", format!("non-finite value at ({i}, {j})")));
                }
                if self.k0[a] != self.k0[b] || self.k1[a] != self.k1[b] {
                    return Err(Error::invalid("k_ij", format!("not symmetric at ({i}, {j})")));
                }
                if i == j && (self.k0[a] != 0.0 || self.k1[a] != 0.0) {
                    return Err(Error::invalid("k_ij", format!("diagonal ({i}, {i}) must be zero")));
                }
                if i != j {
                    check_pair(i, j, self.k0[a], self.k1[a])?;
                }
            }
        }
        Ok(())
    }
}

/// Plain, serialisable description of a cubic model: what a user writes in a JSON model file
/// and what [`CubicEos`] serialises to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CubicSpec {
    /// Which equation.
    pub kind: CubicKind,
    /// The components, with their constants.
    pub components: Vec<Component>,
    /// Interaction parameters (zeros if absent).
    #[serde(default)]
    pub kij: Option<KijMatrix>,
    /// Péneloux volume shifts c_i, m3/mol (none if absent): v = v_EOS − Σ x_i c_i.
    #[serde(default)]
    pub volume_shift: Option<Vec<f64>>,
}

/// A process-unique identity of a cubic model's parameter set: the key of the
/// per-temperature terms it caches in the caller's [`HelmholtzDerivs`], renewed whenever a
/// parameter changes, so a cache is never read for another parameter set. Ignored by `==`.
#[derive(Debug, Clone, Copy)]
struct ParamId(u64);

impl ParamId {
    fn fresh() -> Self {
        static NEXT: AtomicU64 = AtomicU64::new(1);
        ParamId(NEXT.fetch_add(1, Ordering::Relaxed))
    }
}

impl PartialEq for ParamId {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

/// Σ_j a_j b_j with four partial sums (so that the compiler can vectorise it).
#[inline]
fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 4];
    let mut ca = a.chunks_exact(4);
    let mut cb = b.chunks_exact(4);
    for (x, y) in (&mut ca).zip(&mut cb) {
        for k in 0..4 {
            acc[k] += x[k] * y[k];
        }
    }
    let mut tail = 0.0;
    for (x, y) in ca.remainder().iter().zip(cb.remainder()) {
        tail += x * y;
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// A cubic equation of state for a mixture, ready to evaluate. Immutable and `Send + Sync`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "CubicSpec", into = "CubicSpec")]
pub struct CubicEos {
    kind: CubicKind,
    components: Vec<Component>,
    kij: KijMatrix,
    shift: Vec<f64>,
    has_shift: bool,
    ac: Vec<f64>,
    sqrt_ac: Vec<f64>,
    b: Vec<f64>,
    kappa: Vec<f64>,
    d1: f64,
    d2: f64,
    has_k1: bool,
    id: ParamId,
}

impl TryFrom<CubicSpec> for CubicEos {
    type Error = Error;
    fn try_from(s: CubicSpec) -> Result<Self> {
        let mut eos = CubicEos::new(s.kind, s.components)?;
        if let Some(k) = s.kij {
            eos = eos.with_kij(k)?;
        }
        if let Some(c) = s.volume_shift {
            eos = eos.with_volume_shift(c)?;
        }
        Ok(eos)
    }
}

impl From<CubicEos> for CubicSpec {
    fn from(e: CubicEos) -> Self {
        CubicSpec {
            kind: e.kind,
            kij: Some(e.kij),
            volume_shift: e.has_shift.then_some(e.shift),
            components: e.components,
        }
    }
}

impl CubicEos {
    /// A cubic model of the given kind over `components`, with k_ij = 0 and no volume shift.
    pub fn new(kind: CubicKind, components: Vec<Component>) -> Result<Self> {
        if components.is_empty() {
            return Err(Error::invalid("components", "at least one component is required"));
        }
        check::count("components", components.len(), 1, crate::limits::MAX_COMPONENTS)?;
        for c in &components {
            c.validate()?;
        }
        check::distinct(&components)?;
        let nc = components.len();
        let (oa, ob) = kind.omegas();
        let ac: Vec<f64> = components.iter().map(|c| oa * (R * c.tc).powi(2) / c.pc).collect();
        let (d1, d2) = kind.deltas();
        Ok(CubicEos {
            kind,
            sqrt_ac: ac.iter().map(|a| a.sqrt()).collect(),
            ac,
            b: components.iter().map(|c| ob * R * c.tc / c.pc).collect(),
            kappa: components.iter().map(|c| kind.kappa(c.acentric)).collect(),
            kij: KijMatrix::zeros(nc),
            shift: vec![0.0; nc],
            has_shift: false,
            components,
            d1,
            d2,
            has_k1: false,
            id: ParamId::fresh(),
        })
    }

    /// Replaces the interaction parameters (validated: symmetric, finite, zero diagonal).
    pub fn with_kij(mut self, kij: KijMatrix) -> Result<Self> {
        if kij.nc != self.components.len() {
            return Err(Error::invalid(
                "k_ij",
                format!(
                    "matrix for {} components given to a model of {}",
                    kij.nc,
                    self.components.len()
                ),
            ));
        }
        kij.validate()?;
        self.has_k1 = kij.k1.iter().any(|&k| k != 0.0);
        self.kij = kij;
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// Sets one pair k_ij = k_ji = k0 + k1·T.
    pub fn with_pair(mut self, i: usize, j: usize, k0: f64, k1: f64) -> Result<Self> {
        self.kij.set(i, j, k0, k1)?;
        self.has_k1 = self.kij.k1.iter().any(|&k| k != 0.0);
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// Sets Péneloux volume shifts c_i (m3/mol): v = v_EOS − Σ x_i c_i. Fugacity
    /// coefficients change by the factor exp(−c_i p/RT) in every phase, so K-values are unchanged.
    pub fn with_volume_shift(mut self, c: Vec<f64>) -> Result<Self> {
        if c.len() != self.components.len() {
            return Err(Error::invalid(
                "volume_shift",
                format!("{} values for {} components", c.len(), self.components.len()),
            ));
        }
        for (i, &ci) in c.iter().enumerate() {
            if !ci.is_finite() || ci.abs() >= self.b[i] {
                return Err(Error::invalid(
                    "volume_shift",
                    format!(
                        "c_{i} = {ci} m3/mol; a finite value smaller in magnitude than the co-volume b_i = {} is required",
                        self.b[i]
                    ),
                ));
            }
        }
        self.has_shift = c.iter().any(|&x| x != 0.0);
        self.shift = c;
        self.id = ParamId::fresh();
        Ok(self)
    }

    /// Péneloux shifts estimated from the Rackett compressibility Z_RA = 0.29056 − 0.08775ω
    /// (Yamada & Gunn, J. Chem. Eng. Data 18 (1973) 234, from memory):
    /// SRK: c = 0.40768 (0.29441 − Z_RA) R Tc/pc (Péneloux et al. 1982, from memory);
    /// PR: c = 0.50033 (0.25969 − Z_RA) R Tc/pc (the same construction for PR, from memory).
    pub fn with_peneloux_estimate(self) -> Result<Self> {
        let c = self
            .components
            .iter()
            .map(|c| {
                let zra = 0.29056 - 0.08775 * c.acentric;
                let rt = R * c.tc / c.pc;
                match self.kind {
                    CubicKind::SoaveRedlichKwong => 0.40768 * (0.29441 - zra) * rt,
                    _ => 0.50033 * (0.25969 - zra) * rt,
                }
            })
            .collect();
        self.with_volume_shift(c)
    }

    /// The kind of equation.
    pub fn kind(&self) -> CubicKind {
        self.kind
    }

    /// The components.
    pub fn components(&self) -> &[Component] {
        &self.components
    }

    /// The interaction parameters.
    pub fn kij(&self) -> &KijMatrix {
        &self.kij
    }

    /// Co-volumes b_i, m3/mol.
    pub fn covolumes(&self) -> &[f64] {
        &self.b
    }

    /// Volume shifts c_i, m3/mol (zeros when none).
    pub fn volume_shift(&self) -> &[f64] {
        &self.shift
    }

    /// Fills r_i = √a_i(T) and, if `deriv`, r_i' and r_i'' into `s` (3·nc values).
    fn sqrt_a(&self, t: f64, deriv: bool, s: &mut [f64]) -> Result<()> {
        let nc = self.b.len();
        for i in 0..nc {
            let tc = self.components[i].tc;
            let k = self.kappa[i];
            let sr = (t / tc).sqrt();
            let m = 1.0 + k * (1.0 - sr);
            if !(m > 0.0) {
                return Err(Error::OutsideValidity {
                    what: "temperature".into(),
                    value: t,
                    min: 0.0,
                    max: tc * (1.0 + 1.0 / k).powi(2),
                    detail: format!(
                        "the α(T) function of {} passes its minimum there; the cubic equation is not valid",
                        self.components[i].name
                    ),
                });
            }
            s[i] = self.sqrt_ac[i] * m;
            if deriv {
                // m' = −κ/(2√(T Tc)), m'' = κ/(4 √Tc T^{3/2})
                s[nc + i] = self.sqrt_ac[i] * (-k / (2.0 * (t * tc).sqrt()));
                s[2 * nc + i] = self.sqrt_ac[i] * (k / (4.0 * tc.sqrt() * t * t.sqrt()));
            }
        }
        Ok(())
    }

    /// The cross terms a_ij = (1 − k_ij(T)) √a_i √a_j at T into `cache` (row-major nc×nc),
    /// followed, if `deriv`, by ∂a_ij/∂T and ∂²a_ij/∂T²; kept while the model and T repeat.
    fn cross_terms<'c>(
        &self,
        t: f64,
        deriv: bool,
        scratch: &mut Vec<f64>,
        cache: &'c mut MixCache,
    ) -> Result<&'c [f64]> {
        let nc = self.b.len();
        let nn = nc * nc;
        let fresh = matches!(cache.key, Some((id, tb, d)) if id == self.id.0 && tb == t.to_bits() && (d || !deriv));
        if !fresh {
            cache.key = None;
            if scratch.len() < 3 * nc {
                scratch.resize(3 * nc, 0.0);
            }
            self.sqrt_a(t, deriv, scratch)?;
            let (r, rest) = scratch.split_at(nc);
            let (r1, r2) = rest.split_at(nc);
            cache.a.resize(if deriv { 3 * nn } else { nn }, 0.0);
            let a = &mut cache.a;
            for i in 0..nc {
                for j in 0..nc {
                    let idx = i * nc + j;
                    let k1 = if self.has_k1 { self.kij.k1[idx] } else { 0.0 };
                    let k = self.kij.k0[idx] + k1 * t;
                    if k.abs() > KIJ_MAX {
                        return Err(self.kij_outside(i, j, t));
                    }
                    let omk = 1.0 - k;
                    let q = r[i] * r[j];
                    a[idx] = omk * q;
                    if deriv {
                        let q1 = r1[i] * r[j] + r[i] * r1[j];
                        let q2 = r2[i] * r[j] + 2.0 * r1[i] * r1[j] + r[i] * r2[j];
                        a[nn + idx] = omk * q1 - k1 * q;
                        a[2 * nn + idx] = omk * q2 - 2.0 * k1 * q1;
                    }
                }
            }
            cache.key = Some((self.id.0, t.to_bits(), deriv));
        }
        Ok(&cache.a)
    }

    fn kij_outside(&self, i: usize, j: usize, t: f64) -> Error {
        let idx = i * self.b.len() + j;
        let (k0, k1) = (self.kij.k0[idx], self.kij.k1[idx]);
        let (min, max) = kij_temperature_range(k0, k1).unwrap_or((0.0, 0.0));
        Error::OutsideValidity {
            what: "temperature".into(),
            value: t,
            min,
            max,
            detail: format!(
                "k_ij of {}–{} = {} + {}·T is {} there; |k_ij| <= {} is required, beyond it \
                 the cross attraction changes sign and the cubic equation is meaningless",
                self.components[i].name,
                self.components[j].name,
                num(k0),
                num(k1),
                num(k0 + k1 * t),
                num(KIJ_MAX)
            ),
        }
    }

    /// D = ΣΣ n_i n_j a_ij and B = Σ n_i b_i, with D_i = 2Σ_j n_j a_ij written into `di`
    /// (and, if `deriv`, D_T, D_TT, D_iT into `dit`, and if `hess`, D_ij = 2 a_ij into `dij`).
    #[allow(clippy::type_complexity, clippy::too_many_arguments)]
    fn mix(
        &self,
        t: f64,
        n: &[f64],
        deriv: bool,
        hess: Option<&mut [f64]>,
        scratch: &mut Vec<f64>,
        cache: &mut MixCache,
        di: &mut [f64],
        dit: &mut [f64],
    ) -> Result<(f64, f64, f64, f64)> {
        let nc = self.b.len();
        let nn = nc * nc;
        let a = self.cross_terms(t, deriv, scratch, cache)?;
        let n = &n[..nc];
        let mut d = 0.0;
        let mut dt = 0.0;
        let mut dtt = 0.0;
        let bsum = dot(n, &self.b);
        for i in 0..nc {
            let row = i * nc..(i + 1) * nc;
            let si = dot(&a[row.clone()], n);
            di[i] = 2.0 * si;
            d += n[i] * si;
            if deriv {
                let sit = dot(&a[nn + row.start..nn + row.end], n);
                let sitt = dot(&a[2 * nn + row.start..2 * nn + row.end], n);
                dit[i] = 2.0 * sit;
                dt += n[i] * sit;
                dtt += n[i] * sitt;
            }
        }
        if let Some(h) = hess {
            for (hij, aij) in h[..nn].iter_mut().zip(&a[..nn]) {
                *hij = 2.0 * aij;
            }
        }
        Ok((d, dt, dtt, bsum))
    }
}

/// Volume-dependent pieces of F for given V (EOS volume), B, n, and D/T.
struct Pieces {
    g: f64,
    g_v: f64,
    g_b: f64,
    g_vv: f64,
    g_bv: f64,
    g_bb: f64,
    f: f64,
    f_v: f64,
    f_b: f64,
    f_vv: f64,
    f_bv: f64,
    f_bb: f64,
}

fn pieces(v: f64, b: f64, d1: f64, d2: f64) -> Pieces {
    let vmb = v - b;
    let g = (-b / v).ln_1p();
    let g_v = b / (v * vmb);
    let g_b = -1.0 / vmb;
    let g_vv = -1.0 / (vmb * vmb) + 1.0 / (v * v);
    let g_bv = 1.0 / (vmb * vmb);
    let g_bb = -1.0 / (vmb * vmb);
    let p1 = v + d1 * b;
    let p2 = v + d2 * b;
    let f = ((d1 - d2) * b / p2).ln_1p() / (R * b * (d1 - d2));
    let f_v = -1.0 / (R * p1 * p2);
    let f_b = -(f + v * f_v) / b;
    let f_vv = (1.0 / (p1 * p1 * p2) + 1.0 / (p1 * p2 * p2)) / R;
    let f_bv = -(2.0 * f_v + v * f_vv) / b;
    let f_bb = -(2.0 * f_b + v * f_bv) / b;
    Pieces {
        g,
        g_v,
        g_b,
        g_vv,
        g_bv,
        g_bb,
        f,
        f_v,
        f_b,
        f_vv,
        f_bv,
        f_bb,
    }
}

impl FluidModel for CubicEos {
    fn num_components(&self) -> usize {
        self.components.len()
    }

    fn component_name(&self, i: usize) -> &str {
        &self.components[i].name
    }

    fn molar_mass(&self, i: usize) -> f64 {
        self.components[i].molar_mass
    }

    fn critical_constants(&self, i: usize) -> CriticalConstants {
        let c = &self.components[i];
        CriticalConstants {
            tc: c.tc,
            pc: c.pc,
            acentric: c.acentric,
        }
    }

    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
        let nc = self.b.len();
        check::temperature(t)?;
        check::volume(v)?;
        let ntot = check::amounts(n, nc)?;
        out.resize(nc);
        let HelmholtzDerivs {
            f_n,
            f_nv,
            f_nt,
            f_nn,
            scratch,
            mix_cache,
            ..
        } = out;
        // D_i into f_n, D_iT into f_nt temporarily; D_ij into f_nn.
        let hess = if need.composition { Some(&mut f_nn[..]) } else { None };
        let (d, d_t, d_tt, bm) = self.mix(t, n, need.temperature, hess, scratch, mix_cache, f_n, f_nt)?;
        let c: f64 = if self.has_shift {
            n.iter().zip(&self.shift).map(|(a, b)| a * b).sum()
        } else {
            0.0
        };
        let w = v + c;
        if !(w > bm) {
            return Err(Error::invalid(
                "volume",
                format!(
                    "{v} m3 is at or below the co-volume limit of the equation ({} m3)",
                    num(bm - c),
                    v = num(v)
                ),
            ));
        }
        let pc = pieces(w, bm, self.d1, self.d2);
        let e = d / t;
        // F and its derivatives in (T, W, n) of the untranslated equation.
        let fe = -ntot * pc.g - e * pc.f;
        let fe_w = -ntot * pc.g_v - e * pc.f_v;
        let fe_ww = -ntot * pc.g_vv - e * pc.f_vv;
        let f_bn = -pc.g_b; // ∂²F/∂n∂B (explicit n)
        let f_b = -ntot * pc.g_b - e * pc.f_b;
        let f_d = -pc.f / t;
        let f_nw = -pc.g_v;
        let f_bw = -ntot * pc.g_bv - e * pc.f_bv;
        let f_bb = -ntot * pc.g_bb - e * pc.f_bb;
        let f_dw = -pc.f_v / t;
        let f_bd = -pc.f_b / t;
        let (e_t, e_tt) = (
            d_t / t - d / (t * t),
            d_tt / t - 2.0 * d_t / (t * t) + 2.0 * d / (t * t * t),
        );

        // Composition Hessian first (it needs D_i before f_n is overwritten).
        if need.composition {
            for i in 0..nc {
                for j in i..nc {
                    let (bi, bj) = (self.b[i], self.b[j]);
                    let val =
                        f_bn * (bi + bj) + f_bd * (bi * f_n[j] + bj * f_n[i]) + f_bb * bi * bj + f_d * f_nn[i * nc + j];
                    f_nn[i * nc + j] = val;
                    f_nn[j * nc + i] = val;
                }
            }
        }
        for i in 0..nc {
            let di = f_n[i];
            let bi = self.b[i];
            f_nv[i] = f_nw + f_bw * bi + f_dw * di;
            if need.temperature {
                let dit = f_nt[i];
                f_nt[i] = -pc.f_b * e_t * bi + pc.f / (t * t) * di + f_d * dit;
            }
            f_n[i] = -pc.g + f_b * bi + f_d * di;
        }
        out.f = fe;
        out.f_v = fe_w;
        out.f_vv = fe_ww;
        if need.temperature {
            out.f_t = -pc.f * e_t;
            out.f_tt = -pc.f * e_tt;
            out.f_tv = -pc.f_v * e_t;
        }
        if self.has_shift {
            // F(T, V, n) = F_e(T, V + C, n) − n ln(W/V), C = Σ n_i c_i.
            let lnwv = (w / v).ln();
            let cs = &self.shift;
            if need.composition {
                for i in 0..nc {
                    for j in 0..nc {
                        out.f_nn[i * nc + j] += out.f_nv[i] * cs[j] + out.f_nv[j] * cs[i] + fe_ww * cs[i] * cs[j]
                            - (cs[i] + cs[j]) / w
                            + ntot * cs[i] * cs[j] / (w * w);
                    }
                }
            }
            for i in 0..nc {
                out.f_n[i] += fe_w * cs[i] - lnwv - ntot * cs[i] / w;
                if need.temperature {
                    out.f_nt[i] += out.f_tv * cs[i];
                }
                out.f_nv[i] += fe_ww * cs[i] - 1.0 / w + ntot * cs[i] / (w * w) + 1.0 / v;
            }
            out.f -= ntot * lnwv;
            out.f_v += -ntot / w + ntot / v;
            out.f_vv += ntot / (w * w) - ntot / (v * v);
        }
        if !out.f.is_finite() || !out.f_v.is_finite() {
            return Err(Error::invalid(
                "state",
                format!(
                    "non-finite Helmholtz energy at T = {t} K, V = {v} m3",
                    t = num(t),
                    v = num(v)
                ),
            ));
        }
        Ok(())
    }

    fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
        let nc = self.b.len();
        check::temperature(t)?;
        check::pressure(p)?;
        let ntot = check::amounts(n, nc)?;
        work.resize(nc);
        let HelmholtzDerivs {
            f_n,
            f_nt,
            scratch,
            mix_cache,
            ..
        } = work;
        let (d, _, _, bm) = self.mix(t, n, false, None, scratch, mix_cache, f_n, f_nt)?;
        let rt = R * t;
        let a = d / (ntot * ntot) * p / (rt * rt);
        let b = bm / ntot * p / rt;
        let (d1, d2) = (self.d1, self.d2);
        let c2 = (d1 + d2 - 1.0) * b - 1.0;
        let c1 = a + d1 * d2 * b * b - (d1 + d2) * b * (b + 1.0);
        let c0 = -(a * b + d1 * d2 * b * b * (b + 1.0));
        let (z, count) = cubic_real_roots(c2, c1, c0);
        let c: f64 = if self.has_shift {
            n.iter().zip(&self.shift).map(|(a, b)| a * b).sum()
        } else {
            0.0
        };
        let mut out = VolumeRoots::default();
        // Physical roots (Z > B), smallest and largest; the middle root of three is unstable.
        let mut zs = [0.0; 3];
        let mut nz = 0;
        for &zz in &z[..count] {
            if zz > b && zz.is_finite() {
                zs[nz] = zz;
                nz += 1;
            }
        }
        if nz == 3 {
            zs[1] = zs[2];
            nz = 2;
        }
        let pick = &zs[..nz];
        for &zz in pick {
            let v = zz * ntot * rt / p - c;
            if v > 0.0 {
                out.v[out.count] = v;
                out.count += 1;
            }
        }
        if out.count == 0 {
            return Err(Error::NoSolution(format!(
                "no physical volume root of the cubic equation at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            )));
        }
        Ok(out)
    }

    fn is_liquid_like(&self, _t: f64, v: f64, n: &[f64]) -> bool {
        // Rule: liquid-like when the (untranslated) molar volume is below the equation's own
        // critical volume ratio times the mixture co-volume, v_c/b = Zc/Ω_b (3.95 for PR,
        // 3.85 for SRK); common practice, no source.
        let (bm, c) = n
            .iter()
            .enumerate()
            .fold((0.0, 0.0), |(b, c), (i, &x)| (b + x * self.b[i], c + x * self.shift[i]));
        let ratio = self.kind.zc() / self.kind.omegas().1;
        v + c < ratio * bm
    }

    fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies> {
        self.components[i].ideal_gas(t)
    }
}
