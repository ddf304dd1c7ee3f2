//! A defect model built in code: host, reactions, K data, fixed amounts,
//! pressures, temperature and pO2 range, without writing a reaction file.
//!
//! In: the parts, one call each. Out: the same `Document` the file reader
//! gives, assembled item by item (each item gets a line of its own, written
//! out so that a diagnostic can show it), and from it a `Model` through
//! `Model::build`, the one assembly path. A model built here and the same
//! model read from a file solve alike.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::check::check_reaction;
use crate::file::reader::{Line, classify};
use crate::host::Host;
use crate::model::law::factor_of;
use crate::model::read::read_model_line;
use crate::model::{
    Basis, DataLine, Datum, Document, FixLine, Model, Overrides, PressureLine, ReactionLine,
};
use crate::notation::{Compound, Entity, Phase, Reaction, Span, parse_formula, parse_reaction};
use crate::notation::{parse_species_text, render_reaction};

/// Builds a `Model` in code.
///
/// ```
/// use lacuna::host::Host;
/// use lacuna::model::builder::ModelBuilder;
///
/// let model = ModelBuilder::new(Host::from_spec("ZrO2").unwrap())
///     .reaction_text("gap", "nil -> e' + h.")
///     .k("gap", 1e-20, Some(1273.0))
///     .temperature(1273.0)
///     .build()
///     .unwrap();
/// assert_eq!(model.neutrality(lacuna::notation::Style::Ascii), "n = p");
/// ```
#[derive(Debug, Clone)]
pub struct ModelBuilder {
    doc: Document,
    overrides: Overrides,
    /// Index into the document's hosts of the host the next reactions are
    /// checked against.
    current_host: Option<usize>,
}

impl ModelBuilder {
    /// A model of `host` with nothing in it yet.
    pub fn new(host: Host) -> ModelBuilder {
        ModelBuilder {
            doc: Document {
                source: "model".to_string(),
                hosts: vec![(host, 0)],
                ..Document::default()
            },
            overrides: Overrides::default(),
            current_host: Some(0),
        }
    }

    /// A builder with no host yet, for the laws of reactions in several
    /// hosts (`host` sets the host of the reactions that follow); `build`
    /// refuses it while it has none.
    pub fn hostless() -> ModelBuilder {
        ModelBuilder {
            doc: Document {
                source: "model".to_string(),
                ..Document::default()
            },
            overrides: Overrides::default(),
            current_host: None,
        }
    }

    /// The host of the reactions that follow (`None`: none, so their sites
    /// and charges cannot be checked). A model has one host: `build`
    /// refuses a builder given several; a set of laws may have several.
    pub fn host(mut self, host: Option<Host>) -> ModelBuilder {
        let same = match (&host, self.current_host) {
            (Some(h), Some(i)) => self.doc.hosts.get(i).is_some_and(|(x, _)| x == h),
            (None, None) => true,
            _ => false,
        };
        if !same {
            self.current_host = host.map(|h| {
                self.doc.hosts.push((h, 0));
                self.doc.hosts.len() - 1
            });
        }
        self
    }

    /// The name diagnostics and reports give as the model's source.
    pub fn source(mut self, name: &str) -> ModelBuilder {
        self.doc.source = name.to_string();
        self
    }

    /// Settings that take precedence over the parts (temperature, pO2
    /// range, slopes only).
    pub fn overrides(mut self, overrides: Overrides) -> ModelBuilder {
        self.overrides = overrides;
        self
    }

    /// Adds a line and returns its number (1-based).
    fn line(&mut self, text: String) -> u32 {
        self.doc.lines.push(text);
        u32::try_from(self.doc.lines.len()).unwrap_or(u32::MAX)
    }

    fn problem(&mut self, line: u32, d: Diagnostic) {
        let text = self.doc.line_text(line).to_string();
        self.doc.diagnostics.push(d.locate(line, &text));
    }

    /// The number the next item's line gets (1-based).
    pub fn next_line(&self) -> u32 {
        u32::try_from(self.doc.lines.len())
            .unwrap_or(u32::MAX)
            .saturating_add(1)
    }

