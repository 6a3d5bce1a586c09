//! PT flashes (one-shot, through a reusable context, and in parallel batches) and the
//! stability test.

use crate::boundary::*;
use crate::model::{ModelData, model_ref, tl_model};
use crate::result::{ResultData, store_flash, tl_phase_kind, tl_result, write};
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use tieline::equilibrium::batch::{BatchLayout, flash_run, run_len};
use tieline::equilibrium::{FlashContext, FlashOptions, FlashResult, StabilityOptions, stability};
use tieline::model::FluidModel;

/// Options of the PT flash. Initialise with `tl_flash_options_default`, then change fields.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_flash_options {
    /// Convergence tolerance on max_i |ln f_i^V − ln f_i^L|, in (0, 1e-2). Default 1e-10.
    pub tolerance: f64,
    /// Maximum successive-substitution iterations. Default 400.
    pub max_ss_iterations: usize,
    /// Maximum Newton iterations. Default 40.
    pub max_newton_iterations: usize,
    /// Also compute the tie-line extension for single-phase feeds. Default false.
    pub negative_flash: bool,
    /// Compute the stability certificate of the result. Default true.
    pub certificate: bool,
    /// Options of the stability tests inside the flash.
    pub stability: tl_stability_options,
    /// Most fluid phases a result may have: 2 (default; a state with a third phase is
    /// `TL_STATUS_NO_SOLUTION`) or 3 (a vapour and two liquids, found when the certificate of
    /// the best two-phase split reveals the third; needs `certificate`).
    pub max_phases: usize,
}

/// Options of the stability test. Initialise with `tl_stability_options_default`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct tl_stability_options {
    /// Convergence tolerance on the stationarity residual, in (0, 1e-2). Default 1e-10.
    pub tolerance: f64,
    /// Maximum iterations per trial phase. Default 100.
    pub max_iterations: usize,
    /// A stationary point counts as unstable if tpd < −threshold. Default 1e-10.
    pub threshold: f64,
}

impl tl_stability_options {
    fn from_core(o: &StabilityOptions) -> Self {
        tl_stability_options {
            tolerance: o.tolerance,
            max_iterations: o.max_iterations,
            threshold: o.threshold,
        }
    }

    fn to_core(self) -> StabilityOptions {
        StabilityOptions {
            tolerance: self.tolerance,
            max_iterations: self.max_iterations,
            threshold: self.threshold,
            ..StabilityOptions::default()
        }
    }
}

impl tl_flash_options {
    fn from_core(o: &FlashOptions) -> Self {
        tl_flash_options {
            tolerance: o.tolerance,
            max_ss_iterations: o.max_ss_iterations,
            max_newton_iterations: o.max_newton_iterations,
            negative_flash: o.negative_flash,
            certificate: o.certificate,
            stability: tl_stability_options::from_core(&o.stability),
            max_phases: o.max_phases,
        }
    }

    pub(crate) fn to_core(self) -> FlashOptions {
        FlashOptions {
            tolerance: self.tolerance,
            max_ss_iterations: self.max_ss_iterations,
            max_newton_iterations: self.max_newton_iterations,
            negative_flash: self.negative_flash,
            certificate: self.certificate,
            stability: self.stability.to_core(),
            max_phases: self.max_phases,
        }
    }
}

/// Options from a nullable pointer (NULL = defaults).
///
/// # Safety
/// `p` must be NULL or point to a valid `tl_flash_options`.
pub(crate) unsafe fn flash_options(p: *const tl_flash_options) -> FfiResult<FlashOptions> {
    if p.is_null() {
        return Ok(FlashOptions::default());
    }
    if !p.is_aligned() {
        return Err(FfiError::invalid("options", "the pointer is not aligned"));
    }
    // SAFETY: non-NULL, aligned, valid by the contract; plain data.
    Ok(unsafe { *p }.to_core())
}

/// Fills `out` with the default flash options.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_options_default(out: *mut tl_flash_options) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        out.set(tl_flash_options::from_core(&FlashOptions::default()));
        Ok(())
    })
}

/// Fills `out` with the default stability options.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_stability_options_default(out: *mut tl_stability_options) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        out.set(tl_stability_options::from_core(&StabilityOptions::default()));
        Ok(())
    })
}

