//! The Brouwer regimes as a terminal table: the regimes part of `lacuna
//! brouwer --format table` and of the workbench's `/brouwer`.
//!
//! In: a `Model` and its `Regime`s (plain data from `crate::solve`). Out:
//! text.

use crate::base::number::{self, Q};
use crate::base::text::{self, pad};
use crate::model::Model;
use crate::model::thermo::sig;
use crate::notation::Style;
use crate::solve::regimes::Regime;

/// What a table of regimes runs along, which decides its columns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum Along {
    /// Ordered along pO2: `pO₂ from`, `pO₂ to`.
    Po2,
    /// Ordered along temperature: `from T/K`, `to T/K`, and the apparent enthalpies.
    Temperature,
    /// Every regime the reactions allow, not ordered (no K values): no range columns.
    Unordered,
}

/// The species' Unicode symbols and the column width that fits them all,
/// for the terminal tables of regimes and concentrations.
pub fn species_columns(model: &Model) -> (Vec<String>, usize) {
    let names: Vec<String> = (0..model.species.len())
        .map(|s| model.symbol(s, Style::Unicode).to_string())
        .collect();
    let width = names
        .iter()
        .map(|n| text::width(n))
        .max()
        .unwrap_or(4)
        .max(10)
        + 2;
    (names, width)
}

/// The regimes part of `lacuna brouwer --format table` (also the
/// workbench's `/brouwer`): a heading, one row per regime with its
/// condition, its range (unless `Unordered`) and the exact pO2 slope of
/// every species, then the dopant slopes of each fixed total and, along
/// temperature, the apparent enthalpies. Starts with a blank line.
pub fn regimes_table(model: &Model, regimes: &[Regime], along: Along) -> String {
    use std::fmt::Write as _;
    let mut out = String::new();
    let (names, width) = species_columns(model);
    let _ = writeln!(
        out,
        "\n{} (exact slopes d log[X] / d log pO₂):",
        match along {
            Along::Po2 => "Brouwer regimes along pO₂",
            Along::Temperature => "Brouwer regimes along temperature",
            Along::Unordered => "Brouwer regimes, every one the reactions allow, not ordered",
        }
    );
    let conditions: Vec<String> = regimes
        .iter()
        .map(|r| r.neutrality(model, Style::Unicode))
        .collect();
    let cw = conditions
        .iter()
        .map(|c| text::width(c))
        .max()
        .unwrap_or(10)
        .max(10)
        + 2;
    let range_names = match along {
        Along::Po2 => Some(("pO₂ from", "pO₂ to")),
        Along::Temperature => Some(("from T/K", "to T/K")),
        Along::Unordered => None,
    };
    let range_width = if range_names.is_some() { 22 } else { 0 };
    let mut header = format!(" #  {}", pad("condition", cw));
    if let Some((from_name, to_name)) = range_names {
        header.push_str(&pad(from_name, 11));
        header.push_str(&pad(to_name, 11));
    }
    for n in &names {
        header.push_str(&pad(n, width));
    }
    let _ = writeln!(out, "{}", header.trim_end());
    for (i, (r, c)) in regimes.iter().zip(&conditions).enumerate() {
        let mut row = format!("{:>2}  {}", i + 1, pad(c, cw));
        if range_names.is_some() {
            row.push_str(&pad(&sig(r.from, 3), 11));
            row.push_str(&pad(&sig(r.to, 3), 11));
        }
        for s in 0..model.species.len() {
            row.push_str(&pad(&number::signed(r.slope(model, s)), width));
        }
        let _ = writeln!(out, "{}", row.trim_end());
    }
    let mut extra = |title: String, cell: &dyn Fn(&Regime, usize) -> String| {
        let _ = writeln!(out, "\n    {title}:");
        for (i, (r, c)) in regimes.iter().zip(&conditions).enumerate() {
            let mut row = format!("{:>2}  {}{}", i + 1, pad(c, cw), " ".repeat(range_width));
            for s in 0..model.species.len() {
                row.push_str(&pad(&cell(r, s), width));
            }
            let _ = writeln!(out, "{}", row.trim_end());
        }
    };
    for (j, t) in model.totals.iter().enumerate() {
        extra(
            format!(
                "dopant slopes d log[X] / d log(total {})",
                t.subject_unicode
            ),
            &|r, s| {
                let e = r.laws.total.get(s).and_then(|row| row.get(j)).copied();
                number::signed(e.unwrap_or(Q::from_integer(0)))
            },
        );
    }
    if along == Along::Temperature {
        extra(
            "apparent enthalpies (eV), −k d ln[X] / d(1/T)".to_string(),
            &|r, s| {
                r.enthalpy(model, s)
                    .map_or_else(|| "?".to_string(), |h| sig(h, 4))
            },
        );
    }
    out
}
