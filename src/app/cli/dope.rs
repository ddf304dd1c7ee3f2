//! `lacuna dope HOST DOPANT`: every balanced incorporation mechanism, ranked,
//! and optionally a dopant level converted between units. Exit 0 when at
//! least one mechanism balances, 1 when none does or the level cannot be
//! reached, 2 for usage errors (unreadable host, dopant, site or level).

use super::shared::output_failed;
use super::shared::{ColorChoice, fail, host_argument};
use super::shared::{NotationStyle, OutputFormat, print_json};
use clap::Args;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::base::number::{self, Q};
use lacuna::base::text::{pad, width};
use lacuna::generate::dope::compound_text;
use lacuna::generate::dope::level::{self, Composition, DopantLevel, Volume};
use lacuna::generate::dope::{Dopant, DopeOptions, Report, mechanisms, parse_dopant, parse_site};
use lacuna::host::Host;
use lacuna::report::dope::{TableInput, write_report};
use lacuna::report::human::write_diagnostic;
use lacuna::report::results::dope::{DopeInput, dope_json};
use lacuna::solve::scan::composition_note;
use std::io::{self, Write};
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct DopeArgs {
    /// The host crystal, e.g. `ZrO2`, `BaTiO3`, `KCl`.
    #[arg(value_name = "HOST")]
    pub host: String,
    /// The dopant: its compound (`Y2O3`, `Nb2O5`, `Li2O`) or ion (`Y+3`, `Y3+`, `Fe(III)`).
    #[arg(value_name = "DOPANT")]
    pub dopant: String,
    /// Only this site: a cation site such as `Ti` or `Fe:A`, or `i` for interstitial.
    #[arg(long, value_name = "SITE")]
    pub site: Option<String>,
    /// Coordination number of a cation site, overriding the structure guess
    /// (repeatable): `--cn Zr=8`.
    #[arg(long = "cn", value_name = "SITE=N")]
    pub cn: Vec<String>,
    /// A dopant level to convert: `8mol%` (of dopant compound), `14.8cat%`,
    /// `3.7site%` (compensating defect) or `1e21/cm3`.
    #[arg(long, value_name = "LEVEL")]
    pub level: Option<String>,
    /// Which ranked mechanism the level refers to.
    #[arg(long, value_name = "RANK", default_value_t = 1)]
    pub pick: usize,
    /// Density in g/cm³, for atoms per cm³.
    #[arg(long, value_name = "G_PER_CM3", conflicts_with = "cell")]
    pub density: Option<f64>,
    /// Cubic lattice parameter in Å, for atoms per cm³.
    #[arg(long, value_name = "ANGSTROM")]
    pub cell: Option<f64>,
    /// Formula units per cubic cell (inferred for fluorite, rock salt,
    /// perovskite, spinel and a few more).
    #[arg(long, value_name = "Z", requires = "cell")]
    pub cell_units: Option<u32>,
    /// Write reactions in smallest integers instead of with fractional gases.
    #[arg(long)]
    pub integers: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = OutputFormat::Human)]
    pub format: OutputFormat,
    /// How to write the notation.
    #[arg(long, value_enum, default_value_t = NotationStyle::Unicode)]
    pub style: NotationStyle,
    /// When to use colour.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

/// Prints located diagnostics of an argument to stderr; exit code 2.
fn argument_error(name: &str, text: &str, d: &Diagnostic) -> ExitCode {
    let mut err = io::stderr();
    let _ = write_diagnostic(&mut err, lacuna::report::Palette::PLAIN, name, text, d);
    fail(format!("the {name} value is not usable"))
}

/// The level section: the composition, or why there is none.
enum LevelResult {
    Composition(Box<Composition>, usize),
    Problem(Diagnostic),
}

