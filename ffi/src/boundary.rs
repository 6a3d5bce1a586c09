//! The boundary machinery every exported function goes through: the status enum, the
//! thread-local last-error message, the panic boundary, typed handle casts and the checked
//! conversion of caller pointers into Rust values.

use std::cell::RefCell;
use std::ffi::{CStr, c_char};
use std::fmt;
use std::sync::Arc;

/// Status returned by every `tl_` function. The numbers are stable: a retired value is never
/// reused. 1xx are mistakes in the call itself, 2xx are the library's own error kinds, 9xx are
/// defects of the library. `TL_STATUS_OK` is 0.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum tl_status {
    /// Success.
    Ok = 0,
    /// A required pointer argument was NULL.
    NullPointer = 100,
    /// A handle is not of the expected type, or was already freed (best-effort detection).
    InvalidHandle = 101,
    /// An output buffer is too small; where a `needed` out-parameter exists it holds the size.
    BufferTooSmall = 102,
    /// A text argument is not valid UTF-8.
    InvalidUtf8 = 103,
    /// A phase, component or stationary-point index is out of range.
    IndexOutOfRange = 104,
    /// The result holds another kind of result than the accessor reads.
    WrongResultKind = 105,
    /// The handle is in use by another thread (contexts and results serve one thread at a time).
    Busy = 106,
    /// The requested item does not exist in this result (e.g. no tie line was computed).
    NotAvailable = 107,
    /// A file could not be read.
    Io = 108,
    /// An argument is out of its domain (non-finite, non-positive, wrong length ...).
    InvalidInput = 200,
    /// A component name, alias or CAS number is not in the data bank.
    UnknownComponent = 201,
    /// The conditions lie outside the validity range of a model or correlation.
    OutsideValidity = 202,
    /// The requested state does not exist (e.g. saturation above the critical point).
    NoSolution = 203,
    /// An iterative method did not reach its tolerance.
    NotConverged = 204,
    /// Component or model data could not be parsed or is inconsistent.
    Data = 205,
    /// An error kind of the library that this version of the C ABI does not name yet.
    OtherError = 299,
    /// A defect in the library was caught at the boundary (a Rust panic); please report it.
    Panic = 900,
}

impl tl_status {
    /// All statuses, for tables and tests.
    pub(crate) const ALL: [tl_status; 18] = [
        tl_status::Ok,
        tl_status::NullPointer,
        tl_status::InvalidHandle,
        tl_status::BufferTooSmall,
        tl_status::InvalidUtf8,
        tl_status::IndexOutOfRange,
        tl_status::WrongResultKind,
        tl_status::Busy,
        tl_status::NotAvailable,
        tl_status::Io,
        tl_status::InvalidInput,
        tl_status::UnknownComponent,
        tl_status::OutsideValidity,
        tl_status::NoSolution,
        tl_status::NotConverged,
        tl_status::Data,
        tl_status::OtherError,
        tl_status::Panic,
    ];

    /// The C name of the status, as a NUL-terminated static string.
    pub fn c_name(self) -> &'static CStr {
        match self {
            tl_status::Ok => c"TL_STATUS_OK",
            tl_status::NullPointer => c"TL_STATUS_NULL_POINTER",
            tl_status::InvalidHandle => c"TL_STATUS_INVALID_HANDLE",
            tl_status::BufferTooSmall => c"TL_STATUS_BUFFER_TOO_SMALL",
            tl_status::InvalidUtf8 => c"TL_STATUS_INVALID_UTF8",
            tl_status::IndexOutOfRange => c"TL_STATUS_INDEX_OUT_OF_RANGE",
            tl_status::WrongResultKind => c"TL_STATUS_WRONG_RESULT_KIND",
            tl_status::Busy => c"TL_STATUS_BUSY",
            tl_status::NotAvailable => c"TL_STATUS_NOT_AVAILABLE",
            tl_status::Io => c"TL_STATUS_IO",
            tl_status::InvalidInput => c"TL_STATUS_INVALID_INPUT",
            tl_status::UnknownComponent => c"TL_STATUS_UNKNOWN_COMPONENT",
            tl_status::OutsideValidity => c"TL_STATUS_OUTSIDE_VALIDITY",
            tl_status::NoSolution => c"TL_STATUS_NO_SOLUTION",
            tl_status::NotConverged => c"TL_STATUS_NOT_CONVERGED",
            tl_status::Data => c"TL_STATUS_DATA",
            tl_status::OtherError => c"TL_STATUS_OTHER_ERROR",
            tl_status::Panic => c"TL_STATUS_PANIC",
        }
    }

    /// The status of a core error kind.
    pub fn from_kind(kind: tieline::ErrorKind) -> tl_status {
        use tieline::ErrorKind as K;
        match kind {
            K::InvalidInput => tl_status::InvalidInput,
            K::UnknownComponent => tl_status::UnknownComponent,
            K::OutsideValidity => tl_status::OutsideValidity,
            K::NoSolution => tl_status::NoSolution,
            K::NotConverged => tl_status::NotConverged,
            K::Data => tl_status::Data,
            _ => tl_status::OtherError,
        }
    }
}

