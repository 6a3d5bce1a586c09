//! Result handles: a reusable container that a flash or a stability test fills, with
//! accessors for phases, compositions, properties, diagnostics and JSON.

use crate::boundary::*;
use crate::model::{model_ref, tl_model};
use std::ffi::c_char;
use tieline::equilibrium::{FlashResult, Phase, StabilityResult};
use tieline::model::{FluidModel, PhaseKind, Properties};

/// A result: empty when created, then holding the outcome of the last successful call that
/// filled it (a flash or a stability test). Refilling reuses its storage.
///
/// Thread safety: a result may be read by several threads at once, but must not be filled
/// while another thread reads or fills it (such a call returns `TL_STATUS_BUSY`).
pub struct tl_result {
    _private: [u8; 0],
}

/// What a result holds.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum tl_result_kind {
    /// Nothing yet.
    Empty = 0,
    /// A PT flash (`tl_flash`, `tl_context_flash`).
    Flash = 1,
    /// A stability test (`tl_stability`).
    Stability = 2,
}

/// The kind of a phase.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum tl_phase_kind {
    /// Not named (or an unused slot of a batch output).
    None = 0,
    /// A vapour (or supercritical, gas-like) phase.
    Vapor = 1,
    /// A liquid (or dense, liquid-like) phase.
    Liquid = 2,
    /// A second liquid phase (the lighter of two liquids).
    Liquid2 = 3,
    /// A solid phase.
    Solid = 4,
    /// A third liquid phase (the lightest of three liquids).
    Liquid3 = 5,
    /// A kind this version of the C ABI does not name yet.
    Other = 99,
}

impl tl_phase_kind {
    /// The C kind of a core phase kind.
    pub fn from_kind(k: Option<PhaseKind>) -> Self {
        match k {
            None => tl_phase_kind::None,
            Some(PhaseKind::Vapor) => tl_phase_kind::Vapor,
            Some(PhaseKind::Liquid) => tl_phase_kind::Liquid,
            Some(PhaseKind::Liquid2) => tl_phase_kind::Liquid2,
            Some(PhaseKind::Solid) => tl_phase_kind::Solid,
            Some(PhaseKind::Liquid3) => tl_phase_kind::Liquid3,
            Some(_) => tl_phase_kind::Other,
        }
    }
}

#[derive(Default)]
pub(crate) enum ResultData {
    #[default]
    Empty,
    Flash(FlashResult),
    Stability(StabilityResult),
}

impl Castable for tl_result {
    type Inner = TryCell<ResultData>;
    type Ownership = OwnedBox;
    const TAG: u64 = 0x746c_7265_7375_6c74; // "tlresult"
    const NAME: &'static str = "result";
}

fn busy() -> FfiError {
    FfiError::new(
        tl_status::Busy,
        "the result is in use by another thread (a result is filled by one thread at a time)",
    )
}

/// Read access to a result.
///
/// # Safety
/// As [`try_ref`].
pub(crate) unsafe fn read<'a>(r: *const tl_result) -> FfiResult<TryReadGuard<'a, ResultData>> {
    // SAFETY: forwarded contract.
    let cell = unsafe { try_ref(r)? };
    // A panic while filling left it half-written: it reads as whatever was written; the next
    // fill overwrites it.
    cell.try_read().ok_or_else(busy)
}

/// Write access to a result; one left half-written by a panic is emptied first.
///
/// # Safety
/// As [`try_ref`].
pub(crate) unsafe fn write<'a>(r: *mut tl_result) -> FfiResult<TryWriteGuard<'a, ResultData>> {
    // SAFETY: forwarded contract.
    let cell = unsafe { try_ref(r.cast_const())? };
    match cell.try_write() {
        Some((g, false)) => Ok(g),
        Some((mut g, true)) => {
            *g = ResultData::Empty;
            Ok(g)
        }
        None => Err(busy()),
    }
}

/// Copies `src` into `dst`, reusing its storage: a plain copy when the lengths agree (the
/// steady state of a context filling the same result), else a refill.
#[inline]
fn copy_values(dst: &mut Vec<f64>, src: &[f64]) {
    if dst.len() == src.len() {
        dst.copy_from_slice(src);
    } else {
        dst.clear();
        dst.extend_from_slice(src);
    }
}

#[inline]
fn copy_phase(dst: &mut Phase, src: &Phase) {
    dst.kind = src.kind;
    dst.amount = src.amount;
    dst.fraction = src.fraction;
    copy_values(&mut dst.composition, &src.composition);
    dst.molar_volume = src.molar_volume;
    dst.z = src.z;
    copy_values(&mut dst.ln_phi, &src.ln_phi);
}

