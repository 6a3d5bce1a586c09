//! Model handles: built from names in the embedded data bank, from a user component file, or
//! from a JSON model description; shared read-only by any number of threads.

use crate::boundary::*;
use std::ffi::c_char;
use tieline::model::{CubicEos, CubicKind, FluidModel, Model, model_from_json};
use tieline::substance::DataBank;

/// A thermodynamic model (an equation of state with its components).
///
/// Thread safety: a model is immutable and reference-counted; one model may be used by any
/// number of threads at once, and freed by any thread once no call is using it. Contexts
/// keep their own reference, so a model may be freed while its contexts live on.
pub struct tl_model {
    _private: [u8; 0],
}

pub(crate) struct ModelData {
    pub model: Model,
}

impl Castable for tl_model {
    type Inner = ModelData;
    type Ownership = SharedArc;
    const TAG: u64 = 0x746c_6d6f_6465_6c31; // "tlmodel1"
    const NAME: &'static str = "model";
}

/// Which cubic equation of state (`TL_CUBIC_*`).
pub type tl_cubic_kind = u32;
/// Peng–Robinson (1976).
pub const TL_CUBIC_PENG_ROBINSON: tl_cubic_kind = 1;
/// Peng–Robinson with the 1978 κ(ω) for ω > 0.49.
pub const TL_CUBIC_PENG_ROBINSON78: tl_cubic_kind = 2;
/// Soave–Redlich–Kwong (1972).
pub const TL_CUBIC_SOAVE_REDLICH_KWONG: tl_cubic_kind = 3;

fn cubic_kind(k: tl_cubic_kind) -> FfiResult<CubicKind> {
    match k {
        TL_CUBIC_PENG_ROBINSON => Ok(CubicKind::PengRobinson),
        TL_CUBIC_PENG_ROBINSON78 => Ok(CubicKind::PengRobinson78),
        TL_CUBIC_SOAVE_REDLICH_KWONG => Ok(CubicKind::SoaveRedlichKwong),
        other => Err(FfiError::invalid(
            "kind",
            format!(
                "{other}; one of TL_CUBIC_PENG_ROBINSON (1), TL_CUBIC_PENG_ROBINSON78 (2), TL_CUBIC_SOAVE_REDLICH_KWONG (3) is required"
            ),
        )),
    }
}

/// The model behind a handle.
///
/// # Safety
/// As [`try_ref`].
pub(crate) unsafe fn model_ref<'a>(m: *const tl_model) -> FfiResult<&'a Model> {
    // SAFETY: forwarded contract.
    Ok(&unsafe { try_ref(m)? }.model)
}

fn build(bank: &DataBank, names: &[&str], kind: tl_cubic_kind) -> FfiResult<Model> {
    let kind = cubic_kind(kind)?;
    if names.is_empty() {
        return Err(FfiError::invalid(
            "names",
            "no components given; at least one is required",
        ));
    }
    let comps = bank.get_many(names)?;
    Ok(Model::Cubic(CubicEos::new(kind, comps)?))
}

/// Builds the model and writes its handle, or records the error.
unsafe fn finish(out: *mut *const tl_model, make: impl FnOnce() -> FfiResult<Model>) -> FfiResult {
    // SAFETY: forwarded contract of the caller.
    let out = unsafe { Out::new(out, "out")? };
    let model = make()?;
    out.set(new_arc::<tl_model>(ModelData { model }));
    Ok(())
}

/// A cubic equation of state for `count` components named in the embedded data bank (names,
/// aliases or CAS numbers, case-insensitive). `kind` is one of `TL_CUBIC_*`. On success
/// `*out` receives a new model, to be released with `tl_model_free`.
///
/// Errors: `TL_STATUS_UNKNOWN_COMPONENT` (the message suggests the closest names),
/// `TL_STATUS_INVALID_INPUT`, `TL_STATUS_NULL_POINTER`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_new(
    names: *const *const c_char,
    count: usize,
    kind: tl_cubic_kind,
    out: *mut *const tl_model,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: `names` points to `count` NUL-terminated strings (caller contract).
        let names = unsafe { c_str_array(names, count, "names")? };
        // SAFETY: `out` is writable (caller contract).
        unsafe { finish(out, || build(DataBank::embedded(), &names, kind)) }
    })
}

