//! The check before a balance, as `lacuna balance` and the workbench's
//! `/balance` run it.
//!
//! In: a parsed reaction, the host and the problems already found in its
//! text. Out: the balancer's `Balancing` with every finding that still stands
//! (the checker's plausibility findings; its balance failures are what the
//! balancer answers). Writing it for people is `crate::report::balance`.

use super::{Balancing, Options, Status, balance};
use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::check::check_reaction;
use crate::host::Host;
use crate::notation::Reaction;

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
) -> (Balancing, Vec<Diagnostic>) {
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
        let outcome = Balancing {
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