/// Stores a flash result, reusing the storage of a previous flash result (no allocation when
/// the shape is unchanged).
pub(crate) fn store_flash(dst: &mut ResultData, src: &FlashResult) {
    let ResultData::Flash(d) = dst else {
        *dst = ResultData::Flash(src.clone());
        return;
    };
    d.temperature = src.temperature;
    d.pressure = src.pressure;
    copy_values(&mut d.feed, &src.feed);
    if d.phases.len() == src.phases.len() {
        for (a, b) in d.phases.iter_mut().zip(&src.phases) {
            copy_phase(a, b);
        }
    } else {
        d.phases.truncate(src.phases.len());
        let common = d.phases.len();
        for (a, b) in d.phases.iter_mut().zip(&src.phases) {
            copy_phase(a, b);
        }
        d.phases.extend(src.phases[common..].iter().cloned());
    }
    match (&mut d.tie_line, &src.tie_line) {
        (None, None) => {}
        (Some(a), Some(b)) => {
            a.beta = b.beta;
            copy_values(&mut a.x, &b.x);
            copy_values(&mut a.y, &b.y);
        }
        (a, b) => a.clone_from(b),
    }
    d.diagnostics = src.diagnostics.clone();
}

/// The flash result held, or `WrongResultKind`.
pub(crate) fn as_flash(d: &ResultData) -> FfiResult<&FlashResult> {
    match d {
        ResultData::Flash(f) => Ok(f),
        ResultData::Empty => Err(FfiError::new(
            tl_status::WrongResultKind,
            "the result is empty (no successful flash has filled it)",
        )),
        ResultData::Stability(_) => Err(FfiError::new(
            tl_status::WrongResultKind,
            "the result holds a stability test, not a flash",
        )),
    }
}

fn as_stability(d: &ResultData) -> FfiResult<&StabilityResult> {
    match d {
        ResultData::Stability(s) => Ok(s),
        _ => Err(FfiError::new(
            tl_status::WrongResultKind,
            "the result does not hold a stability test",
        )),
    }
}

fn phase(f: &FlashResult, i: usize) -> FfiResult<&Phase> {
    f.phases.get(i).ok_or_else(|| {
        FfiError::new(
            tl_status::IndexOutOfRange,
            format!("phase index {i} for a result of {} phases", f.phases.len()),
        )
    })
}

/// A new, empty result, to be released with `tl_result_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_new(out: *mut *mut tl_result) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        out.set(new_box::<tl_result>(TryCell::new(ResultData::Empty)));
        Ok(())
    })
}

/// Releases a result. NULL is accepted and ignored. Must not be called twice.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_free(result: *mut tl_result) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_box(result) } })
}

/// What the result holds.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_kind_of(result: *const tl_result, out: *mut tl_result_kind) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        out.set(match &*d {
            ResultData::Empty => tl_result_kind::Empty,
            ResultData::Flash(_) => tl_result_kind::Flash,
            ResultData::Stability(_) => tl_result_kind::Stability,
        });
        Ok(())
    })
}

/// Temperature (K) and pressure (Pa) of a flash result (either pointer may be NULL).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_conditions(
    result: *const tl_result,
    temperature: *mut f64,
    pressure: *mut f64,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, t, p) = unsafe {
            (
                read(result)?,
                Out::optional(temperature, "temperature")?,
                Out::optional(pressure, "pressure")?,
            )
        };
        let f = as_flash(&d)?;
        if let Some(t) = t {
            t.set(f.temperature);
        }
        if let Some(p) = p {
            p.set(f.pressure);
        }
        Ok(())
    })
}

/// Number of phases of a flash result (1 or 2 for the current fluid flash).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_num_phases(result: *const tl_result, out: *mut usize) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        out.set(as_flash(&d)?.phases.len());
        Ok(())
    })
}

/// Number of components of a flash or stability result.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_num_components(result: *const tl_result, out: *mut usize) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        let nc = match &*d {
            ResultData::Stability(s) => s.points.first().map_or(0, |p| p.composition.len()),
            other => as_flash(other)?.feed.len(),
        };
        out.set(nc);
        Ok(())
    })
}

/// Vapour-phase fraction of a flash result (0 if no vapour).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_vapor_fraction(result: *const tl_result, out: *mut f64) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        out.set(as_flash(&d)?.vapor_fraction());
        Ok(())
    })
}

