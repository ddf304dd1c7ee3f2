//! Foundations every stage shares: exact numbers, the one diagnostic type,
//! element data, exact linear algebra and the column widths of text tables.

pub mod diagnostic;
pub mod elements;
pub mod linalg;
pub mod number;
pub mod text;
