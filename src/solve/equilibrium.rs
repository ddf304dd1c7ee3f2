//! Full numerical defect equilibria: every term kept, every point checked.
//!
//! In: a `Model` (or any `Network` with numbers), a temperature and pO2 (or
//! sweeps of either), and for the frozen-in case two temperatures. Out:
//! `Point`s with log concentrations, the relative electroneutrality
//! residual and a `converged` flag that is false (never silently) when the
//! residual is above 1e-12.
//!
//! Method. With the network's parametrisation `ln c_s = a_s + Σ_l w_ls y_l`
//! the mass-action laws hold for every `y`; the constraints (charge first,
//! then each fixed total) pick `y`. They are the gradient of the strictly
//! convex `Φ(y) = Σ_s c_s − Σ_t T_t y_t`, so each constraint, with the
//! inner ones solved, is a monotone function of its own variable. The
//! solver nests one-dimensional, bracketed, safeguarded Newton searches:
//! innermost the charge-like potential ψ, on h(ψ) = ln P − ln N (P, N the
//! positive and negative charge sums), whose slope is at least
//! min z₊ + min |z₋| ≥ 2, so one evaluation brackets the root; outside it
//! one search per fixed total, bracketed by expansion, with the exact slope
//! of the reduced function (a Schur complement of the Hessian of Φ).

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::model::Model;
use crate::model::network::{self, Level, Network, Row};

/// Relative electroneutrality (and total) residual a point must reach.
pub const TOLERANCE: f64 = 1e-12;

/// Residual the inner searches aim for, below `TOLERANCE` so that nested
/// rounding still passes the final check.
const INNER_TOLERANCE: f64 = 2e-14;

const MAX_ITERATIONS: usize = 200;

/// Largest step of an outer search before a bracket is known (ln units).
const MAX_STEP: f64 = 30.0;

/// ln(e^a + e^b) without overflow.
fn log_add(a: f64, b: f64) -> f64 {
    let (hi, lo) = if a >= b { (a, b) } else { (b, a) };
    if hi == f64::NEG_INFINITY {
        hi
    } else {
        hi + (lo - hi).exp().ln_1p()
    }
}

fn q_to_f64(q: Q) -> f64 {
    *q.numer() as f64 / *q.denom() as f64
}

/// The numbers of a network that the solver needs, laid out for speed.
#[derive(Debug, Clone)]
pub struct System {
    pub species: usize,
    pub levels: Vec<Level>,
    /// w[l * species + s]
    w: Vec<f64>,
    /// ln |w| (unused where w = 0).
    ln_w: Vec<f64>,
    /// Lower bound of dh/dψ for the charge level.
    charge_slope_bound: f64,
}

/// Scratch space reused between points so that sweeps do not allocate.
#[derive(Debug, Clone, Default)]
pub struct Work {
    e: Vec<f64>,
    c: Vec<f64>,
    /// The start value of a solve, to go back to.
    start: Vec<f64>,
    /// Evaluations of the concentrations in the last solve.
    pub evaluations: u32,
}

/// Outcome of one solve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome {
    pub converged: bool,
    /// Relative electroneutrality residual |Σ z c| / Σ |z| c (0 when nothing is charged).
    pub charge_residual: f64,
    /// Largest relative residual of a fixed total.
    pub total_residual: f64,
}

impl System {
    pub fn new(network: &Network) -> System {
        let species = network.species;
        let mut w = Vec::with_capacity(network.levels.len() * species);
        for row in &network.weights {
            w.extend(row.iter().map(|&q| q_to_f64(q)));
        }
        let ln_w = w
            .iter()
            .map(|x| if *x != 0.0 { x.abs().ln() } else { 0.0 })
            .collect();
        let mut charge_slope_bound = 0.0;
        if network.levels.first() == Some(&Level::Charge) {
            let row = &w[..species];
            let min_pos = row
                .iter()
                .filter(|z| **z > 0.0)
                .fold(f64::INFINITY, |a, &b| a.min(b));
            let min_neg = row
                .iter()
                .filter(|z| **z < 0.0)
                .fold(f64::INFINITY, |a, &b| a.min(-b));
            charge_slope_bound = min_pos + min_neg;
        }
        System {
            species,
            levels: network.levels.clone(),
            w,
            ln_w,
            charge_slope_bound,
        }
    }

