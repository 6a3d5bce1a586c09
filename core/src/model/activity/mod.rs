//! Liquid-solution (excess Gibbs energy, activity-coefficient) models.
//!
//! An [`ExcessGibbs`] model gives the molar excess Gibbs energy g^E/(RT) of a liquid mixture
//! as a function of T and composition, with the activity coefficients ln γ_i = ∂(n g^E/RT)/∂n_i
//! and their temperature and composition derivatives, all analytic. The models describe the
//! liquid only; a phase-equilibrium model combines one with pure-liquid reference fugacities
//! (vapour pressures, Poynting corrections) and a vapour model, or feeds it to a cubic
//! equation of state through an EOS/G^E mixing rule.

use super::Need;
use crate::error::Result;

/// Excess properties of a liquid at (T, n), filled by [`ExcessGibbs::excess`]. Vectors are
/// sized by [`ExcessDerivs::new`] and reused between calls.
#[derive(Debug, Clone, Default)]
pub struct ExcessDerivs {
    /// Molar excess Gibbs energy over RT, g^E/(RT) (dimensionless, per mol of mixture).
    pub g_excess: f64,
    /// ln γ_i (dimensionless).
    pub ln_gamma: Vec<f64>,
    /// (∂ln γ_i/∂n_j) at fixed T and the other amounts, 1/mol, row-major nc×nc, for the
    /// amounts passed (with [`Need::composition`]). Symmetric, and Σ_j n_j ∂ln γ_i/∂n_j = 0.
    pub dn: Vec<f64>,
    /// (∂ln γ_i/∂T) at fixed composition, 1/K (with [`Need::temperature`]).
    pub dt: Vec<f64>,
    /// Molar excess enthalpy h^E = −RT² ∂(g^E/RT)/∂T, J/mol (with [`Need::temperature`]).
    pub h_excess: f64,
    /// Molar excess entropy s^E = (h^E − g^E)/T, J/(mol K) (with [`Need::temperature`]).
    pub s_excess: f64,
    /// Scratch storage free for the model to use, so evaluations allocate nothing after
    /// the first.
    pub scratch: Vec<f64>,
}

impl ExcessDerivs {
    /// Storage for `nc` components.
    pub fn new(nc: usize) -> Self {
        let mut d = ExcessDerivs::default();
        d.resize(nc);
        d
    }

    /// Resizes the per-component vectors for `nc` components (no-op if already that size).
    pub fn resize(&mut self, nc: usize) {
        if self.ln_gamma.len() != nc {
            self.ln_gamma.resize(nc, 0.0);
            self.dn.resize(nc * nc, 0.0);
            self.dt.resize(nc, 0.0);
        }
    }
}

/// A liquid-solution model defined by its molar excess Gibbs energy g^E(T, x).
///
/// Implementations are immutable once built (`Send + Sync`, shared between threads) and
/// return typed errors rather than panicking or producing non-finite values.
pub trait ExcessGibbs: Send + Sync {
    /// Number of components.
    fn num_components(&self) -> usize;

    /// Name of component `i`.
    fn component_name(&self, i: usize) -> &str;

    /// The temperature range (K) in which the model's parameters may be used, (lowest,
    /// highest); evaluations outside it are `Error::OutsideValidity`.
    fn temperature_range(&self) -> (f64, f64);

    /// Fills `out` with g^E/RT and ln γ at T (K) for amounts `n` (mol, any positive total; the
    /// values depend on the mole fractions only), plus the derivatives asked for by `need`
    /// (`need.pressure` is ignored: the models are pressure-independent).
    fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()>;
}
