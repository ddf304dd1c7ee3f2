//! Typesetting for manuscripts: reactions (and, through small primitives,
//! mass-action laws) written as LaTeX math, Unicode text, ASCII, HTML or
//! Markdown.
//!
//! In: parsed reactions, their labels and hosts. Out: one line of text per
//! item in the chosen form. The spelling of species comes from
//! `notation::render`; this module adds what a document needs around it: the
//! host over the arrow, labels, list items. Forms that can be read back
//! (ASCII, Unicode, LaTeX) parse to the same reaction. Grammar of the forms:
//! grammar/repl.md, "Typeset forms".

use crate::base::number::{self, Q};
use crate::host::Host;
use crate::notation::{
    Entity, Phase, Reaction, Style, Term, escape_html, render_formula, render_reaction_over,
    render_term,
};
use std::fmt;

/// An output form.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Form {
    /// `V_O..` — what a keyboard types; a reaction file line.
    Ascii,
    /// `V_O••` — plain text for readers.
    Unicode,
    /// `V_{\mathrm{O}}^{\bullet\bullet}` — math mode, amsmath.
    Latex,
    /// `<i>V</i><sub>O</sub><sup>••</sup>`
    Html,
    /// Inline HTML in Markdown list items.
    Markdown,
}

impl Form {
    pub const ALL: [Form; 5] = [
        Form::Latex,
        Form::Unicode,
        Form::Ascii,
        Form::Html,
        Form::Markdown,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Form::Ascii => "ascii",
            Form::Unicode => "unicode",
            Form::Latex => "latex",
            Form::Html => "html",
            Form::Markdown => "markdown",
        }
    }

    /// Looks a form up by name (`tex` and `md` are accepted too).
    pub fn from_name(name: &str) -> Option<Form> {
        match name.to_ascii_lowercase().as_str() {
            "ascii" | "text" | "plain" => Some(Form::Ascii),
            "unicode" | "utf8" => Some(Form::Unicode),
            "latex" | "tex" => Some(Form::Latex),
            "html" => Some(Form::Html),
            "markdown" | "md" => Some(Form::Markdown),
            _ => None,
        }
    }

    /// The renderer's style for this form.
    pub fn style(self) -> Style {
        match self {
            Form::Ascii => Style::Ascii,
            Form::Unicode => Style::Unicode,
            Form::Latex => Style::Latex,
            Form::Html => Style::Html,
            Form::Markdown => Style::Markdown,
        }
    }

    /// Whether Lacuna reads this form back (ASCII, Unicode, LaTeX).
    pub fn reads_back(self) -> bool {
        matches!(self, Form::Ascii | Form::Unicode | Form::Latex)
    }

    /// Whether the host can be set over the arrow in this form.
    pub fn stacks(self) -> bool {
        matches!(self, Form::Latex | Form::Html | Form::Markdown)
    }
}

impl fmt::Display for Form {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The host formula as the form writes it: `ZrO2`, `ZrO₂`,
/// `\mathrm{ZrO_{2}}`, `ZrO<sub>2</sub>`.
pub fn host_formula(host: &Host, form: Form) -> String {
    render_formula(&host.formula, form.style())
}

/// When to set the host over the arrow.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum ArrowHost {
    /// Over the arrow of reactions that bring a condensed compound into the
    /// host (`Y2O3 -> ...`), as manuscripts do; a plain arrow for the
    /// others (reduction, Frenkel and Schottky disorder, association).
    #[default]
    Auto,
    Always,
    Never,
}

/// The host to set over the arrow of `reaction` under `policy`.
pub fn host_over_arrow<'h>(
    reaction: &Reaction,
    host: Option<&'h Host>,
    policy: ArrowHost,
) -> Option<&'h Host> {
    let incorporates = || {
        reaction
            .left
            .iter()
            .any(|t| matches!(&t.entity, Entity::Compound(c) if c.phase != Some(Phase::Gas)))
    };
    match policy {
        ArrowHost::Always => host,
        ArrowHost::Never => None,
        ArrowHost::Auto => host.filter(|_| incorporates()),
    }
}

/// One reaction. With a host and a form that stacks, the host is set over
/// the arrow as the trade does (`\xrightarrow{\mathrm{ZrO_{2}}}`); choose
/// the host with `host_over_arrow`.
pub fn reaction(reaction: &Reaction, form: Form, host: Option<&Host>) -> String {
    let over = host
        .filter(|_| form.stacks())
        .map(|h| host_formula(h, form));
    render_reaction_over(reaction, form.style(), over.as_deref())
}

/// One species, associate or compound with its coefficient.
pub fn term(term: &Term, form: Form) -> String {
    render_term(term, form.style())
}

/// One document line: the typeset body with its label, if any, as the form
/// keeps labels. ASCII and Unicode: `label: body` (a reaction-file line);
/// LaTeX: `body % label` (a comment, so the line still compiles); HTML:
/// `<b>label</b>: body`; Markdown: a list item `- **label**: body`.
pub fn line(label: Option<&str>, body: &str, form: Form) -> String {
    match (form, label) {
        (Form::Ascii | Form::Unicode, Some(l)) => format!("{l}: {body}"),
        (Form::Latex, Some(l)) => format!("{body} % {}", l.replace('%', "\\%")),
        (Form::Html, Some(l)) => format!("<b>{}</b>: {body}", escape_html(l)),
        (Form::Markdown, Some(l)) => format!("- **{}**: {body}", escape_markdown(l)),
        (Form::Markdown, None) => format!("- {body}"),
        (_, None) => body.to_string(),
    }
}

