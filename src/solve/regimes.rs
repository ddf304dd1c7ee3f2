//! Brouwer regimes, solved exactly.
//!
//! In: a `Model`. For every choice of one dominant positive and one dominant
//! negative term of electroneutrality (and one dominant species in each
//! fixed total), the mass-action laws become a square log-linear system,
//! solved here in exact rational arithmetic. Out: for each such regime,
//! every species as a power law `c = Π base^e · Π K_r^e · Π p_g^e · Π T_j^e`
//! with exact exponents, so the slope `d log[X]/d log pO2` and the dopant
//! slope `d log[X]/d log[total]` are rationals such as −1/6 or +1/4. With the
//! model's K values, each regime's self-consistent range (where its
//! dominant terms really are the largest) is an interval of log pO2 (or of
//! 1/T); the regimes that occur are those intervals, in order.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::linalg::{self, Matrix, R};
use crate::base::number::{self, Overflow, Q};
use crate::model::Model;
use crate::model::network::Constraint;
use crate::model::thermo::{BOLTZMANN_EV_PER_K, Thermo};
use crate::notation::Style;
use num_traits::{One, Zero};
use std::collections::BTreeMap;

/// Which terms dominate in a regime.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Dominance {
    /// Species indices; `None` when the model has no charged species.
    pub positive: Option<usize>,
    pub negative: Option<usize>,
    /// Dominant species of each fixed total, in the model's order.
    pub totals: Vec<usize>,
}

/// Every species as an exact power law inside one regime.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct PowerLaws {
    /// `k[s][r]` = d ln c_s / d ln K_r
    pub k: Vec<Vec<Q>>,
    /// `gas[s][g]` = d ln c_s / d ln p_g
    pub gas: Vec<Vec<Q>>,
    /// `total[s][j]` = d ln c_s / d ln (total j)
    pub total: Vec<Vec<Q>>,
    /// `constant[s]`: (base, exponent) pairs of the numeric prefactor.
    pub constant: Vec<Vec<(Q, Q)>>,
}

/// One regime with the range where it holds.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Regime {
    pub dominance: Dominance,
    pub laws: PowerLaws,
    /// Range of the swept variable where the regime holds, clipped to the
    /// sweep: pO2 in bar for pO2 sweeps, kelvin for temperature sweeps.
    pub from: f64,
    pub to: f64,
}

fn r_of(q: Q) -> R {
    linalg::from_q(q)
}

fn q_f64(q: Q) -> f64 {
    *q.numer() as f64 / *q.denom() as f64
}

/// All candidate dominances of a model.
fn candidates(model: &Model) -> Vec<Dominance> {
    let charged: Vec<usize> = model
        .species
        .iter()
        .enumerate()
        .filter(|(_, s)| s.charge != 0)
        .map(|(i, _)| i)
        .collect();
    let positives: Vec<Option<usize>> = if charged.is_empty() {
        vec![None]
    } else {
        charged
            .iter()
            .filter(|&&i| model.species[i].charge > 0)
            .map(|&i| Some(i))
            .collect()
    };
    let negatives: Vec<Option<usize>> = if charged.is_empty() {
        vec![None]
    } else {
        charged
            .iter()
            .filter(|&&i| model.species[i].charge < 0)
            .map(|&i| Some(i))
            .collect()
    };
    let total_choices: Vec<Vec<usize>> = model
        .totals
        .iter()
        .map(|t| {
            t.weights
                .iter()
                .enumerate()
                .filter(|(_, w)| **w > Q::from_integer(0))
                .map(|(i, _)| i)
                .collect()
        })
        .collect();
    let mut combos: Vec<Vec<usize>> = vec![Vec::new()];
    for choices in &total_choices {
        let mut next = Vec::new();
        for combo in &combos {
            for &c in choices {
                let mut extended = combo.clone();
                extended.push(c);
                next.push(extended);
            }
        }
        combos = next;
    }
    let mut out = Vec::new();
    for &positive in &positives {
        for &negative in &negatives {
            for combo in &combos {
                out.push(Dominance {
                    positive,
                    negative,
                    totals: combo.clone(),
                });
            }
        }
    }
    out
}

