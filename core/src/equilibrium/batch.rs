//! Batch PT flashes over many points, in parallel with rayon.
//!
//! A batch is cut into runs of consecutive points (its [`Partition`]); each run is flashed in
//! order by one [`FlashContext`], and the runs are shared out to the threads as they become
//! free. By default the runs are blocks of [`block_len`] points (16 to 64) — small enough that the
//! threads stay evenly loaded whatever the cost of each region of a sweep, long enough that
//! few points start cold — and a point is warm-started from the previous one only when the
//! two are neighbours ([`near`]: close in T, p and feed); otherwise it starts cold, which is
//! cheaper than a warm start that fails. A sweep ordered along T or p gets warm starts; a
//! shuffled one costs no more than cold flashes.
//!
//! A batch's results depend on its layout ([`BatchLayout`]) and on the number of points only
//! (with [`Partition::Chunks`], also on the thread count), never on which thread ran which run:
//! other drivers of the same layout (the C ABI's scoped threads) give identical results.

use super::flash::{FlashContext, FlashOptions, FlashResult};
use crate::error::{Error, Result, check};
use crate::limits::{MAX_POINTS, MAX_THREADS};
use crate::model::FluidModel;
use rayon::prelude::*;
use std::ops::Range;

/// Largest relative change of temperature between neighbours that keeps a warm start.
/// Common practice, no source: within 5 % the previous K-values are a good first guess.
pub const NEAR_TEMPERATURE: f64 = 0.05;
/// Largest relative change of pressure between neighbours that keeps a warm start (common
/// practice, no source).
pub const NEAR_PRESSURE: f64 = 0.10;
/// Largest change of any mole fraction between neighbours that keeps a warm start (common
/// practice, no source).
pub const NEAR_COMPOSITION: f64 = 0.05;

/// How the points of a batch are cut into runs of consecutive points.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Partition {
    /// Blocks of [`block_len`]`(npts)` points (the default).
    #[default]
    Auto,
    /// Blocks of this many points (at least 1).
    Blocks(usize),
    /// About four contiguous chunks per thread ([`chunk_len`]).
    Chunks,
}

/// When a point is warm-started from the previous point of its run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum WarmStart {
    /// When the two points are neighbours ([`near`]); otherwise cold (the default).
    #[default]
    Near,
    /// Always (the flash itself falls back to a cold start when the warm one fails).
    Always,
    /// Never: every point starts cold.
    Never,
}

/// The layout of a batch: its partition into runs and its warm-start rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct BatchLayout {
    /// How the points are cut into runs.
    pub partition: Partition,
    /// When a point is warm-started from the previous one.
    pub warm_start: WarmStart,
}

/// Number of points per chunk of [`Partition::Chunks`] for `npts` points on `threads` threads
/// (about four chunks per thread).
pub fn chunk_len(npts: usize, threads: usize) -> usize {
    npts.div_ceil(threads.max(1) * 4).max(1)
}

/// Number of points per block of [`Partition::Auto`]: 1/64 of the batch, at least 16 and at
/// most 64 points, so that a batch has enough blocks to keep up to 16 threads evenly loaded
/// (the blocks are shared out as threads become free) and a cold start every 16 to 64
/// points. It depends on `npts` only, so the results do not depend on the number of threads.
/// (On the `batch_layout` bench, blocks of 64 were as fast as blocks of 256 and faster than
/// blocks of 16 or four chunks per thread.)
pub fn block_len(npts: usize) -> usize {
    (npts / 64).clamp(16, 64)
}

/// The length of the runs of `layout` for `npts` points on `threads` threads (≥ 1).
pub fn run_len(layout: &BatchLayout, npts: usize, threads: usize) -> usize {
    match layout.partition {
        Partition::Auto => block_len(npts),
        Partition::Blocks(n) => n.max(1),
        Partition::Chunks => chunk_len(npts, threads),
    }
}

/// Whether point b (temperature K, pressure Pa, feed amounts mol) is near enough to point a
/// for a warm start from a's solution: relative changes of T and p within
/// [`NEAR_TEMPERATURE`] and [`NEAR_PRESSURE`], and every mole fraction within
/// [`NEAR_COMPOSITION`]. Non-finite or non-positive values are never near.
pub fn near(ta: f64, pa: f64, za: &[f64], tb: f64, pb: f64, zb: &[f64]) -> bool {
    let rel = |a: f64, b: f64, tol: f64| a > 0.0 && b > 0.0 && (b - a).abs() <= tol * a.min(b);
    if !(rel(ta, tb, NEAR_TEMPERATURE) && rel(pa, pb, NEAR_PRESSURE)) {
        return false;
    }
    if std::ptr::eq(za, zb) {
        return true;
    }
    let (sa, sb) = (za.iter().sum::<f64>(), zb.iter().sum::<f64>());
    if !(sa > 0.0 && sb > 0.0) || za.len() != zb.len() {
        return false;
    }
    za.iter()
        .zip(zb)
        .all(|(a, b)| (a / sa - b / sb).abs() <= NEAR_COMPOSITION)
}

/// Flashes the points `range` of a batch in order with one context, as every driver of a
/// batch does: `ctx` is reset at the start of the run and before each point the warm-start
/// rule `warm` does not allow, and `sink(i, outcome)` receives each point's outcome.
/// `feed(i)` gives point i's feed amounts (mol).
#[allow(clippy::too_many_arguments)]
pub fn flash_run<'f, M: FluidModel + ?Sized>(
    ctx: &mut FlashContext,
    model: &M,
    t: &[f64],
    p: &[f64],
    feed: impl Fn(usize) -> &'f [f64],
    range: Range<usize>,
    opts: &FlashOptions,
    warm: WarmStart,
    mut sink: impl FnMut(usize, Result<&FlashResult>),
) {
    ctx.reset();
    let start = range.start;
    for i in range {
        if i > start {
            let keep = match warm {
                WarmStart::Always => true,
                WarmStart::Never => false,
                WarmStart::Near => near(t[i - 1], p[i - 1], feed(i - 1), t[i], p[i], feed(i)),
            };
            if !keep {
                ctx.reset();
            }
        }
        sink(i, ctx.flash(model, t[i], p[i], feed(i), opts));
    }
}

