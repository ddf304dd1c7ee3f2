//! From a defect model to numbers: exact Brouwer regimes and the full
//! numerical equilibrium.

pub mod equilibrium;
pub mod regimes;
pub mod scan;

#[cfg(test)]
mod test_support;
