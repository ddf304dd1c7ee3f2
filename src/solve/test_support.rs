//! What the solver's tests share: a model from text, a species by symbol.

use crate::model::{Model, Overrides, read};
use crate::notation::Style;

/// The model of a reaction file; a test's text that does not build is a
/// mistake in the test.
pub fn model(text: &str) -> Model {
    let doc = read("<test>", text, None);
    match Model::build(&doc, Overrides::default()) {
        Ok(m) => m,
        Err(e) => panic!("model did not build: {e:#?}"),
    }
}

/// The index of the species written `symbol` (Unicode notation).
pub fn index(m: &Model, symbol: &str) -> usize {
    (0..m.species.len())
        .find(|&s| m.symbol(s, Style::Unicode) == symbol)
        .unwrap_or_else(|| panic!("no species {symbol}"))
}
