//! Closed pipes and full disks: every command exits 2, never 101 (a panic),
//! whatever its output is.
//!
//! Three ways the output can fail, for every subcommand `lacuna --help`
//! lists: a reader that takes the first line and closes the pipe (commands
//! given enough output that the rest cannot fit in the pipe); a pipe whose
//! reader is gone before the first write (every command, so the result
//! never depends on timing); and standard output on `/dev/full` (Linux),
//! where every write fails with "no space left", which must be said on
//! standard error. Source for the expected behaviour: common practice (a
//! command-line program exits non-zero without a panic on EPIPE and ENOSPC).

use std::fs::File;
use std::io::{BufRead, BufReader, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};

/// One way to run a subcommand.
struct Case {
    /// The subcommand, as `lacuna --help` names it.
    command: &'static str,
    args: Vec<String>,
    stdin: Option<Vec<u8>>,
    /// Writes far more than a pipe holds (64 KiB on Linux), so a reader
    /// that stops after one line makes a later write fail for sure.
    large: bool,
}

/// Reaction files written for the test: large ones for `check`, `fmt`,
/// `typeset`, `law` and the workbench.
struct Inputs {
    _dir: tempfile::TempDir,
    /// 4000 balanced reactions, spaced so that `fmt` rewrites every line.
    good: PathBuf,
    /// 4000 reactions that fail (each gets a report).
    bad: PathBuf,
}

fn inputs() -> Inputs {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let good = dir.path().join("big.kvr");
    let bad = dir.path().join("bad.kvr");
    let mut good_text = String::from("host ZrO2\n");
    let mut bad_text = String::from("host ZrO2\n");
    for i in 0..4000 {
        good_text.push_str(&format!("r{i}: Y2O3   ->  2Y_Zr' + 3O_O + V_O..\n"));
        bad_text.push_str("Y2O3 -> Y_Zr' + O_O + V_O..\n");
    }
    std::fs::write(&good, good_text).expect("written");
    std::fs::write(&bad, bad_text).expect("written");
    Inputs {
        _dir: dir,
        good,
        bad,
    }
}

fn project(path: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join(path)
        .display()
        .to_string()
}

fn cases(inputs: &Inputs) -> Vec<Case> {
    let good = inputs.good.display().to_string();
    let bad = inputs.bad.display().to_string();
    let model = project("tests/peers/model.kvr");
    let measurements = project("examples/pump-cell-conductivity.csv");
    let case = |command: &'static str, args: &[&str], large: bool| Case {
        command,
        args: args.iter().map(|a| a.to_string()).collect(),
        stdin: None,
        large,
    };
    let many_lines = "Y2O3 -> Y_Zr' + O_O + V_O..\n".repeat(3000).into_bytes();
    vec![
        case("check", &["check", &bad], true),
        case("check", &["check", "--format", "json", &bad], true),
        case("check", &["check", "--format", "gnu", &bad], true),
        case("check", &["check", "--format", "sarif", &bad], true),
        case("fmt", &["fmt", &good], true),
        case("fmt", &["fmt", "--check", &good], true),
        case("explain", &["explain"], false),
        case("explain", &["explain", "B302"], false),
        case("typeset", &["typeset", &good], true),
        case("law", &["law", &good], true),
        case("law", &["law", &model], false),
        case(
            "brouwer",
            &["brouwer", &model, "--format", "csv", "--per-decade", "100"],
            true,
        ),
        case("brouwer", &["brouwer", &model], false),
        case("brouwer", &["brouwer", &model, "--format", "svg"], false),
        case("dope", &["dope", "ZrO2", "Y"], false),
        case("native", &["native", "ZrO2"], false),
        case(
            "balance",
            &["balance", "--host", "ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.."],
            false,
        ),
        case(
            "balance",
            &["balance", "--format", "json", "Y2O3 -> Y_Zr' + O_O + V_O.."],
            false,
        ),
        case("fit", &["fit", &measurements], false),
        case("fit", &["fit", &measurements, "--format", "json"], false),
        case("help", &["help"], false),
        case("help", &["help", "brouwer"], false),
        case("help", &["--help"], false),
        case("help", &["--version"], false),
        case("check", &["check", "--help"], false),
        Case {
            command: "repl",
            args: vec!["repl".into(), "--host".into(), "ZrO2".into()],
            stdin: Some(many_lines),
            large: true,
        },
    ]
}

/// The subcommands `lacuna --help` lists (`help` included).
fn subcommands() -> Vec<String> {
    let output = Command::new(env!("CARGO_BIN_EXE_lacuna"))
        .arg("--help")
        .output()
        .expect("the binary starts");
    let help = String::from_utf8_lossy(&output.stdout).into_owned();
    let commands = help
        .split("Commands:")
        .nth(1)
        .and_then(|rest| rest.split("Options:").next())
        .expect("the help lists the commands");
    commands
        .lines()
        // A command starts its line after two spaces; descriptions wrap deeper.
        .filter(|l| l.starts_with("  ") && !l.starts_with("   "))
        .filter_map(|l| l.split_whitespace().next())
        .map(str::to_string)
        .collect()
}