    /// A labelled reaction in any notation the reaction parser reads
    /// (`red: O_O -> V_O.. + 2e' + 1/2 O2(g)` without the `red: `). It is
    /// checked against the host; problems come back from `build`.
    pub fn reaction_text(mut self, label: &str, text: &str) -> ModelBuilder {
        let prefix = format!("{label}: ");
        let line = self.line(format!("{prefix}{text}"));
        let whole = self.doc.line_text(line).to_string();
        let (parsed, diags) = parse_reaction(&whole, prefix.len()..whole.len());
        for d in diags {
            self.problem(line, d);
        }
        if let Some(reaction) = parsed {
            self = self.push_reaction(Some(label), 0..label.len(), reaction, line);
        }
        self
    }

    /// A reaction already parsed from `line_text` (its spans point into
    /// that text, which diagnostics show). `label` may be absent: the
    /// reaction is then shown for reference only.
    pub fn parsed_reaction(
        mut self,
        label: Option<&str>,
        reaction: Reaction,
        line_text: &str,
    ) -> ModelBuilder {
        let line = self.line(line_text.to_string());
        let span = label.map_or(0..0, |l| {
            line_text
                .find(l)
                .map_or(0..0, |start| start..start + l.len())
        });
        self.push_reaction(label, span, reaction, line)
    }

    /// A reaction value made in code; its line shows it in ASCII notation.
    pub fn reaction(self, label: &str, reaction: &Reaction) -> ModelBuilder {
        let text = render_reaction(reaction, crate::notation::Style::Ascii);
        self.reaction_text(label, &text)
    }

    fn push_reaction(
        mut self,
        label: Option<&str>,
        label_span: Span,
        reaction: Reaction,
        line: u32,
    ) -> ModelBuilder {
        let host = self
            .current_host
            .and_then(|i| self.doc.hosts.get(i))
            .map(|(h, _)| h);
        let verdict = check_reaction(&reaction, host);
        let ok = verdict.ok();
        for d in verdict.diagnostics {
            self.problem(line, d);
        }
        self.doc.reactions.push(ReactionLine {
            label: label.map(str::to_string),
            label_span: label.map(|_| label_span),
            reaction,
            line,
            host: self.current_host,
            ok,
        });
        self
    }

    fn datum(mut self, label: &str, datum: Datum, text: String) -> ModelBuilder {
        let line = self.line(text);
        let length = self.doc.line_text(line).len();
        let start = self.doc.line_text(line).find(label).unwrap_or(0);
        self.doc.data.push(DataLine {
            label: label.to_string(),
            label_span: start..start + label.len(),
            datum,
            line,
            span: 0..length,
        });
        self
    }

    /// K of the reaction `label`, at `at` kelvin (`None`: at the model's
    /// temperature).
    pub fn k(self, label: &str, value: f64, at: Option<f64>) -> ModelBuilder {
        let text = match at {
            Some(t) => format!("K {label} = {value:e} at {t} K"),
            None => format!("K {label} = {value:e}"),
        };
        self.datum(label, Datum::K { value, at }, text)
    }

    /// ΔH of the reaction `label`, in eV.
    pub fn enthalpy(self, label: &str, ev: f64) -> ModelBuilder {
        self.datum(label, Datum::Enthalpy(ev), format!("dH {label} = {ev} eV"))
    }

    /// ΔS of the reaction `label`, in eV/K.
    pub fn entropy(self, label: &str, ev_per_k: f64) -> ModelBuilder {
        self.datum(
            label,
            Datum::Entropy(ev_per_k),
            format!("dS {label} = {ev_per_k} eV/K"),
        )
    }

    /// The equilibrium temperature, in kelvin.
    pub fn temperature(mut self, kelvin: f64) -> ModelBuilder {
        let line = self.line(format!("temperature {kelvin} K"));
        self.doc.temperature = Some((kelvin, line));
        self
    }

    /// The pO2 range of sweeps, in bar.
    pub fn po2_range(mut self, low: f64, high: f64) -> ModelBuilder {
        let line = self.line(format!("po2 {low:e} to {high:e} bar"));
        self.doc.po2 = Some(((low, high), line));
        self
    }

    /// A fixed partial pressure (bar) of a gas other than O2 (`H2O`).
    pub fn pressure(mut self, gas: &str, bar: f64) -> ModelBuilder {
        let line = self.line(format!("pressure {gas} = {bar} bar"));
        let text = self.doc.line_text(line).to_string();
        let span = 9..9 + gas.len();
        match parse_formula(&text, span.clone()) {
            Ok(formula) => {
                let compound = Compound {
                    formula,
                    phase: Some(Phase::Gas),
                    span: 0..0,
                };
                let key =
                    factor_of(&Entity::Compound(compound)).map_or_else(String::new, |f| f.key);
                self.doc.pressures.push(PressureLine {
                    key,
                    text: gas.to_string(),
                    bar,
                    line,
                    span: 9..text.len(),
                });
            }
            Err(diags) => {
                for d in diags {
                    self.problem(line, d);
                }
            }
        }
        self
    }

