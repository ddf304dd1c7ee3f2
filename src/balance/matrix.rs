//! Exact integer linear algebra for the balancer: rank and nullspace of a
//! small integer matrix by fraction-free Gauss–Jordan elimination.
//!
//! In: a matrix of `i64` (rows are conservation laws, columns are species).
//! Out: its rank, or an integer basis of its nullspace whose vectors are
//! primitive (entries coprime). The work is done in `i128` with checked
//! arithmetic and redone with big integers when that overflows, so the
//! answer is exact or an error, never a wrapped number and never a float.

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{CheckedAdd, CheckedDiv, CheckedMul, CheckedSub, Signed, ToPrimitive};

/// A result entry does not fit an `i64` coefficient.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TooLarge;

/// Integer types the elimination runs in: `i128` first, `BigInt` as the
/// fallback that cannot overflow.
trait Exact:
    Clone
    + Integer
    + Signed
    + CheckedMul
    + CheckedSub
    + CheckedAdd
    + CheckedDiv
    + From<i64>
    + ToPrimitive
{
}

impl<T> Exact for T where
    T: Clone
        + Integer
        + Signed
        + CheckedMul
        + CheckedSub
        + CheckedAdd
        + CheckedDiv
        + From<i64>
        + ToPrimitive
{
}

/// A dense integer matrix, row-major.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Matrix {
    pub rows: Vec<Vec<i64>>,
    pub cols: usize,
}

impl Matrix {
    pub fn new(rows: Vec<Vec<i64>>, cols: usize) -> Matrix {
        Matrix { rows, cols }
    }

    /// The same matrix restricted to the columns in `keep` (in that order).
    pub fn columns(&self, keep: &[usize]) -> Matrix {
        let rows = self
            .rows
            .iter()
            .map(|r| {
                keep.iter()
                    .map(|&c| r.get(c).copied().unwrap_or(0))
                    .collect()
            })
            .collect();
        Matrix {
            rows,
            cols: keep.len(),
        }
    }

    /// The same matrix without the rows whose index is in `drop`.
    pub fn without_rows(&self, drop: &[usize]) -> Matrix {
        let rows = self
            .rows
            .iter()
            .enumerate()
            .filter(|(i, _)| !drop.contains(i))
            .map(|(_, r)| r.clone())
            .collect();
        Matrix {
            rows,
            cols: self.cols,
        }
    }
}

/// Divides a row by the gcd of its entries (its content); `None` when a
/// step overflows `T`.
fn make_primitive<T: Exact>(row: &mut [T]) -> Option<()> {
    let mut g = T::zero();
    for x in row.iter() {
        g = g.gcd(x);
    }
    if !g.is_zero() && !g.is_one() {
        for x in row.iter_mut() {
            *x = x.checked_div(&g)?;
        }
    }
    Some(())
}

/// Gauss–Jordan elimination without fractions: every pivot column ends with
/// a single non-zero entry. Returns (row, column) of each pivot, or `None`
/// when an intermediate number overflows `T`.
fn eliminate<T: Exact>(m: &mut [Vec<T>], cols: usize) -> Option<Vec<(usize, usize)>> {
    let mut pivots = Vec::new();
    let mut r = 0;
    for c in 0..cols {
        if r == m.len() {
            break;
        }
        // The smallest pivot keeps the numbers small.
        let Some(p) = (r..m.len())
            .filter(|&i| !m[i][c].is_zero())
            .min_by(|&i, &j| m[i][c].abs().cmp(&m[j][c].abs()))
        else {
            continue;
        };
        m.swap(r, p);
        let (before, rest) = m.split_at_mut(r);
        let (pivot_row, after) = rest.split_first_mut()?;
        for row in before.iter_mut().chain(after.iter_mut()) {
            if row[c].is_zero() {
                continue;
            }
            let g = pivot_row[c].gcd(&row[c]);
            let times_pivot = row[c].checked_div(&g)?;
            let times_row = pivot_row[c].checked_div(&g)?;
            for k in 0..cols {
                let a = row[k].checked_mul(&times_row)?;
                let b = pivot_row[k].checked_mul(&times_pivot)?;
                row[k] = a.checked_sub(&b)?;
            }
            make_primitive(row)?;
        }
        pivots.push((r, c));
        r = r.checked_add(1)?;
    }
    Some(pivots)
}

fn convert<T: Exact>(m: &Matrix) -> Vec<Vec<T>> {
    m.rows
        .iter()
        .map(|r| {
            (0..m.cols)
                .map(|c| T::from(r.get(c).copied().unwrap_or(0)))
                .collect()
        })
        .collect()
}

fn rank_in<T: Exact>(m: &Matrix) -> Option<usize> {
    let mut rows = convert::<T>(m);
    eliminate(&mut rows, m.cols).map(|p| p.len())
}

/// The rank of `m`.
pub fn rank(m: &Matrix) -> Result<usize, TooLarge> {
    rank_in::<i128>(m)
        .or_else(|| rank_in::<BigInt>(m))
        .ok_or(TooLarge)
}

