//! Equilibria of a model along one axis: pO2 at a fixed temperature, or
//! temperature at a fixed pO2, each point started from the ones before it;
//! and the grids the scans sample.

use super::solver::{System, Work, q_to_f64};
use crate::base::diagnostic::Diagnostic;
use crate::model::Model;
use crate::model::network::{Constraint, Network};

/// One solved state.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Point {
    /// bar
    pub po2: f64,
    /// kelvin (the temperature the concentrations belong to)
    pub temperature: f64,
    /// Natural logs of the concentrations, per formula unit, in model order.
    pub ln_c: Vec<f64>,
    pub converged: bool,
    pub residual: f64,
    pub total_residual: f64,
    /// Largest defect site fraction (the dilute-limit indicator).
    pub site_fraction: f64,
}

impl Point {
    /// Concentration of species `s`.
    pub fn concentration(&self, s: usize) -> f64 {
        self.ln_c.get(s).map_or(f64::NAN, |l| l.exp())
    }
}

/// Offsets a_s at one temperature: a_s = base_s + slope_s · ln pO2.
struct Offsets {
    base: Vec<f64>,
    slope: Vec<f64>,
}

fn offsets(model: &Model, network: &Network, ln_k: &[f64]) -> Offsets {
    let oxygen = model.oxygen();
    let mut base = vec![0.0; network.species];
    let mut slope = vec![0.0; network.species];
    for s in 0..network.species {
        let mut b = 0.0;
        for (r, &lk) in ln_k.iter().enumerate() {
            if let Some(k) = network.k.get(s).and_then(|row| row.get(r)) {
                b += q_to_f64(*k) * lk;
            }
        }
        for (g, gas) in model.gases.iter().enumerate() {
            let coef = network
                .q
                .get(s)
                .and_then(|row| row.get(g))
                .map_or(0.0, |q| q_to_f64(*q));
            if Some(g) == oxygen {
                slope[s] = coef;
            } else if let Some(p) = gas.pressure {
                b += coef * p.ln();
            }
        }
        base[s] = b;
    }
    Offsets { base, slope }
}

fn model_targets(model: &Model, system: &System) -> Vec<f64> {
    system
        .levels
        .iter()
        .map(|l| match l {
            Constraint::Charge => 0.0,
            Constraint::Total(t) => model.totals.get(*t).map_or(0.0, |t| t.amount.ln()),
        })
        .collect()
}

/// Extrapolates the previous solutions to a start value at `x`.
pub(super) fn predict(history: &[(f64, Vec<f64>)], x: f64, y: &mut [f64]) {
    match history {
        [.., (x1, y1), (x2, y2)] if (x2 - x1).abs() > 0.0 => {
            let t = (x - x2) / (x2 - x1);
            for ((yi, a), b) in y.iter_mut().zip(y1).zip(y2) {
                *yi = b + (b - a) * t;
            }
        }
        [.., (_, y2)] => y.copy_from_slice(y2),
        [] => {}
    }
}

pub(super) fn remember(history: &mut Vec<(f64, Vec<f64>)>, x: f64, y: &[f64], converged: bool) {
    if !converged {
        history.clear();
        return;
    }
    if history.len() >= 2 {
        history.remove(0);
    }
    history.push((x, y.to_vec()));
}

