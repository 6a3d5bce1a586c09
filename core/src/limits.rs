//! Upper bounds of every size a caller controls, checked up front by each entry point (and by
//! the bindings) with an [`Error::InvalidInput`](crate::Error::InvalidInput) that names the
//! argument and the allowed range. Nothing is clamped silently: a value above its bound is
//! refused. The bounds are generous for real work and keep a mistyped value (a million
//! threads, 10^12 iterations) from exhausting the machine.

/// Most threads of one batch call (the C ABI's and Python's `threads`, [`crate::equilibrium::flash_batch`]).
/// A count above the machine's parallelism but within this bound is honoured as given (the
/// pool really has that many threads); 0 means one per core.
pub const MAX_THREADS: usize = 256;

/// Most components of one model.
pub const MAX_COMPONENTS: usize = 200;

/// Most iterations any iteration limit may ask for (flash successive substitution and Newton,
/// saturation and bubble/dew solvers, stability tests).
pub const MAX_ITERATIONS: usize = 100_000;

/// Most points of one batch call (the length of each array of a vectorised call, and the
/// block size of the Python package's blocked batches). Split larger sweeps into calls.
pub const MAX_POINTS: usize = 10_000_000;
