//! Reading a delimited text file into the columns a panel needs, with errors that name the line
//! and column.
//!
//! The dialect (see README, "Reading files"):
//! - the input is a file, or standard input for `-`; gzip is recognised by its magic bytes
//!   (1f 8b), whatever the file name;
//! - the delimiter is `--delimiter` or the one of comma, semicolon, tab and pipe found most often
//!   (outside quotes) in the header line, ties going to that order; with `--decimal ,` the
//!   comma is no candidate;
//! - numbers use `--decimal` (`.` or `,`); a cell equal to one of the missing-value tokens
//!   (default `NA`, `NaN`, `nan`, `NAN`, `.` and the empty cell; `--na` replaces them) is
//!   missing in every column, the subject column included;
//! - subject ids: a column whose every filled cell is a number written without a leading zero
//!   (`7`, `7.0`, `-3`, `1e3`) is numeric, so `1` and `1.0` are one subject; otherwise the ids
//!   are text kept exactly (after trimming spaces), so `007` and `7` differ. Python and R follow
//!   the same rule through their column types.
//! - a column used whose name appears twice in the header is refused, naming it.

use std::io::Read;
use std::path::Path;

use clap::Args;
use trajweave_core::{Covariate, Error, Missing, Panel, SubjectIds};

use crate::error::CliError;

/// Which columns hold what.
pub struct Columns<'a> {
    pub subject: &'a str,
    pub time: &'a str,
    pub response: &'a str,
    pub covariates: &'a [String],
}

/// How the file is written: delimiter, decimal mark and missing-value tokens.
#[derive(Args, Clone, Debug, Default)]
pub struct ReadArgs {
    /// Field delimiter: comma, semicolon, tab or pipe (`,` `;` `tab` `|`); detected from the
    /// header line when not given.
    #[arg(long)]
    pub delimiter: Option<String>,
    /// Decimal mark of numbers: `.` (default) or `,`.
    #[arg(long, default_value = ".")]
    pub decimal: String,
    /// A cell text meaning a missing value, in any column (repeatable; replaces the default
    /// NA, NaN, nan, NAN, `.` and the empty cell; `--na ''` for the empty cell).
    #[arg(long = "na", value_name = "TOKEN", allow_hyphen_values = true)]
    pub na: Vec<String>,
}

/// The checked dialect.
#[derive(Debug, Clone, PartialEq)]
pub struct Dialect {
    /// `None`: detect from the header.
    pub delimiter: Option<u8>,
    /// `b'.'` or `b','`.
    pub decimal: u8,
    /// Cells meaning a missing value.
    pub na: Vec<String>,
}

/// The default missing-value tokens.
pub const DEFAULT_NA: [&str; 6] = ["", "NA", "NaN", "nan", "NAN", "."];

impl Default for Dialect {
    fn default() -> Self {
        Dialect {
            delimiter: None,
            decimal: b'.',
            na: DEFAULT_NA.iter().map(|s| s.to_string()).collect(),
        }
    }
}

impl ReadArgs {
    /// The dialect, or an option error naming the flag.
    pub fn dialect(&self) -> Result<Dialect, CliError> {
        let decimal = match self.decimal.as_str() {
            "." => b'.',
            "," => b',',
            other => {
                return Err(Error::option(
                    "--decimal",
                    format!("{other:?}"),
                    "use \".\" (the default) or \",\"",
                )
                .into())
            }
        };
        let delimiter = match self.delimiter.as_deref() {
            None => None,
            Some("," | "comma") => Some(b','),
            Some(";" | "semicolon") => Some(b';'),
            Some("\t" | "tab" | "\\t") => Some(b'\t'),
            Some("|" | "pipe") => Some(b'|'),
            Some(other) => {
                return Err(Error::option(
                    "--delimiter",
                    format!("{other:?}"),
                    "use \",\", \";\", \"tab\" or \"|\" (or leave it out to detect it)",
                )
                .into())
            }
        };
        if delimiter == Some(b',') && decimal == b',' {
            return Err(Error::option(
                "--delimiter",
                "\",\" with --decimal \",\"",
                "a comma cannot be both; use --delimiter \";\" (or tab or \"|\") with a decimal comma",
            )
            .into());
        }
        let na = if self.na.is_empty() {
            Dialect::default().na
        } else {
            self.na.iter().map(|s| s.trim().to_string()).collect()
        };
        Ok(Dialect {
            delimiter,
            decimal,
            na,
        })
    }
}

