//! Reading a CSV file into the columns a panel needs, with errors that name the line and column.

use std::path::Path;

use trajweave_core::{Covariate, Missing, Panel, SubjectIds};

use crate::error::CliError;

/// Which columns hold what.
pub struct Columns<'a> {
    pub subject: &'a str,
    pub time: &'a str,
    pub response: &'a str,
    pub covariates: &'a [String],
}

/// Reads `path` and builds a panel. Blank cells, `NA` and `NaN` read as missing numbers; a
/// subject column whose every filled cell is a whole number holds integer ids, else text ids.
pub fn read_panel(path: &Path, cols: &Columns, missing: Missing) -> Result<Panel, CliError> {
    let file = path.display().to_string();
    let handle = std::fs::File::open(path).map_err(|e| CliError::io(&file, e.to_string()))?;
    read_panel_from(handle, &file, cols, missing)
}

/// As [`read_panel`], from any reader; `file` names the source in messages.
pub fn read_panel_from(
    source: impl std::io::Read,
    file: &str,
    cols: &Columns,
    missing: Missing,
) -> Result<Panel, CliError> {
    let file = file.to_string();
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(source);
    let headers = reader
        .headers()
        .map_err(|e| CliError::csv(&file, &e))?
        .clone();
    let find = |option: &str, name: &str| -> Result<usize, CliError> {
        headers
            .iter()
            .position(|h| h == name)
            .ok_or_else(|| CliError::Column {
                file: file.clone(),
                option: option.to_string(),
                name: name.to_string(),
                available: headers.iter().map(String::from).collect(),
            })
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
            parse_number(cell(at)).ok_or_else(|| CliError::Cell {
                file: file.clone(),
                line,
                column: name.to_string(),
                value: cell(at).to_string(),
            })
        };
        let id = cell(subject_at);
        // The missing-value markers of numbers mean a missing id too, never a subject "NA".
        let is_missing = parse_number(id).is_some_and(f64::is_nan);
        subject_text.push((!is_missing).then(|| id.to_string()));
        time.push(number(time_at, cols.time)?);
        response.push(number(response_at, cols.response)?);
        for (k, &at) in covariate_at.iter().enumerate() {
            covariates[k].push(number(at, &cols.covariates[k])?);
        }
        lines.push(line);
    }

    let subjects = integer_ids(&subject_text).unwrap_or(SubjectIds::Text(subject_text));
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

fn parse_number(s: &str) -> Option<f64> {
    match s {
        "" | "NA" | "NaN" | "nan" | "NAN" => Some(f64::NAN),
        _ => s.parse::<f64>().ok(),
    }
}

/// Integer ids when every filled cell is a whole number, else `None` (text ids).
fn integer_ids(cells: &[Option<String>]) -> Option<SubjectIds> {
    cells
        .iter()
        .map(|c| match c {
            None => Some(None),
            Some(s) => s.parse::<i64>().ok().map(Some),
        })
        .collect::<Option<Vec<_>>>()
        .map(SubjectIds::Int)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_and_missing_markers() {
        assert_eq!(parse_number("1.5"), Some(1.5));
        assert!(parse_number("NA").unwrap().is_nan());
        assert!(parse_number("").unwrap().is_nan());
        assert_eq!(parse_number("-inf"), Some(f64::NEG_INFINITY));
        assert_eq!(parse_number("abc"), None);
    }

    #[test]
    fn mixed_ids_are_text() {
        let cells = vec![Some("1".to_string()), Some("a".to_string())];
        assert!(integer_ids(&cells).is_none());
        let cells = vec![Some("1".to_string()), None];
        assert_eq!(
            integer_ids(&cells),
            Some(SubjectIds::Int(vec![Some(1), None]))
        );
    }
}
