//! `lacuna brouwer MODEL`: exact regimes with rational slopes, the full
//! numerical equilibrium (pO2 sweep, temperature sweep, frozen-in), as a
//! terminal table, CSV, JSON or an SVG diagram.

use super::model_input::{gather, print_diagnostics};
use super::shared::output_failed;
use super::shared::{ColorChoice, fail, host_argument};
use clap::{Args, ValueEnum};
use lacuna::base::diagnostic::Diagnostic;
use lacuna::model::thermo;
use lacuna::model::{self, Model, Overrides};
use lacuna::report::results::scan::scan_report;
use lacuna::report::scan::{csv_text, svg_text, table_text, write_warnings};
use lacuna::solve::scan::{Along, MAX_POINTS, Scan, ScanError, ScanOptions, scan};
use std::io::{self, BufWriter, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// Output format of `brouwer`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum BrouwerFormat {
    /// Regimes and a table of concentrations for the terminal.
    Table,
    /// One row per point (RFC 4180).
    Csv,
    /// Machine-readable: model, regimes, points, warnings (stable keys).
    Json,
    /// A diagram: log concentration against log pO2 (or 1000/T).
    Svg,
}

#[derive(Debug, Args)]
pub struct BrouwerArgs {
    /// The model: a reaction file with data lines (see grammar/model.md); `-` reads standard input.
    #[arg(value_name = "MODEL")]
    pub model: PathBuf,
    /// Host when the file has no `host` line.
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = BrouwerFormat::Table)]
    pub format: BrouwerFormat,
    /// Write the output to FILE instead of standard output.
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Equilibrium temperature, overriding the model's (`1273 K`, `1000 °C`).
    #[arg(long, value_name = "T")]
    pub temperature: Option<String>,
    /// pO2 range of the sweep, overriding the model's (`1e-30 to 1e5 bar`).
    #[arg(long, value_name = "RANGE")]
    pub po2_range: Option<String>,
    /// Points per decade of pO2 [default: 1 for the table, 10 otherwise].
    #[arg(long, value_name = "N")]
    pub per_decade: Option<u32>,
    /// Sweep temperature at fixed --po2 instead (`700 to 1200 °C`): the Arrhenius view.
    #[arg(long, value_name = "RANGE")]
    pub sweep_temperature: Option<String>,
    /// Fixed pO2 for temperature sweeps (`0.21 bar`).
    #[arg(long, value_name = "P")]
    pub po2: Option<String>,
    /// Points of a temperature sweep [default: 13 for the table, 101 otherwise].
    #[arg(long, value_name = "N")]
    pub steps: Option<u32>,
    /// Frozen-in defects: equilibrate at the model temperature, freeze the
    /// ionic defects, re-equilibrate electrons and holes at T (`600 K`), or
    /// over a range (`300 to 900 K`, with --po2).
    #[arg(long, value_name = "T")]
    pub quench_to: Option<String>,
    /// When to use colour (diagnostics).
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

fn temperature_range(text: &str) -> Result<(f64, f64), String> {
    let Some((a, b)) = text.split_once(" to ") else {
        return Err(format!(
            "`{text}` is not a range; write e.g. `700 to 1200 °C`"
        ));
    };
    let b_t = thermo::parse_temperature(b).map_err(|e| format!("{}; {}", e.message, e.help))?;
    let unit = b
        .trim()
        .trim_start_matches(|c: char| c.is_ascii_digit() || c == '.' || c == '-')
        .trim();
    let a_text = if a.trim().ends_with(|c: char| c.is_ascii_digit()) {
        format!("{} {unit}", a.trim())
    } else {
        a.to_string()
    };
    let a_t =
        thermo::parse_temperature(&a_text).map_err(|e| format!("{}; {}", e.message, e.help))?;
    if a_t >= b_t {
        return Err("the range must run from low to high".to_string());
    }
    Ok((a_t, b_t))
}

fn pressure_range(text: &str) -> Result<(f64, f64), String> {
    let Some((a, b)) = text.split_once(" to ") else {
        return Err(format!(
            "`{text}` is not a range; write e.g. `1e-30 to 1e5 bar`"
        ));
    };
    let b_p = thermo::parse_pressure(b).map_err(|e| format!("{}; {}", e.message, e.help))?;
    let unit = b
        .trim()
        .trim_start_matches(|c: char| {
            c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E')
        })
        .trim();
    let a_text = if a.trim().ends_with(|c: char| c.is_ascii_digit()) {
        format!("{} {unit}", a.trim())
    } else {
        a.to_string()
    };
    let a_p = thermo::parse_pressure(&a_text).map_err(|e| format!("{}; {}", e.message, e.help))?;
    if a_p >= b_p {
        return Err("the range must run from low to high".to_string());
    }
    Ok((a_p, b_p))
}