/// Scalar data of one phase of a flash result.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_phase_info {
    /// Kind of phase (vapour first, then liquids by increasing density).
    pub kind: tl_phase_kind,
    /// Amount, mol.
    pub amount: f64,
    /// Phase fraction: amount of the phase over the feed amount.
    pub fraction: f64,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Compressibility factor.
    pub z: f64,
}

/// Scalar data of phase `index` of a flash result.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_phase(result: *const tl_result, index: usize, out: *mut tl_phase_info) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        let ph = phase(as_flash(&d)?, index)?;
        out.set(tl_phase_info {
            kind: tl_phase_kind::from_kind(ph.kind),
            amount: ph.amount,
            fraction: ph.fraction,
            molar_volume: ph.molar_volume,
            z: ph.z,
        });
        Ok(())
    })
}

/// Mole fractions of phase `index` into `out` (`len` ≥ number of components).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_phase_composition(
    result: *const tl_result,
    index: usize,
    out: *mut f64,
    len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let d = unsafe { read(result)? };
        let ph = phase(as_flash(&d)?, index)?;
        // SAFETY: caller contract (`len` writable values).
        let out = unsafe { OutArray::new(out, len, ph.composition.len(), "out")? };
        out.write(0, &ph.composition);
        Ok(())
    })
}

/// ln φ_i of phase `index` into `out` (`len` ≥ number of components).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_phase_ln_phi(
    result: *const tl_result,
    index: usize,
    out: *mut f64,
    len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let d = unsafe { read(result)? };
        let ph = phase(as_flash(&d)?, index)?;
        // SAFETY: caller contract.
        let out = unsafe { OutArray::new(out, len, ph.ln_phi.len(), "out")? };
        out.write(0, &ph.ln_phi);
        Ok(())
    })
}

/// Thermodynamic properties of a phase (molar quantities per mol of phase, SI units).
/// Energies are absolute in the reference state of the core library (ideal gases at
/// 298.15 K, 1e5 Pa with h = ΔfH°, g = ΔfG°).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_properties {
    /// Kind of phase by the model's naming rule.
    pub kind: tl_phase_kind,
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Molar density, mol/m3.
    pub molar_density: f64,
    /// Mass density, kg/m3.
    pub mass_density: f64,
    /// Mean molar mass, kg/mol.
    pub molar_mass: f64,
    /// Compressibility factor Z = pv/(RT).
    pub z: f64,
    /// Molar enthalpy, J/mol.
    pub enthalpy: f64,
    /// Molar entropy, J/(mol K).
    pub entropy: f64,
    /// Molar Gibbs energy, J/mol.
    pub gibbs: f64,
    /// Molar internal energy, J/mol.
    pub internal_energy: f64,
    /// Molar Helmholtz energy, J/mol.
    pub helmholtz: f64,
    /// Molar isobaric heat capacity, J/(mol K).
    pub cp: f64,
    /// Molar isochoric heat capacity, J/(mol K).
    pub cv: f64,
    /// Speed of sound, m/s.
    pub speed_of_sound: f64,
    /// Joule–Thomson coefficient, K/Pa.
    pub joule_thomson: f64,
    /// Isothermal compressibility, 1/Pa.
    pub isothermal_compressibility: f64,
    /// Isobaric thermal expansion, 1/K.
    pub thermal_expansion: f64,
    /// Residual molar enthalpy, J/mol.
    pub residual_enthalpy: f64,
    /// Residual molar entropy, J/(mol K).
    pub residual_entropy: f64,
    /// Residual molar Gibbs energy, J/mol.
    pub residual_gibbs: f64,
}

impl tl_properties {
    pub(crate) fn from_core(kind: tl_phase_kind, p: &Properties) -> Self {
        tl_properties {
            kind,
            temperature: p.temperature,
            pressure: p.pressure,
            molar_volume: p.molar_volume,
            molar_density: p.molar_density,
            mass_density: p.mass_density,
            molar_mass: p.molar_mass,
            z: p.z,
            enthalpy: p.enthalpy,
            entropy: p.entropy,
            gibbs: p.gibbs,
            internal_energy: p.internal_energy,
            helmholtz: p.helmholtz,
            cp: p.cp,
            cv: p.cv,
            speed_of_sound: p.speed_of_sound,
            joule_thomson: p.joule_thomson,
            isothermal_compressibility: p.isothermal_compressibility,
            thermal_expansion: p.thermal_expansion,
            residual_enthalpy: p.residual_enthalpy,
            residual_entropy: p.residual_entropy,
            residual_gibbs: p.residual_gibbs,
        }
    }
}

