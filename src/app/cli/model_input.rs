//! Reading reaction files and inline reactions for the model commands, and
//! printing their diagnostics.

use super::shared::fail;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::report::{Palette, human};
use std::io::{self, Read, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// One source of lines: a file, standard input or the inline reactions.
pub(super) struct Source {
    pub name: String,
    pub text: String,
    /// A problem found while reading (bad encoding), already located.
    pub problem: Option<(Diagnostic, String)>,
}

/// Reads bytes as UTF-8; invalid bytes become a located diagnostic and
/// the text up to them is kept.
fn decode(name: &str, bytes: Vec<u8>) -> Source {
    match String::from_utf8(bytes) {
        Ok(text) => Source {
            name: name.to_string(),
            text,
            problem: None,
        },
        Err(e) => {
            let valid = e.utf8_error().valid_up_to();
            let bytes = e.into_bytes();
            let before = String::from_utf8_lossy(&bytes[..valid]).into_owned();
            let line = u32::try_from(before.matches('\n').count() + 1).unwrap_or(u32::MAX);
            let line_start = before.rfind('\n').map_or(0, |i| i + 1);
            let line_text = before[line_start..].to_string();
            let d = Diagnostic::new(
                Code::Encoding,
                line_text.len()..line_text.len() + 1,
                format!("line {line} is not valid UTF-8"),
            )
            .with_help("save the file as UTF-8 (for example with `iconv -t UTF-8`)")
            .locate(line, &line_text);
            Source {
                name: name.to_string(),
                text: before,
                problem: Some((d, line_text)),
            }
        }
    }
}

/// Reads every named file (`-` for standard input), then the inline
/// reactions as one more source with one line each.
pub(super) fn gather(files: &[PathBuf], inline: &[String]) -> Result<Vec<Source>, ExitCode> {
    let mut sources = Vec::new();
    for path in files {
        let mut bytes = Vec::new();
        let result = if path.as_os_str() == "-" {
            io::stdin()
                .lock()
                .read_to_end(&mut bytes)
                .map(|_| "<stdin>".to_string())
        } else if path.is_dir() {
            Err(io::Error::other(
                "is a folder; name the reaction files in it",
            ))
        } else {
            std::fs::File::open(path)
                .and_then(|mut f| f.read_to_end(&mut bytes))
                .map(|_| path.display().to_string())
        };
        match result {
            Ok(name) => sources.push(decode(&name, bytes)),
            Err(e) => return Err(fail(format!("cannot read {}: {e}", path.display()))),
        }
    }
    if !inline.is_empty() {
        let joined = inline
            .iter()
            .map(|r| r.replace('\n', " "))
            .collect::<Vec<_>>()
            .join("\n");
        sources.push(Source {
            name: "<inline>".to_string(),
            text: joined,
            problem: None,
        });
    }
    Ok(sources)
}

/// Prints located diagnostics with their lines, as `check` does.
pub(super) fn print_diagnostics(
    out: &mut dyn Write,
    palette: Palette,
    source: &str,
    lines: &[String],
    diagnostics: &[Diagnostic],
) -> io::Result<()> {
    for d in diagnostics {
        let text = d
            .line
            .checked_sub(1)
            .and_then(|i| lines.get(i as usize))
            .map_or("", String::as_str);
        human::write_diagnostic(out, palette, source, text, d)?;
        writeln!(out)?;
    }
    Ok(())
}
