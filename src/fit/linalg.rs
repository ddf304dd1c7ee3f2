//! Small dense numerics for the fits: a weighted straight line with its
//! covariance, least squares by Householder QR, non-negative least squares
//! (Lawson–Hanson), and quantiles of Student's t and the normal distribution.
//!
//! In: slices of finite floats. Out: estimates, or `None` when the problem
//! is degenerate (too few distinct points, collinear columns). Nothing here
//! panics on user data: every index is bounds-checked by construction or by
//! `get`.

// Dense triangular algebra reads best with explicit indices.
#![allow(clippy::needless_range_loop)]

/// A weighted straight-line fit `y = intercept + slope·x`.
#[derive(Debug, Clone, PartialEq)]
pub struct LineFit {
    pub slope: f64,
    pub intercept: f64,
    /// Standard errors and their covariance; `None` when they cannot be
    /// estimated (two points and no stated uncertainties).
    pub slope_se: Option<f64>,
    pub intercept_se: Option<f64>,
    pub covariance: Option<f64>,
    /// Weighted sum of squared residuals (χ² when weights are 1/s²).
    pub wrss: f64,
    /// Unweighted root-mean-square residual in y.
    pub rms: f64,
    pub points: usize,
    pub dof: usize,
    /// χ²/dof when the weights are absolute (from stated uncertainties).
    pub chi2_reduced: Option<f64>,
    /// Degrees of freedom behind the standard errors: `None` when they come
    /// from stated uncertainties alone (a normal quantile applies), `Some`
    /// when they were estimated or inflated from the scatter (Student's t).
    pub se_dof: Option<usize>,
}

/// Fits a line through `(x, y)` with weights `w` (all 1 when `None`).
///
/// With `absolute` weights (1/s² from stated uncertainties) the covariance is
/// taken from the weights and inflated by the Birge ratio √(χ²/dof) when the
/// scatter exceeds the stated uncertainties (never deflated); otherwise it is
/// estimated from the scatter, as ordinary least squares does.
pub fn fit_line(x: &[f64], y: &[f64], w: Option<&[f64]>, absolute: bool) -> Option<LineFit> {
    let n = x.len();
    if n < 2 || y.len() != n || w.is_some_and(|w| w.len() != n) {
        return None;
    }
    let weight = |i: usize| w.and_then(|w| w.get(i).copied()).unwrap_or(1.0);
    let sw: f64 = (0..n).map(weight).sum();
    if !(sw > 0.0) {
        return None;
    }
    let xm = x
        .iter()
        .enumerate()
        .map(|(i, v)| weight(i) * v)
        .sum::<f64>()
        / sw;
    let ym = y
        .iter()
        .enumerate()
        .map(|(i, v)| weight(i) * v)
        .sum::<f64>()
        / sw;
    let (mut sxx, mut sxy) = (0.0, 0.0);
    for (i, (xi, yi)) in x.iter().zip(y).enumerate() {
        let dx = xi - xm;
        sxx += weight(i) * dx * dx;
        sxy += weight(i) * dx * (yi - ym);
    }
    // Distinct x values are needed for a slope.
    let spread = x.iter().fold(0.0f64, |m, v| m.max((v - xm).abs()));
    if !(sxx > 0.0) || spread <= 1e-12 * xm.abs().max(1.0) {
        return None;
    }
    let slope = sxy / sxx;
    let intercept = ym - slope * xm;
    let (mut wrss, mut ss) = (0.0, 0.0);
    for (i, (xi, yi)) in x.iter().zip(y).enumerate() {
        let r = yi - intercept - slope * xi;
        wrss += weight(i) * r * r;
        ss += r * r;
    }
    let dof = n - 2;
    let chi2_reduced = (absolute && dof > 0).then(|| wrss / dof as f64);
    let (scale, se_dof) = if absolute {
        match chi2_reduced {
            Some(c) if c > 1.0 => (Some(c), Some(dof)),
            _ => (Some(1.0), None),
        }
    } else if dof > 0 {
        (Some(wrss / dof as f64), Some(dof))
    } else {
        (None, None)
    };
    let (slope_se, intercept_se, covariance) = match scale {
        Some(s) => (
            Some((s / sxx).sqrt()),
            Some((s * (1.0 / sw + xm * xm / sxx)).sqrt()),
            Some(-xm * s / sxx),
        ),
        None => (None, None, None),
    };
    Some(LineFit {
        slope,
        intercept,
        slope_se,
        intercept_se,
        covariance,
        wrss,
        rms: (ss / n as f64).sqrt(),
        points: n,
        dof,
        chi2_reduced,
        se_dof: if scale.is_some() { se_dof } else { None },
    })
}

