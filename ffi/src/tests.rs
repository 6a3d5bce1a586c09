//! Rust-side tests of the boundary: the error mapping, the panic boundary, the last-error
//! buffer, handle checks and the recovery of a context after a caught panic.

use crate::boundary::*;
use crate::*;
use std::ffi::{CStr, c_char};
use std::ptr;

fn last_error() -> String {
    let mut buf = vec![0 as c_char; 1024];
    let mut needed = 0usize;
    // SAFETY: a writable buffer of the stated length and a writable size.
    unsafe { tl_last_error_message(buf.as_mut_ptr(), buf.len(), &mut needed) };
    // SAFETY: the function NUL-terminates what it writes.
    unsafe { CStr::from_ptr(buf.as_ptr()) }.to_str().unwrap().to_string()
}

fn model(names: &[&CStr]) -> *const tl_model {
    let ptrs: Vec<*const c_char> = names.iter().map(|s| s.as_ptr()).collect();
    let mut m = ptr::null();
    // SAFETY: valid strings and out-pointer.
    let s = unsafe { tl_model_new(ptrs.as_ptr(), ptrs.len(), TL_CUBIC_PENG_ROBINSON, &mut m) };
    assert_eq!(s, tl_status::Ok, "{}", last_error());
    m
}

#[test]
fn status_numbers_are_stable() {
    let table = [
        (tl_status::Ok, 0),
        (tl_status::NullPointer, 100),
        (tl_status::InvalidHandle, 101),
        (tl_status::BufferTooSmall, 102),
        (tl_status::InvalidUtf8, 103),
        (tl_status::IndexOutOfRange, 104),
        (tl_status::WrongResultKind, 105),
        (tl_status::Busy, 106),
        (tl_status::NotAvailable, 107),
        (tl_status::Io, 108),
        (tl_status::InvalidInput, 200),
        (tl_status::UnknownComponent, 201),
        (tl_status::OutsideValidity, 202),
        (tl_status::NoSolution, 203),
        (tl_status::NotConverged, 204),
        (tl_status::Data, 205),
        (tl_status::OtherError, 299),
        (tl_status::Panic, 900),
    ];
    assert_eq!(table.len(), tl_status::ALL.len());
    for (s, n) in table {
        assert_eq!(s as u32, n);
        // SAFETY: a static NUL-terminated string.
        let name = unsafe { CStr::from_ptr(tl_status_name(n)) }.to_str().unwrap();
        assert_eq!(name, s.c_name().to_str().unwrap());
        assert!(name.starts_with("TL_STATUS_"));
    }
    // SAFETY: as above.
    assert_eq!(
        unsafe { CStr::from_ptr(tl_status_name(7)) }.to_bytes(),
        b"TL_STATUS_UNKNOWN"
    );
}

#[test]
fn every_core_error_kind_has_its_own_status() {
    use tieline::{Error, ErrorKind};
    let errors = [
        (
            Error::invalid("x", "y"),
            tl_status::InvalidInput,
            ErrorKind::InvalidInput,
        ),
        (
            Error::UnknownComponent {
                name: "methan".into(),
                suggestions: vec!["methane".into()],
            },
            tl_status::UnknownComponent,
            ErrorKind::UnknownComponent,
        ),
        (
            Error::OutsideValidity {
                what: "T".into(),
                value: 1.0,
                min: 2.0,
                max: 3.0,
                detail: "cp".into(),
            },
            tl_status::OutsideValidity,
            ErrorKind::OutsideValidity,
        ),
        (
            Error::NoSolution("above Tc".into()),
            tl_status::NoSolution,
            ErrorKind::NoSolution,
        ),
        (
            Error::not_converged("flash", vec![], 1.0, 1e-10),
            tl_status::NotConverged,
            ErrorKind::NotConverged,
        ),
        (Error::Data("bad".into()), tl_status::Data, ErrorKind::Data),
    ];
    for (e, status, kind) in errors {
        assert_eq!(e.kind(), kind);
        let f = FfiError::from(e.clone());
        assert_eq!(f.status, status);
        assert_eq!(f.message, e.to_string(), "the core message is kept whole");
        assert_eq!(tl_status::from_kind(kind), status);
    }
}

