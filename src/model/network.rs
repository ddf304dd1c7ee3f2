//! The log-linear structure of a set of equilibria, solved exactly.
//!
//! In: S concentration species, R equilibria as exact stoichiometric rows
//! (concentrations and gases), and the constraint vectors that close the
//! system: the effective charges (electroneutrality) and the fixed totals.
//! Out: a `Network` in which every log concentration is
//!
//! ```text
//! ln c_s = Σ_r k[s][r]·ln K_r + Σ_g q[s][g]·ln p_g + Σ_l w[l][s]·y_l
//! ```
//!
//! with exact rational `k`, `q` and one free variable `y_l` per constraint
//! (a charge-like potential and one potential per fixed total). The mass-
//! action laws then hold for every `y`; the constraints pick `y`. This works
//! because the conservation vectors of the reactions are exactly the null
//! space of the stoichiometric matrix, and a well-posed model's constraints
//! span it. Anything else (dependent equilibria, a constraint the reactions
//! break, a species nothing pins down) is a `NetworkError`.

#![deny(clippy::arithmetic_side_effects)]

use crate::base::linalg::{self, Matrix, R};
use crate::base::number::{Overflow, Q};
use num_traits::Zero;

/// One equilibrium as exact stoichiometric numbers (products positive).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Row {
    /// (species index, exponent)
    pub species: Vec<(usize, Q)>,
    /// (gas index, exponent)
    pub gases: Vec<(usize, Q)>,
}

/// What kind of constraint a level of the network is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Constraint {
    /// Σ z_s c_s = 0.
    Charge,
    /// Σ m_s c_s = total (the index of the total in the caller's list).
    Total(usize),
}

/// The solved log-linear structure.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Network {
    pub species: usize,
    pub equilibria: usize,
    pub gases: usize,
    /// The constraint levels, charge first when present.
    pub levels: Vec<Constraint>,
    /// `weights[l][s]`: the coefficient of species s in constraint l (its charge
    /// or its count in a total), which is also the exponent of y_l in ln c_s.
    pub weights: Vec<Vec<Q>>,
    /// `k[s][r]` = ∂ln c_s/∂ln K_r at fixed y.
    pub k: Vec<Vec<Q>>,
    /// `q[s][g]` = ∂ln c_s/∂ln p_g at fixed y.
    pub q: Vec<Vec<Q>>,
}

/// Why a set of equilibria and constraints does not determine the concentrations.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum NetworkError {
    /// Equilibrium `index` is a combination of earlier ones.
    DependentEquilibria {
        index: usize,
    },
    /// Equilibrium `equilibrium` changes the quantity that total `total` fixes.
    TotalNotConserved {
        total: usize,
        equilibrium: usize,
    },
    /// Equilibrium `equilibrium` does not conserve charge.
    ChargeNotConserved {
        equilibrium: usize,
    },
    /// Constraint `total` adds nothing (it follows from the charge and
    /// earlier totals), so the system is over-determined.
    RedundantTotal {
        total: usize,
    },
    /// Charged species of one sign only: electroneutrality cannot hold.
    OneSignedCharge {
        positive: bool,
    },
    /// These species are not pinned down by any equilibrium or constraint.
    Underdetermined {
        species: Vec<usize>,
    },
    Overflow,
}

impl From<Overflow> for NetworkError {
    fn from(_: Overflow) -> Self {
        NetworkError::Overflow
    }
}

/// Builds the network. `charges[s]` is each species' effective charge;
/// `totals[t][s]` each fixed total's weights (non-negative counts).
pub fn build(
    species: usize,
    gases: usize,
    rows: &[Row],
    charges: &[i32],
    totals: &[Vec<Q>],
) -> Result<Network, NetworkError> {
    let charge_like: Vec<Q> = charges.iter().map(|&z| Q::from_integer(z.into())).collect();
    build_general(species, gases, rows, &charge_like, totals, true)
}

