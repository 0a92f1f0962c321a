//! Reading fixtures whose numbers must arrive bit for bit.
//!
//! serde_json without its `float_roundtrip` feature may parse a decimal to a neighbouring
//! double (1 ulp off). For exact comparisons each number token is handed over as text and
//! parsed with `str::parse::<f64>`, which rounds correctly.
#![allow(dead_code)]

use serde_json::Value;

/// Parses `text` with every number turned into the string `"#<token>"`.
pub fn load_exact(text: &str) -> Value {
    let mut out = String::with_capacity(text.len() * 2);
    let mut chars = text.chars().peekable();
    let mut in_string = false;
    while let Some(c) = chars.next() {
        if in_string {
            out.push(c);
            if c == '\\' {
                if let Some(n) = chars.next() {
                    out.push(n);
                }
            } else if c == '"' {
                in_string = false;
            }
        } else if c == '"' {
            in_string = true;
            out.push(c);
        } else if c == '-' || c.is_ascii_digit() {
            out.push_str("\"#");
            out.push(c);
            while let Some(&n) = chars.peek() {
                if n.is_ascii_digit() || matches!(n, '.' | 'e' | 'E' | '+' | '-') {
                    out.push(n);
                    chars.next();
                } else {
                    break;
                }
            }
            out.push('"');
        } else {
            out.push(c);
        }
    }
    serde_json::from_str(&out).expect("fixture is valid JSON")
}

/// A number of a fixture read by [`load_exact`] (also "nan", "inf", "-inf").
pub fn num(v: &Value) -> f64 {
    let s = v.as_str().expect("fixture: number");
    match s {
        "nan" => f64::NAN,
        "inf" => f64::INFINITY,
        "-inf" => f64::NEG_INFINITY,
        _ => s
            .strip_prefix('#')
            .and_then(|t| t.parse().ok())
            .expect("fixture: number token"),
    }
}

/// An array of numbers.
pub fn nums(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("fixture: array")
        .iter()
        .map(num)
        .collect()
}

/// A whole number.
pub fn int(v: &Value) -> usize {
    num(v) as usize
}