#[test]
fn the_boundary_records_errors_and_catches_panics() {
    let ok = ffi_boundary!({ Ok(()) });
    assert_eq!(ok, tl_status::Ok);
    let err = ffi_boundary!({ Err(FfiError::invalid("pressure", "-1 Pa; > 0 is required")) });
    assert_eq!(err, tl_status::InvalidInput);
    assert_eq!(last_error(), "invalid input: pressure: -1 Pa; > 0 is required");
    // A success leaves the message of the last failure in place.
    assert_eq!(ffi_boundary!({ Ok(()) }), tl_status::Ok);
    assert!(last_error().contains("pressure"));

    let s = ffi_boundary!({
        let v: Vec<f64> = Vec::new();
        let _ = v[3]; // index out of bounds: a panic
        Ok(())
    });
    assert_eq!(s, tl_status::Panic);
    let msg = last_error();
    assert!(
        msg.contains("internal error") && msg.contains("index out of bounds"),
        "{msg}"
    );
    let s = ffi_boundary!({ panic!("{} formatted", "a String payload") });
    assert_eq!(s, tl_status::Panic);
    assert!(last_error().contains("a String payload formatted"));
    let mut hits = 0;
    ffi_boundary_void!({
        hits += 1;
        panic!("in a void function")
    });
    assert_eq!(hits, 1);
    assert!(last_error().contains("in a void function"));
    // The library works normally afterwards.
    let m = model(&[c"methane"]);
    // SAFETY: a live model handle.
    unsafe { tl_model_free(m) };
}

#[test]
fn last_error_is_per_thread() {
    let _ = ffi_boundary!({ Err(FfiError::invalid("here", "main thread")) });
    let other = std::thread::spawn(|| {
        let before = last_error();
        let _ = ffi_boundary!({ Err(FfiError::invalid("there", "other thread")) });
        (before, last_error())
    })
    .join()
    .unwrap();
    assert_eq!(other.0, "", "a new thread starts with no message");
    assert!(other.1.contains("other thread"));
    assert!(last_error().contains("main thread"));
}

#[test]
fn text_buffers_report_sizes_and_truncate_on_character_boundaries() {
    let text = "p = 5 µPa"; // 'µ' is two bytes
    let mut needed = 0usize;
    // SAFETY: NULL buffer with len 0 is a size query.
    let r = unsafe { write_text(text, ptr::null_mut(), 0, &mut needed, false) };
    assert_eq!(r.unwrap_err().status, tl_status::BufferTooSmall);
    assert_eq!(needed, text.len() + 1);
    let mut buf = [0x55 as c_char; 8];
    // SAFETY: a writable buffer of 8 bytes.
    let r = unsafe { write_text(text, buf.as_mut_ptr(), 8, &mut needed, false) };
    assert_eq!(r.unwrap_err().status, tl_status::BufferTooSmall);
    assert_eq!(buf[0], 0x55, "nothing written without truncation");
    // SAFETY: as above.
    let r = unsafe { write_text(text, buf.as_mut_ptr(), 8, &mut needed, true) };
    assert_eq!(r.unwrap_err().status, tl_status::BufferTooSmall);
    // 7 bytes fit; byte 7 would split 'µ' (bytes 6 and 7), so 6 are written.
    // SAFETY: NUL-terminated by write_text.
    let got = unsafe { CStr::from_ptr(buf.as_ptr()) }.to_str().unwrap();
    assert_eq!(got, "p = 5 ");
    let mut big = [0 as c_char; 32];
    // SAFETY: as above.
    unsafe { write_text(text, big.as_mut_ptr(), 32, &mut needed, false) }.unwrap();
    // SAFETY: as above.
    assert_eq!(unsafe { CStr::from_ptr(big.as_ptr()) }.to_str().unwrap(), text);
    // SAFETY: NULL buffer with a non-zero length is refused.
    let r = unsafe { write_text(text, ptr::null_mut(), 4, &mut needed, false) };
    assert_eq!(r.unwrap_err().status, tl_status::NullPointer);
}

