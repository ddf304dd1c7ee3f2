//! The canonical layout of reaction files, as `lacuna fmt` writes it.
//!
//! In: a whole file's text. Out: the same file with one spelling of charge
//! marks, canonical coefficients and spacing, arrows aligned within each block
//! of consecutive reactions, and comments and blank lines kept; or the parse
//! errors that make formatting unsafe (a file that does not parse is never
//! rewritten). Formatting is idempotent and preserves every reaction's meaning.

use crate::base::diagnostic::Diagnostic;
use crate::base::number::{self, Q};
use crate::base::text::{pad, width};
use crate::file::reader::{Line, classify, comment, numbered_lines, read_reaction};
use crate::notation::{Arrow, Entity, Reaction, Style, Term, render_term};

/// How `fmt` spells charge marks and arrows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum MarkSpelling {
    /// `V_O..`, `Y_Zr'`, `O_Ox`, `->`
    Ascii,
    /// `V_O••`, `Y_Zr′`, `O_O×`, `→`
    Unicode,
}

/// One formatted line before alignment.
enum Piece {
    Verbatim(String),
    Reaction {
        label: Option<String>,
        left: String,
        arrow: &'static str,
        right: String,
        comment: Option<String>,
    },
}

/// Formats a whole file. Errors carry their line numbers (located diagnostics).
pub fn format_text(text: &str, marks: MarkSpelling) -> Result<String, Vec<Diagnostic>> {
    let mut pieces = Vec::new();
    let mut errors = Vec::new();
    for (number, raw) in numbered_lines(text) {
        match format_line(raw, marks) {
            Ok(piece) => pieces.push(piece),
            Err(diagnostics) => {
                errors.extend(diagnostics.into_iter().map(|d| d.locate(number, raw)))
            }
        }
    }
    if !errors.is_empty() {
        return Err(errors);
    }
    Ok(align(pieces, text.ends_with('\n') || text.is_empty()))
}

fn comment_of(raw: &str) -> Option<String> {
    comment(raw).map(str::to_string)
}

fn format_line(raw: &str, marks: MarkSpelling) -> Result<Piece, Vec<Diagnostic>> {
    match classify(raw) {
        Line::Blank => Ok(Piece::Verbatim(String::new())),
        Line::Comment => Ok(Piece::Verbatim(raw.trim().to_string())),
        Line::Host(span) => {
            let spec = raw[span].split_whitespace().collect::<Vec<_>>().join(" ");
            Ok(Piece::Verbatim(with_comment(
                format!("host {spec}"),
                comment_of(raw),
            )))
        }
        Line::Model { keyword, rest } => {
            let rest = raw[rest].split_whitespace().collect::<Vec<_>>().join(" ");
            Ok(Piece::Verbatim(with_comment(
                format!("{} {rest}", &raw[keyword]),
                comment_of(raw),
            )))
        }
        Line::Reaction { label, reaction } => {
            let read = read_reaction(raw, reaction);
            let Some(parsed) = read
                .reaction
                .as_ref()
                .filter(|_| !read.diagnostics.iter().any(Diagnostic::is_error))
            else {
                return Err(read
                    .diagnostics
                    .into_iter()
                    .filter(Diagnostic::is_error)
                    .collect());
            };
            // LaTeX, and a host written over the arrow, have no plain
            // spelling that keeps everything they say: kept as written.
            if read.from_latex() || read.over_arrow.is_some() {
                return Ok(Piece::Verbatim(raw.trim().to_string()));
            }
            let (left, arrow, right) = render_sides(raw, parsed, marks);
            Ok(Piece::Reaction {
                label: label.map(|l| raw[l].to_string()),
                left,
                arrow,
                right,
                comment: comment_of(raw),
            })
        }
    }
}

fn with_comment(body: String, comment: Option<String>) -> String {
    match comment {
        Some(c) => format!("{body}  {c}"),
        None => body,
    }
}

fn render_sides(
    raw: &str,
    reaction: &Reaction,
    marks: MarkSpelling,
) -> (String, &'static str, String) {
    let style = match marks {
        MarkSpelling::Ascii => Style::Ascii,
        MarkSpelling::Unicode => Style::Unicode,
    };
    let side = |terms: &[Term]| {
        terms
            .iter()
            .map(|t| term_text(raw, t, style))
            .collect::<Vec<_>>()
            .join(" + ")
    };
    let arrow = match (reaction.arrow, marks) {
        (Arrow::Forward, MarkSpelling::Ascii) => "->",
        (Arrow::Forward, MarkSpelling::Unicode) => "→",
        (Arrow::Equilibrium, MarkSpelling::Ascii) => "<=>",
        (Arrow::Equilibrium, MarkSpelling::Unicode) => "⇌",
        (Arrow::Equals, _) => "=",
    };
    (side(&reaction.left), arrow, side(&reaction.right))
}

