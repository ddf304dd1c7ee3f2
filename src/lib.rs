//! Lacuna: point-defect chemistry in Kröger–Vink notation.
//!
//! # The library in one page
//!
//! The entry points below do what the `lacuna` commands do. The commands
//! and the workbench call them or the same stage functions they wrap (never
//! a copy), so a program using the library gets the same answers:
//!
//! | job | entry point | result |
//! |---|---|---|
//! | check reactions in text or a file | [`check_text`], [`check_file`] | [`Checked`] |
//! | read one reaction | [`parse_reaction`] | [`notation::Reaction`] |
//! | balance a reaction | [`balance()`] | [`balance::Balancing`] |
//! | incorporate a dopant | [`dope`] | [`generate::dope::Report`] |
//! | the intrinsic reactions of a host | [`native`] | [`generate::native::Catalogue`] |
//! | mass-action laws of a file | [`laws`] | [`model::laws::DocumentLaws`] |
//! | a defect model from text | [`read_model`] | [`model::Model`] |
//! | a defect model in code | [`ModelBuilder`] | [`model::Model`] |
//! | equilibria over pO2, temperature, frozen-in | [`scan`] with [`ScanOptions`] | [`solve::scan::Scan`] |
//! | from measurements back to mechanisms | [`read_measurements`], [`fit()`] | [`fit::FitReport`] |
//!
//! Problems come back as [`Diagnostic`]s: located (line, column, byte
//! span), coded, with a way forward; a `Diagnostic` is a
//! `std::error::Error`. With the `serde` feature every result type above
//! derives `serde::Serialize` (exact numbers as their exact text, `"1/2"`,
//! never floats); the commands' JSON is a contract of its own, written
//! from these results by `report::results`.
//!
//! ```
//! // Check a reaction against a host, then write its law.
//! let checked = lacuna::check_text("<inline>", "O_O -> V_O.. + 2e' + 1/2 O2(g)", Some(lacuna::host("ZrO2")?))?;
//! assert!(checked.ok());
//! let doc = lacuna::model::read("<inline>", "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)", None);
//! let laws = lacuna::laws(&doc);
//! let law = laws.laws().next().unwrap();
//! assert_eq!(law.law.text(lacuna::notation::Style::Ascii), "K_red = [V_O..] n^2 pO2^(1/2) / [O_Ox] ~ [V_O..] n^2 pO2^(1/2)");
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! The example of README.md (a test keeps the two the same):
//!
//! ```
//! fn main() -> Result<(), Box<dyn std::error::Error>> {
//!     let zirconia = lacuna::host("ZrO2")?;
//!     let reduction = "O_O -> V_O.. + 2e' + 1/2 O2(g)";
//!     let checked = lacuna::check_text("notebook", reduction, Some(zirconia))?;
//!     assert!(checked.ok());
//!     Ok(())
//! }
//! ```
//!
//! # The pipeline, one folder per stage
//!
//! `base` holds exact numbers, diagnostics and element data; `notation`
//! reads one reaction; `host` knows the sublattices; `check` tests the
//! balances and the file rules; `file` reads reaction files, runs checks
//! over sources and lays files out; `balance` and `generate` write
//! balanced reactions; `model` turns reactions into mass-action laws and a
//! defect model; `solve` finds the Brouwer regimes and the full
//! equilibrium; `fit` goes from measurements back to mechanisms; `report`
//! writes results for people and machines; `typeset` writes reactions for
//! manuscripts. The command line and the workbench live in the `lacuna`
//! binary (`src/main.rs` and `src/app/`), doorways over all of it that use
//! only what this page offers; they are no part of the library.

pub mod balance;
pub mod base;
pub mod check;
pub mod file;
pub mod fit;
pub mod generate;
pub mod host;
pub mod model;
pub mod notation;
pub mod report;
pub mod solve;
pub mod typeset;

pub use base::diagnostic::Diagnostic;
pub use model::builder::ModelBuilder;
pub use solve::scan::{ScanOptions, scan};

use file::runner::{Event, OwnedReport, Recording, Runner, Summary};
use host::Host;
use notation::Reaction;

/// A host from its specification: a formula (`ZrO2`), optionally with its
/// sites (`Fe3O4 sites Fe:A +3 x1, Fe:B +3 x2, O -2 x4`).
///
/// ```
/// let host = lacuna::host("ZrO2").unwrap();
/// assert_eq!(host.formula_text, "ZrO2");
/// ```
pub fn host(spec: &str) -> Result<Host, Diagnostics> {
    Host::from_spec(spec).map_err(Diagnostics)
}

