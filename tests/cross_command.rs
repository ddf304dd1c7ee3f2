//! Every command that reads reaction files reads them alike: `check`,
//! `fmt --check`, `law`, `brouwer`, `fit --model`, `typeset` and the
//! workbench (`repl`, fed the same lines on standard input) run over every
//! reader fixture (tests/fixtures) and every reaction file in examples/,
//! and must accept or refuse each line alike: the same reading errors
//! (P1xx, T801–T803) and, for the commands that check, the same checking
//! errors (H2xx, B3xx, V4xx) and the same T804 warning, on the same line.
//! Then the four cases where they once disagreed.

use crate::reader_fixtures::fixtures;
use crate::support::{lacuna, lacuna_in, repo};
use lacuna::file::reader::{Line, classify, numbered_lines};
use lacuna::host::Host;
use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::{Path, PathBuf};

/// What a command is answerable for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Family {
    /// Reading: P1xx, T801–T803.
    Reading,
    /// Checking: H2xx, B3xx, V4xx errors and the T804 warning.
    Checking,
}

fn family(code: &str, error: bool) -> Option<Family> {
    match code.as_bytes().first() {
        Some(b'P') if code != "P110" && error => Some(Family::Reading),
        Some(b'T') if matches!(code, "T801" | "T802" | "T803") => Some(Family::Reading),
        Some(b'T') if code == "T804" => Some(Family::Checking),
        Some(b'H' | b'B' | b'V') if error => Some(Family::Checking),
        _ => None,
    }
}

/// Codes a command reported, by line: (line, family) -> codes.
type Verdicts = BTreeMap<(u32, Family), BTreeSet<String>>;

/// Reads `error[CODE]: ...` / `warning[CODE]: ...` followed by
/// ` --> NAME:LINE:COL`; `line_of` maps the printed line to the file's.
fn verdicts(output: &str, line_of: impl Fn(u32) -> Option<u32>) -> Verdicts {
    let mut out = Verdicts::new();
    let mut pending: Option<(String, bool)> = None;
    for text in output.lines() {
        let head = ["error[", "warning[", "note["]
            .iter()
            .find(|p| text.starts_with(*p));
        if let Some(prefix) = head {
            let code = text[prefix.len()..].split(']').next().unwrap_or("");
            pending = Some((code.to_string(), *prefix == "error["));
            continue;
        }
        if let (Some((code, error)), Some(at)) = (&pending, text.trim_start().strip_prefix("--> "))
        {
            let mut parts = at.rsplitn(3, ':');
            let _column = parts.next();
            let line = parts.next().and_then(|l| l.parse::<u32>().ok());
            if let (Some(line), Some(f)) = (line.and_then(&line_of), family(code, *error)) {
                out.entry((line, f)).or_default().insert(code.clone());
            }
            pending = None;
        }
    }
    out
}

/// One command's run over one file.
struct Reading {
    command: &'static str,
    families: &'static [Family],
    verdicts: Verdicts,
    /// Codes this command leaves to others by design.
    ignores: &'static [&'static str],
    /// Lines it is not answerable for.
    skips: BTreeSet<u32>,
}

const BOTH: &[Family] = &[Family::Reading, Family::Checking];

/// Runs every command over `path` (a file in the repository).
fn readings(path: &Path) -> Vec<Reading> {
    let file = path.to_string_lossy().to_string();
    let text = fs::read_to_string(path).expect("the file reads");
    let same = |n: u32| Some(n);
    let both = |args: &[&str]| {
        let run = lacuna(args, None);
        format!("{}\n{}", run.stdout, run.stderr)
    };
    let mut out = vec![
        Reading {
            command: "check",
            families: BOTH,
            verdicts: verdicts(&both(&["check", &file]), same),
            ignores: &[],
            skips: BTreeSet::new(),
        },
        Reading {
            command: "fmt --check",
            families: &[Family::Reading],
            verdicts: verdicts(&both(&["fmt", "--check", &file]), same),
            ignores: &[],
            skips: BTreeSet::new(),
        },
        Reading {
            command: "law",
            families: BOTH,
            verdicts: verdicts(&both(&["law", &file]), same),
            ignores: &[],
            skips: BTreeSet::new(),
        },
        Reading {
            command: "brouwer",
            families: BOTH,
            verdicts: verdicts(&both(&["brouwer", &file]), same),
            // Prints the errors that stop the model, not the file's warnings.
            ignores: &["T804"],
            skips: BTreeSet::new(),
        },
        Reading {
            command: "fit --model",
            families: BOTH,
            verdicts: verdicts(
                &both(&[
                    "fit",
                    &repo("examples/pump-cell-conductivity.csv"),
                    "--model",
                    &file,
                ]),
                same,
            ),
            // As `brouwer`: the errors that stop the model only.
            ignores: &["T804"],
            skips: BTreeSet::new(),
        },
        Reading {
            command: "typeset",
            families: BOTH,
            verdicts: verdicts(&both(&["typeset", &file]), same),
            // A reaction without a host is typeset with a note, not refused.
            ignores: &["H203"],
            skips: BTreeSet::new(),
        },
    ];
    // The workbench joins a line ending with `+` or an arrow to the next
    // one (typed input continues); a comment line after each line keeps
    // every line on its own, so line n arrives as line 2n - 1.
    let mut fed = String::new();
    let mut skips = BTreeSet::new();
    let mut broken_host = false;
    for (number, line) in numbered_lines(&text) {
        fed.push_str(line);
        fed.push_str("\n#\n");
        match classify(line) {
            // Model lines are kept by `/load` but refused when typed.
            Line::Model { .. } => {
                skips.insert(number);
            }
            // A failed `host` line keeps the session's host (the prompt
            // shows it) where a file has none: the lines after it are the
            // file readers' business.
            Line::Host(span) => broken_host = Host::parse(line, span).is_err(),
            Line::Reaction { .. } if broken_host => {
                skips.insert(number);
            }
            _ => {}
        }
    }
    let run = lacuna_in(
        &path
            .parent()
            .map_or_else(|| repo(""), |p| p.display().to_string()),
        &["repl"],
        Some(fed.as_bytes()),
    );
    out.push(Reading {
        command: "repl",
        families: BOTH,
        verdicts: verdicts(&format!("{}\n{}", run.stdout, run.stderr), |n| {
            (n % 2 == 1).then_some(n.div_ceil(2))
        }),
        ignores: &[],
        skips,
    });
    out
}