fn check_model_size(model: &tieline::model::Model, f: &FlashResult) -> FfiResult {
    if model.num_components() != f.feed.len() {
        return Err(FfiError::invalid(
            "model",
            format!(
                "a model of {} components for a result of {}; pass the model that produced the result",
                model.num_components(),
                f.feed.len()
            ),
        ));
    }
    Ok(())
}

/// Properties of phase `index` of a flash result, evaluated with `model` (the model that
/// produced the result). May fail with `TL_STATUS_OUTSIDE_VALIDITY` where the ideal-gas
/// heat-capacity correlations do not reach.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_phase_properties(
    result: *const tl_result,
    model: *const tl_model,
    index: usize,
    out: *mut tl_properties,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, m, out) = unsafe { (read(result)?, model_ref(model)?, Out::new(out, "out")?) };
        let f = as_flash(&d)?;
        check_model_size(m, f)?;
        let ph = phase(f, index)?;
        let props = ph.state(f.temperature, f.pressure).properties(m)?;
        out.set(tl_properties::from_core(tl_phase_kind::from_kind(ph.kind), &props));
        Ok(())
    })
}

/// Amount-weighted properties of a whole flash result, per mol of feed (SI units).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_mixture_properties {
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// Molar enthalpy, J/mol.
    pub enthalpy: f64,
    /// Molar entropy, J/(mol K).
    pub entropy: f64,
    /// Molar Gibbs energy, J/mol.
    pub gibbs: f64,
    /// Molar internal energy, J/mol.
    pub internal_energy: f64,
    /// Molar Helmholtz energy, J/mol.
    pub helmholtz: f64,
    /// Frozen-composition isobaric heat capacity, J/(mol K).
    pub cp_frozen: f64,
    /// Total mass, kg.
    pub mass: f64,
    /// Overall mass density, kg/m3.
    pub mass_density: f64,
}

/// Mixture properties of a flash result, evaluated with `model`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_mixture_properties(
    result: *const tl_result,
    model: *const tl_model,
    out: *mut tl_mixture_properties,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, m, out) = unsafe { (read(result)?, model_ref(model)?, Out::new(out, "out")?) };
        let f = as_flash(&d)?;
        check_model_size(m, f)?;
        let p = f.mixture_properties(m)?;
        out.set(tl_mixture_properties {
            molar_volume: p.molar_volume,
            enthalpy: p.enthalpy,
            entropy: p.entropy,
            gibbs: p.gibbs,
            internal_energy: p.internal_energy,
            helmholtz: p.helmholtz,
            cp_frozen: p.cp_frozen,
            mass: p.mass,
            mass_density: p.mass_density,
        });
        Ok(())
    })
}

/// How a flash reached its answer, with the stability certificate.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_diagnostics {
    /// Iterations of the stability test of the feed (0 on a warm start).
    pub stability_iterations: usize,
    /// Successive-substitution iterations.
    pub ss_iterations: usize,
    /// Accepted dominant-eigenvalue accelerations.
    pub accelerations: usize,
    /// Newton iterations.
    pub newton_iterations: usize,
    /// Final max_i |ln f_i^V − ln f_i^L| (0 for a single phase).
    pub residual: f64,
    /// Whether a certificate was computed (`tl_flash_options.certificate`).
    pub has_certificate: bool,
    /// Minimum tangent-plane distance from an independent stability test of the result
    /// (≥ 0 up to round-off for a certified minimum); NaN when not computed.
    pub certificate: f64,
    /// Iterations of the certificate's stability test.
    pub certificate_iterations: usize,
    /// Whether the warm start was used and kept.
    pub warm_start: bool,
    /// Number of two-phase splits tried.
    pub splits_tried: usize,
    /// Reduced Gibbs energy of the result per mol of feed (dimensionless).
    pub gibbs: f64,
}

/// Diagnostics of a flash result.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_diagnostics(result: *const tl_result, out: *mut tl_diagnostics) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        let g = &as_flash(&d)?.diagnostics;
        out.set(tl_diagnostics {
            stability_iterations: g.stability_iterations,
            ss_iterations: g.ss_iterations,
            accelerations: g.accelerations,
            newton_iterations: g.newton_iterations,
            residual: g.residual,
            has_certificate: g.certificate.is_some(),
            certificate: g.certificate.unwrap_or(f64::NAN),
            certificate_iterations: g.certificate_iterations,
            warm_start: g.warm_start,
            splits_tried: g.splits_tried,
            gibbs: g.gibbs,
        });
        Ok(())
    })
}