pub fn run(args: &BrouwerArgs) -> ExitCode {
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(h) => h,
        Err(code) => return code,
    };
    let mut overrides = Overrides::default();
    if let Some(t) = &args.temperature {
        match thermo::parse_temperature(t) {
            Ok(t) => overrides.temperature = Some(t),
            Err(e) => return fail(format!("--temperature: {}; {}", e.message, e.help)),
        }
    }
    if let Some(r) = &args.po2_range {
        match pressure_range(r) {
            Ok(r) => overrides.po2_range = Some(r),
            Err(e) => return fail(format!("--po2-range: {e}")),
        }
    }
    let fixed_po2 = match args.po2.as_deref().map(thermo::parse_pressure) {
        None => None,
        Some(Ok(p)) => Some(p),
        Some(Err(e)) => return fail(format!("--po2: {}; {}", e.message, e.help)),
    };
    let sources = match gather(std::slice::from_ref(&args.model), &[]) {
        Ok(s) => s,
        Err(code) => return code,
    };
    let Some(source) = sources.first() else {
        return fail("no model to read");
    };
    let palette = args.color.palette();
    let mut stderr = io::stderr();
    let doc = model::read(&source.name, &source.text, host);
    let model = match Model::build(&doc, overrides) {
        Ok(m) => m,
        Err(mut diags) => {
            if let Some((d, _)) = &source.problem {
                diags.push(d.clone());
            }
            let _ = print_diagnostics(&mut stderr, palette, &source.name, &doc.lines, &diags);
            let _ = writeln!(
                stderr,
                "lacuna: the model in {} has problems; nothing was solved",
                source.name
            );
            return ExitCode::from(1);
        }
    };
    if let Some((d, _)) = &source.problem {
        let _ = print_diagnostics(
            &mut stderr,
            palette,
            &source.name,
            &doc.lines,
            std::slice::from_ref(d),
        );
        return ExitCode::from(1);
    }
    let _ = print_diagnostics(&mut stderr, palette, &source.name, &doc.lines, &model.notes);
    let table = args.format == BrouwerFormat::Table;
    let computed = scan_from_arguments(args, &model, fixed_po2, table);
    let run = match computed {
        Ok(run) => run,
        Err(Failure::Usage(message)) => return fail(message),
        Err(Failure::Model(d)) => {
            let _ = print_diagnostics(
                &mut stderr,
                palette,
                &source.name,
                &doc.lines,
                std::slice::from_ref(&d),
            );
            return ExitCode::from(1);
        }
    };
    let text = match args.format {
        BrouwerFormat::Table => table_text(&model, &run),
        BrouwerFormat::Csv => csv_text(&model, &run),
        BrouwerFormat::Json => json_text(&model, &run),
        BrouwerFormat::Svg => svg_text(&model, &run),
    };
    let written = match &args.output {
        Some(path) => std::fs::write(path, text.as_bytes())
            .map_err(|e| fail(format!("cannot write {}: {e}", path.display()))),
        None => {
            let stdout = io::stdout();
            let mut out = BufWriter::new(stdout.lock());
            out.write_all(text.as_bytes())
                .and_then(|()| out.flush())
                .map_err(|e| output_failed(&e))
        }
    };
    if let Err(code) = written {
        return code;
    }
    // Warnings go to stderr for every format (stdout may be CSV or SVG).
    if args.format != BrouwerFormat::Table {
        let _ = write_warnings(&mut stderr, palette, &run.warnings);
    }
    if run.points.iter().any(|p| !p.converged) {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

enum Failure {
    Usage(String),
    Model(Diagnostic),
}

impl From<Diagnostic> for Failure {
    fn from(d: Diagnostic) -> Self {
        Failure::Model(d)
    }
}

/// The command's options as `ScanOptions`, and the scan.
fn scan_from_arguments(
    args: &BrouwerArgs,
    model: &Model,
    fixed_po2: Option<f64>,
    table: bool,
) -> Result<Scan, Failure> {
    let along = match (&args.quench_to, &args.sweep_temperature) {
        (Some(_), Some(_)) => {
            return Err(Failure::Usage(
                "--quench-to and --sweep-temperature do not combine; give --quench-to a range (`300 to 900 K`) for a frozen-in temperature sweep".to_string(),
            ));
        }
        (None, None) => Along::Po2,
        (None, Some(range)) => {
            let (from, to) = temperature_range(range)
                .map_err(|e| Failure::Usage(format!("--sweep-temperature: {e}")))?;
            let po2 = fixed_po2.ok_or_else(|| {
                Failure::Usage(
                    "--sweep-temperature needs --po2, e.g. `--po2 '0.21 bar'`".to_string(),
                )
            })?;
            Along::Temperature { from, to, po2 }
        }
        (Some(quench), None) => {
            // The model's temperature is asked for first, as before any range.
            model.require_temperature()?;
            if quench.contains(" to ") {
                let (from, to) = temperature_range(quench)
                    .map_err(|e| Failure::Usage(format!("--quench-to: {e}")))?;
                let po2 = fixed_po2.ok_or_else(|| {
                    Failure::Usage(
                        "a --quench-to range needs --po2 (the pO2 of the equilibration)"
                            .to_string(),
                    )
                })?;
                Along::FrozenTemperature { from, to, po2 }
            } else {
                let quench = thermo::parse_temperature(quench).map_err(|e| {
                    Failure::Usage(format!("--quench-to: {}; {}", e.message, e.help))
                })?;
                Along::FrozenPo2 { quench }
            }
        }
    };
    let options = ScanOptions::new(along)
        .per_decade(args.per_decade.unwrap_or(if table { 1 } else { 10 }))
        .steps(args.steps.unwrap_or(if table { 13 } else { 101 }));
    scan(model, &options).map_err(|e| match e {
        ScanError::Model(d) => Failure::Model(d),
        ScanError::TooManyPoints { wanted } => Failure::Usage(format!(
            "{wanted:.0} pO2 points is more than {MAX_POINTS}; lower --per-decade or narrow the range"
        )),
        other => Failure::Usage(other.to_string()),
    })
}

/// `--format json`: the library's report, pretty-printed.
fn json_text(model: &Model, run: &Scan) -> String {
    let mut text = serde_json::to_string_pretty(&scan_report(model, run))
        .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}
