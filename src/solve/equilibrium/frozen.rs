//! Frozen-in (two-temperature) states: the ionic defects equilibrate at a
//! high temperature and keep their amounts; only electrons and holes
//! re-equilibrate at the low temperature.

use super::solver::{System, Work, q_to_f64};
use super::sweep::{Point, po2_sweep, predict, remember};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::model::Model;
use crate::model::network::{self, Constraint, Network, Row};

/// The model with ionic defects frozen: only electronic equilibria run, and
/// every ionic quantity they conserve is held at its equilibrated value.
///
/// The charge balance is posed without the bulk of the frozen ionic charge:
/// each frozen family's total times the charge of its main member is a
/// constant, so it is taken out, and what remains (electrons, holes, the
/// charge-state changes of defects) must keep the net charge it had at
/// equilibrium. Written the plain way, minority carriers would come out of a
/// difference of two large, nearly equal ionic sums and lose their accuracy.
#[non_exhaustive]
pub struct Frozen {
    pub network: Network,
    /// Indices (into the model's equilibria) of the electronic equilibria.
    pub electronic: Vec<usize>,
    /// Weights of each frozen quantity over the model's species.
    pub frozen: Vec<Vec<Q>>,
    /// Effective charges of the model's species.
    pub charges: Vec<f64>,
}

impl Frozen {
    /// The charge row with each family's main charge taken out, given the
    /// equilibrated log concentrations, and the net charge it must keep.
    fn charge_balance(&self, ln_c: &[f64]) -> (Vec<f64>, f64) {
        let mut row = self.charges.clone();
        for family in &self.frozen {
            let main = family
                .iter()
                .enumerate()
                .filter(|(_, w)| **w > Q::from_integer(0))
                .max_by(|a, b| {
                    let la = ln_c[a.0] + q_to_f64(*a.1).ln();
                    let lb = ln_c[b.0] + q_to_f64(*b.1).ln();
                    la.total_cmp(&lb)
                })
                .map(|(s, _)| s);
            if let Some(main) = main {
                let z = self.charges[main];
                for (slot, w) in row.iter_mut().zip(family) {
                    *slot -= z * q_to_f64(*w);
                }
            }
        }
        let net = row.iter().zip(ln_c).map(|(z, l)| z * l.exp()).sum();
        (row, net)
    }
}

/// Builds the frozen-in network of a model.
pub fn frozen_network(model: &Model) -> Result<Frozen, Diagnostic> {
    let electronic: Vec<usize> = model
        .equilibria
        .iter()
        .enumerate()
        .filter(|(_, e)| e.electronic)
        .map(|(i, _)| i)
        .collect();
    let rows: Vec<Row> = electronic
        .iter()
        .map(|&i| {
            let mut row = model.equilibria[i].row.clone();
            row.gases.clear();
            row
        })
        .collect();
    let species = model.species.len();
    let charges: Vec<i32> = model.species.iter().map(|s| s.charge).collect();
    // Candidates: one vector per ionic identity, then single species.
    let mut identities: Vec<String> = Vec::new();
    for s in &model.species {
        if let Some(id) = &s.frozen_identity {
            if !identities.contains(id) {
                identities.push(id.clone());
            }
        }
    }
    let mut candidates: Vec<Vec<Q>> = identities
        .iter()
        .map(|id| {
            model
                .species
                .iter()
                .map(|s| {
                    Q::from_integer(i64::from(s.frozen_identity.as_deref() == Some(id.as_str())))
                })
                .collect()
        })
        .collect();
    for s in 0..species {
        let in_reaction = rows.iter().any(|r| r.species.iter().any(|(i, _)| *i == s));
        if !in_reaction {
            candidates.push(
                (0..species)
                    .map(|i| Q::from_integer(i64::from(i == s)))
                    .collect(),
            );
        }
    }
    // Add candidates until the conserved quantities pin everything down,
    // skipping any that follow from those already chosen.
    let mut chosen: Vec<Vec<Q>> = Vec::new();
    let mut rest = candidates.into_iter();
    loop {
        match network::build(species, 0, &rows, &charges, &chosen) {
            Ok(_) => {
                // The charge level keeps what the uniform-charge families do
                // not fix; each point refines the row further (charge_balance).
                let mut charge: Vec<Q> =
                    charges.iter().map(|&z| Q::from_integer(z.into())).collect();
                for family in &chosen {
                    let members: Vec<usize> = (0..species)
                        .filter(|&s| family[s] > Q::from_integer(0))
                        .collect();
                    let Some(&first) = members.first() else {
                        continue;
                    };
                    let z = charges[first];
                    if members.iter().all(|&s| charges[s] == z) {
                        for &s in &members {
                            charge[s] = Q::from_integer(z.into())
                                .checked_mul(family[s])
                                .and_then(|x| charge[s].checked_sub(x))
                                .map_err(|_| frozen_error())?;
                        }
                    }
                }
                let net = network::build_general(species, 0, &rows, &charge, &chosen, false)
                    .map_err(|_| frozen_error())?;
                return Ok(Frozen {
                    network: net,
                    electronic,
                    frozen: chosen,
                    charges: charges.iter().map(|&z| f64::from(z)).collect(),
                });
            }
            Err(network::NetworkError::Underdetermined { .. }) => {}
            Err(_) if !chosen.is_empty() => {
                chosen.pop();
            }
            Err(_) => break,
        }
        match rest.next() {
            Some(candidate) => chosen.push(candidate),
            None => break,
        }
    }
    Err(frozen_error())
}

