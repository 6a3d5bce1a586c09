//! Saturation states of pure components, bubble and dew points of mixtures, and the
//! properties of a phase at given (T, p, n).

use crate::boundary::*;
use crate::model::{component_index, model_ref, tl_model};
use crate::result::{tl_phase_kind, tl_properties};
use tieline::equilibrium::{
    BubbleDew, SaturationOptions, SaturationPoint, bubble_pressure, bubble_temperature, dew_pressure, dew_temperature,
    saturation_pressure, saturation_temperature,
};
use tieline::model::{FluidModel, Model, PhaseState, RootChoice};

/// Options of the saturation solvers. Initialise with `tl_saturation_options_default`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_saturation_options {
    /// Tolerance on the fugacity residual. Default 1e-11.
    pub tolerance: f64,
    /// Maximum iterations. Default 200.
    pub max_iterations: usize,
}

/// Fills `out` with the default saturation options.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_saturation_options_default(out: *mut tl_saturation_options) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        let d = SaturationOptions::default();
        out.set(tl_saturation_options {
            tolerance: d.tolerance,
            max_iterations: d.max_iterations,
        });
        Ok(())
    })
}

/// # Safety
/// `p` must be NULL or point to a valid `tl_saturation_options`.
unsafe fn options(p: *const tl_saturation_options) -> FfiResult<SaturationOptions> {
    if p.is_null() {
        return Ok(SaturationOptions::default());
    }
    if !p.is_aligned() {
        return Err(FfiError::invalid("options", "the pointer is not aligned"));
    }
    // SAFETY: non-NULL, aligned, valid by the contract; plain data.
    let o = unsafe { *p };
    Ok(SaturationOptions {
        tolerance: o.tolerance,
        max_iterations: o.max_iterations,
    })
}

/// A saturation state of a pure component (SI units).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_saturation_point {
    /// Temperature, K.
    pub temperature: f64,
    /// Vapour pressure, Pa.
    pub pressure: f64,
    /// Saturated-liquid molar volume, m3/mol.
    pub liquid_molar_volume: f64,
    /// Saturated-vapour molar volume, m3/mol.
    pub vapor_molar_volume: f64,
    /// Saturated-liquid molar density, mol/m3.
    pub liquid_density: f64,
    /// Saturated-vapour molar density, mol/m3.
    pub vapor_density: f64,
    /// Enthalpy of vaporisation h_V − h_L, J/mol.
    pub enthalpy_of_vaporization: f64,
    /// Final |ln φ_L − ln φ_V|.
    pub residual: f64,
    /// Iterations used.
    pub iterations: usize,
}

impl From<SaturationPoint> for tl_saturation_point {
    fn from(s: SaturationPoint) -> Self {
        tl_saturation_point {
            temperature: s.temperature,
            pressure: s.pressure,
            liquid_molar_volume: s.liquid_molar_volume,
            vapor_molar_volume: s.vapor_molar_volume,
            liquid_density: s.liquid_density,
            vapor_density: s.vapor_density,
            enthalpy_of_vaporization: s.enthalpy_of_vaporization,
            residual: s.residual,
            iterations: s.iterations,
        }
    }
}

/// # Safety
/// Caller contract of the exported saturation functions.
unsafe fn pure(
    model: *const tl_model,
    component: usize,
    opts: *const tl_saturation_options,
    out: *mut tl_saturation_point,
    solve: impl FnOnce(&Model, usize, &SaturationOptions) -> tieline::Result<SaturationPoint>,
) -> FfiResult {
    // SAFETY: forwarded contract.
    let (m, opts, out) = unsafe { (model_ref(model)?, options(opts)?, Out::new(out, "out")?) };
    let i = component_index(m, component)?;
    out.set(solve(m, i, &opts)?.into());
    Ok(())
}

/// Vapour pressure of component `component` of `model` at `temperature` (K), with both
/// saturated densities and the enthalpy of vaporisation. `options` may be NULL.
/// `TL_STATUS_NO_SOLUTION` at or above the component's critical temperature.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_saturation_pressure(
    model: *const tl_model,
    component: usize,
    temperature: f64,
    options: *const tl_saturation_options,
    out: *mut tl_saturation_point,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            pure(model, component, options, out, |m, i, o| {
                saturation_pressure(m, temperature, i, o)
            })
        }
    })
}

/// Boiling temperature of component `component` at `pressure` (Pa). `TL_STATUS_NO_SOLUTION`
/// at or above the critical pressure.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_saturation_temperature(
    model: *const tl_model,
    component: usize,
    pressure: f64,
    options: *const tl_saturation_options,
    out: *mut tl_saturation_point,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            pure(model, component, options, out, |m, i, o| {
                saturation_temperature(m, pressure, i, o)
            })
        }
    })
}

/// A bubble or dew point of a mixture (SI units). The incipient phase is the vapour at a
/// bubble point and the liquid at a dew point.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_bubble_dew_point {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Molar volume of the bulk (feed) phase, m3/mol.
    pub feed_molar_volume: f64,
    /// Molar volume of the incipient phase, m3/mol.
    pub incipient_molar_volume: f64,
    /// Final max |ln f_i^V − ln f_i^L|.
    pub residual: f64,
    /// Successive-substitution iterations.
    pub ss_iterations: usize,
    /// Newton iterations.
    pub newton_iterations: usize,
}

type MixtureSolver = fn(&Model, f64, &[f64], &SaturationOptions) -> tieline::Result<BubbleDew>;

