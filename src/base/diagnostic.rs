//! The one diagnostic type every stage produces and every renderer consumes.
//!
//! Stages attach a byte span within the source line; `locate` turns that into
//! the 1-based line and character column the user sees. Colour and layout are
//! decided by the renderers, never here.

use std::fmt;
use std::ops::Range;

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "lowercase"))]
#[non_exhaustive]
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
    MixedMarks = "L501", Warning, "mixed marks",
        "One file should spell charge marks one way: ASCII dots and primes (`V_O..`), stars (`V_O**`), Unicode bullets and primes (`V_O••`) or LaTeX (`\\bullet`). Mixed spellings are legal but make files harder to read and diff; `lacuna fmt --write` unifies them.";
    RepeatedReaction = "L502", Warning, "repeated reaction",
        "A reaction that is a multiple or the reverse of an earlier one in the same file adds no information and often means a copy-paste slip or two names for one equilibrium.";
    DuplicateLabel = "L503", Error, "duplicate name",
        "Reaction names identify reactions in models and reports, so each name is used once per file.";
    UnknownReaction = "L504", Error, "unknown reaction",
        "A model line (`K`, `dH`, `dS`) refers to a reaction by name, and no reaction in the file has that name.";
    FractionalCoefficients = "L505", Warning, "fractional coefficients",
        "Fractional coefficients on gases (`1/2 O2(g)`) are the field's convention and pass. On defects and condensed compounds (`1/2 Y2O3 -> Y_Zr' + …`) they are legal, but a file that otherwise writes whole numbers reads more easily when all its reactions do. Multiply through, or keep fractions throughout.";
    ImplicitNeutral = "L506", Warning, "implicit neutral mark",
        "A vacancy or interstitial written without any mark reads as neutral (`V_O` is `V_O×`). On a charged site the ionised form is more usual, so an unmarked defect is often a forgotten mark; write `×` when the neutral defect is meant.";
    CsvFormat = "F901", Error, "measurement file format",
        "A measurement file is comma-separated text (semicolons or tabs are also recognised from the header line) with one header line and one measurement per row; `#` starts a comment line. A row must have as many fields as the header. See grammar/measurements.md.";
    CsvColumn = "F902", Error, "measurement columns",
        "The header must name exactly one temperature column (`T_K` or `T_C`), one oxygen pressure column (`pO2_bar`, `pO2_atm`, `pO2_Pa`, `log10_pO2_bar` or `log10_pO2_atm`) and one conductivity column (`sigma_S_per_cm` or `sigma_S_per_m`); `sigma_err` and `isotherm` are optional. Names are case-insensitive. See grammar/measurements.md.";
    CsvNumber = "F903", Error, "measurement value",
        "Every measurement cell holds a finite decimal number such as `973.15`, `1e-20` or `-3.5`.";
    CsvRange = "F904", Error, "measurement out of range",
        "Absolute temperatures, oxygen partial pressures and conductivities must be positive, because the fit works with their logarithms; uncertainties must be positive. A zero or negative value is usually a unit or sign slip, or a reading below the instrument's floor that should be left out.";
    CsvIsotherm = "F905", Error, "isotherm too small",
        "A slope needs at least two oxygen pressures per isotherm, so an isotherm with a single row, or with all rows at one pressure, cannot be fitted. Add points, group rows with an `isotherm` column, or remove the row.";
    LatexCommand = "T801", Error, "LaTeX command",
        "A reaction pasted from a manuscript is read as LaTeX math when it holds a backslash or `$`. The reader knows the commands a defect reaction needs: `\\mathrm{}`, `\\mathit{}`, `\\text{}`, `_{}`, `^{}`, `\\bullet`, `\\prime`, `\\times`, `\\cdot`, `\\,`, `\\;`, `\\frac`/`\\tfrac`, `\\xrightarrow{}`, `\\rightleftharpoons`, `\\longrightarrow`, `\\varnothing` and a few spacing and layout commands. Any other command is reported with its column rather than guessed at. See grammar/repl.md.";
    LatexBraces = "T802", Error, "LaTeX braces or argument",
        "Braces in LaTeX must pair up, and `_`, `^`, `\\mathrm`, `\\frac` and the like need their arguments.";
    LatexCharge = "T803", Error, "LaTeX superscript",
        "A superscript on a Kröger–Vink species is an effective charge: `\\bullet` (or `\\cdot`, `.`) per +1, `\\prime` (or `'`) per −1, `\\times` (or `x`) for neutral, optionally with a count (`^{2\\bullet}`). Real ionic charges such as `^{2+}` belong to free ions, not to defects.";
    HostOverArrow = "T804", Warning, "host over the arrow",
        "A manuscript writes the host over the arrow (`\\xrightarrow{\\mathrm{ZrO_2}}`). When it differs from the host the reaction is checked against, one of the two is wrong.";
    UprightV = "T805", Note, "upright V",
        "IUPAC (2005, IR-11.4.2) writes the vacancy as an italic V and vanadium as an upright V, so `\\mathrm{V}` is read as vanadium. For a vacancy write `V` (math italic) or `\\mathit{V}`.";
    WorkbenchCommand = "T810", Error, "workbench command",
        "Workbench commands start with `/` (`/help` lists them). A command was unknown, or its arguments did not fit its usage.";
    WorkbenchFile = "T811", Error, "workbench file",
        "A reaction file could not be read or written. Saving never touches the old file until the new one is complete; a file that exists and is not the session's own is only replaced with `--replace`.";
    CannotBalance = "K601", Error, "cannot balance",
        "No choice of coefficients conserves mass of every element, charge and the host's site ratio with the species given. The message names the law that cannot be met and the kind of species that would fix it: an anion-site species, an electronic defect, O2(g), a compound that carries the missing element.";
    OtherSide = "K602", Warning, "belongs on the other side",
        "The only balanced reaction with these species needs a negative coefficient for this one: it is a product written as a reactant, or the reverse. The balanced form shows it on the side where it belongs.";
    NoPart = "K603", Warning, "takes no part",
        "The only balanced reaction with these species gives this one a coefficient of zero: it is not needed, or another species it should pair with is missing.";
    SeveralBalanced = "K604", Note, "several balanced reactions",
        "The species allow more than one independent balanced reaction (more species than independent conservation laws), so the coefficients are not determined. Every combination of the reactions shown balances; fixing a coefficient or removing one of the species that make it free gives one answer.";
    WrittenCoefficients = "K605", Error, "written coefficients conflict",
        "The balancer keeps the coefficients you wrote, and with those fixed no choice of the others balances. Leave the coefficient out to let Lacuna find it, or correct it.";
    Dopant = "K606", Error, "dopant",
        "A dopant is a compound that brings the host's anions (`Y2O3` for an oxide host, `CaCl2` for a chloride), or an ion with its oxidation state: `Y+3`, `Y3+`, `Fe(III)`, or a bare symbol when the element has one common positive state. See grammar/balance.md.";
    Level = "K607", Error, "dopant level",
        "A dopant level is a number with a unit: `8mol%` (mol % of the dopant compound), `14.8cat%` (dopant cations per 100 cations of its sublattice), `3.7site%` (the compensating defect per 100 sites of its sublattice), `1e21/cm3` (dopant atoms per cubic centimetre, needs --density or --cell). See grammar/balance.md.";
    HostUnsuitable = "K608", Error, "host unsuitable",
        "Dopant mechanisms and native defects need a host whose sublattices carry integer formal charges; dopant mechanisms also need at least one cation and one anion sublattice.";
    Coordination = "K609", Error, "coordination number",
        "A coordination override is written `SITE=N`, e.g. `--cn Zr=8` or `--cn Fe:A=4`, with a site of the host and N between 1 and 16.";
    WrittenTwice = "K610", Error, "species written twice",
        "The balancer gives each species one coefficient, so a species written twice (on one side or on both) leaves a meaningless freedom: X → X. Write it once; its coefficient is found.";
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
    FitModel = "F906", Error, "model unfit for a fit",
        "`fit --model` compares measured slopes with the exact regimes of a defect model. The model must exchange O2(g) and hold electrons, holes and a charged ionic defect that no `fix` line holds, since the fit splits the conductivity into an ionic, an n and a p term.";
    HostFromArrow = "T806", Note, "host from over the arrow",
        "No host was in force, so the formula written over the reaction's arrow (`\\xrightarrow{\\mathrm{ZrO_2}}`) is taken as the host, for this line and the lines after it, as a `host` line would be. A `host` line or `--host` makes the choice explicit.";
}

impl fmt::Display for Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

#[cfg(feature = "serde")]
impl serde::Serialize for Code {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

/// A problem found in the user's text, with where it is and how to fix it.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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

/// One line: `error[P107] at line 2, column 4: message (help: …)`; the
/// place is left out when the diagnostic is not tied to a line.
impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}[{}]", self.severity.as_str(), self.code)?;
        if self.line > 0 {
            write!(f, " at line {}", self.line)?;
            if self.column > 0 {
                write!(f, ", column {}", self.column)?;
            }
        }
        write!(f, ": {}", self.message)?;
        if let Some(help) = &self.help {
            write!(f, " (help: {help})")?;
        }
        Ok(())
    }
}

impl std::error::Error for Diagnostic {}

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
