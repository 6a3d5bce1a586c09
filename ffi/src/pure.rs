//! Solid phases and pure-substance phase equilibrium: solid handles (IAPWS-06 ice Ih, solid
//! carbon dioxide from fusion data), the stable phase at (T, p), two-phase coexistence
//! (melting, boiling, sublimation), the triple point, Gibbs-energy curves, and the PT flash
//! with pure solids.

use crate::boundary::*;
use crate::flash::{flash_options, tl_flash_options};
use crate::model::{component_index, model_ref, tl_model};
use crate::result::{ResultData, store_flash, tl_result, write};
use std::ffi::c_char;
use tieline::equilibrium::{
    Coexistence, GibbsCurves, PhasePoint, PurePhase, PurePhases, SolidFlashOptions, SolidPhaseSpec,
    flash_pt_with_solids, frost_point_temperature,
};
use tieline::model::{FluidModel, FusionData, FusionSolid, IceIh, Model, SolidModel};

/// A pure solid phase model of one species (e.g. ice Ih of water).
///
/// Thread safety: a solid is immutable and reference counted, like `tl_model`: share it
/// across any number of threads. A solid built from a fluid model keeps no reference to it.
pub struct tl_solid {
    _private: [u8; 0],
}

pub(crate) struct SolidData {
    pub solid: Box<dyn SolidModel>,
}

impl Castable for tl_solid {
    type Inner = SolidData;
    type Ownership = SharedArc;
    const TAG: u64 = 0x746c_736f_6c69_6431; // "tlsolid1"
    const NAME: &'static str = "solid";
}

fn new_solid(out: *mut *const tl_solid, make: impl FnOnce() -> FfiResult<Box<dyn SolidModel>>) -> FfiResult {
    // SAFETY: `out` is NULL or writable (caller contract of the exported functions).
    let out = unsafe { Out::new(out, "out")? };
    let solid = make()?;
    out.set(new_arc::<tl_solid>(SolidData { solid }));
    Ok(())
}

/// Ice Ih by the IAPWS-06 Gibbs function (IAPWS R10-06(2009)), species "water"; evaluated
/// for 0 < T ≤ 273.16 K and p ≤ 210 MPa. Its reference state is consistent
/// with the IAPWS-95 water model (`{"model": "iapws95"}`). On success `*out` receives a new
/// solid, to be released with `tl_solid_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_ice_ih_new(out: *mut *const tl_solid) -> tl_status {
    ffi_boundary!({ new_solid(out, || Ok(Box::new(IceIh::new()))) })
}

/// Solid carbon dioxide ("dry ice") from its fusion data (triple point 216.592 K, enthalpy
/// of fusion 9.0 kJ/mol, constant molar volume and heat capacity; 150–260 K, up to 50 MPa),
/// anchored to component `component` of `fluid`: at 216.592 K and the fluid model's vapour
/// pressure there, the solid's molar Gibbs energy equals the fluid's, so the combined
/// triple point lies exactly there. The component must be named "carbon dioxide".
///
/// Errors: `TL_STATUS_INVALID_INPUT` (another species, index out of range),
/// `TL_STATUS_NO_SOLUTION` (the fluid has no saturation at 216.592 K).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_carbon_dioxide_new(
    fluid: *const tl_model,
    component: usize,
    out: *mut *const tl_solid,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let m = unsafe { model_ref(fluid)? };
        let i = component_index(m, component)?;
        let data = FusionData::carbon_dioxide();
        if m.component_name(i) != data.species {
            return Err(FfiError::invalid(
                "component",
                format!(
                    "component {i} is '{}'; dry ice requires the component '{}'",
                    m.component_name(i),
                    data.species
                ),
            ));
        }
        new_solid(out, || Ok(Box::new(FusionSolid::anchored(m, i, data)?)))
    })
}

