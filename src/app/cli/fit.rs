//! `lacuna fit`: conductivity versus pO2 and temperature, back to defect
//! regimes. Reads a measurement CSV, runs `lacuna::fit::analyse`, writes the
//! table or JSON to stdout and, on request, fitted curves (CSV) and a plot
//! (SVG) to files.

use super::model_input::{gather, print_diagnostics};
use super::shared::output_failed;
use super::shared::{ColorChoice, fail};
use clap::{Args, ValueEnum};
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::fit::arrhenius::ArrheniusForm;
use lacuna::fit::regimes::ModelRegimes;
use lacuna::fit::{FitError, FitOptions, analyse, csv_input};
use lacuna::model::{self, Model, Overrides};
use lacuna::report::Palette;
use lacuna::report::results::fit::fit_failure;
use lacuna::report::{fit as report, svg};
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct FitArgs {
    /// Measurement file (CSV; columns in grammar/measurements.md); `-` reads
    /// standard input.
    #[arg(value_name = "CSV")]
    pub file: PathBuf,
    /// Model file whose Brouwer regimes replace the textbook set.
    #[arg(long, value_name = "FILE")]
    pub model: Option<PathBuf>,
    /// Regime whose exponents the decomposition uses (default: acceptor-fixed,
    /// σ = σ_ion + σ_n°·pO2^(−1/4) + σ_p°·pO2^(+1/4)).
    #[arg(long, value_name = "NAME")]
    pub regime: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = FitFormat::Table)]
    pub format: FitFormat,
    /// Write the fitted curves (decomposition, t_ion, segment lines) as CSV.
    #[arg(long, value_name = "FILE")]
    pub curves: Option<PathBuf>,
    /// Write a plot of data, fitted lines and segment slopes as SVG.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Quantity fitted against 1/T: `sigma-t` (ln σT, hopping form) or `sigma` (ln σ).
    #[arg(long, value_enum, default_value_t = ArrheniusChoice::SigmaT, value_name = "FORM")]
    pub arrhenius: ArrheniusChoice,
    /// Confidence level for slope matching and intervals.
    #[arg(long, default_value_t = 0.95, value_name = "LEVEL")]
    pub confidence: f64,
    /// Fewest points in a straight piece (at least 3).
    #[arg(long, default_value_t = 3, value_name = "N")]
    pub min_points: usize,
    /// Most straight pieces tried per isotherm.
    #[arg(long, default_value_t = 5, value_name = "N")]
    pub max_segments: usize,
    /// Without uncertainties, a decomposition with a larger rms residual
    /// (decades of σ) is reported as poor.
    #[arg(long, default_value_t = 0.03, value_name = "DECADES")]
    pub rms_limit: f64,
    /// Activation energy of the electron mobility (eV, same form as
    /// --arrhenius), subtracted before reading an enthalpy; neglected if absent.
    #[arg(long, value_name = "EV", allow_negative_numbers = true)]
    pub electron_mobility_ea: Option<f64>,
    /// Activation energy of the hole mobility (eV), as above.
    #[arg(long, value_name = "EV", allow_negative_numbers = true)]
    pub hole_mobility_ea: Option<f64>,
    /// Activation energy of the ionic mobility (eV), as above.
    #[arg(long, value_name = "EV", allow_negative_numbers = true)]
    pub ion_mobility_ea: Option<f64>,
    /// When to use colour.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

/// Output format of `fit`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FitFormat {
    /// Tables for people.
    Table,
    /// The whole report as JSON.
    Json,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ArrheniusChoice {
    SigmaT,
    Sigma,
}

