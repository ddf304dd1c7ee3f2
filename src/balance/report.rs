//! What `lacuna balance` and the workbench's `/balance` print.
//!
//! In: a parsed reaction, the host and the problems already found in its
//! text. Out: the balancer's `Outcome` with every finding that still stands
//! (the checker's plausibility findings; its balance failures are what the
//! balancer answers), and the outcome written for people: the balanced
//! reaction, or the independent balanced reactions when there are several.

use super::{Balanced, Options, Outcome, Status, balance};
use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::check::check_reaction;
use crate::host::Host;
use crate::notation::{Reaction, Style, render_reaction};
use crate::report::Palette;
use std::io::{self, Write};

/// Checks `reaction` and balances it unless an error stands in the way.
/// `found` holds problems already found in its text (parsing); an error
/// among them, or a validity error of the checker, stops the balance.
/// `no_host_help` tells how to give a host where there is none. The
/// diagnostics keep their spans in the reaction's text, unlocated.
pub fn check_and_balance(
    reaction: &Reaction,
    host: Option<&Host>,
    keep_written: bool,
    found: Vec<Diagnostic>,
    no_host_help: &str,
) -> (Outcome, Vec<Diagnostic>) {
    let mut diagnostics = found;
    let verdict = check_reaction(reaction, host);
    for d in verdict.diagnostics {
        match d.code {
            Code::MassBalance | Code::ChargeBalance | Code::SiteBalance => {}
            Code::NoHost => {
                let mut note = Diagnostic::new(
                    Code::NoHost,
                    d.span,
                    "no host given: balanced for mass and charge only, sites not counted",
                )
                .with_help(no_host_help);
                note.severity = Severity::Warning;
                diagnostics.push(note);
            }
            _ => diagnostics.push(d),
        }
    }
    if diagnostics.iter().any(Diagnostic::is_error) {
        let outcome = Outcome {
            status: Status::None,
            reactions: Vec::new(),
            diagnostics: Vec::new(),
        };
        return (outcome, diagnostics);
    }
    let outcome = balance(
        reaction,
        host,
        Options {
            keep_written,
            explain: true,
        },
    );
    diagnostics.extend(outcome.diagnostics.iter().cloned());
    (outcome, diagnostics)
}

/// Writes the balanced reaction (unique) or the numbered basis (several);
/// nothing for none. `conventional` writes gases fractional. Returns
/// whether anything was written.
pub fn write_outcome(
    out: &mut dyn Write,
    palette: Palette,
    outcome: &Outcome,
    style: Style,
    conventional: bool,
) -> io::Result<bool> {
    let shown = |b: &Balanced| {
        render_reaction(
            if conventional {
                &b.conventional
            } else {
                &b.reaction
            },
            style,
        )
    };
    match outcome.status {
        Status::Unique => {
            for b in &outcome.reactions {
                writeln!(out, "{}", palette.strong(&shown(b)))?;
            }
        }
        Status::Several => {
            writeln!(
                out,
                "{} independent balanced reactions; every combination of them balances:",
                outcome.reactions.len()
            )?;
            for (i, b) in (1..).zip(&outcome.reactions) {
                writeln!(out, "  {i}. {}", palette.strong(&shown(b)))?;
            }
        }
        Status::None => {}
    }
    Ok(!outcome.reactions.is_empty())
}
