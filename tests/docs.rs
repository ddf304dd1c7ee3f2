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

/// Commands in README.md's console blocks, as `$ lacuna …` or
/// `$ cargo run --release -- …` lines, run with the built binary.
#[test]
fn every_readme_command_runs() {
    let readme = fs::read_to_string(repo("README.md")).expect("README.md");
    let mut ran = 0;
    let scratch = tempfile::tempdir().expect("temp dir");
    for line in blocks(&readme, "console") {
        let Some(command) = line.strip_prefix("$ ") else {
            continue;
        };
        let args = if let Some(rest) = command.strip_prefix("lacuna ") {
            rest
        } else if let Some(rest) = command.strip_prefix("cargo run --release -- ") {
            rest
        } else {
            continue;
        };
        // Run in a scratch folder so files the commands write stay out of the tree.
        let words: Vec<String> = split_words(args)
            .into_iter()
            .map(|w| {
                if w.starts_with("examples/") || w == "examples" {
                    repo(&w)
                } else {
                    w
                }
            })
            .collect();
        let words: Vec<&str> = words.iter().map(String::as_str).collect();
        let run =
            crate::support::lacuna_in(scratch.path().to_str().expect("utf-8 path"), &words, None);
        assert!(
            run.code == 0 || run.code == 1,
            "README command `{command}` exited {}:\n{}",
            run.code,
            run.stderr
        );
        ran += 1;
    }
    assert!(ran >= 2, "README shows only {ran} commands");
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