/// An error on its way out through the boundary: the status and the message that
/// `tl_last_error_message` will return. Boxed, so that an `FfiResult` is one or two machine
/// words and the success path of every entry point moves no more than that.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct FfiError(Box<ErrorData>);

/// What an [`FfiError`] carries.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct ErrorData {
    pub status: tl_status,
    pub message: String,
}

impl std::ops::Deref for FfiError {
    type Target = ErrorData;
    fn deref(&self) -> &ErrorData {
        &self.0
    }
}

impl FfiError {
    #[cold]
    pub fn new(status: tl_status, message: impl Into<String>) -> Self {
        FfiError(Box::new(ErrorData {
            status,
            message: message.into(),
        }))
    }

    pub fn null(what: &str) -> Self {
        FfiError::new(tl_status::NullPointer, format!("{what} is NULL"))
    }

    pub fn invalid(what: &str, detail: impl fmt::Display) -> Self {
        FfiError::new(tl_status::InvalidInput, format!("invalid input: {what}: {detail}"))
    }

    /// Stores the message as this thread's last error and returns the status.
    pub fn record(self) -> tl_status {
        set_last_error(&self.message);
        self.status
    }
}

impl From<tieline::Error> for FfiError {
    #[cold]
    fn from(e: tieline::Error) -> Self {
        FfiError::new(tl_status::from_kind(e.kind()), e.to_string())
    }
}

pub(crate) type FfiResult<T = ()> = Result<T, FfiError>;

thread_local! {
    static LAST_ERROR: RefCell<String> = const { RefCell::new(String::new()) };
}

pub(crate) fn set_last_error(msg: &str) {
    LAST_ERROR.with(|m| {
        if let Ok(mut m) = m.try_borrow_mut() {
            m.clear();
            m.push_str(msg);
        }
    });
}

pub(crate) fn with_last_error<R>(f: impl FnOnce(&str) -> R) -> R {
    LAST_ERROR.with(|m| match m.try_borrow() {
        Ok(m) => f(&m),
        Err(_) => f(""),
    })
}

/// Records a caught panic as the last error and returns [`tl_status::Panic`].
pub(crate) fn record_panic(payload: Box<dyn std::any::Any + Send>) -> tl_status {
    let what = if let Some(s) = payload.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "unknown panic payload".to_string()
    };
    // Dropping a panic payload can itself panic; keep it from unwinding out of here.
    let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(move || drop(payload)));
    set_last_error(&format!(
        "internal error in tieline (caught at the C boundary): {what}; please report it"
    ));
    tl_status::Panic
}

/// Runs the body of an exported function: the body is a block evaluating to
/// `FfiResult<()>`; an `Err` is recorded as the last error and its status returned, a panic is
/// caught and returned as `TL_STATUS_PANIC`. No panic ever unwinds into the caller.
macro_rules! ffi_boundary {
    ($body:block) => {{
        match ::std::panic::catch_unwind(::std::panic::AssertUnwindSafe(|| -> $crate::boundary::FfiResult<()> {
            $body
        })) {
            Ok(Ok(())) => $crate::boundary::tl_status::Ok,
            Ok(Err(e)) => e.record(),
            Err(payload) => $crate::boundary::record_panic(payload),
        }
    }};
}

/// The same for functions that return nothing (the `_free` functions): errors and panics are
/// recorded as the last error and otherwise ignored.
macro_rules! ffi_boundary_void {
    ($body:block) => {{
        match ::std::panic::catch_unwind(::std::panic::AssertUnwindSafe(|| -> $crate::boundary::FfiResult<()> {
            $body
        })) {
            Ok(Ok(())) => {}
            Ok(Err(e)) => {
                e.record();
            }
            Err(payload) => {
                $crate::boundary::record_panic(payload);
            }
        }
    }};
}