/// Fusion data of a pure solid, for `tl_solid_fusion_new` (SI units).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct tl_fusion_data {
    /// Triple-point temperature, K (> 0, strictly inside [`t_min`, `t_max`]).
    pub t_triple: f64,
    /// Published triple-point pressure, Pa (> 0; kept for reference: the solid's own triple
    /// point lies at the fluid model's vapour pressure at `t_triple`).
    pub p_triple: f64,
    /// Enthalpy of fusion at the triple point, J/mol (> 0).
    pub enthalpy_of_fusion: f64,
    /// Heat-capacity difference cp(liquid) − cp(solid) at the triple point, J/(mol K).
    pub delta_cp: f64,
    /// Molar volume of the solid, m3/mol (> 0; taken constant).
    pub solid_molar_volume: f64,
    /// Lowest temperature of evaluation, K (> 0).
    pub t_min: f64,
    /// Highest temperature of evaluation, K.
    pub t_max: f64,
    /// Highest pressure of evaluation, Pa (> 0).
    pub p_max: f64,
}

/// A pure solid of component `component` of `fluid` from user fusion data `data`, anchored
/// like `tl_solid_carbon_dioxide_new` (the solid's Gibbs energy equals the fluid's saturated
/// liquid's at `t_triple`). Its species is the component's name. `source` (may be NULL) is a
/// NUL-terminated UTF-8 note of where the numbers come from, kept with the solid.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (a value out of range, naming the field; a heat-capacity
/// difference that leaves the solid cp ≤ 0), `TL_STATUS_INDEX_OUT_OF_RANGE` (component),
/// `TL_STATUS_NO_SOLUTION` (the fluid has no saturation at `t_triple`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_fusion_new(
    fluid: *const tl_model,
    component: usize,
    data: *const tl_fusion_data,
    source: *const c_char,
    out: *mut *const tl_solid,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, d) = unsafe { (model_ref(fluid)?, slice(data, 1, "data")?[0]) };
        let i = component_index(m, component)?;
        let source = if source.is_null() {
            String::from("user data (no source given)")
        } else {
            // SAFETY: caller contract.
            unsafe { c_str(source, "source")? }.to_owned()
        };
        let data = FusionData {
            species: m.component_name(i).to_owned(),
            t_triple: d.t_triple,
            p_triple: d.p_triple,
            enthalpy_of_fusion: d.enthalpy_of_fusion,
            delta_cp: d.delta_cp,
            solid_molar_volume: d.solid_molar_volume,
            t_min: d.t_min,
            t_max: d.t_max,
            p_max: d.p_max,
            source,
        };
        new_solid(out, || Ok(Box::new(FusionSolid::anchored(m, i, data)?)))
    })
}

/// A second handle to the same solid (shares the data; each handle is freed separately).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_clone(solid: *const tl_solid, out: *mut *const tl_solid) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        // SAFETY: caller contract.
        let a = unsafe { clone_arc(solid)? };
        out.set(arc_handle(a));
        Ok(())
    })
}

/// The species name of a solid (e.g. "water"), with the buffer convention of
/// `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_species(
    solid: *const tl_solid,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let s = unsafe { try_ref(solid)? };
        // SAFETY: caller contract.
        unsafe { write_text(s.solid.species(), buf, len, needed, false) }
    })
}

/// Releases a solid handle. NULL is accepted and ignored. Must not be called twice.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_solid_free(solid: *const tl_solid) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_arc(solid) } })
}

/// The solids behind an array of `count` handles (`solids` may be NULL when `count` is 0).
///
/// # Safety
/// `solids` must be NULL or point to `count` handles, each NULL or a live `tl_solid`.
unsafe fn solid_refs<'a>(solids: *const *const tl_solid, count: usize) -> FfiResult<Vec<&'a dyn SolidModel>> {
    if count == 0 {
        return Ok(Vec::new());
    }
    // SAFETY: forwarded contract.
    let hs = unsafe { slice(solids, count, "solids")? };
    hs.iter()
        .enumerate()
        .map(|(k, &h)| {
            // SAFETY: forwarded contract.
            unsafe { try_ref(h) }
                .map(|s| s.solid.as_ref())
                .map_err(|e| FfiError::new(e.status, format!("solids[{k}]: {}", e.message)))
        })
        .collect()
}

/// # Safety
/// As [`solid_refs`], and `fluid` NULL or a live `tl_model`.
unsafe fn phase_set<'a>(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
) -> FfiResult<PurePhases<'a, Model>> {
    // SAFETY: forwarded contract.
    let (m, s) = unsafe { (model_ref(fluid)?, solid_refs(solids, num_solids)?) };
    let i = component_index(m, component)?;
    Ok(PurePhases::new(m, i, s)?)
}

