//! The interactive workbench: a session of reactions checked as they are
//! typed, kept, named, saved and typeset.
//!
//! In: lines of input — a reaction (plain notation or LaTeX), a reaction-file
//! line (`label: reaction`, `host ZrO2`, `# comment`) or a command starting
//! with `/`. Out: text written to a `Write` (verdicts, diagnostics as `check`
//! prints them, listings), and the session's state. Nothing here touches the
//! terminal: `driver` runs the line editor or reads a script, `helper` gives
//! the editor completion, hints and colour; `session` holds the session's
//! state, `analysis` reads one input line, `handle` answers it.
//!
//! Commands live in one table, `COMMANDS`: one entry per command with its
//! name, aliases, one-line help, usage and handler. A command added by another
//! module is one more entry there (`args` says what an entry is and reads a
//! command line); `chemistry` holds the handlers that are
//! thin layers over the balancer, dopants, laws and Brouwer regimes.
//! Documentation: grammar/repl.md.

mod analysis;
mod args;
mod chemistry;
mod commands;
pub mod driver;
mod handle;
pub mod helper;
mod session;
mod store;

pub(crate) use analysis::analyse_in;
pub use analysis::continues;
pub use args::{ArgKind, Args, CommandSpec, Failure, SIGIL, find_command};
pub use commands::COMMANDS;
pub(crate) use handle::{is_wrong, verdict_text};
pub use session::{Entry, HostSlot, Session, Vocabulary};
pub(crate) use session::{Offer, OwnFile, style_of};

#[cfg(test)]
mod tests;