pub(crate) use {ffi_boundary, ffi_boundary_void};

// ---------------------------------------------------------------------------------------------
// Typed handles

const DEAD_TAG: u64 = 0xDEAD_DEAD_DEAD_DEAD;

/// The allocation behind a handle: a type tag first (checked on every use, overwritten when
/// the handle is freed, so a confused or freed handle is usually caught), then the value.
#[repr(C)]
pub(crate) struct Slot<T> {
    tag: u64,
    pub value: T,
}

impl<T> Drop for Slot<T> {
    fn drop(&mut self) {
        // SAFETY: `self.tag` is a valid, aligned u64 owned by `self`; a volatile write keeps
        // the store from being removed as dead before deallocation.
        unsafe { std::ptr::write_volatile(&mut self.tag, DEAD_TAG) };
    }
}

/// Links an opaque C handle type to the Rust value behind it (rustls-ffi's `Castable`), so
/// every pointer cast is checked by the type system instead of written with `as` by hand.
pub(crate) trait Castable {
    /// The Rust value behind the handle.
    type Inner;
    /// `Box` (owned, mutable through its lock) or `Arc` (shared, read-only).
    type Ownership;
    /// The tag stored in the allocation.
    const TAG: u64;
    /// The C type name, for messages.
    const NAME: &'static str;
}

/// Marker: the handle is a `Box<Slot<Inner>>`.
pub(crate) struct OwnedBox;
/// Marker: the handle is an `Arc<Slot<Inner>>`; each handle holds one strong count.
pub(crate) struct SharedArc;

/// A shared reference to the value behind a handle, after the NULL, alignment and tag checks.
///
/// # Safety
/// `p` must be NULL or a pointer obtained from this library for type `C` and not yet freed.
/// (A freed or foreign pointer is detected on a best-effort basis only.)
pub(crate) unsafe fn try_ref<'a, C: Castable>(p: *const C) -> FfiResult<&'a C::Inner> {
    if p.is_null() {
        return Err(FfiError::null(C::NAME));
    }
    let slot = p.cast::<Slot<C::Inner>>();
    if !slot.is_aligned() {
        return Err(FfiError::new(
            tl_status::InvalidHandle,
            format!("{} handle is not a pointer returned by tieline", C::NAME),
        ));
    }
    // SAFETY: non-NULL and aligned; by the contract it points to a live `Slot<C::Inner>`
    // (the tag guards against the commonest violations).
    let slot = unsafe { &*slot };
    if slot.tag != C::TAG {
        return Err(FfiError::new(
            tl_status::InvalidHandle,
            format!("{} handle is invalid (of another type, or already freed)", C::NAME),
        ));
    }
    Ok(&slot.value)
}

/// Moves a value into a new Box-backed handle.
pub(crate) fn new_box<C: Castable<Ownership = OwnedBox>>(value: C::Inner) -> *mut C {
    Box::into_raw(Box::new(Slot { tag: C::TAG, value })).cast::<C>()
}

/// Frees a Box-backed handle (NULL is accepted and ignored).
///
/// # Safety
/// As [`try_ref`]; the handle must not be used afterwards.
pub(crate) unsafe fn free_box<C: Castable<Ownership = OwnedBox>>(p: *mut C) -> FfiResult {
    if p.is_null() {
        return Ok(());
    }
    // SAFETY: the contract of this function; the tag is checked before taking ownership.
    unsafe { try_ref::<C>(p)? };
    // SAFETY: `p` came from `new_box::<C>` (tag checked) and is freed exactly once.
    drop(unsafe { Box::from_raw(p.cast::<Slot<C::Inner>>()) });
    Ok(())
}

/// Moves a value into a new Arc-backed handle.
pub(crate) fn new_arc<C: Castable<Ownership = SharedArc>>(value: C::Inner) -> *const C {
    Arc::into_raw(Arc::new(Slot { tag: C::TAG, value })).cast::<C>()
}

/// A new strong reference to the allocation behind an Arc-backed handle.
///
/// # Safety
/// As [`try_ref`].
pub(crate) unsafe fn clone_arc<C: Castable<Ownership = SharedArc>>(p: *const C) -> FfiResult<Arc<Slot<C::Inner>>> {
    // SAFETY: the contract of this function.
    unsafe { try_ref::<C>(p)? };
    let raw = p.cast::<Slot<C::Inner>>();
    // SAFETY: `raw` came from `Arc::into_raw` in `new_arc` and the handle holds a strong count.
    unsafe {
        Arc::increment_strong_count(raw);
        Ok(Arc::from_raw(raw))
    }
}