/// A phase of a pure substance (`TL_PURE_*`): the fluid's liquid or vapour, or solid `k` of
/// the solids array as `TL_PURE_SOLID + k`.
pub type tl_pure_phase = u32;
/// The fluid model's liquid (dense) root.
pub const TL_PURE_LIQUID: tl_pure_phase = 1;
/// The fluid model's vapour (light) root.
pub const TL_PURE_VAPOR: tl_pure_phase = 2;
/// The first solid of the array; solid `k` is `TL_PURE_SOLID + k`.
pub const TL_PURE_SOLID: tl_pure_phase = 16;

fn pure_phase(code: tl_pure_phase, num_solids: usize, what: &str) -> FfiResult<PurePhase> {
    match code {
        TL_PURE_LIQUID => Ok(PurePhase::Liquid),
        TL_PURE_VAPOR => Ok(PurePhase::Vapor),
        c if c >= TL_PURE_SOLID && ((c - TL_PURE_SOLID) as usize) < num_solids => {
            Ok(PurePhase::Solid((c - TL_PURE_SOLID) as usize))
        }
        c if c >= TL_PURE_SOLID => Err(FfiError::new(
            tl_status::IndexOutOfRange,
            format!(
                "{what} = TL_PURE_SOLID + {}, but {num_solids} solids are given",
                c - TL_PURE_SOLID
            ),
        )),
        c => Err(FfiError::invalid(
            what,
            format!("{c}; TL_PURE_LIQUID (1), TL_PURE_VAPOR (2) or TL_PURE_SOLID (16) + solid index is required"),
        )),
    }
}

fn phase_code(p: PurePhase) -> tl_pure_phase {
    match p {
        PurePhase::Liquid => TL_PURE_LIQUID,
        PurePhase::Vapor => TL_PURE_VAPOR,
        PurePhase::Solid(k) => TL_PURE_SOLID + k as u32,
    }
}

/// One phase of a pure substance at (T, p): molar quantities in the library reference state.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_pure_phase_point {
    /// Which phase (`TL_PURE_*`).
    pub phase: tl_pure_phase,
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
}

impl From<PhasePoint> for tl_pure_phase_point {
    fn from(p: PhasePoint) -> Self {
        tl_pure_phase_point {
            phase: phase_code(p.phase),
            temperature: p.temperature,
            pressure: p.pressure,
            gibbs: p.gibbs,
            enthalpy: p.enthalpy,
            entropy: p.entropy,
            molar_volume: p.molar_volume,
        }
    }
}

/// A point of a two-phase boundary of a pure substance.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_coexistence {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// The first phase's state.
    pub a: tl_pure_phase_point,
    /// The second phase's state (the one stable at higher temperature for melting, boiling
    /// and sublimation).
    pub b: tl_pure_phase_point,
    /// Enthalpy of transition h_b − h_a, J/mol.
    pub delta_h: f64,
    /// Entropy of transition s_b − s_a, J/(mol K).
    pub delta_s: f64,
    /// Volume change v_b − v_a, m3/mol.
    pub delta_v: f64,
    /// Clapeyron slope dp/dT = Δs/Δv of the boundary, Pa/K.
    pub clapeyron_slope: f64,
    /// Newton iterations used.
    pub iterations: usize,
}

impl From<Coexistence> for tl_coexistence {
    fn from(c: Coexistence) -> Self {
        tl_coexistence {
            temperature: c.temperature,
            pressure: c.pressure,
            a: c.states.0.into(),
            b: c.states.1.into(),
            delta_h: c.delta_h,
            delta_s: c.delta_s,
            delta_v: c.delta_v,
            clapeyron_slope: c.clapeyron_slope,
            iterations: c.iterations,
        }
    }
}

/// A solid–liquid–vapour triple point of a pure substance.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_triple_point {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// The solid's state.
    pub solid: tl_pure_phase_point,
    /// The liquid's state.
    pub liquid: tl_pure_phase_point,
    /// The vapour's state.
    pub vapor: tl_pure_phase_point,
    /// max |g_i − g_j|/(RT) at the solution (dimensionless).
    pub residual: f64,
    /// Outer iterations.
    pub iterations: usize,
}