/// Solves one dominance exactly; `None` when its equations are singular
/// (the dominant terms cannot all be balanced by changing the potentials).
pub fn power_laws(model: &Model, dominance: &Dominance) -> Result<Option<PowerLaws>, Overflow> {
    let net = &model.network;
    let levels = net.levels.len();
    let species = net.species;
    let (nk, ng, nt) = (net.equilibria, net.gases, model.totals.len());
    let width = nk + ng + nt;
    let g = |l: usize, s: usize| r_of(net.weights[l][s]);
    let mut a: Matrix = Vec::new();
    let mut b: Matrix = Vec::new();
    // Constant part of each row as (base, coefficient of ln base).
    let mut constants: Vec<Vec<(Q, R)>> = Vec::new();
    for level in &net.levels {
        let mut row_a = vec![R::zero(); levels];
        let mut row_b = vec![R::zero(); width];
        let mut row_c = Vec::new();
        match level {
            Constraint::Charge => {
                let (Some(p), Some(n)) = (dominance.positive, dominance.negative) else {
                    return Ok(None);
                };
                for (l, slot) in row_a.iter_mut().enumerate() {
                    *slot = g(l, p) - g(l, n);
                }
                for (r, slot) in row_b.iter_mut().enumerate().take(nk) {
                    *slot = r_of(net.k[n][r]) - r_of(net.k[p][r]);
                }
                for gi in 0..ng {
                    row_b[nk + gi] = r_of(net.q[n][gi]) - r_of(net.q[p][gi]);
                }
                let zp = i64::from(model.species[p].charge.unsigned_abs());
                let zn = i64::from(model.species[n].charge.unsigned_abs());
                row_c.push((Q::from_integer(zn), R::one()));
                row_c.push((Q::from_integer(zp), -R::one()));
            }
            Constraint::Total(j) => {
                let Some(&d) = dominance.totals.get(*j) else {
                    return Ok(None);
                };
                for (l, slot) in row_a.iter_mut().enumerate() {
                    *slot = g(l, d);
                }
                for (r, slot) in row_b.iter_mut().enumerate().take(nk) {
                    *slot = -r_of(net.k[d][r]);
                }
                for gi in 0..ng {
                    row_b[nk + gi] = -r_of(net.q[d][gi]);
                }
                row_b[nk + ng + j] = R::one();
                let m = model.totals[*j].weights[d];
                row_c.push((m, -R::one()));
            }
        }
        a.push(row_a);
        b.push(row_b);
        constants.push(row_c);
    }
    let (y, inverse) = if levels == 0 {
        (Vec::new(), Vec::new())
    } else {
        let identity: Matrix = (0..levels)
            .map(|i| {
                (0..levels)
                    .map(|j| if i == j { R::one() } else { R::zero() })
                    .collect()
            })
            .collect();
        let Some(inverse) = linalg::solve(&a, &identity) else {
            return Ok(None);
        };
        let y: Matrix = inverse
            .iter()
            .map(|row| {
                (0..width)
                    .map(|c| row.iter().zip(&b).map(|(x, brow)| x * &brow[c]).sum())
                    .collect()
            })
            .collect();
        (y, inverse)
    };
    let mut laws = PowerLaws {
        k: vec![vec![Q::from_integer(0); nk]; species],
        gas: vec![vec![Q::from_integer(0); ng]; species],
        total: vec![vec![Q::from_integer(0); nt]; species],
        constant: vec![Vec::new(); species],
    };
    for s in 0..species {
        for c in 0..width {
            let mut v = if c < nk {
                r_of(net.k[s][c])
            } else if c < nk + ng {
                r_of(net.q[s][c - nk])
            } else {
                R::zero()
            };
            for (l, yl) in y.iter().enumerate() {
                v += g(l, s) * &yl[c];
            }
            let q = linalg::to_q(&v)?;
            if c < nk {
                laws.k[s][c] = q;
            } else if c < nk + ng {
                laws.gas[s][c - nk] = q;
            } else {
                laws.total[s][c - nk - ng] = q;
            }
        }
        // Constant: Σ_l g_ls Σ_i inverse[l][i] · const_i
        let mut by_base: BTreeMap<Q, R> = BTreeMap::new();
        for (l, inv_row) in inverse.iter().enumerate() {
            let gls = g(l, s);
            if gls.is_zero() {
                continue;
            }
            for (i, row_c) in constants.iter().enumerate() {
                let factor = &gls * &inv_row[i];
                for (base, coef) in row_c {
                    if *base == Q::from_integer(1) {
                        continue;
                    }
                    *by_base.entry(*base).or_insert_with(R::zero) += &factor * coef;
                }
            }
        }
        for (base, exponent) in by_base {
            if !exponent.is_zero() {
                laws.constant[s].push((base, linalg::to_q(&exponent)?));
            }
        }
    }
    Ok(Some(laws))
}