fn nullspace_in<T: Exact>(m: &Matrix) -> Option<Result<Vec<Vec<i64>>, TooLarge>> {
    let mut rows = convert::<T>(m);
    let pivots = eliminate(&mut rows, m.cols)?;
    let is_pivot = |c: usize| pivots.iter().any(|&(_, pc)| pc == c);
    let mut basis = Vec::new();
    for free in (0..m.cols).filter(|&c| !is_pivot(c)) {
        // x_free = scale; each pivot variable follows from its row:
        // p·x_pivot + a·x_free = 0, so scale must make a·scale/p integral.
        let mut scale = T::one();
        for &(r, c) in &pivots {
            let a = &rows[r][free];
            if a.is_zero() {
                continue;
            }
            let p = rows[r][c].abs();
            let need = p.checked_div(&p.gcd(a))?;
            scale = scale.lcm(&need);
        }
        let mut x = vec![T::zero(); m.cols];
        x[free] = scale.clone();
        for &(r, c) in &pivots {
            let a = rows[r][free].clone();
            if a.is_zero() {
                continue;
            }
            let p = rows[r][c].clone();
            let g = p.gcd(&a);
            let value = a
                .checked_div(&g)?
                .checked_mul(&scale.checked_div(&p.checked_div(&g)?)?)?;
            x[c] = T::zero().checked_sub(&value)?;
        }
        make_primitive(&mut x)?;
        basis.push(x);
    }
    Some(
        basis
            .into_iter()
            // i64::MIN is refused too: every entry then has a negative, so
            // the balancer can flip and take sizes without overflow.
            .map(|v| {
                v.iter()
                    .map(|x| x.to_i64().filter(|x| *x != i64::MIN).ok_or(TooLarge))
                    .collect()
            })
            .collect(),
    )
}

/// An integer basis of the nullspace of `m`: every `x` with `m·x = 0` is a
/// rational combination of these vectors. Each vector is primitive.
pub fn nullspace(m: &Matrix) -> Result<Vec<Vec<i64>>, TooLarge> {
    match nullspace_in::<i128>(m) {
        Some(result) => result,
        None => nullspace_in::<BigInt>(m).unwrap_or(Err(TooLarge)),
    }
}

/// Divides a vector by the gcd of its entries; zero stays zero.
pub fn primitive(v: &mut [i64]) {
    let g = v.iter().fold(0i64, |g, x| g.gcd(x));
    if g > 1 {
        for x in v.iter_mut() {
            // g > 1 divides x: the quotient is exact and smaller, so the
            // division never fails.
            if let Some(q) = x.checked_div(g) {
                *x = q;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn times(m: &Matrix, x: &[i64]) -> Vec<i128> {
        m.rows
            .iter()
            .map(|r| {
                r.iter()
                    .zip(x)
                    .map(|(a, b)| {
                        i128::from(*a)
                            .checked_mul(i128::from(*b))
                            .expect("i64 products fit in i128")
                    })
                    .sum()
            })
            .collect()
    }

    #[test]
    fn nullspace_of_a_known_matrix() {
        // x + y - z = 0, 2x - w = 0: two free directions.
        let m = Matrix::new(vec![vec![1, 1, -1, 0], vec![2, 0, 0, -1]], 4);
        let basis = nullspace(&m).unwrap();
        assert_eq!(basis.len(), 2);
        for v in &basis {
            assert!(times(&m, v).iter().all(|x| *x == 0), "{v:?}");
        }
        assert_eq!(rank(&m), Ok(2));
    }

    #[test]
    fn full_rank_has_empty_nullspace() {
        let m = Matrix::new(vec![vec![1, 2], vec![3, 4]], 2);
        assert!(nullspace(&m).unwrap().is_empty());
    }

    #[test]
    fn vectors_are_primitive_integers() {
        // 2a = 3b: smallest is (3, 2).
        let m = Matrix::new(vec![vec![2, -3]], 2);
        let basis = nullspace(&m).unwrap();
        assert_eq!(basis.len(), 1);
        let v = &basis[0];
        assert!(v == &vec![3, 2] || v == &vec![-3, -2], "{v:?}");
    }

    #[test]
    fn overflow_is_detected_and_redone_exactly() {
        // Products of these entries overflow i128 during elimination.
        let big = i64::MAX / 3;
        let m = Matrix::new(
            vec![
                vec![big, big - 1, 7, 0],
                vec![big - 2, 5, big - 3, 1],
                vec![3, big - 5, 11, big - 7],
            ],
            4,
        );
        assert!(
            nullspace_in::<i128>(&m).is_none(),
            "i128 must report overflow"
        );
        // The exact null vector has entries near big^3: far beyond i64, so
        // the answer is an error, not a wrapped number.
        assert_eq!(nullspace(&m), Err(TooLarge));
        assert_eq!(rank(&m), Ok(3));
    }

    #[test]
    fn both_integer_kinds_agree() {
        let m = Matrix::new(
            vec![
                vec![2, -3, 0, 1, 4],
                vec![0, 6, -9, 2, 0],
                vec![4, 0, -9, 4, 8],
            ],
            5,
        );
        let small = nullspace_in::<i128>(&m).unwrap().unwrap();
        let big = nullspace_in::<BigInt>(&m).unwrap().unwrap();
        assert_eq!(small, big);
        for v in &small {
            assert!(times(&m, v).iter().all(|x| *x == 0));
        }
    }
}
