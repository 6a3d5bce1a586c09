//! Dense linear algebra for the small symmetric systems of the equilibrium solvers
//! (row-major n×n matrices in slices).

/// In-place Cholesky factorisation A = L Lᵀ of a symmetric matrix (lower triangle used and
/// overwritten by L). Returns `false` if A is not positive definite.
pub fn cholesky(a: &mut [f64], n: usize) -> bool {
    // Row slices instead of indices (no bounds checks in the inner products); the sums are
    // taken in the same order as the textbook loops.
    let a = &mut a[..n * n];
    for j in 0..n {
        let (rowj, below) = a[j * n..].split_at_mut(n);
        let d = rowj[..j].iter().fold(rowj[j], |d, l| d - l * l);
        if !(d > 0.0) || !d.is_finite() {
            return false;
        }
        let d = d.sqrt();
        rowj[j] = d;
        let lj = &rowj[..j];
        for row in below.chunks_exact_mut(n) {
            let s = row[..j].iter().zip(lj).fold(row[j], |s, (a, b)| s - a * b);
            row[j] = s / d;
        }
    }
    true
}

/// Solves L Lᵀ x = b in place given the factor from [`cholesky`].
pub fn cholesky_solve(l: &[f64], n: usize, b: &mut [f64]) {
    let l = &l[..n * n];
    let b = &mut b[..n];
    for i in 0..n {
        let row = &l[i * n..i * n + i];
        let s = row.iter().zip(&b[..i]).fold(b[i], |s, (a, x)| s - a * x);
        b[i] = s / l[i * n + i];
    }
    for i in (0..n).rev() {
        // Column i of L below the diagonal: l[k n + i] for k > i.
        let col = l.get((i + 1) * n + i..).unwrap_or(&[]).iter().step_by(n);
        let s = col.zip(&b[i + 1..]).fold(b[i], |s, (a, x)| s - a * x);
        b[i] = s / l[i * n + i];
    }
}

/// Solves the symmetric system (A + μ·diag-scale) x = b for the smallest shift μ ≥ 0 (from a
/// short doubling sequence) that makes it positive definite: a modified Cholesky step used as a
/// trust-region/Levenberg safeguard. `a` is left unchanged; `work` must hold n² values.
/// Returns the shift used, or `None` if no shift up to 1e10·scale succeeded.
pub fn shifted_cholesky_solve(a: &[f64], n: usize, b: &mut [f64], work: &mut [f64], mu0: f64) -> Option<f64> {
    let scale = (0..n).map(|i| a[i * n + i].abs()).fold(0.0f64, f64::max).max(1e-300);
    let mut mu = mu0;
    for _ in 0..60 {
        work[..n * n].copy_from_slice(&a[..n * n]);
        for i in 0..n {
            work[i * n + i] += mu;
        }
        if cholesky(work, n) {
            cholesky_solve(work, n, b);
            return Some(mu);
        }
        mu = if mu == 0.0 { 1e-8 * scale } else { mu * 4.0 };
        if mu > 1e10 * scale {
            return None;
        }
    }
    None
}

/// Solves A x = b in place by Gaussian elimination with partial pivoting; `a` is destroyed.
/// Returns `false` if A is numerically singular.
pub fn lu_solve(a: &mut [f64], n: usize, b: &mut [f64]) -> bool {
    for k in 0..n {
        let mut p = k;
        let mut best = a[k * n + k].abs();
        for i in k + 1..n {
            let v = a[i * n + k].abs();
            if v > best {
                best = v;
                p = i;
            }
        }
        if !(best > 0.0) || !best.is_finite() {
            return false;
        }
        if p != k {
            for j in 0..n {
                a.swap(k * n + j, p * n + j);
            }
            b.swap(k, p);
        }
        let piv = a[k * n + k];
        for i in k + 1..n {
            let f = a[i * n + k] / piv;
            if f != 0.0 {
                for j in k..n {
                    a[i * n + j] -= f * a[k * n + j];
                }
                b[i] -= f * b[k];
            }
        }
    }
    for i in (0..n).rev() {
        let mut s = b[i];
        for j in i + 1..n {
            s -= a[i * n + j] * b[j];
        }
        b[i] = s / a[i * n + i];
    }
    b.iter().all(|x| x.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cholesky_solves_spd() {
        let a = [4.0, 2.0, 0.6, 2.0, 5.0, 1.0, 0.6, 1.0, 3.0];
        let mut l = a;
        assert!(cholesky(&mut l, 3));
        let x = [1.0, -2.0, 0.5];
        let mut b = [0.0; 3];
        for i in 0..3 {
            for j in 0..3 {
                b[i] += a[i * 3 + j] * x[j];
            }
        }
        cholesky_solve(&l, 3, &mut b);
        for i in 0..3 {
            assert!((b[i] - x[i]).abs() < 1e-14);
        }
        let mut not_pd = [1.0, 2.0, 2.0, 1.0];
        assert!(!cholesky(&mut not_pd, 2));
    }

    #[test]
    fn shifted_solve_handles_indefinite() {
        let a = [1.0, 2.0, 2.0, 1.0];
        let mut b = [1.0, 1.0];
        let mut w = [0.0; 4];
        let mu = shifted_cholesky_solve(&a, 2, &mut b, &mut w, 0.0).unwrap();
        assert!(mu > 1.0);
    }

    #[test]
    fn lu_solves_general() {
        let mut a = [0.0, 1.0, 2.0, 1.0];
        let mut b = [3.0, 4.0];
        assert!(lu_solve(&mut a, 2, &mut b));
        assert!((b[0] - 0.5).abs() < 1e-15 && (b[1] - 3.0).abs() < 1e-15);
    }
}
