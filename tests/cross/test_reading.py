"""The CLI's file reading against pandas `read_csv` as the reader of record: the demo data, with
a few missing covariate cells, written by pandas as comma-separated, semicolon-separated with a
decimal comma, the same gzipped, and tab-separated with `.` for a missing value. Every version
must give the CLI the description pandas' frame gives the Python binding (exactly: both
serialise the same core result), and R's `read.csv2` the same within the printing round-off of
jsonlite. Subject ids follow one rule in every front: numeric columns compare numerically,
text is kept exactly.

Needs the CLI binary, the installed R package and the Python binding (`make cross-test`).
"""

import gzip
import json

import numpy as np
import pandas as pd

import trajweave as tw
from test_identity import DEMO, DEMO_COVARIATES, R_REL_TOL, cli, rscript, same

COLUMNS = ["--subject", "patient", "--time", "years", "--response", "egfr"]
COV_FLAGS = [a for c in DEMO_COVARIATES for a in ("--covariate", c)]


def demo_with_gaps():
    df = pd.read_csv(DEMO)
    rng = np.random.default_rng(3)
    for col in ["age", "acr"]:
        df.loc[rng.choice(len(df), 25, replace=False), col] = np.nan
    return df


def describe_cli(path, *flags):
    return json.loads(cli("describe", path, *COLUMNS, *COV_FLAGS, "--missing", "drop",
                          "--format", "json", *flags))


def test_every_dialect_matches_pandas(tmp_path):
    df = demo_with_gaps()
    comma = tmp_path / "registry.csv"
    df.to_csv(comma, index=False)
    semi = tmp_path / "registry_semicolon.csv"
    df.to_csv(semi, index=False, sep=";", decimal=",")
    gz = tmp_path / "registry_semicolon.csv.gz"
    gz.write_bytes(gzip.compress(semi.read_bytes()))
    tab = tmp_path / "registry.tsv"
    df.to_csv(tab, index=False, sep="\t", na_rep=".")

    # Reference: pandas reads the semicolon file with sep=";", decimal=",".
    ref = pd.read_csv(semi, sep=";", decimal=",")
    pd.testing.assert_frame_equal(ref, pd.read_csv(comma))
    want = tw.Panel.from_frame(ref, "patient", "years", "egfr", DEMO_COVARIATES,
                               missing="drop").describe().to_dict()
    assert want["rows_dropped"] == int(ref[DEMO_COVARIATES].isna().any(axis=1).sum())
    assert want["dropped_by_column"] == [
        {"column": c, "rows": int(ref[c].isna().sum())} for c in ["age", "acr"]
    ]
    same(describe_cli(comma), want)
    same(describe_cli(semi, "--decimal", ","), want)
    same(describe_cli(semi, "--decimal", ",", "--delimiter", ";"), want)
    same(describe_cli(gz, "--decimal", ","), want)
    same(describe_cli(tab), want)

    code = f"""
df <- read.csv2("{semi}")
p <- panel_from_frame(df, "patient", "years", "egfr", c("age", "female", "diabetes", "acr"),
  missing = "drop")
cat(jsonlite::toJSON(unclass(describe(p)), auto_unbox = TRUE, digits = NA, null = "null", na = "null"))
"""
    same(json.loads(rscript(code, tmp_path)), want, rel=R_REL_TOL)


def test_subject_id_rule_in_every_front(tmp_path):
    text = tmp_path / "text_ids.csv"
    text.write_text("id,t,y\n007,0,1\n7,0,2\n007,1,3\n")
    number = tmp_path / "number_ids.csv"
    number.write_text("id,t,y\n1,0,1\n1.0,1,2\n2,0,3\n")

    def ids(d):
        return [s["subject"] for s in d["per_subject"]]

    flags = ["--subject", "id", "--time", "t", "--response", "y", "--format", "json"]
    assert ids(json.loads(cli("describe", text, *flags))) == ["007", "7"]
    assert ids(json.loads(cli("describe", number, *flags))) == [1, 2]
    # Python: text read as text (pandas dtype=str) stays exact; numbers (pandas float64) merge.
    py_text = tw.Panel.from_frame(pd.read_csv(text, dtype={"id": str}), "id", "t", "y")
    py_number = tw.Panel.from_frame(pd.read_csv(number), "id", "t", "y")
    assert py_text.subject_ids == ["007", "7"] and py_number.subject_ids == [1, 2]
    code = f"""
a <- panel_from_frame(read.csv("{text}", colClasses = c(id = "character")), "id", "t", "y")
b <- panel_from_frame(read.csv("{number}"), "id", "t", "y")
cat(jsonlite::toJSON(list(text = panel_subject_ids(a), number = panel_subject_ids(b))))
"""
    r = json.loads(rscript(code, tmp_path))
    assert r == {"text": ["007", "7"], "number": [1, 2]}
