//! Reaction files in CI: folders, rule levels, suppressions and `fmt`.

use crate::support::{expect, lacuna, lacuna_in};
use std::fs;
use std::os::unix::fs::PermissionsExt;
use std::path::Path;

fn write(dir: &Path, name: &str, text: &str) {
    let path = dir.join(name);
    if let Some(parent) = path.parent() {
        fs::create_dir_all(parent).expect("folder");
    }
    fs::write(path, text).expect("write");
}

const GOOD: &str = "host ZrO2\ndope: Y2O3 -> 2Y_Zr' + 3O_O + V_O..\n";
const BAD: &str = "host ZrO2\ndope: Y2O3 -> 2Y_Zr' + 3O_O + V_O.\n";

#[test]
fn folders_are_walked_in_a_stable_order_honouring_ignore_files() {
    let dir = tempfile::tempdir().expect("temp dir");
    let root = dir.path();
    write(root, "b/second.kvr", BAD);
    write(root, "a/first.kvr", BAD);
    write(root, "a/notes.txt", BAD);
    write(root, "skipped/third.kvr", BAD);
    write(root, ".gitignore", "skipped/\n");
    write(root, "c/.lacunaignore", "draft.kvr\n");
    write(root, "c/draft.kvr", BAD);
    let run = lacuna_in(
        root.to_str().expect("utf-8 path"),
        &["check", "--format", "gnu", "."],
        None,
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let files: Vec<&str> = run
        .stdout
        .lines()
        .map(|l| l.split(':').next().unwrap_or(""))
        .collect();
    assert_eq!(
        files,
        vec!["./a/first.kvr", "./b/second.kvr"],
        "{}",
        run.stdout
    );
}

#[test]
fn link_loops_and_unreadable_entries_are_reported_and_the_rest_checked() {
    let dir = tempfile::tempdir().expect("temp dir");
    let root = dir.path();
    write(root, "ok.kvr", GOOD);
    write(root, "bad.kvr", BAD);
    std::os::unix::fs::symlink(root, root.join("loop")).expect("symlink");
    std::os::unix::fs::symlink(root.join("missing.kvr"), root.join("dangling.kvr"))
        .expect("symlink");
    let run = lacuna_in(
        root.to_str().expect("utf-8 path"),
        &["check", "--format", "gnu", "."],
        None,
    );
    assert_eq!(run.code, 2, "I/O problems give exit 2\n{}", run.stderr);
    assert!(run.stderr.contains("loop"), "{}", run.stderr);
    assert!(run.stderr.contains("dangling.kvr"), "{}", run.stderr);
    assert!(
        run.stdout.contains("./bad.kvr:2:"),
        "the rest is still checked:\n{}",
        run.stdout
    );
}

#[test]
fn levels_from_config_flags_and_comments() {
    let dir = tempfile::tempdir().expect("temp dir");
    let root = dir.path();
    fs::create_dir(root.join(".git")).expect("repo marker");
    let mixed = "host ZrO2\nO_O -> V_O.. + 2e' + 1/2 O2(g)\nnil -> V_Zr′′′′ + 2V_O••\n";
    write(root, "m.kvr", mixed);
    let here = root.to_str().expect("utf-8 path");
    // Warnings alone pass.
    let run = lacuna_in(here, &["check", "--format", "gnu", "m.kvr"], None);
    assert_eq!(run.code, 0, "{}", run.stdout);
    assert!(run.stdout.contains("[L501]"));
    // --deny warnings fails them.
    assert_eq!(
        lacuna_in(here, &["check", "--deny", "warnings", "m.kvr"], None).code,
        1
    );
    assert_eq!(
        lacuna_in(here, &["check", "--deny", "mixed-marks", "m.kvr"], None).code,
        1
    );
    assert_eq!(
        lacuna_in(here, &["check", "--deny", "no-such-rule", "m.kvr"], None).code,
        2
    );
    // The config file at the repository root.
    write(root, "lacuna.toml", "[rules]\nmixed-marks = \"deny\"\n");
    assert_eq!(lacuna_in(here, &["check", "m.kvr"], None).code, 1);
    // The command line wins over the file.
    assert_eq!(
        lacuna_in(here, &["check", "--allow", "L501", "m.kvr"], None).code,
        0
    );
    // A comment silences the rule on its line.
    write(
        root,
        "m.kvr",
        &format!("{}  # lacuna-allow: L501\n", mixed.trim_end()),
    );
    let run = lacuna_in(here, &["check", "--format", "gnu", "m.kvr"], None);
    assert_eq!(run.code, 0, "{}", run.stdout);
    // A broken config is a usage error.
    write(root, "lacuna.toml", "[rules]\nmixed-marks = \"loud\"\n");
    assert_eq!(lacuna_in(here, &["check", "m.kvr"], None).code, 2);
}

#[test]
fn duplicate_names_are_errors() {
    let run = expect(
        &["check", "--format", "gnu", "-"],
        Some(b"host ZrO2\nr: nil -> e' + h.\nr: O_O -> O_i'' + V_O..\n"),
        1,
    );
    assert!(
        run.stdout
            .contains("<stdin>:3:1: error: the name `r` is already used on line 2 [L503]"),
        "{}",
        run.stdout
    );
}

#[test]
fn explain_knows_every_code() {
    let run = expect(&["explain"], None, 0);
    assert!(run.stdout.lines().count() >= 30);
    let run = expect(&["explain", "B303"], None, 0);
    assert!(run.stdout.contains("site ratio"), "{}", run.stdout);
    expect(&["explain", "Z999"], None, 2);
}

#[test]
fn fmt_check_write_and_refusal() {
    let dir = tempfile::tempdir().expect("temp dir");
    let root = dir.path();
    let messy = "host  ZrO2\nred:O_O->V_O**+2e'+1/2O2(g)\n";
    write(root, "x.kvr", messy);
    let path = root.join("x.kvr");
    fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).expect("chmod");
    let p = path.to_str().expect("utf-8 path");
    // `red:O_O` glues the name to the reaction: the file does not parse, so it is left alone.
    let run = lacuna(&["fmt", "--write", p], None);
    assert_eq!(run.code, 1);
    assert!(
        run.stderr
            .contains("a reaction name is followed by `:` and a space"),
        "{}",
        run.stderr
    );
    assert_eq!(fs::read_to_string(&path).expect("read"), messy);

    write(root, "x.kvr", "host  ZrO2\nred: O_O->V_O**+2e'+1/2O2(g)\n");
    fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).expect("chmod");
    let run = lacuna(&["fmt", "--check", p], None);
    assert_eq!(run.code, 1);
    assert!(
        run.stdout
            .contains("+red: O_Ox -> V_O.. + 2 e' + 1/2 O2(g)"),
        "{}",
        run.stdout
    );
    expect(&["fmt", "--write", p], None, 0);
    assert_eq!(
        fs::read_to_string(&path).expect("read"),
        "host ZrO2\nred: O_Ox -> V_O.. + 2 e' + 1/2 O2(g)\n"
    );
    assert_eq!(
        fs::metadata(&path).expect("stat").permissions().mode() & 0o777,
        0o640,
        "permissions kept"
    );
    expect(&["fmt", "--check", p], None, 0);
    let run = expect(
        &["fmt", "--marks", "unicode", "-"],
        Some(b"red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n"),
        0,
    );
    assert_eq!(run.stdout, "red: O_O× → V_O•• + 2 e′ + ½ O2(g)\n");
}

