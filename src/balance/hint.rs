//! The balanced form as a hint on a failing check.
//!
//! The checker (`crate::check`) knows nothing of the balancer; whoever
//! checks a reaction for people (the runner, the model reader, the
//! workbench) asks here for the verdict with the hint attached. Only
//! failing reactions pay for the balancer.

use super::balanced_text;
use crate::base::diagnostic::{Code, Diagnostic};
use crate::check::{Verdict, check_reaction};
use crate::host::Host;
use crate::notation::Reaction;

/// Checks `reaction` and, when a balance fails and its species balance in
/// exactly one way, shows that form in the first balance diagnostic's help.
pub fn check_with_hint(reaction: &Reaction, host: Option<&Host>) -> Verdict {
    let mut verdict = check_reaction(reaction, host);
    attach(reaction, host, &mut verdict);
    verdict
}

/// Adds the balanced form to `verdict` (see `check_with_hint`).
pub fn attach(reaction: &Reaction, host: Option<&Host>, verdict: &mut Verdict) {
    let failing =
        !verdict.balance.mass || !verdict.balance.charge || verdict.balance.site == Some(false);
    // An overflow leaves no balance to hint at.
    let overflowed = verdict.diagnostics.iter().any(|d| d.code == Code::Number);
    if failing && !overflowed {
        hint(reaction, host, &mut verdict.diagnostics);
    }
}

fn hint(reaction: &Reaction, host: Option<&Host>, diags: &mut [Diagnostic]) {
    let Some(text) = balanced_text(reaction, host) else {
        return;
    };
    let first = diags.iter_mut().find(|d| {
        matches!(
            d.code,
            Code::MassBalance | Code::ChargeBalance | Code::SiteBalance
        )
    });
    if let Some(d) = first {
        d.help = Some(match (&d.help, &d.label) {
            // Keep the pointer at a mistyped charge mark beside the other fix.
            (Some(culprit), Some(_)) if d.code == Code::ChargeBalance => {
                format!("{culprit}; or, with the marks as written, balanced, it reads: {text}")
            }
            _ => format!("balanced, it reads: {text}"),
        });
    }
}
