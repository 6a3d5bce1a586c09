//! Real roots of cubics and safeguarded scalar root finders (bracketed Newton, Brent).

/// Real roots of x³ + a x² + b x + c = 0, ascending, each polished by Newton steps.
/// Returns the roots in the first `count` entries of the array.
///
/// The root of largest magnitude comes from Cardano's formula or the trigonometric form, is
/// polished, and the other two follow from the deflated quadratic with Vieta's sum and
/// product (stable form), the sum from the coefficient of x. Closed forms alone lose small roots next to a large one (a cubic of
/// state at very low pressure: Z ≈ 1 and two roots of order 1e-10, which they give with an
/// absolute error of 1e-16 and a wrong count when the discriminant is rounding noise); the
/// deflation keeps their relative accuracy.
///
/// Kept by hand rather than taken from the `roots` crate: `benches/benches/roots.rs` solves the
/// same cubics with both; the crate's closed forms miss 4 of its 7 cubics with known roots by
/// more than 1e-9 relative (5e-4 for roots 1e-6, 1e-8 beside 1; a wrong count for 1e-12,
/// 3e-14), which is the low-pressure case of a cubic of state, while this one stays at round-off.
/// It costs 2.5× the crate's time per call (about 260 ns against 100 ns on the loaded 2-core
/// bench machine), a small share of one fugacity evaluation.
pub fn cubic_real_roots(a: f64, b: f64, c: f64) -> ([f64; 3], usize) {
    // Depressed cubic t³ + p t + q = 0 with x = t − a/3.
    let a3 = a / 3.0;
    let p = b - a * a3;
    let q = 2.0 * a3 * a3 * a3 - a3 * b + c;
    let disc = (q / 2.0) * (q / 2.0) + (p / 3.0) * (p / 3.0) * (p / 3.0);
    let mut r = [0.0; 3];
    let count;
    if disc > 0.0 {
        // One real root (Cardano), computed without cancellation.
        let sq = disc.sqrt();
        let u = if q > 0.0 { -(q / 2.0 + sq) } else { -q / 2.0 + sq };
        let u = u.cbrt();
        let t = if u != 0.0 { u - p / (3.0 * u) } else { 0.0 };
        r[0] = t - a3;
        count = 1;
    } else if p == 0.0 {
        r[0] = -a3;
        count = 1;
    } else {
        // Three real roots (trigonometric form).
        let m = 2.0 * (-p / 3.0).sqrt();
        let arg = (3.0 * q / (p * m)).clamp(-1.0, 1.0);
        let theta = arg.acos() / 3.0;
        let two_pi_3 = 2.0 * std::f64::consts::PI / 3.0;
        for (k, rk) in r.iter_mut().enumerate() {
            *rk = m * (theta - two_pi_3 * k as f64).cos() - a3;
        }
        count = 3;
    }
    // The root of largest magnitude, polished, then the deflated quadratic.
    let big = (0..count)
        .max_by(|&i, &j| r[i].abs().total_cmp(&r[j].abs()))
        .unwrap_or(0);
    let mut x = r[big];
    polish(&mut x, a, b, c, 8);
    if x != 0.0 && x.is_finite() {
        // Product and sum of the other two roots. The sum from x·(sum) + prod = b rather
        // than from −a − x, which cancels when the other roots are below 1e-16·|x|.
        let prod = -c / x;
        let s = (b - prod) / x;
        let dq = s * s - 4.0 * prod;
        if prod.is_finite() && dq >= 0.0 {
            let t1 = 0.5 * (s + if s < 0.0 { -dq.sqrt() } else { dq.sqrt() });
            let t2 = if t1 != 0.0 { prod / t1 } else { 0.0 };
            let mut out = [x, t1, t2];
            for y in out.iter_mut().skip(1) {
                polish(y, a, b, c, 8);
            }
            out.sort_by(|u, v| u.total_cmp(v));
            return (out, 3);
        } else if count == 1 || dq < 0.0 {
            return ([x, 0.0, 0.0], 1);
        }
    }
    for x in r.iter_mut().take(count) {
        polish(x, a, b, c, 3);
    }
    r[..count].sort_by(|x, y| x.total_cmp(y));
    (r, count)
}

/// Newton steps on x³ + a x² + b x + c at `x`, at most `max`, until the step is below
/// 2ε·|x| (round-off level: a tighter test only repeats steps of rounding noise up to `max`);
/// a step that would not be finite is not taken.
fn polish(x: &mut f64, a: f64, b: f64, c: f64, max: usize) {
    for _ in 0..max {
        let f = ((*x + a) * *x + b) * *x + c;
        let df = (3.0 * *x + 2.0 * a) * *x + b;
        if df == 0.0 {
            break;
        }
        let dx = f / df;
        if !dx.is_finite() {
            break;
        }
        *x -= dx;
        if dx.abs() <= 2.0 * f64::EPSILON * x.abs() {
            break;
        }
    }
}