/// An optional guess from a nullable pointer (NULL = none).
///
/// # Safety
/// `p` must be NULL or point to a readable `f64`.
unsafe fn guess(p: *const f64, what: &str) -> FfiResult<Option<f64>> {
    if p.is_null() {
        return Ok(None);
    }
    if !p.is_aligned() {
        return Err(FfiError::invalid(what, "the pointer is not aligned for its type"));
    }
    // SAFETY: non-NULL, aligned, readable by the contract.
    Ok(Some(unsafe { *p }))
}

/// The stable phase of component `component` of `fluid`, taken pure, together with the
/// `num_solids` solids in `solids` (may be NULL when `num_solids` is 0; every solid must be of
/// that component's species), at `temperature` (K) and `pressure` (Pa): the phase of least
/// molar Gibbs energy. `*out` receives it (`out->phase` says which, `out->gibbs` in J/mol).
///
/// Errors: `TL_STATUS_INVALID_INPUT` (non-finite or non-positive T or p, a solid of another
/// species), `TL_STATUS_NO_SOLUTION` (no phase of the set can be evaluated there).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_stable_phase(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    temperature: f64,
    pressure: f64,
    out: *mut tl_pure_phase_point,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, out) = unsafe { (phase_set(fluid, component, solids, num_solids)?, Out::new(out, "out")?) };
        out.set(set.stable_phase(temperature, pressure)?.stable.into());
        Ok(())
    })
}

/// The temperature (K) at which phases `phase_a` and `phase_b` (`TL_PURE_*`) coexist at
/// `pressure` (Pa): the melting point (solid, liquid), the boiling point (liquid, vapour) or
/// the sublimation point (solid, vapour). `t_guess` (K; may be NULL) starts the Newton
/// iteration; by default it starts from the solid's triple-point estimate or the fluid's
/// boiling point. Other arguments as `tl_pure_stable_phase`.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (an unknown phase code, the same phase twice),
/// `TL_STATUS_INDEX_OUT_OF_RANGE` (a solid beyond `num_solids`), `TL_STATUS_NO_SOLUTION`,
/// `TL_STATUS_NOT_CONVERGED`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_coexistence_temperature(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    phase_a: tl_pure_phase,
    phase_b: tl_pure_phase,
    pressure: f64,
    t_guess: *const f64,
    out: *mut tl_coexistence,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, g, out) = unsafe {
            (
                phase_set(fluid, component, solids, num_solids)?,
                guess(t_guess, "t_guess")?,
                Out::new(out, "out")?,
            )
        };
        let a = pure_phase(phase_a, num_solids, "phase_a")?;
        let b = pure_phase(phase_b, num_solids, "phase_b")?;
        out.set(set.coexistence_at_pressure(a, b, pressure, g)?.into());
        Ok(())
    })
}

/// The pressure (Pa) at which phases `phase_a` and `phase_b` coexist at `temperature` (K):
/// the vapour pressure (liquid, vapour), the sublimation pressure (solid, vapour) or the
/// melting pressure (solid, liquid). `p_guess` (Pa; may be NULL) starts the Newton iteration.
/// Arguments and errors as `tl_pure_coexistence_temperature`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_coexistence_pressure(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    phase_a: tl_pure_phase,
    phase_b: tl_pure_phase,
    temperature: f64,
    p_guess: *const f64,
    out: *mut tl_coexistence,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, g, out) = unsafe {
            (
                phase_set(fluid, component, solids, num_solids)?,
                guess(p_guess, "p_guess")?,
                Out::new(out, "out")?,
            )
        };
        let a = pure_phase(phase_a, num_solids, "phase_a")?;
        let b = pure_phase(phase_b, num_solids, "phase_b")?;
        out.set(set.coexistence_at_temperature(a, b, temperature, g)?.into());
        Ok(())
    })
}