/// A reusable flash solver for one model: workspaces plus the previous solution, so that a
/// sequence of flashes (a simulator's time steps, a sweep) warm-starts from point to point
/// and allocates nothing in steady state.
///
/// Thread safety: a context is used by one thread at a time (any thread, one after the
/// other). A call made while another thread is inside a call on the same context returns
/// `TL_STATUS_BUSY` and changes nothing. Create one context per thread; they may share one
/// model.
pub struct tl_context {
    _private: [u8; 0],
}

pub(crate) struct ContextData {
    model: Arc<Slot<ModelData>>,
    flash: FlashContext,
}

impl Castable for tl_context {
    type Inner = TryCell<ContextData>;
    type Ownership = OwnedBox;
    const TAG: u64 = 0x746c_6374_7874_3031; // "tlctxt01"
    const NAME: &'static str = "context";
}

/// Exclusive access to a context; a context poisoned by a caught panic is reset (cold start).
///
/// # Safety
/// As [`try_ref`].
unsafe fn lock<'a>(c: *mut tl_context) -> FfiResult<TryWriteGuard<'a, ContextData>> {
    // SAFETY: forwarded contract.
    let cell = unsafe { try_ref(c.cast_const())? };
    match cell.try_write() {
        Some((g, false)) => Ok(g),
        Some((mut g, true)) => {
            let nc = g.model.value.model.num_components();
            g.flash = FlashContext::new(nc);
            Ok(g)
        }
        None => Err(FfiError::new(
            tl_status::Busy,
            "the context is in use by another thread (a context serves one thread at a time)",
        )),
    }
}

/// A new context for `model` (the context keeps its own reference to the model). Release
/// with `tl_context_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_context_new(model: *const tl_model, out: *mut *mut tl_context) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (model, out) = unsafe { (clone_arc(model)?, Out::new(out, "out")?) };
        let nc = model.value.model.num_components();
        out.set(new_box::<tl_context>(TryCell::new(ContextData {
            model,
            flash: FlashContext::new(nc),
        })));
        Ok(())
    })
}

/// Releases a context. NULL is accepted and ignored. Must not be called twice, nor while
/// another thread is using the context.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_context_free(context: *mut tl_context) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_box(context) } })
}

/// Forgets the previous solution: the next flash starts cold.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_context_reset(context: *mut tl_context) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe { lock(context)? }.flash.reset();
        Ok(())
    })
}

/// PT flash of feed amounts `n` (`len` values, mol, one per component) at `temperature` (K)
/// and `pressure` (Pa) with the context's model, warm-started from the context's previous
/// solution. `options` may be NULL (defaults). On success `result` holds the flash; on error
/// it is unchanged.
///
/// Errors: `TL_STATUS_INVALID_INPUT` (non-finite or non-positive T or p, wrong length,
/// negative or all-zero amounts), `TL_STATUS_NOT_CONVERGED`, `TL_STATUS_NO_SOLUTION` (more
/// than two phases), `TL_STATUS_BUSY`, `TL_STATUS_NULL_POINTER`, `TL_STATUS_INVALID_HANDLE`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_context_flash(
    context: *mut tl_context,
    temperature: f64,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_flash_options,
    result: *mut tl_result,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (mut ctx, n, opts, mut out) = unsafe {
            (
                lock(context)?,
                slice(n, len, "n")?,
                flash_options(options)?,
                write(result)?,
            )
        };
        let ContextData { model, flash } = &mut *ctx;
        let r = flash.flash(&model.value.model, temperature, pressure, n, &opts)?;
        store_flash(&mut out, r);
        Ok(())
    })
}

/// One-shot PT flash (cold start, allocates its workspace); as `tl_context_flash` otherwise.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_flash_options,
    result: *mut tl_result,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, n, opts, mut out) = unsafe {
            (
                model_ref(model)?,
                slice(n, len, "n")?,
                flash_options(options)?,
                write(result)?,
            )
        };
        let mut ctx = FlashContext::new(m.num_components());
        let r = ctx.flash(m, temperature, pressure, n, &opts)?;
        store_flash(&mut out, r);
        Ok(())
    })
}