/// Kills `fmt --write` at many moments: the file is always the old or the new
/// text, never a mix.
#[test]
fn a_killed_writer_never_leaves_a_mix() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("big.kvr");
    let mut original = String::from("host ZrO2\n");
    for i in 0..20_000 {
        original.push_str(&format!("r{i}: Y2O3->2Y_Zr'+3O_O+V_O**\n"));
    }
    let p = path.to_str().expect("utf-8 path").to_string();
    let formatted = {
        fs::write(&path, &original).expect("write");
        expect(&["fmt", &p], None, 0).stdout
    };
    assert_ne!(formatted, original);
    for delay_ms in [0u64, 1, 2, 5, 10, 20, 40] {
        fs::write(&path, &original).expect("reset");
        let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_lacuna"))
            .args(["fmt", "--write", &p])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .expect("starts");
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        let _ = child.kill();
        let _ = child.wait();
        let now = fs::read_to_string(&path).expect("read");
        assert!(
            now == original || now == formatted,
            "a mix after {delay_ms} ms ({} bytes)",
            now.len()
        );
    }
}

#[test]
fn model_lines_must_name_a_reaction_of_the_file() {
    // Data may come before the reaction it belongs to; only unknown names fail.
    let text = b"host ZrO2\nK red = 1e-20 at 1273 K\ndH rde = 4.6 eV\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\n";
    let run = expect(&["check", "--format", "gnu", "-"], Some(text), 1);
    assert_eq!(
        run.stdout.trim(),
        "<stdin>:3:4: error: no reaction in this file is named `rde` [L504] (help: name the reaction with `name: reaction`, or fix the spelling of the name here)"
    );
    let run = expect(
        &["check", "--allow", "unknown-reaction", "-"],
        Some(text),
        0,
    );
    assert!(run.stdout.contains("1 pass"), "{}", run.stdout);
}
