//! `lacuna typeset`: reactions and species for manuscripts, as LaTeX,
//! Unicode, ASCII, HTML or Markdown. Reads plain notation or LaTeX (a
//! reaction pasted from a manuscript); checks what it typesets and reports
//! problems on stderr, but always writes what the input says.

use super::shared::output_failed;
use super::shared::{ColorChoice, fail, host_argument};
use clap::{Args, ValueEnum};
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::check::Verdict;
use lacuna::file::reader::{self, HostTracker, Line, numbered_lines};
use lacuna::file::runner::check_line;
use lacuna::host::Host;
use lacuna::notation::latex_input::{self, looks_like_latex};
use lacuna::notation::parse_species_text;
use lacuna::report::Palette;
use lacuna::report::human::write_diagnostic;
use lacuna::typeset::{self, ArrowHost, Form};
use std::io::{self, IsTerminal, Read, Write};
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::Arc;

/// Output forms of `typeset`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FormArg {
    /// Math mode, host over the arrow (amsmath).
    Latex,
    /// Plain text with • ′ × and subscript digits.
    Unicode,
    /// What a keyboard types; reaction-file lines.
    Ascii,
    /// `<sub>` and `<sup>`.
    Html,
    /// Inline HTML in list items.
    Markdown,
}

impl FormArg {
    fn form(self) -> Form {
        match self {
            FormArg::Latex => Form::Latex,
            FormArg::Unicode => Form::Unicode,
            FormArg::Ascii => Form::Ascii,
            FormArg::Html => Form::Html,
            FormArg::Markdown => Form::Markdown,
        }
    }
}

/// When to set the host over the arrow.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ArrowArg {
    Auto,
    Always,
    Never,
}

impl ArrowArg {
    fn policy(self) -> ArrowHost {
        match self {
            ArrowArg::Auto => ArrowHost::Auto,
            ArrowArg::Always => ArrowHost::Always,
            ArrowArg::Never => ArrowHost::Never,
        }
    }
}

#[derive(Debug, Args)]
pub struct TypesetArgs {
    /// Reaction files to typeset; `-` reads standard input.
    #[arg(value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// A reaction to typeset (repeatable); plain notation or LaTeX.
    #[arg(short, long = "reaction", value_name = "TEXT")]
    pub reactions: Vec<String>,
    /// A species, associate or compound to typeset (repeatable).
    #[arg(short, long = "species", value_name = "TEXT")]
    pub species: Vec<String>,
    /// Host for inline reactions and files without a `host` line.
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// Output form.
    #[arg(long = "to", value_enum, default_value_t = FormArg::Latex, value_name = "FORM")]
    pub to: FormArg,
    /// When to set the host over the arrow (latex, html, markdown): `auto`
    /// for reactions that dissolve a compound in the host.
    #[arg(long, value_enum, default_value_t = ArrowArg::Auto, value_name = "WHEN")]
    pub host_over_arrow: ArrowArg,
    /// Typeset without checking the balances.
    #[arg(long)]
    pub no_check: bool,
    /// When to colour the problems printed on stderr.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

struct Run<'a> {
    args: &'a TypesetArgs,
    form: Form,
    palette: Palette,
    out: Box<dyn Write + 'a>,
    problems: u64,
    unchecked_sites: bool,
}

impl Run<'_> {
    fn report(&mut self, source: &str, line: &str, number: u32, d: &Diagnostic) {
        let d = d.clone().locate(number, line);
        let _ = write_diagnostic(&mut io::stderr(), self.palette, source, line, &d);
    }

    /// Typesets the reaction at `span` of `line`, checked against the host
    /// `hosts` has in force (or the one over its arrow), as `check` does.
    fn reaction(
        &mut self,
        source: &str,
        line: &str,
        number: u32,
        label: Option<&str>,
        span: std::ops::Range<usize>,
        hosts: &mut HostTracker,
    ) -> io::Result<()> {
        let checked = check_line(line, span, hosts);
        hosts.follow(&checked.host);
        let Some(reaction) = &checked.reaction else {
            self.problems += 1;
            for d in &checked.diagnostics {
                self.report(source, line, number, d);
            }
            return Ok(());
        };
        if !self.args.no_check {
            let failed = !checked.verdict.as_ref().is_some_and(|v: &Verdict| {
                let b = v.balance;
                b.mass && b.charge && b.site != Some(false)
            });
            let mut shown = false;
            for d in &checked.diagnostics {
                if d.code == Code::NoHost {
                    self.unchecked_sites = true;
                    continue;
                }
                if d.is_error() {
                    self.problems += 1;
                }
                shown = true;
                self.report(source, line, number, d);
            }
            if failed && !shown {
                self.problems += 1;
            }
        }
        let over = typeset::host_over_arrow(
            reaction,
            hosts.host().map(|h| &**h),
            self.args.host_over_arrow.policy(),
        );
        let body = typeset::reaction(reaction, self.form, over);
        writeln!(self.out, "{}", typeset::line(label, &body, self.form))
    }

    fn file(&mut self, name: &str, text: &str, default_host: Option<&Arc<Host>>) -> io::Result<()> {
        let mut hosts = HostTracker::new(default_host.cloned());
        for (number, line) in numbered_lines(text) {
            match reader::classify(line) {
                Line::Blank | Line::Comment | Line::Model { .. } => {}
                Line::Host(span) => {
                    let result = Host::parse(line, span).map(Arc::new);
                    hosts.declare(number, &result);
                    if let Err(diagnostics) = result {
                        self.problems += 1;
                        for d in &diagnostics {
                            self.report(name, line, number, d);
                        }
                    }
                }
                Line::Reaction { label, reaction } => {
                    let label = label.map(|l| &line[l]);
                    self.reaction(name, line, number, label, reaction, &mut hosts)?;
                }
                // Other lines hold nothing to typeset.
                _ => {}
            }
        }
        Ok(())
    }

    fn species(&mut self, text: &str) -> io::Result<()> {
        let result = if looks_like_latex(text) {
            match latex_input::normalise(text) {
                Ok(n) => parse_species_text(&n.text)
                    .map_err(|ds| ds.into_iter().map(|d| n.relocate(d, 0)).collect()),
                Err(d) => Err(vec![d]),
            }
        } else {
            parse_species_text(text)
        };
        match result {
            Ok(term) => writeln!(self.out, "{}", typeset::term(&term, self.form)),
            Err(diagnostics) => {
                self.problems += 1;
                for d in &diagnostics {
                    self.report("--species", text, 1, d);
                }
                Ok(())
            }
        }
    }
}

