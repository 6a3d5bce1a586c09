//! Runs of named-calculation points: the counterpart for [`Plan`]s of the PT flash batch's
//! [`flash_run`](crate::equilibrium::batch::flash_run).
//!
//! A sweep of a calculation is cut into runs of consecutive points as a flash batch is (its
//! [`BatchLayout`](crate::equilibrium::batch::BatchLayout): by default blocks of
//! [`block_len`](crate::equilibrium::batch::block_len) points); each run is computed in order
//! by one [`Workspace`], and under [`WarmStart::Near`] a point starts from the previous
//! point's solution only when the two are neighbours ([`near_point`]): every scalar argument
//! and the feed's mole fractions change little. Every driver of a sweep (the Python package's
//! vectorised `calculate`, Rust callers) runs its runs through [`run_points`], so they give
//! identical results for the same layout.

use super::{Argument, Plan, Record, Workspace};
use crate::equilibrium::batch::{NEAR_PRESSURE, NEAR_TEMPERATURE, WarmStart, near_feed};
use crate::error::{Error, Result};
use crate::model::Model;
use std::ops::Range;

/// Largest relative change between neighbours of a scalar argument that is neither a
/// temperature (K) nor a pressure (Pa) — an enthalpy (J/mol or J), entropy (J/(mol K) or J/K),
/// volume (m3/mol or m3), internal energy — that keeps a warm start: |b − a| ≤ 0.05·min(|a|,
/// |b|). Common practice, no source: the same 5 % as [`NEAR_TEMPERATURE`]. Values that change
/// sign, or one of them zero and the other not, are never near.
pub const NEAR_ARGUMENT: f64 = 0.05;

/// The relative tolerance of [`near_point`] for an argument: [`NEAR_TEMPERATURE`] for a
/// temperature (unit "K"), [`NEAR_PRESSURE`] for a pressure (unit "Pa"), [`NEAR_ARGUMENT`]
/// for any other.
pub fn near_tolerance(argument: &Argument) -> f64 {
    match argument.unit {
        "K" => NEAR_TEMPERATURE,
        "Pa" => NEAR_PRESSURE,
        _ => NEAR_ARGUMENT,
    }
}

/// Whether one argument's value `b` is near its previous value `a` (units of the argument).
/// A temperature or pressure must be positive at both points and change by at most its
/// tolerance relative to the smaller value (as in
/// [`batch::near`](crate::equilibrium::batch::near)); any other argument must be finite and
/// change by at most [`NEAR_ARGUMENT`] relative to the smaller magnitude.
fn near_value(argument: &Argument, a: f64, b: f64) -> bool {
    let tol = near_tolerance(argument);
    match argument.unit {
        "K" | "Pa" => a > 0.0 && b > 0.0 && (b - a).abs() <= tol * a.min(b),
        _ => a.is_finite() && b.is_finite() && (b - a).abs() <= tol * a.abs().min(b.abs()),
    }
}

/// Whether point b (scalar arguments `b` in the order and units of `arguments`, feed amounts
/// `zb` in mol) is near enough to point a for a warm start from a's solution: every argument
/// within its [`near_tolerance`] and every mole fraction of the feed within
/// [`NEAR_COMPOSITION`](crate::equilibrium::batch::NEAR_COMPOSITION). For the temperature and
/// pressure of a PT flash this is exactly [`batch::near`](crate::equilibrium::batch::near).
/// Non-finite values, non-positive temperatures and pressures, argument lists of another
/// length and feeds of another length or a non-positive total are never near.
pub fn near_point(arguments: &[Argument], a: &[f64], za: &[f64], b: &[f64], zb: &[f64]) -> bool {
    a.len() == arguments.len()
        && b.len() == arguments.len()
        && arguments
            .iter()
            .zip(a.iter().zip(b))
            .all(|(arg, (&x, &y))| near_value(arg, x, y))
        && near_feed(za, zb)
}

