//! The mixed-conductor decomposition of one isotherm:
//! σ = σ_ion°·pO2^c + σ_n°·pO2^a + σ_p°·pO2^b, with the exact exponents of
//! a regime (by default c = 0, a = −1/4, b = +1/4), fitted by non-negative
//! linear least squares. Derived: the ionic transference number versus pO2
//! and the electrolytic domain boundaries, where σ_n or σ_p equals σ_ion.
//!
//! In: pressures (bar), conductivities (S/cm), optional uncertainties, the
//! exponents. Out: `Decomposition` with standard errors, residuals and the
//! flags a reader needs to distrust it (poor fit, systematic residuals,
//! extrapolated boundaries).

use super::linalg::{Matrix, nnls, normal_inverse};
use crate::base::number::Q;

/// The three exponents of pO2, exact.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Exponents {
    pub ion: Q,
    pub n: Q,
    pub p: Q,
}

pub(crate) fn q_to_f64(q: Q) -> f64 {
    *q.numer() as f64 / *q.denom() as f64
}

/// A fitted non-negative term.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Estimate {
    pub value: f64,
    /// Standard error; `None` at the zero bound or without degrees of freedom.
    pub se: Option<f64>,
    /// The fit put this term at zero: the data do not detect it.
    pub at_bound: bool,
}

/// Where an electronic term equals the ionic one.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Boundary {
    pub po2_bar: f64,
    pub log10_po2: f64,
    pub log10_se: Option<f64>,
    /// Outside the measured pressures of this isotherm.
    pub extrapolated: bool,
}

/// One point of the fitted curves.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct CurvePoint {
    pub po2_bar: f64,
    pub sigma: f64,
    pub sigma_ion: f64,
    pub sigma_n: f64,
    pub sigma_p: f64,
    pub t_ion: f64,
}

#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Decomposition {
    pub exponents: Exponents,
    pub sigma_ion: Estimate,
    pub sigma_n: Estimate,
    pub sigma_p: Estimate,
    /// Covariance of (σ_ion°, σ_n°, σ_p°); rows and columns of terms at the
    /// bound are zero.
    pub covariance: [[f64; 3]; 3],
    /// `uncertainties` (1/s²) or `relative` (1/σ², constant relative error).
    pub weighting: &'static str,
    pub dof: usize,
    /// χ²/dof with stated uncertainties; `None` otherwise.
    pub chi2_reduced: Option<f64>,
    /// log10(σ_measured/σ_fit) per point, in the order given.
    pub residuals_log10: Vec<f64>,
    pub residual_rms_log10: f64,
    pub residual_max_log10: f64,
    /// Wald–Wolfowitz runs test on the residual signs (ordered by pO2):
    /// strongly negative z means long runs, a shape the model lacks.
    pub runs_z: Option<f64>,
    /// The residuals exceed what the uncertainties (or the rms limit) allow.
    pub poor: bool,
    /// The residuals run in long same-sign stretches.
    pub systematic: bool,
    /// pO2 where σ_n = σ_ion (low-pressure edge of the electrolytic domain).
    pub boundary_n: Option<Boundary>,
    /// pO2 where σ_p = σ_ion (high-pressure edge).
    pub boundary_p: Option<Boundary>,
    /// The ionic transference number on a grid over the measured pressures.
    pub curve: Vec<CurvePoint>,
}

impl Decomposition {
    /// σ_ion, σ_n, σ_p at `po2_bar`.
    pub fn terms(&self, po2_bar: f64) -> (f64, f64, f64) {
        let e = self.exponents;
        (
            self.sigma_ion.value * po2_bar.powf(q_to_f64(e.ion)),
            self.sigma_n.value * po2_bar.powf(q_to_f64(e.n)),
            self.sigma_p.value * po2_bar.powf(q_to_f64(e.p)),
        )
    }

    pub fn curve_point(&self, po2_bar: f64) -> CurvePoint {
        let (i, n, p) = self.terms(po2_bar);
        let total = i + n + p;
        CurvePoint {
            po2_bar,
            sigma: total,
            sigma_ion: i,
            sigma_n: n,
            sigma_p: p,
            t_ion: if total > 0.0 { i / total } else { 0.0 },
        }
    }
}

