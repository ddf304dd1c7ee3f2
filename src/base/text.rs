//! Column widths for the text tables people read: a text's width is its
//! number of characters, so every mark the tables print (•, ′, ×, ₂, −)
//! takes one column, as Rust's own `{:<8}` padding counts them.

/// The width of `text` in columns: its characters.
pub fn width(text: &str) -> usize {
    text.chars().count()
}

/// `text` with spaces after it up to `columns` wide; wider text is kept
/// whole.
///
/// ```
/// use lacuna::base::text::pad;
/// assert_eq!(pad("V_O••", 7), "V_O••  ");
/// assert_eq!(pad("−1/2", 2), "−1/2");
/// ```
pub fn pad(text: &str, columns: usize) -> String {
    format!("{text}{}", " ".repeat(columns.saturating_sub(width(text))))
}

/// A decimal with its sign always shown and a true minus sign (U+2212):
/// `+0.251`, `−0.228`, for slopes and logarithms in human output.
///
/// ```
/// use lacuna::base::text::signed_decimal;
/// assert_eq!(signed_decimal(-0.2281, 3), "−0.228");
/// assert_eq!(signed_decimal(5.414, 2), "+5.41");
/// ```
pub fn signed_decimal(value: f64, places: usize) -> String {
    format!("{value:+.places$}").replacen('-', "−", 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn marks_take_one_column_as_in_std_padding() {
        // source: Rust standard library, std::fmt "Width" (padding counts
        // characters), checked here against `{:<w$}`.
        for text in ["O_O×", "V_O••", "e′", "pO₂/bar", "−1/6", "", "site frac"] {
            for w in [0, 3, 11] {
                assert_eq!(pad(text, w), format!("{text:<w$}"), "{text} to {w}");
            }
        }
        assert_eq!(width("V_O••"), 5);
    }

    #[test]
    fn signed_decimals_use_a_true_minus() {
        // common practice: typeset negative numbers carry U+2212, not a hyphen.
        assert_eq!(signed_decimal(-0.25, 3), "−0.250");
        assert_eq!(signed_decimal(0.25, 1), "+0.2");
        assert_eq!(signed_decimal(0.0, 2), "+0.00");
        assert!(!signed_decimal(-16.0, 2).contains('-'));
    }
}
