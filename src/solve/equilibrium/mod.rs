//! Full numerical defect equilibria: every term kept, every point checked.
//!
//! In: a `Model` (or any `Network` with numbers), a temperature and pO2 (or
//! sweeps of either), and for the frozen-in case two temperatures. Out:
//! `Point`s with log concentrations, the relative electroneutrality
//! residual and a `converged` flag that is false (never silently) when the
//! residual is above 1e-12.
//!
//! `solver` holds the bracketed root solver on a network (its method is
//! described there), `sweep` the equilibria of a model along pO2 or
//! temperature, `frozen` the two-temperature (frozen-in) states.

mod frozen;
mod solver;
mod sweep;

pub use frozen::{Frozen, frozen_network, frozen_sweep};
pub use solver::{Convergence, System, TOLERANCE, Work};
pub use sweep::{Point, inverse_grid, log_grid, po2_sweep, temperature_sweep};

#[cfg(test)]
mod tests;
