//! Exact linear algebra over the rationals for the equilibrium network.
//!
//! In: small matrices of `BigRational` (stoichiometric numbers, charges,
//! conservation vectors). Out: ranks, null spaces, right inverses and solved
//! systems, all exact. Elimination grows numerators and denominators, so it
//! runs on big rationals; results come back as `Q` through `to_q`, which
//! fails loudly instead of rounding.

#![deny(clippy::arithmetic_side_effects)]

use crate::base::number::{Overflow, Q};
use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, ToPrimitive, Zero};

/// An exact rational of unbounded size.
pub type R = BigRational;

/// A dense matrix stored as rows.
pub type Matrix = Vec<Vec<R>>;

/// `q` as a big rational.
pub fn from_q(q: Q) -> R {
    R::new(BigInt::from(*q.numer()), BigInt::from(*q.denom()))
}

/// `r` as a `Q`, or `Overflow` when it does not fit in `i64` parts.
pub fn to_q(r: &R) -> Result<Q, Overflow> {
    let n = r.numer().to_i64().ok_or(Overflow)?;
    let d = r.denom().to_i64().ok_or(Overflow)?;
    Ok(Q::new(n, d))
}

/// `r` as the nearest `f64` (for numerics only).
pub fn to_f64(r: &R) -> f64 {
    match (r.numer().to_f64(), r.denom().to_f64()) {
        (Some(n), Some(d)) if n.is_finite() && d.is_finite() => n / d,
        _ => {
            // Very large parts: divide as big integers scaled to keep precision.
            let shift = r.denom().bits().saturating_sub(60);
            let d = (r.denom() >> shift).to_f64().unwrap_or(f64::INFINITY);
            let n = (r.numer() >> shift).to_f64().unwrap_or(f64::INFINITY);
            n / d
        }
    }
}

/// The reduced row echelon form of `m` (in place) and its pivot columns.
pub fn rref(m: &mut Matrix) -> Vec<usize> {
    let rows = m.len();
    let cols = m.first().map_or(0, Vec::len);
    let mut pivots = Vec::new();
    let mut row = 0;
    for col in 0..cols {
        if row >= rows {
            break;
        }
        let Some(found) = (row..rows).find(|&r| !m[r][col].is_zero()) else {
            continue;
        };
        m.swap(row, found);
        let pivot = m[row][col].clone();
        for entry in m[row].iter_mut() {
            *entry = &*entry / &pivot;
        }
        let pivot_row = m[row].clone();
        for (r, other) in m.iter_mut().enumerate() {
            if r == row || other[col].is_zero() {
                continue;
            }
            let factor = other[col].clone();
            for (entry, p) in other.iter_mut().zip(&pivot_row) {
                *entry -= &factor * p;
            }
        }
        pivots.push(col);
        // At most one pivot per row: row stays below the row count.
        row = row.saturating_add(1);
    }
    pivots
}

/// The rank of `m`.
pub fn rank(m: &Matrix) -> usize {
    let mut copy = m.clone();
    rref(&mut copy).len()
}

/// A basis of `{x : m x = 0}`, for a matrix with `cols` columns.
pub fn null_space(m: &Matrix, cols: usize) -> Vec<Vec<R>> {
    let mut copy = m.clone();
    let pivots = rref(&mut copy);
    let mut basis = Vec::new();
    for free in (0..cols).filter(|c| !pivots.contains(c)) {
        let mut v = vec![R::zero(); cols];
        v[free] = R::one();
        for (row, &p) in pivots.iter().enumerate() {
            v[p] = -copy[row][free].clone();
        }
        basis.push(v);
    }
    basis
}

/// `m x` for a vector `x`.
pub fn apply(m: &Matrix, x: &[R]) -> Vec<R> {
    m.iter()
        .map(|row| row.iter().zip(x).map(|(a, b)| a * b).sum())
        .collect()
}

/// Solves the square system `a x = b` for several right-hand sides at once
/// (the columns of `b`). `None` when `a` is singular.
pub fn solve(a: &Matrix, b: &Matrix) -> Option<Matrix> {
    let n = a.len();
    let width = b.first().map_or(0, Vec::len);
    let mut aug: Matrix = a
        .iter()
        .zip(b)
        .map(|(ra, rb)| ra.iter().chain(rb).cloned().collect())
        .collect();
    let pivots = rref(&mut aug);
    if pivots.len() != n || pivots.iter().enumerate().any(|(i, &p)| p != i) {
        return None;
    }
    Some(
        aug.into_iter()
            .map(|row| row[n..].iter().take(width).cloned().collect())
            .collect(),
    )
}

/// A right inverse `x` of a full-row-rank `m` (`m x = I`), with zero rows for
/// the non-pivot columns. `None` when the rows of `m` are dependent.
pub fn right_inverse(m: &Matrix, cols: usize) -> Option<Matrix> {
    let rows = m.len();
    let mut aug: Matrix = m
        .iter()
        .enumerate()
        .map(|(i, row)| {
            let mut r = row.clone();
            r.extend((0..rows).map(|j| if i == j { R::one() } else { R::zero() }));
            r
        })
        .collect();
    let pivots = rref(&mut aug);
    if pivots.len() != rows || pivots.iter().any(|&p| p >= cols) {
        return None;
    }
    let mut x = vec![vec![R::zero(); rows]; cols];
    for (row, &p) in pivots.iter().enumerate() {
        x[p] = aug[row][cols..].iter().take(rows).cloned().collect();
    }
    Some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn r(n: i64) -> R {
        R::from_integer(BigInt::from(n))
    }

    #[test]
    fn null_space_of_a_reaction() {
        // One reaction over (V, e): V + 2e, charges (2, -1) lie in its null space.
        let m = vec![vec![r(1), r(2)]];
        let basis = null_space(&m, 2);
        assert_eq!(basis.len(), 1);
        assert_eq!(apply(&m, &basis[0]), vec![r(0)]);
    }

    #[test]
    fn right_inverse_is_an_inverse() {
        let m = vec![vec![r(1), r(2), r(0)], vec![r(0), r(1), r(1)]];
        let x = right_inverse(&m, 3).expect("full row rank");
        for (i, row) in m.iter().enumerate() {
            for j in 0..2 {
                let v: R = row.iter().zip(&x).map(|(a, xr)| a * &xr[j]).sum();
                assert_eq!(v, if i == j { r(1) } else { r(0) });
            }
        }
        assert!(right_inverse(&vec![vec![r(1), r(1)], vec![r(2), r(2)]], 2).is_none());
    }

    #[test]
    fn solves_square_systems() {
        let a = vec![vec![r(3), r(-1)], vec![r(-1), r(1)]];
        let b = vec![vec![r(1)], vec![r(0)]];
        let x = solve(&a, &b).expect("regular");
        assert_eq!(x[0][0], R::new(BigInt::from(1), BigInt::from(2)));
        assert_eq!(x[1][0], R::new(BigInt::from(1), BigInt::from(2)));
        assert!(solve(&vec![vec![r(1), r(2)], vec![r(2), r(4)]], &b).is_none());
        assert_eq!(to_q(&x[0][0]), Ok(Q::new(1, 2)));
    }
}