/// A dense matrix stored by rows.
pub type Matrix = Vec<Vec<f64>>;

/// The upper-triangular factor R of a Householder QR of `a` (m×k, m ≥ k),
/// and Qᵀb. `None` when a column is (numerically) dependent on the others.
fn qr_solve_parts(a: &Matrix, b: &[f64], cols: &[usize]) -> Option<(Matrix, Vec<f64>)> {
    let m = a.len();
    let k = cols.len();
    if m < k || b.len() != m {
        return None;
    }
    let mut r: Matrix = a
        .iter()
        .map(|row| {
            cols.iter()
                .map(|&c| row.get(c).copied().unwrap_or(0.0))
                .collect()
        })
        .collect();
    let mut qtb = b.to_vec();
    let scale = r
        .iter()
        .flatten()
        .fold(0.0f64, |s, v| s.max(v.abs()))
        .max(f64::MIN_POSITIVE);
    for j in 0..k {
        let norm = (j..m).map(|i| r[i][j] * r[i][j]).sum::<f64>().sqrt();
        if norm <= 1e-13 * scale {
            return None;
        }
        let alpha = if r[j][j] > 0.0 { -norm } else { norm };
        let mut v: Vec<f64> = (j..m).map(|i| r[i][j]).collect();
        v[0] -= alpha;
        let vnorm2: f64 = v.iter().map(|x| x * x).sum();
        if vnorm2 > 0.0 {
            for c in j..k {
                let dot: f64 = (j..m).map(|i| v[i - j] * r[i][c]).sum();
                let f = 2.0 * dot / vnorm2;
                for i in j..m {
                    r[i][c] -= f * v[i - j];
                }
            }
            let dot: f64 = (j..m).map(|i| v[i - j] * qtb[i]).sum();
            let f = 2.0 * dot / vnorm2;
            for i in j..m {
                qtb[i] -= f * v[i - j];
            }
        }
    }
    r.truncate(k);
    for row in &mut r {
        row.truncate(k);
    }
    Some((r, qtb))
}

