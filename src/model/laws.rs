//! The mass-action laws of a whole reaction file: one path for the `law`
//! command, the workbench's `/law` and the library.
//!
//! In: a read `Document`. Out: for every reaction its law with K(T) and
//! the host's formula, or a located diagnostic saying why no law is
//! written (the reaction fails its checks, or its exponents leave the
//! exact range); and the electroneutrality over every charged species of
//! the laws and the fixed dopants.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::model::law::{FactorKind, Law, factor_of, mass_action_law};
use crate::model::thermo::Thermo;
use crate::model::{DataLine, Document, neutrality_text, resolve_thermo};
use crate::notation::{Entity, Style};

/// The law of one reaction of a document, with its data.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct LawEntry {
    /// The document's source name.
    pub source: String,
    /// The reaction's line (1-based).
    pub line: u32,
    pub law: Law,
    /// K(T), when the file gives data for the reaction's label.
    pub thermo: Option<Thermo>,
    /// The formula of the host in force on the line.
    pub host: Option<String>,
}

/// What became of one reaction of a document.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct ReactionLaw {
    /// The reaction's line (1-based).
    pub line: u32,
    /// The law, or why none is written (a located error).
    pub law: Result<LawEntry, Diagnostic>,
    /// Problems of the reaction's data lines (located on their own lines);
    /// the law is still written, without K(T).
    pub data_problems: Vec<Diagnostic>,
}

/// The laws of a document.
#[derive(Debug, Clone, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct DocumentLaws {
    /// One per reaction that read as a reaction, in line order.
    pub reactions: Vec<ReactionLaw>,
    /// The file's temperature (kelvin), at which K is evaluated by default.
    pub temperature: Option<f64>,
}

impl DocumentLaws {
    /// The laws written.
    pub fn laws(&self) -> impl Iterator<Item = &LawEntry> {
        self.reactions.iter().filter_map(|r| r.law.as_ref().ok())
    }

    /// Every problem: the refused reactions and the data problems.
    pub fn problems(&self) -> Vec<Diagnostic> {
        let mut all = Vec::new();
        for r in &self.reactions {
            if let Err(d) = &r.law {
                all.push(d.clone());
            }
            all.extend(r.data_problems.iter().cloned());
        }
        all
    }

    /// Whether any reaction was refused or any data line is wrong.
    pub fn has_errors(&self) -> bool {
        self.reactions
            .iter()
            .any(|r| r.law.is_err() || r.data_problems.iter().any(Diagnostic::is_error))
    }
}

/// The laws of every reaction of `doc`. A reaction that fails its checks
/// gets a `NoLaw` error; one whose exponents leave the exact
/// range gets `Number` (P107); both located on the reaction's line.
pub fn document_laws(doc: &Document) -> DocumentLaws {
    let temperature = doc.temperature.map(|(t, _)| t);
    let mut reactions = Vec::new();
    for r in &doc.reactions {
        let text = doc.line_text(r.line);
        if !r.ok {
            let d = Diagnostic::new(
                Code::NoLaw,
                r.reaction.span.clone(),
                "no mass-action law is written for a reaction that does not pass its checks",
            )
            .with_help(
                "fix the problems reported for this line; the law of an unbalanced reaction would be wrong",
            )
            .locate(r.line, text);
            reactions.push(ReactionLaw {
                line: r.line,
                law: Err(d),
                data_problems: Vec::new(),
            });
            continue;
        }
        let Ok(law) = mass_action_law(&r.reaction, r.label.as_deref()) else {
            let d = Diagnostic::new(
                Code::Number,
                r.reaction.span.clone(),
                "the exponents of this law grew beyond the exact range",
            )
            .with_help("scale the coefficients down")
            .locate(r.line, text);
            reactions.push(ReactionLaw {
                line: r.line,
                law: Err(d),
                data_problems: Vec::new(),
            });
            continue;
        };
        let data: Vec<&DataLine> = match &r.label {
            Some(label) => doc.data.iter().filter(|d| &d.label == label).collect(),
            None => Vec::new(),
        };
        // A K without `at` holds at the file's temperature line only.
        let mut data_problems = Vec::new();
        let thermo = match resolve_thermo(&data, temperature, r.line) {
            Ok(t) => t.map(|(t, _)| t),
            Err((line, d)) => {
                data_problems.push(d.locate(line, doc.line_text(line)));
                None
            }
        };
        let host = r
            .host
            .and_then(|i| doc.hosts.get(i))
            .map(|(h, _)| h.formula_text.clone());
        reactions.push(ReactionLaw {
            line: r.line,
            law: Ok(LawEntry {
                source: doc.source.clone(),
                line: r.line,
                law,
                thermo,
                host,
            }),
            data_problems,
        });
    }
    DocumentLaws {
        reactions,
        temperature,
    }
}

/// Electroneutrality over every charged species of `laws` and the fixed
/// dopants of `doc`, in Unicode and in ASCII; `None` unless both signs of
/// charge occur. Written as `Model::neutrality` writes it.
pub fn document_neutrality<'a>(
    laws: impl IntoIterator<Item = &'a LawEntry>,
    doc: &Document,
) -> Option<(String, String)> {
    let mut charged: Vec<(String, String, i32)> = Vec::new();
    for e in laws {
        for f in &e.law.factors {
            if f.kind.is_concentration()
                && f.charge != 0
                && !charged.iter().any(|c| c.0 == f.unicode)
            {
                charged.push((f.unicode.clone(), f.ascii.clone(), f.charge));
            }
        }
    }
    for fix in &doc.fixes {
        if let Some(f) = factor_of(&Entity::Species(fix.subject.clone())) {
            if f.kind == FactorKind::Defect
                && f.charge != 0
                && !charged.iter().any(|c| c.0 == f.unicode)
            {
                charged.push((f.unicode, f.ascii, f.charge));
            }
        }
    }
    if !charged.iter().any(|c| c.2 > 0) || !charged.iter().any(|c| c.2 < 0) {
        return None;
    }
    let in_style = |style: Style| {
        let terms: Vec<(&str, i32)> = charged
            .iter()
            .map(|(u, a, z)| (if style == Style::Ascii { a } else { u }.as_str(), *z))
            .collect();
        neutrality_text(&terms)
    };
    Some((in_style(Style::Unicode), in_style(Style::Ascii)))
}
