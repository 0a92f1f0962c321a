//! Reading files: delimiters, the decimal comma, missing-value tokens, gzip, standard input,
//! duplicated headers and the subject-id rule. The reference is the same rows written as a
//! plain comma-separated file: every dialect must give the identical description. (The
//! cross-language suite adds pandas `read_csv(sep=";", decimal=",")` as a reader of record on
//! the demo data.)

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

use serde_json::Value;

const COLUMNS: [&str; 8] = [
    "--subject",
    "id",
    "--time",
    "t",
    "--response",
    "y",
    "--covariate",
    "age",
];

fn temp(name: &str, bytes: &[u8]) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("trajweave-read-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap();
    path
}

fn run(args: &[&str], stdin: Option<&[u8]>) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_trajweave"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary runs");
    let mut input = child.stdin.take().unwrap();
    input.write_all(stdin.unwrap_or(b"")).unwrap();
    drop(input);
    child.wait_with_output().unwrap()
}

fn describe(file: &str, extra: &[&str], stdin: Option<&[u8]>) -> Result<Value, String> {
    let mut args = vec!["describe", file, "--format", "json"];
    args.extend_from_slice(&COLUMNS);
    args.extend_from_slice(extra);
    let o = run(&args, stdin);
    if o.status.success() {
        Ok(serde_json::from_slice(&o.stdout).unwrap())
    } else {
        Err(String::from_utf8_lossy(&o.stderr).trim_end().to_string())
    }
}

/// The rows every dialect below writes: ids 1-3, a missing age in row 4.
const PLAIN: &str = "id,t,y,age\n1,0,10.5,50\n1,1.25,11,50\n2,0,9.75,61.5\n2,2,9,NA\n3,0.5,12,70\n";

fn reference() -> Value {
    let path = temp("plain.csv", PLAIN.as_bytes());
    describe(path.to_str().unwrap(), &["--missing", "drop"], None).unwrap()
}

#[test]
fn every_dialect_reads_the_same_rows() {
    let want = reference();
    // By hand: 5 rows, one dropped for the missing age.
    assert_eq!(want["observations"], 4);
    let semicolon = PLAIN.replace(',', ";").replace('.', ",").replace("NA", "");
    let tab = PLAIN.replace(',', "\t").replace("NA", ".");
    let pipe = PLAIN.replace(',', "|").replace("NA", "NaN");
    let cases: Vec<(&str, Vec<u8>, Vec<&str>)> = vec![
        (
            "semicolon.csv",
            semicolon.clone().into_bytes(),
            vec!["--decimal", ","],
        ),
        (
            "semicolon-flag.csv",
            semicolon.into_bytes(),
            vec!["--decimal", ",", "--delimiter", ";"],
        ),
        ("tab.tsv", tab.into_bytes(), vec![]),
        ("pipe.txt", pipe.into_bytes(), vec![]),
        (
            "sentinel.csv",
            PLAIN.replace("NA", "-99").into_bytes(),
            vec!["--na", "-99"],
        ),
    ];
    for (name, bytes, flags) in cases {
        let path = temp(name, &bytes);
        let mut extra = vec!["--missing", "drop"];
        extra.extend(flags);
        let got = describe(path.to_str().unwrap(), &extra, None).unwrap();
        assert_eq!(got, want, "{name}");
    }
    // Gzip by its magic bytes, whatever the name; standard input as `-`.
    let mut gz = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
    gz.write_all(PLAIN.as_bytes()).unwrap();
    let gz = gz.finish().unwrap();
    let path = temp("data.csv", &gz);
    assert_eq!(
        describe(path.to_str().unwrap(), &["--missing", "drop"], None).unwrap(),
        want
    );
    assert_eq!(
        describe("-", &["--missing", "drop"], Some(&gz)).unwrap(),
        want
    );
    assert_eq!(
        describe("-", &["--missing", "drop"], Some(PLAIN.as_bytes())).unwrap(),
        want
    );
}

#[test]
fn dialect_errors_name_the_flag() {
    let path = temp("plain2.csv", PLAIN.as_bytes());
    let p = path.to_str().unwrap();
    assert_eq!(
        describe(p, &["--delimiter", ":"], None).unwrap_err(),
        "error [invalid_option]: `--delimiter` = \":\" is not allowed: use \",\", \";\", \"tab\" or \"|\" (or leave it out to detect it)"
    );
    assert_eq!(
        describe(p, &["--decimal", "'"], None).unwrap_err(),
        "error [invalid_option]: `--decimal` = \"'\" is not allowed: use \".\" (the default) or \",\""
    );
    assert_eq!(
        describe(p, &["--delimiter", ",", "--decimal", ","], None).unwrap_err(),
        "error [invalid_option]: `--delimiter` = \",\" with --decimal \",\" is not allowed: a comma cannot be both; use --delimiter \";\" (or tab or \"|\") with a decimal comma"
    );
    // Without --na NA, an NA cell is not a number.
    assert_eq!(
        describe(p, &["--na", ""], None).unwrap_err(),
        format!("error [invalid_value]: {p} line 5, column `age`: \"NA\" is not a number; use a number, or leave the cell blank (or NA) for a missing value")
    );
    // A decimal point under --decimal , is not a number either.
    let path = temp("mixed.csv", b"id;t;y;age\n1;0;1.5;50\n");
    let p = path.to_str().unwrap();
    assert_eq!(
        describe(p, &["--decimal", ","], None).unwrap_err(),
        format!("error [invalid_value]: {p} line 2, column `y`: \"1.5\" is not a number; use a number, or leave the cell blank (or NA) for a missing value")
    );
}

#[test]
fn duplicated_header_is_refused_by_name() {
    let path = temp("dup.csv", b"id,t,y,age,y\n1,0,1,50,2\n");
    let p = path.to_str().unwrap();
    assert_eq!(
        describe(p, &[], None).unwrap_err(),
        format!("error [invalid_option]: {p} line 1: `--response` = \"y\" is not allowed: the header names 2 columns \"y\" (columns 3, 5); rename them so each column has its own name")
    );
    // A duplicated column that is not used is no obstacle.
    let path = temp("dup2.csv", b"id,t,y,age,note,note\n1,0,1,50,a,b\n");
    assert!(describe(path.to_str().unwrap(), &[], None).is_ok());
}

#[test]
fn subject_id_rule() {
    let ids = |text: &str| -> Value {
        let path = temp("ids.csv", text.as_bytes());
        describe(path.to_str().unwrap(), &["--missing", "drop"], None).unwrap()["per_subject"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["subject"].clone())
            .collect()
    };
    // Numbers without a leading zero are numeric: 1 and 1.0 are one subject.
    assert_eq!(
        ids("id,t,y,age\n1,0,1,5\n1.0,1,1,5\n2,0,1,5\n"),
        serde_json::json!([1, 2])
    );
    // A leading zero makes the column text, kept exactly: 007 and 7 differ.
    assert_eq!(
        ids("id,t,y,age\n007,0,1,5\n7,1,1,5\n"),
        serde_json::json!(["007", "7"])
    );
    // Missing-value tokens in the id column are missing ids, never a subject "NA".
    assert_eq!(
        ids("id,t,y,age\nA,0,1,5\nNA,1,1,5\n.,0,1,5\n,0,1,5\n"),
        serde_json::json!(["A"])
    );
}
