//! The hand-written scalar root finders of `tieline::numerics::roots` against the `roots`
//! crate (0.0.8) on the same problems, in one run: accuracy of the real roots of cubics of
//! the shape a cubic equation of state produces (including two tiny roots beside Z ≈ 1, the
//! low-pressure case), time per cubic, and function evaluations and accuracy of Brent's
//! method. The figures decide which implementation the solvers use (see the doc comments of
//! `cubic_real_roots` and `brent`).

use std::cell::Cell;
use std::hint::black_box;
use tieline::numerics::roots::{brent, cubic_real_roots};
use tieline_benches::median_ns;

/// Coefficients (a, b, c) of x³ + a x² + b x + c with roots 1, s1, s2.
fn with_roots(s1: f64, s2: f64) -> (f64, f64, f64) {
    (-(1.0 + s1 + s2), s1 + s2 + s1 * s2, -s1 * s2)
}

/// Peng–Robinson in Z: Z³ − (1 − B) Z² + (A − 3B² − 2B) Z − (AB − B² − B³) = 0.
fn pr_cubic(a: f64, b: f64) -> (f64, f64, f64) {
    (-(1.0 - b), a - 3.0 * b * b - 2.0 * b, -(a * b - b * b - b * b * b))
}

/// Largest relative error of the computed roots against the known ones (both ascending);
/// infinity when the counts differ.
fn worst_error(got: &[f64], want: &[f64]) -> f64 {
    if got.len() != want.len() {
        return f64::INFINITY;
    }
    got.iter()
        .zip(want)
        .map(|(g, w)| ((g - w) / w).abs())
        .fold(0.0, f64::max)
}

fn crate_cubic(a: f64, b: f64, c: f64) -> Vec<f64> {
    let r = roots::find_roots_cubic(1.0, a, b, c);
    let mut v = r.as_ref().to_vec();
    v.sort_by(|x, y| x.total_cmp(y));
    v
}

fn main() {
    println!("cubic roots: worst relative error (known roots 1, s1, s2)");
    println!("{:>10} {:>10} {:>14} {:>14}", "s1", "s2", "tieline", "roots crate");
    let cases = [
        (0.5, 0.25),
        (0.1, 0.01),
        (1e-3, 1e-4),
        (1e-6, 1e-8),
        (1e-8, 1e-10),
        (1e-12, 3e-14),
        (2e-6, 1.9e-6),
    ];
    let (mut ours_fail, mut crate_fail) = (0, 0);
    for (s1, s2) in cases {
        let (a, b, c) = with_roots(s1, s2);
        let want = [s2, s1, 1.0];
        let (r, n) = cubic_real_roots(a, b, c);
        let e_ours = worst_error(&r[..n], &want);
        let e_crate = worst_error(&crate_cubic(a, b, c), &want);
        ours_fail += usize::from(!(e_ours < 1e-9));
        crate_fail += usize::from(!(e_crate < 1e-9));
        println!("{s1:>10.1e} {s2:>10.1e} {e_ours:>14.2e} {e_crate:>14.2e}");
    }
    println!("cases with an error above 1e-9 (or a wrong count): tieline {ours_fail}, roots crate {crate_fail}");

    // Time per cubic over Peng–Robinson cubics from dense liquid to dilute gas.
    let prs: Vec<(f64, f64, f64)> = (0..64)
        .map(|k| {
            let s = k as f64 / 63.0;
            let b = 10f64.powf(-6.0 + 5.5 * s);
            pr_cubic(7.0 * b * (1.0 + 2.0 * s), b)
        })
        .collect();
    let t_ours = median_ns(
        &mut || {
            for &(a, b, c) in &prs {
                black_box(cubic_real_roots(black_box(a), b, c));
            }
        },
        200,
    ) / prs.len() as f64;
    let t_crate = median_ns(
        &mut || {
            for &(a, b, c) in &prs {
                black_box(roots::find_roots_cubic(1.0, black_box(a), b, c));
            }
        },
        200,
    ) / prs.len() as f64;
    println!(
        "cubic time per call: tieline {t_ours:.1} ns, roots crate {t_crate:.1} ns (ratio tieline/crate {:.2})",
        t_ours / t_crate
    );

    // Brent on bracketed problems; the evaluation count is what matters in the solvers, whose
    // functions are flash or saturation solves costing microseconds each.
    println!("Brent: evaluations (error) at a relative tolerance of 1e-12");
    println!("{:>22} {:>18} {:>18}", "problem", "tieline", "roots crate");
    type Problem = (&'static str, fn(f64) -> f64, f64, f64, f64);
    let problems: [Problem; 4] = [
        ("x^3 - 2 on [0, 2]", |x| x * x * x - 2.0, 0.0, 2.0, 2f64.cbrt()),
        ("e^x - 10 on [0, 5]", |x| x.exp() - 10.0, 0.0, 5.0, 10f64.ln()),
        ("ln x - 5 on [1, 1e3]", |x| x.ln() - 5.0, 1.0, 1e3, 5f64.exp()),
        ("tanh(x-3e5) on [0,1e6]", |x| (x - 3e5).tanh(), 0.0, 1e6, 3e5),
    ];
    let (mut sum_ours, mut sum_crate) = (0usize, 0usize);
    for (name, f, lo, hi, root) in problems {
        let count = Cell::new(0usize);
        let counted = |x: f64| {
            count.set(count.get() + 1);
            f(x)
        };
        let (flo, fhi) = (counted(lo), counted(hi));
        let ours = brent(counted, lo, flo, hi, fhi, 1e-12, 200);
        let n_ours = count.get();
        count.set(0);
        let mut conv = roots::SimpleConvergency {
            eps: 1e-12 * root.abs().max(1.0),
            max_iter: 200,
        };
        let theirs = roots::find_root_brent(lo, hi, counted, &mut conv);
        let n_crate = count.get();
        sum_ours += n_ours;
        sum_crate += n_crate;
        let err = |r: Option<f64>| r.map_or(f64::INFINITY, |x| ((x - root) / root).abs());
        println!(
            "{name:>22} {:>8} ({:>7.1e}) {:>8} ({:>7.1e})",
            n_ours,
            err(ours),
            n_crate,
            err(theirs.ok())
        );
    }
    println!(
        "Brent evaluations in all (tieline counts the two end values the solvers already hold): tieline {sum_ours}, roots crate {sum_crate}"
    );
}