/// Options of the decomposition.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct DecomposeOptions {
    /// Without uncertainties, an rms residual above this (decades of σ)
    /// marks the fit poor.
    pub rms_limit: f64,
    /// Points of the transference-number curve.
    pub grid_points: usize,
}

/// Fits the decomposition. Errors are plain sentences for the report.
pub fn decompose(
    po2_bar: &[f64],
    sigma: &[f64],
    sigma_err: Option<&[f64]>,
    exponents: Exponents,
    options: DecomposeOptions,
) -> Result<Decomposition, String> {
    let m = po2_bar.len();
    let (c, a, b) = (exponents.ion, exponents.n, exponents.p);
    if c == a || c == b || a == b {
        return Err(
            "two terms have the same pO2 exponent, so the fit cannot tell them apart; choose a regime with distinct slopes"
                .into(),
        );
    }
    if m < 3 {
        return Err(format!(
            "{m} points cannot separate three terms; the decomposition needs at least 3 (4 for standard errors)"
        ));
    }
    let exps = [q_to_f64(c), q_to_f64(a), q_to_f64(b)];
    let scale_of = |i: usize| -> f64 {
        match sigma_err {
            Some(e) => e.get(i).copied().unwrap_or(1.0),
            None => sigma.get(i).copied().unwrap_or(1.0),
        }
    };
    let mut design: Matrix = (0..m)
        .map(|i| {
            exps.iter()
                .map(|e| po2_bar[i].powf(*e) / scale_of(i))
                .collect()
        })
        .collect();
    let rhs: Vec<f64> = (0..m).map(|i| sigma[i] / scale_of(i)).collect();
    // Unit-norm columns: pO2^(±1/4) spans decades, the solver should not care.
    let norms: Vec<f64> = (0..3)
        .map(|j| design.iter().map(|r| r[j] * r[j]).sum::<f64>().sqrt())
        .collect();
    if norms.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
        return Err("the pressures are out of the range the exponents can be evaluated in".into());
    }
    for row in &mut design {
        for (v, n) in row.iter_mut().zip(&norms) {
            *v /= n;
        }
    }
    let y = nnls(&design, &rhs)
        .ok_or("the least-squares problem is degenerate (too few distinct pressures)")?;
    let x: Vec<f64> = y.iter().zip(&norms).map(|(v, n)| v / n).collect();
    let active: Vec<usize> = (0..3).filter(|&j| x[j] > 0.0).collect();
    let chi2: f64 = (0..m)
        .map(|i| {
            let fit: f64 = (0..3).map(|j| design[i][j] * y[j]).sum();
            (rhs[i] - fit).powi(2)
        })
        .sum();
    let dof = m.saturating_sub(active.len());
    let chi2_reduced = (sigma_err.is_some() && dof > 0).then(|| chi2 / dof as f64);
    let variance_scale = match (sigma_err.is_some(), dof) {
        (true, 0) => Some(1.0),
        (true, _) => Some((chi2 / dof as f64).max(1.0)),
        (false, 0) => None,
        (false, _) => Some(chi2 / dof as f64),
    };
    let mut covariance = [[0.0; 3]; 3];
    if let (Some(s), Some(inv)) = (variance_scale, normal_inverse(&design, &active)) {
        for (ai, &j) in active.iter().enumerate() {
            for (bi, &l) in active.iter().enumerate() {
                covariance[j][l] = inv[ai][bi] * s / (norms[j] * norms[l]);
            }
        }
    }
    let have_cov = variance_scale.is_some();
    let estimate = |j: usize| Estimate {
        value: x[j],
        se: (have_cov && x[j] > 0.0).then(|| covariance[j][j].max(0.0).sqrt()),
        at_bound: x[j] <= 0.0,
    };
    let mut d = Decomposition {
        exponents,
        sigma_ion: estimate(0),
        sigma_n: estimate(1),
        sigma_p: estimate(2),
        covariance,
        weighting: if sigma_err.is_some() {
            "uncertainties"
        } else {
            "relative"
        },
        dof,
        chi2_reduced,
        residuals_log10: Vec::new(),
        residual_rms_log10: 0.0,
        residual_max_log10: 0.0,
        runs_z: None,
        poor: false,
        systematic: false,
        boundary_n: None,
        boundary_p: None,
        curve: Vec::new(),
    };
    d.residuals_log10 = (0..m)
        .map(|i| {
            let (ion, n, p) = d.terms(po2_bar[i]);
            (sigma[i] / (ion + n + p)).log10()
        })
        .collect();
    d.residual_rms_log10 = (d.residuals_log10.iter().map(|r| r * r).sum::<f64>() / m as f64).sqrt();
    d.residual_max_log10 = d.residuals_log10.iter().fold(0.0f64, |s, r| s.max(r.abs()));
    d.poor = match chi2_reduced {
        Some(c) => c > chi2_reduced_limit(dof),
        None => d.residual_rms_log10 > options.rms_limit,
    } || d.residuals_log10.iter().any(|r| !r.is_finite());
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&i, &j| po2_bar[i].total_cmp(&po2_bar[j]));
    let ordered: Vec<f64> = order.iter().map(|&i| d.residuals_log10[i]).collect();
    d.runs_z = runs_z(&ordered);
    // Rounding noise has no shape worth reporting: below 1e-6 decades, skip.
    d.systematic = d.residual_rms_log10 > 1e-6 && m >= 10 && d.runs_z.is_some_and(|z| z < -2.326);
    let (lo, hi) = po2_bar
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), p| {
            (l.min(p.log10()), h.max(p.log10()))
        });
    d.boundary_n = boundary(&d, 1, q_to_f64(a) - q_to_f64(c), lo, hi);
    d.boundary_p = boundary(&d, 2, q_to_f64(b) - q_to_f64(c), lo, hi);
    let g = options.grid_points.max(2);
    d.curve = (0..g)
        .map(|k| {
            let lp = lo + (hi - lo) * k as f64 / (g - 1) as f64;
            d.curve_point(10f64.powf(lp))
        })
        .collect();
    Ok(d)
}

