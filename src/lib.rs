//! Lacuna: point-defect chemistry in Kröger–Vink notation.
//!
//! The pipeline, one module per stage: `notation` reads the text, `host`
//! knows the sublattices, `check` tests the balances, `document` reads
//! reaction files, `engine` runs checks over sources, `render` writes the
//! results, and `cli` is the thin command-line layer over all of it.
//!
//! From reactions to predictions: `law` writes mass-action laws, `thermo`
//! reads K(T) data and units, `model` assembles a reaction file into a
//! defect model, `network` and `linalg` solve its log-linear structure
//! exactly, `brouwer` finds the regimes with exact slopes, and
//! `equilibrium` solves the full model numerically.
//!
//! Around them: `balance`, `dope` and `native` generate and balance
//! reactions; `lint` and `format` serve reaction files in CI; `typeset`
//! and `repl` serve manuscripts and interactive work; `fit` goes from
//! measured conductivities back to mechanisms.

pub mod balance;
pub mod brouwer;
pub mod check;
pub mod cli;
pub mod diagnostic;
pub mod document;
pub mod dope;
pub mod elements;
pub mod engine;
pub mod equilibrium;
pub mod fit;
pub mod format;
pub mod host;
pub mod law;
pub mod linalg;
pub mod lint;
pub mod model;
pub mod native;
pub mod network;
pub mod notation;
pub mod number;
pub mod render;
pub mod repl;
pub mod thermo;
pub mod typeset;