/// Several diagnostics as one error.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Diagnostics(pub Vec<Diagnostic>);

impl std::fmt::Display for Diagnostics {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let lines: Vec<String> = self.0.iter().map(Diagnostic::to_string).collect();
        write!(f, "{}", lines.join("\n"))
    }
}

impl std::error::Error for Diagnostics {}

/// Reads one reaction (plain, Unicode or LaTeX notation) through the one
/// reader every command uses; the diagnostics are the reasons when it does
/// not read.
///
/// ```
/// use lacuna::notation::{Style, render_reaction};
/// let r = lacuna::parse_reaction("nil -> e' + h.").unwrap();
/// assert_eq!(render_reaction(&r, Style::Unicode), "∅ → e′ + h•");
/// // Pasted from a manuscript: the same reaction.
/// let latex = lacuna::parse_reaction(r"\emptyset \rightarrow e^{\prime} + h^{\bullet}").unwrap();
/// assert_eq!(render_reaction(&latex, Style::Unicode), "∅ → e′ + h•");
/// ```
pub fn parse_reaction(text: &str) -> Result<Reaction, Diagnostics> {
    let read = file::reader::read_reaction(text, 0..text.len());
    read.reaction.ok_or(Diagnostics(read.diagnostics))
}

/// What checking a source found: one report per reaction line and the
/// problems of other lines, in line order.
#[derive(Debug, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Checked {
    pub reactions: Vec<OwnedReport>,
    /// Problems of lines that are not reactions (a bad `host` line, an
    /// unknown keyword), with the line's text.
    pub line_problems: Vec<(String, Diagnostic)>,
    pub summary: Summary,
}

impl Checked {
    /// Whether every reaction passed and no error was reported.
    pub fn ok(&self) -> bool {
        self.summary.clean()
    }

    /// Every diagnostic, of reactions and of other lines, in line and
    /// column order.
    pub fn diagnostics(&self) -> impl Iterator<Item = &Diagnostic> {
        let mut all: Vec<&Diagnostic> = self
            .reactions
            .iter()
            .flat_map(|r| &r.diagnostics)
            .chain(self.line_problems.iter().map(|(_, d)| d))
            .collect();
        all.sort_by_key(|d| (d.line, d.column));
        all.into_iter()
    }
}

/// Checks the reactions of `text` (a reaction file or a single reaction)
/// as `lacuna check` does: the balances of mass, charge and sites, and the
/// file's rules. `host` applies until the text's first `host` line.
///
/// ```
/// let host = lacuna::host("ZrO2").unwrap();
/// let checked = lacuna::check_text("<inline>", "O_O -> V_O.. + e' + 1/2 O2(g)", Some(host)).unwrap();
/// assert!(!checked.ok());
/// assert_eq!(checked.reactions[0].diagnostics[0].code.to_string(), "B302");
/// ```
pub fn check_text(name: &str, text: &str, host: Option<Host>) -> std::io::Result<Checked> {
    let mut recording = Recording {
        keep_passing: true,
        ..Recording::default()
    };
    let mut checker = Runner::new(host, &mut recording);
    checker.check_text(name, text)?;
    let summary = checker.finish()?;
    let mut checked = Checked {
        summary,
        ..Checked::default()
    };
    for event in recording.events {
        match event {
            Event::Reaction(r) => checked.reactions.push(*r),
            Event::Problem {
                line_text,
                diagnostic,
                ..
            } => checked.line_problems.push((line_text, diagnostic)),
        }
    }
    Ok(checked)
}

/// Checks a reaction file (read as UTF-8) as [`check_text`] does.
pub fn check_file(path: &std::path::Path, host: Option<Host>) -> std::io::Result<Checked> {
    let text = std::fs::read_to_string(path)?;
    check_text(&path.display().to_string(), &text, host)
}

/// Balances `reaction` against `host` (mass and charge only without one),
/// keeping the coefficients written where they are given.
///
/// ```
/// let r = lacuna::parse_reaction("O_O -> V_O.. + e' + O2(g)").unwrap();
/// let host = lacuna::host("ZrO2").unwrap();
/// let outcome = lacuna::balance(&r, Some(&host));
/// assert_eq!(outcome.status, lacuna::balance::Status::Unique);
/// let b = &outcome.reactions[0].conventional;
/// assert_eq!(lacuna::notation::render_reaction(b, lacuna::notation::Style::Ascii), "O_Ox -> V_O.. + 2 e' + 1/2 O2(g)");
/// ```
pub fn balance(reaction: &Reaction, host: Option<&Host>) -> balance::Balancing {
    balance::balance(
        reaction,
        host,
        balance::Options {
            keep_written: true,
            explain: true,
        },
    )
}

