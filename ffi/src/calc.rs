//! Calculations by name, and their results as records of named fields: the C face of
//! `tieline::calc`. One set of functions serves every calculation the library describes
//! (`tl_calculation_*`, `tl_plan_*`, `tl_run`, `tl_record_*`); the named entry points of
//! `state.rs` are one-line conveniences over them.

use crate::boundary::*;
use crate::model::{model_ref, tl_model};
use std::ffi::c_char;
use std::sync::{Mutex, RwLock, TryLockError};
use tieline::calc::{CALCULATIONS, Plan, Record, Value, Workspace};

/// A calculation with its options parsed and checked (`tl_plan_new`), ready to run any
/// number of times. Immutable: may be shared by any number of threads.
pub struct tl_plan {
    _private: [u8; 0],
}

impl Castable for tl_plan {
    type Inner = Plan;
    type Ownership = OwnedBox;
    const TAG: u64 = 0x746c_706c_616e_0001;
    const NAME: &'static str = "plan";
}

/// Warm-start state for calculations run one after another (a simulator's time loop, a
/// sweep): each call of a calculation starts from the previous solution of that calculation.
/// One thread at a time (another thread gets `TL_STATUS_BUSY`).
pub struct tl_workspace {
    _private: [u8; 0],
}

impl Castable for tl_workspace {
    type Inner = Mutex<Workspace>;
    type Ownership = OwnedBox;
    const TAG: u64 = 0x746c_776f_726b_0001;
    const NAME: &'static str = "workspace";
}

/// The result of a calculation as named fields with units (`tl_record_*` reads them). Empty
/// when created; each `tl_run` into it replaces its content. May be read by several threads
/// at once, but not filled while another thread reads or fills it (`TL_STATUS_BUSY`).
pub struct tl_record {
    _private: [u8; 0],
}

impl Castable for tl_record {
    type Inner = RwLock<Record>;
    type Ownership = OwnedBox;
    const TAG: u64 = 0x746c_7265_636f_7264;
    const NAME: &'static str = "record";
}

fn busy(what: &str) -> FfiError {
    FfiError::new(
        tl_status::Busy,
        format!("the {what} is in use by another thread (one thread at a time)"),
    )
}

/// Number of calculations (`tl_calculation_name` lists them).
#[unsafe(no_mangle)]
pub extern "C" fn tl_calculation_count() -> usize {
    CALCULATIONS.len()
}

/// The name of calculation `index` (0-based), e.g. "flash_ph". Buffer convention as
/// `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_calculation_name(
    index: usize,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        let c = CALCULATIONS.get(index).ok_or_else(|| {
            FfiError::new(
                tl_status::IndexOutOfRange,
                format!("calculation index {index}; there are {}", CALCULATIONS.len()),
            )
        })?;
        // SAFETY: caller contract.
        unsafe { write_text(c.name, buf, len, needed, false) }
    })
}

/// A description of calculation `name` as JSON: its summary, its arguments with units, and
/// its default options (every key `tl_plan_new` accepts). Buffer convention as
/// `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_calculation_describe(
    name: *const c_char,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let name = unsafe { c_str(name, "name")? };
        let c = tieline::calc::find(name)?;
        let args: Vec<serde_json::Value> = c
            .arguments
            .iter()
            .map(|a| serde_json::json!({"name": a.name, "unit": a.unit, "doc": a.doc}))
            .collect();
        let text = serde_json::json!({
            "name": c.name, "summary": c.summary, "arguments": args, "options": c.default_options(),
            "feed_extension": c.feed_extension
        })
        .to_string();
        // SAFETY: caller contract.
        unsafe { write_text(&text, buf, len, needed, false) }
    })
}

/// Prepares calculation `name` with options given as a JSON object (`NULL` or `"{}"` for the
/// defaults; `tl_calculation_describe` lists the keys). An unknown name or option key, or a
/// value of the wrong type, is `TL_STATUS_INVALID_INPUT` with a message listing what is
/// allowed. Free with `tl_plan_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_plan_new(
    name: *const c_char,
    options_json: *const c_char,
    out: *mut *mut tl_plan,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (name, out) = unsafe { (c_str(name, "name")?, Out::new(out, "out")?) };
        // SAFETY: caller contract.
        let plan = unsafe { plan_from_c(name, options_json)? };
        out.set(new_box::<tl_plan>(plan));
        Ok(())
    })
}

/// The plan of calculation `name` with options from a nullable JSON string: shared by
/// [`tl_plan_new`] and the named conveniences.
///
/// # Safety
/// `options_json` must be NULL or a NUL-terminated string.
pub(crate) unsafe fn plan_from_c(name: &str, options_json: *const c_char) -> FfiResult<Plan> {
    let opts = if options_json.is_null() {
        None
    } else {
        // SAFETY: caller contract.
        Some(unsafe { c_str(options_json, "options_json")? })
    };
    Ok(Plan::new(name, opts)?)
}

