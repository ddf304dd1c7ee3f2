//! Runs a session: on a terminal through the line editor (history,
//! completion, hints, colour, multi-line blocks), or line by line from any
//! reader (a pipe, a script, a test).
//!
//! In: a `Session` and the input. Out: the session's output on stdout (or the
//! given writer). Ctrl-C abandons the line being edited, Ctrl-D leaves; a
//! problem with the input is printed and the session goes on.

use super::Session;
use super::helper::WorkbenchHelper;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::report::human::write_diagnostic;
use rustyline::config::{ColorMode, CompletionType, Config};
use rustyline::error::ReadlineError;
use rustyline::history::DefaultHistory;
use rustyline::{Cmd, Editor, KeyCode, KeyEvent, Modifiers};
use std::io::{self, BufRead, Write};
use std::path::{Path, PathBuf};

/// How many lines of history are kept (rustyline keeps 100 by default).
pub const HISTORY_SIZE: usize = 10_000;

/// Where history lives when nothing else is said: the platform's state
/// directory (`$XDG_STATE_HOME`, `~/.local/state` on Linux), else its local
/// data directory (macOS, Windows).
pub fn default_history_path() -> Option<PathBuf> {
    dirs::state_dir()
        .or_else(dirs::data_local_dir)
        .map(|d| d.join("lacuna").join("history.txt"))
}

/// Options for the terminal session.
#[derive(Debug, Clone)]
pub struct TerminalOptions {
    /// The history file; `None` keeps no history.
    pub history: Option<PathBuf>,
    /// Colour the line being edited.
    pub color: bool,
}

/// The greeting printed when the terminal session starts (before a file
/// given on the command line is loaded).
pub const BANNER: &str =
    "lacuna workbench — type a reaction to check it; /help lists commands; Ctrl-D leaves.";

/// What to say about the host when the editor starts.
fn host_hint(session: &Session) -> Option<&'static str> {
    session
        .host()
        .is_none()
        .then_some("no host yet: `/host ZrO2` sets one")
}

fn load_history(
    editor: &mut Editor<WorkbenchHelper, DefaultHistory>,
    path: &Path,
) -> Option<String> {
    match editor.load_history(path) {
        Ok(()) => None,
        // First run: no file yet.
        Err(ReadlineError::Io(e)) if e.kind() == io::ErrorKind::NotFound => None,
        Err(e) => Some(format!("history not read from {}: {e}", path.display())),
    }
}

/// Runs the session on a terminal until Ctrl-D or `/quit`.
pub fn run_terminal(session: &mut Session, options: &TerminalOptions) -> io::Result<()> {
    let config = Config::builder()
        .max_history_size(HISTORY_SIZE)
        .map_err(|e| io::Error::other(e.to_string()))?
        .history_ignore_dups(true)
        .map_err(|e| io::Error::other(e.to_string()))?
        .history_ignore_space(true)
        .auto_add_history(false)
        .completion_type(CompletionType::List)
        .color_mode(if options.color {
            ColorMode::Enabled
        } else {
            ColorMode::Disabled
        })
        .bracketed_paste(true)
        .build();
    let mut editor: Editor<WorkbenchHelper, DefaultHistory> =
        Editor::with_config(config).map_err(|e| io::Error::other(e.to_string()))?;
    editor.set_helper(Some(WorkbenchHelper::new(options.color)));
    // Alt-Enter adds a line to a block instead of submitting it.
    editor.bind_sequence(KeyEvent(KeyCode::Enter, Modifiers::ALT), Cmd::Newline);
    let stdout = io::stdout();
    let mut warnings = Vec::new();
    if let Some(path) = &options.history {
        if let Some(parent) = path.parent() {
            if let Err(e) = std::fs::create_dir_all(parent) {
                warnings.push(format!(
                    "history not kept: cannot create {}: {e}",
                    parent.display()
                ));
            }
        }
        warnings.extend(load_history(&mut editor, path));
    }
    {
        let mut out = stdout.lock();
        if let Some(hint) = host_hint(session) {
            writeln!(out, "{hint}")?;
        }
        for w in &warnings {
            writeln!(out, "note: {w}")?;
        }
    }
    if let Some(helper) = editor.helper_mut() {
        helper.set_vocabulary(session.vocabulary());
    }
    let mut history_failed = false;
    let mut count: u32 = 0;
    loop {
        let prompt = session.prompt();
        match editor.readline(&prompt) {
            Ok(block) => {
                count = count.saturating_add(1);
                if !block.trim().is_empty() {
                    let _ = editor.add_history_entry(block.as_str());
                    if let (Some(path), false) = (&options.history, history_failed) {
                        if let Err(e) = editor.append_history(path) {
                            history_failed = true;
                            writeln!(
                                stdout.lock(),
                                "note: history not saved to {}: {e}",
                                path.display()
                            )?;
                        }
                    }
                }
                let mut out = stdout.lock();
                session.handle_block(&block, count, &mut out)?;
                out.flush()?;
                if let Some(helper) = editor.helper_mut() {
                    helper.set_vocabulary(session.vocabulary());
                }
                if session.wants_to_quit() {
                    break;
                }
            }
            // Ctrl-C: abandon the line, stay in the session.
            Err(ReadlineError::Interrupted) => continue,
            // Ctrl-D: leave.
            Err(ReadlineError::Eof) => break,
            Err(e) => {
                writeln!(
                    io::stderr(),
                    "lacuna: the terminal failed ({e}); leaving the workbench"
                )?;
                break;
            }
        }
    }
    Ok(())
}

/// Runs the session over lines read from `input` (no prompt, no colour
/// unless the session's palette has it), until the input ends or `/quit`.
/// Lines that continue (a trailing `+` or arrow, an open bracket) are joined.
pub fn run_script(
    session: &mut Session,
    mut input: impl BufRead,
    out: &mut dyn Write,
) -> io::Result<()> {
    let mut buffer = Vec::with_capacity(256);
    let mut pending: Option<(String, u32)> = None;
    let mut number: u32 = 0;
    loop {
        buffer.clear();
        if input.read_until(b'\n', &mut buffer)? == 0 {
            break;
        }
        number = number.saturating_add(1);
        let bytes = buffer.strip_suffix(b"\n").unwrap_or(&buffer);
        let bytes = bytes.strip_suffix(b"\r").unwrap_or(bytes);
        let text = match std::str::from_utf8(bytes) {
            Ok(text) => text,
            Err(e) => {
                let valid = String::from_utf8_lossy(&bytes[..e.valid_up_to()]).into_owned();
                let shown = String::from_utf8_lossy(bytes).into_owned();
                let d = Diagnostic::new(
                    Code::Encoding,
                    valid.len()..valid.len() + 1,
                    format!("line {number} is not valid UTF-8"),
                )
                .with_help("the line is skipped; send UTF-8 text")
                .locate(number, &valid);
                write_diagnostic(out, session.palette, &session.source, &shown, &d)?;
                session.problems += 1;
                continue;
            }
        };
        let (joined, first) = match pending.take() {
            Some((mut so_far, first)) => {
                so_far.push('\n');
                so_far.push_str(text);
                (so_far, first)
            }
            None => (text.to_string(), number),
        };
        if super::continues(&joined) {
            pending = Some((joined, first));
            continue;
        }
        session.handle_block(&joined, first, out)?;
        out.flush()?;
        if session.wants_to_quit() {
            return Ok(());
        }
    }
    if let Some((rest, first)) = pending {
        session.handle_block(&rest, first, out)?;
    }
    out.flush()
}