/// Finds a root of `f` in the bracket [lo, hi] (f(lo) and f(hi) of opposite sign) by
/// Newton steps safeguarded with bisection. `f` returns (value, derivative).
/// Returns `None` if the bracket is invalid or the tolerance is not reached in `max_iter`.
pub fn newton_bracketed<F>(
    mut f: F,
    mut lo: f64,
    mut hi: f64,
    x0: f64,
    tol: f64,
    max_iter: usize,
) -> Option<(f64, usize)>
where
    F: FnMut(f64) -> (f64, f64),
{
    let (flo, _) = f(lo);
    let (fhi, _) = f(hi);
    if !(flo.is_finite() && fhi.is_finite()) || flo * fhi > 0.0 {
        return None;
    }
    if flo == 0.0 {
        return Some((lo, 0));
    }
    if fhi == 0.0 {
        return Some((hi, 0));
    }
    // Orient so that f(lo) < 0.
    let flip = flo > 0.0;
    let mut x = if x0 > lo && x0 < hi { x0 } else { 0.5 * (lo + hi) };
    for it in 1..=max_iter {
        let (mut fx, mut dfx) = f(x);
        if flip {
            fx = -fx;
            dfx = -dfx;
        }
        if fx == 0.0 {
            return Some((x, it));
        }
        if fx < 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let mut xn = x - fx / dfx;
        if !(xn > lo && xn < hi) || !xn.is_finite() {
            xn = 0.5 * (lo + hi);
        }
        if (xn - x).abs() <= tol * (1.0 + x.abs()) || (hi - lo) <= tol * (1.0 + x.abs()) {
            return Some((xn, it));
        }
        x = xn;
    }
    None
}

/// Brent's method (R. P. Brent, "Algorithms for Minimization without Derivatives", 1973,
/// ch. 4) for a root of `f` in [a, b] with f(a) = fa, f(b) = fb of opposite signs, to
/// |Δx| ≤ tol·max(1, |x|). Returns `None` if the bracket is invalid, `f` returns NaN, or
/// `max_it` is reached.
///
/// Kept by hand rather than taken from the `roots` crate: the solvers' functions are
/// expensive solves that mutate their workspaces (`FnMut`; the crate takes `Fn`), the callers
/// already know f at both ends (the crate evaluates them again, two extra solves per call),
/// and the tolerance is relative to |x| (the crate's is absolute). `benches/benches/roots.rs`
/// measures both on the same problems.
pub fn brent(
    mut f: impl FnMut(f64) -> f64,
    mut a: f64,
    mut fa: f64,
    mut b: f64,
    mut fb: f64,
    tol: f64,
    max_it: usize,
) -> Option<f64> {
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa.signum() == fb.signum() || !fa.is_finite() || !fb.is_finite() {
        return None;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..max_it {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * tol * b.abs().max(1.0);
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            let min1 = 3.0 * xm * q - (tol1 * q).abs();
            let min2 = (e * q).abs();
            if 2.0 * p < min1.min(min2) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1 * xm.signum() };
        fb = f(b);
        if !fb.is_finite() {
            return None;
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cubic_three_roots() {
        // (x-1)(x-2)(x-3) = x³ - 6x² + 11x - 6
        let (r, n) = cubic_real_roots(-6.0, 11.0, -6.0);
        assert_eq!(n, 3);
        for (x, e) in r.iter().zip([1.0, 2.0, 3.0]) {
            assert!((x - e).abs() < 1e-13, "{x} vs {e}");
        }
    }

    #[test]
    fn cubic_one_root() {
        // (x-2)(x²+1) = x³ - 2x² + x - 2
        let (r, n) = cubic_real_roots(-2.0, 1.0, -2.0);
        assert_eq!(n, 1);
        assert!((r[0] - 2.0).abs() < 1e-14);
    }

    #[test]
    fn cubic_small_roots_beside_a_large_one() {
        // (x − 1)(x − s1)(x − s2) with s1, s2 tiny: the shape of a cubic of state at very low
        // pressure. Both small roots keep their relative accuracy and the count is 3.
        for (s1, s2) in [
            (1e-8, 1e-10),
            (7e-9, 1.5e-10),
            (1e-12, 3e-14),
            (2e-6, 1.9e-6),
            (1e-17, 1e-19),
        ] {
            let a = -(1.0 + s1 + s2);
            let b = s1 + s2 + s1 * s2;
            let c = -s1 * s2;
            let (r, n) = cubic_real_roots(a, b, c);
            assert_eq!(n, 3, "{s1} {s2}");
            assert!((r[0] - s2).abs() < 1e-9 * s2, "{} vs {s2}", r[0]);
            assert!((r[1] - s1).abs() < 1e-9 * s1, "{} vs {s1}", r[1]);
            assert!((r[2] - 1.0).abs() < 1e-14);
        }
    }

    #[test]
    fn brent_solves_a_cubic() {
        let r = brent(|x| x * x * x - 2.0, 0.0, -2.0, 2.0, 6.0, 1e-15, 100).unwrap();
        assert!((r - 2.0f64.cbrt()).abs() < 1e-14);
    }

    #[test]
    fn bracketed_newton_finds_sqrt2() {
        let (x, _) = newton_bracketed(|x| (x * x - 2.0, 2.0 * x), 0.0, 2.0, 1.0, 1e-15, 100).unwrap();
        assert!((x - 2f64.sqrt()).abs() < 1e-14);
        assert!(newton_bracketed(|x| (x * x + 1.0, 2.0 * x), 0.0, 2.0, 1.0, 1e-15, 100).is_none());
    }
}
