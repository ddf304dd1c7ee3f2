//! Loading reaction files into a session and saving a session as one.
//!
//! In: a path. Out: entries added to the session (load) or a reaction file
//! written (save). Saving writes a temporary file beside the target and
//! renames it over the target only when complete, so the old file is never
//! half-written; it refuses to replace a file that is not the session's own,
//! or that changed on disk since the session read or wrote it, unless told
//! `--replace`. Lines the session does not model (comments, model lines,
//! reactions that do not parse) are kept in place and written back.

use super::{Args, Entry, Failure, HostSlot, OwnFile, Session, analyse_in};
use atomic_write_file::AtomicWriteFile;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::check::Verdict;
use lacuna::file::reader::{self, HostTracker, Line};
use lacuna::host::Host;
use lacuna::report::human::write_diagnostic;
use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::rc::Rc;
use std::time::SystemTime;

/// `~/x` -> home/x; anything else as written.
fn expand(path: &str) -> PathBuf {
    match path.strip_prefix("~/") {
        Some(rest) => dirs::home_dir().map_or_else(|| PathBuf::from(path), |h| h.join(rest)),
        None => PathBuf::from(path),
    }
}

fn stamp(path: &Path) -> Option<(SystemTime, u64)> {
    let meta = fs::metadata(path).ok()?;
    Some((meta.modified().ok()?, meta.len()))
}

fn file_error(args: &Args<'_>, span: std::ops::Range<usize>, message: String) -> Diagnostic {
    let _ = args;
    Diagnostic::new(Code::WorkbenchFile, span, message)
}

