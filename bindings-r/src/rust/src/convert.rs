//! R values to Rust inputs and Rust results to R values, shared by the entry points.
//!
//! The R wrappers coerce numbers with `as.double()` and text with `enc2utf8()` before calling,
//! so the checks here only catch what slipped past them; they answer with an error, never a
//! panic.

use extendr_api::prelude::*;
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::{Panel, SubjectId};

use crate::error::{invalid_option, Failure};

/// A value as a short text, the way the core shows values in messages: text quoted, numbers
/// plain, anything longer described by its type and length.
pub fn value_text(x: &Robj) -> String {
    if x.len() == 1 && x.class().is_none() {
        match x.rtype() {
            Rtype::Strings => {
                if let Some(s) = Strings::try_from(x.clone()).ok().map(|s| s.elt(0)) {
                    return if s.is_na() {
                        "NA".into()
                    } else {
                        format!("{:?}", s.as_ref() as &str)
                    };
                }
            }
            Rtype::Doubles => {
                if let Some(v) = x.as_real_slice().and_then(|v| v.first()) {
                    return if Rfloat::from(*v).is_na() {
                        "NA".into()
                    } else {
                        format!("{v}")
                    };
                }
            }
            Rtype::Integers => {
                if let Some(&v) = x.as_integer_slice().and_then(|v| v.first()) {
                    return if v == i32::MIN {
                        "NA".into()
                    } else {
                        format!("{v}")
                    };
                }
            }
            Rtype::Logicals => {
                if let Some(v) = x.as_logical_slice().and_then(|v| v.first()) {
                    return if v.is_na() {
                        "NA"
                    } else if v.is_true() {
                        "TRUE"
                    } else {
                        "FALSE"
                    }
                    .into();
                }
            }
            _ => {}
        }
    }
    if x.is_null() {
        return "NULL".into();
    }
    if let Some(class) = x.class().and_then(|mut c| c.next()) {
        return format!("an object of class {class:?}");
    }
    let kind = match x.rtype() {
        Rtype::Doubles => "a numeric vector",
        Rtype::Integers => "an integer vector",
        Rtype::Strings => "a character vector",
        Rtype::Logicals => "a logical vector",
        Rtype::List => "a list",
        Rtype::Function | Rtype::Builtin | Rtype::Special => return "a function".into(),
        _ => return "an R object of another type".into(),
    };
    format!("{kind} of length {}", x.len())
}

/// The numbers of a double vector (the R wrapper has applied `as.double()`).
pub fn real_slice<'a>(x: &'a Robj, argument: &str) -> Result<&'a [f64], Failure> {
    if x.rtype() != Rtype::Doubles {
        return Err(invalid_option(argument, value_text(x), "give numbers"));
    }
    // A zero-length vector has no data pointer worth reading.
    if x.is_empty() {
        return Ok(&[]);
    }
    x.as_real_slice()
        .ok_or_else(|| invalid_option(argument, value_text(x), "give numbers"))
}

/// `NULL` as `None`, otherwise the numbers.
pub fn optional_reals(x: &Robj, argument: &str) -> Result<Option<Vec<f64>>, Failure> {
    if x.is_null() {
        return Ok(None);
    }
    real_slice(x, argument).map(|v| Some(v.to_vec()))
}

/// `NULL` as `None`, otherwise exactly one number.
pub fn optional_real(x: &Robj, argument: &str) -> Result<Option<f64>, Failure> {
    if x.is_null() {
        return Ok(None);
    }
    match real_slice(x, argument)? {
        [v] => Ok(Some(*v)),
        _ => Err(invalid_option(argument, value_text(x), "give one number")),
    }
}

/// The elements of a character vector, `None` for `NA`.
pub fn strings(x: &Robj, argument: &str) -> Result<Vec<Option<String>>, Failure> {
    let s = Strings::try_from(x.clone())
        .map_err(|_| invalid_option(argument, value_text(x), "give text"))?;
    Ok((0..s.len())
        .map(|i| {
            let e = s.elt(i);
            if e.is_na() {
                None
            } else {
                Some(<&str>::from(&e).to_string())
            }
        })
        .collect())
}

/// The elements of a list.
pub fn list_values(x: &Robj, argument: &str) -> Result<Vec<Robj>, Failure> {
    let list = x
        .as_list()
        .ok_or_else(|| invalid_option(argument, value_text(x), "give a list"))?;
    Ok(list.values().collect())
}

/// The (name, value) pairs of a list; an element without a name has name "".
pub fn named_fields(x: &Robj, argument: &str) -> Result<Vec<(String, Robj)>, Failure> {
    let list = x
        .as_list()
        .ok_or_else(|| invalid_option(argument, value_text(x), "give a list"))?;
    Ok(list.iter().map(|(k, v)| (k.to_string(), v)).collect())
}

/// The value named `name` among `fields`, `NULL` when there is none (as R's `$` answers).
pub fn field(fields: &[(String, Robj)], name: &str) -> Robj {
    fields
        .iter()
        .find(|(k, _)| k == name)
        .map_or_else(|| ().into(), |(_, v)| v.clone())
}

/// A named list.
pub fn named_list<'a>(
    names: impl ExactSizeIterator<Item = &'a str>,
    values: Vec<Robj>,
) -> Result<Robj, Failure> {
    let mut list: Robj = List::from_values(values).into();
    list.set_names(names)?;
    Ok(list)
}

