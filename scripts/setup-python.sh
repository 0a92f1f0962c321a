#!/usr/bin/env bash
# Creates the local virtual environment .venv with the packages the tests need (from PyPI).
# Reinstalls only when tests/requirements.txt changes.
set -euo pipefail
venv=.venv
stamp=$venv/.requirements
if [ -x "$venv/bin/python" ] && [ -f "$stamp" ] && cmp -s "$stamp" tests/requirements.txt; then
  exit 0
fi
python3 -m venv "$venv"
"$venv/bin/python" -m pip install -q --upgrade pip
"$venv/bin/python" -m pip install -q -r tests/requirements.txt
cp tests/requirements.txt "$stamp"
