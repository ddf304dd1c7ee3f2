//! Splits one isotherm of log σ versus log pO2 into straight pieces.
//!
//! Model: a continuous broken line (conductivity has no jumps), k pieces
//! joined at k − 1 knots placed between measured pressures. Method: for each
//! k, starting knots come from the exact best split into k independent
//! lines by dynamic programming (segment neighbourhood search, Auger and
//! Lawrence, Bull. Math. Biol. 51 (1989) 39); each knot is then moved to
//! the gap between neighbouring pressures that minimises the weighted
//! squares of the joined line (coordinate descent until no knot moves).
//! k is chosen by the Bayesian information criterion (Schwarz, Ann. Stat.
//! 6 (1978) 461), BIC = n·ln(WRSS/n) + (3k − 1)·ln n: k + 1 line
//! parameters, and each of the k − 1 knots counted twice, because a
//! position found by search is not a regular parameter and one count lets
//! straight noisy lines be cut far too often (measured by the tests: about
//! 15 % of 20-point lines with one count, about 3 % with two). The variance is estimated from the
//! data (stated uncertainties act as relative weights in the choice), so
//! uncertainties stated too small do not make the split finer. BIC is
//! lenient with knots placed by search (their position is not a regular
//! parameter), so afterwards a knot stays only where the change of slope
//! it carries is significant at the chosen confidence (Student's t from the
//! joint fit); the least significant knot is dropped and the rest refitted
//! until all pass. Each piece's slope and standard error come from the
//! joint fit.
//!
//! In: x = log10 pO2 ascending, y = log10 σ, optional weights. Out:
//! `Segmentation` with each piece's slope and the BIC of every k tried.

// The dynamic programme reads best with explicit indices.
#![allow(clippy::needless_range_loop)]

use super::linalg::{LineFit, Matrix, critical_value, fit_line, lstsq, normal_inverse};

/// Choices of the segmentation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct SegmentOptions {
    /// Fewest points in a piece (at least 3).
    pub min_points: usize,
    /// Most pieces tried.
    pub max_segments: usize,
    /// Confidence level at which a knot's change of slope must be significant.
    pub confidence: f64,
}

impl Default for SegmentOptions {
    fn default() -> Self {
        SegmentOptions {
            min_points: 3,
            max_segments: 5,
            confidence: 0.95,
        }
    }
}

/// One straight piece: points `start..end` of the sorted isotherm.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Piece {
    pub start: usize,
    pub end: usize,
    pub fit: LineFit,
}

/// BIC of the best split into `segments` pieces.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct BicEntry {
    pub segments: usize,
    pub wrss: f64,
    pub bic: f64,
}

#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Segmentation {
    pub pieces: Vec<Piece>,
    pub bic: Vec<BicEntry>,
    /// BIC of the runner-up minus BIC of the chosen k (evidence for the choice;
    /// above about 6 is usually called strong). `None` when only one k fitted.
    pub delta_bic: Option<f64>,
    /// Pieces BIC chose before insignificant knots were dropped.
    pub bic_segments: usize,
}

/// Numerical floor for the weighted mean square in the BIC, so that data
/// lying exactly on lines (rounding noise only) cannot drive ln(WRSS) to −∞
/// and reward extra pieces: 1e-6 decades rms.
const WRSS_FLOOR_PER_POINT: f64 = 1e-12;

/// How far (in points) one sweep of the knot search looks from a knot.
const KNOT_WINDOW: usize = 12;

/// A continuous broken line fitted with knots between points.
struct Joined {
    /// β0, β1, then one slope change per knot.
    beta: Vec<f64>,
    knots: Vec<f64>,
    /// Unscaled (AᵀWA)⁻¹.
    inverse: Option<Matrix>,
    wrss: f64,
}

fn joined_fit(x: &[f64], y: &[f64], w: &[f64], knots: &[f64]) -> Option<Joined> {
    let k = knots.len() + 2;
    let design: Matrix = x
        .iter()
        .zip(w)
        .map(|(xi, wi)| {
            let r = wi.sqrt();
            let mut row = vec![r, r * xi];
            row.extend(knots.iter().map(|c| r * (xi - c).max(0.0)));
            row
        })
        .collect();
    let rhs: Vec<f64> = y.iter().zip(w).map(|(yi, wi)| wi.sqrt() * yi).collect();
    let cols: Vec<usize> = (0..k).collect();
    let beta = lstsq(&design, &rhs, &cols)?;
    let wrss = design
        .iter()
        .zip(&rhs)
        .map(|(row, b)| {
            let f: f64 = row.iter().zip(&beta).map(|(a, c)| a * c).sum();
            (b - f).powi(2)
        })
        .sum();
    Some(Joined {
        beta,
        knots: knots.to_vec(),
        inverse: normal_inverse(&design, &cols),
        wrss,
    })
}

