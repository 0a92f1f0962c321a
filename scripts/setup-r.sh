#!/usr/bin/env bash
# Installs R with testthat and jsonlite from Debian's packages when they are missing, and nlme,
# used only by tests/reference/screen_nlme_r.R as an outside reference (never by the package).
# CRAN is not reachable from these machines, so every R dependency is a Debian r-cran-* package.
set -euo pipefail
have_r() {
  command -v Rscript >/dev/null 2>&1 &&
    Rscript -e 'ok <- all(sapply(c("testthat", "jsonlite", "nlme"), requireNamespace, quietly = TRUE)); quit(status = if (ok) 0 else 1)' >/dev/null 2>&1
}
if have_r; then
  exit 0
fi
SUDO=""
if [ "$(id -u)" -ne 0 ]; then SUDO=sudo; fi
echo "Installing R from Debian's packages (a few minutes)..."
$SUDO apt-get update -q
DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -q --no-install-recommends \
  r-base-dev r-cran-testthat r-cran-jsonlite r-cran-nlme
have_r
