//! The reader fixtures: every file in `tests/fixtures/valid` and
//! `tests/fixtures/invalid` read by the one file reader (and the model-line
//! reader), compared with the expected output beside it. Each fixture names
//! the published source of its chemistry; the expected files were checked
//! by hand against it.

use lacuna::base::diagnostic::{Diagnostic, Severity};
use lacuna::file::reader::{HostTracker, Item, numbered_lines, read_line};
use lacuna::model::{self, Document};
use lacuna::notation::{Style, render_reaction};
use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// The fixture files of one folder, in name order.
pub fn fixtures(folder: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(folder);
    let mut files: Vec<PathBuf> = fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "kvr"))
        .collect();
    files.sort();
    assert!(!files.is_empty(), "no fixtures in {}", dir.display());
    files
}

fn severity(d: &Diagnostic) -> &'static str {
    match d.severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Note => "note",
        _ => "another severity",
    }
}

/// What a model line says, as the model reader read it.
fn model_line(doc: &Document, number: u32) -> String {
    if let Some(d) = doc.data.iter().find(|d| d.line == number) {
        return format!("data for {}: {:?}", d.label, d.datum);
    }
    if let Some(f) = doc.fixes.iter().find(|f| f.line == number) {
        let basis = match &f.basis {
            model::Basis::SiteFraction => "site fraction".to_string(),
            model::Basis::CationFraction => "cation fraction".to_string(),
            model::Basis::PerFormulaUnit => "per formula unit".to_string(),
            model::Basis::MolPercent { text, .. } => format!("mol% {text}"),
            other => format!("{other:?}"),
        };
        return format!("fixed total {} {basis}", f.amount);
    }
    if let Some(p) = doc.pressures.iter().find(|p| p.line == number) {
        return format!("pressure of {} = {} bar", p.text, p.bar);
    }
    if doc.temperature.is_some_and(|(_, n)| n == number) {
        return format!("temperature {:?} K", doc.temperature.map(|t| t.0));
    }
    if doc.po2.is_some_and(|(_, n)| n == number) {
        return format!("pO2 range {:?} bar", doc.po2.map(|p| p.0));
    }
    "(nothing read)".to_string()
}

/// One line per source line: what the reader made of it.
pub fn items(text: &str) -> String {
    let doc = model::read("fixture", text, None);
    let mut hosts: HostTracker = HostTracker::new(None);
    let mut out = String::new();
    for (number, line) in numbered_lines(text) {
        let described = match read_line(line) {
            Item::Blank => "blank".to_string(),
            Item::Comment => "comment".to_string(),
            Item::Host { host, .. } => {
                let result = host.map(Arc::new);
                hosts.declare(number, &result);
                match result {
                    Ok(h) => format!("host {} ({})", h.formula_text, h.ratio_text()),
                    Err(_) => "host with errors".to_string(),
                }
            }
            Item::Reaction { label, read } => {
                let chosen = hosts.for_reaction(&read);
                let host = hosts
                    .host_for(&chosen)
                    .map_or_else(|| "no host".to_string(), |h| h.formula_text.clone());
                hosts.follow(&chosen);
                let name = label.map_or_else(String::new, |l| format!("{}: ", &line[l]));
                let body = read.reaction.as_ref().map_or_else(
                    || "(does not read)".to_string(),
                    |r| render_reaction(r, Style::Unicode),
                );
                let mut text = format!("reaction {name}{body} [against {host}]");
                if read.from_latex() {
                    text.push_str(" [from LaTeX]");
                }
                if let Some((over, _)) = &read.over_arrow {
                    let _ = write!(text, " [over the arrow: {over}]");
                }
                if chosen.taken.is_some() {
                    text.push_str(" [host taken from over the arrow]");
                }
                text
            }
            Item::Model { keyword, .. } => {
                format!("model {} -> {}", &line[keyword], model_line(&doc, number))
            }
            _ => "an item this test does not know".to_string(),
        };
        let _ = writeln!(out, "{number}: {described}");
        for d in doc.diagnostics.iter().filter(|d| d.line == number) {
            let _ = writeln!(out, "   {}[{}] {}", severity(d), d.code.as_str(), d.message);
        }
    }
    out
}

/// Every diagnostic the readers give, located.
pub fn diagnostics(text: &str) -> String {
    let doc = model::read("fixture", text, None);
    let mut out = String::new();
    for d in &doc.diagnostics {
        let _ = writeln!(
            out,
            "{}:{} {}[{}] {}",
            d.line,
            d.column,
            severity(d),
            d.code.as_str(),
            d.message
        );
    }
    for d in model::label_problems(&doc) {
        let _ = writeln!(
            out,
            "{}:{} {}[{}] {}",
            d.line,
            d.column,
            severity(&d),
            d.code.as_str(),
            d.message
        );
    }
    out
}

fn compare(input: &Path, extension: &str, got: &str) {
    let expected_path = input.with_extension(extension);
    // `LACUNA_FIXTURES=write` writes what the reader gives, to be checked by
    // hand against the fixture's source before it is committed.
    if std::env::var_os("LACUNA_FIXTURES").is_some_and(|v| v == "write") {
        fs::write(&expected_path, got).expect("expected file writes");
        return;
    }
    let expected = fs::read_to_string(&expected_path).unwrap_or_default();
    assert!(
        got == expected,
        "{} differs from what the reader gives:\n--- expected\n{expected}--- got\n{got}",
        expected_path.display()
    );
}

#[test]
fn valid_fixtures_read_as_expected_without_errors() {
    for path in fixtures("valid") {
        let text = fs::read_to_string(&path).expect("fixture reads");
        let doc = model::read("fixture", &text, None);
        let errors: Vec<&Diagnostic> = doc.diagnostics.iter().filter(|d| d.is_error()).collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        assert!(
            model::label_problems(&doc).is_empty(),
            "{}: label problems",
            path.display()
        );
        compare(&path, "items", &items(&text));
    }
}

#[test]
fn invalid_fixtures_give_the_expected_diagnostics() {
    for path in fixtures("invalid") {
        let text = fs::read_to_string(&path).expect("fixture reads");
        let got = diagnostics(&text);
        assert!(
            got.contains("error["),
            "{}: an invalid fixture without an error",
            path.display()
        );
        compare(&path, "diagnostics", &got);
    }
}

#[test]
fn the_grammar_documents_list_every_arrow_of_the_one_table() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let notation = fs::read_to_string(root.join("grammar/notation.md")).expect("notation.md");
    let file = fs::read_to_string(root.join("grammar/reaction-file.md")).expect("reaction-file.md");
    for (spelling, _) in lacuna::notation::ARROWS {
        assert!(
            notation.contains(&format!("\"{spelling}\"")),
            "notation.md's arrow rule lacks {spelling}"
        );
        assert!(
            file.contains(&format!("`{spelling}`")),
            "reaction-file.md's list of arrows lacks {spelling}"
        );
    }
}
