//! Named entry points for the calculations of `tieline::calc`, one line each over `tl_run`:
//! the same records (`tl_record_*`), options as a JSON object (`NULL` for the defaults), and an
//! optional workspace for warm starts. For many calls with the same options, a plan
//! (`tl_plan_new` + `tl_run`) checks the options once.

use crate::boundary::*;
use crate::calc::{tl_record, tl_workspace};
use crate::model::tl_model;
use std::ffi::c_char;

/// Runs calculation `name` with options from a nullable JSON string.
///
/// # Safety
/// As the crate's shared contract.
unsafe fn named(
    name: &str,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    model: *const tl_model,
    args: &[f64],
    feed: *const f64,
    nc: usize,
    record: *mut tl_record,
) -> FfiResult {
    // SAFETY: caller contract.
    let plan = unsafe { crate::calc::plan_from_c(name, options_json)? };
    // SAFETY: caller contract.
    unsafe { crate::calc::run_plan(&plan, workspace, model, args, feed, nc, record) }
}

/// A PT flash and the derivatives of its phase amounts, compositions and the system's V, H, S
/// with respect to T (K), p (Pa) and each feed amount (mol), by the implicit function theorem
/// (fields `d_*_dt`, `d_*_dp`, `d_*_dn`, `cp_equilibrium` ...; see `tl_calculation_describe`).
/// A critical state, or a pure substance split between two phases, is `TL_STATUS_NO_SOLUTION`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_sensitivities(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_sensitivities",
                options_json,
                workspace,
                model,
                &[temperature, pressure],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The phase envelope of the feed (`nc` amounts, mol): bubble branch, critical point and dew
/// branch by continuation (Michelsen 1980); fields `temperature`, `pressure`,
/// `vapor_fraction` (vectors in trace order), `critical_temperature`, `critical_pressure`,
/// `cricondenbar_*`, `cricondentherm_*`, `quality_line_*`. Options (JSON): `start_pressure`,
/// `quality_lines`, `max_points`, `max_step`, `tolerance`. A pure feed is
/// `TL_STATUS_NO_SOLUTION` (use the saturation functions).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_phase_envelope(
    model: *const tl_model,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "phase_envelope",
                options_json,
                std::ptr::null_mut(),
                model,
                &[],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The critical point of a mixture of the feed's composition (Heidemann & Khalil 1980):
/// fields `temperature` (K), `pressure` (Pa), `molar_volume` (m3/mol), `iterations`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_critical_point(
    model: *const tl_model,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "critical_point",
                options_json,
                std::ptr::null_mut(),
                model,
                &[],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The equilibrium state at given pressure and molar enthalpy (a valve, a heater): `pressure` (Pa), `enthalpy` (J/mol), the feed (`nc`
/// amounts, mol). The record holds the fields of a PT flash at the solution (`temperature`,
/// `pressure`, phases ...), the iterations, and the derivatives of the solution with respect
/// to the specification (absent where the equilibrium has none). `workspace` (nullable) warm-
/// starts from its previous solution. An unreachable specification is
/// `TL_STATUS_OUTSIDE_VALIDITY` or `TL_STATUS_NO_SOLUTION` with the bound in the message.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_ph(
    model: *const tl_model,
    pressure: f64,
    enthalpy: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_ph",
                options_json,
                workspace,
                model,
                &[pressure, enthalpy],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The equilibrium state at given pressure and molar entropy (an isentropic compressor or expander): `pressure` (Pa), `entropy` (J/(mol K)), the feed (`nc`
/// amounts, mol). The record holds the fields of a PT flash at the solution (`temperature`,
/// `pressure`, phases ...), the iterations, and the derivatives of the solution with respect
/// to the specification (absent where the equilibrium has none). `workspace` (nullable) warm-
/// starts from its previous solution. An unreachable specification is
/// `TL_STATUS_OUTSIDE_VALIDITY` or `TL_STATUS_NO_SOLUTION` with the bound in the message.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_ps(
    model: *const tl_model,
    pressure: f64,
    entropy: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_ps",
                options_json,
                workspace,
                model,
                &[pressure, entropy],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The equilibrium state at given temperature and volume per mol of feed: `temperature` (K), `volume` (m3/mol), the feed (`nc`
/// amounts, mol). The record holds the fields of a PT flash at the solution (`temperature`,
/// `pressure`, phases ...), the iterations, and the derivatives of the solution with respect
/// to the specification (absent where the equilibrium has none). `workspace` (nullable) warm-
/// starts from its previous solution. An unreachable specification is
/// `TL_STATUS_OUTSIDE_VALIDITY` or `TL_STATUS_NO_SOLUTION` with the bound in the message.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_tv(
    model: *const tl_model,
    temperature: f64,
    volume: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_tv",
                options_json,
                workspace,
                model,
                &[temperature, volume],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The equilibrium state at given molar internal energy and volume (a closed rigid vessel): `internal_energy` (J/mol), `volume` (m3/mol), the feed (`nc`
/// amounts, mol). The record holds the fields of a PT flash at the solution (`temperature`,
/// `pressure`, phases ...), the iterations, and the derivatives of the solution with respect
/// to the specification (absent where the equilibrium has none). `workspace` (nullable) warm-
/// starts from its previous solution. An unreachable specification is
/// `TL_STATUS_OUTSIDE_VALIDITY` or `TL_STATUS_NO_SOLUTION` with the bound in the message.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_uv(
    model: *const tl_model,
    internal_energy: f64,
    volume: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_uv",
                options_json,
                workspace,
                model,
                &[internal_energy, volume],
                feed,
                nc,
                record,
            )
        }
    })
}

