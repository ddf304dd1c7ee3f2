//! The one diagnostic type every stage produces and every renderer consumes.
//!
//! Stages attach a byte span within the source line; `locate` turns that into
//! the 1-based line and character column the user sees. Colour and layout are
//! decided by the renderers, never here.

use serde::Serialize;
use std::fmt;
use std::ops::Range;

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Note,
    Warning,
    Error,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Note => "note",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }
}

macro_rules! codes {
    ($($variant:ident = $code:literal, $severity:ident, $title:literal, $why:literal;)*) => {
        /// Stable diagnostic codes. The letter names the stage (P parse, H host,
        /// B balance, V validity, L lint, M model); the digits never change meaning.
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum Code { $($variant),* }

        impl Code {
            /// Every code, in order.
            pub const ALL: &'static [Code] = &[$(Code::$variant),*];

            /// The stable identifier, e.g. `B302`.
            pub fn as_str(self) -> &'static str {
                match self { $(Code::$variant => $code),* }
            }

            /// The severity this code has unless configured otherwise.
            pub fn default_severity(self) -> Severity {
                match self { $(Code::$variant => Severity::$severity),* }
            }

            /// A short name for rule listings.
            pub fn title(self) -> &'static str {
                match self { $(Code::$variant => $title),* }
            }

            /// One paragraph on what the rule checks and why.
            pub fn explanation(self) -> &'static str {
                match self { $(Code::$variant => $why),* }
            }

            /// Looks a code up by its identifier, case-insensitively.
            pub fn from_str_id(id: &str) -> Option<Code> {
                Code::ALL.iter().copied().find(|c| c.as_str().eq_ignore_ascii_case(id))
            }
        }
    };
}

