//! Lacuna: point-defect chemistry in Kröger–Vink notation.
//!
//! The pipeline, one module per stage: `notation` reads the text, `host`
//! knows the sublattices, `check` tests the balances, `document` reads
//! reaction files, `engine` runs checks over sources, `render` writes the
//! results, and `cli` is the thin command-line layer over all of it.

pub mod balance;
pub mod check;
pub mod cli;
pub mod diagnostic;
pub mod document;
pub mod dope;
pub mod elements;
pub mod engine;
pub mod fit;
pub mod format;
pub mod host;
pub mod lint;
pub mod native;
pub mod notation;
pub mod number;
pub mod render;
pub mod repl;
pub mod typeset;
