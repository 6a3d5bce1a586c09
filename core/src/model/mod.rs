//! Thermodynamic models behind traits.
//!
//! A fluid-phase model implements [`FluidModel`]: it gives the reduced residual Helmholtz
//! energy F = A^r/(RT) of (T, V, n) with its derivatives, the candidate volumes at (T, p, n),
//! and the ideal-gas part of each species. Everything else — pressure, fugacity coefficients
//! and their derivatives, energies, heat capacities, speed of sound — is derived from those in
//! one place ([`fugacity`], [`state`]), so a new model plugs into every solver unchanged.

pub mod activity;
pub mod any;
pub mod cubic;
pub mod description;
pub mod fugacity;
pub mod iapws95;
pub mod if97;
pub mod solid;
pub mod state;

pub use activity::{ActivityModel, ExcessDerivs, ExcessGibbs, Margules, Nrtl, Unifac, Uniquac, Wilson};
pub use any::Model;
pub use cubic::{CubicEos, CubicKind, CubicSpec, KijMatrix, MixingRule};
pub use description::{ModelDescription, model_from_json};
pub use fugacity::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
pub use iapws95::Iapws95;
pub use solid::{FusionData, FusionSolid, IceIh, SolidModel, SolidProperties};
pub use state::{PhaseKind, PhaseState, Properties};

use crate::error::Result;
use crate::substance::IdealGasSpecies;

/// The reduced residual Helmholtz energy F = A^r(T, V, n)/(RT) and its derivatives, filled
/// by [`FluidModel::residual`]. Units: V in m3 (total), n in mol, T in K; F is dimensionless,
/// so F_V is in 1/m3, F_T in 1/K, F_n in 1/mol, and so on. `f_nn` is row-major nc×nc.
#[derive(Debug, Clone, Default)]
pub struct HelmholtzDerivs {
    /// F.
    pub f: f64,
    /// ∂F/∂V.
    pub f_v: f64,
    /// ∂²F/∂V².
    pub f_vv: f64,
    /// ∂F/∂T (filled when [`Need::temperature`] is set).
    pub f_t: f64,
    /// ∂²F/∂T² (with [`Need::temperature`]).
    pub f_tt: f64,
    /// ∂²F/∂T∂V (with [`Need::temperature`]).
    pub f_tv: f64,
    /// ∂F/∂n_i.
    pub f_n: Vec<f64>,
    /// ∂²F/∂n_i∂V.
    pub f_nv: Vec<f64>,
    /// ∂²F/∂n_i∂T (with [`Need::temperature`]).
    pub f_nt: Vec<f64>,
    /// ∂²F/∂n_i∂n_j (with [`Need::composition`]), row-major.
    pub f_nn: Vec<f64>,
    /// Scratch storage owned by the caller and free for the model to use, so that
    /// evaluations allocate nothing after the first.
    pub scratch: Vec<f64>,
    /// Temperature-dependent mixing terms of the last cubic model evaluated with this
    /// storage (written and read only by that model, keyed by its identity and T).
    pub(crate) mix_cache: MixCache,
}

/// The cross terms a_ij(T) of a cubic model at one temperature (and their T-derivatives),
/// with the key they were computed for: (model identity, T bits, derivatives included).
#[derive(Debug, Clone, Default)]
pub(crate) struct MixCache {
    pub(crate) key: Option<(u64, u64, bool)>,
    pub(crate) a: Vec<f64>,
    /// Excess-property storage of a cubic model with an EOS/G^E mixing rule.
    pub(crate) excess: ExcessDerivs,
}

impl HelmholtzDerivs {
    /// Storage for a model of `nc` components.
    pub fn new(nc: usize) -> Self {
        let mut d = HelmholtzDerivs::default();
        d.resize(nc);
        d
    }

