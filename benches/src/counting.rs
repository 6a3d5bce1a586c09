//! A fluid model that counts the phase evaluations a solver asks of the model it wraps, by
//! kind (values only, or with composition derivatives), so that the instruction counts of a
//! flash can be read as numbers of ln φ evaluations.

use std::sync::atomic::{AtomicUsize, Ordering};
use tieline::Result;
use tieline::model::{
    CriticalConstants, FluidModel, FugacityWork, HelmholtzDerivs, LnPhi, Need, RootChoice, VolumeRoots,
};
use tieline::substance::IdealGasSpecies;

/// Wraps a model and counts its `phase_ln_phi` calls.
#[derive(Debug)]
pub struct Counting<'a, M: FluidModel + ?Sized> {
    inner: &'a M,
    values: AtomicUsize,
    derivs: AtomicUsize,
}

impl<'a, M: FluidModel + ?Sized> Counting<'a, M> {
    /// Counts the evaluations of `inner`.
    pub fn new(inner: &'a M) -> Self {
        Counting {
            inner,
            values: AtomicUsize::new(0),
            derivs: AtomicUsize::new(0),
        }
    }

    /// (values-only evaluations, evaluations with composition derivatives) since the last call;
    /// the counters restart from zero.
    pub fn take(&self) -> (usize, usize) {
        (
            self.values.swap(0, Ordering::Relaxed),
            self.derivs.swap(0, Ordering::Relaxed),
        )
    }
}

impl<M: FluidModel + ?Sized> FluidModel for Counting<'_, M> {
    fn num_components(&self) -> usize {
        self.inner.num_components()
    }
    fn component_name(&self, i: usize) -> &str {
        self.inner.component_name(i)
    }
    fn molar_mass(&self, i: usize) -> f64 {
        self.inner.molar_mass(i)
    }
    fn critical_constants(&self, i: usize) -> CriticalConstants {
        self.inner.critical_constants(i)
    }
    fn residual(&self, t: f64, v: f64, n: &[f64], need: Need, out: &mut HelmholtzDerivs) -> Result<()> {
        self.inner.residual(t, v, n, need, out)
    }
    fn volume_roots(&self, t: f64, p: f64, n: &[f64], work: &mut HelmholtzDerivs) -> Result<VolumeRoots> {
        self.inner.volume_roots(t, p, n, work)
    }
    fn is_liquid_like(&self, t: f64, v: f64, n: &[f64]) -> bool {
        self.inner.is_liquid_like(t, v, n)
    }
    fn ideal_gas(&self, t: f64, i: usize) -> Result<IdealGasSpecies> {
        self.inner.ideal_gas(t, i)
    }
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
        if need.composition {
            self.derivs.fetch_add(1, Ordering::Relaxed);
        } else {
            self.values.fetch_add(1, Ordering::Relaxed);
        }
        self.inner.phase_ln_phi(t, p, n, root, need, work, out)
    }
    fn estimate_ln_k(&self, t: f64, p: f64, out: &mut [f64]) {
        self.inner.estimate_ln_k(t, p, out)
    }
}