#[test]
fn the_last_error_function_does_not_overwrite_the_message() {
    let _ = ffi_boundary!({ Err(FfiError::invalid("amounts", "component 1 is NaN")) });
    let mut tiny = [0 as c_char; 4];
    let mut needed = 0;
    // SAFETY: a 4-byte buffer.
    let s = unsafe { tl_last_error_message(tiny.as_mut_ptr(), 4, &mut needed) };
    assert_eq!(s, tl_status::BufferTooSmall);
    assert_eq!(needed, "invalid input: amounts: component 1 is NaN".len() + 1);
    // SAFETY: NUL-terminated.
    assert_eq!(unsafe { CStr::from_ptr(tiny.as_ptr()) }.to_bytes(), b"inv");
    // SAFETY: NULL buffer, NULL size: nothing to do, nothing recorded.
    assert_eq!(
        unsafe { tl_last_error_message(ptr::null_mut(), 4, ptr::null_mut()) },
        tl_status::NullPointer
    );
    assert!(last_error().contains("component 1 is NaN"));
}

#[test]
fn handles_are_checked_for_null_type_and_alignment() {
    let m = model(&[c"methane", c"ethane"]);
    let mut r = ptr::null_mut();
    // SAFETY: valid out-pointer.
    assert_eq!(unsafe { tl_result_new(&mut r) }, tl_status::Ok);
    let mut n = 0usize;
    // SAFETY: each call passes a NULL, a wrong-typed or a valid pointer; none is dereferenced
    // past the checks unless valid.
    unsafe {
        assert_eq!(tl_model_num_components(ptr::null(), &mut n), tl_status::NullPointer);
        assert_eq!(
            tl_model_num_components(r.cast::<tl_model>().cast_const(), &mut n),
            tl_status::InvalidHandle
        );
        assert_eq!(
            tl_result_num_phases(m.cast::<tl_result>(), &mut n),
            tl_status::InvalidHandle
        );
        assert_eq!(tl_model_num_components(m, ptr::null_mut()), tl_status::NullPointer);
        assert_eq!(tl_model_num_components(m, &mut n), tl_status::Ok);
        assert_eq!(n, 2);
        let mut c = ptr::null();
        assert_eq!(tl_model_clone(m, &mut c), tl_status::Ok);
        tl_model_free(m);
        // The clone keeps the model alive.
        assert_eq!(tl_model_num_components(c, &mut n), tl_status::Ok);
        tl_model_free(c);
        tl_result_free(r);
        tl_result_free(ptr::null_mut());
        tl_model_free(ptr::null());
        tl_context_free(ptr::null_mut());
    }
}

#[test]
fn a_context_poisoned_by_a_panic_recovers_cold() {
    let m = model(&[c"methane", c"n-butane"]);
    let (mut ctx, mut r) = (ptr::null_mut(), ptr::null_mut());
    let z = [0.5, 0.5];
    let mut d = std::mem::MaybeUninit::<tl_diagnostics>::uninit();
    // SAFETY: valid handles and arrays throughout.
    unsafe {
        assert_eq!(tl_context_new(m, &mut ctx), tl_status::Ok);
        assert_eq!(tl_result_new(&mut r), tl_status::Ok);
        assert_eq!(
            tl_context_flash(ctx, 300.0, 5e6, z.as_ptr(), 2, ptr::null(), r),
            tl_status::Ok
        );
        // Poison the context's lock as a panic inside a call would.
        let lock = try_ref::<tl_context>(ctx).unwrap();
        let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            let _g = lock.try_write().unwrap();
            panic!("simulated defect while the context is locked");
        }));
        assert!(lock.is_poisoned());
        assert_eq!(
            tl_context_flash(ctx, 300.5, 5e6, z.as_ptr(), 2, ptr::null(), r),
            tl_status::Ok
        );
        assert!(!lock.is_poisoned());
        assert_eq!(tl_result_diagnostics(r, d.as_mut_ptr()), tl_status::Ok);
        assert!(!d.assume_init().warm_start, "the recovered context starts cold");
        // The same for a result.
        let rl = try_ref::<tl_result>(r).unwrap();
        let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            let _g = rl.try_write().unwrap();
            panic!("simulated defect while the result is written");
        }));
        assert!(rl.is_poisoned());
        assert_eq!(
            tl_context_flash(ctx, 301.0, 5e6, z.as_ptr(), 2, ptr::null(), r),
            tl_status::Ok
        );
        let mut np = 0;
        assert_eq!(tl_result_num_phases(r, &mut np), tl_status::Ok);
        assert_eq!(np, 2);
        tl_result_free(r);
        tl_context_free(ctx);
        tl_model_free(m);
    }
}

