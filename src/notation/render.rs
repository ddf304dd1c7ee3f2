//! Writes notation back as text: ASCII (what a keyboard types), Unicode (what
//! a reader expects), LaTeX math (what a manuscript needs), and HTML or
//! Markdown (`<sub>`/`<sup>`, for web pages and notes). The ASCII and Unicode
//! forms parse back to the same species; the LaTeX form does after
//! `notation::latex_input::normalise`.

use super::{
    Associate, Compound, Entity, Formula, Occupant, Phase, Reaction, Site, Species, Term,
    VacancySpelling,
};
use crate::base::elements;
use crate::base::number::{self, Q};
use std::fmt::Write;

/// Which spelling of the notation to write.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Style {
    /// `V_O..`, `Y_Zr'`, `O_Ox`, `->`
    Ascii,
    /// `V_O••`, `Y_Zr′`, `O_O×`, `→`
    Unicode,
    /// `V_{\mathrm{O}}^{\bullet\bullet}` (math mode; the vacancy `V` in math
    /// italic, elements upright, as IUPAC 2005 IR-11.4.2 asks)
    Latex,
    /// `<i>V</i><sub>O</sub><sup>••</sup>`
    Html,
    /// Inline HTML as Markdown allows it, with Markdown's own syntax
    /// characters escaped where they occur in text.
    Markdown,
}

impl Style {
    fn tagged(self) -> bool {
        matches!(self, Style::Html | Style::Markdown)
    }
}

fn write_count(out: &mut String, n: Q, style: Style) {
    if n == Q::from_integer(1) {
        return;
    }
    let text = decimal_text(n);
    match style {
        Style::Latex => {
            let _ = write!(out, "_{{{text}}}");
        }
        Style::Html | Style::Markdown => {
            let _ = write!(out, "<sub>{text}</sub>");
        }
        // Plain digits in Unicode too: `Nb2O5` is how formulas are typed and
        // searched, and the marks are what the Unicode style is for.
        Style::Unicode | Style::Ascii => out.push_str(&text),
    }
}

/// An exact decimal when the fraction has one (`0.9`), else `a/b`.
fn decimal_text(q: Q) -> String {
    if q.is_integer() {
        return q.numer().to_string();
    }
    let mut d = *q.denom();
    let (mut twos, mut fives) = (0u32, 0u32);
    while d % 2 == 0 {
        d /= 2;
        twos = twos.saturating_add(1);
    }
    while d % 5 == 0 {
        d /= 5;
        fives = fives.saturating_add(1);
    }
    let places = twos.max(fives);
    if d != 1 || places > 18 {
        return number::to_plain(q);
    }
    let Some(scale) = 10i64.checked_pow(places) else {
        return number::to_plain(q);
    };
    let Some(scaled) = number::mul(q, Q::from_integer(scale))
        .ok()
        .filter(|s| s.is_integer())
    else {
        return number::to_plain(q);
    };
    let digits = scaled.numer().abs().to_string();
    let places = places as usize;
    // places ≤ 18 (checked above), and the padding leaves at least one
    // digit before the point, so neither step saturates.
    let padded = format!("{digits:0>width$}", width = places.saturating_add(1));
    let (whole, frac) = padded.split_at(padded.len().saturating_sub(places));
    let sign = if *scaled.numer() < 0 { "-" } else { "" };
    format!("{sign}{whole}.{}", frac.trim_end_matches('0'))
}

fn write_formula(out: &mut String, formula: &Formula, style: Style) {
    // Unicode subscripts only for whole counts; a formula with a decimal
    // count keeps all its digits on the line rather than mixing the two.
    let style = if style == Style::Unicode && formula.atoms.iter().any(|(_, n)| !n.is_integer()) {
        Style::Ascii
    } else {
        style
    };
    for (z, n) in &formula.atoms {
        out.push_str(elements::symbol(*z));
        write_count(out, *n, style);
    }
}

fn write_charge(out: &mut String, charge: i32, style: Style) {
    let count = charge.unsigned_abs() as usize;
    match style {
        Style::Ascii => match charge {
            0 => out.push('x'),
            c if c > 0 => out.push_str(&".".repeat(count)),
            _ => out.push_str(&"'".repeat(count)),
        },
        Style::Unicode => out.push_str(&unicode_marks(charge)),
        Style::Html | Style::Markdown => {
            let _ = write!(out, "<sup>{}</sup>", unicode_marks(charge));
        }
        Style::Latex => {
            let mark = match charge {
                0 => "\\times",
                c if c > 0 => "\\bullet",
                _ => "\\prime",
            };
            let _ = write!(out, "^{{{}}}", mark.repeat(count.max(1)));
        }
    }
}