/// Equilibrium at temperature `t` for each pO2 (bar).
pub fn po2_sweep(model: &Model, t: f64, po2s: &[f64]) -> Result<Vec<Point>, Diagnostic> {
    let ln_k = model.ln_k(t)?;
    let system = System::new(&model.network);
    let off = offsets(model, &model.network, &ln_k);
    let targets = model_targets(model, &system);
    let mut y = vec![0.0; system.levels.len()];
    let mut a = vec![0.0; system.species];
    let mut ln_c = Vec::with_capacity(system.species);
    let mut work = Work::default();
    let mut history: Vec<(f64, Vec<f64>)> = Vec::new();
    let mut points = Vec::with_capacity(po2s.len());
    for &p in po2s {
        let x = p.ln();
        for (ai, (b, s)) in a.iter_mut().zip(off.base.iter().zip(&off.slope)) {
            *ai = b + s * x;
        }
        predict(&history, x, &mut y);
        let mut outcome = if history.is_empty() {
            system.solve(&a, &targets, &mut y, &mut ln_c, &mut work)
        } else {
            system.solve_predicted(&a, &targets, &mut y, &mut ln_c, &mut work)
        };
        if !outcome.converged {
            // A cold start from zero before giving up on the point.
            y.iter_mut().for_each(|v| *v = 0.0);
            outcome = system.solve(&a, &targets, &mut y, &mut ln_c, &mut work);
        }
        remember(&mut history, x, &y, outcome.converged);
        points.push(Point {
            po2: p,
            temperature: t,
            site_fraction: model.defect_site_fraction(&ln_c),
            ln_c: ln_c.clone(),
            converged: outcome.converged,
            residual: outcome.charge_residual,
            total_residual: outcome.total_residual,
        });
    }
    Ok(points)
}

/// Equilibrium at pO2 `po2` (bar) for each temperature (kelvin).
pub fn temperature_sweep(
    model: &Model,
    po2: f64,
    temperatures: &[f64],
) -> Result<Vec<Point>, Diagnostic> {
    let system = System::new(&model.network);
    let targets = model_targets(model, &system);
    let mut y = vec![0.0; system.levels.len()];
    let mut a = vec![0.0; system.species];
    let mut ln_c = Vec::with_capacity(system.species);
    let mut work = Work::default();
    let mut history: Vec<(f64, Vec<f64>)> = Vec::new();
    let mut points = Vec::with_capacity(temperatures.len());
    for &t in temperatures {
        let ln_k = model.ln_k(t)?;
        let off = offsets(model, &model.network, &ln_k);
        let x = po2.ln();
        for (ai, (b, s)) in a.iter_mut().zip(off.base.iter().zip(&off.slope)) {
            *ai = b + s * x;
        }
        predict(&history, 1.0 / t, &mut y);
        let mut outcome = if history.is_empty() {
            system.solve(&a, &targets, &mut y, &mut ln_c, &mut work)
        } else {
            system.solve_predicted(&a, &targets, &mut y, &mut ln_c, &mut work)
        };
        if !outcome.converged {
            y.iter_mut().for_each(|v| *v = 0.0);
            outcome = system.solve(&a, &targets, &mut y, &mut ln_c, &mut work);
        }
        remember(&mut history, 1.0 / t, &y, outcome.converged);
        points.push(Point {
            po2,
            temperature: t,
            site_fraction: model.defect_site_fraction(&ln_c),
            ln_c: ln_c.clone(),
            converged: outcome.converged,
            residual: outcome.charge_residual,
            total_residual: outcome.total_residual,
        });
    }
    Ok(points)
}

/// `n` values evenly spaced in log10 from `low` to `high` (inclusive).
pub fn log_grid(low: f64, high: f64, n: usize) -> Vec<f64> {
    match n {
        0 => Vec::new(),
        1 => vec![low],
        _ => {
            let (a, b) = (low.log10(), high.log10());
            (0..n)
                .map(|i| {
                    let f = i as f64 / (n - 1) as f64;
                    10f64.powf(a + (b - a) * f)
                })
                .collect()
        }
    }
}

/// `n` temperatures evenly spaced in 1/T from `low` to `high` (inclusive), ascending in T.
pub fn inverse_grid(low: f64, high: f64, n: usize) -> Vec<f64> {
    match n {
        0 => Vec::new(),
        1 => vec![low],
        _ => (0..n)
            .map(|i| {
                let f = i as f64 / (n - 1) as f64;
                1.0 / (1.0 / low + (1.0 / high - 1.0 / low) * f)
            })
            .collect(),
    }
}