/// # Safety
/// Caller contract of the exported bubble/dew functions.
unsafe fn mixture(
    model: *const tl_model,
    spec: f64,
    n: *const f64,
    len: usize,
    opts: *const tl_saturation_options,
    out: *mut tl_bubble_dew_point,
    incipient: *mut f64,
    incipient_len: usize,
    solve: MixtureSolver,
) -> FfiResult {
    // SAFETY: forwarded contract.
    let (m, n, opts, out) = unsafe {
        (
            model_ref(model)?,
            slice(n, len, "n")?,
            options(opts)?,
            Out::new(out, "out")?,
        )
    };
    let nc = m.num_components();
    // SAFETY: forwarded contract.
    let inc = unsafe { OutArray::optional(incipient, incipient_len, nc, "incipient")? };
    let r = solve(m, spec, n, &opts)?;
    if let Some(a) = inc {
        a.write(0, &r.incipient);
    }
    out.set(tl_bubble_dew_point {
        temperature: r.temperature,
        pressure: r.pressure,
        feed_molar_volume: r.feed_molar_volume,
        incipient_molar_volume: r.incipient_molar_volume,
        residual: r.residual,
        ss_iterations: r.ss_iterations,
        newton_iterations: r.newton_iterations,
    });
    Ok(())
}

/// Bubble-point pressure of the liquid `n` (`len` amounts, mol) at `temperature` (K).
/// `incipient` (may be NULL; else `incipient_len` ≥ number of components) receives the
/// incipient vapour's mole fractions. `options` may be NULL.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_bubble_pressure(
    model: *const tl_model,
    temperature: f64,
    n: *const f64,
    len: usize,
    options: *const tl_saturation_options,
    out: *mut tl_bubble_dew_point,
    incipient: *mut f64,
    incipient_len: usize,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            mixture(
                model,
                temperature,
                n,
                len,
                options,
                out,
                incipient,
                incipient_len,
                bubble_pressure,
            )
        }
    })
}

/// Dew-point pressure of the vapour `n` at `temperature` (K); where two exist (retrograde
/// region) the one reached from the low-pressure estimate. Arguments as `tl_bubble_pressure`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_dew_pressure(
    model: *const tl_model,
    temperature: f64,
    n: *const f64,
    len: usize,
    options: *const tl_saturation_options,
    out: *mut tl_bubble_dew_point,
    incipient: *mut f64,
    incipient_len: usize,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            mixture(
                model,
                temperature,
                n,
                len,
                options,
                out,
                incipient,
                incipient_len,
                dew_pressure,
            )
        }
    })
}

/// Bubble-point temperature of the liquid `n` at `pressure` (Pa). Arguments as
/// `tl_bubble_pressure`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_bubble_temperature(
    model: *const tl_model,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_saturation_options,
    out: *mut tl_bubble_dew_point,
    incipient: *mut f64,
    incipient_len: usize,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            mixture(
                model,
                pressure,
                n,
                len,
                options,
                out,
                incipient,
                incipient_len,
                bubble_temperature,
            )
        }
    })
}

/// Dew-point temperature of the vapour `n` at `pressure` (Pa). Arguments as
/// `tl_bubble_pressure`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_dew_temperature(
    model: *const tl_model,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_saturation_options,
    out: *mut tl_bubble_dew_point,
    incipient: *mut f64,
    incipient_len: usize,
) -> tl_status {
    // SAFETY: caller contract.
    ffi_boundary!({
        unsafe {
            mixture(
                model,
                pressure,
                n,
                len,
                options,
                out,
                incipient,
                incipient_len,
                dew_temperature,
            )
        }
    })
}

/// Which volume root a phase is evaluated on (`TL_ROOT_*`).
pub type tl_root_choice = u32;
/// The root of least Gibbs energy (the stable one when there are two).
pub const TL_ROOT_STABLE: tl_root_choice = 0;
/// The smallest volume root (liquid-like); the only root if there is one.
pub const TL_ROOT_LIQUID: tl_root_choice = 1;
/// The largest volume root (vapour-like); the only root if there is one.
pub const TL_ROOT_VAPOR: tl_root_choice = 2;

fn root_choice(r: tl_root_choice) -> FfiResult<RootChoice> {
    match r {
        TL_ROOT_STABLE => Ok(RootChoice::Stable),
        TL_ROOT_LIQUID => Ok(RootChoice::Liquid),
        TL_ROOT_VAPOR => Ok(RootChoice::Vapor),
        other => Err(FfiError::invalid(
            "root",
            format!("{other}; one of TL_ROOT_STABLE (0), TL_ROOT_LIQUID (1), TL_ROOT_VAPOR (2) is required"),
        )),
    }
}

/// Properties of a single phase of amounts `n` (`len` values, mol) at `temperature` (K) and
/// `pressure` (Pa) on the volume root `root` (`TL_ROOT_*`). `ln_phi` (may be NULL; else
/// `ln_phi_len` ≥ number of components) receives ln φ_i.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_phase_properties(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    n: *const f64,
    len: usize,
    root: tl_root_choice,
    out: *mut tl_properties,
    ln_phi: *mut f64,
    ln_phi_len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, n, out) = unsafe { (model_ref(model)?, slice(n, len, "n")?, Out::new(out, "out")?) };
        let root = root_choice(root)?;
        // SAFETY: caller contract.
        let lp = unsafe { OutArray::optional(ln_phi, ln_phi_len, m.num_components(), "ln_phi")? };
        let state = PhaseState::new(m, temperature, pressure, n, root)?;
        let props = state.properties(m)?;
        if let Some(a) = lp {
            a.write(0, &props.ln_phi);
        }
        out.set(tl_properties::from_core(
            tl_phase_kind::from_kind(Some(state.kind)),
            &props,
        ));
        Ok(())
    })
}
