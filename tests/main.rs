//! The one integration-test binary: every module runs the real `lacuna`
//! binary or the public library against the project's documents.

mod architecture;
mod balance;
mod brouwer;
mod check_cli;
mod cross_command;
mod docs;
mod dope;
mod equilibrium_properties;
mod exact_numbers;
mod facade;
mod fit;
mod generated_reactions;
mod hostile;
mod laws;
mod layers;
mod lint_cli;
mod measurement_fixtures;
mod model_grammar;
mod native;
mod pipes;
mod properties;
mod reader_fixtures;
mod repl;
#[cfg(feature = "serde")]
mod serialize;
mod support;
mod typeset;
