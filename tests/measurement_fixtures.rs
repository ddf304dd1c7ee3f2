//! The measurement-file fixtures: every CSV in
//! `tests/fixtures/measurements/valid` and `…/invalid` read by the one
//! measurement reader (`lacuna::read_measurements`, which `lacuna fit`
//! uses), compared with the expected output beside it (`NAME.read` or
//! `NAME.diagnostics`). The expected files were checked by hand: unit
//! conversions against CODATA (0 °C = 273.15 K, 1 atm = 1.01325 bar,
//! 1 S/m = 0.01 S/cm).

use lacuna::base::diagnostic::Severity;
use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};

fn fixtures(folder: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/measurements")
        .join(folder);
    let mut files: Vec<PathBuf> = fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "csv"))
        .collect();
    files.sort();
    assert!(!files.is_empty(), "no fixtures in {}", dir.display());
    files
}

/// What the reader made of a file: its columns, then each isotherm and point.
fn described(text: &str) -> Result<String, String> {
    let m = lacuna::read_measurements(text, "fixture").map_err(|e| {
        e.0.iter()
            .map(|d| {
                let severity = match d.severity {
                    Severity::Error => "error",
                    Severity::Warning => "warning",
                    _ => "note",
                };
                format!(
                    "{}:{} {severity}[{}] {}\n",
                    d.line,
                    d.column,
                    d.code.as_str(),
                    d.message
                )
            })
            .collect::<String>()
    })?;
    let mut out = String::new();
    let _ = writeln!(
        out,
        "columns: T {}, pO2 {}, sigma {}, uncertainty {}, ignored [{}]",
        m.temperature_column,
        m.pressure_column,
        m.sigma_column,
        m.uncertainty_column.as_deref().unwrap_or("none"),
        m.ignored_columns.join(", ")
    );
    for iso in &m.isotherms {
        let _ = writeln!(
            out,
            "isotherm {}: {:.2} K (spread {:.2} K), {} points",
            iso.label,
            iso.temperature_k,
            iso.temperature_spread_k,
            iso.points.len()
        );
        for p in &iso.points {
            let err = p
                .sigma_err
                .map_or("none".to_string(), |e| format!("{e:.4e}"));
            let _ = writeln!(
                out,
                "  line {}: {:.2} K, pO2 {:.6e} bar, sigma {:.4e} S/cm, uncertainty {err}",
                p.line, p.temperature_k, p.po2_bar, p.sigma
            );
        }
    }
    Ok(out)
}

fn compare(path: &Path, expected_ext: &str, actual: &str) {
    let expected_path = path.with_extension(expected_ext);
    if std::env::var_os("LACUNA_FIXTURES").is_some_and(|v| v == "write") {
        fs::write(&expected_path, actual).expect("write the expected output");
        return;
    }
    let expected = fs::read_to_string(&expected_path)
        .unwrap_or_else(|e| panic!("{}: {e}", expected_path.display()));
    assert_eq!(actual, expected, "{}", path.display());
}

#[test]
fn valid_measurement_files_read_as_expected() {
    for path in fixtures("valid") {
        let text = fs::read_to_string(&path).expect("fixture");
        let read =
            described(&text).unwrap_or_else(|e| panic!("{} does not read:\n{e}", path.display()));
        compare(&path, "read", &read);
    }
}

#[test]
fn invalid_measurement_files_are_refused_with_located_reasons() {
    for path in fixtures("invalid") {
        let text = fs::read_to_string(&path).expect("fixture");
        let refused = match described(&text) {
            Ok(read) => panic!("{} reads:\n{read}", path.display()),
            Err(diagnostics) => diagnostics,
        };
        compare(&path, "diagnostics", &refused);
    }
}