/// Reads `path` (`-` for standard input; gzip or plain) and builds a panel.
pub fn read_panel(
    path: &Path,
    cols: &Columns,
    missing: Missing,
    dialect: &Dialect,
) -> Result<Panel, CliError> {
    let (file, bytes) = read_input(path)?;
    read_panel_from(&bytes[..], &file, cols, missing, dialect)
}

/// The whole input, decompressed when it starts with the gzip magic bytes, and its name for
/// messages.
pub fn read_input(path: &Path) -> Result<(String, Vec<u8>), CliError> {
    let stdin = path.as_os_str() == "-";
    let file = if stdin {
        "standard input".to_string()
    } else {
        path.display().to_string()
    };
    let mut raw = Vec::new();
    let read = if stdin {
        std::io::stdin().lock().read_to_end(&mut raw)
    } else {
        std::fs::File::open(path).and_then(|mut f| f.read_to_end(&mut raw))
    };
    read.map_err(|e| CliError::io(&file, e.to_string()))?;
    if raw.starts_with(&[0x1f, 0x8b]) {
        let mut out = Vec::new();
        flate2::read::MultiGzDecoder::new(&raw[..])
            .read_to_end(&mut out)
            .map_err(|e| CliError::io(&file, format!("not valid gzip: {e}")))?;
        return Ok((file, out));
    }
    Ok((file, raw))
}

/// The delimiter found most often outside quotes in the first line, among comma, semicolon,
/// tab and pipe (ties in that order; no comma with a decimal comma); comma when none occurs.
pub fn detect_delimiter(bytes: &[u8], decimal: u8) -> u8 {
    let candidates: &[u8] = if decimal == b',' { b";\t|" } else { b",;\t|" };
    let mut counts = [0usize; 4];
    let mut quoted = false;
    for &b in bytes {
        match b {
            b'"' => quoted = !quoted,
            b'\n' | b'\r' if !quoted => break,
            _ if !quoted => {
                if let Some(k) = candidates.iter().position(|&c| c == b) {
                    counts[k] += 1;
                }
            }
            _ => {}
        }
    }
    let best = (0..candidates.len())
        .rev()
        .max_by_key(|&k| counts[k])
        .unwrap_or(0);
    if counts[best] == 0 {
        candidates[0]
    } else {
        candidates[best]
    }
}