/// log10 pO2 where term `j` (1 = n, 2 = p) equals the ionic term:
/// σ_ion°·P^c = σ_j°·P^e ⇒ log P = (log σ_ion° − log σ_j°)/(e − c). The
/// standard error follows from the covariance (first-order propagation).
fn boundary(d: &Decomposition, j: usize, exponent_gap: f64, lo: f64, hi: f64) -> Option<Boundary> {
    let ion = d.sigma_ion.value;
    let other = if j == 1 {
        d.sigma_n.value
    } else {
        d.sigma_p.value
    };
    if !(ion > 0.0 && other > 0.0) {
        return None;
    }
    let log10_po2 = (ion.log10() - other.log10()) / exponent_gap;
    let ln10 = std::f64::consts::LN_10;
    let se = (d.sigma_ion.se.is_some()).then(|| {
        let vu = d.covariance[0][0] / (ion * ion);
        let vv = d.covariance[j][j] / (other * other);
        let cuv = d.covariance[0][j] / (ion * other);
        ((vu + vv - 2.0 * cuv).max(0.0)).sqrt() / (exponent_gap.abs() * ln10)
    });
    Some(Boundary {
        po2_bar: 10f64.powf(log10_po2),
        log10_po2,
        log10_se: se,
        extrapolated: log10_po2 < lo || log10_po2 > hi,
    })
}

/// Upper 1 % point of χ²/dof by the Wilson–Hilferty approximation
/// (Wilson and Hilferty, PNAS 17 (1931) 684): (1 − 2/(9ν) + z·√(2/(9ν)))³.
pub fn chi2_reduced_limit(dof: usize) -> f64 {
    let nu = dof.max(1) as f64;
    let z = 2.326_347_874; // standard normal 0.99 quantile
    let a = 2.0 / (9.0 * nu);
    (1.0 - a + z * a.sqrt()).powi(3)
}