/// Segments sorted `x`, `y` with `weights` (1/s² of y). The split uses them
/// as relative weights; the standard errors use them as `absolute` weights
/// when they come from stated uncertainties. Returns `None` when fewer than
/// two distinct x values exist.
pub fn segment(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    absolute: bool,
    options: SegmentOptions,
) -> Option<Segmentation> {
    let n = x.len();
    if n < 2 || y.len() != n {
        return None;
    }
    let w: Vec<f64> = match weights {
        Some(w) if w.len() == n => {
            let mean = w.iter().sum::<f64>() / n as f64;
            w.iter().map(|v| v / mean).collect()
        }
        _ => vec![1.0; n],
    };
    let m = options.min_points.max(3);
    let kmax = options.max_segments.max(1).min((n / m).max(1));
    // cost[i][j]: WRSS of one line through points i..j (exclusive end),
    // infinite when too short or without distinct x.
    let mut cost = vec![vec![f64::INFINITY; n + 1]; n + 1];
    for i in 0..n {
        let (mut sw, mut mx, mut my, mut cxx, mut cxy, mut cyy) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
        for j in i..n {
            // Weighted running means and co-moments (West's update).
            let wj = w[j];
            sw += wj;
            let dx = x[j] - mx;
            let dy = y[j] - my;
            mx += wj * dx / sw;
            my += wj * dy / sw;
            cxx += wj * dx * (x[j] - mx);
            cxy += wj * dx * (y[j] - my);
            cyy += wj * dy * (y[j] - my);
            let len = j + 1 - i;
            if len >= m.min(n) && cxx > 1e-18 {
                cost[i][j + 1] = (cyy - cxy * cxy / cxx).max(0.0);
            }
        }
    }
    // A break between equal pressures would split repeated readings.
    let can_break = |at: usize| at > 0 && at < n && x[at] > x[at - 1];
    // best[k][j]: least WRSS of points 0..j in k pieces; from[k][j]: start of the last.
    let mut best = vec![vec![f64::INFINITY; n + 1]; kmax + 1];
    let mut from = vec![vec![0usize; n + 1]; kmax + 1];
    for j in 1..=n {
        best[1][j] = cost[0][j];
    }
    for k in 2..=kmax {
        for j in 1..=n {
            for i in 1..j {
                if !can_break(i) {
                    continue;
                }
                let c = best[k - 1][i] + cost[i][j];
                if c < best[k][j] {
                    best[k][j] = c;
                    from[k][j] = i;
                }
            }
        }
    }
    let nf = n as f64;
    let mid = |i: usize| (x[i - 1] + x[i]) / 2.0;
    let mut bic = Vec::new();
    let mut fits: Vec<(Vec<usize>, Joined)> = Vec::new();
    for k in 1..=kmax {
        if !best[k][n].is_finite() {
            continue;
        }
        // Starting breaks: the best split into independent lines.
        let mut breaks = Vec::new();
        let mut j = n;
        for level in (2..=k).rev() {
            j = from[level][j];
            breaks.push(j);
        }
        breaks.reverse();
        // A break is (index of the first point of the next piece, knot on
        // that point rather than midway before it).
        let mut breaks: Vec<(usize, bool)> = breaks.into_iter().map(|b| (b, false)).collect();
        let knot_of = |&(i, on_point): &(usize, bool)| if on_point { x[i] } else { mid(i) };
        let knots = |b: &[(usize, bool)]| b.iter().map(knot_of).collect::<Vec<f64>>();
        let Some(mut current) = joined_fit(x, y, &w, &knots(&breaks)) else {
            continue;
        };
        for _sweep in 0..20 {
            let mut moved = false;
            for idx in 0..breaks.len() {
                let lo = if idx == 0 { m } else { breaks[idx - 1].0 + m };
                let hi = if idx + 1 == breaks.len() {
                    n.saturating_sub(m)
                } else {
                    breaks[idx + 1].0.saturating_sub(m)
                };
                // A local window: the starting breaks are already near
                // the optimum, and this keeps long isotherms fast.
                let here = breaks[idx].0;
                let (lo, hi) = (
                    lo.max(here.saturating_sub(KNOT_WINDOW)),
                    hi.min(here + KNOT_WINDOW),
                );
                for cand in lo..=hi {
                    for on_point in [false, true] {
                        // A knot on a point needs distinct neighbours on both sides.
                        let usable = can_break(cand) && (!on_point || can_break(cand + 1));
                        if (cand, on_point) == breaks[idx] || !usable {
                            continue;
                        }
                        let mut trial = breaks.clone();
                        trial[idx] = (cand, on_point);
                        if let Some(f) = joined_fit(x, y, &w, &knots(&trial)) {
                            if f.wrss < current.wrss * (1.0 - 1e-12) {
                                current = f;
                                breaks = trial;
                                moved = true;
                            }
                        }
                    }
                }
            }
            if !moved {
                break;
            }
        }
        let breaks: Vec<usize> = breaks.iter().map(|b| b.0).collect();
        bic.push(BicEntry {
            segments: k,
            wrss: current.wrss,
            bic: nf * (current.wrss / nf).max(WRSS_FLOOR_PER_POINT).ln()
                + (3 * k - 1) as f64 * nf.ln(),
        });
        fits.push((breaks, current));
    }
    let chosen = bic
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.bic.total_cmp(&b.1.bic))
        .map(|(i, e)| (i, e.bic));
    let delta_bic = chosen.and_then(|(i, chosen_bic)| {
        bic.iter()
            .enumerate()
            .filter(|(j, _)| *j != i)
            .map(|(_, e)| e.bic - chosen_bic)
            .min_by(f64::total_cmp)
    });
    let Some((index, _)) = chosen else {
        // Too few points for the search: one line through everything.
        let fit = fit_line(x, y, weights, absolute)?;
        return Some(Segmentation {
            pieces: vec![Piece {
                start: 0,
                end: n,
                fit,
            }],
            bic,
            delta_bic: None,
            bic_segments: 1,
        });
    };
    let (mut breaks, mut joined) = fits.swap_remove(index);
    let bic_segments = breaks.len() + 1;
    while !breaks.is_empty() {
        let Some((weakest, t)) = weakest_knot(&joined, n, options.confidence) else {
            break;
        };
        if t >= 1.0 {
            break;
        }
        let mut knots = joined.knots.clone();
        knots.remove(weakest);
        breaks.remove(weakest);
        match joined_fit(x, y, &w, &knots) {
            Some(f) => joined = f,
            None => break,
        }
    }
    Some(Segmentation {
        pieces: pieces_of(x, y, weights, absolute, &breaks, &joined),
        bic,
        delta_bic,
        bic_segments,
    })
}

