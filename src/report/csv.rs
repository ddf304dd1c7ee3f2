//! CSV (RFC 4180) output of tables: a header row, then one row per record.
//!
//! In: column names and rows of already formatted cells. Out: text with
//! fields quoted only where needed (commas, quotes, line breaks).

use std::io::{self, Write};

/// Quotes one field when needed.
pub fn field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// Writes one row, CRLF-terminated as RFC 4180 asks.
pub fn write_row(out: &mut dyn Write, cells: &[String]) -> io::Result<()> {
    let line: Vec<String> = cells.iter().map(|c| field(c)).collect();
    out.write_all(line.join(",").as_bytes())?;
    out.write_all(b"\r\n")
}

/// A number as a CSV cell: full precision, `nan` never written silently.
pub fn number(x: f64) -> String {
    if x.is_finite() {
        format!("{x:e}")
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quotes_only_when_needed() {
        assert_eq!(field("[V_O..]"), "[V_O..]");
        assert_eq!(field("a,b"), "\"a,b\"");
        assert_eq!(field("[Y_Zr']"), "[Y_Zr']");
        assert_eq!(field("say \"x\""), "\"say \"\"x\"\"\"");
        let mut out = Vec::new();
        write_row(&mut out, &["a".into(), "b,c".into()]).expect("write");
        assert_eq!(out, b"a,\"b,c\"\r\n");
        assert_eq!(number(1.5e-20), "1.5e-20");
        assert_eq!(number(f64::NAN), "");
    }
}