/// Flashes `t.len()` points. `t` (K) and `p` (Pa) have one value per point; `feeds` holds
/// either one feed of `nc` amounts (mol) shared by every point or one row of `nc` per point
/// (row-major). `threads` = 0 uses rayon's global pool, otherwise a pool of that many threads
/// (at most [`MAX_THREADS`], never clamped: more is [`Error::InvalidInput`]); at most
/// [`MAX_POINTS`] points. The default [`BatchLayout`]: blocks of [`block_len`] points, warm
/// starts between neighbours only.
/// Each point's outcome is returned separately: one bad point does not spoil the batch.
pub fn flash_batch<M: FluidModel + ?Sized>(
    model: &M,
    t: &[f64],
    p: &[f64],
    feeds: &[f64],
    opts: &FlashOptions,
    threads: usize,
) -> Result<Vec<Result<FlashResult>>> {
    flash_batch_with(model, t, p, feeds, opts, threads, &BatchLayout::default())
}

/// [`flash_batch`] with a chosen [`BatchLayout`] (for sweeps whose order is known, and for
/// comparing layouts); arguments and units as there.
pub fn flash_batch_with<M: FluidModel + ?Sized>(
    model: &M,
    t: &[f64],
    p: &[f64],
    feeds: &[f64],
    opts: &FlashOptions,
    threads: usize,
    layout: &BatchLayout,
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
    if let Partition::Blocks(0) = layout.partition {
        return Err(Error::invalid(
            "partition",
            "blocks of 0 points; at least 1 is required",
        ));
    }
    let feed = |i: usize| if per_point { &feeds[i * nc..(i + 1) * nc] } else { feeds };
    let nthreads = if threads == 0 {
        rayon::current_num_threads()
    } else {
        threads
    };
    let run = run_len(layout, npts, nthreads);
    let go = || {
        (0..npts.div_ceil(run))
            .into_par_iter()
            .flat_map_iter(|b| {
                let mut ctx = FlashContext::new(nc);
                let range = b * run..((b + 1) * run).min(npts);
                let mut out = Vec::with_capacity(range.len());
                flash_run(&mut ctx, model, t, p, feed, range, opts, layout.warm_start, |_, r| {
                    out.push(r.cloned())
                });
                out
            })
            .collect::<Vec<_>>()
    };
    if threads == 0 {
        Ok(go())
    } else {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| Error::invalid("threads", format!("could not start {threads} threads: {e}")))?;
        Ok(pool.install(go))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{CubicEos, CubicKind, Model};
    use crate::substance::DataBank;

    fn model() -> Model {
        let comps = DataBank::embedded()
            .get_many(&["methane", "ethane", "n-butane"])
            .unwrap();
        CubicEos::new(CubicKind::PengRobinson, comps).unwrap().into()
    }

    #[test]
    fn neighbour_test() {
        let z = [0.6, 0.25, 0.15];
        assert!(near(250.0, 3e6, &z, 255.0, 3.2e6, &z));
        assert!(!near(250.0, 3e6, &z, 300.0, 3e6, &z));
        assert!(!near(250.0, 3e6, &z, 250.0, 4e6, &z));
        assert!(!near(250.0, 3e6, &z, f64::NAN, 3e6, &z));
        // Amounts, not fractions: a doubled feed is the same composition.
        assert!(near(250.0, 3e6, &z, 250.0, 3e6, &[1.2, 0.5, 0.3]));
        assert!(!near(250.0, 3e6, &z, 250.0, 3e6, &[0.3, 0.25, 0.45]));
    }

    /// Every layout gives the same phases at every point of a sweep through the two-phase
    /// region (up to the solver tolerance), and the default layout does not depend on the
    /// thread count.
    #[test]
    fn layouts_agree() {
        let m = model();
        let z = [0.6, 0.25, 0.15];
        let n = 300;
        let t: Vec<f64> = (0..n)
            .map(|k| 200.0 + 100.0 * ((k * 37) % n) as f64 / n as f64)
            .collect();
        let p: Vec<f64> = (0..n).map(|k| 1e6 + 4e6 * (k % 7) as f64 / 7.0).collect();
        let o = FlashOptions::default();
        let base = flash_batch(&m, &t, &p, &z, &o, 1).unwrap();
        assert_eq!(base, flash_batch(&m, &t, &p, &z, &o, 2).unwrap());
        for partition in [Partition::Blocks(1), Partition::Blocks(16), Partition::Chunks] {
            for warm_start in [WarmStart::Near, WarmStart::Always, WarmStart::Never] {
                let layout = BatchLayout { partition, warm_start };
                let r = flash_batch_with(&m, &t, &p, &z, &o, 2, &layout).unwrap();
                for (a, b) in base.iter().zip(&r) {
                    let (a, b) = (a.as_ref().unwrap(), b.as_ref().unwrap());
                    assert_eq!(a.phases.len(), b.phases.len());
                    for (x, y) in a.phases.iter().zip(&b.phases) {
                        assert!((x.fraction - y.fraction).abs() < 1e-7, "{layout:?}");
                    }
                }
            }
        }
        let bad = BatchLayout {
            partition: Partition::Blocks(0),
            ..BatchLayout::default()
        };
        assert!(flash_batch_with(&m, &t, &p, &z, &o, 1, &bad).is_err());
    }
}