    /// The same system with the charge level's weights replaced by `row`
    /// (a combination of the charge and the totals, so it spans the same
    /// solutions). Without a charge level it is returned unchanged.
    pub fn with_charge_row(&self, row: &[f64]) -> System {
        let mut copy = self.clone();
        if self.levels.first() == Some(&Level::Charge) && row.len() == self.species {
            for (s, &z) in row.iter().enumerate() {
                copy.w[s] = z;
                copy.ln_w[s] = if z != 0.0 { z.abs().ln() } else { 0.0 };
            }
            let min_pos = row
                .iter()
                .filter(|z| **z > 0.0)
                .fold(f64::INFINITY, |a, &b| a.min(b));
            let min_neg = row
                .iter()
                .filter(|z| **z < 0.0)
                .fold(f64::INFINITY, |a, &b| a.min(-b));
            copy.charge_slope_bound = min_pos + min_neg;
        }
        copy
    }

    fn weight(&self, level: usize, s: usize) -> f64 {
        self.w[level * self.species + s]
    }

    fn exponents(&self, a: &[f64], y: &[f64], work: &mut Work) {
        work.evaluations += 1;
        work.e.clear();
        work.e.extend_from_slice(a);
        for (l, &yl) in y.iter().enumerate() {
            let row = &self.w[l * self.species..(l + 1) * self.species];
            for (e, &wl) in work.e.iter_mut().zip(row) {
                *e += wl * yl;
            }
        }
    }

    /// (Σ_{w_ls > 0} w_ls c_s, Σ_{w_ls < 0} |w_ls| c_s) for one level.
    fn signed_sums(&self, level: usize, c: &[f64]) -> (f64, f64) {
        let row = &self.w[level * self.species..(level + 1) * self.species];
        let (mut positive, mut negative) = (0.0, 0.0);
        for (w, c) in row.iter().zip(c) {
            if *w > 0.0 {
                positive += w * c;
            } else if *w < 0.0 {
                negative -= w * c;
            }
        }
        (positive, negative)
    }

    /// ln Σ_{s: sign·w_ls > 0} |w_ls| e^{e_s}, and Σ w² c / Σ |w| c (the
    /// log-derivative), for one level and one sign.
    fn log_sum(&self, level: usize, positive: bool, e: &[f64]) -> (f64, f64) {
        let row = level * self.species;
        let mut max = f64::NEG_INFINITY;
        for (s, &es) in e.iter().enumerate() {
            let w = self.w[row + s];
            if (positive && w > 0.0) || (!positive && w < 0.0) {
                max = max.max(es + self.ln_w[row + s]);
            }
        }
        if max == f64::NEG_INFINITY {
            return (f64::NEG_INFINITY, 0.0);
        }
        let (mut sum, mut sum_w) = (0.0, 0.0);
        for (s, &es) in e.iter().enumerate() {
            let w = self.w[row + s];
            if (positive && w > 0.0) || (!positive && w < 0.0) {
                let t = (es + self.ln_w[row + s] - max).exp();
                sum += t;
                sum_w += t * w.abs();
            }
        }
        (max + sum.ln(), sum_w / sum)
    }

