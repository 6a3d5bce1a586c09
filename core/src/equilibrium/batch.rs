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
use super::nphase::MAX_FLUID_PHASES;
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
    rel(ta, tb, NEAR_TEMPERATURE) && rel(pa, pb, NEAR_PRESSURE) && near_feed(za, zb)
}

/// Whether feed `zb` (amounts, mol) is near enough to feed `za` for a warm start: the same
/// length, positive totals, and every mole fraction within [`NEAR_COMPOSITION`] (the feed
/// part of [`near`]). A feed is always near itself (the same slice).
pub fn near_feed(za: &[f64], zb: &[f64]) -> bool {
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

/// The outcome of [`flash_batch_arrays`], as arrays indexed by point first. Phase slots past a
/// point's phase count, and every slot of a failed point, hold NaN (counts hold 0).
#[derive(Debug, Clone)]
pub struct BatchArrays {
    /// Number of phases of each point (0 for a failed point).
    pub num_phases: ndarray::Array1<u8>,
    /// Vapour fraction of each point (0 without vapour; NaN for a failed point).
    pub vapor_fraction: ndarray::Array1<f64>,
    /// Phase fractions, shape (points, [`MAX_FLUID_PHASES`]).
    pub phase_fractions: ndarray::Array2<f64>,
    /// Molar volumes of the phases, m3/mol, shape (points, [`MAX_FLUID_PHASES`]).
    pub molar_volumes: ndarray::Array2<f64>,
    /// Phase compositions (mole fractions), shape (points, [`MAX_FLUID_PHASES`], nc).
    pub compositions: ndarray::Array3<f64>,
    /// The error of each failed point (`None` where the point succeeded).
    pub errors: Vec<Option<Error>>,
}

/// [`flash_batch`] on `ndarray` views: `t` (K) and `p` (Pa) with one value per point, `feeds`
/// with one row of `nc` amounts (mol) shared by every point or one row per point. Views in
/// standard (row-major, contiguous) layout are read in place; any other layout is copied once.
/// The results come back as arrays ([`BatchArrays`]); one bad point does not spoil the batch.
///
/// ```
/// use ndarray::{Array1, Array2};
/// use tieline::equilibrium::{FlashOptions, flash_batch_arrays};
/// use tieline::model::{CubicEos, CubicKind};
/// use tieline::substance::DataBank;
///
/// let bank = DataBank::embedded();
/// let model = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"])?)?;
/// let t = Array1::linspace(230.0, 260.0, 4);
/// let p = Array1::from_elem(4, 2.0e6);
/// let feed = Array2::from_shape_vec((1, 2), vec![0.6, 0.4]).unwrap();
/// let out = flash_batch_arrays(&model, t.view(), p.view(), feed.view(), &FlashOptions::default(), 1)?;
/// assert_eq!(out.compositions.dim(), (4, 4, 2));
/// assert!(out.errors.iter().all(Option::is_none));
/// # Ok::<(), tieline::Error>(())
/// ```
pub fn flash_batch_arrays<M: FluidModel + ?Sized>(
    model: &M,
    t: ndarray::ArrayView1<'_, f64>,
    p: ndarray::ArrayView1<'_, f64>,
    feeds: ndarray::ArrayView2<'_, f64>,
    opts: &FlashOptions,
    threads: usize,
) -> Result<BatchArrays> {
    let nc = model.num_components();
    if feeds.ncols() != nc {
        return Err(Error::invalid(
            "feeds",
            format!("rows of {} amounts; the model has {nc} components", feeds.ncols()),
        ));
    }
    let (t_own, p_own, f_own);
    let ts = match t.as_slice() {
        Some(s) => s,
        None => {
            t_own = t.to_vec();
            &t_own[..]
        }
    };
    let ps = match p.as_slice() {
        Some(s) => s,
        None => {
            p_own = p.to_vec();
            &p_own[..]
        }
    };
    let fs = match feeds.as_slice() {
        Some(s) => s,
        None => {
            f_own = feeds.iter().copied().collect::<Vec<f64>>();
            &f_own[..]
        }
    };
    let results = flash_batch(model, ts, ps, fs, opts, threads)?;
    let n = results.len();
    let mut out = BatchArrays {
        num_phases: ndarray::Array1::zeros(n),
        vapor_fraction: ndarray::Array1::from_elem(n, f64::NAN),
        phase_fractions: ndarray::Array2::from_elem((n, MAX_FLUID_PHASES), f64::NAN),
        molar_volumes: ndarray::Array2::from_elem((n, MAX_FLUID_PHASES), f64::NAN),
        compositions: ndarray::Array3::from_elem((n, MAX_FLUID_PHASES, nc), f64::NAN),
        errors: Vec::with_capacity(n),
    };
    for (i, r) in results.into_iter().enumerate() {
        match r {
            Ok(r) => {
                out.num_phases[i] = r.phases.len() as u8;
                out.vapor_fraction[i] = r.vapor_fraction();
                for (k, ph) in r.phases.iter().enumerate().take(MAX_FLUID_PHASES) {
                    out.phase_fractions[[i, k]] = ph.fraction;
                    out.molar_volumes[[i, k]] = ph.molar_volume;
                    for (j, x) in ph.composition.iter().enumerate() {
                        out.compositions[[i, k, j]] = *x;
                    }
                }
                out.errors.push(None);
            }
            Err(e) => out.errors.push(Some(e)),
        }
    }
    Ok(out)
}

#[cfg(test)]
mod array_tests {
    use super::*;
    use crate::model::{CubicEos, CubicKind};
    use crate::substance::DataBank;
    use ndarray::{Array1, Array2, s};

    #[test]
    fn arrays_in_any_layout_give_the_slice_results() {
        let bank = DataBank::embedded();
        let m = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"]).unwrap()).unwrap();
        // A strided (non-contiguous) view of temperatures and a transposed feed matrix.
        let wide = Array1::linspace(200.0, 300.0, 12);
        let t = wide.slice(s![..;2]);
        let p = Array1::from_elem(6, 2.0e6);
        let cols =
            Array2::from_shape_vec((2, 6), vec![0.6, 0.5, 0.4, 0.3, 0.2, 0.1, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9]).unwrap();
        let feeds = cols.t();
        assert!(t.as_slice().is_none() && feeds.as_slice().is_none());
        let opts = FlashOptions::default();
        let out = flash_batch_arrays(&m, t, p.view(), feeds, &opts, 1).unwrap();
        let flat: Vec<f64> = feeds.iter().copied().collect();
        let reference = flash_batch(&m, &t.to_vec(), p.as_slice().unwrap(), &flat, &opts, 1).unwrap();
        assert_eq!(out.errors.len(), 6);
        for (i, r) in reference.iter().enumerate() {
            let r = r.as_ref().unwrap();
            assert_eq!(out.num_phases[i] as usize, r.phases.len());
            assert_eq!(out.vapor_fraction[i].to_bits(), r.vapor_fraction().to_bits());
            for (k, ph) in r.phases.iter().enumerate() {
                assert_eq!(out.phase_fractions[[i, k]].to_bits(), ph.fraction.to_bits());
                for (j, x) in ph.composition.iter().enumerate() {
                    assert_eq!(out.compositions[[i, k, j]].to_bits(), x.to_bits());
                }
            }
            for k in r.phases.len()..MAX_FLUID_PHASES {
                assert!(out.phase_fractions[[i, k]].is_nan());
            }
        }
        // A feed of the wrong width is refused.
        let bad = Array2::from_elem((1, 3), 1.0);
        assert!(flash_batch_arrays(&m, t, p.view(), bad.view(), &opts, 1).is_err());
        // A bad point is reported in its slot; the others still run.
        let tb = Array1::from(vec![250.0, -5.0, 250.0]);
        let pb = Array1::from_elem(3, 2.0e6);
        let fb = Array2::from_shape_vec((1, 2), vec![0.5, 0.5]).unwrap();
        let out = flash_batch_arrays(&m, tb.view(), pb.view(), fb.view(), &opts, 1).unwrap();
        assert!(out.errors[0].is_none() && out.errors[1].is_some() && out.errors[2].is_none());
        assert_eq!(out.num_phases[1], 0);
    }
}
