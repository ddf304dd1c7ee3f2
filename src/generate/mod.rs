//! Reactions the tool writes itself: a host's native defects and a dopant's
//! compensation mechanisms.

pub mod dope;
pub mod native;