    /// Residual h and slope dh/dy_level of `level`, with the levels inside it
    /// already solved at the current point. For the charge level the target
    /// is the net charge Q the weighted sum must reach (0 for
    /// electroneutrality): h = ln(P + Q⁻) − ln(N + Q⁺).
    fn residual(&self, level: usize, targets: &[f64], work: &mut Work) -> (f64, f64) {
        match self.levels[level] {
            Level::Charge => {
                let (lp, dp) = self.log_sum(level, true, &work.e);
                let (ln, dn) = self.log_sum(level, false, &work.e);
                let q = targets.get(level).copied().unwrap_or(0.0);
                if q == 0.0 {
                    (lp - ln, dp + dn)
                } else if q > 0.0 {
                    // P = N + Q
                    let shifted = log_add(ln, q.ln());
                    (lp - shifted, dp + dn * (ln - shifted).exp())
                } else {
                    // P + |Q| = N
                    let shifted = log_add(lp, (-q).ln());
                    (shifted - ln, dp * (lp - shifted).exp() + dn)
                }
            }
            Level::Total(_) => {
                let (ls, _) = self.log_sum(level, true, &work.e);
                let h = ls - targets.get(level).copied().unwrap_or(0.0);
                (h, self.reduced_slope(level, ls, work))
            }
        }
    }

    /// d ln S_level / d y_level along the manifold where the inner levels hold:
    /// (H_kk − H_kI H_II⁻¹ H_Ik) / S_k, with H = Σ_s w_s w_sᵀ c_s.
    fn reduced_slope(&self, level: usize, ln_s: f64, work: &mut Work) -> f64 {
        let n = level + 1;
        // Scale concentrations by e^{-ln_s} so that S_k becomes 1.
        work.c.clear();
        work.c.extend(work.e.iter().map(|e| (e - ln_s).exp()));
        let mut h = [[0.0f64; 8]; 8];
        for (i, hi) in h.iter_mut().enumerate().take(n) {
            for (j, hij) in hi.iter_mut().enumerate().take(n) {
                let mut sum = 0.0;
                for (s, &c) in work.c.iter().enumerate() {
                    let (wi, wj) = (self.weight(i, s), self.weight(j, s));
                    if wi != 0.0 && wj != 0.0 {
                        sum += wi * wj * c;
                    }
                }
                *hij = sum;
            }
        }
        let k = level;
        if k == 0 {
            return h[0][0];
        }
        // Solve H_II x = H_Ik by Gaussian elimination with partial pivoting.
        let mut m = [[0.0f64; 9]; 8];
        for i in 0..k {
            for j in 0..k {
                m[i][j] = h[i][j];
            }
            m[i][k] = h[i][k];
        }
        for col in 0..k {
            let pivot = (col..k)
                .max_by(|&a, &b| m[a][col].abs().total_cmp(&m[b][col].abs()))
                .unwrap_or(col);
            m.swap(col, pivot);
            let p = m[col][col];
            if p.abs() < 1e-300 {
                return h[k][k];
            }
            let pivot_row = m[col];
            for (r, row) in m.iter_mut().enumerate().take(k) {
                if r != col {
                    let f = row[col] / p;
                    for (entry, pivot_entry) in
                        row.iter_mut().zip(pivot_row.iter()).take(k + 1).skip(col)
                    {
                        *entry -= f * pivot_entry;
                    }
                }
            }
        }
        let mut schur = h[k][k];
        for i in 0..k {
            schur -= h[k][i] * m[i][k] / m[i][i];
        }
        if schur > 0.0 && schur.is_finite() {
            schur
        } else {
            h[k][k]
        }
    }

