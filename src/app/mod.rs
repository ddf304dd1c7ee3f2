//! The front-ends: the command line and the workbench. Thin doorways over
//! the library; built only with the `cli` feature.

pub mod cli;
pub mod workbench;