/// As [`read_panel`], from bytes already read; `file` names the source in messages.
pub fn read_panel_from(
    bytes: &[u8],
    file: &str,
    cols: &Columns,
    missing: Missing,
    dialect: &Dialect,
) -> Result<Panel, CliError> {
    let file = file.to_string();
    let delimiter = dialect
        .delimiter
        .unwrap_or_else(|| detect_delimiter(bytes, dialect.decimal));
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .delimiter(delimiter)
        .from_reader(bytes);
    let headers = reader
        .headers()
        .map_err(|e| CliError::csv(&file, &e))?
        .clone();
    let find = |option: &str, name: &str| -> Result<usize, CliError> {
        let at: Vec<usize> = headers
            .iter()
            .enumerate()
            .filter(|(_, h)| *h == name)
            .map(|(k, _)| k)
            .collect();
        match at[..] {
            [one] => Ok(one),
            [] => Err(CliError::Column {
                file: file.clone(),
                option: option.to_string(),
                name: name.to_string(),
                available: headers.iter().map(String::from).collect(),
            }),
            _ => {
                let places: Vec<String> = at.iter().map(|k| (k + 1).to_string()).collect();
                Err(CliError::Core {
                    file: Some(file.clone()),
                    line: Some(1),
                    column: None,
                    error: Box::new(Error::option(
                        option,
                        format!("{name:?}"),
                        &format!(
                            "the header names {} columns {name:?} (columns {}); rename them so \
                             each column has its own name",
                            at.len(),
                            places.join(", ")
                        ),
                    )),
                })
            }
        }
    };
    let subject_at = find("--subject", cols.subject)?;
    let time_at = find("--time", cols.time)?;
    let response_at = find("--response", cols.response)?;
    let covariate_at = cols
        .covariates
        .iter()
        .map(|c| find("--covariate", c))
        .collect::<Result<Vec<_>, _>>()?;

    let mut lines = Vec::new();
    let mut subject_text: Vec<Option<String>> = Vec::new();
    let mut time = Vec::new();
    let mut response = Vec::new();
    let mut covariates: Vec<Vec<f64>> = vec![Vec::new(); covariate_at.len()];
    for record in reader.records() {
        let record = record.map_err(|e| CliError::csv(&file, &e))?;
        let line = record.position().map_or(0, |p| p.line());
        let cell = |at: usize| record.get(at).unwrap_or("");
        let number = |at: usize, name: &str| {
            parse_number(cell(at), dialect).ok_or_else(|| CliError::Cell {
                file: file.clone(),
                line,
                column: name.to_string(),
                value: cell(at).to_string(),
            })
        };
        let id = cell(subject_at);
        // A missing-value token is a missing id, never a subject called "NA".
        let is_missing = dialect.na.iter().any(|t| t == id);
        subject_text.push((!is_missing).then(|| id.to_string()));
        time.push(number(time_at, cols.time)?);
        response.push(number(response_at, cols.response)?);
        for (k, &at) in covariate_at.iter().enumerate() {
            covariates[k].push(number(at, &cols.covariates[k])?);
        }
        lines.push(line);
    }

    let subjects = subject_ids(subject_text, dialect);
    let covariates = cols
        .covariates
        .iter()
        .zip(covariates)
        .map(|(name, values)| Covariate::new(name.clone(), values))
        .collect();
    Panel::new(subjects, &time, &response, covariates, missing).map_err(|e| {
        // Core counts rows from 1; turn that into the file's line and name the column.
        let line = e.row().and_then(|r| lines.get(r - 1).copied());
        let column = e.argument().map(|a| match a {
            "subject" => cols.subject.to_string(),
            "time" => cols.time.to_string(),
            "response" => cols.response.to_string(),
            other => other.to_string(),
        });
        CliError::Core {
            file: Some(file.clone()),
            line,
            column,
            error: Box::new(e),
        }
    })
}

/// A cell as a number: NaN for a missing-value token, `None` when it is not a number.
fn parse_number(s: &str, dialect: &Dialect) -> Option<f64> {
    if dialect.na.iter().any(|t| t == s) {
        return Some(f64::NAN);
    }
    if dialect.decimal == b',' {
        // With a decimal comma a point is not a decimal mark (nor a thousands mark we guess).
        if s.contains('.') {
            return None;
        }
        return s.replace(',', ".").parse::<f64>().ok();
    }
    s.parse::<f64>().ok()
}

/// Whether a cell reads as a numeric id: a number that starts with a digit (after an optional
/// sign) and has no leading zero before another digit, so `007` stays text.
fn numeric_id(s: &str, dialect: &Dialect) -> Option<f64> {
    let digits = s.strip_prefix(['+', '-']).unwrap_or(s);
    let mut chars = digits.chars();
    let first = chars.next()?;
    if !first.is_ascii_digit() || (first == '0' && chars.next().is_some_and(|c| c.is_ascii_digit()))
    {
        return None;
    }
    parse_number(s, dialect).filter(|x| !x.is_nan())
}

