//! Measurement files: CSV with a header naming each column and its unit
//! (grammar/measurements.md). Rows become points in kelvin, bar and S/cm,
//! grouped into isotherms.
//!
//! In: the file's text and a name for messages. Out: `Measurements`, or
//! every problem found as diagnostics with line, column and help (the reader
//! does not stop at the first bad cell).

use super::{Isotherm, Measurements, Point};
use crate::base::diagnostic::{Code, Diagnostic};
use std::collections::HashMap;
use std::ops::Range;

/// 1 atm in bar, defined beside the fit (kept here for the readers of this module).
pub use super::BAR_PER_ATM;

/// Offset between degrees Celsius and kelvin (exact).
pub const CELSIUS_OFFSET: f64 = 273.15;

/// What a header column means.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Role {
    Temperature(TempUnit),
    Pressure(PressureUnit),
    Sigma(f64),
    SigmaErr,
    Isotherm,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum TempUnit {
    Kelvin,
    Celsius,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum PressureUnit {
    Bar,
    Atm,
    Pascal,
    Log10Bar,
    Log10Atm,
}

/// The recognised column names (lower case) and what they mean.
fn role_of(name: &str) -> Option<Role> {
    Some(match name.to_ascii_lowercase().as_str() {
        "t_k" => Role::Temperature(TempUnit::Kelvin),
        "t_c" => Role::Temperature(TempUnit::Celsius),
        "po2_bar" => Role::Pressure(PressureUnit::Bar),
        "po2_atm" => Role::Pressure(PressureUnit::Atm),
        "po2_pa" => Role::Pressure(PressureUnit::Pascal),
        "log10_po2_bar" => Role::Pressure(PressureUnit::Log10Bar),
        "log10_po2_atm" => Role::Pressure(PressureUnit::Log10Atm),
        "sigma_s_per_cm" => Role::Sigma(1.0),
        "sigma_s_per_m" => Role::Sigma(0.01),
        "sigma_err" => Role::SigmaErr,
        "isotherm" => Role::Isotherm,
        _ => return None,
    })
}

/// Every recognised column name, as documented.
pub const COLUMN_NAMES: &[&str] = &[
    "T_K",
    "T_C",
    "pO2_bar",
    "pO2_atm",
    "pO2_Pa",
    "log10_pO2_bar",
    "log10_pO2_atm",
    "sigma_S_per_cm",
    "sigma_S_per_m",
    "sigma_err",
    "isotherm",
];

fn kind_name(role: Role) -> &'static str {
    match role {
        Role::Temperature(_) => "temperature",
        Role::Pressure(_) => "oxygen pressure",
        Role::Sigma(_) => "conductivity",
        Role::SigmaErr => "uncertainty",
        Role::Isotherm => "isotherm",
    }
}

/// Picks the delimiter from the header line: comma unless the header has
/// none and has semicolons or tabs.
fn sniff_delimiter(text: &str) -> u8 {
    let header = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    if header.contains(',') {
        b','
    } else if header.contains(';') {
        b';'
    } else if header.contains('\t') {
        b'\t'
    } else {
        b','
    }
}

/// Byte span of field `index` in a raw line (quotes honoured, blanks trimmed).
fn field_span(line: &str, delimiter: u8, index: usize) -> Range<usize> {
    let bytes = line.as_bytes();
    let (mut field, mut start, mut quoted) = (0, 0, false);
    let mut end = bytes.len();
    for (i, &b) in bytes.iter().enumerate() {
        if b == b'"' {
            quoted = !quoted;
        } else if b == delimiter && !quoted {
            if field == index {
                end = i;
                break;
            }
            field += 1;
            start = i + 1;
        }
    }
    if field < index {
        return line.len()..line.len();
    }
    let cell = line.get(start..end).unwrap_or("");
    let lead = cell.len() - cell.trim_start().len();
    let trimmed = cell.trim().len();
    (start + lead)..(start + lead + trimmed)
}

struct Header {
    temperature: (usize, TempUnit),
    pressure: (usize, PressureUnit),
    sigma: (usize, f64),
    sigma_err: Option<usize>,
    isotherm: Option<usize>,
    names: Vec<String>,
}