/// The triple point where solid `solid` (an index into `solids`), the liquid and the vapour
/// coexist, from `t_guess` (K; may be NULL: the solid's triple-point estimate). Other
/// arguments as `tl_pure_stable_phase`.
///
/// Errors: `TL_STATUS_INDEX_OUT_OF_RANGE` (`solid` ≥ `num_solids`), `TL_STATUS_NO_SOLUTION`,
/// `TL_STATUS_NOT_CONVERGED`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_triple_point(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    solid: usize,
    t_guess: *const f64,
    out: *mut tl_triple_point,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, g, out) = unsafe {
            (
                phase_set(fluid, component, solids, num_solids)?,
                guess(t_guess, "t_guess")?,
                Out::new(out, "out")?,
            )
        };
        if solid >= num_solids {
            return Err(FfiError::new(
                tl_status::IndexOutOfRange,
                format!("solid index {solid} of {num_solids} solids"),
            ));
        }
        let tp = set.triple_point(solid, g)?;
        out.set(tl_triple_point {
            temperature: tp.temperature,
            pressure: tp.pressure,
            solid: tp.phases[0].into(),
            liquid: tp.phases[1].into(),
            vapor: tp.phases[2].into(),
            residual: tp.residual,
            iterations: tp.iterations,
        });
        Ok(())
    })
}

/// A crossing of two Gibbs-energy curves, refined by the coexistence solve.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_gibbs_crossing {
    /// The coexistence point.
    pub point: tl_coexistence,
    /// Molar Gibbs energy at the crossing, J/mol.
    pub gibbs: f64,
    /// True if no other phase lies lower there (a phase transition); false for a metastable
    /// crossing.
    pub stable: bool,
}

/// Writes Gibbs-energy curves computed by `compute` on the grid `grid` (`grid_len` values)
/// into the caller's arrays, with the conventions of `tl_pure_gibbs_curves_isobaric`.
///
/// # Safety
/// As `tl_pure_gibbs_curves_isobaric`.
#[allow(clippy::too_many_arguments)]
unsafe fn write_curves(
    num_solids: usize,
    grid: *const f64,
    grid_len: usize,
    grid_name: &str,
    gibbs: *mut f64,
    gibbs_len: usize,
    crossings: *mut tl_gibbs_crossing,
    crossings_len: usize,
    num_crossings: *mut usize,
    compute: impl FnOnce(&[f64]) -> tieline::Result<GibbsCurves>,
) -> FfiResult {
    // SAFETY: forwarded contract.
    let xs = unsafe { slice(grid, grid_len, grid_name)? };
    let need = (2 + num_solids)
        .checked_mul(xs.len())
        .ok_or_else(|| FfiError::invalid(grid_name, "too many grid points"))?;
    // SAFETY: forwarded contract.
    let (g_out, nc_out) = unsafe {
        (
            OutArray::new(gibbs, gibbs_len, need, "gibbs")?,
            Out::optional(num_crossings, "num_crossings")?,
        )
    };
    // SAFETY: forwarded contract (`crossings_len` entries, checked against the count below).
    let c_out = unsafe { OutArray::optional(crossings, crossings_len, 0, "crossings")? };
    let curves = compute(xs)?;
    let found = curves.crossings.len();
    if c_out.is_some() && crossings_len < found {
        if let Some(n) = nc_out {
            n.set(found);
        }
        return Err(FfiError::new(
            tl_status::BufferTooSmall,
            format!("crossings holds {crossings_len} entries; {found} are required"),
        ));
    }
    for (k, (_, g)) in curves.curves.iter().enumerate() {
        let row: Vec<f64> = g.iter().map(|v| v.unwrap_or(f64::NAN)).collect();
        g_out.write(k * xs.len(), &row);
    }
    if let Some(c) = c_out {
        for (k, x) in curves.crossings.iter().enumerate() {
            c.set(
                k,
                tl_gibbs_crossing {
                    point: x.point.into(),
                    gibbs: x.gibbs,
                    stable: x.stable,
                },
            );
        }
    }
    if let Some(n) = nc_out {
        n.set(found);
    }
    Ok(())
}