/// A handle for an existing shared allocation (one more strong count).
pub(crate) fn arc_handle<C: Castable<Ownership = SharedArc>>(a: Arc<Slot<C::Inner>>) -> *const C {
    Arc::into_raw(a).cast::<C>()
}

/// Releases an Arc-backed handle (NULL is accepted and ignored).
///
/// # Safety
/// As [`try_ref`]; the handle must not be used afterwards.
pub(crate) unsafe fn free_arc<C: Castable<Ownership = SharedArc>>(p: *const C) -> FfiResult {
    if p.is_null() {
        return Ok(());
    }
    // SAFETY: the contract of this function.
    unsafe { try_ref::<C>(p)? };
    // SAFETY: the handle owns one strong count, released exactly once here.
    drop(unsafe { Arc::from_raw(p.cast::<Slot<C::Inner>>()) });
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Caller memory

/// Largest element count accepted for a caller array (keeps `len * size` within `isize`).
const MAX_LEN: usize = (isize::MAX as usize) / 16;

/// A caller array of `len` values as a slice, after the NULL, alignment and size checks.
///
/// # Safety
/// `p` must be NULL or point to `len` readable, initialised values that stay unchanged for
/// the duration of the call.
pub(crate) unsafe fn slice<'a, T>(p: *const T, len: usize, what: &str) -> FfiResult<&'a [T]> {
    if p.is_null() {
        return Err(FfiError::null(what));
    }
    if !p.is_aligned() {
        return Err(FfiError::invalid(what, "the pointer is not aligned for its type"));
    }
    if len > MAX_LEN {
        return Err(FfiError::invalid(what, format!("length {len} is too large")));
    }
    // SAFETY: checked non-NULL, aligned and of bounded size; the rest is the contract.
    Ok(unsafe { std::slice::from_raw_parts(p, len) })
}

/// A checked caller output array of `len` values, written later with [`OutArray::write`].
/// Writing goes through the raw pointer, so an output that aliases an input array (a caller
/// overwriting its own input) is fine once the input is no longer read.
pub(crate) struct OutArray<T> {
    ptr: *mut T,
    len: usize,
}

// SAFETY: an `OutArray` is a checked pointer to caller memory; sharing it between threads is
// sound as long as no two threads write the same index, which its users guarantee (a batch
// writes each point's slots from the one thread that flashed that point).
unsafe impl<T: Send> Sync for OutArray<T> {}

impl<T: Copy> OutArray<T> {
    /// Checks a caller output array of `len` values that must hold at least `need`.
    ///
    /// # Safety
    /// `p` must be NULL or point to `len` writable values.
    pub unsafe fn new(p: *mut T, len: usize, need: usize, what: &str) -> FfiResult<Self> {
        if p.is_null() {
            return Err(FfiError::null(what));
        }
        if !p.is_aligned() {
            return Err(FfiError::invalid(what, "the pointer is not aligned for its type"));
        }
        if len > MAX_LEN {
            return Err(FfiError::invalid(what, format!("length {len} is too large")));
        }
        if len < need {
            return Err(FfiError::new(
                tl_status::BufferTooSmall,
                format!("{what} holds {len} values; {need} are required"),
            ));
        }
        Ok(OutArray { ptr: p, len })
    }

    /// As [`OutArray::new`], but NULL (with any length) means "not wanted".
    ///
    /// # Safety
    /// As [`OutArray::new`].
    pub unsafe fn optional(p: *mut T, len: usize, need: usize, what: &str) -> FfiResult<Option<Self>> {
        if p.is_null() {
            Ok(None)
        } else {
            // SAFETY: forwarded contract.
            unsafe { Self::new(p, len, need, what) }.map(Some)
        }
    }

    /// Writes `src` at `offset`.
    pub fn write(&self, offset: usize, src: &[T]) {
        assert!(offset + src.len() <= self.len, "output array bounds");
        // SAFETY: in bounds (asserted) of a checked, writable caller array.
        unsafe {
            for (i, &v) in src.iter().enumerate() {
                self.ptr.add(offset + i).write(v);
            }
        }
    }

    /// Writes one value at `index`.
    pub fn set(&self, index: usize, v: T) {
        self.write(index, std::slice::from_ref(&v));
    }
}

/// A checked pointer to one output value, written with [`Out::set`].
pub(crate) struct Out<T>(*mut T);

impl<T> Out<T> {
    /// # Safety
    /// `p` must be NULL or point to a writable `T`.
    pub unsafe fn new(p: *mut T, what: &str) -> FfiResult<Self> {
        if p.is_null() {
            return Err(FfiError::null(what));
        }
        if !p.is_aligned() {
            return Err(FfiError::invalid(what, "the pointer is not aligned for its type"));
        }
        Ok(Out(p))
    }

    /// NULL means "not wanted".
    ///
    /// # Safety
    /// As [`Out::new`].
    pub unsafe fn optional(p: *mut T, what: &str) -> FfiResult<Option<Self>> {
        if p.is_null() {
            Ok(None)
        } else {
            // SAFETY: forwarded contract.
            unsafe { Self::new(p, what) }.map(Some)
        }
    }

    pub fn set(self, v: T) {
        // SAFETY: checked non-NULL and aligned; writable by the contract. `write` does not
        // drop the (possibly uninitialised) old value.
        unsafe { self.0.write(v) }
    }
}

/// A NUL-terminated UTF-8 caller string.
///
/// # Safety
/// `p` must be NULL or point to a NUL-terminated string.
pub(crate) unsafe fn c_str<'a>(p: *const c_char, what: &str) -> FfiResult<&'a str> {
    if p.is_null() {
        return Err(FfiError::null(what));
    }
    // SAFETY: non-NULL and NUL-terminated by the contract.
    let s = unsafe { CStr::from_ptr(p) };
    s.to_str()
        .map_err(|e| FfiError::new(tl_status::InvalidUtf8, format!("{what} is not valid UTF-8: {e}")))
}

/// An array of `count` NUL-terminated UTF-8 strings.
///
/// # Safety
/// `p` must be NULL or point to `count` pointers, each NULL or NUL-terminated.
pub(crate) unsafe fn c_str_array<'a>(p: *const *const c_char, count: usize, what: &str) -> FfiResult<Vec<&'a str>> {
    // SAFETY: forwarded contract.
    let ptrs = unsafe { slice(p, count, what)? };
    ptrs.iter()
        .enumerate()
        // SAFETY: each entry is NULL or NUL-terminated by the contract.
        .map(|(i, &s)| unsafe { c_str(s, &format!("{what}[{i}]")) })
        .collect()
}

/// Copies `text` into a caller buffer of `len` bytes with a terminating NUL, snprintf-style:
/// `needed` (if not NULL) receives the size required including the NUL, always. If the
/// buffer is too small nothing is written to it (`truncate = false`) or the longest prefix
/// that fits on a UTF-8 character boundary is written (`truncate = true`), and
/// `BufferTooSmall` is returned. `buf` may be NULL when `len` is 0 (a size query).
///
/// # Safety
/// `buf` must be NULL or point to `len` writable bytes; `needed` NULL or writable.
pub(crate) unsafe fn write_text(
    text: &str,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
    truncate: bool,
) -> FfiResult {
    // SAFETY: forwarded contract.
    let needed = unsafe { Out::optional(needed, "needed")? };
    let need = text.len() + 1;
    if let Some(n) = needed {
        n.set(need);
    }
    if buf.is_null() && len > 0 {
        return Err(FfiError::null("buf"));
    }
    let fits = len >= need;
    if !fits && !(truncate && len > 0) {
        return Err(FfiError::new(
            tl_status::BufferTooSmall,
            format!("the buffer holds {len} bytes; {need} are required (including the NUL)"),
        ));
    }
    let mut n = text.len().min(len.saturating_sub(1));
    while !text.is_char_boundary(n) {
        n -= 1;
    }
    // SAFETY: `buf` is non-NULL (checked above since len > 0 here) and holds `len` > n bytes.
    unsafe {
        std::ptr::copy_nonoverlapping(text.as_ptr(), buf.cast::<u8>(), n);
        buf.add(n).write(0);
    }
    if fits {
        Ok(())
    } else {
        Err(FfiError::new(
            tl_status::BufferTooSmall,
            format!("the buffer holds {len} bytes; {need} are required (including the NUL)"),
        ))
    }
}

// ---------------------------------------------------------------------------------------------
// Handle cells

/// Interior state of a [`TryCell`]: the writer bit, the poison bit and the reader count.
const WRITER: usize = 1 << (usize::BITS - 1);
const POISON: usize = 1 << (usize::BITS - 2);
const READERS: usize = POISON - 1;

/// The value behind a mutable handle (a context, a result): many readers or one writer at a
/// time, never waiting — a call that finds the value in use by another thread is told so at
/// once (`TL_STATUS_BUSY`). Taking and releasing it is one atomic read-modify-write and one
/// plain atomic store on the uncontended path. A writer that unwinds (a panic caught at the
/// boundary) leaves the cell poisoned; the next writer is told, so it can reset the value.
pub(crate) struct TryCell<T> {
    state: std::sync::atomic::AtomicUsize,
    value: std::cell::UnsafeCell<T>,
}

// SAFETY: the state word gives shared access to readers only while no writer holds the cell
// and exclusive access to one writer (the protocol of a reader–writer lock), so the value is
// sent or shared across threads only as `RwLock<T>` would.
unsafe impl<T: Send> Send for TryCell<T> {}
// SAFETY: as above; readers on several threads share `&T`, hence `T: Sync`.
unsafe impl<T: Send + Sync> Sync for TryCell<T> {}

impl<T> TryCell<T> {
    /// A free, unpoisoned cell holding `value`.
    pub fn new(value: T) -> Self {
        TryCell {
            state: std::sync::atomic::AtomicUsize::new(0),
            value: std::cell::UnsafeCell::new(value),
        }
    }

    /// Exclusive access, or `None` while another thread reads or writes. The flag is true when
    /// the previous writer unwound (the value may be half-updated); taking it clears the poison.
    pub fn try_write(&self) -> Option<(TryWriteGuard<'_, T>, bool)> {
        use std::sync::atomic::Ordering::{Acquire, Relaxed};
        let s = self.state.load(Relaxed);
        if s & !POISON != 0 {
            return None;
        }
        self.state.compare_exchange(s, WRITER, Acquire, Relaxed).ok()?;
        Some((TryWriteGuard { cell: self }, s & POISON != 0))
    }

    /// Shared access, or `None` while another thread writes. A poisoned value reads as it was
    /// left.
    pub fn try_read(&self) -> Option<TryReadGuard<'_, T>> {
        use std::sync::atomic::Ordering::{Acquire, Relaxed};
        let mut s = self.state.load(Relaxed);
        loop {
            if s & WRITER != 0 || s & READERS == READERS {
                return None;
            }
            match self.state.compare_exchange_weak(s, s + 1, Acquire, Relaxed) {
                Ok(_) => return Some(TryReadGuard { cell: self }),
                Err(now) => s = now,
            }
        }
    }

    /// Whether the last writer unwound and no writer has taken the cell since.
    #[cfg(test)]
    pub fn is_poisoned(&self) -> bool {
        self.state.load(std::sync::atomic::Ordering::Relaxed) & POISON != 0
    }
}