/// Asserts that every pair of commands agrees on every line of `path`.
fn agree(path: &Path) {
    let readings = readings(path);
    let text = fs::read_to_string(path).expect("the file reads");
    let mut problems = Vec::new();
    for (number, line) in numbered_lines(&text) {
        for f in [Family::Reading, Family::Checking] {
            let answers: Vec<(&Reading, BTreeSet<String>)> = readings
                .iter()
                .filter(|r| r.families.contains(&f) && !r.skips.contains(&number))
                .map(|r| {
                    let codes = r.verdicts.get(&(number, f)).cloned().unwrap_or_default();
                    (r, codes)
                })
                .collect();
            // Each pair is compared without the codes either leaves to
            // others by design.
            for (i, (a, a_codes)) in answers.iter().enumerate() {
                for (b, b_codes) in answers.iter().skip(i + 1) {
                    let strip = |codes: &BTreeSet<String>| -> BTreeSet<String> {
                        codes
                            .iter()
                            .filter(|c| {
                                !a.ignores.contains(&c.as_str()) && !b.ignores.contains(&c.as_str())
                            })
                            .cloned()
                            .collect()
                    };
                    if strip(a_codes) != strip(b_codes) {
                        problems.push(format!(
                            "line {number} `{line}`: {} says {a_codes:?}, {} says {b_codes:?}",
                            a.command, b.command
                        ));
                    }
                }
            }
        }
    }
    assert!(
        problems.is_empty(),
        "{}: the commands read it differently:\n{}",
        path.display(),
        problems.join("\n")
    );
}

fn example_files() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples");
    let mut files: Vec<PathBuf> = fs::read_dir(&dir)
        .expect("examples/ reads")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "kvr"))
        .collect();
    files.sort();
    assert!(!files.is_empty());
    files
}

#[test]
fn every_command_reads_the_valid_fixtures_alike() {
    for path in fixtures("valid") {
        agree(&path);
    }
}

#[test]
fn every_command_reads_the_invalid_fixtures_alike() {
    for path in fixtures("invalid") {
        agree(&path);
    }
}

#[test]
fn every_command_reads_the_examples_alike() {
    for path in example_files() {
        agree(&path);
    }
}

#[test]
fn the_parser_and_the_model_reader_find_errors_the_test_can_see() {
    // The comparison above is only as good as its reading of the output:
    // a file with a reading error and a checking error must show both in
    // every command that is answerable for them.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/invalid/balance.kvr");
    for r in readings(&path) {
        if r.families.contains(&Family::Checking) {
            assert!(
                r.verdicts
                    .get(&(5, Family::Checking))
                    .is_some_and(|c| c.contains("B302")),
                "{} shows no B302 on line 5: {:?}",
                r.command,
                r.verdicts
            );
        }
    }
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/invalid/syntax.kvr");
    for r in readings(&path) {
        assert!(
            r.verdicts
                .get(&(7, Family::Reading))
                .is_some_and(|c| c.contains("P108")),
            "{} shows no P108 on line 7: {:?}",
            r.command,
            r.verdicts
        );
    }
}

// The four cases where the commands once disagreed.
// source: notation IUPAC, Nomenclature of Inorganic Chemistry
// (Recommendations 2005), IR-11.4; chemistry common practice (Y2O3 in ZrO2,
// reduction of an oxide, potassium in KCl).

const YTTRIA_LATEX: &str = r"\mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\mathrm{Y}_{\mathrm{Zr}}^{\prime} + 3\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet\bullet}";

