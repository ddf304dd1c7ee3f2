//! The documents are tests: every grammar example parses (or is rejected, as
//! marked), every example file runs, every README command runs.

use crate::support::{lacuna, repo};
use lacuna::notation::{parse_reaction, parse_species_text};
use std::fs;

/// The lines of every fenced block with the given info string.
fn blocks(markdown: &str, info: &str) -> Vec<String> {
    let mut lines = Vec::new();
    let mut inside = false;
    for line in markdown.lines() {
        if let Some(tag) = line.strip_prefix("```") {
            inside = !inside && tag.trim() == info;
            continue;
        }
        if inside && !line.trim().is_empty() {
            lines.push(line.to_string());
        }
    }
    lines
}

fn parses(text: &str) -> bool {
    if text.contains("->")
        || text.contains('→')
        || text.contains("<=>")
        || text.contains('⇌')
        || text.contains(" = ")
        || text.contains("\\xrightarrow")
    {
        let (reaction, diags) = parse_reaction(text, 0..text.len());
        reaction.is_some() && !diags.iter().any(|d| d.is_error())
    } else {
        parse_species_text(text).is_ok()
    }
}

#[test]
fn every_grammar_example_parses_and_every_counterexample_fails() {
    let grammar = fs::read_to_string(repo("grammar/notation.md")).expect("grammar/notation.md");
    let valid = blocks(&grammar, "kv");
    let invalid = blocks(&grammar, "kv-invalid");
    assert!(
        valid.len() > 40 && invalid.len() > 5,
        "{} valid, {} invalid",
        valid.len(),
        invalid.len()
    );
    for line in &valid {
        assert!(parses(line), "grammar example does not parse: {line}");
    }
    for line in &invalid {
        assert!(!parses(line), "grammar counterexample parses: {line}");
    }
}

/// Grammar documents whose `kvr` blocks are whole reaction files.
const REACTION_FILE_DOCS: &[&str] = &["grammar/reaction-file.md"];

#[test]
fn every_reaction_file_example_in_the_grammar_checks_clean() {
    for doc in REACTION_FILE_DOCS {
        let text = fs::read_to_string(repo(doc)).expect("grammar file");
        let body = blocks(&text, "kvr").join("\n");
        assert!(!body.is_empty(), "{doc} has no kvr block");
        let run = lacuna(&["check", "-"], Some(body.as_bytes()));
        assert_eq!(run.code, 0, "{doc}:\n{}", run.stdout);
    }
}

#[test]
fn every_example_file_runs() {
    let mut seen = 0;
    for entry in fs::read_dir(repo("examples")).expect("examples/") {
        let path = entry.expect("entry").path();
        if path.extension().is_some_and(|e| e == "kvr") {
            seen += 1;
            let run = lacuna(&["check", &path.display().to_string()], None);
            assert!(
                run.code == 0 || run.code == 1,
                "{}: exit {}\n{}",
                path.display(),
                run.code,
                run.stderr
            );
            assert!(run.stdout.contains("reaction"), "{}", run.stdout);
        }
    }
    assert!(seen > 0);
}

/// One `$ lacuna …` (or `$ cargo run --release -- …`) line of a console
/// block and the output shown under it, if any.
struct Example {
    doc: String,
    line: usize,
    command: String,
    args: Vec<String>,
    shown: Vec<String>,
}

/// The commands of every console block in `doc`, each with the lines shown
/// beneath it up to the next `$` line or the end of the block.
fn console_examples(doc: &str) -> Vec<Example> {
    let text = fs::read_to_string(repo(doc)).expect("document");
    let mut examples: Vec<Example> = Vec::new();
    let mut inside = false;
    let mut current: Option<Example> = None;
    for (number, line) in text.lines().enumerate() {
        if let Some(tag) = line.strip_prefix("```") {
            inside = !inside && tag.trim() == "console";
            examples.extend(current.take());
            continue;
        }
        if !inside {
            continue;
        }
        if let Some(command) = line.strip_prefix("$ ") {
            examples.extend(current.take());
            let args = command
                .strip_prefix("lacuna ")
                .or_else(|| command.strip_prefix("cargo run --release -- "));
            current = args.map(|args| Example {
                doc: doc.to_string(),
                line: number + 1,
                command: command.to_string(),
                args: split_words(args),
                shown: Vec::new(),
            });
        } else if let Some(example) = current.as_mut() {
            example.shown.push(line.trim_end().to_string());
        }
    }
    examples.extend(current);
    examples
}