/// The knot whose change of slope is least significant, with |γ|/(crit·SE)
/// (below 1: not significant at `confidence`). The residual variance comes
/// from the normalised-weight fit, which is what the knot test needs.
fn weakest_knot(joined: &Joined, n: usize, confidence: f64) -> Option<(usize, f64)> {
    let params = joined.beta.len();
    let dof = n.checked_sub(params).filter(|d| *d > 0)?;
    let inverse = joined.inverse.as_ref()?;
    let s2 = joined.wrss / dof as f64;
    let crit = critical_value(confidence, Some(dof));
    (0..joined.knots.len())
        .filter_map(|j| {
            let se = (inverse.get(j + 2)?.get(j + 2)? * s2).max(0.0).sqrt();
            let gamma = joined.beta.get(j + 2)?.abs();
            let ratio = if se > 0.0 {
                gamma / (crit * se)
            } else {
                f64::INFINITY
            };
            Some((j, ratio))
        })
        .min_by(|a, b| a.1.total_cmp(&b.1))
}

/// Each piece's line, slope and standard error from the joint fit. The
/// covariance is scaled as in `fit_line`: by the residual variance without
/// stated uncertainties, by max(1, χ²/dof) with them.
fn pieces_of(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    absolute: bool,
    breaks: &[usize],
    joined: &Joined,
) -> Vec<Piece> {
    let n = x.len();
    let params = joined.beta.len();
    let dof = n.saturating_sub(params);
    // WRSS with the caller's weights (the joined fit used normalised ones).
    let weight = |i: usize| weights.and_then(|w| w.get(i).copied()).unwrap_or(1.0);
    let value = |xi: f64| -> f64 {
        let mut v = joined.beta[0] + joined.beta[1] * xi;
        for (c, g) in joined.knots.iter().zip(&joined.beta[2..]) {
            v += g * (xi - c).max(0.0);
        }
        v
    };
    let wrss: f64 = (0..n)
        .map(|i| weight(i) * (y[i] - value(x[i])).powi(2))
        .sum();
    let mean_w = if weights.is_some() {
        (0..n).map(weight).sum::<f64>() / n as f64
    } else {
        1.0
    };
    let chi2_reduced = (absolute && dof > 0).then(|| wrss / dof as f64);
    // The inverse was computed with weights divided by their mean.
    let (scale, se_dof) = if absolute {
        match chi2_reduced {
            Some(c) if c > 1.0 => (Some(c / mean_w), Some(dof)),
            _ => (Some(1.0 / mean_w), None),
        }
    } else if dof > 0 {
        (Some(wrss / mean_w / dof as f64), Some(dof))
    } else {
        (None, None)
    };
    let mut bounds = vec![0];
    bounds.extend_from_slice(breaks);
    bounds.push(n);
    bounds
        .windows(2)
        .enumerate()
        .map(|(i, b)| {
            let (start, end) = (b[0], b[1]);
            // Piece i: slope β1 + Σ_{j<i} γ_j, intercept β0 − Σ_{j<i} γ_j·κ_j.
            let slope = joined.beta[1] + joined.beta[2..2 + i].iter().sum::<f64>();
            let intercept = joined.beta[0]
                - joined.beta[2..2 + i]
                    .iter()
                    .zip(&joined.knots)
                    .map(|(g, c)| g * c)
                    .sum::<f64>();
            let mut g = vec![0.0; params];
            g[1] = 1.0;
            for v in g.iter_mut().skip(2).take(i) {
                *v = 1.0;
            }
            let variance = |gv: &[f64]| -> Option<f64> {
                let inv = joined.inverse.as_ref()?;
                let mut v = 0.0;
                for (r, gr) in gv.iter().enumerate() {
                    for (c, gc) in gv.iter().enumerate() {
                        v += gr * inv[r][c] * gc;
                    }
                }
                Some(v * scale?)
            };
            let slope_se = variance(&g).map(|v| v.max(0.0).sqrt());
            let residuals: Vec<f64> = (start..end).map(|k| y[k] - value(x[k])).collect();
            let rms = (residuals.iter().map(|r| r * r).sum::<f64>()
                / residuals.len().max(1) as f64)
                .sqrt();
            Piece {
                start,
                end,
                fit: LineFit {
                    slope,
                    intercept,
                    slope_se,
                    intercept_se: None,
                    covariance: None,
                    wrss,
                    rms,
                    points: end - start,
                    dof,
                    chi2_reduced,
                    se_dof: if scale.is_some() { se_dof } else { None },
                },
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_clean_bend_is_found_at_its_place() {
        // Two exact lines, slopes −1/4 and 0, meeting at x = −10.
        let x: Vec<f64> = (0..20).map(|i| -20.0 + i as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .map(|&v| if v < -10.0 { -0.25 * (v + 10.0) } else { 0.0 })
            .collect();
        let s = segment(&x, &y, None, false, SegmentOptions::default()).unwrap();
        assert_eq!(s.pieces.len(), 2);
        assert_eq!(s.pieces[0].end, 10);
        assert!((s.pieces[0].fit.slope + 0.25).abs() < 1e-9);
        assert!(s.pieces[1].fit.slope.abs() < 1e-9);
    }

    #[test]
    fn a_straight_line_stays_one_piece() {
        let x: Vec<f64> = (0..12).map(|i| i as f64).collect();
        // Small deterministic wiggle, no bend.
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, v)| 0.25 * v + if i % 2 == 0 { 0.01 } else { -0.01 })
            .collect();
        let s = segment(&x, &y, None, false, SegmentOptions::default()).unwrap();
        assert_eq!(s.pieces.len(), 1);
    }

    #[test]
    fn too_few_points_give_one_piece() {
        let s = segment(
            &[0.0, 1.0],
            &[0.0, 1.0],
            None,
            false,
            SegmentOptions::default(),
        )
        .unwrap();
        assert_eq!(s.pieces.len(), 1);
        assert!(s.pieces[0].fit.slope_se.is_none());
    }
}
