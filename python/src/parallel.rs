//! Running many independent tasks in parallel with the GIL released: thread pools of a chosen
//! size, a progress callback called from the calling thread, and cancellation by Ctrl-C or by
//! an exception raised in the callback.

use pyo3::prelude::*;
use rayon::prelude::*;
use std::collections::HashMap;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc::{RecvTimeoutError, channel};
use std::sync::{Arc, Mutex, OnceLock};
use std::time::Duration;

/// Default thread count of batch calls (0: one per core, rayon's global pool).
static DEFAULT_THREADS: AtomicUsize = AtomicUsize::new(0);

fn pools() -> &'static Mutex<HashMap<usize, Arc<rayon::ThreadPool>>> {
    static POOLS: OnceLock<Mutex<HashMap<usize, Arc<rayon::ThreadPool>>>> = OnceLock::new();
    POOLS.get_or_init(|| Mutex::new(HashMap::new()))
}

/// Sets the default thread count (0 = one per core).
pub fn set_default_threads(n: usize) {
    DEFAULT_THREADS.store(n, Ordering::Relaxed);
}

/// The thread count a batch call with `threads` (None = the default) would use.
pub fn effective_threads(threads: Option<usize>) -> usize {
    match threads.unwrap_or_else(|| DEFAULT_THREADS.load(Ordering::Relaxed)) {
        0 => rayon::current_num_threads(),
        n => n,
    }
}

fn pool(n: usize) -> Result<Option<Arc<rayon::ThreadPool>>, String> {
    if n == 0 {
        return Ok(None);
    }
    if n > tieline::limits::MAX_THREADS {
        return Err(format!(
            "{n}; an integer from 0 to {} (0: one per core) is required",
            tieline::limits::MAX_THREADS
        ));
    }
    let mut map = pools()
        .lock()
        .map_err(|_| "thread-pool registry poisoned".to_string())?;
    if let Some(p) = map.get(&n) {
        return Ok(Some(p.clone()));
    }
    let p = Arc::new(
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .thread_name(|i| format!("tieline-worker-{i}"))
            .build()
            .map_err(|e| format!("could not start {n} threads: {e}"))?,
    );
    map.insert(n, p.clone());
    Ok(Some(p))
}

/// Shared state of a running batch: points done, and the cancel flag the tasks poll.
pub struct Control {
    done: AtomicUsize,
    cancel: AtomicBool,
}

impl Control {
    /// Records `k` more points done.
    pub fn advance(&self, k: usize) {
        self.done.fetch_add(k, Ordering::Relaxed);
    }
    /// Whether the batch was cancelled (tasks then return early).
    pub fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }
}

/// How often the calling thread wakes up to report progress and check for Ctrl-C.
const POLL: Duration = Duration::from_millis(100);

/// Runs `task(0..ntasks)` in parallel on `threads` threads (None = default) with the GIL
/// released, and returns the outputs in task order. `total` is the number of points the tasks
/// cover (they call [`Control::advance`]); `progress(done, total)` is called from this thread
/// about every 0.1 s and once at the end. Ctrl-C or an exception from `progress` cancels the
/// batch and is raised.
pub fn run<R, F>(
    py: Python<'_>,
    ntasks: usize,
    total: usize,
    threads: Option<usize>,
    progress: Option<&Bound<'_, PyAny>>,
    task: F,
) -> PyResult<Vec<R>>
where
    R: Send,
    F: Fn(usize, &Control) -> R + Sync,
{
    let n = threads.unwrap_or_else(|| DEFAULT_THREADS.load(Ordering::Relaxed));
    let pool = pool(n).map_err(|e| crate::errors::invalid(py, "threads", &e))?;
    let ctl = Control {
        done: AtomicUsize::new(0),
        cancel: AtomicBool::new(false),
    };
    let progress: Option<Py<PyAny>> = progress.map(|p| p.clone().unbind());
    let work = |ctl: &Control| -> Vec<R> {
        let go = || (0..ntasks).into_par_iter().map(|i| task(i, ctl)).collect::<Vec<R>>();
        match &pool {
            Some(p) => p.install(go),
            None => go(),
        }
    };
    let (outcome, failure) = py.detach(|| {
        std::thread::scope(|s| {
            let (tx, rx) = channel::<()>();
            let ctl = &ctl;
            let work = &work;
            let handle = s.spawn(move || {
                let r = work(ctl);
                let _ = tx.send(());
                r
            });
            let mut failure: Option<PyErr> = None;
            loop {
                match rx.recv_timeout(POLL) {
                    Ok(()) | Err(RecvTimeoutError::Disconnected) => break,
                    Err(RecvTimeoutError::Timeout) => {
                        if failure.is_some() {
                            continue;
                        }
                        Python::attach(|py| {
                            let r = py.check_signals().and_then(|_| match &progress {
                                Some(cb) => cb.bind(py).call1((ctl.done.load(Ordering::Relaxed), total)).map(|_| ()),
                                None => Ok(()),
                            });
                            if let Err(e) = r {
                                ctl.cancel.store(true, Ordering::Relaxed);
                                failure = Some(e);
                            }
                        });
                    }
                }
            }
            (handle.join(), failure)
        })
    });
    if let Some(e) = failure {
        return Err(e);
    }
    let out = outcome.map_err(|_| crate::errors::internal("a worker thread panicked"))?;
    if let Some(cb) = &progress {
        cb.bind(py).call1((total, total))?;
    }
    Ok(out)
}
