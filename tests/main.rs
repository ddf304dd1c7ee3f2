//! The one integration-test binary: every module runs the real `lacuna`
//! binary or the public library against the project's documents.

mod check_cli;
mod docs;
mod fit;
mod hostile;
mod lint_cli;
mod properties;
mod repl;
mod support;
mod typeset;