/// As `build`, with a charge-like first constraint given as exact weights.
/// With `both_signs` false it may have one sign only (its target is then
/// not zero): the frozen-in solver balances only the electronic charge.
pub fn build_general(
    species: usize,
    gases: usize,
    rows: &[Row],
    charges: &[Q],
    totals: &[Vec<Q>],
    both_signs: bool,
) -> Result<Network, NetworkError> {
    let equilibria = rows.len();
    let zero = R::zero();
    let nu: Matrix = rows
        .iter()
        .map(|row| {
            let mut dense = vec![zero.clone(); species];
            for &(s, coef) in &row.species {
                if let Some(slot) = dense.get_mut(s) {
                    *slot += linalg::from_q(coef);
                }
            }
            dense
        })
        .collect();
    // Independent equilibria: each row must raise the rank.
    let mut so_far: Matrix = Vec::new();
    for (index, row) in nu.iter().enumerate() {
        so_far.push(row.clone());
        if linalg::rank(&so_far) < so_far.len() {
            return Err(NetworkError::DependentEquilibria { index });
        }
    }
    let zero_q = Q::from_integer(0);
    let charge_vector: Vec<R> = charges.iter().map(|&z| linalg::from_q(z)).collect();
    let charged = charges.iter().any(|&z| z != zero_q);
    if charged {
        let positive = charges.iter().any(|&z| z > zero_q);
        let negative = charges.iter().any(|&z| z < zero_q);
        if both_signs && !(positive && negative) {
            return Err(NetworkError::OneSignedCharge { positive });
        }
        for (equilibrium, row) in nu.iter().enumerate() {
            let sum: R = row.iter().zip(&charge_vector).map(|(a, b)| a * b).sum();
            if !sum.is_zero() {
                return Err(NetworkError::ChargeNotConserved { equilibrium });
            }
        }
    }
    let mut levels = Vec::new();
    let mut constraint_rows: Matrix = Vec::new();
    if charged {
        levels.push(Constraint::Charge);
        constraint_rows.push(charge_vector);
    }
    for (t, weights) in totals.iter().enumerate() {
        let vector: Vec<R> = (0..species)
            .map(|s| weights.get(s).map_or(zero.clone(), |&q| linalg::from_q(q)))
            .collect();
        for (equilibrium, row) in nu.iter().enumerate() {
            let sum: R = row.iter().zip(&vector).map(|(a, b)| a * b).sum();
            if !sum.is_zero() {
                return Err(NetworkError::TotalNotConserved {
                    total: t,
                    equilibrium,
                });
            }
        }
        constraint_rows.push(vector);
        if linalg::rank(&constraint_rows) < constraint_rows.len() {
            return Err(NetworkError::RedundantTotal { total: t });
        }
        levels.push(Constraint::Total(t));
    }
    // The constraints must span the whole null space of the stoichiometry.
    let null = linalg::null_space(&nu, species);
    if null.len() > constraint_rows.len() {
        let mut free = Vec::new();
        let mut span = constraint_rows.clone();
        for v in &null {
            span.push(v.clone());
            if linalg::rank(&span) > constraint_rows.len() {
                for (s, x) in v.iter().enumerate() {
                    if !x.is_zero() && !free.contains(&s) {
                        free.push(s);
                    }
                }
            }
            span.pop();
        }
        // Report only species not fixed by the constraints alone when possible.
        free.sort_unstable();
        return Err(NetworkError::Underdetermined { species: free });
    }
    // Particular solution through a right inverse of the stoichiometry.
    let (k, q) = if equilibria == 0 {
        (
            vec![Vec::new(); species],
            vec![vec![Q::from_integer(0); gases]; species],
        )
    } else {
        let x = linalg::right_inverse(&nu, species)
            .ok_or(NetworkError::DependentEquilibria { index: 0 })?;
        let mut k = vec![vec![Q::from_integer(0); equilibria]; species];
        let mut q = vec![vec![Q::from_integer(0); gases]; species];
        for (s, (k_row, q_row)) in k.iter_mut().zip(q.iter_mut()).enumerate() {
            for (r, slot) in k_row.iter_mut().enumerate() {
                *slot = linalg::to_q(&x[s][r])?;
            }
            for (g, slot) in q_row.iter_mut().enumerate() {
                // a = X (ln K − ν_gas ln p)
                let mut sum = R::zero();
                for (r, row) in rows.iter().enumerate() {
                    for &(gi, coef) in &row.gases {
                        if gi == g {
                            sum -= &x[s][r] * linalg::from_q(coef);
                        }
                    }
                }
                *slot = linalg::to_q(&sum)?;
            }
        }
        (k, q)
    };
    let weights = constraint_rows
        .iter()
        .map(|row| row.iter().map(linalg::to_q).collect::<Result<Vec<Q>, _>>())
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Network {
        species,
        equilibria,
        gases,
        levels,
        weights,
        k,
        q,
    })
}

impl Network {
    /// Weights of species `s` over the levels (its `g` vector).
    pub fn g(&self, s: usize) -> Vec<Q> {
        self.weights.iter().map(|w| w[s]).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::number;

    fn q(n: i64) -> Q {
        Q::from_integer(n)
    }

    #[test]
    fn reduction_network() {
        // species: V_O••, e′; red: V + 2e + ½O2
        let rows = vec![Row {
            species: vec![(0, q(1)), (1, q(2))],
            gases: vec![(0, Q::new(1, 2))],
        }];
        let net = build(2, 1, &rows, &[2, -1], &[]).expect("well posed");
        assert_eq!(net.levels, vec![Constraint::Charge]);
        // Mass action holds for any y: ln V + 2 ln n = ln K − ½ ln p.
        let combo_k = number::sum_checked([Ok(net.k[0][0]), q(2).checked_mul(net.k[1][0])]);
        let combo_p = number::sum_checked([Ok(net.q[0][0]), q(2).checked_mul(net.q[1][0])]);
        assert_eq!(combo_k, Ok(q(1)));
        assert_eq!(combo_p, Ok(Q::new(-1, 2)));
    }

    #[test]
    fn detects_problems() {
        let red = Row {
            species: vec![(0, q(1)), (1, q(2))],
            gases: vec![(0, Q::new(1, 2))],
        };
        // A free species: V_O× in no equilibrium.
        let err = build(3, 1, std::slice::from_ref(&red), &[2, -1, 0], &[]);
        assert_eq!(err, Err(NetworkError::Underdetermined { species: vec![2] }));
        // Dependent equilibria.
        let err = build(2, 1, &[red.clone(), red.clone()], &[2, -1], &[]);
        assert_eq!(err, Err(NetworkError::DependentEquilibria { index: 1 }));
        // A total the reaction breaks.
        let err = build(
            2,
            1,
            std::slice::from_ref(&red),
            &[2, -1],
            &[vec![q(1), q(0)]],
        );
        assert_eq!(
            err,
            Err(NetworkError::TotalNotConserved {
                total: 0,
                equilibrium: 0
            })
        );
        assert_eq!(
            build(1, 0, &[], &[2], &[]),
            Err(NetworkError::OneSignedCharge { positive: true })
        );
    }
}