/// Escapes the characters Markdown gives meaning to in running text.
pub fn escape_markdown(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if matches!(
            c,
            '\\' | '`' | '*' | '_' | '[' | ']' | '<' | '>' | '#' | '|' | '!'
        ) {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

// Integration point for mass-action laws (src/model/law.rs): a law is a product of
// concentrations and partial pressures raised to exact powers, equal to a
// constant. These primitives write those pieces in every form, so the law
// module composes `[V_O••][e′]² p(O₂)^½ = K` without knowing any markup.

/// `[X]`: the concentration of an already typeset species.
pub fn concentration(species: &str, form: Form) -> String {
    match form {
        Form::Latex => format!("\\left[{species}\\right]"),
        _ => format!("[{species}]"),
    }
}

/// `base^exponent` with an exact exponent; nothing is written for 1.
pub fn power(base: &str, exponent: Q, form: Form) -> String {
    if exponent == Q::from_integer(1) {
        return base.to_string();
    }
    let text = number::to_plain(exponent);
    match form {
        Form::Latex if exponent.is_integer() => format!("{base}^{{{text}}}"),
        Form::Latex => {
            let sign = if exponent < Q::from_integer(0) {
                "-"
            } else {
                ""
            };
            format!(
                "{base}^{{{sign}\\frac{{{}}}{{{}}}}}",
                exponent.numer().abs(),
                exponent.denom()
            )
        }
        Form::Html | Form::Markdown => format!("{base}<sup>{text}</sup>"),
        Form::Unicode => format!("{base}{}", superscript_text(&text)),
        Form::Ascii => format!("{base}^({text})"),
    }
}

/// `p(O₂)`: the partial pressure of a gas, from its typeset formula.
pub fn partial_pressure(formula: &str, form: Form) -> String {
    match form {
        Form::Latex => format!("p_{{{formula}}}"),
        Form::Html | Form::Markdown => format!("<i>p</i>({formula})"),
        _ => format!("p({formula})"),
    }
}

fn superscript_text(text: &str) -> String {
    text.chars()
        .map(|c| match c {
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            '9' => '⁹',
            '-' => '⁻',
            '/' => 'ᐟ',
            other => other,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::parse_reaction;

    fn parsed(text: &str) -> Reaction {
        let (r, d) = parse_reaction(text, 0..text.len());
        assert!(d.is_empty(), "{d:?}");
        r.unwrap()
    }

    #[test]
    fn forms_have_names_and_round_trip_their_names() {
        for form in Form::ALL {
            assert_eq!(Form::from_name(form.name()), Some(form));
        }
        assert_eq!(Form::from_name("TeX"), Some(Form::Latex));
        assert_eq!(Form::from_name("rtf"), None);
    }

    // source: common practice — the host over the reaction arrow, as in
    // `\xrightarrow{ZrO_2}` above an incorporation reaction.
    #[test]
    fn the_host_goes_over_the_arrow() {
        let host = Host::from_spec("ZrO2").unwrap();
        let r = parsed("Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox");
        let latex = reaction(&r, Form::Latex, Some(&host));
        assert!(
            latex.contains("\\xrightarrow{\\mathrm{ZrO_{2}}}"),
            "{latex}"
        );
        let unicode = reaction(&r, Form::Unicode, Some(&host));
        assert_eq!(unicode, "Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×");
        let html = reaction(&r, Form::Html, Some(&host));
        assert!(html.contains("<rt>ZrO<sub>2</sub></rt>"), "{html}");
    }

    // source: common practice — manuscripts set the host over the arrow of a
    // dissolution reaction, not over that of an intrinsic one.
    #[test]
    fn the_host_goes_over_incorporation_reactions_only_by_default() {
        let host = Host::from_spec("ZrO2").unwrap();
        let dissolution = parsed("Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox");
        let reduction = parsed("O_O -> V_O.. + 2e' + 1/2 O2(g)");
        assert!(host_over_arrow(&dissolution, Some(&host), ArrowHost::Auto).is_some());
        assert!(host_over_arrow(&reduction, Some(&host), ArrowHost::Auto).is_none());
        assert!(host_over_arrow(&reduction, Some(&host), ArrowHost::Always).is_some());
        assert!(host_over_arrow(&dissolution, Some(&host), ArrowHost::Never).is_none());
    }

    #[test]
    fn labels_follow_each_form() {
        assert_eq!(line(Some("red"), "x", Form::Ascii), "red: x");
        assert_eq!(line(Some("red"), "x", Form::Latex), "x % red");
        assert_eq!(line(None, "x", Form::Markdown), "- x");
        assert_eq!(line(Some("a<b"), "x", Form::Html), "<b>a&lt;b</b>: x");
    }

    #[test]
    fn law_pieces() {
        assert_eq!(power("x", Q::new(1, 2), Form::Latex), "x^{\\frac{1}{2}}");
        assert_eq!(power("x", Q::new(-1, 4), Form::Latex), "x^{-\\frac{1}{4}}");
        assert_eq!(power("x", Q::from_integer(2), Form::Unicode), "x²");
        assert_eq!(power("x", Q::from_integer(1), Form::Html), "x");
        assert_eq!(concentration("e′", Form::Unicode), "[e′]");
        assert_eq!(partial_pressure("O₂", Form::Unicode), "p(O₂)");
    }
}