/// Reads a measurement file. `source` names it in messages.
pub fn read_measurements(text: &str, source: &str) -> Result<Measurements, Vec<Diagnostic>> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let lines: Vec<&str> = text.lines().collect();
    let line_text = |line: u32| -> &str {
        lines
            .get((line as usize).saturating_sub(1))
            .copied()
            .unwrap_or("")
    };
    let delimiter = sniff_delimiter(text);
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .comment(Some(b'#'))
        .flexible(true)
        .has_headers(false)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut diagnostics = Vec::new();
    let mut header: Option<Header> = None;
    let mut points: Vec<(Point, Option<String>)> = Vec::new();
    let mut record = csv::StringRecord::new();
    let mut data_row = 0usize;
    loop {
        match reader.read_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let line = e
                    .position()
                    .map_or(0, |p| u32::try_from(p.line()).unwrap_or(u32::MAX));
                diagnostics.push(
                    Diagnostic::new(Code::CsvFormat, 0..0, format!("cannot read the file: {e}"))
                        .with_help("save the file as UTF-8 comma-separated text")
                        .locate(line, line_text(line)),
                );
                break;
            }
        }
        let mut line = record
            .position()
            .map_or(0, |p| u32::try_from(p.line()).unwrap_or(u32::MAX));
        if record.iter().all(str::is_empty) {
            continue;
        }
        // The reader's position is where it began looking, before the
        // blank and comment lines it skipped: the record starts after them.
        while (line as usize) < lines.len() && {
            let skipped = line_text(line).trim_start();
            skipped.is_empty() || skipped.starts_with('#')
        } {
            line = line.saturating_add(1);
        }
        let raw = line_text(line);
        let span = |i: usize| field_span(raw, delimiter, i);
        let Some(h) = &header else {
            match read_header(&record, line, raw, &span) {
                Ok(h) => header = Some(h),
                Err(mut d) => {
                    diagnostics.append(&mut d);
                    return Err(diagnostics);
                }
            }
            continue;
        };
        data_row += 1;
        if record.len() != h.names.len() {
            let at = if record.len() > h.names.len() {
                span(h.names.len())
            } else {
                raw.len()..raw.len()
            };
            diagnostics.push(
                Diagnostic::new(
                    Code::CsvFormat,
                    at,
                    format!(
                        "data row {data_row} has {} fields, the header has {}",
                        record.len(),
                        h.names.len()
                    ),
                )
                .with_help("every row needs one value per header column; quote a value that contains the delimiter")
                .locate(line, raw),
            );
            continue;
        }
        let before = diagnostics.len();
        let mut number = |index: usize, what: &str| -> Option<f64> {
            let cell = record.get(index).unwrap_or("");
            let name = h.names.get(index).map_or("", String::as_str);
            match cell.parse::<f64>() {
                Ok(v) if v.is_finite() => Some(v),
                _ => {
                    let message = if cell.is_empty() {
                        format!("data row {data_row}: `{name}` is empty")
                    } else {
                        format!("data row {data_row}: `{name}` is not a number: `{cell}`")
                    };
                    diagnostics.push(
                        Diagnostic::new(Code::CsvNumber, span(index), message)
                            .with_label(format!("expected {what}"))
                            .with_help("write a decimal number such as 973.15 or 1e-20 (a point, not a comma, for decimals)")
                            .locate(line, raw),
                    );
                    None
                }
            }
        };
        let t = number(h.temperature.0, "a temperature");
        let p = number(h.pressure.0, "an oxygen partial pressure");
        let s = number(h.sigma.0, "a conductivity");
        let e = h.sigma_err.map(|i| number(i, "an uncertainty"));
        if diagnostics.len() > before {
            continue;
        }
        let (Some(t), Some(p), Some(s)) = (t, p, s) else {
            continue;
        };
        let mut range = |index: usize, message: String, help: &str| {
            diagnostics.push(
                Diagnostic::new(Code::CsvRange, span(index), message)
                    .with_help(help.to_string())
                    .locate(line, raw),
            );
        };
        let temperature_k = match h.temperature.1 {
            TempUnit::Kelvin => t,
            TempUnit::Celsius => t + CELSIUS_OFFSET,
        };
        if !(temperature_k > 0.0) {
            range(
                h.temperature.0,
                format!(
                    "data row {data_row}: the temperature {temperature_k} K is not above absolute zero"
                ),
                "check the unit: the column name says kelvin (`T_K`) or degrees Celsius (`T_C`)",
            );
        }
        let po2_bar = match h.pressure.1 {
            PressureUnit::Bar => p,
            PressureUnit::Atm => p * BAR_PER_ATM,
            PressureUnit::Pascal => p * 1e-5,
            PressureUnit::Log10Bar => 10f64.powf(p),
            PressureUnit::Log10Atm => 10f64.powf(p) * BAR_PER_ATM,
        };
        if !(po2_bar > 0.0 && po2_bar.is_finite()) {
            let name = &h.names[h.pressure.0];
            range(
                h.pressure.0,
                format!("data row {data_row}: `{name}` must be positive, found {p}"),
                "an oxygen partial pressure is positive; for values written as logarithms name the column `log10_pO2_bar` or `log10_pO2_atm`",
            );
        }
        let sigma = s * h.sigma.1;
        if !(sigma > 0.0) {
            let name = &h.names[h.sigma.0];
            range(
                h.sigma.0,
                format!("data row {data_row}: `{name}` must be positive, found {s}"),
                "a conductivity is positive; leave out readings below the instrument's floor",
            );
        }
        let sigma_err = match (h.sigma_err, e.flatten()) {
            (Some(i), Some(err)) => {
                if !(err > 0.0) {
                    range(
                        i,
                        format!("data row {data_row}: `sigma_err` must be positive, found {err}"),
                        "an uncertainty is a positive standard deviation in the unit of the conductivity column",
                    );
                }
                Some(err * h.sigma.1)
            }
            _ => None,
        };
        if diagnostics.len() > before {
            continue;
        }
        let label = h.isotherm.and_then(|i| record.get(i)).map(str::to_string);
        if let (Some(i), Some("")) = (h.isotherm, label.as_deref()) {
            diagnostics.push(
                Diagnostic::new(
                    Code::CsvNumber,
                    span(i),
                    format!("data row {data_row}: `isotherm` is empty"),
                )
                .with_help("give every row an isotherm label, such as the set-point temperature")
                .locate(line, raw),
            );
            continue;
        }
        points.push((
            Point {
                line,
                temperature_k,
                po2_bar,
                sigma,
                sigma_err,
            },
            label,
        ));
    }
    let Some(h) = header else {
        diagnostics.push(
            Diagnostic::new(Code::CsvColumn, 0..0, "the file has no header line")
                .with_help("the first line that is not a comment names the columns, e.g. `T_C,pO2_bar,sigma_S_per_cm`"),
        );
        return Err(diagnostics);
    };
    if points.is_empty() && diagnostics.is_empty() {
        diagnostics.push(
            Diagnostic::new(
                Code::CsvIsotherm,
                0..0,
                "the file has a header but no measurements",
            )
            .with_help("add one row per measurement below the header"),
        );
    }
    if !diagnostics.is_empty() {
        return Err(diagnostics);
    }
    let isotherms = group(points, &h, &mut diagnostics, &line_text);
    if !diagnostics.is_empty() {
        return Err(diagnostics);
    }
    let named = |i: usize| h.names.get(i).cloned().unwrap_or_default();
    let known: Vec<usize> = [
        Some(h.temperature.0),
        Some(h.pressure.0),
        Some(h.sigma.0),
        h.sigma_err,
        h.isotherm,
    ]
    .into_iter()
    .flatten()
    .collect();
    Ok(Measurements {
        source: source.to_string(),
        temperature_column: named(h.temperature.0),
        pressure_column: named(h.pressure.0),
        sigma_column: named(h.sigma.0),
        uncertainty_column: h.sigma_err.map(named),
        ignored_columns: (0..h.names.len())
            .filter(|i| !known.contains(i))
            .map(named)
            .collect(),
        isotherms,
    })
}