/// Every balanced incorporation mechanism of `dopant` (a compound such as
/// `Y2O3` or an ion such as `Y3+`) in `host`, ranked.
///
/// ```
/// let host = lacuna::host("ZrO2").unwrap();
/// let report = lacuna::dope(&host, "Y2O3", &Default::default()).unwrap();
/// // source: common practice (yttria-stabilised zirconia): Y on Zr sites,
/// // compensated by oxygen vacancies, ranks first.
/// assert_eq!(report.mechanisms[0].compensation.family(), "anion vacancy");
/// ```
pub fn dope(
    host: &Host,
    dopant: &str,
    options: &generate::dope::DopeOptions,
) -> Result<generate::dope::Report, Diagnostic> {
    let dopant = generate::dope::parse_dopant(dopant, host).map_err(|d| *d)?;
    generate::dope::mechanisms(host, &dopant, options).map_err(|d| *d)
}

/// The intrinsic (native) defect reactions of `host`: Schottky, Frenkel,
/// reduction, oxidation and the electronic gap.
///
/// ```
/// let host = lacuna::host("ZrO2").unwrap();
/// let catalogue = lacuna::native(&host);
/// assert!(catalogue.reactions.iter().any(|r| r.name.starts_with("Schottky")));
/// ```
pub fn native(host: &Host) -> generate::native::Catalogue {
    generate::native::catalogue(host)
}

/// The mass-action law of every reaction of a read document, with K(T);
/// a reaction that fails its checks or leaves the exact range gets a
/// located error instead.
///
/// ```
/// // Exponents that leave the exact (i64) range: refused with P107, never wrapped.
/// let text = "host NiO\nx: 1/3037000499 h. + 1/3037000499 e' -> 1/3037000507 h. + 1/3037000507 e'";
/// let doc = lacuna::model::read("big.kvr", text, None);
/// let laws = lacuna::laws(&doc);
/// let refused = laws.reactions[0].law.as_ref().unwrap_err();
/// assert_eq!((refused.code.as_str(), refused.line, refused.column), ("P107", 2, 4));
/// ```
pub fn laws(doc: &model::Document) -> model::laws::DocumentLaws {
    model::laws::document_laws(doc)
}

/// Reads a model file's text and builds the model (`host`: for a file
/// without a `host` line).
///
/// ```
/// let text = "host ZrO2\ntemperature 1273 K\ngap: nil -> e' + h.\nK gap = 1e-20\n";
/// let model = lacuna::read_model("doped.kvr", text, None).unwrap();
/// assert_eq!(model.equilibria.len(), 1);
/// ```
pub fn read_model(name: &str, text: &str, host: Option<Host>) -> Result<model::Model, Diagnostics> {
    let doc = model::read(name, text, host);
    model::Model::build(&doc, model::Overrides::default()).map_err(Diagnostics)
}

/// Reads a measurement table (CSV: temperature, pO2, conductivity and
/// optionally its uncertainty; see `lacuna fit --help`) for [`fit()`].
pub fn read_measurements(text: &str, source: &str) -> Result<fit::Measurements, Diagnostics> {
    fit::csv_input::read_measurements(text, source).map_err(Diagnostics)
}

/// From measurements (conductivity against pO2 and temperature) back to
/// regimes, slopes and enthalpies.
///
/// ```
/// // source: common practice (Brouwer approximation): electronic
/// // conduction by electrons with n = 2[V_O••] goes as pO2^(−1/6).
/// let mut csv = String::from("T_K,pO2_bar,sigma_S_per_cm\n");
/// for i in 0..9 {
///     let po2 = 10f64.powi(-20 + 2 * i);
///     csv.push_str(&format!("1000,{po2:e},{:e}\n", 2.0 * po2.powf(-1.0 / 6.0)));
/// }
/// let data = lacuna::read_measurements(&csv, "<inline>").unwrap();
/// let report = lacuna::fit(&data, &Default::default()).unwrap();
/// let slope = report.isotherms[0].segments[0].slope;
/// assert!((slope + 1.0 / 6.0).abs() < 1e-9, "{slope}");
/// ```
pub fn fit(
    measurements: &fit::Measurements,
    options: &fit::FitOptions,
) -> Result<fit::FitReport, fit::FitError> {
    fit::analyse(measurements, None, options)
}
