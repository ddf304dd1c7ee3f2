//! `lacuna brouwer MODEL`: exact regimes with rational slopes, the full
//! numerical equilibrium (pO2 sweep, temperature sweep, frozen-in), as a
//! terminal table, CSV, JSON or an SVG diagram.

use super::model_input::{diagnostic_json, gather, print_diagnostics};
use super::{ColorChoice, fail, host_argument};
use crate::base::diagnostic::Diagnostic;
use crate::base::number::{self, Q};
use crate::model::thermo::{self, sig, temperature_text};
use crate::model::{self, Model, Overrides};
use crate::notation::Style;
use crate::report::svg::{self, Plot, SegmentLabel, Series};
use crate::report::{Palette, csv};
use crate::solve::equilibrium::Point;
use crate::solve::regimes::{self, Along as TableAlong};
use crate::solve::scan::{
    Along, DILUTE_LIMIT, MAX_POINTS, Mode, Scan, ScanError, ScanOptions, scan,
};
use clap::{Args, ValueEnum};
use std::fmt::Write as _;
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
    let computed = compute(args, &model, fixed_po2, table);
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
        Some(path) => {
            std::fs::write(path, text.as_bytes()).map_err(|e| (path.display().to_string(), e))
        }
        None => {
            let stdout = io::stdout();
            let mut out = BufWriter::new(stdout.lock());
            out.write_all(text.as_bytes())
                .and_then(|()| out.flush())
                .map_err(|e| ("standard output".to_string(), e))
        }
    };
    if let Err((target, e)) = written {
        if e.kind() == io::ErrorKind::BrokenPipe {
            return ExitCode::from(2);
        }
        return fail(format!("cannot write {target}: {e}"));
    }
    // Warnings go to stderr for every format (stdout may be CSV or SVG).
    if args.format != BrouwerFormat::Table {
        let _ = print_warnings(&mut stderr, palette, &run.warnings);
    }
    if run.points.iter().any(|p| !p.converged) {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

fn print_warnings(
    out: &mut dyn Write,
    palette: Palette,
    warnings: &[Diagnostic],
) -> io::Result<()> {
    for w in warnings {
        let head = format!("{}[{}]", w.severity.as_str(), w.code);
        writeln!(
            out,
            "{}: {}",
            palette.severity(w.severity, &head),
            w.message
        )?;
        if let Some(help) = &w.help {
            writeln!(out, "  {} {help}", palette.frame("= help:"))?;
        }
    }
    Ok(())
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
fn compute(
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

fn signed_slope(q: Q) -> String {
    if q > Q::from_integer(0) {
        format!("+{}", number::to_plain(q))
    } else {
        number::to_plain(q)
    }
}

fn unicode_slope(q: Q) -> String {
    signed_slope(q).replacen('-', "−", 1)
}

fn describe_model(model: &Model, run: &Scan) -> Vec<String> {
    let mut lines = Vec::new();
    let when = match run.mode {
        Mode::Po2 { temperature } => format!("at {}", temperature_text(temperature)),
        Mode::Temperature { po2 } => format!("at pO₂ = {} bar", sig(po2, 4)),
        Mode::FrozenPo2 { high, low } => format!(
            "equilibrated at {}, frozen-in at {}",
            temperature_text(high),
            temperature_text(low)
        ),
        Mode::FrozenTemperature { high, po2 } => format!(
            "equilibrated at {} and pO₂ = {} bar, then frozen-in",
            temperature_text(high),
            sig(po2, 4)
        ),
    };
    lines.push(format!(
        "model       {}: host {} {when}",
        model.source, model.host.formula_text
    ));
    lines.push(format!(
        "units       [X] in defects per formula unit of {}; pO₂ in bar",
        model.host.formula_text
    ));
    lines.push(format!("neutrality  {}", model.neutrality(Style::Unicode)));
    for t in &model.totals {
        lines.push(format!(
            "fixed       {}: {}",
            t.subject_unicode, t.description
        ));
    }
    lines
}

fn table_text(model: &Model, run: &Scan) -> String {
    let mut out = String::new();
    for line in describe_model(model, run) {
        let _ = writeln!(out, "{line}");
    }
    let (names, width) = regimes::species_columns(model);
    let pad = regimes::pad;
    if !run.regimes.is_empty() {
        let along = if matches!(run.mode, Mode::Temperature { .. }) {
            TableAlong::Temperature
        } else {
            TableAlong::Po2
        };
        out.push_str(&regimes::regimes_table(model, &run.regimes, along));
    }
    let what = match run.mode {
        Mode::Po2 { .. } | Mode::Temperature { .. } => "Full solution, every term kept",
        _ => "Frozen-in solution",
    };
    let _ = writeln!(out, "\n{what} (concentrations per formula unit):");
    let first = match run.mode {
        Mode::Po2 { .. } | Mode::FrozenPo2 { .. } => "pO₂/bar",
        _ => "T/K",
    };
    let mut header = pad(first, 11);
    for n in &names {
        header.push_str(&pad(n, width));
    }
    header.push_str(&pad("site frac", 11));
    header.push_str("ok");
    let _ = writeln!(out, "{header}");
    for p in &run.points {
        let x = match run.mode {
            Mode::Po2 { .. } | Mode::FrozenPo2 { .. } => sig(p.po2, 3),
            _ => sig(p.temperature, 5),
        };
        let mut row = pad(&x, 11);
        for s in 0..model.species.len() {
            row.push_str(&pad(&format!("{:.3e}", p.concentration(s)), width));
        }
        let flag = if p.site_fraction > DILUTE_LIMIT {
            "!"
        } else {
            ""
        };
        row.push_str(&pad(&format!("{:.2e}{flag}", p.site_fraction), 11));
        row.push_str(if p.converged { "yes" } else { "NO" });
        let _ = writeln!(out, "{row}");
    }
    for n in &run.notes {
        let _ = writeln!(out, "note: {n}");
    }
    for w in &run.warnings {
        let _ = writeln!(out, "{}[{}]: {}", w.severity.as_str(), w.code, w.message);
        if let Some(help) = &w.help {
            let _ = writeln!(out, "  = help: {help}");
        }
    }
    out
}

fn csv_text(model: &Model, run: &Scan) -> String {
    let mut out = Vec::new();
    let mut header = vec!["po2_bar".to_string(), "temperature_K".to_string()];
    header.extend((0..model.species.len()).map(|s| model.symbol(s, Style::Ascii).to_string()));
    header.extend([
        "defect_site_fraction".to_string(),
        "converged".to_string(),
        "residual".to_string(),
    ]);
    let _ = csv::write_row(&mut out, &header);
    for p in &run.points {
        let mut row = vec![csv::number(p.po2), csv::number(p.temperature)];
        row.extend((0..model.species.len()).map(|s| csv::number(p.concentration(s))));
        row.push(csv::number(p.site_fraction));
        row.push(p.converged.to_string());
        row.push(csv::number(p.residual.max(p.total_residual)));
        let _ = csv::write_row(&mut out, &row);
    }
    String::from_utf8_lossy(&out).into_owned()
}

fn json_text(model: &Model, run: &Scan) -> String {
    let names: Vec<String> = (0..model.species.len())
        .map(|s| model.symbol(s, Style::Unicode).to_string())
        .collect();
    let species: Vec<serde_json::Value> = model
        .species
        .iter()
        .enumerate()
        .map(|(s, sp)| serde_json::json!({"symbol": names[s], "ascii": sp.ascii, "charge": sp.charge}))
        .collect();
    let equilibria: Vec<serde_json::Value> = model
        .equilibria
        .iter()
        .map(|e| serde_json::json!({"label": e.label, "law": e.law.text(Style::Unicode), "reaction": e.law.reaction_unicode}))
        .collect();
    let totals: Vec<serde_json::Value> = model
        .totals
        .iter()
        .map(|t| serde_json::json!({"subject": t.subject_unicode, "per_formula_unit": t.amount, "description": t.description}))
        .collect();
    let (temperature, sweep) = match run.mode {
        Mode::Po2 { temperature } => (
            Some(temperature),
            serde_json::json!({"variable": "po2", "temperature": temperature}),
        ),
        Mode::Temperature { po2 } => (
            None,
            serde_json::json!({"variable": "temperature", "po2": po2}),
        ),
        Mode::FrozenPo2 { high, low } => (
            Some(high),
            serde_json::json!({"variable": "po2", "frozen_from": high, "temperature": low}),
        ),
        Mode::FrozenTemperature { high, po2 } => (
            Some(high),
            serde_json::json!({"variable": "temperature", "frozen_from": high, "po2": po2}),
        ),
    };
    let regimes: Vec<serde_json::Value> = run
        .regimes
        .iter()
        .map(|r| {
            let map = |f: &dyn Fn(usize) -> serde_json::Value| -> serde_json::Map<String, serde_json::Value> {
                (0..model.species.len()).map(|s| (names[s].clone(), f(s))).collect()
            };
            let slopes = map(&|s| number::to_plain(r.slope(model, s)).into());
            let dopant: serde_json::Map<String, serde_json::Value> = model
                .totals
                .iter()
                .enumerate()
                .map(|(j, t)| (t.subject_unicode.clone(), serde_json::Value::Object(map(&|s| number::to_plain(r.laws.total[s][j]).into()))))
                .collect();
            let laws = map(&|s| r.power_law_text(model, s, Style::Unicode).into());
            let enthalpies = map(&|s| r.enthalpy(model, s).map_or(serde_json::Value::Null, serde_json::Value::from));
            let (po2_from, po2_to, t_range) = match run.mode {
                Mode::Temperature { po2 } => (po2, po2, Some((r.from, r.to))),
                _ => (r.from, r.to, None),
            };
            let mut value = serde_json::json!({
                "neutrality": r.neutrality(model, Style::Unicode),
                "totals": r.total_conditions(model, Style::Unicode),
                "po2_from": po2_from,
                "po2_to": po2_to,
                "slopes": slopes,
                "dopant_slopes": dopant,
                "power_laws": laws,
                "enthalpies_eV": enthalpies,
            });
            if let (Some((a, b)), Some(m)) = (t_range, value.as_object_mut()) {
                m.insert("temperature_from".into(), a.into());
                m.insert("temperature_to".into(), b.into());
            }
            value
        })
        .collect();
    let points: Vec<serde_json::Value> = run
        .points
        .iter()
        .map(|p| {
            let concentrations: serde_json::Map<String, serde_json::Value> =
                (0..model.species.len())
                    .map(|s| (names[s].clone(), p.concentration(s).into()))
                    .collect();
            serde_json::json!({
                "po2": p.po2,
                "temperature": p.temperature,
                "concentrations": concentrations,
                "converged": p.converged,
                "residual": p.residual.max(p.total_residual),
                "defect_site_fraction": p.site_fraction,
                "dilute": p.site_fraction <= DILUTE_LIMIT,
            })
        })
        .collect();
    let warnings: Vec<serde_json::Value> = run
        .warnings
        .iter()
        .map(|w| diagnostic_json(w, &model.source))
        .collect();
    let report = serde_json::json!({
        "model": {
            "source": model.source,
            "host": model.host.formula_text,
            "temperature": temperature,
            "units": format!("defects per formula unit of {}; pO2 in bar", model.host.formula_text),
            "neutrality": model.neutrality(Style::Unicode),
            "species": species,
            "equilibria": equilibria,
            "totals": totals,
        },
        "sweep": sweep,
        "regimes": regimes,
        "points": points,
        "warnings": warnings,
        "notes": run.notes,
    });
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

fn svg_text(model: &Model, run: &Scan) -> String {
    let by_po2 = matches!(run.mode, Mode::Po2 { .. } | Mode::FrozenPo2 { .. });
    let x_of = |p: &Point| {
        if by_po2 {
            p.po2.log10()
        } else {
            1000.0 / p.temperature
        }
    };
    let series: Vec<Series> = (0..model.species.len())
        .map(|s| Series {
            label: model.symbol(s, Style::Unicode).to_string(),
            points: run
                .points
                .iter()
                .filter(|p| p.converged)
                .map(|p| (x_of(p), p.ln_c[s] / std::f64::consts::LN_10))
                .collect(),
        })
        .collect();
    let to_x = |v: f64| if by_po2 { v.log10() } else { 1000.0 / v };
    let mut boundaries = Vec::new();
    let mut region_names = Vec::new();
    let mut segment_labels = Vec::new();
    let mut footnotes = Vec::new();
    for (i, r) in run.regimes.iter().enumerate() {
        let (a, b) = (to_x(r.from), to_x(r.to));
        if i > 0 {
            boundaries.push(a);
        }
        let centre = (a + b) / 2.0;
        region_names.push((centre, format!("{}", i + 1)));
        footnotes.push(format!(
            "{}: {}",
            i + 1,
            r.neutrality(model, Style::Unicode)
        ));
        for s in 0..model.species.len() {
            let text = if by_po2 {
                unicode_slope(r.slope(model, s))
            } else {
                match r.enthalpy(model, s) {
                    Some(h) => format!("{} eV", sig(h, 3)),
                    None => continue,
                }
            };
            segment_labels.push(SegmentLabel {
                series: s,
                x: centre,
                text,
            });
        }
    }
    let mut shaded = Vec::new();
    let mut start: Option<f64> = None;
    let mut previous = None;
    for p in &run.points {
        let x = x_of(p);
        let over = p.site_fraction > DILUTE_LIMIT;
        match (over, start) {
            (true, None) => start = Some(x),
            (false, Some(s)) => {
                shaded.push((s, previous.unwrap_or(x)));
                start = None;
            }
            _ => {}
        }
        previous = Some(x);
    }
    if let (Some(s), Some(e)) = (start, previous) {
        shaded.push((s, e));
    }
    let (title, x_label) = match run.mode {
        Mode::Po2 { temperature } => (
            format!(
                "Defect concentrations in {} at {}",
                model.host.formula_text,
                temperature_text(temperature)
            ),
            "log₁₀(pO₂ / bar)".to_string(),
        ),
        Mode::Temperature { po2 } => (
            format!(
                "Defect concentrations in {} at pO₂ = {} bar",
                model.host.formula_text,
                sig(po2, 3)
            ),
            "1000 K / T".to_string(),
        ),
        Mode::FrozenPo2 { high, low } => (
            format!(
                "Frozen-in defects in {}: equilibrated at {}, quenched to {}",
                model.host.formula_text,
                sig(high, 5),
                temperature_text(low)
            ),
            "log₁₀(pO₂ / bar) at equilibration".to_string(),
        ),
        Mode::FrozenTemperature { high, po2 } => (
            format!(
                "Frozen-in defects in {} (equilibrated at {} K, pO₂ = {} bar)",
                model.host.formula_text,
                sig(high, 5),
                sig(po2, 3)
            ),
            "1000 K / T".to_string(),
        ),
    };
    footnotes.insert(
        0,
        format!("neutrality: {}", model.neutrality(Style::Unicode)),
    );
    if by_po2 && !run.regimes.is_empty() {
        footnotes.insert(
            1,
            "numbers on the lines: exact slopes d log[X] / d log pO₂ in each regime".to_string(),
        );
    } else if !run.regimes.is_empty() {
        footnotes.insert(
            1,
            "numbers on the lines: apparent enthalpies −k d ln[X] / d(1/T)".to_string(),
        );
    }
    let plot = Plot {
        title,
        x_label,
        y_label: format!("log₁₀[X] (per formula unit of {})", model.host.formula_text),
        series,
        boundaries,
        region_names,
        segment_labels,
        shaded,
        shaded_note: Some(format!(
            "shaded: more than {} % of the sites defective; the dilute ideal model is not trustworthy there",
            DILUTE_LIMIT * 100.0
        )),
        footnotes,
    };
    svg::render(&plot, 40.0)
}