/// z statistic of the number of sign runs (Wald and Wolfowitz, Ann. Math.
/// Stat. 11 (1940) 147); `None` with too few residuals of either sign.
fn runs_z(residuals: &[f64]) -> Option<f64> {
    let signs: Vec<bool> = residuals
        .iter()
        .filter(|r| **r != 0.0)
        .map(|r| *r > 0.0)
        .collect();
    let n1 = signs.iter().filter(|s| **s).count() as f64;
    let n2 = signs.len() as f64 - n1;
    if n1 < 2.0 || n2 < 2.0 {
        return None;
    }
    let runs = 1 + signs.windows(2).filter(|w| w[0] != w[1]).count();
    let n = n1 + n2;
    let mean = 2.0 * n1 * n2 / n + 1.0;
    let var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n * n * (n - 1.0));
    (var > 0.0).then(|| (runs as f64 - mean) / var.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn default_exponents() -> Exponents {
        Exponents {
            ion: Q::new(0, 1),
            n: Q::new(-1, 4),
            p: Q::new(1, 4),
        }
    }

    const OPTS: DecomposeOptions = DecomposeOptions {
        rms_limit: 0.03,
        grid_points: 11,
    };

    #[test]
    fn exact_data_are_recovered_and_boundaries_follow() {
        let (si, sn, sp) = (1e-2, 1e-7, 1e-4);
        let p: Vec<f64> = (0..25).map(|k| 10f64.powf(-24.0 + k as f64)).collect();
        let s: Vec<f64> = p
            .iter()
            .map(|x| si + sn * x.powf(-0.25) + sp * x.powf(0.25))
            .collect();
        let d = decompose(&p, &s, None, default_exponents(), OPTS).unwrap();
        assert!((d.sigma_ion.value / si - 1.0).abs() < 1e-9);
        assert!((d.sigma_n.value / sn - 1.0).abs() < 1e-9);
        assert!((d.sigma_p.value / sp - 1.0).abs() < 1e-9);
        // σ_n°·P^−¼ = σ_ion ⇒ P = (σ_n°/σ_ion)^4 = 1e-20; σ_p: (σ_ion/σ_p°)^4 = 1e8.
        let bn = d.boundary_n.unwrap();
        assert!((bn.log10_po2 + 20.0).abs() < 1e-6 && !bn.extrapolated);
        let bp = d.boundary_p.unwrap();
        assert!((bp.log10_po2 - 8.0).abs() < 1e-6 && bp.extrapolated);
        assert!(!d.poor);
    }

    #[test]
    fn absent_term_sits_at_the_bound() {
        let p: Vec<f64> = (0..10)
            .map(|k| 10f64.powf(-20.0 + 2.0 * k as f64))
            .collect();
        let s: Vec<f64> = p.iter().map(|x| 1e-2 + 1e-8 * x.powf(-0.25)).collect();
        let d = decompose(&p, &s, None, default_exponents(), OPTS).unwrap();
        assert!(d.sigma_p.at_bound && d.sigma_p.se.is_none());
        assert!(d.boundary_p.is_none());
    }

    #[test]
    fn wrong_shape_is_flagged() {
        // A −1/6 branch fitted with the −1/4 basis leaves curved residuals.
        let p: Vec<f64> = (0..21)
            .map(|k| 10f64.powf(-25.0 + 1.25 * k as f64))
            .collect();
        let s: Vec<f64> = p.iter().map(|x| 1e-3 + 1e-6 * x.powf(-1.0 / 6.0)).collect();
        let d = decompose(&p, &s, None, default_exponents(), OPTS).unwrap();
        assert!(d.poor || d.systematic, "{d:?}");
    }

    #[test]
    fn equal_exponents_are_refused() {
        let e = Exponents {
            ion: Q::new(-1, 6),
            n: Q::new(-1, 6),
            p: Q::new(1, 6),
        };
        assert!(decompose(&[1.0, 2.0, 3.0], &[1.0, 1.0, 1.0], None, e, OPTS).is_err());
    }

    #[test]
    fn chi2_limit_is_near_the_tabulated_point() {
        // source: NIST/SEMATECH e-Handbook, 1.3.6.7.4 (upper critical values of
        // χ²): ν = 10, α = 0.01 → 23.209, so χ²/ν ≈ 2.32.
        assert!((chi2_reduced_limit(10) - 2.3209).abs() < 0.01);
    }
}