impl PowerLaws {
    /// ln of the constant prefactor of species `s`.
    pub fn ln_constant(&self, s: usize) -> f64 {
        self.constant[s]
            .iter()
            .map(|(b, e)| q_f64(*e) * q_f64(*b).ln())
            .sum()
    }
}

/// The affine form `ln c_s = α_s + β_s u` of each species in the swept variable.
struct Affine {
    alpha: Vec<f64>,
    beta: Vec<f64>,
}

/// Which variable a sweep runs over.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum Sweep {
    /// ln pO2 at a temperature (kelvin).
    Po2 { temperature: f64 },
    /// 1/T at a pO2 (bar).
    Temperature { po2: f64 },
}

fn affine(model: &Model, laws: &PowerLaws, sweep: Sweep) -> Option<Affine> {
    let species = model.species.len();
    let oxygen = model.oxygen();
    let mut alpha = vec![0.0; species];
    let mut beta = vec![0.0; species];
    let ln_k: Option<Vec<f64>> = match sweep {
        Sweep::Po2 { temperature } => Some(model.ln_k(temperature).ok()?),
        Sweep::Temperature { .. } => None,
    };
    for s in 0..species {
        let mut a = laws.ln_constant(s);
        let mut b = 0.0;
        for (r, e) in model.equilibria.iter().enumerate() {
            let x = q_f64(laws.k[s][r]);
            if x == 0.0 {
                continue;
            }
            match (&ln_k, sweep) {
                (Some(values), _) => a += x * values[r],
                (None, _) => match e.thermo {
                    Some(Thermo::Arrhenius {
                        dh_ev, ds_ev_per_k, ..
                    }) => {
                        a += x * ds_ev_per_k / BOLTZMANN_EV_PER_K;
                        b += x * -dh_ev / BOLTZMANN_EV_PER_K;
                    }
                    Some(Thermo::Fixed { .. }) | None => return None,
                },
            }
        }
        for (gi, gas) in model.gases.iter().enumerate() {
            let x = q_f64(laws.gas[s][gi]);
            if x == 0.0 {
                continue;
            }
            if Some(gi) == oxygen {
                match sweep {
                    Sweep::Po2 { .. } => b += x,
                    Sweep::Temperature { po2 } => a += x * po2.ln(),
                }
            } else if let Some(p) = gas.pressure {
                a += x * p.ln();
            }
        }
        for (j, t) in model.totals.iter().enumerate() {
            a += q_f64(laws.total[s][j]) * t.amount.ln();
        }
        alpha[s] = a;
        beta[s] = b;
    }
    Some(Affine { alpha, beta })
}

/// The interval of u where `dominance` is self-consistent, within [lo, hi].
fn consistent_interval(
    model: &Model,
    dominance: &Dominance,
    form: &Affine,
    lo: f64,
    hi: f64,
) -> Option<(f64, f64)> {
    let (mut lo, mut hi) = (lo, hi);
    let mut require = |dominant: usize, dominant_weight: f64, other: usize, other_weight: f64| {
        // ln w_o + α_o + β_o u ≤ ln w_d + α_d + β_d u
        let c = form.beta[other] - form.beta[dominant];
        let r =
            (dominant_weight.ln() + form.alpha[dominant]) - (other_weight.ln() + form.alpha[other]);
        if c.abs() < 1e-12 {
            if r < -1e-9 {
                lo = f64::INFINITY;
            }
        } else if c > 0.0 {
            hi = hi.min(r / c);
        } else {
            lo = lo.max(r / c);
        }
    };
    for (s, sp) in model.species.iter().enumerate() {
        let w = f64::from(sp.charge.unsigned_abs());
        if let Some(p) = dominance.positive {
            if sp.charge > 0 && s != p {
                require(p, f64::from(model.species[p].charge.unsigned_abs()), s, w);
            }
        }
        if let Some(n) = dominance.negative {
            if sp.charge < 0 && s != n {
                require(n, f64::from(model.species[n].charge.unsigned_abs()), s, w);
            }
        }
    }
    for (j, total) in model.totals.iter().enumerate() {
        let Some(&d) = dominance.totals.get(j) else {
            continue;
        };
        for (s, w) in total.weights.iter().enumerate() {
            if *w > Q::from_integer(0) && s != d {
                require(d, q_f64(total.weights[d]), s, q_f64(*w));
            }
        }
    }
    (hi > lo).then_some((lo, hi))
}