codes! {
    Syntax = "P101", Error, "syntax",
        "The text is not a Kröger–Vink term, compound or keyword that the grammar knows. Each term of a reaction is an optional coefficient followed by a species (occupant, `_site`, charge marks), an associate in parentheses or braces, a compound formula such as `Y2O3` or `O2(g)`, or the perfect crystal `nil`. See grammar/notation.md.";
    UnknownElement = "P102", Error, "unknown element",
        "Element symbols are case-sensitive: `Co` is cobalt, `CO` is carbon and oxygen, `co` is nothing. A symbol that is not one of the 118 elements cannot be an occupant, a site or part of a compound.";
    MissingArrow = "P103", Error, "missing arrow",
        "A reaction needs exactly one arrow between its two sides: `->`, `→`, `<=>`, `⇌` or `=`.";
    ExtraArrow = "P104", Error, "more than one arrow",
        "A reaction line holds one reaction. Write each step of a sequence on its own line.";
    EmptyTerm = "P105", Error, "empty term or side",
        "Each side of a reaction needs at least one term, and `+` must sit between two terms. Write `nil` (or `0`, `null`, `∅`) for the perfect crystal.";
    ChargeMark = "P106", Error, "charge marks",
        "An effective charge is written with one kind of mark: dots (`.` `*` `•`) for positive, primes (`'` `′`) for negative, a cross (`x` `×`) for neutral. Mixing signs, or a cross beside other marks, has no meaning.";
    Number = "P107", Error, "coefficient",
        "Coefficients are integers, fractions (`1/2`, `½`) or decimals. They are kept exact, so a number beyond about 9.2e18 cannot be used.";
    Brackets = "P108", Error, "brackets",
        "Parentheses and braces must pair up within one term.";
    Directive = "P109", Error, "reaction file line",
        "A line of a reaction file is a comment (`#`), a `host` declaration, a reaction with an optional `label:` in front, or a model keyword. See grammar/reaction-file.md.";
    Encoding = "P110", Error, "encoding",
        "Reaction files are UTF-8 text. Convert the file (for example with `iconv -t UTF-8`) and check again.";
    HostFormula = "H201", Error, "host formula",
        "The host is a formula such as `ZrO2`, `BaTiO3` or `MgAl2O4`, optionally followed by `sites` and explicit sublattices (`host Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2 x4`).";
    HostAmbiguous = "H202", Error, "host oxidation states",
        "Lacuna infers formal charges from the usual oxidation states: anions at their usual state, cations solved for neutrality. When no combination, or more than one, fits, state the charges with `sites`.";
    NoHost = "H203", Error, "no host",
        "Site balance and effective charges are relative to a host crystal. Declare one with a `host` line above the reaction, or pass `--host` on the command line.";
    UnknownSite = "H204", Error, "unknown site",
        "A species sits on a site the host does not have. Regular sites are the host's sublattices (labelled ones as `Fe:A`); `i` marks an interstitial.";
    MassBalance = "B301", Error, "mass balance",
        "Every element must appear in the same amount on both sides. Vacancies, electrons and holes carry no mass; `OH_O•` carries one O and one H; compounds and gases count their atoms.";
    ChargeBalance = "B302", Error, "charge balance",
        "The sum of effective charges, each times its coefficient, must be the same on both sides. Neutral compounds and gases carry none.";
    SiteBalance = "B303", Error, "site balance",
        "Regular lattice sites (occupied, substituted or vacant, including `O_O×`) may only be created or destroyed in the host's site ratio, e.g. 1:2 for ZrO2. Interstitials, electrons, holes, compounds and gases are not sites.";
    OxidationState = "V401", Error, "impossible oxidation state",
        "The effective charge of a substituent or interstitial implies the real charge of the occupant (effective charge plus the site's formal charge). A real charge the element is not known to take (Y5+ in `Y_Zr•`) means a wrong mark or a wrong site.";
    RareOxidationState = "V402", Warning, "rare oxidation state",
        "The implied oxidation state is known for the element but uncommon. Check the charge marks.";
    VacancyCharge = "V403", Error, "vacancy charge",
        "A vacancy's effective charge lies between zero and minus the formal charge of its site: an oxygen vacancy (site −2) is `V_O×`, `V_O•` or `V_O••`, never primed; a Zr4+ vacancy ranges from `V_Zr×` to `V_Zr′′′′`.";
    AssociateCharge = "V404", Error, "associate charge",
        "An associate's net charge must equal the sum of its parts' effective charges.";
    MissingSite = "V405", Error, "missing site",
        "Point defects other than electrons and holes need a site subscript: `V_O••`, `Y_Zr′`, `O_i′′`.";
    AmbiguousV = "V406", Error, "vanadium or vacancy",
        "When vanadium occurs in the host or the reaction, a bare `V` could be either. Write the vacancy as `Vac` or `□` and vanadium as `el:V`, so that no reader has to guess.";
    SameOnBothSides = "V407", Warning, "species on both sides",
        "The same species on both sides usually means a term that should cancel or a typo.";
    ElectronicSpecies = "V408", Error, "electron or hole",
        "Electrons (`e′`) and holes (`h•`) carry no site and have effective charge −1 and +1.";
    ImplicitElectronic = "V409", Warning, "unmarked electron or hole",
        "An electron or hole written without its mark (`e`, `h`) is read as `e′` or `h•`. Write the mark so the charge is explicit.";
    CaseSuspect = "V410", Warning, "suspicious capitalisation",
        "A group such as `CO` is read as carbon and oxygen; if cobalt (`Co`) was meant, fix the case.";
    InterstitialVacancy = "V411", Error, "vacancy on an interstitial site",
        "An interstitial site is empty in the perfect crystal, so it cannot hold a vacancy.";
    ModelSyntax = "M701", Error, "model line",
        "Model lines read `K label = 1e-20 at 1273 K`, `dH label = 4.5 eV`, `dS label = 1.2e-3 eV/K`, `fix Y_Zr' = 8 mol% Y2O3`, `temperature 1000 °C`, `po2 1e-30 to 1e5 bar`, `pressure H2O = 0.03 bar`. See grammar/model.md.";
    UnknownLabel = "M702", Error, "unknown reaction label",
        "Thermodynamic data name the reaction they belong to by its label: write the reaction as `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` and its data as `K red = ...`.";
    ModelDuplicate = "M703", Error, "given twice",
        "A model has one host, one temperature, one pO2 range, one label per reaction and at most one K, dH and dS per reaction. Remove or rename the repeated line.";
    ThermoData = "M704", Error, "thermodynamic data",
        "An equilibrium constant is known from K alone (at one temperature), from dH and dS (at every temperature), or from K at a temperature together with dH (ΔS then follows). Other combinations are incomplete or contradict each other.";
    ModelUnit = "M705", Error, "unit",
        "Every quantity in a model carries its unit: temperatures in K or °C, enthalpies in eV or kJ/mol, entropies in k, eV/K or J/(mol K), pressures in bar, atm or Pa. Lacuna never guesses a unit.";
    ModelTemperature = "M706", Error, "temperature",
        "K given without `at` holds at the model's `temperature`, and a K known at one temperature cannot be used at another. Give the temperature, or dH so K can be extrapolated.";
    FixedTotal = "M707", Error, "fixed total",
        "`fix` holds the total amount of one species on one site (a dopant level) constant, counting every charge state and associate. The equilibria must not create or destroy it, and the amount must be a positive fraction.";
    Underdetermined = "M708", Error, "concentration not determined",
        "Each concentration must follow from the equilibria, electroneutrality and the fixed totals. A species that no equilibrium with data ties to the others needs an equilibrium (K, or dH and dS) or a `fix` line.";
    DependentEquilibria = "M709", Error, "dependent equilibria",
        "An equilibrium that is a combination of others has a K fixed by theirs; giving it its own K would contradict them or add nothing. Keep the data for independent reactions only.";
    Neutrality = "M710", Error, "electroneutrality",
        "Electroneutrality needs charged species of both signs (or none at all). A model whose charged species all have one sign cannot be neutral: add the compensating defect or carrier.";
    GasPressure = "M711", Error, "gas pressure",
        "The pO2 is swept; every other gas in an equilibrium needs a fixed partial pressure, e.g. `pressure H2O = 0.03 bar`.";
    NoThermoData = "M712", Note, "reaction without data",
        "A reaction without K or dH/dS is shown for reference but takes no part in the equilibrium.";
    DiluteLimit = "M713", Warning, "dilute limit",
        "The mass-action laws use concentrations as activities, which holds for dilute, non-interacting defects. Above about one defect per hundred sites, interactions, association and site exclusion matter and the numbers are not trustworthy.";
    NotConverged = "M714", Error, "not converged",
        "A point where the numerical solution did not reach a relative electroneutrality residual of 1e-12 is reported as such and never passed off as a result.";
    NoLaw = "M715", Note, "no law written",
        "`law` writes no mass-action law for a reaction that fails its balance or validity checks, because that law would be wrong. The problems are reported on the same line.";
}