/// Caller-owned output arrays of `tl_flash_batch`. Array sizes, with `points` the number of
/// points they hold and `nc` the number of components:
/// `status`, `num_phases`: `points`; `phase_kind`, `phase_fraction`, `phase_molar_volume`:
/// `points * max_phases`; `phase_composition`: `points * max_phases * nc` (row-major:
/// point, then phase slot, then component). Only `status` is required; NULL arrays are
/// skipped. Unused phase slots get `TL_PHASE_KIND_NONE` and NaN.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct tl_batch_output {
    /// Number of points the arrays are sized for (≥ the number of points flashed).
    pub points: usize,
    /// Phase slots per point (2 holds every result of the current two-phase flash).
    pub max_phases: usize,
    /// Per-point status (required).
    pub status: *mut tl_status,
    /// Per-point number of phases.
    pub num_phases: *mut usize,
    /// Kind of each phase.
    pub phase_kind: *mut tl_phase_kind,
    /// Phase fraction (amount over feed amount) of each phase.
    pub phase_fraction: *mut f64,
    /// Molar volume of each phase, m3/mol.
    pub phase_molar_volume: *mut f64,
    /// Mole fractions of each phase.
    pub phase_composition: *mut f64,
}

/// PT flashes of many points in parallel. `temperature` (K) and `pressure` (Pa) have
/// `npts` values each; `feeds` holds either one feed of `nc` amounts (mol) shared by every
/// point, or `npts * nc` amounts (one row per point); `feeds_len` says which. `threads` = 0
/// uses one thread per available processor, otherwise that many threads (≤ 256); the threads
/// are started for the call and joined before it returns. Points are processed in blocks of
/// consecutive points (1/64 of the batch, 16 to 64 points), each by a solver that warm-starts
/// a point from the previous one when the two are close in T, p and feed, so order sweeps
/// along T or p. The layout is that of the Rust `tieline::equilibrium::flash_batch`, so the
/// numbers equal the Rust batch's, whatever `threads`. `options` may be NULL.
///
/// The call returns `TL_STATUS_OK` when the batch ran; each point's own outcome is in
/// `out->status[i]` (a failed point does not spoil the others; its slots hold NaN). A point
/// with more phases than `max_phases` gets `TL_STATUS_BUFFER_TOO_SMALL`. On an error of the
/// call itself nothing is written.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_flash_batch(
    model: *const tl_model,
    temperature: *const f64,
    pressure: *const f64,
    npts: usize,
    feeds: *const f64,
    feeds_len: usize,
    options: *const tl_flash_options,
    threads: usize,
    out: *const tl_batch_output,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, t, p, feeds, opts) = unsafe {
            (
                model_ref(model)?,
                slice(temperature, npts, "temperature")?,
                slice(pressure, npts, "pressure")?,
                slice(feeds, feeds_len, "feeds")?,
                flash_options(options)?,
            )
        };
        if out.is_null() {
            return Err(FfiError::null("out"));
        }
        // SAFETY: non-NULL; a valid `tl_batch_output` by the contract (plain data).
        let o = unsafe { out.read_unaligned() };
        if o.points < npts {
            return Err(FfiError::new(
                tl_status::BufferTooSmall,
                format!("the output arrays hold {} points; {npts} are required", o.points),
            ));
        }
        tieline::error::check::count("threads", threads, 0, tieline::limits::MAX_THREADS)?;
        tieline::error::check::count("npts", npts, 0, tieline::limits::MAX_POINTS)?;
        let nc = m.num_components();
        let per_point = if feeds.len() == nc {
            false
        } else if feeds.len() == nc * npts {
            true
        } else {
            return Err(FfiError::invalid(
                "feeds",
                format!(
                    "{} values; {nc} (one shared feed) or {} (one per point) are required",
                    feeds.len(),
                    nc * npts
                ),
            ));
        };
        let slots = o
            .points
            .checked_mul(o.max_phases)
            .filter(|s| s.checked_mul(nc).is_some())
            .ok_or_else(|| FfiError::invalid("out", "points × max_phases × components overflows"))?;
        let need = npts * o.max_phases;
        // SAFETY: the arrays are sized as documented on `tl_batch_output` (caller contract).
        let w = unsafe {
            BatchWriter {
                max_phases: o.max_phases,
                nc,
                status: OutArray::new(o.status, o.points, npts, "out->status")?,
                num_phases: OutArray::optional(o.num_phases, o.points, npts, "out->num_phases")?,
                kind: OutArray::optional(o.phase_kind, slots, need, "out->phase_kind")?,
                fraction: OutArray::optional(o.phase_fraction, slots, need, "out->phase_fraction")?,
                volume: OutArray::optional(o.phase_molar_volume, slots, need, "out->phase_molar_volume")?,
                comp: OutArray::optional(o.phase_composition, slots * nc, need * nc, "out->phase_composition")?,
            }
        };
        let nthreads = if threads == 0 {
            std::thread::available_parallelism().map_or(1, |n| n.get())
        } else {
            threads
        };
        let layout = BatchLayout::default();
        let chunk = run_len(&layout, npts, nthreads);
        let nchunks = npts.div_ceil(chunk);
        let next = AtomicUsize::new(0);
        let feed = |i: usize| if per_point { &feeds[i * nc..(i + 1) * nc] } else { feeds };
        let work = || {
            loop {
                let c = next.fetch_add(1, Ordering::Relaxed);
                if c >= nchunks {
                    break;
                }
                let mut ctx = FlashContext::new(nc);
                let range = c * chunk..((c + 1) * chunk).min(npts);
                flash_run(&mut ctx, m, t, p, feed, range, &opts, layout.warm_start, |i, r| {
                    w.point(i, r)
                });
            }
        };
        let workers = nthreads.min(nchunks);
        if workers <= 1 {
            work();
        } else {
            std::thread::scope(|s| {
                for _ in 0..workers {
                    s.spawn(work);
                }
            });
        }
        Ok(())
    })
}

