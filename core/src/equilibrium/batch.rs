//! Batch PT flashes over many points, in parallel with rayon. Points are processed in
//! contiguous chunks, each by one [`FlashContext`] that warm-starts from point to point, so a
//! sweep ordered along T or p gets the benefit of warm starts on every thread.

use super::flash::{FlashContext, FlashOptions, FlashResult};
use crate::error::{Error, Result, check};
use crate::limits::{MAX_POINTS, MAX_THREADS};
use crate::model::FluidModel;
use rayon::prelude::*;

/// Number of points per chunk of a batch of `npts` points on `threads` threads (about four
/// chunks per thread). Each chunk is flashed in order by one fresh [`FlashContext`], so a
/// batch's results depend on this partition only, never on which thread ran which chunk:
/// other drivers of the same partition (the C ABI's scoped threads) give identical results.
pub fn chunk_len(npts: usize, threads: usize) -> usize {
    npts.div_ceil(threads.max(1) * 4).max(1)
}

/// Flashes `t.len()` points. `t` (K) and `p` (Pa) have one value per point; `feeds` holds
/// either one feed of `nc` amounts (mol) shared by every point or one row of `nc` per point
/// (row-major). `threads` = 0 uses rayon's global pool, otherwise a pool of that many threads
/// (at most [`MAX_THREADS`], never clamped: more is [`Error::InvalidInput`]); at most
/// [`MAX_POINTS`] points.
/// Each point's outcome is returned separately: one bad point does not spoil the batch.
pub fn flash_batch<M: FluidModel + ?Sized>(
    model: &M,
    t: &[f64],
    p: &[f64],
    feeds: &[f64],
    opts: &FlashOptions,
    threads: usize,
) -> Result<Vec<Result<FlashResult>>> {
    let nc = model.num_components();
    let npts = t.len();
    check::count("threads", threads, 0, MAX_THREADS)?;
    check::count("temperatures", npts, 0, MAX_POINTS)?;
    if p.len() != npts {
        return Err(Error::invalid(
            "pressures",
            format!("{} values for {} temperatures", p.len(), npts),
        ));
    }
    let per_point = if feeds.len() == nc {
        false
    } else if feeds.len() == nc * npts {
        true
    } else {
        return Err(Error::invalid(
            "feeds",
            format!(
                "{} values; {nc} (one shared feed) or {} (one per point) are required",
                feeds.len(),
                nc * npts
            ),
        ));
    };
    let feed = |i: usize| if per_point { &feeds[i * nc..(i + 1) * nc] } else { feeds };
    let nthreads = if threads == 0 {
        rayon::current_num_threads()
    } else {
        threads
    };
    let chunk = chunk_len(npts, nthreads);
    let run = || {
        (0..npts)
            .collect::<Vec<usize>>()
            .par_chunks(chunk)
            .flat_map_iter(|idx| {
                let mut ctx = FlashContext::new(nc);
                idx.iter()
                    .map(move |&i| ctx.flash(model, t[i], p[i], feed(i), opts).cloned())
                    .collect::<Vec<_>>()
            })
            .collect::<Vec<_>>()
    };
    if threads == 0 {
        Ok(run())
    } else {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| Error::invalid("threads", format!("could not start {threads} threads: {e}")))?;
        Ok(pool.install(run))
    }
}