fn frozen_error() -> Diagnostic {
    Diagnostic::new(
        Code::Underdetermined,
        0..0,
        "cannot tell which quantities stay fixed when the ionic defects are frozen",
    )
    .with_help("check that every ionic defect's charge states are linked by electronic equilibria")
}

/// Frozen-in states: equilibrate at `t_high` and each pO2, freeze the ionic
/// defects, re-equilibrate electrons and holes at each of `t_low`.
/// Returns, per pO2 and low temperature, the low-temperature point.
pub fn frozen_sweep(
    model: &Model,
    t_high: f64,
    po2s: &[f64],
    t_lows: &[f64],
) -> Result<Vec<Point>, Diagnostic> {
    let high = po2_sweep(model, t_high, po2s)?;
    let frozen = frozen_network(model)?;
    let plain = System::new(&frozen.network);
    let system = &plain;
    let mut points = Vec::with_capacity(po2s.len() * t_lows.len());
    let mut work = Work::default();
    let mut ln_c = Vec::new();
    let mut y = vec![0.0; system.levels.len()];
    let mut history: Vec<(f64, Vec<f64>)> = Vec::new();
    let mut per_t: Vec<(Vec<f64>, Vec<f64>)> = Vec::with_capacity(t_lows.len());
    for &t in t_lows {
        let all = model.ln_k(t);
        let ln_k: Vec<f64> = match all {
            Ok(v) => frozen
                .electronic
                .iter()
                .map(|&i| v.get(i).copied().unwrap_or(0.0))
                .collect(),
            Err(d) => {
                // Only the electronic equilibria must be known at the low temperature.
                let mut values = Vec::new();
                for &i in &frozen.electronic {
                    let e = &model.equilibria[i];
                    match e.thermo.map(|thermo| thermo.ln_k(t)) {
                        Some(Ok(v)) => values.push(v),
                        _ => return Err(d),
                    }
                }
                values
            }
        };
        let base: Vec<f64> = (0..system.species)
            .map(|s| {
                ln_k.iter()
                    .enumerate()
                    .map(|(r, lk)| frozen.network.k[s].get(r).map_or(0.0, |k| q_to_f64(*k)) * lk)
                    .sum()
            })
            .collect();
        per_t.push((base, ln_k));
    }
    for hp in &high {
        if !hp.converged {
            for &t in t_lows {
                points.push(Point {
                    po2: hp.po2,
                    temperature: t,
                    ln_c: hp.ln_c.clone(),
                    converged: false,
                    residual: hp.residual,
                    total_residual: hp.total_residual,
                    site_fraction: hp.site_fraction,
                });
            }
            continue;
        }
        let (row, net_charge) = frozen.charge_balance(&hp.ln_c);
        let system = plain.with_charge_row(&row);
        // Targets: the frozen quantities at the high-temperature state.
        let targets: Vec<f64> = system
            .levels
            .iter()
            .map(|l| match l {
                // The net charge of what stays in the balance, as it was.
                Constraint::Charge => net_charge,
                Constraint::Total(j) => {
                    let weights = &frozen.frozen[*j];
                    let max = weights
                        .iter()
                        .zip(&hp.ln_c)
                        .filter(|(w, _)| **w > Q::from_integer(0))
                        .map(|(w, l)| l + q_to_f64(*w).ln())
                        .fold(f64::NEG_INFINITY, f64::max);
                    let sum: f64 = weights
                        .iter()
                        .zip(&hp.ln_c)
                        .filter(|(w, _)| **w > Q::from_integer(0))
                        .map(|(w, l)| (l + q_to_f64(*w).ln() - max).exp())
                        .sum();
                    max + sum.ln()
                }
            })
            .collect();
        for (ti, &t) in t_lows.iter().enumerate() {
            let (base, _) = &per_t[ti];
            let key = if t_lows.len() > 1 {
                1.0 / t
            } else {
                hp.po2.ln()
            };
            predict(&history, key, &mut y);
            let mut outcome = system.solve(base, &targets, &mut y, &mut ln_c, &mut work);
            if !outcome.converged {
                y.iter_mut().for_each(|v| *v = 0.0);
                outcome = system.solve(base, &targets, &mut y, &mut ln_c, &mut work);
            }
            remember(&mut history, key, &y, outcome.converged);
            points.push(Point {
                po2: hp.po2,
                temperature: t,
                site_fraction: model.defect_site_fraction(&ln_c),
                ln_c: ln_c.clone(),
                converged: outcome.converged,
                residual: outcome.charge_residual,
                total_residual: outcome.total_residual,
            });
        }
        if t_lows.len() > 1 {
            history.clear();
        }
    }
    Ok(points)
}