/// Every regime with its exact power laws but no pO2 range (`from` and
/// `to` are NaN): what a model without K values can still show.
pub fn unordered_regimes(model: &Model) -> Result<Vec<Regime>, Diagnostic> {
    Ok(all_regimes(model)?
        .into_iter()
        .map(|(dominance, laws)| Regime {
            dominance,
            laws,
            from: f64::NAN,
            to: f64::NAN,
        })
        .collect())
}

/// Every dominance with its exact power laws (singular ones left out).
pub fn all_regimes(model: &Model) -> Result<Vec<(Dominance, PowerLaws)>, Diagnostic> {
    let mut out = Vec::new();
    for d in candidates(model) {
        match power_laws(model, &d) {
            Ok(Some(laws)) => out.push((d, laws)),
            Ok(None) => {}
            Err(Overflow) => {
                return Err(Diagnostic::new(
                    Code::Number,
                    0..0,
                    "the exact regime slopes grew beyond the exact range",
                )
                .with_help("simplify the reaction coefficients"));
            }
        }
    }
    Ok(out)
}

/// The regimes that occur along a sweep, in order of the swept variable.
/// `range` is in bar (pO2) or kelvin (temperature). Returns an empty list
/// for temperature sweeps when some K has no ΔH.
pub fn regimes(model: &Model, sweep: Sweep, range: (f64, f64)) -> Result<Vec<Regime>, Diagnostic> {
    if let Sweep::Po2 { temperature } = sweep {
        model.ln_k(temperature)?;
    }
    let (u_lo, u_hi) = match sweep {
        Sweep::Po2 { .. } => (range.0.ln(), range.1.ln()),
        Sweep::Temperature { .. } => (1.0 / range.1, 1.0 / range.0),
    };
    let mut found: Vec<(f64, f64, Regime)> = Vec::new();
    for (dominance, laws) in all_regimes(model)? {
        let Some(form) = affine(model, &laws, sweep) else {
            return Ok(Vec::new());
        };
        if let Some((lo, hi)) = consistent_interval(model, &dominance, &form, u_lo, u_hi) {
            if hi - lo <= 1e-9 * (1.0 + lo.abs().max(hi.abs())) {
                continue;
            }
            // Ends that are the sweep's own ends are reported exactly.
            let (from, to) = match sweep {
                Sweep::Po2 { .. } => (
                    if lo <= u_lo { range.0 } else { lo.exp() },
                    if hi >= u_hi { range.1 } else { hi.exp() },
                ),
                Sweep::Temperature { .. } => (
                    if hi >= u_hi { range.0 } else { 1.0 / hi },
                    if lo <= u_lo { range.1 } else { 1.0 / lo },
                ),
            };
            found.push((
                lo,
                hi,
                Regime {
                    dominance,
                    laws,
                    from,
                    to,
                },
            ));
        }
    }
    match sweep {
        Sweep::Po2 { .. } => found.sort_by(|a, b| a.0.total_cmp(&b.0)),
        Sweep::Temperature { .. } => found.sort_by(|a, b| b.1.total_cmp(&a.1)),
    }
    Ok(found.into_iter().map(|(_, _, r)| r).collect())
}

/// The regime whose dominant terms are the largest at concentrations `ln_c`.
pub fn dominance_at(model: &Model, ln_c: &[f64]) -> Dominance {
    let pick = |filter: &dyn Fn(usize) -> Option<f64>| -> Option<usize> {
        (0..model.species.len())
            .filter_map(|s| filter(s).map(|w| (s, w.ln() + ln_c[s])))
            .max_by(|a, b| a.1.total_cmp(&b.1))
            .map(|(s, _)| s)
    };
    let positive = pick(&|s| {
        let z = model.species[s].charge;
        (z > 0).then(|| f64::from(z))
    });
    let negative = pick(&|s| {
        let z = model.species[s].charge;
        (z < 0).then(|| f64::from(-z))
    });
    let totals = model
        .totals
        .iter()
        .filter_map(|t| {
            pick(&|s| {
                let w = t.weights[s];
                (w > Q::from_integer(0)).then(|| q_f64(w))
            })
        })
        .collect();
    Dominance {
        positive,
        negative,
        totals,
    }
}

