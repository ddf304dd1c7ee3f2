//! Foundations every stage shares: exact numbers, the one diagnostic type,
//! element data and exact linear algebra.

pub mod diagnostic;
pub mod elements;
pub mod linalg;
pub mod number;
