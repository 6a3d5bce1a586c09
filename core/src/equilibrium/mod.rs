//! Equilibrium solvers: phase stability, the two-phase PT flash, saturation points of pure
//! components, bubble and dew points of mixtures, phase envelopes and critical points.
//!
//! Every solver works for any [`FluidModel`](crate::model::FluidModel) and returns a typed
//! error rather than a doubtful answer: non-convergence comes back as
//! [`Error::NotConverged`](crate::Error::NotConverged) with the iterations and the residual
//! reached.

pub mod azeotrope;
pub mod batch;
pub mod critical;
pub mod envelope;
pub mod flash;
pub mod nphase;
pub mod pure;
pub mod rachford_rice;
pub mod reaction;
pub mod saturation;
pub mod sensitivity;
pub mod solid_flash;
pub mod stability;
pub mod state_flash;

pub use azeotrope::{Azeotrope, AzeotropeOptions, azeotrope_at_pressure, azeotrope_at_temperature};
pub use batch::{BatchArrays, flash_batch, flash_batch_arrays};
pub use critical::{CriticalOptions, CriticalPoint, critical_point};
pub use envelope::{EnvelopeOptions, EnvelopePoint, PhaseEnvelope, phase_envelope};
pub use flash::{Diagnostics, FlashContext, FlashOptions, FlashResult, Phase, TieLine, flash_pt};
pub use nphase::{MAX_FLUID_PHASES, MultiphaseContext, MultiphaseOptions, flash_multiphase};
pub use pure::{Coexistence, Crossing, GibbsCurves, PhasePoint, PurePhase, PurePhases, StablePhase, TriplePoint};
pub use saturation::{
    BubbleDew, PointKind, SaturationOptions, SaturationPoint, bubble_pressure, bubble_temperature, dew_pressure,
    dew_temperature, saturation_pressure, saturation_temperature,
};
pub use sensitivity::{Derivative, FlashSensitivities, SensitivityWork, flash_sensitivities};
pub use solid_flash::{
    SolidFlashOptions, SolidFlashResult, SolidMargin, SolidPhaseResult, SolidPhaseSpec, flash_pt_with_solids,
    frost_point_temperature,
};
pub use stability::{StabilityOptions, StabilityResult, StationaryPoint, TrialSet, stability};
pub use state_flash::{
    StateFlashContext, StateFlashOptions, StateFlashResult, StateSpec, flash_ph, flash_ps, flash_state, flash_tv,
    flash_uv,
};

use crate::model::{FugacityWork, LnPhi};

/// Scratch storage shared by the equilibrium solvers, sized once per component count, so
/// that repeated calls allocate nothing.
#[derive(Debug, Clone, Default)]
pub struct EquilibriumWork {
    pub(crate) fw: FugacityWork,
    pub(crate) phi_a: LnPhi,
    pub(crate) phi_b: LnPhi,
    /// ln φ of the phase under the last stability test, at its (T, p, composition `sz`).
    pub(crate) phi_feed: LnPhi,
    pub(crate) z: Vec<f64>,
    /// Composition of the phase under a stability test (kept apart from the flash feed `z`).
    pub(crate) sz: Vec<f64>,
    pub(crate) d: Vec<f64>,
    /// ln sz_i (0 where sz_i = 0).
    pub(crate) lnz: Vec<f64>,
    pub(crate) w: Vec<f64>,
    pub(crate) w_old: Vec<f64>,
    pub(crate) x: Vec<f64>,
    pub(crate) y: Vec<f64>,
    pub(crate) g: Vec<f64>,
    pub(crate) lnk: Vec<f64>,
    pub(crate) k: Vec<f64>,
    pub(crate) rhs: Vec<f64>,
    pub(crate) step: Vec<f64>,
    pub(crate) hess: Vec<f64>,
    pub(crate) chol: Vec<f64>,
    pub(crate) hist: [Vec<f64>; 3],
    pub(crate) trial_kinds: Vec<(stability::Trial, usize)>,
    /// Known stationary points of zero distance of a stability test (mole fractions, `nc`
    /// per point) and their logarithms.
    pub(crate) known: Vec<f64>,
    pub(crate) known_ln: Vec<f64>,
    /// Storage of stationary points from earlier tests, reused by the next ones.
    pub(crate) spare_points: Vec<stability::StationaryPoint>,
    nc: usize,
}

impl EquilibriumWork {
    /// Scratch for `nc` components.
    pub fn new(nc: usize) -> Self {
        let mut w = EquilibriumWork::default();
        w.resize(nc);
        w
    }

    pub(crate) fn resize(&mut self, nc: usize) {
        if self.nc == nc && !self.z.is_empty() {
            return;
        }
        self.nc = nc;
        self.fw = FugacityWork::new(nc);
        self.phi_a = LnPhi::new(nc);
        self.phi_b = LnPhi::new(nc);
        self.phi_feed = LnPhi::new(nc);
        for v in [
            &mut self.z,
            &mut self.sz,
            &mut self.d,
            &mut self.lnz,
            &mut self.w,
            &mut self.w_old,
            &mut self.x,
            &mut self.y,
            &mut self.g,
            &mut self.lnk,
            &mut self.k,
            &mut self.rhs,
            &mut self.step,
        ] {
            v.clear();
            v.resize(nc, 0.0);
        }
        for h in self.hist.iter_mut() {
            h.clear();
            h.resize(nc, 0.0);
        }
        self.hess.clear();
        self.hess.resize(nc * nc, 0.0);
        self.chol.clear();
        self.chol.resize(nc * nc, 0.0);
        self.trial_kinds.reserve(nc + 4);
    }
}
