//! `lacuna explain`: what a diagnostic code means.

use super::fail;
use crate::base::diagnostic::Code;
use crate::check::rules::rule_name;
use clap::Args;
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct ExplainArgs {
    /// A code (`B302`) or rule name (`mixed-marks`); without one, all are listed.
    pub code: Option<String>,
}

pub fn run(args: &ExplainArgs) -> ExitCode {
    match &args.code {
        None => {
            for code in Code::ALL {
                println!(
                    "{}  {:<8} {}",
                    code.as_str(),
                    code.default_severity().as_str(),
                    rule_name(*code)
                );
            }
            ExitCode::SUCCESS
        }
        Some(name) => {
            let found = Code::from_str_id(name)
                .or_else(|| Code::ALL.iter().copied().find(|c| rule_name(*c) == *name));
            match found {
                Some(code) => {
                    println!(
                        "{} ({}, {} by default)\n",
                        code.as_str(),
                        rule_name(code),
                        code.default_severity().as_str()
                    );
                    println!("{}", code.explanation());
                    ExitCode::SUCCESS
                }
                None => fail(format!(
                    "`{name}` is not a diagnostic code; `lacuna explain` lists them all"
                )),
            }
        }
    }
}
