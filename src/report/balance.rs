//! What `lacuna balance` and the workbench's `/balance` print.
//!
//! In: the balancer's `Balancing` (see `crate::balance::checked`). Out: the
//! outcome written for people: the balanced reaction, or the independent
//! balanced reactions when there are several.

use super::Palette;
use crate::balance::{Balanced, Balancing, Status};
use crate::notation::{Style, render_reaction};
use std::io::{self, Write};

/// Writes the balanced reaction (unique) or the numbered basis (several);
/// nothing for none. `conventional` writes gases fractional. Returns
/// whether anything was written.
pub fn write_outcome(
    out: &mut dyn Write,
    palette: Palette,
    outcome: &Balancing,
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
            for (i, b) in outcome.reactions.iter().enumerate() {
                writeln!(out, "  {}. {}", i + 1, palette.strong(&shown(b)))?;
            }
        }
        Status::None => {}
    }
    Ok(!outcome.reactions.is_empty())
}
