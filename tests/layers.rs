//! The layering rules of DEVELOPERS.md, checked on the source tree and the
//! manifest: the domain stages do no I/O and no presentation, and the core
//! library depends on no front-end crate.

use crate::support::repo;
use std::fs;
use std::path::Path;

/// Stages whose results are plain data: no files, no terminals, no colour.
const PURE_STAGES: &[&str] = &[
    "base",
    "notation",
    "host.rs",
    "check",
    "balance",
    "generate",
    "model",
    "solve",
    "fit",
    "typeset.rs",
];

/// What a pure stage must not mention, and why it would be wrong there.
const IMPURE: &[(&str, &str)] = &[
    (
        "std::io",
        "I/O belongs to file/ (reading sources) and report/ (writing)",
    ),
    ("std::fs", "files are opened by file/ and the front-ends"),
    ("println!", "output is written by report/"),
    ("eprintln!", "output is written by report/"),
    ("print!(", "output is written by report/"),
    ("Palette", "colour is decided at print time, in report/"),
    ("anstyle", "colour is decided at print time, in report/"),
];

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    if dir.is_file() {
        out.push(dir.to_path_buf());
        return;
    }
    for entry in fs::read_dir(dir).expect("source folder") {
        let path = entry.expect("entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// Code of a file without its `#[cfg(test)]` tail and without comments.
fn code_of(text: &str) -> String {
    let body = text.split("#[cfg(test)]").next().unwrap_or("");
    body.lines()
        .filter(|l| !l.trim_start().starts_with("//"))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn domain_stages_do_no_io_and_no_presentation() {
    let mut found = Vec::new();
    for stage in PURE_STAGES {
        let mut files = Vec::new();
        rust_files(Path::new(&repo(&format!("src/{stage}"))), &mut files);
        assert!(!files.is_empty(), "src/{stage} has no Rust files");
        for file in files {
            if file.file_name().is_some_and(|n| n == "tests.rs") {
                continue;
            }
            let code = code_of(&fs::read_to_string(&file).expect("source"));
            for (needle, why) in IMPURE {
                if code.contains(needle) {
                    found.push(format!("{}: `{needle}` ({why})", file.display()));
                }
            }
        }
    }
    assert!(found.is_empty(), "{}", found.join("\n"));
}

/// Crates the core may use; every other dependency is optional and enabled
/// only by the `cli` feature, so `--no-default-features` embeds cleanly.
const CORE_CRATES: &[&str] = &[
    "anstyle",
    "csv",
    "nom",
    "num-bigint",
    "num-integer",
    "num-rational",
    "num-traits",
    "serde",
    "serde_json",
    "toml",
];

#[test]
fn the_core_depends_on_no_front_end_crate() {
    let manifest: toml::Table = fs::read_to_string(repo("Cargo.toml"))
        .expect("Cargo.toml")
        .parse()
        .expect("Cargo.toml parses");
    let deps = manifest["dependencies"].as_table().expect("[dependencies]");
    let features = manifest["features"].as_table().expect("[features]");
    let enabled_by = |name: &str| -> Vec<String> {
        features
            .iter()
            .filter(|(_, list)| {
                list.as_array()
                    .expect("feature list")
                    .iter()
                    .any(|v| v.as_str() == Some(&format!("dep:{name}")))
            })
            .map(|(feature, _)| feature.clone())
            .collect()
    };
    let default: Vec<&str> = features["default"]
        .as_array()
        .expect("default features")
        .iter()
        .filter_map(|v| v.as_str())
        .collect();
    assert_eq!(
        default,
        ["cli"],
        "the default feature set is the front-ends"
    );
    for (name, spec) in deps {
        let optional = spec
            .as_table()
            .and_then(|t| t.get("optional"))
            .and_then(toml::Value::as_bool)
            .unwrap_or(false);
        if CORE_CRATES.contains(&name.as_str()) {
            continue;
        }
        assert!(optional, "{name} is a front-end crate but not optional");
        let by = enabled_by(name);
        assert_eq!(
            by,
            ["cli"],
            "{name} is enabled by {by:?}, not by `cli` alone"
        );
    }
}

/// Diagnostic codes are stable: a code, once given, keeps its name (its
/// meaning) for ever; new codes are only added. `tests/fixtures/codes.txt`
/// lists every code given so far with its rule name; append a line for a
/// new code, never change one.
#[test]
fn diagnostic_codes_keep_their_meaning() {
    let explained = crate::support::lacuna(&["explain"], None);
    assert_eq!(explained.code, 0, "{}", explained.stderr);
    let current: std::collections::BTreeMap<&str, &str> = explained
        .stdout
        .lines()
        .filter_map(|l| {
            let mut words = l.split_whitespace();
            let code = words.next()?;
            let _severity = words.next()?;
            Some((code, words.next()?))
        })
        .collect();
    let given = fs::read_to_string(repo("tests/fixtures/codes.txt")).expect("codes.txt");
    let mut listed = 0;
    for line in given.lines().filter(|l| !l.trim().is_empty()) {
        let (code, name) = line.split_once(' ').expect("`CODE name` lines");
        assert_eq!(
            current.get(code),
            Some(&name),
            "{code} was `{name}`; a code keeps its meaning (add a new code instead)"
        );
        listed += 1;
    }
    assert_eq!(
        listed,
        current.len(),
        "`lacuna explain` lists codes that tests/fixtures/codes.txt lacks: append them"
    );
}

/// Every test DEVELOPERS.md names as the holder of an invariant exists, so
/// the code map cannot promise a check that is gone.
#[test]
fn the_tests_the_code_map_names_exist() {
    let map = fs::read_to_string(repo("DEVELOPERS.md")).expect("DEVELOPERS.md");
    let mut sources = String::new();
    for folder in ["src", "tests"] {
        let mut files = Vec::new();
        rust_files(Path::new(&repo(folder)), &mut files);
        for file in files {
            sources.push_str(&fs::read_to_string(file).expect("source"));
        }
    }
    let mut named = 0;
    for quoted in map.split('`').skip(1).step_by(2) {
        // Test names are snake_case with at least three words; a `module::`
        // prefix names the file they are in.
        let name = quoted.rsplit("::").next().unwrap_or(quoted);
        let name = name.trim_end_matches('*');
        let looks_like_test = !quoted.starts_with("clippy::")
            && name.matches('_').count() >= 2
            && name
                .chars()
                .all(|c| c.is_ascii_lowercase() || c == '_' || c.is_ascii_digit());
        if !looks_like_test {
            continue;
        }
        named += 1;
        assert!(
            sources.contains(&format!("fn {name}")),
            "DEVELOPERS.md names the test `{quoted}`, which no longer exists"
        );
    }
    assert!(named >= 10, "DEVELOPERS.md names only {named} tests");
}

/// Enums whose set of cases is closed by nature; every other public enum of
/// the core may grow and is `#[non_exhaustive]`, so a new case is not a
/// breaking change for code that embeds the library.
const CLOSED_ENUMS: &[&str] = &["Side", "Spin"];

#[test]
fn public_enums_of_the_core_may_grow() {
    let mut files = Vec::new();
    rust_files(Path::new(&repo("src")), &mut files);
    let mut open = Vec::new();
    let mut seen = 0;
    for file in files {
        if file.components().any(|c| c.as_os_str() == "app") {
            continue;
        }
        let text = fs::read_to_string(&file).expect("source");
        let body = text.split("#[cfg(test)]").next().unwrap_or("");
        let lines: Vec<&str> = body.lines().collect();
        for (i, line) in lines.iter().enumerate() {
            let Some(rest) = line.strip_prefix("pub enum ") else {
                continue;
            };
            let name: String = rest.chars().take_while(|c| c.is_alphanumeric()).collect();
            seen += 1;
            let attributes = lines[i.saturating_sub(8)..i].join("\n");
            if !CLOSED_ENUMS.contains(&name.as_str()) && !attributes.contains("#[non_exhaustive]") {
                open.push(format!("{}: enum {name}", file.display()));
            }
        }
    }
    assert!(seen > 20, "found only {seen} public enums");
    assert!(
        open.is_empty(),
        "public enums without #[non_exhaustive]:\n{}",
        open.join("\n")
    );
}