/// The documents whose console examples are run; shown output is a snapshot.
const COMMAND_DOCS: &[&str] = &[
    "README.md",
    "grammar/balance.md",
    "grammar/measurements.md",
    "grammar/model.md",
    "grammar/notation.md",
    "grammar/reaction-file.md",
    "grammar/repl.md",
];

/// Every command in the documents' console blocks runs with the built binary
/// in a scratch copy of `examples/`; where the document shows output under a
/// command, the real output (stdout then stderr, colour off) must match it
/// line for line, so a changed report is a visible diff in the document.
#[test]
fn every_documented_command_runs_and_prints_what_the_document_shows() {
    let scratch = tempfile::tempdir().expect("temp dir");
    copy_folder(&repo("examples"), &scratch.path().join("examples"));
    let dir = scratch.path().to_str().expect("utf-8 path");
    let mut ran = 0;
    let mut compared = 0;
    let mut mismatches = Vec::new();
    for doc in COMMAND_DOCS {
        for example in console_examples(doc) {
            let words: Vec<&str> = example.args.iter().map(String::as_str).collect();
            let run = crate::support::lacuna_in(dir, &words, None);
            assert!(
                run.code == 0 || run.code == 1,
                "{}:{}: `{}` exited {}:\n{}",
                example.doc,
                example.line,
                example.command,
                run.code,
                run.stderr
            );
            ran += 1;
            if example.shown.is_empty() {
                continue;
            }
            compared += 1;
            let actual: Vec<String> = format!("{}{}", run.stdout, run.stderr)
                .lines()
                .map(|l| l.trim_end().to_string())
                .collect();
            let trim = |lines: &[String]| -> Vec<String> {
                let mut lines = lines.to_vec();
                while lines.last().is_some_and(|l| l.is_empty()) {
                    lines.pop();
                }
                lines
            };
            let (shown, actual) = (trim(&example.shown), trim(&actual));
            if shown != actual {
                mismatches.push(format!(
                    "{}:{}: `{}`\n--- shown\n{}\n--- printed\n{}",
                    example.doc,
                    example.line,
                    example.command,
                    shown.join("\n"),
                    actual.join("\n")
                ));
            }
        }
    }
    assert!(mismatches.is_empty(), "{}", mismatches.join("\n\n"));
    assert!(ran >= 20, "the documents show only {ran} commands");
    assert!(compared >= 3, "only {compared} documented outputs compared");
}

fn copy_folder(from: &str, to: &std::path::Path) {
    fs::create_dir_all(to).expect("scratch folder");
    for entry in fs::read_dir(from).expect("folder") {
        let path = entry.expect("entry").path();
        let target = to.join(path.file_name().expect("name"));
        if path.is_dir() {
            copy_folder(&path.display().to_string(), &target);
        } else {
            fs::copy(&path, &target).expect("copy");
        }
    }
}

/// Splits a shell-like command line on spaces, honouring single and double quotes.
fn split_words(line: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut current = String::new();
    let mut quote: Option<char> = None;
    let mut any = false;
    for c in line.chars() {
        match (quote, c) {
            (Some(q), c) if c == q => quote = None,
            (Some(_), c) => current.push(c),
            (None, '\'' | '"') => {
                quote = Some(c);
                any = true;
            }
            (None, ' ') => {
                if any || !current.is_empty() {
                    words.push(std::mem::take(&mut current));
                    any = false;
                }
            }
            (None, c) => current.push(c),
        }
    }
    if any || !current.is_empty() {
        words.push(current);
    }
    words
}

/// README.md's Rust examples are doctests of the crate's front page: each
/// one appears there verbatim, so it compiles and runs with `cargo test`.
#[test]
fn every_readme_rust_example_is_a_doctest() {
    let readme = fs::read_to_string(repo("README.md")).expect("README.md");
    let lib = fs::read_to_string(repo("src/lib.rs")).expect("src/lib.rs");
    let doc: String = lib
        .lines()
        .filter_map(|l| l.strip_prefix("//!"))
        .map(|l| l.strip_prefix(' ').unwrap_or(l))
        .collect::<Vec<_>>()
        .join("\n");
    let mut examples = 0;
    let mut rest = readme.as_str();
    while let Some(start) = rest.find("```rust\n") {
        let body = &rest[start + "```rust\n".len()..];
        let end = body.find("```").expect("closed rust block");
        let example = &body[..end];
        assert!(
            doc.contains(&format!("```\n{example}```")),
            "README.md example not among src/lib.rs doctests:\n{example}"
        );
        examples += 1;
        rest = &body[end..];
    }
    assert!(examples >= 1, "README.md shows no Rust example");
}