/// Releases a plan. NULL is accepted and ignored. Must not be called twice.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_plan_free(plan: *mut tl_plan) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_box(plan) } })
}

/// A new, empty workspace. Free with `tl_workspace_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_workspace_new(out: *mut *mut tl_workspace) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        out.set(new_box::<tl_workspace>(Mutex::new(Workspace::default())));
        Ok(())
    })
}

/// Releases a workspace. NULL is accepted and ignored. Must not be called twice.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_workspace_free(workspace: *mut tl_workspace) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_box(workspace) } })
}

/// Forgets the previous solutions held by a workspace (the next calls start cold).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_workspace_reset(workspace: *mut tl_workspace) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let w = unsafe { try_ref(workspace.cast_const())? };
        let mut g = lock(w)?;
        g.reset();
        Ok(())
    })
}

fn lock(w: &Mutex<Workspace>) -> FfiResult<std::sync::MutexGuard<'_, Workspace>> {
    match w.try_lock() {
        Ok(g) => Ok(g),
        Err(TryLockError::Poisoned(p)) => {
            let mut g = p.into_inner();
            g.reset();
            Ok(g)
        }
        Err(TryLockError::WouldBlock) => Err(busy("workspace")),
    }
}

/// A new, empty record. Free with `tl_record_free`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_new(out: *mut *mut tl_record) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        out.set(new_box::<tl_record>(RwLock::new(Record::default())));
        Ok(())
    })
}

/// Releases a record. NULL is accepted and ignored. Must not be called twice.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_free(record: *mut tl_record) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_box(record) } })
}

/// Runs a plan on `model` with `nargs` scalar arguments (in the order and units of the
/// calculation's description) and the feed amounts (`nc` values, mol), writing the result
/// into `record`. `workspace` may be NULL (a cold start, nothing kept) or a workspace for
/// warm starts. On failure `record` is left as it was.
///
/// # Safety
/// As the crate's shared contract.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_run(
    plan: *const tl_plan,
    workspace: *mut tl_workspace,
    model: *const tl_model,
    args: *const f64,
    nargs: usize,
    feed: *const f64,
    nc: usize,
    record: *mut tl_record,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        unsafe { run(plan, workspace, model, args, nargs, feed, nc, record) }
    })
}

/// The body of [`tl_run`]: checks the arguments.
///
/// # Safety
/// As [`tl_run`].
unsafe fn run(
    plan: *const tl_plan,
    workspace: *mut tl_workspace,
    model: *const tl_model,
    args: *const f64,
    nargs: usize,
    feed: *const f64,
    nc: usize,
    record: *mut tl_record,
) -> FfiResult {
    // SAFETY: caller contract.
    let plan = unsafe { try_ref(plan)? };
    let args: &[f64] = if nargs == 0 {
        &[]
    } else {
        // SAFETY: caller contract.
        unsafe { slice(args, nargs, "args")? }
    };
    // SAFETY: caller contract.
    unsafe { run_plan(plan, workspace, model, args, feed, nc, record) }
}

/// Runs `plan` and stores its record: shared by [`tl_run`] and the named conveniences.
///
/// # Safety
/// As [`tl_run`] for the pointers.
pub(crate) unsafe fn run_plan(
    plan: &Plan,
    workspace: *mut tl_workspace,
    model: *const tl_model,
    args: &[f64],
    feed: *const f64,
    nc: usize,
    record: *mut tl_record,
) -> FfiResult {
    // SAFETY: caller contract.
    let (m, feed, rec) = unsafe {
        (
            model_ref(model)?,
            slice(feed, nc, "feed")?,
            try_ref(record.cast_const())?,
        )
    };
    let r = if workspace.is_null() {
        plan.run(&mut Workspace::default(), m, args, feed)?
    } else {
        // SAFETY: caller contract.
        let w = unsafe { try_ref(workspace.cast_const())? };
        let mut g = lock(w)?;
        plan.run(&mut g, m, args, feed)?
    };
    let mut slot = match rec.try_write() {
        Ok(g) => g,
        Err(TryLockError::Poisoned(p)) => p.into_inner(),
        Err(TryLockError::WouldBlock) => return Err(busy("record")),
    };
    *slot = r;
    Ok(())
}

/// Read access to a record.
///
/// # Safety
/// As [`try_ref`].
unsafe fn read<'a>(record: *const tl_record) -> FfiResult<std::sync::RwLockReadGuard<'a, Record>> {
    // SAFETY: forwarded contract.
    let lock = unsafe { try_ref(record)? };
    match lock.try_read() {
        Ok(g) => Ok(g),
        Err(TryLockError::Poisoned(p)) => Ok(p.into_inner()),
        Err(TryLockError::WouldBlock) => Err(busy("record")),
    }
}

