//! Equilibria over a range: the pO2 sweep at the model temperature, the
//! temperature sweep at a fixed pO2 and the frozen-in states, each with
//! its exact regimes where they exist, and the warnings a reader needs
//! (points that did not converge, defects beyond the dilute limit).
//!
//! In: a built `Model` and `ScanOptions`. Out: a `Scan` (what was
//! computed, the points, the regimes, warnings and notes). The `brouwer`
//! command, the library and any other front-end call `scan`.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::generate::dope::level::Composition;
use crate::model::Model;
use crate::model::thermo::{sig, temperature_text};
use crate::solve::equilibrium::{self, Point};
use crate::solve::regimes::{self, Regime, Sweep};
use std::fmt;

/// The most points one scan computes.
pub const MAX_POINTS: usize = 1_000_000;

/// Site fraction above which the dilute ideal model is flagged.
pub const DILUTE_LIMIT: f64 = 0.01;

/// What to sweep.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum Along {
    /// pO2 over the model's range at the model's temperature.
    Po2,
    /// Temperature from `from` to `to` kelvin at a fixed pO2 (bar).
    Temperature { from: f64, to: f64, po2: f64 },
    /// pO2 over the model's range: equilibrate at the model temperature,
    /// freeze the ionic defects, re-equilibrate electrons and holes at
    /// `quench` kelvin.
    FrozenPo2 { quench: f64 },
    /// Equilibrate at the model temperature and `po2` bar, freeze, and
    /// re-equilibrate electrons and holes from `from` to `to` kelvin.
    FrozenTemperature { from: f64, to: f64, po2: f64 },
    /// The amount of fixed total `total` (an index into `Model::totals`)
    /// from `from` to `to` per formula unit, at the model temperature and
    /// `po2` bar; `per_decade` points per decade of the amount.
    Dopant {
        total: usize,
        from: f64,
        to: f64,
        po2: f64,
    },
}

/// How to scan.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct ScanOptions {
    pub along: Along,
    /// Points per decade of pO2 (clamped to 1..=10 000).
    pub per_decade: u32,
    /// Points of a temperature sweep (clamped to 2..=100 000).
    pub steps: u32,
}

impl ScanOptions {
    /// A scan along `along` with 10 points per pO2 decade and 101
    /// temperatures.
    pub fn new(along: Along) -> ScanOptions {
        ScanOptions {
            along,
            per_decade: 10,
            steps: 101,
        }
    }

    /// The pO2 sweep at the model temperature.
    pub fn po2() -> ScanOptions {
        ScanOptions::new(Along::Po2)
    }

    /// Sets the points per decade of pO2.
    pub fn per_decade(mut self, n: u32) -> ScanOptions {
        self.per_decade = n;
        self
    }

    /// Sets the number of temperatures.
    pub fn steps(mut self, n: u32) -> ScanOptions {
        self.steps = n;
        self
    }
}

/// What was computed, with the conditions that held.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Mode {
    Po2 {
        temperature: f64,
    },
    Temperature {
        po2: f64,
    },
    FrozenPo2 {
        high: f64,
        low: f64,
    },
    FrozenTemperature {
        high: f64,
        po2: f64,
    },
    /// Along the amount of fixed total `total`.
    Dopant {
        temperature: f64,
        po2: f64,
        total: usize,
    },
}

impl Mode {
    /// Whether the points run along pO2 (else along temperature).
    pub fn by_po2(self) -> bool {
        matches!(self, Mode::Po2 { .. } | Mode::FrozenPo2 { .. })
    }

    /// Whether the ionic defects were frozen in.
    pub fn frozen(self) -> bool {
        matches!(
            self,
            Mode::FrozenPo2 { .. } | Mode::FrozenTemperature { .. }
        )
    }
}

/// The result of a scan.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Scan {
    pub mode: Mode,
    pub points: Vec<Point>,
    /// The exact regimes along the sweep (none for frozen-in states, nor
    /// along temperature without dH for every equilibrium).
    pub regimes: Vec<Regime>,
    /// Points that did not converge; defects beyond the dilute limit.
    pub warnings: Vec<Diagnostic>,
    /// Plain statements about what the numbers are.
    pub notes: Vec<String>,
    /// Along a dopant: the amount (per formula unit) of each point; else
    /// empty.
    pub dopant: Vec<f64>,
}

impl Scan {
    /// Whether every point converged.
    pub fn converged(&self) -> bool {
        self.points.iter().all(|p| p.converged)
    }
}

/// Why a scan was not run.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum ScanError {
    /// More points than `MAX_POINTS` were asked for.
    TooManyPoints { wanted: f64 },
    /// A range that does not run from low to high (or, for an amount, does
    /// not start above zero).
    EmptyRange,
    /// A dopant scan names a fixed total the model does not have.
    NoSuchTotal { index: usize, totals: usize },
    /// The model cannot be solved as asked (located in the model's text
    /// where possible).
    Model(Diagnostic),
}

