//! Defect models: reaction files read as equilibria with data.
//! Grammar: grammar/model.md.
//!
//! In: the text of a reaction file (host, labelled reactions, model lines:
//! `K`, `dH`, `dS`, `fix`, `temperature`, `po2`, `pressure`). Out: first a
//! `Document` (every line read, every problem a located diagnostic), then a
//! `Model`: the concentration species, the equilibria with their
//! thermodynamic data, the fixed totals converted to amounts per formula
//! unit, the automatically built electroneutrality, and the exact
//! log-linear `Network` the solvers work on. `read` turns the text into the
//! `Document`, `build` assembles the `Model`; this file holds the model's
//! types and accessors.

mod build;
pub mod builder;
pub mod law;
pub mod laws;
pub mod network;
mod read;
pub mod thermo;

pub use build::resolve_thermo;
pub use read::*;

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::host::Host;
use crate::model::law::{FactorKind, Law};
use crate::model::network::Row;
use crate::model::thermo::Thermo;
use crate::notation::Style;

/// Default pO2 range of a sweep, in bar.
pub const DEFAULT_PO2_RANGE: (f64, f64) = (1e-30, 1e5);

// ---------------------------------------------------------------------------
// The assembled model.

/// A species whose concentration the model solves for.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct ModelSpecies {
    pub key: String,
    pub kind: FactorKind,
    pub charge: i32,
    /// `[V_O..]`, `n`.
    pub ascii: String,
    /// `[V_O••]`, `n`.
    pub unicode: String,
    pub latex: String,
    /// (sublattice index, sites taken) per formula unit of the species.
    pub sites: Vec<(usize, Q)>,
    /// Ionic content `(occupant-on-site identity, count)`, charges ignored:
    /// what a `fix` counts.
    pub content: Vec<(String, Q)>,
    /// What stays fixed when ionic defects are frozen in (`None` for e′, h•).
    pub frozen_identity: Option<String>,
}

/// An equilibrium with data.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Equilibrium {
    pub label: String,
    pub law: Law,
    /// `None` only in a model built with `Overrides::slopes_only` from a
    /// reaction without data: its K is unknown and never evaluated.
    pub thermo: Option<Thermo>,
    pub row: Row,
    /// Only electrons and holes change: it still runs when ionic defects are frozen.
    pub electronic: bool,
    /// The line of the reaction and of its first data line.
    pub line: u32,
    pub data_line: u32,
}

/// A gas in the model: O2 is swept, the others have fixed pressures.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Gas {
    pub key: String,
    pub ascii: String,
    pub unicode: String,
    pub latex: String,
    /// `None` for O2 (swept).
    pub pressure: Option<f64>,
}

/// A fixed total (a dopant level).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Total {
    pub subject_unicode: String,
    pub subject_ascii: String,
    pub identity: String,
    /// Weight of each model species (count of the subject in it).
    pub weights: Vec<Q>,
    /// Amount per formula unit of the host.
    pub amount: f64,
    /// How the amount was given and what it became.
    pub description: String,
    pub line: u32,
}

/// A model ready to solve.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Model {
    pub source: String,
    pub host: Host,
    pub species: Vec<ModelSpecies>,
    pub equilibria: Vec<Equilibrium>,
    pub gases: Vec<Gas>,
    pub totals: Vec<Total>,
    /// Kelvin.
    pub temperature: Option<f64>,
    pub po2_range: (f64, f64),
    pub network: network::Network,
    /// Labels (or texts) of reactions without data, shown for reference.
    pub reference_only: Vec<String>,
    /// Notes worth printing with results (located diagnostics that are not errors).
    pub notes: Vec<Diagnostic>,
    /// The document's lines, for rendering diagnostics raised later.
    pub lines: Vec<String>,
}

/// Settings from the command line that take precedence over the file.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
#[non_exhaustive]
pub struct Overrides {
    pub temperature: Option<f64>,
    pub po2_range: Option<(f64, f64)>,
    /// Reactions without data become equilibria whose K is unknown instead
    /// of references: the model then gives the exact regime slopes (which
    /// do not depend on K) but no ranges and no concentrations.
    pub slopes_only: bool,
}

impl Overrides {
    /// Settings for the exact regimes alone: when no reaction of `doc` has
    /// data (no `K`, `dH` or `dS` line), every reaction becomes an
    /// equilibrium with K unknown (`slopes_only`); otherwise the reactions
    /// without data stay references, as `brouwer` reads the file.
    pub fn for_slopes(doc: &Document) -> Overrides {
        Overrides {
            slopes_only: doc.data.is_empty(),
            ..Overrides::default()
        }
    }
}

