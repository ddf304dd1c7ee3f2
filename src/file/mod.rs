//! Reaction files: the reader that turns text into items, the runner that
//! checks sources, and the canonical layout (`fmt`).

pub mod layout;
pub mod reader;
pub mod runner;
