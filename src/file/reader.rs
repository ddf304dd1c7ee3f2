//! Reaction files: one item per line. Grammar: grammar/reaction-file.md.
//!
//! In: one line of text. Out: what the line is (blank, comment, host
//! declaration, reaction with an optional label, or a model keyword line)
//! with byte spans into the line. Lines are independent, so files stream and
//! one bad line never hides the rest.

use crate::notation::Span;

/// The conventional extension of Lacuna reaction files.
pub const EXTENSION: &str = "kvr";

/// Keywords that start a model line (see the model grammar); any other line
/// that is not a comment, blank or `host` line is a reaction.
pub const MODEL_KEYWORDS: &[&str] = &["K", "dH", "dS", "fix", "temperature", "po2", "pressure"];

/// Reaction arrows other than `=`: a line holding one is a reaction even if it
/// starts with a keyword (`K -> K_i. + e'` is about potassium).
const ARROWS: &[&str] = &["->", "→", "<=>", "⇌"];

/// What one line of a reaction file holds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Line {
    Blank,
    Comment,
    /// `host <spec>`: the span of the spec.
    Host(Span),
    /// `[label:] reaction`: the label's span (without the colon) and the reaction's.
    Reaction {
        label: Option<Span>,
        reaction: Span,
    },
    /// A model keyword line: the keyword's span and the rest's.
    Model {
        keyword: Span,
        rest: Span,
    },
}

/// Classifies one line (without its line terminator).
pub fn classify(line: &str) -> Line {
    let content_end = comment_start(line).unwrap_or(line.len());
    let content = &line[..content_end];
    let trimmed = content.trim_start();
    if trimmed.trim_end().is_empty() {
        return if content_end < line.len() {
            Line::Comment
        } else {
            Line::Blank
        };
    }
    let start = content.len() - trimmed.len();
    let end = start + trimmed.trim_end().len();
    let first_word_len = trimmed
        .find(char::is_whitespace)
        .unwrap_or(trimmed.trim_end().len());
    let first_word = &trimmed[..first_word_len];
    if first_word == "host" {
        return Line::Host(start + first_word_len..end);
    }
    if MODEL_KEYWORDS.contains(&first_word)
        && first_word_len < trimmed.trim_end().len()
        && !ARROWS.iter().any(|a| trimmed.contains(a))
    {
        return Line::Model {
            keyword: start..start + first_word_len,
            rest: start + first_word_len..end,
        };
    }
    if let Some(label_len) = label_len(trimmed) {
        let after = &trimmed[label_len + 1..];
        let gap = after.len() - after.trim_start().len();
        // `a: ` (a name and nothing after it): the gap runs past the
        // trimmed end, so the reaction is empty rather than reversed.
        return Line::Reaction {
            label: Some(start..start + label_len),
            reaction: (start + label_len + 1 + gap).min(end)..end,
        };
    }
    Line::Reaction {
        label: None,
        reaction: start..end,
    }
}

/// Byte offset of a `#` that starts a comment.
pub fn comment_start(line: &str) -> Option<usize> {
    line.find('#')
}

/// `label = letter { letter | digit | "_" | "-" | "." } ":"` followed by white space.
fn label_len(text: &str) -> Option<usize> {
    let colon = text.find(':')?;
    let label = &text[..colon];
    let after = &text[colon + 1..];
    let valid = label
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic())
        && label
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '-' | '.'))
        && !label.contains('_')
        && (after.is_empty() || after.starts_with(char::is_whitespace));
    valid.then_some(colon)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classifies_lines() {
        assert_eq!(classify(""), Line::Blank);
        assert_eq!(classify("   "), Line::Blank);
        assert_eq!(classify("# a note"), Line::Comment);
        assert_eq!(classify("host ZrO2  # cubic"), Line::Host(4..9));
        assert_eq!(
            classify("O_O -> V_O.. + 2e' + 1/2 O2(g)"),
            Line::Reaction {
                label: None,
                reaction: 0..30
            }
        );
        assert_eq!(
            classify("red: O_O -> V_O.."),
            Line::Reaction {
                label: Some(0..3),
                reaction: 5..17
            }
        );
        // A name with nothing after it, even with a space: an empty reaction
        // (the parser then says the arrow is missing), never a reversed span.
        for line in ["a:", "a: ", "a:  \t"] {
            assert_eq!(
                classify(line),
                Line::Reaction {
                    label: Some(0..1),
                    reaction: 2..2
                },
                "{line:?}"
            );
        }
        assert_eq!(
            classify("K -> K_i. + e'"),
            Line::Reaction {
                label: None,
                reaction: 0..14
            }
        );
        assert_eq!(
            classify("K red 1e-20"),
            Line::Model {
                keyword: 0..1,
                rest: 1..11
            }
        );
    }

    #[test]
    fn site_labels_are_not_reaction_labels() {
        // `Fe_Fe:A` has an underscore before the colon, so it is a species.
        assert_eq!(
            classify("Fe_Fe:A.. -> x"),
            Line::Reaction {
                label: None,
                reaction: 0..14
            }
        );
        // A colon not followed by white space is not a label either.
        assert_eq!(
            classify("a:b -> c"),
            Line::Reaction {
                label: None,
                reaction: 0..8
            }
        );
    }
}