/// Least-squares solution of `a[:, cols]·x ≈ b`; `None` if rank-deficient.
pub fn lstsq(a: &Matrix, b: &[f64], cols: &[usize]) -> Option<Vec<f64>> {
    let (r, qtb) = qr_solve_parts(a, b, cols)?;
    let k = cols.len();
    let mut x = vec![0.0; k];
    for i in (0..k).rev() {
        let s: f64 = ((i + 1)..k).map(|j| r[i][j] * x[j]).sum();
        x[i] = (qtb[i] - s) / r[i][i];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// (AᵀA)⁻¹ restricted to `cols`: the unscaled covariance of a least-squares
/// estimate. `None` if rank-deficient.
pub fn normal_inverse(a: &Matrix, cols: &[usize]) -> Option<Matrix> {
    let zeros = vec![0.0; a.len()];
    let (r, _) = qr_solve_parts(a, &zeros, cols)?;
    let k = cols.len();
    // R⁻¹ by back substitution, then (AᵀA)⁻¹ = R⁻¹ R⁻ᵀ.
    let mut rinv = vec![vec![0.0; k]; k];
    for c in 0..k {
        for i in (0..=c).rev() {
            let rhs = if i == c { 1.0 } else { 0.0 };
            let s: f64 = ((i + 1)..=c).map(|j| r[i][j] * rinv[j][c]).sum();
            rinv[i][c] = (rhs - s) / r[i][i];
        }
    }
    let mut out = vec![vec![0.0; k]; k];
    for i in 0..k {
        for j in 0..k {
            out[i][j] = (0..k).map(|l| rinv[i][l] * rinv[j][l]).sum();
        }
    }
    out.iter().flatten().all(|v| v.is_finite()).then_some(out)
}

/// Non-negative least squares: minimises ‖A·x − b‖ subject to x ≥ 0 by the
/// active-set method of Lawson and Hanson (Solving Least Squares Problems,
/// 1974, chapter 23). Returns `None` only if an inner least-squares step is
/// rank-deficient, which well-posed problems never reach.
pub fn nnls(a: &Matrix, b: &[f64]) -> Option<Vec<f64>> {
    let m = a.len();
    let k = a.first().map_or(0, Vec::len);
    if b.len() != m || a.iter().any(|row| row.len() != k) {
        return None;
    }
    let mut x = vec![0.0; k];
    let mut passive = vec![false; k];
    let bnorm = b.iter().map(|v| v * v).sum::<f64>().sqrt();
    let anorm = a.iter().flatten().fold(0.0f64, |s, v| s.max(v.abs()));
    let tol = 1e-12 * (bnorm.max(f64::MIN_POSITIVE)) * anorm.max(1.0) * (m.max(k) as f64);
    let gradient = |x: &[f64]| -> Vec<f64> {
        let residual: Vec<f64> = a
            .iter()
            .zip(b)
            .map(|(row, bi)| bi - row.iter().zip(x).map(|(r, v)| r * v).sum::<f64>())
            .collect();
        (0..k)
            .map(|j| a.iter().zip(&residual).map(|(row, r)| row[j] * r).sum())
            .collect()
    };
    for _outer in 0..(3 * k + 3) {
        let w = gradient(&x);
        let candidate = (0..k)
            .filter(|&j| !passive[j])
            .max_by(|&i, &j| w[i].total_cmp(&w[j]));
        let Some(t) = candidate else { break };
        if w[t] <= tol {
            break;
        }
        passive[t] = true;
        for _inner in 0..(3 * k + 3) {
            let cols: Vec<usize> = (0..k).filter(|&j| passive[j]).collect();
            let s_p = lstsq(a, b, &cols)?;
            let mut s = vec![0.0; k];
            for (c, v) in cols.iter().zip(&s_p) {
                s[*c] = *v;
            }
            if cols.iter().all(|&j| s[j] > 0.0) {
                x = s;
                break;
            }
            // Step from x towards s until the first passive variable hits
            // zero; that one (and any other at zero) leaves the passive set.
            let mut alpha = f64::INFINITY;
            let mut blocking = None;
            for &j in cols.iter().filter(|&&j| s[j] <= 0.0) {
                let step = x[j] / (x[j] - s[j]);
                if step < alpha {
                    alpha = step;
                    blocking = Some(j);
                }
            }
            let alpha = if alpha.is_finite() {
                alpha.max(0.0)
            } else {
                0.0
            };
            for j in 0..k {
                x[j] += alpha * (s[j] - x[j]);
            }
            for &j in &cols {
                if Some(j) == blocking || x[j] <= 0.0 {
                    x[j] = 0.0;
                    passive[j] = false;
                }
            }
        }
    }
    Some(x)
}

/// The two-sided critical value for confidence `level` (e.g. 0.95): the
/// quantile of Student's t with `dof` degrees of freedom at (1+level)/2, or
/// of the standard normal distribution when `dof` is `None`.
pub fn critical_value(level: f64, dof: Option<usize>) -> f64 {
    let p = 0.5 + level.clamp(0.0, 0.999_999) / 2.0;
    let dof = dof.filter(|&d| d <= 100_000);
    let density = |t: f64| -> f64 {
        match dof {
            None => (-0.5 * t * t).exp() / (2.0 * std::f64::consts::PI).sqrt(),
            Some(d) => {
                let nu = d.max(1) as f64;
                t_norm(d.max(1)) * (1.0 + t * t / nu).powf(-(nu + 1.0) / 2.0)
            }
        }
    };
    // CDF(t) − ½ = ∫₀ᵗ density, by composite Simpson; Newton on t.
    let half_cdf = |t: f64| -> f64 {
        let panels = 400;
        let h = t / panels as f64;
        let mut s = density(0.0) + density(t);
        for i in 1..panels {
            let f = density(i as f64 * h);
            s += if i % 2 == 1 { 4.0 * f } else { 2.0 * f };
        }
        s * h / 3.0
    };
    let target = p - 0.5;
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    while half_cdf(hi) < target && hi < 1e7 {
        lo = hi;
        hi *= 2.0;
    }
    let mut t = 0.5 * (lo + hi);
    for _ in 0..100 {
        let f = half_cdf(t) - target;
        if f.abs() < 1e-13 {
            break;
        }
        if f > 0.0 {
            hi = t;
        } else {
            lo = t;
        }
        let newton = t - f / density(t);
        t = if newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
    }
    t
}

/// Γ((ν+1)/2) / (√(νπ) Γ(ν/2)), the normalising factor of Student's t,
/// by the recurrence c(ν+2) = c(ν)·(ν+1)/ν from c(1) = 1/√π, c(2) = √π/2.
fn t_norm(nu: usize) -> f64 {
    let pi = std::f64::consts::PI;
    let mut c = if nu % 2 == 1 {
        1.0 / pi.sqrt()
    } else {
        pi.sqrt() / 2.0
    };
    let mut v = if nu % 2 == 1 { 1 } else { 2 };
    while v < nu {
        c *= (v as f64 + 1.0) / v as f64;
        v += 2;
    }
    c / (nu as f64 * pi).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn student_t_critical_values_match_the_printed_table() {
        // source: NIST/SEMATECH e-Handbook of Statistical Methods, section
        // 1.3.6.7.2, critical values of Student's t (upper 0.025 tail).
        for (dof, value) in [
            (1, 12.706),
            (2, 4.303),
            (3, 3.182),
            (5, 2.571),
            (10, 2.228),
            (30, 2.042),
            (100, 1.984),
        ] {
            let t = critical_value(0.95, Some(dof));
            assert!((t - value).abs() < 6e-4, "dof {dof}: {t}");
        }
        // source: same handbook, section 1.3.6.7.1 (normal, 0.975 quantile 1.960;
        // 0.995 quantile 2.576).
        assert!((critical_value(0.95, None) - 1.960).abs() < 5e-4);
        assert!((critical_value(0.99, None) - 2.576).abs() < 5e-4);
    }

    #[test]
    fn line_fit_matches_hand_computed_least_squares() {
        // y = 1 + 2x plus residuals (+0.1, −0.2, +0.1): the centred residuals
        // leave slope 2 and intercept 1; s² = 0.06/1, Sxx = 2 → SE(slope) = √0.03.
        let x = [0.0, 1.0, 2.0];
        let y = [1.1, 2.8, 5.1];
        let f = fit_line(&x, &y, None, false).unwrap();
        assert!((f.slope - 2.0).abs() < 1e-12);
        assert!((f.intercept - 1.0).abs() < 1e-12);
        assert!((f.slope_se.unwrap() - 0.03f64.sqrt()).abs() < 1e-12);
        assert_eq!(f.dof, 1);
        assert!(fit_line(&[1.0, 1.0], &[1.0, 2.0], None, false).is_none());
        assert!(fit_line(&[1.0], &[1.0], None, false).is_none());
    }

    /// Brute force: the best feasible unconstrained solution over every
    /// subset of columns is the NNLS optimum (KKT conditions).
    fn brute_force(a: &Matrix, b: &[f64]) -> (Vec<f64>, f64) {
        let k = a[0].len();
        let mut best = (vec![0.0; k], b.iter().map(|v| v * v).sum::<f64>());
        for mask in 1u32..(1 << k) {
            let cols: Vec<usize> = (0..k).filter(|j| mask & (1 << j) != 0).collect();
            if let Some(s) = lstsq(a, b, &cols) {
                if s.iter().all(|v| *v >= 0.0) {
                    let mut x = vec![0.0; k];
                    for (c, v) in cols.iter().zip(&s) {
                        x[*c] = *v;
                    }
                    let r = residual2(a, b, &x);
                    if r < best.1 {
                        best = (x, r);
                    }
                }
            }
        }
        best
    }

    fn residual2(a: &Matrix, b: &[f64], x: &[f64]) -> f64 {
        a.iter()
            .zip(b)
            .map(|(row, bi)| {
                let r = bi - row.iter().zip(x).map(|(p, q)| p * q).sum::<f64>();
                r * r
            })
            .sum()
    }

    #[test]
    fn nnls_agrees_with_exhaustive_active_sets() {
        // A deterministic spread of small problems, some with negative
        // unconstrained optima so that bounds are active.
        let mut state = 0x2545_F491_4F6C_DD1Du64;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
        };
        for _ in 0..200 {
            let a: Matrix = (0..7).map(|_| (0..3).map(|_| next()).collect()).collect();
            let b: Vec<f64> = (0..7).map(|_| next()).collect();
            let x = nnls(&a, &b).unwrap();
            let (xb, rb) = brute_force(&a, &b);
            assert!(x.iter().all(|v| *v >= 0.0));
            let r = residual2(&a, &b, &x);
            assert!((r - rb).abs() <= 1e-10 * rb.max(1.0), "{x:?} vs {xb:?}");
        }
    }

    #[test]
    fn normal_inverse_of_identity_columns() {
        let a: Matrix = vec![vec![1.0, 0.0], vec![0.0, 2.0], vec![0.0, 0.0]];
        let inv = normal_inverse(&a, &[0, 1]).unwrap();
        assert!((inv[0][0] - 1.0).abs() < 1e-12 && (inv[1][1] - 0.25).abs() < 1e-12);
        assert!(inv[0][1].abs() < 1e-12);
    }
}