/// Colour for what goes to stderr: a terminal there, and no NO_COLOR.
fn stderr_palette(choice: ColorChoice) -> Palette {
    let enabled = match choice {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto => {
            io::stderr().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
        }
    };
    Palette { enabled }
}

pub fn run(args: &TypesetArgs) -> ExitCode {
    if args.files.is_empty() && args.reactions.is_empty() && args.species.is_empty() {
        return fail(
            "nothing to typeset: name reaction files, `-` for standard input, or give --reaction TEXT or --species TEXT",
        );
    }
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(host) => host.map(Arc::new),
        Err(code) => return code,
    };
    let stdout = io::stdout();
    let mut run = Run {
        args,
        form: args.to.form(),
        palette: stderr_palette(args.color),
        out: Box::new(io::BufWriter::new(stdout.lock())),
        problems: 0,
        unchecked_sites: false,
    };
    let mut io_failed = false;
    for path in &args.files {
        let mut bytes = Vec::new();
        let (name, read) = if path.as_os_str() == "-" {
            (
                "<stdin>".to_string(),
                io::stdin().lock().read_to_end(&mut bytes),
            )
        } else if path.is_dir() {
            (
                path.display().to_string(),
                Err(io::Error::other(
                    "is a folder; name the reaction files in it",
                )),
            )
        } else {
            (
                path.display().to_string(),
                std::fs::File::open(path).and_then(|mut f| f.read_to_end(&mut bytes)),
            )
        };
        if let Err(e) = read {
            io_failed = true;
            let _ = writeln!(io::stderr(), "lacuna: cannot read {name}: {e}");
            continue;
        }
        let text = match String::from_utf8(bytes) {
            Ok(text) => text,
            Err(_) => {
                io_failed = true;
                let _ = writeln!(
                    io::stderr(),
                    "lacuna: {name} is not UTF-8 text; convert it (e.g. `iconv -t UTF-8`) and try again"
                );
                continue;
            }
        };
        if let Err(e) = run.file(&name, &text, host.as_ref()) {
            return output_failed(&e);
        }
    }
    // The inline reactions are one source, as `check --reaction` reads them.
    let mut inline_hosts = HostTracker::new(host.clone());
    for (i, reaction) in args.reactions.iter().enumerate() {
        let line = reaction.replace('\n', " ");
        let number = u32::try_from(i + 1).unwrap_or(u32::MAX);
        let result = match reader::classify(&line) {
            Line::Reaction { label, reaction } => {
                let label = label.map(|l| line[l].to_string());
                run.reaction(
                    "<inline>",
                    &line,
                    number,
                    label.as_deref(),
                    reaction,
                    &mut inline_hosts,
                )
            }
            _ => {
                run.problems += 1;
                let d =
                    Diagnostic::new(Code::MissingArrow, 0..line.len(), "this is not a reaction")
                        .with_help(
                            "give a reaction with an arrow; a single species goes with --species",
                        );
                run.report("<inline>", &line, number, &d);
                Ok(())
            }
        };
        if let Err(e) = result {
            return output_failed(&e);
        }
    }
    for species in &args.species {
        if let Err(e) = run.species(species) {
            return output_failed(&e);
        }
    }
    if let Err(e) = run.out.flush() {
        return output_failed(&e);
    }
    if run.unchecked_sites {
        let _ = writeln!(
            io::stderr(),
            "note: no host, so sites and effective charges were not checked (give --host or a `host` line)"
        );
    }
    if io_failed {
        ExitCode::from(2)
    } else if run.problems > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}