impl fmt::Display for Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl Serialize for Code {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

/// A problem found in the user's text, with where it is and how to fix it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    pub severity: Severity,
    pub code: Code,
    /// 1-based line in the source; 0 when not tied to a line.
    pub line: u32,
    /// 1-based column in characters; 0 when not tied to a place.
    pub column: u32,
    /// Byte range within the source line.
    pub span: Range<usize>,
    pub message: String,
    /// A short note printed under the underlined text.
    pub label: Option<String>,
    pub help: Option<String>,
}

impl Diagnostic {
    /// A diagnostic at a byte span of the current line, with the code's default severity.
    pub fn new(code: Code, span: Range<usize>, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: code.default_severity(),
            code,
            line: 0,
            column: 0,
            span,
            message: message.into(),
            label: None,
            help: None,
        }
    }

    pub fn with_label(mut self, label: impl Into<String>) -> Self {
        self.label = Some(label.into());
        self
    }

    pub fn with_help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// Fixes the line number and derives the character column from the span.
    pub fn locate(mut self, line: u32, line_text: &str) -> Self {
        self.line = line;
        self.column = column_of(line_text, self.span.start);
        self
    }

    pub fn is_error(&self) -> bool {
        self.severity == Severity::Error
    }
}

/// 1-based character column of byte offset `byte` in `text` (clamped to the text).
pub fn column_of(text: &str, byte: usize) -> u32 {
    let mut byte = byte.min(text.len());
    while !text.is_char_boundary(byte) {
        byte -= 1;
    }
    u32::try_from(text[..byte].chars().count() + 1).unwrap_or(u32::MAX)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes_are_unique_and_found_by_id() {
        let mut seen = std::collections::HashSet::new();
        for code in Code::ALL {
            assert!(seen.insert(code.as_str()), "duplicate {code}");
            assert_eq!(
                Code::from_str_id(&code.as_str().to_lowercase()),
                Some(*code)
            );
            assert!(!code.explanation().is_empty());
        }
    }

    #[test]
    fn columns_count_characters() {
        let text = "Y₂O₃ -> V_O••";
        let byte = text.find("V_O").unwrap();
        assert_eq!(column_of(text, byte), 9);
        assert_eq!(column_of(text, 0), 1);
        assert_eq!(column_of(text, 999), text.chars().count() as u32 + 1);
    }
}