/// Runs the points `range` of a sweep of `plan` in order with one workspace, as every driver
/// of a calculation sweep does: `ws` is reset at the start of the run and before each point
/// that the warm-start rule `warm` does not allow ([`WarmStart::Near`]: [`near_point`] with
/// the previous point), and `sink(i, outcome)` receives each point's outcome of
/// [`Plan::run`].
///
/// `args` holds one column per scalar argument of the calculation, in its order and units
/// ([`Calculation::arguments`](super::Calculation::arguments)), each with at least
/// `range.end` values; `feed(i)` gives point i's feed amounts (mol). A wrong number of
/// columns or a column too short is an [`Error::InvalidInput`] before any point runs. The run
/// allocates two argument rows; each point allocates only what [`Plan::run`] does.
///
/// ```
/// use tieline::calc::{Plan, Value, Workspace, run_points};
/// use tieline::equilibrium::batch::WarmStart;
/// use tieline::model::{CubicEos, CubicKind, Model};
/// use tieline::substance::DataBank;
///
/// let bank = DataBank::embedded();
/// let model = Model::from(CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"])?)?);
/// let plan = Plan::new("flash_pt", None)?;
/// let t = [230.0, 235.0, 240.0, 400.0]; // K; the last point is far from the others
/// let p = [2.0e6; 4]; // Pa
/// let mut warm = Vec::new();
/// run_points(&plan, &mut Workspace::default(), &model, &[&t, &p], |_| &[0.6, 0.4], 0..4, WarmStart::Near, |_, r| {
///     let r = r.expect("the flash converges");
///     warm.push(matches!(r.field("warm_start").map(|f| &f.value), Some(Value::Flag(true))))
/// })?;
/// assert_eq!(warm, [false, true, true, false]);
/// # Ok::<(), tieline::Error>(())
/// ```
#[allow(clippy::too_many_arguments)]
pub fn run_points<'f>(
    plan: &Plan,
    ws: &mut Workspace,
    model: &Model,
    args: &[&[f64]],
    feed: impl Fn(usize) -> &'f [f64],
    range: Range<usize>,
    warm: WarmStart,
    mut sink: impl FnMut(usize, Result<Record>),
) -> Result<()> {
    let spec = plan.calculation().arguments;
    if args.len() != spec.len() {
        return Err(Error::invalid(
            "arguments",
            format!(
                "{} columns given; {} takes {}",
                args.len(),
                plan.calculation().name,
                spec.len()
            ),
        ));
    }
    if let Some((c, s)) = args.iter().zip(spec).find(|(c, _)| c.len() < range.end) {
        return Err(Error::invalid(
            s.name,
            format!("{} values; points up to {} are to run", c.len(), range.end),
        ));
    }
    ws.reset();
    let start = range.start;
    let mut prev = vec![0.0; spec.len()];
    let mut cur = vec![0.0; spec.len()];
    for i in range {
        for (x, c) in cur.iter_mut().zip(args) {
            *x = c[i];
        }
        if i > start {
            let keep = match warm {
                WarmStart::Always => true,
                WarmStart::Never => false,
                WarmStart::Near => near_point(spec, &prev, feed(i - 1), &cur, feed(i)),
            };
            if !keep {
                ws.reset();
            }
        }
        sink(i, plan.run(ws, model, &cur, feed(i)));
        std::mem::swap(&mut prev, &mut cur);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::equilibrium::batch::{BatchLayout, block_len, near, run_len};
    use crate::model::{CubicEos, CubicKind};
    use crate::substance::DataBank;

    fn model() -> Model {
        let comps = DataBank::embedded()
            .get_many(&["methane", "ethane", "n-butane"])
            .unwrap();
        CubicEos::new(CubicKind::PengRobinson, comps).unwrap().into()
    }

    fn flag(r: &Result<Record>) -> bool {
        match r.as_ref().unwrap().get("warm_start").unwrap().value {
            super::super::Value::Flag(w) => w,
            ref v => panic!("warm_start holds {v:?}"),
        }
    }

    /// A T sweep through the two-phase region at two pressures, with far jumps (T 200 → 290
    /// K, p 2 → 4 MPa, and a feed of another composition) part-way.
    fn sweep() -> (Vec<f64>, Vec<f64>, Vec<[f64; 3]>) {
        let n = 120;
        let t: Vec<f64> = (0..n).map(|k| 200.0 + 1.5 * (k % 60) as f64).collect();
        let p: Vec<f64> = (0..n).map(|k| if k < 60 { 2.0e6 } else { 4.0e6 }).collect();
        let z: Vec<[f64; 3]> = (0..n)
            .map(|k| {
                if (90..100).contains(&k) {
                    [0.3, 0.3, 0.4]
                } else {
                    [0.6, 0.25, 0.15]
                }
            })
            .collect();
        (t, p, z)
    }

    #[test]
    fn the_neighbour_test_generalises_the_flash_batchs() {
        let spec = Plan::new("flash_pt", None).unwrap().calculation().arguments;
        let z = [0.6, 0.25, 0.15];
        let pts = [
            (250.0, 3e6),
            (255.0, 3.2e6),
            (300.0, 3e6),
            (250.0, 4e6),
            (f64::NAN, 3e6),
            (-250.0, 3e6),
            (262.5, 3.3e6),
        ];
        for &(ta, pa) in &pts {
            for &(tb, pb) in &pts {
                for zb in [&z[..], &[1.2, 0.5, 0.3], &[0.3, 0.25, 0.45]] {
                    assert_eq!(
                        near_point(spec, &[ta, pa], &z, &[tb, pb], zb),
                        near(ta, pa, &z, tb, pb, zb),
                        "{ta} {pa} {tb} {pb} {zb:?}"
                    );
                }
            }
        }
        // Other arguments: 5 % of the smaller magnitude, no change of sign.
        let ph = Plan::new("flash_ph", None).unwrap().calculation().arguments;
        assert_eq!(near_tolerance(&ph[0]), NEAR_PRESSURE);
        assert_eq!(near_tolerance(&ph[1]), NEAR_ARGUMENT);
        assert!(near_point(ph, &[1e6, -2.0e4], &z, &[1e6, -2.09e4], &z));
        assert!(!near_point(ph, &[1e6, -2.0e4], &z, &[1e6, -2.2e4], &z));
        assert!(!near_point(ph, &[1e6, 100.0], &z, &[1e6, -100.0], &z));
        assert!(!near_point(ph, &[1e6, 0.0], &z, &[1e6, 1e-9], &z));
        assert!(near_point(ph, &[1e6, 0.0], &z, &[1e6, 0.0], &z));
        assert!(!near_point(ph, &[1e6, f64::INFINITY], &z, &[1e6, f64::INFINITY], &z));
        assert!(!near_point(ph, &[1e6], &z, &[1e6], &z));
        // Without scalar arguments only the feed counts.
        assert!(near_point(&[], &[], &z, &[], &[1.2, 0.5, 0.3]));
        assert!(!near_point(&[], &[], &z, &[], &[0.3, 0.25, 0.45]));
    }

    /// The driver's results equal point-by-point runs of the plan with one workspace reset
    /// where the rule says (bit for bit), under each warm-start rule; a far jump resets (the
    /// record's `warm_start` flag is off there), neighbours do not.
    #[test]
    fn a_run_equals_point_by_point_runs_with_the_same_resets() {
        let m = model();
        let plan = Plan::new("flash_pt", None).unwrap();
        let (t, p, z) = sweep();
        let spec = plan.calculation().arguments;
        let mut near_warm = 0;
        for warm in [WarmStart::Near, WarmStart::Always, WarmStart::Never] {
            let range = 3..t.len();
            let mut got = Vec::new();
            run_points(
                &plan,
                &mut Workspace::default(),
                &m,
                &[&t, &p],
                |i| &z[i],
                range.clone(),
                warm,
                |i, r| got.push((i, r)),
            )
            .unwrap();
            assert_eq!(got.len(), range.len());
            let mut ws = Workspace::default();
            for (i, r) in &got {
                let i = *i;
                let keep = i > range.start
                    && match warm {
                        WarmStart::Always => true,
                        WarmStart::Never => false,
                        WarmStart::Near => near_point(spec, &[t[i - 1], p[i - 1]], &z[i - 1], &[t[i], p[i]], &z[i]),
                    };
                if !keep {
                    ws.reset();
                }
                let want = plan.run(&mut ws, &m, &[t[i], p[i]], &z[i]);
                assert_eq!(r, &want, "{warm:?}, point {i}");
                if warm == WarmStart::Never {
                    // A reset workspace is a cold one.
                    let cold = plan.run(&mut Workspace::default(), &m, &[t[i], p[i]], &z[i]);
                    assert_eq!(r, &cold, "point {i}");
                }
            }
            let flags: Vec<bool> = got.iter().map(|(_, r)| flag(r)).collect();
            match warm {
                WarmStart::Never => assert!(flags.iter().all(|w| !w)),
                WarmStart::Near => {
                    // The first point and the far jumps start cold: T back from 288.5 to 200 K
                    // at the change of pressure (point 60), the feed's change (90 and 100).
                    for i in [3, 60, 90, 100] {
                        assert!(!flags[i - range.start], "point {i}");
                    }
                    let warm_points = flags.iter().filter(|w| **w).count();
                    assert!(warm_points > range.len() / 2, "{warm_points} warm points");
                    near_warm = warm_points;
                }
                WarmStart::Always => assert!(flags.iter().filter(|w| **w).count() >= near_warm),
            }
        }
    }

    /// A sweep cut into the runs of the default layout gives the same records whatever the
    /// order in which the runs are computed, and a state flash (PH) along a sweep of
    /// enthalpies warm-starts between neighbours.
    #[test]
    fn runs_of_the_default_layout_and_a_state_flash() {
        let m = model();
        let (t, p, z) = sweep();
        let plan = Plan::new("flash_pt", None).unwrap();
        let n = t.len();
        let run = run_len(&BatchLayout::default(), n, 2);
        assert_eq!(run, block_len(n));
        let mut ws = Workspace::default();
        let mut sweep = |reverse: bool| {
            let mut out = vec![None; n];
            let blocks: Vec<usize> = if reverse {
                (0..n.div_ceil(run)).rev().collect()
            } else {
                (0..n.div_ceil(run)).collect()
            };
            for b in blocks {
                let r = b * run..((b + 1) * run).min(n);
                run_points(
                    &plan,
                    &mut ws,
                    &m,
                    &[&t, &p],
                    |i| &z[i],
                    r,
                    WarmStart::Near,
                    |i, x| out[i] = Some(x),
                )
                .unwrap();
            }
            out
        };
        let (forward, backward) = (sweep(false), sweep(true));
        assert_eq!(forward, backward);

        let ph = Plan::new("flash_ph", None).unwrap();
        // Enthalpies from that of the feed at 230 K (two-phase) upwards, 150 J/mol apart.
        let h0 = plan
            .run(&mut Workspace::default(), &m, &[230.0, 2.0e6], &z[0])
            .unwrap()
            .get_number("enthalpy")
            .unwrap();
        // h0 is negative (elements at 298.15 K as reference): point 15 is 10 % less negative
        // than point 14, a far jump for the enthalpy (NEAR_ARGUMENT); the others are 150 J/mol
        // apart.
        let mut h: Vec<f64> = (0..20).map(|k| h0 + 150.0 * k as f64).collect();
        h[15] = 0.9 * h[14];
        let pp = vec![2.0e6; h.len()];
        let mut got = Vec::new();
        run_points(
            &ph,
            &mut ws,
            &m,
            &[&pp, &h],
            |_| &z[0],
            0..h.len(),
            WarmStart::Near,
            |_, r| got.push(r.unwrap()),
        )
        .unwrap();
        let spec = ph.calculation().arguments;
        let mut own = Workspace::default();
        let mut warm_differs = 0;
        for (i, r) in got.iter().enumerate() {
            let near = i > 0 && near_point(spec, &[pp[i - 1], h[i - 1]], &z[0], &[pp[i], h[i]], &z[0]);
            assert_eq!(near, i != 0 && i != 15 && i != 16, "point {i}");
            if !near {
                own.reset();
            }
            assert_eq!(r, &ph.run(&mut own, &m, &[pp[i], h[i]], &z[0]).unwrap(), "point {i}");
            let cold = ph.run(&mut Workspace::default(), &m, &[pp[i], h[i]], &z[0]).unwrap();
            if !near {
                assert_eq!(r, &cold, "point {i} starts cold");
            } else if r != &cold {
                warm_differs += 1;
            }
        }
        // The warm starts change the path of the solver (results equal to the tolerance).
        assert!(warm_differs > 0);
    }

    #[test]
    fn wrong_columns_are_invalid_input() {
        let m = model();
        let plan = Plan::new("flash_pt", None).unwrap();
        let t = [250.0, 260.0];
        let z = [0.6, 0.25, 0.15];
        let mut calls = 0;
        let e = run_points(
            &plan,
            &mut Workspace::default(),
            &m,
            &[&t],
            |_| &z,
            0..2,
            WarmStart::Near,
            |_, _| calls += 1,
        )
        .unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::InvalidInput, "{e}");
        let e = run_points(
            &plan,
            &mut Workspace::default(),
            &m,
            &[&t, &[2e6]],
            |_| &z,
            0..2,
            WarmStart::Near,
            |_, _| calls += 1,
        )
        .unwrap_err();
        assert!(e.to_string().contains("pressure"), "{e}");
        assert_eq!(calls, 0);
    }
}

#[cfg(test)]
mod empty_feed {
    use super::*;
    use crate::model::{CubicEos, CubicKind};
    use crate::substance::DataBank;

    /// Every calculation refuses an empty feed at its input check: a driver that is being
    /// cancelled gives the rest of its run empty feeds so that the run ends at once.
    #[test]
    fn every_calculation_refuses_an_empty_feed() {
        let comps = DataBank::embedded().get_many(&["methane", "ethane"]).unwrap();
        let m: Model = CubicEos::new(CubicKind::PengRobinson, comps).unwrap().into();
        for c in super::super::CALCULATIONS {
            let plan = Plan::new(c.name, None).unwrap();
            let args: Vec<f64> = c
                .arguments
                .iter()
                .map(|a| match a.unit {
                    "K" => 250.0,
                    "Pa" => 2.0e6,
                    _ => 1.0,
                })
                .collect();
            let e = plan.run(&mut Workspace::default(), &m, &args, &[]).unwrap_err();
            assert_eq!(e.kind(), crate::ErrorKind::InvalidInput, "{}: {e}", c.name);
        }
    }
}
