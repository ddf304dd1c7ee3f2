//! What the commands share: colour, output formats, failing with exit 2
//! (usage errors, and output that cannot be written: a closed pipe or a
//! full disk), `--host` values and the folder search.

use clap::ValueEnum;
use lacuna::host::Host;
use lacuna::notation::Style;
use lacuna::report::Palette;
use std::io::{self, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};

/// When to colour terminal output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ColorChoice {
    Auto,
    Always,
    Never,
}

impl ColorChoice {
    /// Decides colour for standard output: `auto` colours a terminal unless
    /// NO_COLOR is set.
    pub fn palette(self) -> Palette {
        let enabled = match self {
            ColorChoice::Always => true,
            ColorChoice::Never => false,
            ColorChoice::Auto => {
                io::stdout().is_terminal()
                    && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
            }
        };
        Palette { enabled }
    }
}

/// Set when a command has reported a failure with exit 2.
static FAILED: AtomicBool = AtomicBool::new(false);

/// Whether a command has already reported a failure with exit 2 (so a
/// failed final flush need not say it again).
pub fn failed_already() -> bool {
    FAILED.load(Ordering::Relaxed)
}

/// Prints a usage or I/O problem to stderr and returns exit code 2.
pub fn fail(message: impl std::fmt::Display) -> ExitCode {
    let _ = writeln!(io::stderr(), "lacuna: {message}");
    FAILED.store(true, Ordering::Relaxed);
    ExitCode::from(2)
}

/// The exit when the command's output cannot be written: 2, quietly for a
/// closed pipe (the reader took what it wanted), with a short message
/// otherwise (a full disk, a lost terminal).
pub fn output_failed(e: &io::Error) -> ExitCode {
    if e.kind() == io::ErrorKind::BrokenPipe {
        FAILED.store(true, Ordering::Relaxed);
        ExitCode::from(2)
    } else {
        fail(format_args!("cannot write the output: {e}"))
    }
}

/// Standard output, locked: what a command writes its results to. Write to
/// it with `?` and end with `finish`, so that a failed write is an error.
pub fn stdout() -> io::StdoutLock<'static> {
    io::stdout().lock()
}

/// Ends a command's output: flushes it and turns a failed write into exit 2.
pub fn finish(written: io::Result<()>, code: ExitCode) -> ExitCode {
    match written.and_then(|()| io::stdout().flush()) {
        Ok(()) => code,
        Err(e) => output_failed(&e),
    }
}

/// Output format of the generating commands (`balance`, `dope`, `native`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum OutputFormat {
    /// Text for people.
    Human,
    /// Machine-readable (stable keys).
    Json,
}

/// Which spelling of Kröger–Vink notation to print.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum NotationStyle {
    /// `V_O••`, `Y_Zr′`, `→`
    Unicode,
    /// `V_O..`, `Y_Zr'`, `->`
    Ascii,
    /// LaTeX math
    Latex,
}

impl NotationStyle {
    pub fn style(self) -> Style {
        match self {
            NotationStyle::Unicode => Style::Unicode,
            NotationStyle::Ascii => Style::Ascii,
            NotationStyle::Latex => Style::Latex,
        }
    }
}

/// Writes `value` as pretty JSON and a newline to stdout.
pub fn print_json<T: serde::Serialize>(value: &T) -> io::Result<()> {
    // Serialise first, so a closed pipe surfaces as an I/O error of its own kind.
    let mut text = serde_json::to_string_pretty(value).map_err(io::Error::other)?;
    text.push('\n');
    let mut out = io::stdout().lock();
    out.write_all(text.as_bytes())?;
    out.flush()
}

/// The `.kvr` files below `folder`, sorted, honouring ignore files. Problems
/// met on the way (unreadable folders, link loops) are printed and flagged.
pub fn reaction_files(folder: &Path) -> (Vec<PathBuf>, bool) {
    let mut files = Vec::new();
    let mut failed = false;
    let walker = ignore::WalkBuilder::new(folder)
        .follow_links(true)
        .add_custom_ignore_filename(".lacunaignore")
        .require_git(false)
        .build();
    for entry in walker {
        match entry {
            Ok(entry) => {
                let path = entry.path();
                if entry.file_type().is_some_and(|t| t.is_file())
                    && path
                        .extension()
                        .is_some_and(|e| e == lacuna::file::reader::EXTENSION)
                {
                    files.push(path.to_path_buf());
                }
            }
            Err(e) => {
                failed = true;
                let _ = writeln!(io::stderr(), "lacuna: {e}");
            }
        }
    }
    files.sort();
    (files, failed)
}

/// Parses a `--host` value, printing its diagnostics as a usage error.
pub fn host_argument(spec: &str) -> Result<Host, ExitCode> {
    Host::from_spec(spec).map_err(|diagnostics| {
        let mut stderr = io::stderr();
        for d in diagnostics {
            let d = d.locate(1, spec);
            let _ = lacuna::report::human::write_diagnostic(
                &mut stderr,
                Palette::PLAIN,
                "--host",
                spec,
                &d,
            );
        }
        fail("the --host value is not a usable host")
    })
}