/// The checked output arrays of a batch; each point's slots are written by the one thread
/// that flashed it.
struct BatchWriter {
    max_phases: usize,
    nc: usize,
    status: OutArray<tl_status>,
    num_phases: Option<OutArray<usize>>,
    kind: Option<OutArray<tl_phase_kind>>,
    fraction: Option<OutArray<f64>>,
    volume: Option<OutArray<f64>>,
    comp: Option<OutArray<f64>>,
}

impl BatchWriter {
    fn point(&self, i: usize, r: tieline::Result<&FlashResult>) {
        let phases = match r {
            Ok(f) if f.phases.len() <= self.max_phases => {
                self.status.set(i, tl_status::Ok);
                &f.phases[..]
            }
            Ok(_) => {
                self.status.set(i, tl_status::BufferTooSmall);
                &[][..]
            }
            Err(e) => {
                self.status.set(i, tl_status::from_kind(e.kind()));
                &[][..]
            }
        };
        if let Some(a) = &self.num_phases {
            a.set(i, phases.len());
        }
        for k in 0..self.max_phases {
            let s = i * self.max_phases + k;
            let ph = phases.get(k);
            if let Some(a) = &self.kind {
                a.set(
                    s,
                    ph.map_or(tl_phase_kind::None, |ph| tl_phase_kind::from_kind(ph.kind)),
                );
            }
            if let Some(a) = &self.fraction {
                a.set(s, ph.map_or(f64::NAN, |ph| ph.fraction));
            }
            if let Some(a) = &self.volume {
                a.set(s, ph.map_or(f64::NAN, |ph| ph.molar_volume));
            }
            if let Some(a) = &self.comp {
                for c in 0..self.nc {
                    a.set(s * self.nc + c, ph.map_or(f64::NAN, |ph| ph.composition[c]));
                }
            }
        }
    }
}

/// Tangent-plane stability test of a phase of amounts `n` (`len` values, mol) at
/// `temperature` (K) and `pressure` (Pa). `options` may be NULL (defaults). On success
/// `result` holds the stability test (`tl_result_stability`, `tl_result_stationary_point`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_stability(
    model: *const tl_model,
    temperature: f64,
    pressure: f64,
    n: *const f64,
    len: usize,
    options: *const tl_stability_options,
    result: *mut tl_result,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, n, mut out) = unsafe { (model_ref(model)?, slice(n, len, "n")?, write(result)?) };
        let opts = if options.is_null() {
            StabilityOptions::default()
        } else if !options.is_aligned() {
            return Err(FfiError::invalid("options", "the pointer is not aligned"));
        } else {
            // SAFETY: non-NULL, aligned, valid by the contract; plain data.
            unsafe { *options }.to_core()
        };
        let r = stability(m, temperature, pressure, n, &opts)?;
        *out = ResultData::Stability(r);
        Ok(())
    })
}