fn unicode_marks(charge: i32) -> String {
    let count = charge.unsigned_abs() as usize;
    match charge {
        0 => "×".to_string(),
        c if c > 0 => "•".repeat(count),
        _ => "′".repeat(count),
    }
}

fn write_site(out: &mut String, site: &Site, style: Style) {
    match (site, style) {
        (Site::Interstitial, Style::Html | Style::Markdown) => out.push_str("<sub><i>i</i></sub>"),
        (Site::Lattice { element, label }, Style::Html | Style::Markdown) => {
            out.push_str("<sub>");
            out.push_str(elements::symbol(*element));
            if let Some(label) = label {
                let _ = write!(out, ":{}", escape_html(label));
            }
            out.push_str("</sub>");
        }
        (Site::Interstitial, Style::Latex) => out.push_str("_{i}"),
        (Site::Interstitial, _) => out.push_str("_i"),
        (Site::Lattice { element, label }, Style::Latex) => {
            let _ = write!(out, "_{{\\mathrm{{{}}}", elements::symbol(*element));
            if let Some(label) = label {
                let _ = write!(out, "\\mathrm{{:{label}}}");
            }
            out.push('}');
        }
        (
            Site::Lattice {
                element,
                label: Some(label),
            },
            _,
        ) => {
            let _ = write!(out, "_{{{}:{label}}}", elements::symbol(*element));
        }
        (
            Site::Lattice {
                element,
                label: None,
            },
            _,
        ) => {
            let _ = write!(out, "_{}", elements::symbol(*element));
        }
    }
}

fn write_species(out: &mut String, species: &Species, style: Style) {
    match (&species.occupant, style) {
        (Occupant::Electron, s) if s.tagged() => out.push_str("<i>e</i>"),
        (Occupant::Hole, s) if s.tagged() => out.push_str("<i>h</i>"),
        (Occupant::Vacancy(_), s) if s.tagged() => out.push_str("<i>V</i>"),
        (Occupant::Atoms { formula, .. }, s) if s.tagged() => write_formula(out, formula, s),
        (Occupant::Electron, _) => out.push('e'),
        (Occupant::Hole, _) => out.push('h'),
        (Occupant::Vacancy(_), Style::Latex) => out.push('V'),
        (Occupant::Vacancy(VacancySpelling::Word), _) => out.push_str("Vac"),
        (Occupant::Vacancy(VacancySpelling::Box), _) => out.push('□'),
        (Occupant::Vacancy(VacancySpelling::Bare), _) => out.push('V'),
        (Occupant::Atoms { formula, .. }, Style::Latex) => {
            out.push_str("\\mathrm{");
            write_formula(out, formula, style);
            out.push('}');
        }
        (Occupant::Atoms { formula, escaped }, _) => {
            if *escaped {
                out.push_str("el:");
            }
            write_formula(out, formula, style);
        }
    }
    if let Some(site) = &species.site {
        write_site(out, site, style);
    }
    write_charge(out, species.charge, style);
}

fn write_associate(out: &mut String, associate: &Associate, style: Style) {
    out.push(if associate.braces { '{' } else { '(' });
    if style == Style::Latex && associate.braces {
        // The brace was just pushed: the text is not empty.
        out.insert(out.len().saturating_sub(1), '\\');
    }
    for (i, part) in associate.parts.iter().enumerate() {
        if i > 0 {
            out.push_str(if style == Style::Latex { "\\," } else { " " });
        }
        write_term_into(out, part, style);
    }
    if style == Style::Latex && associate.braces {
        out.push_str("\\}");
    } else {
        out.push(if associate.braces { '}' } else { ')' });
    }
    if let Some(charge) = associate.charge {
        write_charge(out, charge, style);
    }
}

fn write_compound(out: &mut String, compound: &Compound, style: Style) {
    let phase = match compound.phase {
        Some(Phase::Gas) => "(g)",
        Some(Phase::Solid) => "(s)",
        Some(Phase::Liquid) => "(l)",
        None => "",
    };
    if style == Style::Latex {
        out.push_str("\\mathrm{");
        write_formula(out, &compound.formula, style);
        out.push_str(phase);
        out.push('}');
    } else {
        write_formula(out, &compound.formula, style);
        out.push_str(phase);
    }
}