/// Electroneutrality of charged species `(symbol, charge)`: the negative
/// ones, each with its charge as a factor, equal the positive ones
/// (`2[O_i″] + n = 2[V_O••] + p`). Uncharged species are left out.
pub fn neutrality_text(charged: &[(&str, i32)]) -> String {
    let side = |positive: bool| -> String {
        charged
            .iter()
            .filter(|(_, z)| if positive { *z > 0 } else { *z < 0 })
            .map(|(symbol, z)| match z.unsigned_abs() {
                1 => (*symbol).to_string(),
                n => format!("{n}{symbol}"),
            })
            .collect::<Vec<_>>()
            .join(" + ")
    };
    format!("{} = {}", side(false), side(true))
}

impl Model {
    /// The text of line `n` (1-based), or "".
    pub fn line_text(&self, n: u32) -> &str {
        n.checked_sub(1)
            .and_then(|i| self.lines.get(i as usize))
            .map_or("", String::as_str)
    }

    /// The symbol of species `s` in a style.
    pub fn symbol(&self, s: usize, style: Style) -> &str {
        self.species.get(s).map_or("?", |sp| match style {
            Style::Ascii => sp.ascii.as_str(),
            Style::Unicode | Style::Html | Style::Markdown => sp.unicode.as_str(),
            Style::Latex => sp.latex.as_str(),
        })
    }

    /// Electroneutrality with every charged species: negative side = positive side.
    pub fn neutrality(&self, style: Style) -> String {
        if self.species.iter().all(|s| s.charge == 0) {
            return "no charged species".to_string();
        }
        let terms: Vec<(&str, i32)> = (0..self.species.len())
            .map(|i| (self.symbol(i, style), self.species[i].charge))
            .collect();
        neutrality_text(&terms)
    }

    /// ln K of every equilibrium at `t` kelvin, or a diagnostic naming the
    /// reaction whose K is not known there.
    pub fn ln_k(&self, t: f64) -> Result<Vec<f64>, Diagnostic> {
        self.equilibria
            .iter()
            .map(|e| {
                let line = e.data_line;
                let Some(thermo) = e.thermo else {
                    return Err(Diagnostic::new(
                        Code::NoThermoData,
                        0..self.line_text(line).len(),
                        format!("`{}` has no K or dH/dS, so no value of K is known", e.label),
                    )
                    .with_help(match &e.law.label {
                        Some(l) => format!("add `K {l} = ...` (at a temperature) or `dH {l}`/`dS {l}` lines"),
                        None => "label the reaction (`red: ...`) and add `K red = ...` or dH/dS lines".to_string(),
                    })
                    .locate(line, self.line_text(line)));
                };
                thermo.ln_k(t).map_err(|err| {
                    Diagnostic::new(
                        Code::ModelTemperature,
                        0..self.line_text(line).len(),
                        format!("K of `{}` is known only at {}, not at {}", e.label, thermo::temperature_text(err.known_at), thermo::temperature_text(err.asked)),
                    )
                    .with_help(format!("add `dH {} = ...` so K can be extrapolated, or run at the temperature K was given for", e.label))
                    .locate(line, self.line_text(line))
                })
            })
            .collect()
    }

    /// The model temperature, or a diagnostic asking for one.
    pub fn require_temperature(&self) -> Result<f64, Diagnostic> {
        self.temperature.ok_or_else(|| {
            Diagnostic::new(
                Code::ModelTemperature,
                0..0,
                "the model gives no temperature",
            )
            .with_help("add a `temperature 1273 K` line, or pass --temperature")
            .locate(1, self.line_text(1))
        })
    }

    /// Index of the O2 gas, if any equilibrium involves it.
    pub fn oxygen(&self) -> Option<usize> {
        self.gases.iter().position(|g| g.key == "gas O2")
    }

    /// Sites per formula unit over all sublattices.
    pub fn total_sites(&self) -> f64 {
        self.host
            .sublattices
            .iter()
            .map(|s| *s.count.numer() as f64 / *s.count.denom() as f64)
            .sum()
    }

    /// The largest defect site fraction at concentrations `ln_c`: per
    /// sublattice, defects on it over its sites; interstitials, electrons
    /// and holes counted against all sites.
    pub fn defect_site_fraction(&self, ln_c: &[f64]) -> f64 {
        let mut per_sublattice = vec![0.0f64; self.host.sublattices.len()];
        let mut elsewhere = 0.0f64;
        for (s, &l) in self.species.iter().zip(ln_c) {
            let c = l.exp();
            if s.sites.is_empty() {
                elsewhere += c;
            }
            for &(i, n) in &s.sites {
                if let Some(slot) = per_sublattice.get_mut(i) {
                    *slot += c * (*n.numer() as f64 / *n.denom() as f64);
                }
            }
        }
        let mut worst = elsewhere / self.total_sites().max(1e-300);
        for (slot, sub) in per_sublattice.iter().zip(&self.host.sublattices) {
            let count = *sub.count.numer() as f64 / *sub.count.denom() as f64;
            if count > 0.0 {
                worst = worst.max(slot / count);
            }
        }
        worst
    }
}