pub fn run(args: &DopeArgs) -> ExitCode {
    let host = match host_argument(&args.host) {
        Ok(host) => host,
        Err(code) => return code,
    };
    let dopant = match parse_dopant(&args.dopant, &host) {
        Ok(d) => d,
        Err(d) => return argument_error("DOPANT", &args.dopant, &d),
    };
    let mut options = DopeOptions::default();
    if let Some(site) = &args.site {
        match parse_site(site, &host) {
            Ok(s) => options.site = Some(s),
            Err(d) => return argument_error("--site", site, &d),
        }
    }
    for cn in &args.cn {
        match lacuna::generate::dope::structure::parse_override(cn, &host) {
            Ok(o) => options.coordination.push(o),
            Err(d) => return argument_error("--cn", cn, &d),
        }
    }
    let level = match args.level.as_deref().map(level::parse_level).transpose() {
        Ok(l) => l,
        Err(d) => return argument_error("--level", args.level.as_deref().unwrap_or(""), &d),
    };
    for (name, value) in [("--density", args.density), ("--cell", args.cell)] {
        if value.is_some_and(|v| !v.is_finite() || v <= 0.0) {
            return fail(format!("{name} takes a positive number"));
        }
    }
    let report = match mechanisms(&host, &dopant, &options) {
        Ok(r) => r,
        Err(d) => return argument_error("HOST", &args.host, &d.locate(1, &args.host)),
    };
    let mut diagnostics = Vec::new();
    if report.mechanisms.is_empty() {
        diagnostics.push(
            Diagnostic::new(
                Code::CannotBalance,
                0..args.dopant.len(),
                format!(
                    "no incorporation mechanism of {} in {} balances{}",
                    dopant.ion(),
                    host.formula_text,
                    if options.site.is_some() {
                        " on that site"
                    } else {
                        ""
                    }
                ),
            )
            .with_help("try another site, or check the host's formal charges")
            .locate(1, &args.dopant),
        );
    }
    let volume = args.density.map(Volume::Density).or_else(|| {
        args.cell.map(|a| Volume::Cell {
            angstrom: a,
            units: args.cell_units.or(report.structure.cell_units).unwrap_or(0),
        })
    });
    let level_result = level.map(|l| convert(args, &host, &dopant, &report, &l, volume));
    if let Some(LevelResult::Problem(d)) = &level_result {
        diagnostics.push(d.clone());
    }
    let result = match args.format {
        OutputFormat::Human => human(
            args,
            &host,
            &dopant,
            &report,
            level_result.as_ref(),
            &diagnostics,
            volume,
        ),
        OutputFormat::Json => print_json(&dope_json(
            &DopeInput {
                host: &host,
                dopant: &dopant,
                report: &report,
                style: args.style.style(),
                integers: args.integers,
            },
            match &level_result {
                Some(LevelResult::Composition(c, rank)) => Some((&**c, *rank)),
                _ => None,
            },
            &diagnostics,
        )),
    };
    match result {
        Err(e) => output_failed(&e),
        Ok(()) if diagnostics.iter().any(Diagnostic::is_error) => ExitCode::from(1),
        Ok(()) => ExitCode::SUCCESS,
    }
}

fn convert(
    args: &DopeArgs,
    host: &Host,
    dopant: &Dopant,
    report: &Report,
    level: &DopantLevel,
    volume: Option<Volume>,
) -> LevelResult {
    let text = args.level.as_deref().unwrap_or("");
    let problem = |message: String, help: &str| {
        LevelResult::Problem(
            Diagnostic::new(Code::Level, 0..text.len(), message)
                .with_help(help)
                .locate(1, text),
        )
    };
    let Some(m) = report.mechanisms.get(args.pick.saturating_sub(1)) else {
        return problem(
            format!("there is no mechanism ranked {}", args.pick),
            "pick one of the ranks listed with --pick",
        );
    };
    if let Some(Volume::Cell { units: 0, .. }) = volume {
        return problem(
            format!(
                "the formula units per cell of {} are not known",
                host.formula_text
            ),
            "give them with --cell-units Z",
        );
    }
    let result = level::mol_fraction(host, dopant, &m.reaction, level, volume)
        .and_then(|x| level::composition(host, dopant, &m.reaction, x, volume));
    match result {
        Ok(c) => LevelResult::Composition(Box::new(c), m.rank),
        Err(e) => problem(
            e.0,
            "choose a level the mechanism can reach, or another mechanism with --pick",
        ),
    }
}

