//! A small builder that runs the real binary and compares its output.

use std::io::Write;
use std::process::{Command, Stdio};

/// What one run of the binary produced.
#[derive(Debug)]
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `lacuna` with `args`, feeding `stdin` when given.
pub fn lacuna(args: &[&str], stdin: Option<&[u8]>) -> Run {
    lacuna_in(env!("CARGO_MANIFEST_DIR"), args, stdin)
}

/// Runs `lacuna` in folder `dir`.
pub fn lacuna_in(dir: &str, args: &[&str], stdin: Option<&[u8]>) -> Run {
    let mut command = Command::new(env!("CARGO_BIN_EXE_lacuna"));
    command.current_dir(dir);
    command
        .args(args)
        .env("NO_COLOR", "1")
        .env_remove("CLICOLOR_FORCE");
    command.stdin(if stdin.is_some() {
        Stdio::piped()
    } else {
        Stdio::null()
    });
    command.stdout(Stdio::piped()).stderr(Stdio::piped());
    let mut child = command.spawn().expect("the binary starts");
    if let Some(bytes) = stdin {
        let mut pipe = child.stdin.take().expect("stdin is piped");
        pipe.write_all(bytes).expect("stdin accepts the input");
    }
    let output = child.wait_with_output().expect("the binary finishes");
    let run = Run {
        code: output.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&output.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&output.stderr).into_owned(),
    };
    assert_ne!(
        run.code, 101,
        "lacuna panicked on {args:?}:\n{}",
        run.stderr
    );
    run
}

/// Runs and asserts the exit code, returning the run for further checks.
pub fn expect(args: &[&str], stdin: Option<&[u8]>, code: i32) -> Run {
    let run = lacuna(args, stdin);
    assert_eq!(
        run.code, code,
        "exit code of {args:?}\nstdout:\n{}\nstderr:\n{}",
        run.stdout, run.stderr
    );
    run
}

/// Path of a file in the repository.
pub fn repo(path: &str) -> String {
    format!("{}/{path}", env!("CARGO_MANIFEST_DIR"))
}