/// As `tl_model_new`, with the components looked up in a user component file given as TOML
/// text (the schema of the embedded data file, with its `[references]`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_from_component_toml(
    toml_text: *const c_char,
    names: *const *const c_char,
    count: usize,
    kind: tl_cubic_kind,
    out: *mut *const tl_model,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract (NUL-terminated strings).
        let text = unsafe { c_str(toml_text, "toml_text")? };
        // SAFETY: caller contract.
        let names = unsafe { c_str_array(names, count, "names")? };
        // SAFETY: caller contract.
        unsafe { finish(out, || build(&DataBank::from_toml_str(text)?, &names, kind)) }
    })
}

/// As `tl_model_from_component_toml`, reading the TOML component file at `path`.
/// Errors also: `TL_STATUS_IO` if the file cannot be read.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_from_component_file(
    path: *const c_char,
    names: *const *const c_char,
    count: usize,
    kind: tl_cubic_kind,
    out: *mut *const tl_model,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let path = unsafe { c_str(path, "path")? };
        // SAFETY: caller contract.
        let names = unsafe { c_str_array(names, count, "names")? };
        let text = std::fs::read_to_string(path)
            .map_err(|e| FfiError::new(tl_status::Io, format!("reading component file '{path}': {e}")))?;
        // SAFETY: caller contract.
        unsafe { finish(out, || build(&DataBank::from_toml_str(&text)?, &names, kind)) }
    })
}

/// A model from JSON text: either a model description (components by name in the embedded
/// bank, optional constant overrides, `kij`, `volume_shift`; see the core documentation of
/// `ModelDescription`) or a full model as written by `tl_model_to_json`.
///
/// Errors: `TL_STATUS_DATA` (malformed JSON or unknown fields), `TL_STATUS_UNKNOWN_COMPONENT`,
/// `TL_STATUS_INVALID_INPUT`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_from_json(json: *const c_char, out: *mut *const tl_model) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let text = unsafe { c_str(json, "json")? };
        // SAFETY: caller contract.
        unsafe { finish(out, || Ok(model_from_json(text, DataBank::embedded())?)) }
    })
}

/// A second handle to the same model (shares the data; each handle is freed separately).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_clone(model: *const tl_model, out: *mut *const tl_model) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let out = unsafe { Out::new(out, "out")? };
        // SAFETY: caller contract.
        let a = unsafe { clone_arc(model)? };
        out.set(arc_handle(a));
        Ok(())
    })
}

/// Releases a model handle. NULL is accepted and ignored. Must not be called twice on the
/// same handle.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_free(model: *const tl_model) {
    // SAFETY: caller contract.
    ffi_boundary_void!({ unsafe { free_arc(model) } })
}

/// Number of components of the model.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_num_components(model: *const tl_model, out: *mut usize) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, out) = unsafe { (model_ref(model)?, Out::new(out, "out")?) };
        out.set(m.num_components());
        Ok(())
    })
}

/// Checks a component index.
pub(crate) fn component_index(m: &Model, i: usize) -> FfiResult<usize> {
    let nc = m.num_components();
    if i < nc {
        Ok(i)
    } else {
        Err(FfiError::new(
            tl_status::IndexOutOfRange,
            format!("component index {i} for a model of {nc} components"),
        ))
    }
}

/// The name of component `index` (the data bank's main name), copied with a terminating NUL
/// into `buf` of `len` bytes. `*needed` (if not NULL) receives the size required, NUL
/// included, also when the buffer is too small (`TL_STATUS_BUFFER_TOO_SMALL`, nothing
/// written). Pass `buf = NULL, len = 0` to query the size.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_component_name(
    model: *const tl_model,
    index: usize,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let m = unsafe { model_ref(model)? };
        let i = component_index(m, index)?;
        // SAFETY: caller contract.
        unsafe { write_text(m.component_name(i), buf, len, needed, false) }
    })
}

/// Molar mass of component `index`, kg/mol.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_molar_mass(model: *const tl_model, index: usize, out: *mut f64) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let (m, out) = unsafe { (model_ref(model)?, Out::new(out, "out")?) };
        out.set(m.molar_mass(component_index(m, index)?));
        Ok(())
    })
}

/// The full model as JSON (readable by `tl_model_from_json`), with the buffer convention of
/// `tl_model_component_name`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn tl_model_to_json(
    model: *const tl_model,
    buf: *mut c_char,
    len: usize,
    needed: *mut usize,
) -> tl_status {
    ffi_boundary!({
        // SAFETY: caller contract.
        let m = unsafe { model_ref(model)? };
        let text = serde_json::to_string(m)
            .map_err(|e| FfiError::new(tl_status::Data, format!("serialising the model: {e}")))?;
        // SAFETY: caller contract.
        unsafe { write_text(&text, buf, len, needed, false) }
    })
}