/// Numeric ids when every filled cell is a number without a leading zero (integers exactly,
/// else as floating point, where the core refuses a fractional id); otherwise text kept as is.
fn subject_ids(cells: Vec<Option<String>>, dialect: &Dialect) -> SubjectIds {
    if let Some(ints) = cells
        .iter()
        .map(|c| match c {
            None => Some(None),
            Some(s) => numeric_id(s, dialect)
                .and_then(|_| s.strip_prefix('+').unwrap_or(s).parse::<i64>().ok())
                .map(Some),
        })
        .collect::<Option<Vec<_>>>()
    {
        return SubjectIds::Int(ints);
    }
    if let Some(floats) = cells
        .iter()
        .map(|c| match c {
            None => Some(f64::NAN),
            Some(s) => numeric_id(s, dialect),
        })
        .collect::<Option<Vec<_>>>()
    {
        return SubjectIds::Float(floats);
    }
    SubjectIds::Text(cells)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn comma() -> Dialect {
        Dialect {
            decimal: b',',
            ..Dialect::default()
        }
    }

    #[test]
    fn numbers_and_missing_markers() {
        let d = Dialect::default();
        assert_eq!(parse_number("1.5", &d), Some(1.5));
        assert!(parse_number("NA", &d).unwrap().is_nan());
        assert!(parse_number("", &d).unwrap().is_nan());
        assert!(parse_number(".", &d).unwrap().is_nan());
        assert_eq!(parse_number("-inf", &d), Some(f64::NEG_INFINITY));
        assert_eq!(parse_number("abc", &d), None);
        assert_eq!(parse_number("1,5", &comma()), Some(1.5));
        assert_eq!(parse_number("1.5", &comma()), None);
    }

    #[test]
    fn id_rule() {
        let d = Dialect::default();
        let s = |v: &[&str]| v.iter().map(|x| Some(x.to_string())).collect::<Vec<_>>();
        // 1 and 1.0 are one number.
        assert_eq!(
            subject_ids(s(&["1", "1.0"]), &d),
            SubjectIds::Float(vec![1.0, 1.0])
        );
        assert_eq!(
            subject_ids(s(&["1", "+2", "-3"]), &d),
            SubjectIds::Int(vec![Some(1), Some(2), Some(-3)])
        );
        // A leading zero or a non-number keeps the column as text, exactly.
        assert_eq!(
            subject_ids(s(&["007", "7"]), &d),
            SubjectIds::Text(s(&["007", "7"]))
        );
        assert_eq!(
            subject_ids(s(&["1", "a"]), &d),
            SubjectIds::Text(s(&["1", "a"]))
        );
        assert_eq!(
            subject_ids(s(&["inf", "7"]), &d),
            SubjectIds::Text(s(&["inf", "7"]))
        );
        assert_eq!(
            subject_ids(vec![Some("1".into()), None], &d),
            SubjectIds::Int(vec![Some(1), None])
        );
        assert_eq!(
            subject_ids(s(&["0", "10"]), &d),
            SubjectIds::Int(vec![Some(0), Some(10)])
        );
    }

    #[test]
    fn delimiter_detection() {
        assert_eq!(detect_delimiter(b"a,b,c\n1,2,3", b'.'), b',');
        assert_eq!(detect_delimiter(b"a;b;c\n1,5;2;3", b'.'), b';');
        assert_eq!(detect_delimiter(b"a\tb\tc\n", b'.'), b'\t');
        assert_eq!(detect_delimiter(b"a|b|c\n", b'.'), b'|');
        // Quoted delimiters do not count; a lone column reads as comma-delimited.
        assert_eq!(detect_delimiter(b"\"a,b\";c\n", b'.'), b';');
        assert_eq!(detect_delimiter(b"abc\n", b'.'), b',');
        assert_eq!(detect_delimiter(b"abc\n", b','), b';');
    }
}