fn write_coefficient(out: &mut String, q: Q, style: Style) {
    if q == Q::from_integer(1) {
        return;
    }
    match style {
        Style::Latex if !q.is_integer() => {
            let _ = write!(out, "\\tfrac{{{}}}{{{}}}\\,", q.numer(), q.denom());
        }
        Style::Latex => {
            let _ = write!(out, "{}\\,", q.numer());
        }
        Style::Unicode | Style::Html | Style::Markdown => {
            out.push_str(&number::coefficient_text(q, true));
            out.push(' ');
        }
        Style::Ascii => {
            out.push_str(&number::to_plain(q));
            out.push(' ');
        }
    }
}

fn write_term_into(out: &mut String, term: &Term, style: Style) {
    write_coefficient(out, term.coefficient, style);
    match &term.entity {
        Entity::Species(s) => write_species(out, s, style),
        Entity::Associate(a) => write_associate(out, a, style),
        Entity::Compound(c) => write_compound(out, c, style),
        Entity::Nil => out.push_str(match style {
            Style::Ascii => "nil",
            Style::Unicode | Style::Html | Style::Markdown => "∅",
            Style::Latex => "\\varnothing",
        }),
    }
}

/// One species in the chosen style.
pub fn render_species(species: &Species, style: Style) -> String {
    let mut out = String::new();
    write_species(&mut out, species, style);
    out
}

/// One term (coefficient and entity) in the chosen style.
pub fn render_term(term: &Term, style: Style) -> String {
    let mut out = String::new();
    write_term_into(&mut out, term, style);
    out
}

/// A whole reaction in the chosen style.
pub fn render_reaction(reaction: &Reaction, style: Style) -> String {
    render_reaction_over(reaction, style, None)
}

/// A whole reaction with `over` (already written in `style`, usually the host
/// formula) set over the arrow, as manuscripts write the host: LaTeX
/// `\xrightarrow{..}` (amsmath) or `\overset{..}{..}`, HTML and Markdown a
/// `<ruby>` annotation. ASCII and Unicode text cannot stack, so they ignore it.
pub fn render_reaction_over(reaction: &Reaction, style: Style, over: Option<&str>) -> String {
    use super::Arrow;
    let mut out = String::new();
    let join = " + ";
    for (i, term) in reaction.left.iter().enumerate() {
        if i > 0 {
            out.push_str(join);
        }
        write_term_into(&mut out, term, style);
    }
    let plain = match (reaction.arrow, style) {
        (Arrow::Forward, Style::Ascii) => "->",
        (Arrow::Forward, Style::Latex) => "\\longrightarrow",
        (Arrow::Forward, _) => "→",
        (Arrow::Equilibrium, Style::Ascii) => "<=>",
        (Arrow::Equilibrium, Style::Latex) => "\\rightleftharpoons",
        (Arrow::Equilibrium, _) => "⇌",
        (Arrow::Equals, _) => "=",
    };
    out.push(' ');
    match (over, style) {
        (Some(over), Style::Latex) if reaction.arrow == Arrow::Forward => {
            let _ = write!(out, "\\xrightarrow{{{over}}}");
        }
        (Some(over), Style::Latex) => {
            let _ = write!(out, "\\overset{{{over}}}{{{plain}}}");
        }
        (Some(over), Style::Html | Style::Markdown) => {
            let _ = write!(
                out,
                "<ruby>{plain}<rp>(</rp><rt>{over}</rt><rp>)</rp></ruby>"
            );
        }
        _ => out.push_str(plain),
    }
    out.push(' ');
    for (i, term) in reaction.right.iter().enumerate() {
        if i > 0 {
            out.push_str(join);
        }
        write_term_into(&mut out, term, style);
    }
    out
}

/// A bare formula (a host, a gas) in the chosen style: `ZrO2`, `ZrO₂`,
/// `\mathrm{ZrO_{2}}`, `ZrO<sub>2</sub>`.
pub fn render_formula(formula: &Formula, style: Style) -> String {
    let mut out = String::new();
    match style {
        Style::Latex => {
            out.push_str("\\mathrm{");
            write_formula(&mut out, formula, style);
            out.push('}');
        }
        _ => write_formula(&mut out, formula, style),
    }
    out
}

/// Escapes the characters HTML gives meaning to.
pub fn escape_html(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            _ => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_are_exact() {
        assert_eq!(decimal_text(Q::new(9, 10)), "0.9");
        assert_eq!(decimal_text(Q::new(1, 8)), "0.125");
        assert_eq!(decimal_text(Q::new(1, 3)), "1/3");
        assert_eq!(decimal_text(Q::new(29, 10)), "2.9");
    }
}