#[test]
fn the_c_abi_gives_the_numbers_of_the_rust_call() {
    use tieline::equilibrium::{FlashOptions, flash_pt};
    use tieline::model::{CubicEos, CubicKind};
    use tieline::substance::DataBank;
    let comps = DataBank::embedded().get_many(&["methane", "n-butane"]).unwrap();
    let rust_model = CubicEos::new(CubicKind::PengRobinson, comps).unwrap();
    let want = flash_pt(&rust_model, 300.0, 5e6, &[0.5, 0.5], &FlashOptions::default()).unwrap();
    let m = model(&[c"methane", c"n-butane"]);
    let mut r = ptr::null_mut();
    let z = [0.5, 0.5];
    // SAFETY: valid handles and arrays.
    unsafe {
        assert_eq!(tl_result_new(&mut r), tl_status::Ok);
        assert_eq!(tl_flash(m, 300.0, 5e6, z.as_ptr(), 2, ptr::null(), r), tl_status::Ok);
        let d = crate::result::read(r).unwrap();
        assert_eq!(crate::result::as_flash(&d).unwrap(), &want);
        drop(d);
        tl_result_free(r);
        tl_model_free(m);
    }
}

#[test]
fn version_number_matches_the_package_version() {
    let v = env!("CARGO_PKG_VERSION");
    let parts: Vec<u32> = v.split('.').map(|p| p.parse().unwrap()).collect();
    assert_eq!(tl_version_number(), (parts[0] << 16) | (parts[1] << 8) | parts[2]);
    // SAFETY: a static NUL-terminated string.
    assert_eq!(unsafe { CStr::from_ptr(tl_version()) }.to_str().unwrap(), v);
    let header = include_str!("../include/tieline.h");
    for (name, value) in [("MAJOR", parts[0]), ("MINOR", parts[1]), ("PATCH", parts[2])] {
        assert!(
            header.contains(&format!("#define TL_VERSION_{name} {value}\n")),
            "TL_VERSION_{name} in the header"
        );
    }
}

#[test]
fn a_try_cell_shares_readers_excludes_writers_and_poisons() {
    use crate::boundary::TryCell;
    let c = TryCell::new(1);
    {
        let (a, b) = (c.try_read().unwrap(), c.try_read().unwrap());
        assert_eq!(*a + *b, 2);
        assert!(c.try_write().is_none(), "no writer while readers hold the cell");
    }
    {
        let (mut w, poisoned) = c.try_write().unwrap();
        assert!(!poisoned);
        *w = 2;
        assert!(c.try_write().is_none() && c.try_read().is_none(), "the writer is alone");
    }
    assert_eq!(*c.try_read().unwrap(), 2);
    let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let (mut w, _) = c.try_write().unwrap();
        *w = 3;
        panic!("simulated defect while writing");
    }));
    assert!(c.is_poisoned());
    assert_eq!(*c.try_read().unwrap(), 3, "a poisoned value reads as it was left");
    assert!(c.is_poisoned(), "reading does not clear the poison");
    let (_, poisoned) = c.try_write().unwrap();
    assert!(poisoned, "the next writer is told");
    assert!(!c.is_poisoned());
}

#[test]
fn a_try_cell_never_lets_a_writer_meet_anyone() {
    use crate::boundary::TryCell;
    use std::sync::atomic::{AtomicUsize, Ordering};
    // Each writer sets the pair to (k, k) in two steps; a reader or writer that ever sees the
    // two halves differ met a writer mid-update.
    let c = TryCell::new((0usize, 0usize));
    let (wrote, read) = (AtomicUsize::new(0), AtomicUsize::new(0));
    std::thread::scope(|s| {
        for id in 0..8usize {
            let (c, wrote, read) = (&c, &wrote, &read);
            s.spawn(move || {
                for k in 0..20_000usize {
                    if (k + id) % 3 == 0 {
                        if let Some((mut w, _)) = c.try_write() {
                            assert_eq!(w.0, w.1);
                            w.0 = k;
                            std::hint::black_box(&mut *w);
                            w.1 = k;
                            wrote.fetch_add(1, Ordering::Relaxed);
                        }
                    } else if let Some(r) = c.try_read() {
                        assert_eq!(r.0, r.1);
                        read.fetch_add(1, Ordering::Relaxed);
                    }
                }
            });
        }
    });
    assert!(wrote.load(Ordering::Relaxed) > 0 && read.load(Ordering::Relaxed) > 0);
    assert!(c.try_write().is_some(), "every guard was released");
}