#[test]
fn a_latex_reaction_with_the_host_over_the_arrow_passes_check_and_the_workbench() {
    let check = lacuna(&["check", "-r", YTTRIA_LATEX], None);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    assert!(!check.stdout.contains("H203"), "{}", check.stdout);
    let repl = lacuna(&["repl"], Some(format!("{YTTRIA_LATEX}\n").as_bytes()));
    assert_eq!(repl.code, 0, "{}{}", repl.stdout, repl.stderr);
    // Both say that the host came from over the arrow, in the same words.
    for out in [&check.stdout, &repl.stdout] {
        assert!(
            out.contains("note[T806]: no host was set: the reaction is checked against ZrO2"),
            "{out}"
        );
    }
    assert!(!repl.stdout.contains("error["), "{}", repl.stdout);
    // The same line without the host over the arrow has no host in either.
    let plain = YTTRIA_LATEX.replace(r"\xrightarrow{\mathrm{ZrO_2}}", r"\rightarrow");
    let check = lacuna(&["check", "-r", &plain], None);
    assert!(check.stdout.contains("H203"), "{}", check.stdout);
    let repl = lacuna(&["repl"], Some(format!("{plain}\n").as_bytes()));
    assert!(repl.stdout.contains("H203"), "{}", repl.stdout);
}

#[test]
fn a_latex_reaction_under_a_host_line_reads_in_check_law_and_fmt() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let file = dir.path().join("latex.kvr");
    fs::write(
        &file,
        "host ZrO2\nred: \\mathrm{O}_{\\mathrm{O}}^{\\times} \\rightarrow V_{\\mathrm{O}}^{\\bullet\\bullet} + 2e^{\\prime} + \\tfrac{1}{2}\\mathrm{O_2(g)}\n",
    )
    .expect("writes");
    let file = file.display().to_string();
    let check = lacuna(&["check", &file], None);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    let law = lacuna(&["law", &file], None);
    assert_eq!(law.code, 0, "{}{}", law.stdout, law.stderr);
    assert!(law.stdout.contains("K_red"), "{}", law.stdout);
    let fmt = lacuna(&["fmt", "--check", &file], None);
    assert_eq!(fmt.code, 0, "{}{}", fmt.stdout, fmt.stderr);
    assert!(!fmt.stderr.contains("P101"), "{}", fmt.stderr);
}

#[test]
fn a_potassium_reaction_with_a_unicode_arrow_is_a_reaction() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let file = dir.path().join("kcl.kvr");
    fs::write(&file, "host KCl\nK ⟶ K_i. + e'\n").expect("writes");
    let file = file.display().to_string();
    let check = lacuna(&["check", &file], None);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    assert!(check.stdout.contains("1 reaction"), "{}", check.stdout);
    assert!(!check.stdout.contains("L504"), "{}", check.stdout);
    let law = lacuna(&["law", &file], None);
    assert_eq!(law.code, 0, "{}{}", law.stdout, law.stderr);
    assert!(law.stdout.contains("K_i"), "{}", law.stdout);
    let typeset = lacuna(&["typeset", "--to", "ascii", &file], None);
    assert_eq!(
        typeset.stdout.trim(),
        "K -> K_i. + e'",
        "{}",
        typeset.stderr
    );
    // `fmt` rewrites it as a reaction (a model line is kept as written).
    let fmt = lacuna(&["fmt", "--check", &file], None);
    assert!(
        fmt.stdout.contains("+K -> K_i. + e'"),
        "{}{}",
        fmt.stdout,
        fmt.stderr
    );
    // The workbench takes it as a reaction, not as a model line it refuses.
    let repl = lacuna(&["repl"], Some("host KCl\nK ⟶ K_i. + e'\n".as_bytes()));
    assert_eq!(repl.code, 0, "{}{}", repl.stdout, repl.stderr);
    assert!(repl.stdout.contains("[1] ✓"), "{}", repl.stdout);
}

#[test]
fn the_overflow_case_reads_as_one_labelled_reaction_everywhere() {
    // Only the reader's side: the line is a reaction named `x` whose
    // coefficients are exact fractions, read alike by the file reader and
    // the model reader. What `law` makes of it is the law command's.
    let line = "x: 1/3037000499 h. + 1/3037000499 e' -> 1/3037000507 h. + 1/3037000507 e'";
    let Line::Reaction { label, reaction } = classify(line) else {
        panic!("not a reaction line");
    };
    assert_eq!(label.map(|l| &line[l]), Some("x"));
    let read = lacuna::file::reader::read_reaction(line, reaction);
    let parsed = read.reaction.expect("reads");
    assert_eq!((parsed.left.len(), parsed.right.len()), (2, 2));
    assert!(read.diagnostics.iter().all(|d| !d.is_error()));
    let doc = lacuna::model::read("x.kvr", &format!("host ZrO2\n{line}\n"), None);
    assert_eq!(doc.reactions.len(), 1);
    assert_eq!(doc.reactions[0].label.as_deref(), Some("x"));
    assert!(
        doc.diagnostics
            .iter()
            .all(|d| !d.code.as_str().starts_with('P')),
        "{:?}",
        doc.diagnostics
    );
}