/// The calculation that filled the record ("" when empty). Buffer convention as
/// `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_kind(
    record: *const tl_record,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let r = unsafe { read(record)? };
        // SAFETY: caller contract.
        unsafe { write_text(&r.kind, buf, len, needed, false) }
    })
}

/// Number of fields of the record.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_num_fields(record: *const tl_record, out: *mut usize) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        // SAFETY: caller contract.
        out.set(unsafe { read(record)? }.fields.len());
        Ok(())
    })
}

fn field_at(r: &Record, index: usize) -> FfiResult<&tieline::calc::Field> {
    r.fields.get(index).ok_or_else(|| {
        FfiError::new(
            tl_status::IndexOutOfRange,
            format!("field index {index}; the record has {} fields", r.fields.len()),
        )
    })
}

/// The name of field `index` (0-based). Buffer convention as `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_field_name(
    record: *const tl_record,
    index: usize,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let r = unsafe { read(record)? };
        let f = field_at(&r, index)?;
        // SAFETY: caller contract.
        unsafe { write_text(&f.name, buf, len, needed, false) }
    })
}

/// The SI unit of field `name` ("" for counts, flags and words; "1" for dimensionless
/// numbers). Buffer convention as `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_field_unit(
    record: *const tl_record,
    name: *const c_char,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let name = unsafe { c_str(name, "name")? };
        // SAFETY: caller contract.
        let r = unsafe { read(record)? };
        let f = r.get(name)?;
        // SAFETY: caller contract.
        unsafe { write_text(&f.unit, buf, len, needed, false) }
    })
}

/// The number in field `name` (a count reads as a number). A field that holds a vector or
/// a table is `TL_STATUS_INVALID_INPUT`; one not available in this result (e.g. a
/// certificate that was not computed) is `TL_STATUS_NO_SOLUTION`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_number(record: *const tl_record, name: *const c_char, out: *mut f64) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (name, out) = unsafe { (c_str(name, "name")?, Out::new(out, "out")?) };
        // SAFETY: caller contract.
        out.set(unsafe { read(record)? }.get_number(name)?);
        Ok(())
    })
}

/// The numbers in field `name`, row by row for a table, into `buf` (`len` values). `needed`
/// receives the count required, `rows` and `cols` (each may be NULL) the shape: (n, 1) for a
/// vector of n, (1, 1) for a single number. `buf = NULL, len = 0` queries the size;
/// a buffer too small is `TL_STATUS_BUFFER_TOO_SMALL` (nothing written but the sizes).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_numbers(
    record: *const tl_record,
    name: *const c_char,
    buf: *mut f64,
    len: usize,
    needed: *mut usize,
    rows: *mut usize,
    cols: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let name = unsafe { c_str(name, "name")? };
        // SAFETY: caller contract.
        let (v, nr, ncol) = unsafe { read(record)? }.get_numbers(name)?;
        // SAFETY: caller contract.
        let (needed, rows, cols) = unsafe {
            (
                Out::optional(needed, "needed")?,
                Out::optional(rows, "rows")?,
                Out::optional(cols, "cols")?,
            )
        };
        if let Some(n) = needed {
            n.set(v.len());
        }
        if let Some(r) = rows {
            r.set(nr);
        }
        if let Some(c) = cols {
            c.set(ncol);
        }
        if buf.is_null() && len == 0 {
            return Ok(());
        }
        // SAFETY: caller contract.
        let out = unsafe { OutArray::new(buf, len, v.len(), "buf")? };
        out.write(0, &v);
        Ok(())
    })
}

/// The word in field `name` — or, for a vector of words (e.g. `phase_kinds`), its entry
/// `index` (ignored for a single word). Buffer convention as `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_text(
    record: *const tl_record,
    name: *const c_char,
    index: usize,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let name = unsafe { c_str(name, "name")? };
        // SAFETY: caller contract.
        let r = unsafe { read(record)? };
        let text = match &r.get(name)?.value {
            Value::Text(s) => s.as_str(),
            Value::Texts(v) => v.get(index).map(String::as_str).ok_or_else(|| {
                FfiError::new(
                    tl_status::IndexOutOfRange,
                    format!("index {index} of '{name}', which has {} entries", v.len()),
                )
            })?,
            Value::Flag(b) => {
                if *b {
                    "true"
                } else {
                    "false"
                }
            }
            _ => return Err(FfiError::invalid("name", format!("'{name}' holds numbers, not words"))),
        };
        // SAFETY: caller contract.
        unsafe { write_text(text, buf, len, needed, false) }
    })
}

/// The whole record as one JSON object (`{"kind": ..., <field>: <value>, ..., "units":
/// {...}}`; absent values are `null`). Buffer convention as `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_record_to_json(
    record: *const tl_record,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let text = unsafe { read(record)? }.to_json().to_string();
        // SAFETY: caller contract.
        unsafe { write_text(&text, buf, len, needed, false) }
    })
}