/// Chemical equilibrium at given temperature and pressure: `temperature` (K), `pressure` (Pa). The species are
/// the model's components followed by the option `extra_species` (e.g. `{"extra_species":
/// ["OH", "NO", "graphite"]}`); `feed` holds `n` amounts in that order (mol). Ideal gas
/// unless the option `real_gas` is true. Fields: `temperature`, `pressure`, `species`,
/// `amounts`, `gas_mole_fractions`, `condensed`, `elements`, `element_potentials` (J/mol),
/// `enthalpy` (J), `entropy` (J/K), `certificate` ... An element-infeasible feed, an unknown
/// species, T outside a cp range or a specification with no solution in range are typed
/// errors. Equilibrium is a limit, not a prediction of kinetics.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_tp(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_tp",
                options_json,
                workspace,
                model,
                &[temperature, pressure],
                feed,
                n,
                record,
            )
        }
    })
}

/// Chemical equilibrium at given pressure and total enthalpy (the adiabatic flame): `pressure` (Pa), `enthalpy` (J, total). The species are
/// the model's components followed by the option `extra_species` (e.g. `{"extra_species":
/// ["OH", "NO", "graphite"]}`); `feed` holds `n` amounts in that order (mol). Ideal gas
/// unless the option `real_gas` is true. Fields: `temperature`, `pressure`, `species`,
/// `amounts`, `gas_mole_fractions`, `condensed`, `elements`, `element_potentials` (J/mol),
/// `enthalpy` (J), `entropy` (J/K), `certificate` ... An element-infeasible feed, an unknown
/// species, T outside a cp range or a specification with no solution in range are typed
/// errors. Equilibrium is a limit, not a prediction of kinetics.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_hp(
    model: *const tl_model,
    pressure: f64,
    enthalpy: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_hp",
                options_json,
                workspace,
                model,
                &[pressure, enthalpy],
                feed,
                n,
                record,
            )
        }
    })
}

/// Chemical equilibrium at given pressure and total entropy (isentropic expansion): `pressure` (Pa), `entropy` (J/K, total). The species are
/// the model's components followed by the option `extra_species` (e.g. `{"extra_species":
/// ["OH", "NO", "graphite"]}`); `feed` holds `n` amounts in that order (mol). Ideal gas
/// unless the option `real_gas` is true. Fields: `temperature`, `pressure`, `species`,
/// `amounts`, `gas_mole_fractions`, `condensed`, `elements`, `element_potentials` (J/mol),
/// `enthalpy` (J), `entropy` (J/K), `certificate` ... An element-infeasible feed, an unknown
/// species, T outside a cp range or a specification with no solution in range are typed
/// errors. Equilibrium is a limit, not a prediction of kinetics.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_sp(
    model: *const tl_model,
    pressure: f64,
    entropy: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_sp",
                options_json,
                workspace,
                model,
                &[pressure, entropy],
                feed,
                n,
                record,
            )
        }
    })
}

