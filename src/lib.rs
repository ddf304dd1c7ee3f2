//! Lacuna: point-defect chemistry in Kröger–Vink notation.
//!
//! The pipeline, one folder per stage: `base` holds exact numbers,
//! diagnostics and element data; `notation` reads one reaction; `host`
//! knows the sublattices; `check` tests the balances and the file rules;
//! `file` reads reaction files, runs checks over sources and lays files out;
//! `balance` and `generate` write balanced reactions; `model` turns
//! reactions into mass-action laws and a defect model; `solve` finds the
//! Brouwer regimes and the full equilibrium; `fit` goes from measurements
//! back to mechanisms; `report` writes results for people and machines;
//! `typeset` writes reactions for manuscripts. `app` (the command line and
//! the workbench) is a doorway over all of it.

pub mod balance;
pub mod base;
pub mod check;
pub mod file;
pub mod fit;
pub mod generate;
pub mod host;
pub mod model;
pub mod notation;
pub mod report;
pub mod solve;
pub mod typeset;

#[cfg(feature = "cli")]
pub mod app;
