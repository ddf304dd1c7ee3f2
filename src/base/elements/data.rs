//! The shapes of the element data; `table.rs` fills them.

/// One Shannon effective ionic radius.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct IonicRadius {
    /// Charge (oxidation state) of the ion.
    pub charge: i8,
    /// Coordination number; square-planar and pyramidal labels map to the
    /// plain count (IVSQ is 4).
    pub coordination: u8,
    /// Spin state, for ions where Shannon distinguishes one.
    pub spin: Spin,
    /// Effective ionic radius in picometres (O²⁻ in six-fold coordination is 140).
    pub radius_pm: f64,
}

/// Spin state of a transition-metal ion in Shannon's table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum Spin {
    /// No spin state given.
    None,
    /// High spin.
    High,
    /// Low spin.
    Low,
}

/// One chemical element.
#[derive(Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Element {
    /// Atomic number.
    pub z: u8,
    /// Chemical symbol, e.g. `"Zr"`.
    pub symbol: &'static str,
    /// English name.
    pub name: &'static str,
    /// Standard (conventional) atomic weight, IUPAC; NaN where none is defined.
    pub atomic_weight: f64,
    /// Pauling electronegativity; NaN where none is defined.
    pub electronegativity: f64,
    /// Oxidation states the element commonly takes (mendeleev "main"), ascending.
    pub common_states: &'static [i8],
    /// Every oxidation state listed (main and extended), ascending; includes the common ones.
    pub known_states: &'static [i8],
    /// Shannon (1976) effective ionic radii.
    pub radii: &'static [IonicRadius],
}