    /// A fixed amount of one species (`Y_Zr'`), on a basis.
    pub fn fix(mut self, subject: &str, amount: f64, basis: Basis) -> ModelBuilder {
        let basis_text = match &basis {
            Basis::SiteFraction => "site fraction".to_string(),
            Basis::CationFraction => "cation fraction".to_string(),
            Basis::PerFormulaUnit => "per formula unit".to_string(),
            Basis::MolPercent { text, .. } => format!("mol% {text}"),
        };
        let line = self.line(format!("fix {subject} = {amount} {basis_text}"));
        let subject_span = 4..4 + subject.len();
        let amount_start = subject_span.end + 3;
        let amount_span = amount_start..amount_start + amount.to_string().len();
        match parse_species_text(subject).map(|t| t.entity) {
            Ok(Entity::Species(mut s)) => {
                s.span = subject_span.clone();
                self.doc.fixes.push(FixLine {
                    subject: s,
                    subject_span,
                    amount,
                    amount_span,
                    basis,
                    line,
                });
            }
            _ => self.problem(
                line,
                Diagnostic::new(
                    Code::FixedTotal,
                    subject_span,
                    format!("`{subject}` is not a single species"),
                )
                .with_help("fix one species on one site, e.g. `Y_Zr'`"),
            ),
        }
        self
    }

    /// A fixed amount given in mole percent of a dopant compound mixed
    /// with the host (`8` mol% `Y2O3`).
    pub fn fix_mol_percent(self, subject: &str, percent: f64, compound: &str) -> ModelBuilder {
        match parse_formula(compound, 0..compound.len()) {
            Ok(formula) => self.fix(
                subject,
                percent,
                Basis::MolPercent {
                    formula,
                    text: compound.to_string(),
                },
            ),
            Err(diags) => {
                let mut this = self;
                let line = this.line(format!("fix {subject} = {percent} mol% {compound}"));
                for mut d in diags {
                    let offset = this.doc.line_text(line).len() - compound.len();
                    d.span = d.span.start + offset..d.span.end + offset;
                    this.problem(line, d);
                }
                this
            }
        }
    }

    /// Leaves lines blank so that the next item is on line `n` (1-based),
    /// for a caller that numbers its items as they appear elsewhere (the
    /// workbench numbers them as `/save` writes the session).
    pub fn skip_to_line(mut self, n: u32) -> ModelBuilder {
        while self.next_line() < n {
            self.line(String::new());
        }
        self
    }

    /// One model line as a reaction file writes it (`K red = 1e-20`,
    /// `dH red = 4.5 eV`, `fix Y_Zr' = 8 mol% Y2O3`, `temperature 1273 K`,
    /// `po2 1e-30 to 1e5 bar`, `pressure H2O = 0.03 bar`), read by the
    /// model reader; a line that is not a model line is a located error.
    pub fn model_line(mut self, text: &str) -> ModelBuilder {
        let number = self.line(text.to_string());
        match classify(text) {
            Line::Model { keyword, rest } => {
                read_model_line(&mut self.doc, number, text, &text[keyword], rest);
            }
            _ => self.problem(
                number,
                Diagnostic::new(Code::ModelSyntax, 0..text.len(), "not a model line").with_help(
                    "model lines start with K, dH, dS, fix, temperature, po2 or pressure",
                ),
            ),
        }
        self
    }

    /// Drops the data lines (`K`, `dH`, `dS`) of these reaction labels, and
    /// their problems: for a model of some of the reactions of a larger set.
    pub fn without_data_of(mut self, labels: &[String]) -> ModelBuilder {
        let dropped: Vec<u32> = self
            .doc
            .data
            .iter()
            .filter(|d| labels.contains(&d.label))
            .map(|d| d.line)
            .collect();
        self.doc.data.retain(|d| !labels.contains(&d.label));
        self.doc.diagnostics.retain(|d| !dropped.contains(&d.line));
        self
    }

    /// The document assembled so far, as the file reader would give it.
    pub fn document(&self) -> &Document {
        &self.doc
    }

    /// The model, or every problem found (located on the items' lines).
    pub fn build(self) -> Result<Model, Vec<Diagnostic>> {
        Model::build(&self.doc, self.overrides)
    }
}