impl fmt::Display for ScanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ScanError::TooManyPoints { wanted } => write!(
                f,
                "{wanted:.0} pO2 points is more than {MAX_POINTS}; lower the points per decade or narrow the range"
            ),
            ScanError::EmptyRange => write!(f, "the range must run from low to high"),
            ScanError::NoSuchTotal { index, totals } => write!(
                f,
                "the model has {totals} fixed total{}, so there is no total number {}",
                if *totals == 1 { "" } else { "s" },
                index + 1
            ),
            ScanError::Model(d) => write!(f, "{d}"),
        }
    }
}

impl std::error::Error for ScanError {}

impl From<Diagnostic> for ScanError {
    fn from(d: Diagnostic) -> Self {
        ScanError::Model(d)
    }
}

/// Solves `model` along the sweep of `options`.
///
/// ```
/// use lacuna::{ModelBuilder, ScanOptions, scan};
/// use lacuna::host::Host;
///
/// let model = ModelBuilder::new(Host::from_spec("ZrO2").unwrap())
///     .reaction_text("gap", "nil -> e' + h.")
///     .k("gap", 1e-20, Some(1273.0))
///     .reaction_text("red", "O_O -> V_O.. + 2e' + 1/2 O2(g)")
///     .k("red", 1e-30, Some(1273.0))
///     .temperature(1273.0)
///     .build()
///     .unwrap();
/// let result = scan(&model, &ScanOptions::po2().per_decade(1)).unwrap();
/// assert!(result.converged());
/// // source: common practice (Brouwer approximation; Kofstad 1972, from
/// // memory): at low pO2 n = 2[V_O••] and n ∝ pO2^(−1/6).
/// let n = model.species.iter().position(|s| s.unicode == "n").unwrap();
/// assert_eq!(lacuna::base::number::to_plain(result.regimes[0].slope(&model, n)), "-1/6");
/// ```
pub fn scan(model: &Model, options: &ScanOptions) -> Result<Scan, ScanError> {
    let per_decade = f64::from(options.per_decade.clamp(1, 10_000));
    let steps = options.steps.clamp(2, 100_000) as usize;
    let (lo, hi) = model.po2_range;
    let points_wanted = ((hi.log10() - lo.log10()) * per_decade).ceil().max(1.0) + 1.0;
    if points_wanted > MAX_POINTS as f64 {
        return Err(ScanError::TooManyPoints {
            wanted: points_wanted,
        });
    }
    let po2_grid = || equilibrium::log_grid(lo, hi, points_wanted as usize);
    let mut notes = Vec::new();
    let mut dopant = Vec::new();
    let (mode, points, regimes) = match options.along {
        Along::Po2 => {
            let t = model.require_temperature()?;
            let points = equilibrium::po2_sweep(model, t, &po2_grid())?;
            let regimes = regimes::regimes(model, Sweep::Po2 { temperature: t }, model.po2_range)?;
            (Mode::Po2 { temperature: t }, points, regimes)
        }
        Along::Temperature { from, to, po2 } => {
            if from >= to {
                return Err(ScanError::EmptyRange);
            }
            let temps = equilibrium::inverse_grid(from, to, steps);
            let points = equilibrium::temperature_sweep(model, po2, &temps)?;
            let regimes = regimes::regimes(model, Sweep::Temperature { po2 }, (from, to))?;
            (Mode::Temperature { po2 }, points, regimes)
        }
        Along::FrozenPo2 { quench } => {
            let high = model.require_temperature()?;
            notes.push(frozen_note(high));
            let points = equilibrium::frozen_sweep(model, high, &po2_grid(), &[quench])?;
            (Mode::FrozenPo2 { high, low: quench }, points, Vec::new())
        }
        Along::FrozenTemperature { from, to, po2 } => {
            let high = model.require_temperature()?;
            notes.push(frozen_note(high));
            if from >= to {
                return Err(ScanError::EmptyRange);
            }
            let temps = equilibrium::inverse_grid(from, to, steps);
            let points = equilibrium::frozen_sweep(model, high, &[po2], &temps)?;
            (Mode::FrozenTemperature { high, po2 }, points, Vec::new())
        }
        Along::Dopant {
            total,
            from,
            to,
            po2,
        } => {
            if total >= model.totals.len() {
                return Err(ScanError::NoSuchTotal {
                    index: total,
                    totals: model.totals.len(),
                });
            }
            if !(from > 0.0 && from < to) {
                return Err(ScanError::EmptyRange);
            }
            let t = model.require_temperature()?;
            let wanted = ((to.log10() - from.log10()) * per_decade).ceil().max(1.0) + 1.0;
            if wanted > MAX_POINTS as f64 {
                return Err(ScanError::TooManyPoints { wanted });
            }
            dopant = equilibrium::log_grid(from, to, wanted as usize);
            let mut at = model.clone();
            let mut points = Vec::with_capacity(dopant.len());
            for &amount in &dopant {
                at.totals[total].amount = amount;
                points.extend(equilibrium::po2_sweep(&at, t, &[po2])?);
            }
            notes.push(
                "exact regimes are not computed along a dopant amount; the dopant slopes of the pO2 regimes give d log[X] / d log(total)".to_string(),
            );
            (
                Mode::Dopant {
                    temperature: t,
                    po2,
                    total,
                },
                points,
                Vec::new(),
            )
        }
    };
    let mut warnings = Vec::new();
    warnings.extend(convergence_warning(&points));
    warnings.extend(dilute_warning(&points, mode, &dopant));
    if regimes.is_empty() && matches!(mode, Mode::Temperature { .. }) {
        notes.push("exact regimes along temperature need dH for every equilibrium".to_string());
    }
    if mode.frozen() {
        notes.push("exact regimes are not computed for frozen-in states; the numbers are the full solution".to_string());
    }
    if !model.reference_only.is_empty() {
        notes.push(format!(
            "shown for reference only (no data): {}",
            model.reference_only.join(", ")
        ));
    }
    Ok(Scan {
        mode,
        points,
        regimes,
        warnings,
        notes,
        dopant,
    })
}

