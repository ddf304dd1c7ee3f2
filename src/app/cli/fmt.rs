//! `lacuna fmt`: rewrite reaction files in the canonical layout.

use super::shared::{output_failed, reaction_files, stdout};
use clap::{Args, ValueEnum};
use lacuna::file::layout::{MarkSpelling, format_text};
use lacuna::report::{Palette, human::write_diagnostic};
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Marks {
    /// `V_O..`, `Y_Zr'`, `O_Ox`, `->`
    Ascii,
    /// `V_O••`, `Y_Zr′`, `O_O×`, `→`
    Unicode,
}

#[derive(Debug, Args)]
pub struct FmtArgs {
    /// Reaction files or folders; `-` reads standard input and writes the result.
    #[arg(value_name = "PATH", required = true)]
    pub files: Vec<PathBuf>,
    /// Report files that would change, with a diff, and exit 1; change nothing.
    #[arg(long, conflicts_with = "write")]
    pub check: bool,
    /// Rewrite the files in place (atomically; permissions kept).
    #[arg(long)]
    pub write: bool,
    /// Spelling of charge marks and arrows.
    #[arg(long, value_enum, default_value_t = Marks::Ascii)]
    pub marks: Marks,
}

pub fn run(args: &FmtArgs) -> ExitCode {
    let marks = match args.marks {
        Marks::Ascii => MarkSpelling::Ascii,
        Marks::Unicode => MarkSpelling::Unicode,
    };
    let mut paths = Vec::new();
    let mut io_failed = false;
    for path in &args.files {
        if path.is_dir() {
            let (files, failed) = reaction_files(path);
            io_failed |= failed;
            paths.extend(files);
        } else {
            paths.push(path.clone());
        }
    }
    let (mut changed, mut broken) = (0usize, 0usize);
    for path in &paths {
        let (name, text) = match read(path) {
            Ok(found) => found,
            Err(e) => {
                io_failed = true;
                let _ = writeln!(io::stderr(), "lacuna: cannot read {}: {e}", path.display());
                continue;
            }
        };
        let formatted = match format_text(&text, marks) {
            Ok(formatted) => formatted,
            Err(errors) => {
                broken += 1;
                let mut stderr = io::stderr();
                for d in &errors {
                    let line = text
                        .lines()
                        .nth(d.line.saturating_sub(1) as usize)
                        .unwrap_or("");
                    let _ = write_diagnostic(&mut stderr, Palette::PLAIN, &name, line, d);
                }
                let _ = writeln!(
                    stderr,
                    "lacuna: {name} does not parse, so it was left as it is"
                );
                continue;
            }
        };
        if name == "<stdin>" {
            if let Err(e) = stdout().write_all(formatted.as_bytes()) {
                return output_failed(&e);
            }
            continue;
        }
        if formatted == text {
            continue;
        }
        changed += 1;
        if args.check {
            if let Err(e) = print_diff(&name, &text, &formatted) {
                return output_failed(&e);
            }
        } else if args.write {
            if let Err(e) = write_atomically(path, &formatted) {
                io_failed = true;
                let _ = writeln!(io::stderr(), "lacuna: cannot write {}: {e}", path.display());
            }
        } else if let Err(e) = stdout().write_all(formatted.as_bytes()) {
            return output_failed(&e);
        }
    }
    if args.check && changed > 0 {
        let _ = writeln!(
            io::stderr(),
            "{changed} file(s) would be reformatted; run `lacuna fmt --write`"
        );
    }
    if io_failed {
        ExitCode::from(2)
    } else if broken > 0 || (args.check && changed > 0) {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

fn read(path: &Path) -> io::Result<(String, String)> {
    let mut bytes = Vec::new();
    let name = if path.as_os_str() == "-" {
        io::stdin().read_to_end(&mut bytes)?;
        "<stdin>".to_string()
    } else {
        bytes = std::fs::read(path)?;
        path.display().to_string()
    };
    let text = String::from_utf8(bytes)
        .map_err(|e| io::Error::new(io::ErrorKind::InvalidData, format!("not UTF-8 ({e})")))?;
    Ok((name, text))
}

/// Writes to a temporary file in the same folder, then renames it over the
/// original: a reader (or a crash) sees the old file or the new one, never a mix.
pub fn write_atomically(path: &Path, text: &str) -> io::Result<()> {
    let mut file = atomic_write_file::AtomicWriteFile::open(path)?;
    file.write_all(text.as_bytes())?;
    file.commit()
}

/// A line diff: formatting keeps one line per line, so pairs suffice.
fn print_diff(name: &str, old: &str, new: &str) -> io::Result<()> {
    let mut out = stdout();
    writeln!(out, "--- {name}\n+++ {name} (formatted)")?;
    for (i, (a, b)) in old.lines().zip(new.lines()).enumerate() {
        if a != b {
            writeln!(out, "@@ line {} @@\n-{a}\n+{b}", i + 1)?;
        }
    }
    if old.ends_with('\n') != new.ends_with('\n') {
        writeln!(out, "@@ end of file @@\n+(newline at end of file)")?;
    }
    Ok(())
}