/// Molar Gibbs energies g(T) (J/mol) of every phase at `pressure` (Pa) on the grid
/// `temperatures` (`num_temperatures` ≥ 2 values, K, strictly ascending).
///
/// `gibbs` (`gibbs_len` ≥ (2 + `num_solids`) × `num_temperatures`) receives the curves
/// row-major: the liquid's curve, the vapour's, then one per solid in the order given; NaN
/// where the phase does not exist or is outside its model's range. `crossings` (may be NULL;
/// else room for `crossings_len` entries) receives the crossings of the curves, and
/// `*num_crossings` (may be NULL) their number; if `crossings` is too small, nothing but
/// `*num_crossings` is written and `TL_STATUS_BUFFER_TOO_SMALL` is returned.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_gibbs_curves_isobaric(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    pressure: f64,
    temperatures: *const f64,
    num_temperatures: usize,
    gibbs: *mut f64,
    gibbs_len: usize,
    crossings: *mut tl_gibbs_crossing,
    crossings_len: usize,
    num_crossings: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let set = unsafe { phase_set(fluid, component, solids, num_solids)? };
        // SAFETY: caller contract.
        unsafe {
            write_curves(
                num_solids,
                temperatures,
                num_temperatures,
                "temperatures",
                gibbs,
                gibbs_len,
                crossings,
                crossings_len,
                num_crossings,
                |ts| set.gibbs_curves_isobaric(pressure, ts),
            )
        }
    })
}

/// Molar Gibbs energies g(p) (J/mol) of every phase at `temperature` (K) on the grid
/// `pressures` (`num_pressures` ≥ 2 values, Pa, strictly ascending); the crossings are
/// refined by the coexistence solve at that temperature (vapour pressure, sublimation or
/// melting pressure). Output arrays and errors as `tl_pure_gibbs_curves_isobaric`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_gibbs_curves_isothermal(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    temperature: f64,
    pressures: *const f64,
    num_pressures: usize,
    gibbs: *mut f64,
    gibbs_len: usize,
    crossings: *mut tl_gibbs_crossing,
    crossings_len: usize,
    num_crossings: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let set = unsafe { phase_set(fluid, component, solids, num_solids)? };
        // SAFETY: caller contract.
        unsafe {
            write_curves(
                num_solids,
                pressures,
                num_pressures,
                "pressures",
                gibbs,
                gibbs_len,
                crossings,
                crossings_len,
                num_crossings,
                |ps| set.gibbs_curves_isothermal(temperature, ps),
            )
        }
    })
}

/// The state of one phase (`TL_PURE_*`) of the pure substance at `temperature` (K) and
/// `pressure` (Pa). `*exists` receives whether the phase exists there (a fluid root of that
/// kind, a solid inside its model's range); `*out` is written only when it does.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (T, p, phase code), `TL_STATUS_INDEX_OUT_OF_RANGE`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_phase_state(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    phase: tl_pure_phase,
    temperature: f64,
    pressure: f64,
    out: *mut tl_pure_phase_point,
    exists: *mut bool,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, out, exists) = unsafe {
            (
                phase_set(fluid, component, solids, num_solids)?,
                Out::new(out, "out")?,
                Out::new(exists, "exists")?,
            )
        };
        let ph = pure_phase(phase, num_solids, "phase")?;
        match set.evaluate(ph, temperature, pressure)? {
            Some(p) => {
                out.set(p.into());
                exists.set(true);
            }
            None => exists.set(false),
        }
        Ok(())
    })
}

/// Which coordinate a boundary trace steps along.
pub type tl_trace_axis = u32;
/// Step along temperature: the coexistence pressure at each grid temperature (K).
pub const TL_TRACE_TEMPERATURE: tl_trace_axis = 1;
/// Step along pressure: the coexistence temperature at each grid pressure (Pa).
pub const TL_TRACE_PRESSURE: tl_trace_axis = 2;

