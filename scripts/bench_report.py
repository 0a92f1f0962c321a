"""Times `trajweave report` (release CLI) on the bundled demo data and on a simulated file of
about 1e6 rows (149,000 subjects of the demo scenario, seed 7), and prints the time and the
sizes of the HTML and JSON files. Each is a single run (the report takes tens of seconds at
the large size).

    .venv/bin/python scripts/bench_report.py [--subjects 149000]
"""

import argparse
import os
import subprocess
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CLI = os.environ.get("TRAJWEAVE_CLI", str(ROOT / "target" / "release" / "trajweave"))


def run(args, out):
    start = time.perf_counter()
    subprocess.run([CLI, "report", *args, "--out", str(out), "--quiet"], check=True)
    took = time.perf_counter() - start
    return took, out.stat().st_size / 1e6, out.with_suffix(".json").stat().st_size / 1e6


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--subjects", type=int, default=149_000)
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        rows = [("demo data (3000 subjects, 20422 rows)", *run([], tmp / "demo.html"))]
        big = tmp / "big.csv"
        subprocess.run([CLI, "simulate", "--subjects", str(a.subjects), "--seed", "7",
                        "--digits", "3", "--out", str(big)], check=True)
        n = sum(1 for _ in big.open()) - 1
        cols = ["--subject", "patient", "--time", "years", "--response", "egfr",
                "--covariate", "age", "--covariate", "female", "--covariate", "diabetes",
                "--covariate", "acr"]
        rows.append((f"{a.subjects} subjects, {n} rows", *run([str(big), *cols], tmp / "big.html")))
    print("| data | report (s) | HTML (MB) | JSON (MB) |")
    print("|---|---|---|---|")
    for name, took, html, js in rows:
        print(f"| {name} | {took:.1f} | {html:.2f} | {js:.2f} |")


if __name__ == "__main__":
    main()