    /// Resizes the per-component vectors for `nc` components (no-op if already that size).
    pub fn resize(&mut self, nc: usize) {
        if self.f_n.len() != nc {
            self.f_n.resize(nc, 0.0);
            self.f_nv.resize(nc, 0.0);
            self.f_nt.resize(nc, 0.0);
            self.f_nn.resize(nc * nc, 0.0);
        }
    }
}

/// Candidate volumes of a phase at given (T, p, n): the mechanically stable roots of
/// p(T, V, n) = p, ascending (total volume, m3). One or two entries.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct VolumeRoots {
    /// The roots, ascending, in the first `count` entries.
    pub v: [f64; 2],
    /// Number of valid roots (1 or 2).
    pub count: usize,
}

impl VolumeRoots {
    /// The valid roots as a slice.
    pub fn as_slice(&self) -> &[f64] {
        &self.v[..self.count]
    }
}

/// Critical constants of a species, used for initial estimates (Wilson K-values,
/// temperature and pressure guesses) and never as model parameters by the solvers.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CriticalConstants {
    /// Critical temperature, K.
    pub tc: f64,
    /// Critical pressure, Pa.
    pub pc: f64,
    /// Acentric factor, dimensionless.
    pub acentric: f64,
}

/// A fluid-phase model defined by its residual Helmholtz energy.
///
/// Implementations must be immutable once built (`Send + Sync`), so one model can serve many
/// threads. All methods must return an error rather than panic or produce a non-finite value.
pub trait FluidModel: Send + Sync {
    /// Number of components.
    fn num_components(&self) -> usize;

    /// Name of component `i`.
    fn component_name(&self, i: usize) -> &str;

    /// Molar mass of component `i`, kg/mol.
    fn molar_mass(&self, i: usize) -> f64;

    /// Critical constants of component `i` (for initial estimates only).
    fn critical_constants(&self, i: usize) -> CriticalConstants;

    /// Fills `out` with F = A^r/(RT) at (T (K), V (m3), n (mol)) and the derivatives
    /// requested by `need` (value, V and n first derivatives and ∂²F/∂V², ∂²F/∂n∂V always).
    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()>;

    /// Mechanically stable volume roots at (T (K), p (Pa), n (mol)); `work` is scratch.
    fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots>;

    /// Whether a phase of volume `v` (m3) at T and n is liquid-like (the model's own rule,
    /// used to name phases; see [`PhaseKind`]).
    fn is_liquid_like(&self, t: f64, v: f64, n: &[f64]) -> bool;

    /// Ideal-gas h, s (at 1e5 Pa) and cp of pure species `i` at T, in the reference state of
    /// [`crate::substance`]. May fail outside the correlation's validity range.
    fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies>;

    /// ln φ_i (and the requested derivatives) of a phase of amounts `n` (mol) at T (K) and
    /// p (Pa) on the branch `root`, relative to the ideal gas at (T, p). Every phase
    /// equilibrium solver evaluates phases through this method. The default evaluates the
    /// residual Helmholtz energy ([`ln_phi`]); a model whose liquid is described by an excess
    /// Gibbs energy overrides it (the liquid branch then gives ln(γ_i f_i°/p)).
    #[allow(clippy::too_many_arguments)]
    fn phase_ln_phi(
        &self,
        t: f64,
        p: f64,
        n: &[f64],
        root: RootChoice,
        need: Need,
        work: &mut FugacityWork,
        out: &mut LnPhi,
    ) -> Result<()> {
        ln_phi(self, t, p, n, root, need, work, out)
    }

    /// Starting estimates of ln K_i = ln(y_i/x_i) (vapour over liquid) at T (K) and p (Pa),
    /// written to `out` (one per component). The default is Wilson's correlation from the
    /// critical constants; models with vapour-pressure data use Raoult's law.
    fn estimate_ln_k(&self, t: f64, p: f64, out: &mut [f64]) {
        crate::equilibrium::stability::wilson_ln_k(self, t, p, out)
    }
}
