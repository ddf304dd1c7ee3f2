//! The bracketed root solver: the constraints of a network (charge, fixed
//! totals) solved for one set of offsets, with a verdict on the residuals.
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

use crate::base::number::Q;
use crate::model::network::{Constraint, Network};

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

/// An exact weight as a float.
pub(super) fn q_to_f64(q: Q) -> f64 {
    *q.numer() as f64 / *q.denom() as f64
}

/// The numbers of a network that the solver needs, laid out for speed.
#[derive(Debug, Clone)]
pub struct System {
    pub species: usize,
    pub levels: Vec<Constraint>,
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

/// Whether one solve converged, and its residuals.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct Convergence {
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
        if network.levels.first() == Some(&Constraint::Charge) {
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
        if self.levels.first() == Some(&Constraint::Charge) && row.len() == self.species {
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
            Constraint::Charge => {
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
            Constraint::Total(_) => {
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
        let is_charge = self.levels[level] == Constraint::Charge
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
    ) -> Convergence {
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
    ) -> Convergence {
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
            if matches!(level, Constraint::Total(_)) && row.iter().any(|w| *w < 0.0) {
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
                    Constraint::Charge => ln_targets.get(l).copied().unwrap_or(0.0),
                    Constraint::Total(_) => ln_targets.get(l).map_or(1.0, |t| t.exp()),
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
    ) -> Convergence {
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
                Constraint::Charge => {
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
                Constraint::Total(_) => {
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
        Convergence {
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