/// A data.frame of equal-length columns with automatic row names.
pub fn data_frame<'a>(
    names: impl ExactSizeIterator<Item = &'a str>,
    columns: Vec<Robj>,
    rows: usize,
) -> Result<Robj, Failure> {
    let mut df = named_list(names, columns)?;
    df.set_class(["data.frame"])?;
    // R's compact form c(NA, -n) stands for 1..n.
    match i32::try_from(rows) {
        Ok(n) => df.set_attrib(row_names_symbol(), [i32::MIN, -n])?,
        Err(_) => df.set_attrib(
            row_names_symbol(),
            (1..=rows).map(|i| i as f64).collect_robj(),
        )?,
    };
    Ok(df)
}

/// A length-one numeric or integer vector without a class, as its number; `None` for anything
/// else and for `NA` (a NaN that is not `NA` passes, for the core to refuse in its words).
fn scalar_number(x: &Robj) -> Option<f64> {
    if x.len() != 1 || x.class().is_some() {
        return None;
    }
    match x.rtype() {
        Rtype::Doubles => x
            .as_real_slice()?
            .first()
            .copied()
            .filter(|v| !Rfloat::from(*v).is_na()),
        Rtype::Integers => x
            .as_integer_slice()?
            .first()
            .filter(|&&i| i != i32::MIN)
            .map(|&i| f64::from(i)),
        _ => None,
    }
}

/// A length-one character vector without a class, as its text; `None` for anything else and
/// for `NA`.
fn scalar_text(x: &Robj) -> Option<String> {
    if x.len() != 1 || x.class().is_some() || x.rtype() != Rtype::Strings {
        return None;
    }
    let s = Strings::try_from(x.clone()).ok()?.elt(0);
    if s.is_na() {
        None
    } else {
        Some(<&str>::from(&s).to_string())
    }
}

/// One number (a length-one double or integer vector, not `NA`).
pub fn one_number(x: &Robj, argument: &str) -> Result<f64, Failure> {
    scalar_number(x).ok_or_else(|| invalid_option(argument, value_text(x), "give one number"))
}

/// A whole number in `0..=max` from one number, or the error worded with `allowed`.
pub fn whole_number(x: &Robj, argument: &str, max: f64, allowed: &str) -> Result<u64, Failure> {
    let v = one_number(x, argument)?;
    if v.fract() == 0.0 && (0.0..=max).contains(&v) {
        Ok(v as u64)
    } else {
        Err(invalid_option(argument, value_text(x), allowed))
    }
}

/// `NULL` as `None`, otherwise exactly one text (not `NA`).
pub fn optional_text(x: &Robj, argument: &str, allowed: &str) -> Result<Option<String>, Failure> {
    if x.is_null() {
        return Ok(None);
    }
    scalar_text(x)
        .map(Some)
        .ok_or_else(|| invalid_option(argument, value_text(x), allowed))
}

/// A smoother option value as the core takes it: one number or one text; anything else
/// (a vector of another length, `NA`, a logical, an object with a class) is refused naming the
/// option.
pub fn option_value(x: &Robj, name: &str) -> Result<OptionValue, Failure> {
    if let Some(v) = scalar_number(x) {
        return Ok(OptionValue::Number(v));
    }
    if let Some(s) = scalar_text(x) {
        return Ok(OptionValue::Text(s));
    }
    Err(invalid_option(
        name,
        value_text(x),
        "give one number or one string",
    ))
}

/// Doubles with R's `NA` where the core has NaN (a value it could not compute).
pub fn reals_na(values: &[f64]) -> Robj {
    values
        .iter()
        .map(|&v| if v.is_nan() { f64::na() } else { v })
        .collect::<Vec<f64>>()
        .into()
}

/// Exactly one text (not `NA`), or the error worded with `allowed`.
pub fn one_text(x: &Robj, argument: &str, allowed: &str) -> Result<String, Failure> {
    scalar_text(x).ok_or_else(|| invalid_option(argument, value_text(x), allowed))
}

/// Subject ids as an R vector: text ids as a character vector, integer ids as doubles (as the
/// JSON rule gives them). `text` says which, so an empty vector still has the panel's type.
pub fn ids_robj(ids: &[SubjectId], text: bool) -> Robj {
    if text {
        ids.iter().map(|id| id.to_string()).collect_robj()
    } else {
        ids.iter()
            .map(|id| match id {
                SubjectId::Int(i) => *i as f64,
                // Not reached: a panel's ids are all of one kind.
                SubjectId::Text(_) => f64::na(),
            })
            .collect_robj()
    }
}

/// True when the panel's ids are text.
pub fn text_ids(panel: &Panel) -> bool {
    matches!(panel.ids().first(), Some(SubjectId::Text(_)))
}

/// Counts held as `usize`, as doubles.
pub fn usize_counts<'a>(values: impl Iterator<Item = &'a usize>) -> Robj {
    values.map(|&v| v as f64).collect::<Vec<f64>>().into()
}

/// A numeric matrix from column-major `values` (`nrow` x `ncol`), with dimnames when given.
pub fn matrix(
    values: Robj,
    nrow: usize,
    ncol: usize,
    rownames: Robj,
    colnames: Robj,
) -> Result<Robj, Failure> {
    let too_big = |_| Failure::Internal("matrix dimension beyond R's integer range".into());
    let dim = [
        i32::try_from(nrow).map_err(too_big)?,
        i32::try_from(ncol).map_err(too_big)?,
    ];
    let mut m = values;
    m.set_attrib(dim_symbol(), dim)?;
    m.set_attrib(dimnames_symbol(), List::from_values([rownames, colnames]))?;
    Ok(m)
}