    /// Solves level `level` (and all inside it) in place in `y`.
    fn solve_level(
        &self,
        level: usize,
        a: &[f64],
        ln_targets: &[f64],
        y: &mut [f64],
        work: &mut Work,
    ) -> bool {
        let inner_ok = |sys: &System, y: &mut [f64], work: &mut Work| -> bool {
            if level > 0 {
                sys.solve_level(level - 1, a, ln_targets, y, work)
            } else {
                sys.exponents(a, y, work);
                true
            }
        };
        // After an inner solve, `work.e` already holds the exponents at `y`.
        if !inner_ok(self, y, work) {
            return false;
        }
        let (mut h, mut d) = self.residual(level, ln_targets, work);
        // The slope bound brackets the root at once, but only for plain
        // electroneutrality (no offset charge).
        let is_charge = self.levels[level] == Level::Charge
            && ln_targets.get(level).copied().unwrap_or(0.0) == 0.0
            && self.charge_slope_bound.is_finite()
            && self.charge_slope_bound > 0.0;
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        let mut x = y[level];
        let mut last_abs = f64::INFINITY;
        for _ in 0..MAX_ITERATIONS {
            if !h.is_finite() {
                return false;
            }
            if h.abs() <= INNER_TOLERANCE {
                return true;
            }
            if h < 0.0 {
                lo = lo.max(x);
                if is_charge {
                    hi = hi.min(x - h / self.charge_slope_bound);
                }
            } else {
                hi = hi.min(x);
                if is_charge {
                    lo = lo.max(x - h / self.charge_slope_bound);
                }
            }
            let newton = if d > 0.0 && d.is_finite() {
                x - h / d
            } else {
                f64::NAN
            };
            let bracketed = lo.is_finite() && hi.is_finite();
            let mut next = if newton.is_finite() {
                newton
            } else if h < 0.0 {
                x + 1.0
            } else {
                x - 1.0
            };
            if bracketed {
                let slow = h.abs() > 0.5 * last_abs;
                if !(next > lo && next < hi) || (slow && last_abs.is_finite()) {
                    next = 0.5 * (lo + hi);
                }
                if hi - lo <= 4.0 * f64::EPSILON * (1.0 + x.abs()) {
                    // The bracket cannot shrink further: accept if close enough.
                    return h.abs() <= TOLERANCE;
                }
            } else {
                next = next.clamp(x - MAX_STEP, x + MAX_STEP);
            }
            last_abs = h.abs();
            x = next;
            y[level] = x;
            if !inner_ok(self, y, work) {
                return false;
            }
            (h, d) = self.residual(level, ln_targets, work);
        }
        false
    }

    /// Solves all constraints from the start value in `y`; on return `y`
    /// holds the solution and `ln_c` the log concentrations. `ln_targets`
    /// holds, per level, ln of the total for a fixed total and the net charge
    /// itself (0 for electroneutrality) for the charge level.
    pub fn solve(
        &self,
        a: &[f64],
        ln_targets: &[f64],
        y: &mut [f64],
        ln_c: &mut Vec<f64>,
        work: &mut Work,
    ) -> Outcome {
        work.evaluations = 0;
        let ok = if self.levels.is_empty() {
            self.exponents(a, y, work);
            true
        } else {
            self.solve_level(self.levels.len() - 1, a, ln_targets, y, work)
        };
        self.conclude(a, ln_targets, y, ln_c, work, ok)
    }

    /// Like `solve`, for a start value `y` predicted from neighbouring
    /// solutions (a sweep): first plain Newton steps on all levels at once,
    /// which from a close start converge in two or three evaluations; if
    /// they do not reach the tolerance within a few steps, or step far, the
    /// nested bracketed searches of `solve` start again from the prediction.
    /// The verdict is checked the same way either way.
    pub fn solve_predicted(
        &self,
        a: &[f64],
        ln_targets: &[f64],
        y: &mut [f64],
        ln_c: &mut Vec<f64>,
        work: &mut Work,
    ) -> Outcome {
        work.evaluations = 0;
        work.start.clear();
        work.start.extend_from_slice(y);
        if self.newton(a, ln_targets, y, work) {
            let outcome = self.conclude(a, ln_targets, y, ln_c, work, true);
            if outcome.converged {
                return outcome;
            }
        }
        y.copy_from_slice(&work.start);
        self.solve(a, ln_targets, y, ln_c, work)
    }