fn read_header(
    record: &csv::StringRecord,
    line: u32,
    raw: &str,
    span: &dyn Fn(usize) -> Range<usize>,
) -> Result<Header, Vec<Diagnostic>> {
    let names: Vec<String> = record.iter().map(str::to_string).collect();
    let mut found: Vec<(usize, Role)> = Vec::new();
    let mut problems = Vec::new();
    for (i, name) in names.iter().enumerate() {
        let Some(role) = role_of(name) else { continue };
        if let Some((j, _)) = found
            .iter()
            .find(|(_, r)| std::mem::discriminant(r) == std::mem::discriminant(&role))
        {
            problems.push(
                Diagnostic::new(
                    Code::CsvColumn,
                    span(i),
                    format!(
                        "a second {} column: `{name}` (the first is `{}`)",
                        kind_name(role),
                        names[*j]
                    ),
                )
                .with_help("keep one column of each kind; rename or remove the other")
                .locate(line, raw),
            );
        } else {
            found.push((i, role));
        }
    }
    let pick = |f: &dyn Fn(Role) -> bool| found.iter().find(|(_, r)| f(*r)).copied();
    let temperature = pick(&|r| matches!(r, Role::Temperature(_)));
    let pressure = pick(&|r| matches!(r, Role::Pressure(_)));
    let sigma = pick(&|r| matches!(r, Role::Sigma(_)));
    let missing = [
        (temperature.is_none(), "temperature", "`T_K` or `T_C`"),
        (
            pressure.is_none(),
            "oxygen pressure",
            "`pO2_bar`, `pO2_atm`, `pO2_Pa`, `log10_pO2_bar` or `log10_pO2_atm`",
        ),
        (
            sigma.is_none(),
            "conductivity",
            "`sigma_S_per_cm` or `sigma_S_per_m`",
        ),
    ];
    for (absent, what, names_help) in missing {
        if absent {
            let unknown: Vec<&str> = names
                .iter()
                .filter(|n| role_of(n).is_none())
                .map(String::as_str)
                .collect();
            let mut help = format!("name the {what} column {names_help}");
            if !unknown.is_empty() {
                help.push_str(&format!(
                    "; unrecognised columns here: {}",
                    unknown
                        .iter()
                        .map(|n| format!("`{n}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                ));
            }
            problems.push(
                Diagnostic::new(
                    Code::CsvColumn,
                    0..raw.len(),
                    format!("the header has no {what} column"),
                )
                .with_help(help)
                .locate(line, raw),
            );
        }
    }
    if !problems.is_empty() {
        return Err(problems);
    }
    let (Some(t), Some(p), Some(s)) = (temperature, pressure, sigma) else {
        return Err(problems);
    };
    let (Role::Temperature(tu), Role::Pressure(pu), Role::Sigma(sf)) = (t.1, p.1, s.1) else {
        return Err(problems);
    };
    Ok(Header {
        temperature: (t.0, tu),
        pressure: (p.0, pu),
        sigma: (s.0, sf),
        sigma_err: pick(&|r| r == Role::SigmaErr).map(|(i, _)| i),
        isotherm: pick(&|r| r == Role::Isotherm).map(|(i, _)| i),
        names,
    })
}

/// Groups points into isotherms: by the `isotherm` label when there is one,
/// else by equal temperature values. Every isotherm needs two pressures.
fn group<'a>(
    points: Vec<(Point, Option<String>)>,
    header: &Header,
    diagnostics: &mut Vec<Diagnostic>,
    line_text: &dyn Fn(u32) -> &'a str,
) -> Vec<Isotherm> {
    let mut order: Vec<String> = Vec::new();
    let mut groups: HashMap<String, Vec<Point>> = HashMap::new();
    for (point, label) in points {
        let key = label.unwrap_or_else(|| format!("{}", point.temperature_k));
        if !groups.contains_key(&key) {
            order.push(key.clone());
        }
        groups.entry(key).or_default().push(point);
    }
    let mut isotherms = Vec::new();
    for key in order {
        let Some(points) = groups.remove(&key) else {
            continue;
        };
        let first = points.first().map_or(0, |p| p.line);
        let distinct = points
            .iter()
            .any(|p| (p.po2_bar.log10() - points[0].po2_bar.log10()).abs() > 1e-9);
        if points.len() < 2 || !distinct {
            let raw = line_text(first);
            let what = if points.len() < 2 {
                "has a single row"
            } else {
                "has all its rows at one oxygen pressure"
            };
            let label = isotherm_label(&key, &points, header);
            diagnostics.push(
                Diagnostic::new(
                    Code::CsvIsotherm,
                    0..raw.len(),
                    format!("isotherm {label} {what}; a slope needs at least two pressures"),
                )
                .with_help(if header.isotherm.is_some() {
                    "add measurements at other pressures, or fix the `isotherm` label of this row"
                } else {
                    "rows group by equal temperature values: check this temperature for a typo, or add an `isotherm` column to group readings that drift"
                })
                .locate(first, raw),
            );
            continue;
        }
        let n = points.len() as f64;
        let mean = points.iter().map(|p| p.temperature_k).sum::<f64>() / n;
        let (lo, hi) = points
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), p| {
                (l.min(p.temperature_k), h.max(p.temperature_k))
            });
        isotherms.push(Isotherm {
            label: isotherm_label(&key, &points, header),
            temperature_k: mean,
            temperature_spread_k: hi - lo,
            points,
        });
    }
    isotherms.sort_by(|a, b| a.temperature_k.total_cmp(&b.temperature_k));
    isotherms
}

fn isotherm_label(key: &str, points: &[Point], header: &Header) -> String {
    if header.isotherm.is_some() {
        return key.to_string();
    }
    let t = points.first().map_or(0.0, |p| p.temperature_k);
    match header.temperature.1 {
        TempUnit::Celsius => format!("{} °C", trim_float(t - CELSIUS_OFFSET)),
        TempUnit::Kelvin => format!("{} K", trim_float(t)),
    }
}

/// A temperature as written by people: no float noise, no trailing zeros.
fn trim_float(v: f64) -> String {
    let s = format!("{v:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn errors(text: &str) -> Vec<Diagnostic> {
        read_measurements(text, "t.csv").expect_err("should fail")
    }

    #[test]
    fn reads_units_and_groups_isotherms() {
        let text = "# a comment\nT_C, pO2_atm, sigma_S_per_m, sample\n700,1,1.0,a\n700,1e-10,2.0,a\n800,0.21,3.0,b\n800,1e-5,4.0,b\n";
        let m = read_measurements(text, "t.csv").unwrap();
        assert_eq!(m.isotherms.len(), 2);
        assert_eq!(m.isotherms[0].label, "700 °C");
        assert!((m.isotherms[0].temperature_k - 973.15).abs() < 1e-9);
        let p = &m.isotherms[0].points[0];
        // source: common practice: 1 atm = 1.01325 bar, 1 S/m = 0.01 S/cm.
        assert!((p.po2_bar - 1.01325).abs() < 1e-12);
        assert!((p.sigma - 0.01).abs() < 1e-15);
        assert_eq!(p.line, 3);
        assert_eq!(m.ignored_columns, vec!["sample".to_string()]);
    }

    #[test]
    fn semicolons_pascals_and_logs() {
        let text =
            "T_K;log10_pO2_bar;sigma_S_per_cm;sigma_err\n1000;-20;1e-2;1e-4\n1000;-10;1e-2;1e-4\n";
        let m = read_measurements(text, "t.csv").unwrap();
        assert!((m.isotherms[0].points[0].po2_bar - 1e-20).abs() < 1e-32);
        assert_eq!(m.uncertainty_column.as_deref(), Some("sigma_err"));
        let text = "T_K,pO2_Pa,sigma_S_per_cm\n1000,21000,1\n1000,100,2\n";
        let m = read_measurements(text, "t.csv").unwrap();
        assert!((m.isotherms[0].points[0].po2_bar - 0.21).abs() < 1e-12);
    }

    #[test]
    fn missing_column_is_named_with_the_unknown_ones() {
        let d = errors("T_K,pO2,sigma_S_per_cm\n1000,1,1\n");
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].code, Code::CsvColumn);
        assert_eq!(d[0].line, 1);
        assert!(d[0].message.contains("no oxygen pressure column"));
        assert!(d[0].help.as_deref().unwrap().contains("`pO2`"));
    }

    #[test]
    fn bad_cells_carry_row_line_and_column() {
        let text = "T_K,pO2_bar,sigma_S_per_cm\n1000,1,1\n1000,0,1\n1000,1e-3,-2\n1000,abc,1\n";
        let d = errors(text);
        let got: Vec<(Code, u32, u32)> = d.iter().map(|d| (d.code, d.line, d.column)).collect();
        assert_eq!(
            got,
            vec![
                (Code::CsvRange, 3, 6),
                (Code::CsvRange, 4, 11),
                (Code::CsvNumber, 5, 6)
            ]
        );
        assert!(d[0].message.contains("data row 2"), "{}", d[0].message);
    }

    #[test]
    fn single_point_isotherm_is_refused() {
        let d = errors("T_K,pO2_bar,sigma_S_per_cm\n1000,1,1\n1000,1e-2,1\n1100,1,1\n");
        assert_eq!(d.len(), 1);
        assert_eq!((d[0].code, d[0].line), (Code::CsvIsotherm, 4));
        assert!(d[0].message.contains("1100 K"), "{}", d[0].message);
    }

    #[test]
    fn ragged_rows_and_empty_files() {
        let d = errors("T_K,pO2_bar,sigma_S_per_cm\n1000,1\n");
        assert_eq!(d[0].code, Code::CsvFormat);
        assert_eq!(errors("# only a comment\n")[0].code, Code::CsvColumn);
        assert_eq!(
            errors("T_K,pO2_bar,sigma_S_per_cm\n")[0].code,
            Code::CsvIsotherm
        );
        let d = errors("T_K,T_C,pO2_bar,sigma_S_per_cm\n1,1,1,1\n");
        assert!(d[0].message.contains("second temperature column"));
    }

    #[test]
    fn field_spans_follow_quotes() {
        assert_eq!(field_span("a, \"b,c\" ,d", b',', 1), 3..8);
        assert_eq!(field_span("a,b", b',', 5), 3..3);
    }
}