fn frozen_note(high: f64) -> String {
    format!(
        "frozen-in: equilibrated at {}, ionic defects then held fixed while electrons and holes re-equilibrate",
        temperature_text(high)
    )
}

/// The warning for points that did not converge, naming the first five.
fn convergence_warning(points: &[Point]) -> Option<Diagnostic> {
    let failed: Vec<&Point> = points.iter().filter(|p| !p.converged).collect();
    if failed.is_empty() {
        return None;
    }
    let listed: Vec<String> = failed
        .iter()
        .take(5)
        .map(|p| {
            format!(
                "pO2 {} bar at {} K (residual {})",
                sig(p.po2, 3),
                sig(p.temperature, 5),
                sig(p.residual.max(p.total_residual), 2)
            )
        })
        .collect();
    Some(
        Diagnostic::new(
            Code::NotConverged,
            0..0,
            format!(
                "{} of {} points did not converge: {}",
                failed.len(),
                points.len(),
                listed.join("; ")
            ),
        )
        .with_help(
            "these points are marked converged = false; check for extreme K values or totals",
        ),
    )
}

/// Whether a point's defects pass the dilute limit.
pub fn beyond_dilute_limit(point: &Point) -> bool {
    point.site_fraction > DILUTE_LIMIT
}

/// The warning for points whose defects pass the dilute limit: where, and
/// the largest site fraction. `dopant`: the amount of each point along a
/// dopant, else empty.
pub fn dilute_warning(points: &[Point], mode: Mode, dopant: &[f64]) -> Option<Diagnostic> {
    let beyond: Vec<usize> = (0..points.len())
        .filter(|&i| beyond_dilute_limit(&points[i]))
        .collect();
    let dilute: Vec<&Point> = beyond.iter().map(|&i| &points[i]).collect();
    let (first, last) = (dilute.first()?, dilute.last()?);
    let worst = dilute.iter().map(|p| p.site_fraction).fold(0.0, f64::max);
    let place = if dilute.len() == points.len() {
        "at every point".to_string()
    } else if let Mode::Dopant { .. } = mode {
        let amount = |i: Option<&usize>| i.and_then(|&i| dopant.get(i)).copied();
        format!(
            "for totals from {} to {} per formula unit",
            sig(amount(beyond.first()).unwrap_or(f64::NAN), 3),
            sig(amount(beyond.last()).unwrap_or(f64::NAN), 3)
        )
    } else if mode.by_po2() {
        format!(
            "for pO2 from {} to {} bar",
            sig(first.po2, 3),
            sig(last.po2, 3)
        )
    } else {
        format!(
            "from {} to {}",
            temperature_text(first.temperature),
            temperature_text(last.temperature)
        )
    };
    Some(
        Diagnostic::new(
            Code::DiluteLimit,
            0..0,
            format!(
                "defects exceed {} % of the sites {place} (largest site fraction {}): the dilute ideal model is not trustworthy there",
                DILUTE_LIMIT * 100.0,
                sig(worst, 3)
            ),
        )
        .with_help("defect interactions, association and site exclusion matter at these levels; treat the numbers as a first estimate"),
    )
}

/// Said whenever a defect fraction of a composition passes the dilute
/// limit: the numbers stay exact bookkeeping, but the dilute-solution
/// picture behind activities fails.
pub fn composition_note(c: &Composition) -> Option<&'static str> {
    let largest = c
        .defects
        .iter()
        .map(|d| d.fraction)
        .max()
        .unwrap_or_default();
    // DILUTE_LIMIT, exactly.
    (largest > Q::new(1, 100)).then_some(
        "above about 1 % defects interact and associate; these fractions are bookkeeping of the composition, not activities, and the dilute picture does not hold here",
    )
}