/// The boundary where `phase_a` and `phase_b` coexist, traced over `grid` (`num_points`
/// values: temperatures in K for `TL_TRACE_TEMPERATURE`, pressures in Pa for
/// `TL_TRACE_PRESSURE`), each point's Newton solve started from the previous point
/// extrapolated with its Clapeyron slope, the first from `guess` (Pa or K; may be NULL).
/// `out` (`out_len` ≥ `num_points`) receives one coexistence point per grid value, written
/// only if every point succeeds.
///
/// Errors: those of `tl_pure_coexistence_temperature`; a point that fails stops the trace,
/// and the message names its index.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_pure_trace(
    fluid: *const tl_model,
    component: usize,
    solids: *const *const tl_solid,
    num_solids: usize,
    phase_a: tl_pure_phase,
    phase_b: tl_pure_phase,
    axis: tl_trace_axis,
    grid: *const f64,
    num_points: usize,
    guess_value: *const f64,
    out: *mut tl_coexistence,
    out_len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (set, xs, g, out) = unsafe {
            (
                phase_set(fluid, component, solids, num_solids)?,
                slice(grid, num_points, "grid")?,
                guess(guess_value, "guess")?,
                OutArray::new(out, out_len, num_points, "out")?,
            )
        };
        let a = pure_phase(phase_a, num_solids, "phase_a")?;
        let b = pure_phase(phase_b, num_solids, "phase_b")?;
        let pts = match axis {
            TL_TRACE_TEMPERATURE => set.trace_along_temperature(a, b, xs, g)?,
            TL_TRACE_PRESSURE => set.trace_along_pressure(a, b, xs, g)?,
            other => {
                return Err(FfiError::invalid(
                    "axis",
                    format!("{other}; TL_TRACE_TEMPERATURE (1) or TL_TRACE_PRESSURE (2) is required"),
                ));
            }
        };
        let rows: Vec<tl_coexistence> = pts.into_iter().map(Into::into).collect();
        out.write(0, &rows);
        Ok(())
    })
}

// ---------------------------------------------------------------------------------------------
// The PT flash with pure solids

/// A candidate solid in the result of `tl_flash_with_solids`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_solid_phase {
    /// Fluid component index of the solid's species.
    pub component: usize,
    /// Whether the solid is present.
    pub present: bool,
    /// Whether the solid model could be evaluated at (T, p); a solid outside its range is not
    /// considered, and its fugacities and margin are zero.
    pub evaluated: bool,
    /// Amount of the solid, mol (0 when absent).
    pub amount: f64,
    /// Amount over the total feed amount (0 when absent).
    pub fraction: f64,
    /// ln of the solid's fugacity, ln(f/Pa).
    pub ln_fugacity_solid: f64,
    /// ln of the species' fugacity in the fluid, ln(f/Pa) (−1e300 when the species is absent
    /// from the fluid).
    pub ln_fugacity_fluid: f64,
    /// Stability margin ln f_solid − ln f_fluid (dimensionless): ≥ 0 for a stable absent
    /// solid, ≈ 0 for a present one in equilibrium with a fluid, < 0 when a feed of that
    /// species alone froze entirely (no fluid remains; `ln_fugacity_fluid` is then that of the
    /// feed flashed as a fluid at (T, p)).
    pub margin: f64,
}

/// Summary of `tl_flash_with_solids`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_solid_flash_summary {
    /// Amount remaining fluid, mol (0 when everything froze).
    pub fluid_amount: f64,
    /// Number of solids present.
    pub num_solids_present: usize,
    /// Active-set iterations.
    pub active_set_iterations: usize,
    /// Inner (false-position) iterations.
    pub inner_iterations: usize,
    /// Fluid flashes performed.
    pub fluid_flashes: usize,
    /// max |ln f_fluid − ln f_solid| over present solids (dimensionless).
    pub residual: f64,
    /// Least margin over the absent evaluated solids (1e300 if none).
    pub min_absent_margin: f64,
}