/// Exclusive access to the value of a [`TryCell`]; released (and poisoned if unwinding) on drop.
pub(crate) struct TryWriteGuard<'a, T> {
    cell: &'a TryCell<T>,
}

impl<T> std::ops::Deref for TryWriteGuard<'_, T> {
    type Target = T;
    fn deref(&self) -> &T {
        // SAFETY: the writer bit is held: no other reference to the value exists.
        unsafe { &*self.cell.value.get() }
    }
}

impl<T> std::ops::DerefMut for TryWriteGuard<'_, T> {
    fn deref_mut(&mut self) -> &mut T {
        // SAFETY: the writer bit is held: no other reference to the value exists.
        unsafe { &mut *self.cell.value.get() }
    }
}

impl<T> Drop for TryWriteGuard<'_, T> {
    fn drop(&mut self) {
        // While the writer bit is set no other thread changes the state, so a plain store
        // releases it.
        let next = if std::thread::panicking() { POISON } else { 0 };
        self.cell.state.store(next, std::sync::atomic::Ordering::Release);
    }
}

/// Shared access to the value of a [`TryCell`]; released on drop.
pub(crate) struct TryReadGuard<'a, T> {
    cell: &'a TryCell<T>,
}

impl<T> std::ops::Deref for TryReadGuard<'_, T> {
    type Target = T;
    fn deref(&self) -> &T {
        // SAFETY: a reader count is held: no writer exists until it is released.
        unsafe { &*self.cell.value.get() }
    }
}

impl<T> Drop for TryReadGuard<'_, T> {
    fn drop(&mut self) {
        self.cell.state.fetch_sub(1, std::sync::atomic::Ordering::Release);
    }
}
