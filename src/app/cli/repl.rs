//! `lacuna repl`: the interactive workbench (also what `lacuna` alone starts
//! on a terminal). Without a terminal it reads commands line by line from
//! standard input and prints plain output, so scripts can drive it.

use super::shared::{ColorChoice, fail, output_failed};
use crate::app::workbench::Session;
use crate::app::workbench::driver::{self, TerminalOptions};
use clap::Args;
use lacuna::report::Palette;
use lacuna::report::human::write_diagnostic;
use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct ReplArgs {
    /// A reaction file to load at the start (`/save` writes back to it).
    #[arg(value_name = "FILE")]
    pub file: Option<PathBuf>,
    /// The host to start with, e.g. `ZrO2` (`/host` changes it).
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// When to use colour.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
    /// History file (default: lacuna/history.txt in the platform's state
    /// directory, or $LACUNA_HISTORY).
    #[arg(long, value_name = "PATH", conflicts_with = "no_history")]
    pub history: Option<PathBuf>,
    /// Keep no history.
    #[arg(long)]
    pub no_history: bool,
}

impl ReplArgs {
    /// What `lacuna` with no arguments starts.
    pub fn bare() -> ReplArgs {
        ReplArgs {
            file: None,
            host: None,
            color: ColorChoice::Auto,
            history: None,
            no_history: false,
        }
    }
}

/// Whether both ends are a terminal, so the line editor can run.
pub fn on_terminal() -> bool {
    io::stdin().is_terminal() && io::stdout().is_terminal()
}

pub fn run(args: &ReplArgs) -> ExitCode {
    let interactive = on_terminal();
    let palette = args.color.palette();
    let mut session = Session::new(palette, if interactive { "<repl>" } else { "<stdin>" });
    if let Some(spec) = &args.host {
        if let Err(diagnostics) = session.set_host_spec(spec) {
            let mut stderr = io::stderr();
            for d in diagnostics {
                let d = d.locate(1, spec);
                let _ = write_diagnostic(&mut stderr, Palette::PLAIN, "--host", spec, &d);
            }
            return fail("the --host value is not a usable host");
        }
    }
    let stdout = io::stdout();
    if interactive {
        let _ = writeln!(stdout.lock(), "{}", driver::BANNER);
    }
    if let Some(file) = &args.file {
        let line = format!("/load {}", file.display());
        if let Err(e) = session.handle_line(&line, 0, &mut stdout.lock()) {
            return output_failed(&e);
        }
    }
    let result = if interactive {
        let history = if args.no_history {
            None
        } else {
            args.history
                .clone()
                .or_else(|| {
                    std::env::var_os("LACUNA_HISTORY")
                        .filter(|v| !v.is_empty())
                        .map(PathBuf::from)
                })
                .or_else(driver::default_history_path)
        };
        let color = palette.enabled;
        driver::run_terminal(&mut session, &TerminalOptions { history, color })
    } else {
        let mut out = stdout.lock();
        driver::run_script(&mut session, io::stdin().lock(), &mut out).and_then(|()| out.flush())
    };
    match result {
        Err(e) => output_failed(&e),
        Ok(()) if interactive || session.problems == 0 => ExitCode::SUCCESS,
        Ok(()) => ExitCode::from(1),
    }
}