pub fn run(args: &FitArgs) -> ExitCode {
    if !(args.confidence > 0.0 && args.confidence < 1.0) {
        return fail(format!(
            "--confidence must lie between 0 and 1 (e.g. 0.95), not {}",
            args.confidence
        ));
    }
    if args.min_points < 3 || args.max_segments < 1 {
        return fail("--min-points needs at least 3 and --max-segments at least 1");
    }
    if args.rms_limit.is_nan() || args.rms_limit <= 0.0 {
        return fail("--rms-limit must be a positive number of decades, e.g. 0.03");
    }
    let regimes: Option<ModelRegimes> = match &args.model {
        Some(path) => match model_regimes(path) {
            Ok(m) => Some(m),
            Err(code) => return code,
        },
        None => None,
    };
    let source = if args.file.as_os_str() == "-" {
        "<stdin>".to_string()
    } else {
        args.file.display().to_string()
    };
    let text = match read_input(&args.file) {
        Ok(bytes) => bytes,
        Err(e) => return fail(format!("cannot read {source}: {e}")),
    };
    let text = match String::from_utf8(text) {
        Ok(t) => t,
        Err(_) => {
            let d = Diagnostic::new(Code::CsvFormat, 0..0, "the file is not UTF-8 text")
                .with_help("convert it, for example with `iconv -t UTF-8`, and run again");
            return data_problems(args, &source, "", &[d]);
        }
    };
    let measurements = match csv_input::read_measurements(&text, &source) {
        Ok(m) => m,
        Err(diagnostics) => return data_problems(args, &source, &text, &diagnostics),
    };
    let mut options = FitOptions::default();
    options.regime = args.regime.clone();
    options.confidence = args.confidence;
    options.segments.min_points = args.min_points;
    options.segments.max_segments = args.max_segments;
    options.segments.confidence = args.confidence;
    options.arrhenius = match args.arrhenius {
        ArrheniusChoice::SigmaT => ArrheniusForm::SigmaT,
        ArrheniusChoice::Sigma => ArrheniusForm::Sigma,
    };
    options.electron_mobility_ea = args.electron_mobility_ea;
    options.hole_mobility_ea = args.hole_mobility_ea;
    options.ion_mobility_ea = args.ion_mobility_ea;
    options.rms_limit = args.rms_limit;
    let report = match analyse(&measurements, regimes.as_ref(), &options) {
        Ok(r) => r,
        Err(FitError::Usage(m)) => return fail(m),
        Err(FitError::Data(m)) => {
            let _ = writeln!(io::stderr(), "lacuna: {source}: {m}");
            return ExitCode::from(1);
        }
    };
    if let Some(path) = &args.curves {
        let mut buffer = Vec::new();
        if let Err(e) = report::write_curves_csv(&mut buffer, &report)
            .and_then(|_| std::fs::write(path, &buffer))
        {
            return fail(format!("cannot write {}: {e}", path.display()));
        }
    }
    if let Some(path) = &args.svg {
        if let Err(e) = std::fs::write(path, svg::render_fit(&report)) {
            return fail(format!("cannot write {}: {e}", path.display()));
        }
    }
    let stdout = io::stdout();
    let mut out = stdout.lock();
    let written = match args.format {
        FitFormat::Table => report::write_table(&mut out, &report, args.color.palette()),
        FitFormat::Json => serde_json::to_writer_pretty(&mut out, &report)
            .map_err(io::Error::from)
            .and_then(|_| writeln!(out)),
    };
    match written.and_then(|_| out.flush()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => output_failed(&e),
    }
}

fn read_input(path: &Path) -> io::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    if path.as_os_str() == "-" {
        io::stdin().lock().read_to_end(&mut bytes)?;
    } else if path.is_dir() {
        return Err(io::Error::other("is a folder; name the measurement file"));
    } else {
        bytes = std::fs::read(path)?;
    }
    Ok(bytes)
}

/// The regimes of a model file, read as `lacuna brouwer` reads it. Its
/// problems are printed with their lines (exit code 1).
fn model_regimes(path: &Path) -> Result<ModelRegimes, ExitCode> {
    let sources = gather(std::slice::from_ref(&path.to_path_buf()), &[])?;
    let Some(source) = sources.first() else {
        return Err(fail("no model to read"));
    };
    let doc = model::read(&source.name, &source.text, None);
    let mut stderr = io::stderr();
    let refuse = |diagnostics: &[Diagnostic], stderr: &mut io::Stderr| {
        let _ = print_diagnostics(
            stderr,
            Palette::PLAIN,
            &source.name,
            &doc.lines,
            diagnostics,
        );
        let _ = writeln!(
            stderr,
            "lacuna: the model in {} cannot give the regimes to compare with; nothing was fitted",
            source.name
        );
        ExitCode::from(1)
    };
    if let Some((d, _)) = &source.problem {
        return Err(refuse(std::slice::from_ref(d), &mut stderr));
    }
    let built = Model::build(&doc, Overrides::for_slopes(&doc)).and_then(|m| {
        // Notes (reactions kept for reference only) are worth seeing.
        let _ = print_diagnostics(
            &mut io::stderr(),
            Palette::PLAIN,
            &source.name,
            &doc.lines,
            &m.notes,
        );
        ModelRegimes::from_model(&m).map_err(|d| vec![d])
    });
    match built {
        Ok(regimes) => Ok(regimes),
        Err(mut diagnostics) => {
            // `fit` has no --host: the file must say it.
            for d in &mut diagnostics {
                if d.code == Code::NoHost {
                    d.help = Some("add a `host ZrO2` line at the top of the model file".into());
                }
            }
            Err(refuse(&diagnostics, &mut stderr))
        }
    }
}

/// Prints every problem of the measurement file and returns exit code 1.
fn data_problems(args: &FitArgs, source: &str, text: &str, diagnostics: &[Diagnostic]) -> ExitCode {
    let lines: Vec<&str> = text.lines().collect();
    let mut stderr = io::stderr();
    let palette = Palette::PLAIN;
    for d in diagnostics {
        let line_text = lines
            .get((d.line as usize).saturating_sub(1))
            .copied()
            .unwrap_or("");
        let _ = lacuna::report::human::write_diagnostic(&mut stderr, palette, source, line_text, d);
    }
    let count = diagnostics.len();
    let _ = writeln!(
        stderr,
        "lacuna: {count} problem{} in {source}; nothing was fitted",
        if count == 1 { "" } else { "s" }
    );
    if args.format == FitFormat::Json {
        let value = serde_json::to_string(&fit_failure(source, diagnostics))
            .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
        let _ = writeln!(io::stdout(), "{value}");
    }
    ExitCode::from(1)
}