/// Chemical equilibrium at given temperature and total volume (a closed rigid vessel): `temperature` (K), `volume` (m3, total); species, feed,
/// options and fields as `tl_reaction_tp`. A volume or energy out of reach is
/// `TL_STATUS_NO_SOLUTION` naming the bound. Equilibrium is a limit, not a prediction of
/// kinetics.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_tv(
    model: *const tl_model,
    temperature: f64,
    volume: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_tv",
                options_json,
                workspace,
                model,
                &[temperature, volume],
                feed,
                n,
                record,
            )
        }
    })
}

/// Chemical equilibrium at given total internal energy and volume (a constant-volume explosion): `internal_energy` (J, total), `volume` (m3, total); species, feed,
/// options and fields as `tl_reaction_tp`. A volume or energy out of reach is
/// `TL_STATUS_NO_SOLUTION` naming the bound. Equilibrium is a limit, not a prediction of
/// kinetics.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_uv(
    model: *const tl_model,
    internal_energy: f64,
    volume: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_uv",
                options_json,
                workspace,
                model,
                &[internal_energy, volume],
                feed,
                n,
                record,
            )
        }
    })
}

/// Chemical and phase equilibrium together at given temperature (K) and pressure (Pa): the
/// reacting mixture's stability test and, where it fails, its split into two fluid phases of
/// the model (ln φ from the model; species = the model's components). Fields: `num_phases`,
/// `phase_kinds`, `phase_amounts`, `compositions` (a row per phase), `amounts`,
/// `element_potentials`, `one_phase_min_tpd`, `certificate`, `stable`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_reaction_tp_fluid_phases(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    feed: *const f64,
    n: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "reaction_tp_fluid_phases",
                options_json,
                workspace,
                model,
                &[temperature, pressure],
                feed,
                n,
                record,
            )
        }
    })
}

/// Activity coefficients of a liquid of the model's activity-coefficient model (a solution
/// model's liquid, or the excess Gibbs model of a cubic's EOS/G^E mixing rule) at
/// `temperature` (K) and the composition of `feed` (`nc` amounts, mol): fields `ln_gamma`,
/// `gamma`, `d_ln_gamma_dt` (1/K), `d_ln_gamma_dn` (1/mol, one row per component),
/// `excess_gibbs`, `excess_enthalpy` (J/mol), `excess_entropy` (J/(mol K)). A model without
/// one is `TL_STATUS_INVALID_INPUT`; a temperature outside the parameters' range is
/// `TL_STATUS_OUTSIDE_VALIDITY`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_activity_coefficients(
    model: *const tl_model,
    temperature: f64,
    feed: *const f64,
    nc: usize,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "activity_coefficients",
                std::ptr::null(),
                std::ptr::null_mut(),
                model,
                &[temperature],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The phases of least Gibbs energy at `temperature` (K) and `pressure` (Pa) with any number
/// of fluid phases: a vapour and up to three liquids (`{"allow_vapor": false}` for
/// liquid–liquid equilibrium only; `max_liquids`, `tolerance`, ... in `options_json`). The
/// record holds the fields of a PT flash (`num_phases`, `phase_kinds`, `compositions` ...).
/// `workspace` (nullable) warm-starts from its previous phase set.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_multiphase(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    workspace: *mut tl_workspace,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "flash_multiphase",
                options_json,
                workspace,
                model,
                &[temperature, pressure],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The azeotrope of a binary model at `pressure` (Pa), searched from the composition of `feed`
/// (2 amounts, mol) and then by a scan of x1: fields `temperature` (K), `pressure` (Pa),
/// `composition` (x = y), `ln_phi`, `molar_volumes` (m3/mol), `residual`, `iterations`. A
/// binary without an azeotrope at that pressure is `TL_STATUS_NO_SOLUTION`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_azeotrope_at_pressure(
    model: *const tl_model,
    pressure: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "azeotrope_at_pressure",
                options_json,
                std::ptr::null_mut(),
                model,
                &[pressure],
                feed,
                nc,
                record,
            )
        }
    })
}

/// The azeotrope of a binary model at `temperature` (K); as `tl_azeotrope_at_pressure` with
/// the pressure unknown.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_azeotrope_at_temperature(
    model: *const tl_model,
    temperature: f64,
    feed: *const f64,
    nc: usize,
    options_json: *const c_char,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe {
            named(
                "azeotrope_at_temperature",
                options_json,
                std::ptr::null_mut(),
                model,
                &[temperature],
                feed,
                nc,
                record,
            )
        }
    })
}
