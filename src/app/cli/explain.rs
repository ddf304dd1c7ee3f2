//! `lacuna explain`: what a diagnostic code means.

use super::shared::{fail, finish, stdout};
use clap::Args;
use lacuna::base::diagnostic::Code;
use lacuna::check::rules::rule_name;
use std::io::{self, Write};
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct ExplainArgs {
    /// A code (`B302`) or rule name (`mixed-marks`); without one, all are listed.
    pub code: Option<String>,
}

pub fn run(args: &ExplainArgs) -> ExitCode {
    let mut out = stdout();
    let written = match &args.code {
        None => list(&mut out),
        Some(name) => {
            let found = Code::from_str_id(name)
                .or_else(|| Code::ALL.iter().copied().find(|c| rule_name(*c) == *name));
            match found {
                Some(code) => explain(&mut out, code),
                None => {
                    return fail(format!(
                        "`{name}` is not a diagnostic code; `lacuna explain` lists them all"
                    ));
                }
            }
        }
    };
    finish(written, ExitCode::SUCCESS)
}

/// Every code, its default severity and rule name, one a line.
fn list(out: &mut dyn Write) -> io::Result<()> {
    for code in Code::ALL {
        writeln!(
            out,
            "{}  {:<8} {}",
            code.as_str(),
            code.default_severity().as_str(),
            rule_name(*code)
        )?;
    }
    Ok(())
}

fn explain(out: &mut dyn Write, code: Code) -> io::Result<()> {
    writeln!(
        out,
        "{} ({}, {} by default)\n",
        code.as_str(),
        rule_name(code),
        code.default_severity().as_str()
    )?;
    writeln!(out, "{}", code.explanation())
}