/// `/load PATH`
pub(super) fn load(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    if args.rest.is_empty() {
        return Err(args
            .usage_error(None, "`/load` needs a file")
            .with_help("e.g. `/load doping.kvr`")
            .into());
    }
    let written = args.rest_text();
    let path = expand(written);
    let bytes = match fs::read(&path) {
        Ok(bytes) => bytes,
        Err(e) => {
            let help = match e.kind() {
                io::ErrorKind::NotFound => "check the path; `/save PATH` creates a new file",
                io::ErrorKind::IsADirectory => "name a reaction file inside the folder",
                _ => "check the path and its permissions",
            };
            let reason = if path.is_dir() {
                "it is a folder".to_string()
            } else {
                e.to_string()
            };
            return Err(file_error(
                args,
                args.rest.clone(),
                format!("cannot read `{written}`: {reason}"),
            )
            .with_help(help)
            .into());
        }
    };
    let name = path.display().to_string();
    let was_empty = session.entries.is_empty() && session.trailer.is_empty();
    let default_host = session.host.clone();
    let mut hosts = HostTracker::new(default_host.clone());
    let mut declared: Option<Rc<HostSlot>> = None;
    let mut preamble: Vec<String> = Vec::new();
    let (mut added, mut failing, mut unreadable, mut lossy) = (0usize, 0usize, 0usize, false);
    let p = session.palette;
    let mut chunks = bytes.split(|b| *b == b'\n').peekable();
    let mut number = 0u32;
    while let Some(raw) = chunks.next() {
        // A final newline leaves an empty last chunk that is not a line.
        if raw.is_empty() && chunks.peek().is_none() {
            break;
        }
        number = number.saturating_add(1);
        let raw = raw.strip_suffix(b"\r").unwrap_or(raw);
        let line = match std::str::from_utf8(raw) {
            Ok(line) => line.to_string(),
            Err(e) => {
                lossy = true;
                let shown = String::from_utf8_lossy(raw).into_owned();
                let valid = String::from_utf8_lossy(&raw[..e.valid_up_to()]).into_owned();
                let d = Diagnostic::new(
                    Code::Encoding,
                    valid.len()..valid.len() + 1,
                    format!("line {number} is not valid UTF-8"),
                )
                .with_help("the line is shown with replacement characters; the file will not be overwritten without `--replace`")
                .locate(number, &valid);
                write_diagnostic(out, p, &name, &shown, &d)?;
                preamble.push(shown);
                continue;
            }
        };
        match reader::classify(&line) {
            Line::Host(span) => {
                let result = Host::parse(&line, span.clone()).map(|parsed| {
                    Rc::new(HostSlot {
                        spec: line[span].trim().to_string(),
                        host: parsed,
                        line: line.clone(),
                    })
                });
                hosts.declare(number, &result);
                match result {
                    Ok(slot) => declared = Some(slot),
                    Err(diagnostics) => {
                        // The reactions under it have no host, as in `check`.
                        for d in diagnostics {
                            write_diagnostic(out, p, &name, &line, &d.locate(number, &line))?;
                        }
                    }
                }
                // Kept in place, so saving writes the file's own layout.
                preamble.push(line);
            }
            Line::Reaction { label, reaction } => {
                let analysis = analyse_in(&line, reaction.clone(), &hosts);
                if let Some(slot) = &analysis.host_from_arrow {
                    // Taken from over the arrow: in force from here on, as
                    // `check` reads the file.
                    hosts.declare(number, &Ok::<_, ()>(slot.clone()));
                    declared = Some(slot.clone());
                }
                let host = hosts.host().cloned();
                let ok = analysis.verdict.as_ref().is_some_and(Verdict::ok)
                    && !analysis.diagnostics.iter().any(Diagnostic::is_error);
                let wrong = super::is_wrong(&analysis);
                let Some(parsed) = analysis.reaction else {
                    unreadable += 1;
                    for d in analysis.diagnostics {
                        write_diagnostic(out, p, &name, &line, &d.locate(number, &line))?;
                    }
                    preamble.push(line);
                    continue;
                };
                if !ok {
                    failing += 1;
                    for d in &analysis.diagnostics {
                        write_diagnostic(out, p, &name, &line, &d.clone().locate(number, &line))?;
                    }
                }
                let mut label = label.map(|l| line[l].to_string());
                if let Some(taken) = label.as_deref().and_then(|l| session.label_index(l)) {
                    writeln!(
                        out,
                        "{name}:{number}: the label `{}` already names {}; this reaction is kept without it",
                        label.as_deref().unwrap_or(""),
                        session.entry_tag(taken)
                    )?;
                    label = None;
                }
                let comment = reader::comment(&line).map(str::to_string);
                session.entries.push(Entry {
                    label,
                    text: line[reaction].trim().to_string(),
                    reaction: parsed,
                    host: host.clone(),
                    ok,
                    wrong,
                    preamble: std::mem::take(&mut preamble),
                    comment,
                });
                added += 1;
            }
            // Blank lines, comments, model lines and lines this build does not
            // know are kept as they are.
            _ => preamble.push(line),
        }
    }
    session.trailer.append(&mut preamble);
    if let Some(slot) = declared {
        let changed = default_host.as_ref().is_none_or(|d| d.host != slot.host);
        session.host = Some(slot.clone());
        if changed {
            writeln!(out, "host is now {} (from the file)", p.strong(&slot.spec))?;
        }
    }
    if was_empty {
        session.own_file = Some(OwnFile {
            stamp: stamp(&path),
            path: path.clone(),
            lossy,
        });
    }
    let mut summary = format!(
        "loaded {added} reaction{} from {name}: {} pass",
        if added == 1 { "" } else { "s" },
        added - failing
    );
    if failing > 0 {
        summary.push_str(&format!(", {failing} fail"));
    }
    if unreadable > 0 {
        summary.push_str(&format!(
            "; {unreadable} line{} did not parse and {} kept as written",
            if unreadable == 1 { "" } else { "s" },
            if unreadable == 1 { "is" } else { "are" }
        ));
    }
    writeln!(out, "{summary}")?;
    if !was_empty {
        let target = session.own_file.as_ref().map_or_else(
            || "a file you name".to_string(),
            |f| f.path.display().to_string(),
        );
        writeln!(out, "added to the session; `/save` writes to {target}")?;
    }
    if failing > 0 || unreadable > 0 || lossy {
        session.problems += 1;
    }
    Ok(())
}

/// The reaction file for the session: each reaction's kept lines, a `host`
/// line where the host changes, its `label: reaction` line, then the
/// trailer. A `host` line kept from a loaded file counts as written, so a
/// loaded file comes back in its own layout.
pub(super) fn file_text(session: &Session) -> String {
    file_text_with_lines(session).0
}

