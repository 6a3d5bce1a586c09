//! # tieline
//!
//! Phase equilibrium of real fluids by Gibbs-energy minimisation.
//!
//! At fixed temperature and pressure a system settles in the state of least Gibbs energy.
//! `tieline` finds that state for mixtures described by thermodynamic models (cubic equations
//! of state today): which phases exist, how much of each, their compositions and properties,
//! where the phase boundaries lie, and how sure the solver is that the minimum is global (a
//! stability certificate on every result).
//!
//! Units are SI everywhere: K, Pa, mol, m3, J.
//!
//! ```
//! use tieline::prelude::*;
//!
//! let bank = DataBank::embedded();
//! let comps = bank.get_many(&["methane", "n-butane"])?;
//! let model = CubicEos::new(CubicKind::PengRobinson, comps)?;
//! let result = flash_pt(&model, 300.0, 5.0e6, &[0.5, 0.5], &FlashOptions::default())?;
//! assert_eq!(result.phases.len(), 2);
//! # Ok::<(), tieline::Error>(())
//! ```
//!
//! **Caution.** tieline is an aid to engineering judgement, not a substitute for it. Respect
//! the validity ranges of every model and correlation; local codes, standards and licensed
//! engineering practice govern the design of pressure equipment and of systems handling
//! flammable or toxic fluids.

pub mod calc;
pub mod equilibrium;
pub mod error;
pub mod limits;
pub mod model;
pub mod numerics;
pub mod substance;

pub use error::{Error, ErrorKind, Result};

/// The most used items, for `use tieline::prelude::*`.
pub mod prelude {
    pub use crate::equilibrium::{FlashOptions, FlashResult, flash_pt};
    pub use crate::error::{Error, ErrorKind, Result};
    pub use crate::model::{CubicEos, CubicKind, FluidModel, PhaseKind, PhaseState, RootChoice};
    pub use crate::substance::{Component, DataBank};
}

/// The README's Rust examples, compiled and run as doc-tests.
#[doc = include_str!("../../README.md")]
#[cfg(doctest)]
pub struct ReadmeDoctests;
