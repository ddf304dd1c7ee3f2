//! The one integration-test binary: every module runs the real `lacuna`
//! binary or the public library against the project's documents.

mod balance;
mod check_cli;
mod docs;
mod dope;
mod fit;
mod generated_reactions;
mod hostile;
mod lint_cli;
mod native;
mod properties;
mod repl;
mod support;
mod typeset;