/// `file_text` and the 1-based line of each entry's reaction in it (the
/// model commands read the session as a model file and point back).
pub(super) fn file_text_with_lines(session: &Session) -> (String, Vec<u32>) {
    let mut text = String::new();
    let mut lines = Vec::with_capacity(session.entries.len());
    let mut number = 0u32;
    let mut push = |text: &mut String, line: &str| {
        text.push_str(line);
        text.push('\n');
        number = number.saturating_add(1);
        number
    };
    // The host a reader of the written file has in force.
    let mut current: HostTracker<Rc<HostSlot>> = HostTracker::new(None);
    for entry in &session.entries {
        for line in &entry.preamble {
            let at = push(&mut text, line);
            if let Line::Host(span) = reader::classify(line) {
                let result = Host::parse(line, span.clone()).map(|host| {
                    Rc::new(HostSlot {
                        spec: line[span].trim().to_string(),
                        host,
                        line: line.clone(),
                    })
                });
                current.declare(at, &result);
            }
        }
        if let Some(slot) = &entry.host {
            if current.host().map(|h| &h.host) != Some(&slot.host) {
                let at = push(&mut text, &slot.line);
                current.declare(at, &Ok::<_, ()>(slot.clone()));
            }
        }
        lines.push(push(&mut text, &entry.file_line()));
    }
    for line in &session.trailer {
        push(&mut text, line);
    }
    (text, lines)
}

/// `/save [PATH] [--replace]`
pub(super) fn save(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let mut replace = false;
    let mut path_span = args.rest.clone();
    let rest = args.rest_text();
    if let Some(before) = rest.strip_suffix("--replace") {
        replace = true;
        path_span = args.rest.start..args.rest.start + before.trim_end().len();
    }
    let written = &args.line[path_span.clone()];
    let path = if written.is_empty() {
        match &session.own_file {
            Some(own) => own.path.clone(),
            None => {
                return Err(args
                    .usage_error(None, "no file to save to yet")
                    .with_help("name one: `/save doping.kvr`")
                    .into());
            }
        }
    } else {
        expand(written)
    };
    let at = if written.is_empty() {
        args.command.clone()
    } else {
        path_span
    };
    if session.entries.is_empty() && session.trailer.is_empty() {
        return Err(args
            .usage_error(Some(at), "the session has no reactions to save")
            .into());
    }
    // Write through a symbolic link to the file it names, not over the link.
    let path = fs::canonicalize(&path).unwrap_or(path);
    if path.is_dir() {
        return Err(
            file_error(args, at, format!("`{}` is a folder", path.display()))
                .with_help("name a file, e.g. `/save doping.kvr`")
                .into(),
        );
    }
    if path.exists() && !replace {
        let own = session
            .own_file
            .as_ref()
            .filter(|o| fs::canonicalize(&o.path).unwrap_or_else(|_| o.path.clone()) == path);
        let refusal = match own {
            None => Some(format!(
                "`{}` exists and is not this session's file",
                path.display()
            )),
            Some(o) if o.lossy => Some(format!(
                "`{}` has lines that are not UTF-8, which saving would change",
                path.display()
            )),
            Some(o) if o.stamp != stamp(&path) => Some(format!(
                "`{}` was changed by another program since this session read or wrote it",
                path.display()
            )),
            Some(_) => None,
        };
        if let Some(message) = refusal {
            return Err(file_error(args, at, message)
                .with_help("save under another name, or add `--replace` to overwrite it")
                .into());
        }
    }
    let text = file_text(session);
    let result = AtomicWriteFile::open(&path).and_then(|mut file| {
        file.write_all(text.as_bytes())?;
        file.commit()
    });
    if let Err(e) = result {
        return Err(
            file_error(args, at, format!("cannot write `{}`: {e}", path.display()))
                .with_help(
                    "the old file, if any, is unchanged; check the folder exists and is writable",
                )
                .into(),
        );
    }
    session.own_file = Some(OwnFile {
        stamp: stamp(&path),
        path: path.clone(),
        lossy: false,
    });
    let n = session.entries.len();
    writeln!(
        out,
        "saved {n} reaction{} to {}",
        if n == 1 { "" } else { "s" },
        path.display()
    )?;
    Ok(())
}