    /// Newton's method on Φ(y) = Σ_s c_s − Σ_t T_t y_t, whose gradient is
    /// the constraints (Σ_s w_ls c_s − T_l) and whose Hessian is
    /// Σ_s w_s w_sᵀ c_s. True when every constraint is within the inner
    /// tolerance at the final `y`, or the last step was too short to
    /// matter; the caller checks the residuals either way.
    fn newton(&self, a: &[f64], ln_targets: &[f64], y: &mut [f64], work: &mut Work) -> bool {
        const STEPS: usize = 6;
        /// A longer step means the prediction was poor: leave it to the searches.
        const LONGEST_STEP: f64 = 2.0;
        const SHORT_STEP: f64 = 1e-8;
        let n = self.levels.len();
        if n == 0 || n > 8 || y.len() != n {
            return false;
        }
        // Totals count with non-negative weights (see `residual`); anything
        // else is left to the searches.
        for (l, level) in self.levels.iter().enumerate() {
            let row = &self.w[l * self.species..(l + 1) * self.species];
            if matches!(level, Level::Total(_)) && row.iter().any(|w| *w < 0.0) {
                return false;
            }
        }
        for _ in 0..STEPS {
            self.exponents(a, y, work);
            work.c.clear();
            work.c.extend(work.e.iter().map(|e| e.exp()));
            if work.c.iter().any(|c| !c.is_finite()) {
                return false;
            }
            // Gradient, with the scale each residual is measured against.
            let mut g = [0.0f64; 8];
            let mut converged = true;
            for (l, level) in self.levels.iter().enumerate() {
                let row = &self.w[l * self.species..(l + 1) * self.species];
                let (mut sum, mut scale) = (0.0, 0.0);
                for (w, c) in row.iter().zip(&work.c) {
                    sum += w * c;
                    scale += w.abs() * c;
                }
                let target = match level {
                    Level::Charge => ln_targets.get(l).copied().unwrap_or(0.0),
                    Level::Total(_) => ln_targets.get(l).map_or(1.0, |t| t.exp()),
                };
                g[l] = sum - target;
                let relative = g[l].abs() / (scale + target.abs());
                if relative.is_nan() || relative > INNER_TOLERANCE {
                    converged = false;
                }
            }
            if converged {
                return true;
            }
            // Hessian, then H·dy = −g by elimination with partial pivoting.
            let mut m = [[0.0f64; 9]; 8];
            let species = self.species;
            for (i, row) in m.iter_mut().enumerate().take(n) {
                let wi = &self.w[i * species..(i + 1) * species];
                for (j, entry) in row.iter_mut().enumerate().take(n) {
                    let wj = &self.w[j * species..(j + 1) * species];
                    *entry = wi
                        .iter()
                        .zip(wj)
                        .zip(&work.c)
                        .map(|((a, b), c)| a * b * c)
                        .sum();
                }
                row[n] = -g[i];
            }
            for col in 0..n {
                let pivot = (col..n)
                    .max_by(|&p, &q| m[p][col].abs().total_cmp(&m[q][col].abs()))
                    .unwrap_or(col);
                m.swap(col, pivot);
                let p = m[col][col];
                if p == 0.0 || !p.is_finite() {
                    return false;
                }
                let pivot_row = m[col];
                for (r, row) in m.iter_mut().enumerate().take(n) {
                    if r != col {
                        let f = row[col] / p;
                        for (entry, pivot_entry) in
                            row.iter_mut().zip(pivot_row.iter()).take(n + 1).skip(col)
                        {
                            *entry -= f * pivot_entry;
                        }
                    }
                }
            }
            let mut longest = 0.0f64;
            for (l, yl) in y.iter_mut().enumerate() {
                let step = m[l][n] / m[l][l];
                if step.is_nan() || step.abs() > LONGEST_STEP {
                    return false;
                }
                *yl += step;
                longest = longest.max(step.abs());
            }
            // Convergence is quadratic: after a step this short the
            // residuals are at rounding level (the caller checks them).
            if longest <= SHORT_STEP {
                return true;
            }
        }
        false
    }