fn percent(q: Q) -> String {
    let v = *q.numer() as f64 / *q.denom() as f64 * 100.0;
    format!("{v:.3} %")
}

#[allow(clippy::too_many_arguments)]
fn human(
    args: &DopeArgs,
    host: &Host,
    dopant: &Dopant,
    report: &Report,
    level: Option<&LevelResult>,
    diagnostics: &[Diagnostic],
    volume: Option<Volume>,
) -> io::Result<()> {
    let palette = args.color.palette();
    let style = args.style.style();
    let mut out = io::stdout().lock();
    write_report(
        &mut out,
        palette,
        &TableInput {
            host,
            dopant,
            report,
            style,
            integers: args.integers,
        },
        &|site| format!("override with --cn {site}=N"),
    )?;
    if let Some(LevelResult::Composition(c, rank)) = level {
        writeln!(out)?;
        write_level(&mut out, args, host, dopant, c, *rank, volume)?;
    }
    for d in diagnostics {
        writeln!(out)?;
        let (name, text) = match d.code {
            Code::Level => ("--level", args.level.as_deref().unwrap_or("")),
            _ => ("DOPANT", args.dopant.as_str()),
        };
        write_diagnostic(&mut out, palette, name, text, d)?;
    }
    out.flush()
}

fn write_level(
    out: &mut dyn Write,
    args: &DopeArgs,
    host: &Host,
    dopant: &Dopant,
    c: &Composition,
    rank: usize,
    volume: Option<Volume>,
) -> io::Result<()> {
    writeln!(
        out,
        "level {} with mechanism {rank}: {} (exact: {})",
        args.level.as_deref().unwrap_or("").trim(),
        level::formula_text(&c.formula),
        level::formula_exact(&c.formula)
    )?;
    let rows = level_rows(host, dopant, c, volume);
    let w = rows.iter().map(|(k, _)| width(k)).max().unwrap_or(0);
    for (k, v) in rows {
        writeln!(out, "  {}  {v}", pad(&k, w))?;
    }
    if let Some(note) = composition_note(c) {
        writeln!(out, "note: {note}")?;
    }
    Ok(())
}

fn level_rows(
    host: &Host,
    dopant: &Dopant,
    c: &Composition,
    volume: Option<Volume>,
) -> Vec<(String, String)> {
    let mut rows = vec![
        (
            format!("mol % {}", compound_text(dopant)),
            format!(
                "{} ({})",
                percent(c.mol_fraction),
                number::to_plain(c.mol_fraction)
            ),
        ),
        (
            format!("cation fraction {}", dopant.symbol()),
            format!(
                "{} ({})",
                percent(c.cation_fraction),
                number::to_plain(c.cation_fraction)
            ),
        ),
    ];
    for d in &c.defects {
        rows.push((
            format!("[{}]", d.species),
            format!(
                "{} {} ({})",
                percent(d.fraction),
                d.basis,
                number::to_plain(d.fraction)
            ),
        ));
    }
    match (c.per_cm3, volume) {
        (Some(v), Some(Volume::Density(rho))) => rows.push((
            format!("{} per cm³", dopant.symbol()),
            format!("{v:.3e} (density {rho} g/cm³, IUPAC atomic weights)"),
        )),
        (Some(v), Some(Volume::Cell { angstrom, units })) => rows.push((
            format!("{} per cm³", dopant.symbol()),
            format!(
                "{v:.3e} (cubic cell {angstrom} Å, {units} {} per cell)",
                host.formula_text
            ),
        )),
        _ => rows.push((
            format!("{} per cm³", dopant.symbol()),
            "give --density or --cell".into(),
        )),
    }
    rows
}