fn spawn(case: &Case, stdout: Stdio) -> Child {
    let mut child = Command::new(env!("CARGO_BIN_EXE_lacuna"))
        .args(&case.args)
        .env("NO_COLOR", "1")
        .stdin(if case.stdin.is_some() {
            Stdio::piped()
        } else {
            Stdio::null()
        })
        .stdout(stdout)
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary starts");
    if let Some(bytes) = &case.stdin {
        let mut pipe = child.stdin.take().expect("stdin is piped");
        let bytes = bytes.clone();
        // Fed from a thread: the command may stop reading when its output fails.
        std::thread::spawn(move || {
            let _ = pipe.write_all(&bytes);
        });
    }
    child
}

/// Waits for the command; returns its exit code and standard error.
fn finish(mut child: Child) -> (Option<i32>, String) {
    let mut stderr = String::new();
    if let Some(mut pipe) = child.stderr.take() {
        let _ = std::io::Read::read_to_string(&mut pipe, &mut stderr);
    }
    let status = child.wait().expect("the command ends");
    (status.code(), stderr)
}

fn shown(case: &Case) -> String {
    case.args.join(" ")
}

#[test]
fn every_subcommand_has_a_case() {
    let listed = subcommands();
    assert!(listed.len() >= 11, "{listed:?}");
    let inputs = inputs();
    let covered: Vec<&str> = cases(&inputs).iter().map(|c| c.command).collect();
    for command in &listed {
        assert!(
            covered.contains(&command.as_str()),
            "`lacuna {command}` has no closed-pipe and full-disk case"
        );
    }
}

#[test]
fn the_large_cases_write_more_than_a_pipe_holds() {
    // Otherwise a reader stopping after one line proves nothing.
    let inputs = inputs();
    for case in cases(&inputs).iter().filter(|c| c.large) {
        let child = spawn(case, Stdio::piped());
        let output = child.wait_with_output().expect("the command ends");
        assert!(
            output.stdout.len() > 2 * 65536,
            "{}: only {} bytes",
            shown(case),
            output.stdout.len()
        );
    }
}

#[test]
fn a_reader_that_stops_after_the_first_line_gives_exit_2() {
    let inputs = inputs();
    for case in cases(&inputs).iter().filter(|c| c.large) {
        let mut child = spawn(case, Stdio::piped());
        let stdout = child.stdout.take().expect("stdout is piped");
        let mut reader = BufReader::new(stdout);
        let mut first = String::new();
        reader.read_line(&mut first).expect("a first line");
        assert!(!first.is_empty(), "{}: no output", shown(case));
        drop(reader);
        let (code, stderr) = finish(child);
        assert_eq!(code, Some(2), "{}\nstderr:\n{stderr}", shown(case));
        assert!(!stderr.contains("panicked"), "{}: {stderr}", shown(case));
    }
}

/// The writing end of a pipe whose reader has already gone (Unix: the
/// reader is a `true` that has exited), so the first write fails.
#[cfg(unix)]
fn closed_pipe() -> Stdio {
    let mut reader = Command::new("true")
        .stdin(Stdio::piped())
        .spawn()
        .expect("`true` starts");
    let writer = reader.stdin.take().expect("piped");
    reader.wait().expect("`true` ends");
    Stdio::from(writer)
}

#[cfg(unix)]
#[test]
fn a_pipe_closed_before_the_first_write_gives_exit_2_quietly() {
    let inputs = inputs();
    for case in &cases(&inputs) {
        let child = spawn(case, closed_pipe());
        let (code, stderr) = finish(child);
        assert_eq!(code, Some(2), "{}\nstderr:\n{stderr}", shown(case));
        assert!(!stderr.contains("panicked"), "{}: {stderr}", shown(case));
        // The reader took what it wanted: nothing to say about the pipe.
        assert!(
            !stderr.to_lowercase().contains("broken pipe"),
            "{}: {stderr}",
            shown(case)
        );
    }
}

#[test]
fn a_full_disk_gives_exit_2_and_says_so() {
    let full = Path::new("/dev/full");
    if !cfg!(target_os = "linux") || !full.exists() {
        println!("note: no /dev/full here; the full-disk test is skipped");
        return;
    }
    let inputs = inputs();
    for case in &cases(&inputs) {
        let device = File::options()
            .write(true)
            .open(full)
            .expect("/dev/full opens");
        let child = spawn(case, Stdio::from(device));
        let (code, stderr) = finish(child);
        assert_eq!(code, Some(2), "{}\nstderr:\n{stderr}", shown(case));
        assert!(!stderr.contains("panicked"), "{}: {stderr}", shown(case));
        assert!(
            stderr.contains("lacuna: cannot write the output: ")
                && stderr.contains("No space left on device"),
            "{}: stderr should say the output could not be written:\n{stderr}",
            shown(case)
        );
        // Said once, not once per layer.
        assert_eq!(
            stderr.matches("No space left").count(),
            1,
            "{}: {stderr}",
            shown(case)
        );
    }
}