/// A term in canonical form. Compounds keep the formula as written (so
/// `Ba(OH)2` stays grouped); species and associates are rendered.
fn term_text(raw: &str, term: &Term, style: Style) -> String {
    match &term.entity {
        Entity::Compound(c) => {
            let coefficient = coefficient_prefix(term.coefficient, style);
            format!("{coefficient}{}", &raw[c.span.clone()])
        }
        Entity::Nil => "nil".to_string(),
        _ => render_term(term, style),
    }
}

fn coefficient_prefix(q: Q, style: Style) -> String {
    let text = number::coefficient_text(q, style == Style::Unicode);
    if text.is_empty() {
        text
    } else {
        format!("{text} ")
    }
}

/// Aligns labels and arrows within each run of consecutive reaction lines.
fn align(pieces: Vec<Piece>, final_newline: bool) -> String {
    let mut out = String::new();
    let mut block: Vec<Piece> = Vec::new();
    let flush = |block: &mut Vec<Piece>, out: &mut String| {
        let label_width = block
            .iter()
            .map(|p| match p {
                Piece::Reaction { label: Some(l), .. } => width(l) + 1,
                _ => 0,
            })
            .max()
            .unwrap_or(0);
        let left_width = block
            .iter()
            .map(|p| match p {
                Piece::Reaction { left, .. } => width(left),
                _ => 0,
            })
            .max()
            .unwrap_or(0);
        for piece in block.drain(..) {
            if let Piece::Reaction {
                label,
                left,
                arrow,
                right,
                comment,
            } = piece
            {
                let mut line = String::new();
                if label_width > 0 {
                    let label = label.map(|l| format!("{l}:")).unwrap_or_default();
                    line.push_str(&pad(&label, label_width));
                    line.push(' ');
                }
                line.push_str(&pad(&left, left_width));
                line.push(' ');
                line.push_str(arrow);
                line.push(' ');
                line.push_str(&right);
                out.push_str(&with_comment(line, comment));
                out.push('\n');
            }
        }
    };
    for piece in pieces {
        match piece {
            Piece::Reaction { .. } => block.push(piece),
            Piece::Verbatim(text) => {
                flush(&mut block, &mut out);
                out.push_str(&text);
                out.push('\n');
            }
        }
    }
    flush(&mut block, &mut out);
    if !final_newline && out.ends_with('\n') {
        out.pop();
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats_a_block() {
        let input = "# notes\nhost   ZrO2\ndope: Y2O3->2Y_Zr'+3O_O+V_O**  # from the lab\nred: O_O -> V_O^{..} + 2 e' + 0.5O2(g)\ngap: nil->e'+h.\n\nnil = e′ + h•\n";
        let expected =
            "# notes\nhost ZrO2\ndope: Y2O3 -> 2 Y_Zr' + 3 O_Ox + V_O..  # from the lab\n";
        let got = format_text(input, MarkSpelling::Ascii).expect("formats");
        assert!(got.starts_with(expected), "{got}");
        assert!(
            got.contains("red:  O_Ox -> V_O.. + 2 e' + 1/2 O2(g)\ngap:  nil  -> e' + h.\n"),
            "{got}"
        );
        assert!(got.ends_with("\nnil = e' + h.\n"), "{got}");
        assert_eq!(
            format_text(&got, MarkSpelling::Ascii).expect("formats"),
            got,
            "idempotent"
        );
    }

    #[test]
    fn unicode_spelling_and_grouped_compounds() {
        let got = format_text("Ba(OH)2 + V_O.. -> 2OH_O. + BaO\n", MarkSpelling::Unicode)
            .expect("formats");
        assert_eq!(got, "Ba(OH)2 + V_O•• → 2 OH_O• + BaO\n");
    }

    #[test]
    fn latex_reactions_are_read_and_kept_as_written() {
        // source: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations
        // 2005), IR-11.4 (italic V for the vacancy, bullets and primes).
        let input = "host ZrO2\n  r: \\mathrm{O}_{\\mathrm{O}}^{\\times} \\rightarrow V_{\\mathrm{O}}^{\\bullet\\bullet} + 2e^{\\prime} + \\tfrac{1}{2}\\mathrm{O_2(g)}  \nband: nil->e'+h.\n";
        let got = format_text(input, MarkSpelling::Ascii).expect("formats");
        assert_eq!(
            got,
            "host ZrO2\nr: \\mathrm{O}_{\\mathrm{O}}^{\\times} \\rightarrow V_{\\mathrm{O}}^{\\bullet\\bullet} + 2e^{\\prime} + \\tfrac{1}{2}\\mathrm{O_2(g)}\nband: nil -> e' + h.\n"
        );
        let errors = format_text(
            "\\mathrm{O}_{\\mathcal{O}} \\rightarrow V\n",
            MarkSpelling::Ascii,
        )
        .expect_err("unknown command");
        assert_eq!(errors[0].line, 1);
    }

    #[test]
    fn refuses_files_that_do_not_parse() {
        let errors =
            format_text("host ZrO2\nO_O -> V_O.' \n", MarkSpelling::Ascii).expect_err("bad line");
        assert_eq!(errors[0].line, 2);
    }
}