    /// The final evaluation at `y` and the verdict on it.
    fn conclude(
        &self,
        a: &[f64],
        ln_targets: &[f64],
        y: &[f64],
        ln_c: &mut Vec<f64>,
        work: &mut Work,
        ok: bool,
    ) -> Outcome {
        self.exponents(a, y, work);
        ln_c.clear();
        ln_c.extend_from_slice(&work.e);
        // In the normal range the sums are formed from the concentrations
        // themselves (one exponential per species); near overflow or
        // underflow, in logarithms.
        let largest = work.e.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let direct = largest.is_finite() && largest < 600.0;
        if direct {
            work.c.clear();
            work.c.extend(work.e.iter().map(|e| e.exp()));
        }
        let normal = |x: f64| x >= 1e-290;
        let mut charge_residual = 0.0;
        let mut total_residual = 0.0f64;
        for (l, level) in self.levels.iter().enumerate() {
            match level {
                Level::Charge => {
                    let q = ln_targets.get(l).copied().unwrap_or(0.0);
                    let sums = direct
                        .then(|| self.signed_sums(l, &work.c))
                        .filter(|(p, n)| normal(*p) && normal(*n));
                    charge_residual = match sums {
                        // |P − N − Q| / (P + N + |Q|)
                        Some((p, n)) => (p - n - q).abs() / (p + n + q.abs()),
                        None => {
                            let (lp, _) = self.log_sum(l, true, &work.e);
                            let (ln, _) = self.log_sum(l, false, &work.e);
                            if q == 0.0 {
                                // |P − N| / (P + N) = |tanh((ln P − ln N)/2)|
                                (0.5 * (lp - ln)).tanh().abs()
                            } else {
                                // The same, scaled to avoid overflow.
                                let top = lp.max(ln).max(q.abs().ln());
                                let (p, n, q) = ((lp - top).exp(), (ln - top).exp(), q / top.exp());
                                (p - n - q).abs() / (p + n + q.abs())
                            }
                        }
                    };
                }
                Level::Total(_) => {
                    let target = ln_targets.get(l).copied().unwrap_or(0.0);
                    let sum = direct
                        .then(|| self.signed_sums(l, &work.c).0)
                        .filter(|s| normal(*s));
                    let residual = match sum {
                        Some(s) => (s / target.exp() - 1.0).abs(),
                        None => {
                            let (ls, _) = self.log_sum(l, true, &work.e);
                            (ls - target).exp_m1().abs()
                        }
                    };
                    total_residual = total_residual.max(residual);
                }
            }
        }
        let finite = ln_c.iter().all(|x| x.is_finite());
        let converged = ok && finite && charge_residual <= TOLERANCE && total_residual <= TOLERANCE;
        Outcome {
            converged,
            charge_residual: if charge_residual.is_finite() {
                charge_residual
            } else {
                1.0
            },
            total_residual: if total_residual.is_finite() {
                total_residual
            } else {
                1.0
            },
        }
    }
}

/// One solved state.
#[derive(Debug, Clone, PartialEq)]
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
            Level::Charge => 0.0,
            Level::Total(t) => model.totals.get(*t).map_or(0.0, |t| t.amount.ln()),
        })
        .collect()
}

/// Extrapolates the previous solutions to a start value at `x`.
fn predict(history: &[(f64, Vec<f64>)], x: f64, y: &mut [f64]) {
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

fn remember(history: &mut Vec<(f64, Vec<f64>)>, x: f64, y: &[f64], converged: bool) {
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

/// The model with ionic defects frozen: only electronic equilibria run, and
/// every ionic quantity they conserve is held at its equilibrated value.
///
/// The charge balance is posed without the bulk of the frozen ionic charge:
/// each frozen family's total times the charge of its main member is a
/// constant, so it is taken out, and what remains (electrons, holes, the
/// charge-state changes of defects) must keep the net charge it had at
/// equilibrium. Written the plain way, minority carriers would come out of a
/// difference of two large, nearly equal ionic sums and lose their accuracy.
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
                Level::Charge => net_charge,
                Level::Total(j) => {
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

#[cfg(test)]
mod tests;