/// PT flash of feed amounts `n` (`len` values, mol) at `temperature` (K) and `pressure` (Pa)
/// over the fluid phases of `model` and the pure solids `solids` (`num_solids` handles, may be
/// NULL when 0; each solid's species is found among the model's components by name).
/// `options` (may be NULL) are those of the fluid flashes; the solid tolerance is 1e-9.
///
/// Outputs, all written only on success: `result` (may be NULL) receives the flash of the
/// fluid part (phase fractions relative to the fluid amount), or is emptied when no fluid
/// remains; `summary` (required); `phases` (may be NULL; else `phases_len` ≥ `num_solids`)
/// one entry per candidate solid, in the order given.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (T, p, amounts; a solid whose species is not a
/// component), `TL_STATUS_BUSY` (the result in use), and those of `tl_flash`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_with_solids(
    model: *const tl_model,
    solids: *const *const tl_solid,
    num_solids: usize,
    temperature: f64,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_flash_options,
    result: *mut tl_result,
    summary: *mut tl_solid_flash_summary,
    phases: *mut tl_solid_phase,
    phases_len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, s, n, fo, summary, ph_out) = unsafe {
            (
                model_ref(model)?,
                solid_refs(solids, num_solids)?,
                slice(n, len, "n")?,
                flash_options(options)?,
                Out::new(summary, "summary")?,
                OutArray::optional(phases, phases_len, num_solids, "phases")?,
            )
        };
        let mut res = if result.is_null() {
            None
        } else {
            // SAFETY: caller contract.
            Some(unsafe { write(result)? })
        };
        let specs = s
            .iter()
            .map(|&x| SolidPhaseSpec::matching(m, x))
            .collect::<tieline::Result<Vec<_>>>()?;
        let opts = SolidFlashOptions {
            flash: fo,
            ..SolidFlashOptions::default()
        };
        let r = flash_pt_with_solids(m, &specs, temperature, pressure, n, &opts)?;
        if let Some(out) = ph_out {
            for mg in &r.margins {
                let present = r.solids.iter().find(|x| x.candidate == mg.candidate);
                out.set(
                    mg.candidate,
                    tl_solid_phase {
                        component: specs[mg.candidate].component,
                        present: mg.present,
                        evaluated: mg.evaluated,
                        amount: present.map_or(0.0, |x| x.amount),
                        fraction: present.map_or(0.0, |x| x.fraction),
                        ln_fugacity_solid: mg.ln_fugacity_solid,
                        ln_fugacity_fluid: mg.ln_fugacity_fluid,
                        margin: mg.margin,
                    },
                );
            }
        }
        if let Some(g) = res.as_mut() {
            match &r.fluid {
                Some(f) => store_flash(g, f),
                None => **g = ResultData::Empty,
            }
        }
        let d = &r.diagnostics;
        summary.set(tl_solid_flash_summary {
            fluid_amount: r.fluid.as_ref().map_or(0.0, |f| f.feed.iter().sum()),
            num_solids_present: r.solids.len(),
            active_set_iterations: d.active_set_iterations,
            inner_iterations: d.inner_iterations,
            fluid_flashes: d.fluid_flashes,
            residual: d.residual,
            min_absent_margin: d.min_absent_margin,
        });
        Ok(())
    })
}

/// The frost point: the temperature (K) at which the pure solid `solid` first appears from a
/// fluid of amounts `n` (`len` values, mol) of `model` at `pressure` (Pa), where the solid's
/// fugacity equals its species' fugacity in the flashed fluid. The search brackets from
/// `t_guess` (K) in steps of 2 % and refines by false position. `options` (may be NULL) are
/// those of the fluid flashes. `*out` receives the temperature.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (p, T guess, amounts; the solid's species not a component
/// of the model or absent from the feed), `TL_STATUS_NO_SOLUTION` (no sign change within 60
/// steps of the guess), `TL_STATUS_NOT_CONVERGED`, and those of `tl_flash`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_frost_point_temperature(
    model: *const tl_model,
    solid: *const tl_solid,
    pressure: f64,
    n: *const f64,
    len: usize,
    t_guess: f64,
    options: *const tl_flash_options,
    out: *mut f64,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, s, n, fo, out) = unsafe {
            (
                model_ref(model)?,
                try_ref(solid)?,
                slice(n, len, "n")?,
                flash_options(options)?,
                Out::new(out, "out")?,
            )
        };
        let spec = SolidPhaseSpec::matching(m, s.solid.as_ref())?;
        out.set(frost_point_temperature(m, spec, pressure, n, t_guess, &fo)?);
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phase_codes_round_trip_and_reject_unknown_values() {
        for ph in [
            PurePhase::Liquid,
            PurePhase::Vapor,
            PurePhase::Solid(0),
            PurePhase::Solid(2),
        ] {
            assert_eq!(pure_phase(phase_code(ph), 3, "phase").unwrap(), ph);
        }
        for bad in [0, 3, 15] {
            assert_eq!(pure_phase(bad, 3, "phase").unwrap_err().status, tl_status::InvalidInput);
        }
        assert_eq!(
            pure_phase(TL_PURE_SOLID + 3, 3, "phase").unwrap_err().status,
            tl_status::IndexOutOfRange
        );
    }
}