/// The tie-line extension of a single-phase flash (requested with
/// `tl_flash_options.negative_flash`): β and the liquid- and vapour-side compositions (each
/// array may be NULL). `TL_STATUS_NOT_AVAILABLE` if the result has none.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_tie_line(
    result: *const tl_result,
    beta: *mut f64,
    x: *mut f64,
    x_len: usize,
    y: *mut f64,
    y_len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let d = unsafe { read(result)? };
        let f = as_flash(&d)?;
        let tl = f.tie_line.as_ref().ok_or_else(|| {
            FfiError::new(
                tl_status::NotAvailable,
                "the result has no tie line (single-phase with negative_flash off, or two-phase)",
            )
        })?;
        let nc = f.feed.len();
        // SAFETY: caller contract.
        let (b, xo, yo) = unsafe {
            (
                Out::optional(beta, "beta")?,
                OutArray::optional(x, x_len, nc, "x")?,
                OutArray::optional(y, y_len, nc, "y")?,
            )
        };
        if let Some(b) = b {
            b.set(tl.beta);
        }
        if let Some(xo) = xo {
            xo.write(0, &tl.x);
        }
        if let Some(yo) = yo {
            yo.write(0, &tl.y);
        }
        Ok(())
    })
}

/// Summary of a stability test.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_stability_summary {
    /// Whether the phase is stable (no stationary point with tpd < −threshold).
    pub stable: bool,
    /// Minimum tangent-plane distance over the non-trivial stationary points (0 if none).
    pub min_tpd: f64,
    /// Number of distinct non-trivial stationary points (read with
    /// `tl_result_stationary_point`, most negative tpd first).
    pub num_points: usize,
    /// Total iterations over all trials.
    pub iterations: usize,
    /// Trials that collapsed to the trivial solution.
    pub trivial_trials: usize,
    /// Trials that reached the iteration limit.
    pub unconverged_trials: usize,
}

/// Summary of a stability result.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_stability(result: *const tl_result, out: *mut tl_stability_summary) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (d, out) = unsafe { (read(result)?, Out::new(out, "out")?) };
        let s = as_stability(&d)?;
        out.set(tl_stability_summary {
            stable: s.stable,
            min_tpd: s.min_tpd,
            num_points: s.points.len(),
            iterations: s.iterations,
            trivial_trials: s.trivial_trials,
            unconverged_trials: s.unconverged_trials,
        });
        Ok(())
    })
}

/// Stationary point `index` of a stability result: its tpd, whether it is liquid-like
/// (either may be NULL) and its normalised composition (`composition` may be NULL; else
/// `len` ≥ number of components).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_stationary_point(
    result: *const tl_result,
    index: usize,
    tpd: *mut f64,
    liquid_like: *mut bool,
    composition: *mut f64,
    len: usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let d = unsafe { read(result)? };
        let s = as_stability(&d)?;
        let pt = s.points.get(index).ok_or_else(|| {
            FfiError::new(
                tl_status::IndexOutOfRange,
                format!("stationary point {index} of {}", s.points.len()),
            )
        })?;
        // SAFETY: caller contract.
        let (t, l, c) = unsafe {
            (
                Out::optional(tpd, "tpd")?,
                Out::optional(liquid_like, "liquid_like")?,
                OutArray::optional(composition, len, pt.composition.len(), "composition")?,
            )
        };
        if let Some(t) = t {
            t.set(pt.tpd);
        }
        if let Some(l) = l {
            l.set(pt.liquid_like);
        }
        if let Some(c) = c {
            c.write(0, &pt.composition);
        }
        Ok(())
    })
}

/// The result as JSON (the serde form of the core `FlashResult` or `StabilityResult`;
/// `null` for an empty result). Buffer convention as `tl_model_component_name`: `*needed`
/// receives the size required including the NUL; `buf = NULL, len = 0` queries it.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_result_to_json(
    result: *const tl_result,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let d = unsafe { read(result)? };
        let text = match &*d {
            ResultData::Empty => Ok("null".to_string()),
            ResultData::Flash(f) => serde_json::to_string(f),
            ResultData::Stability(s) => serde_json::to_string(s),
        }
        .map_err(|e| FfiError::new(tl_status::Data, format!("serialising the result: {e}")))?;
        // SAFETY: caller contract.
        unsafe { write_text(&text, buf, len, needed, false) }
    })
}