impl Regime {
    /// `d log[X]/d log pO2` of species `s`.
    pub fn slope(&self, model: &Model, s: usize) -> Q {
        model
            .oxygen()
            .map_or(Q::from_integer(0), |o| self.laws.gas[s][o])
    }

    /// The Brouwer condition: `n = 2[V_O••]`.
    pub fn neutrality(&self, model: &Model, style: Style) -> String {
        let term = |s: usize| {
            let z = model.species[s].charge.unsigned_abs();
            let symbol = model.symbol(s, style);
            if z == 1 {
                symbol.to_string()
            } else {
                format!("{z}{symbol}")
            }
        };
        match (self.dominance.negative, self.dominance.positive) {
            (Some(n), Some(p)) => format!("{} = {}", term(n), term(p)),
            _ => "no charged species".to_string(),
        }
    }

    /// `[Y_Zr′] = total` lines for the fixed totals.
    pub fn total_conditions(&self, model: &Model, style: Style) -> Vec<String> {
        model
            .totals
            .iter()
            .zip(&self.dominance.totals)
            .map(|(t, &d)| {
                let w = t.weights[d];
                let weight = if w == Q::from_integer(1) {
                    String::new()
                } else {
                    number::to_plain(w)
                };
                let subject = match style {
                    Style::Ascii => &t.subject_ascii,
                    _ => &t.subject_unicode,
                };
                format!("{weight}{} = total {subject}", model.symbol(d, style))
            })
            .collect()
    }

    /// Apparent formation enthalpy of species `s` in this regime (eV):
    /// Σ_r (d ln c/d ln K_r)·ΔH_r, when every K involved has a ΔH.
    pub fn enthalpy(&self, model: &Model, s: usize) -> Option<f64> {
        let mut sum = 0.0;
        for (r, e) in model.equilibria.iter().enumerate() {
            let x = q_f64(self.laws.k[s][r]);
            if x != 0.0 {
                sum += x * e.thermo?.enthalpy()?;
            }
        }
        Some(sum)
    }

    /// Species `s` as a power law: `n = 2^(1/3)·K_red^(1/3)·pO₂^(-1/6)`.
    pub fn power_law_text(&self, model: &Model, s: usize, style: Style) -> String {
        let mut parts: Vec<String> = Vec::new();
        let pow = |base: String, e: Q| -> String {
            if e == Q::from_integer(1) {
                base
            } else {
                match style {
                    Style::Latex => format!("{base}^{{{}}}", number::to_plain(e)),
                    _ => format!("{base}^({})", number::to_plain(e)),
                }
            }
        };
        for (base, e) in &self.laws.constant[s] {
            parts.push(pow(number::to_plain(*base), *e));
        }
        for (r, eq) in model.equilibria.iter().enumerate() {
            let e = self.laws.k[s][r];
            if e != Q::from_integer(0) {
                parts.push(pow(eq.law.k_symbol(style), e));
            }
        }
        for (g, gas) in model.gases.iter().enumerate() {
            let e = self.laws.gas[s][g];
            if e != Q::from_integer(0) {
                let symbol = match style {
                    Style::Ascii => gas.ascii.clone(),
                    Style::Unicode | Style::Html | Style::Markdown => gas.unicode.clone(),
                    Style::Latex => gas.latex.clone(),
                };
                parts.push(pow(symbol, e));
            }
        }
        for (j, t) in model.totals.iter().enumerate() {
            let e = self.laws.total[s][j];
            if e != Q::from_integer(0) {
                let subject = match style {
                    Style::Ascii => &t.subject_ascii,
                    _ => &t.subject_unicode,
                };
                parts.push(pow(format!("total({subject})"), e));
            }
        }
        let join = match style {
            Style::Ascii => " ",
            Style::Unicode | Style::Html | Style::Markdown => "·",
            Style::Latex => "\\,",
        };
        let body = if parts.is_empty() {
            "1".to_string()
        } else {
            parts.join(join)
        };
        format!("{} = {body}", model.symbol(s, style))
    }

    /// ln c_s predicted by the power laws at a temperature and pO2.
    pub fn ln_concentration(
        &self,
        model: &Model,
        s: usize,
        temperature: f64,
        po2: f64,
    ) -> Option<f64> {
        let form = affine(model, &self.laws, Sweep::Po2 { temperature })?;
        Some(form.alpha[s] + form.beta[s] * po2.ln())
    }
}

#[cfg(test)]
mod tests;
