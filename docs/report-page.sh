#!/usr/bin/env bash
# Makes docs/report-page.png, the picture in the README: page 1 of a report exactly as bracer writes it (the
# demo's session S1 of the control participant AV-P03), rendered by pdftoppm (Debian: poppler-utils).
# SOURCE_DATE_EPOCH fixes the analysis date printed on the page.
set -euo pipefail
cd "$(dirname "$0")/.."
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
SOURCE_DATE_EPOCH=1804842000 bracer demo "$work/bracer-demo" >/dev/null
pdftoppm -png -r 100 -f 1 -l 1 -singlefile "$work"/bracer-demo/reports/AV-P03/*_AV-P03_S1.pdf docs/report-page
ls -l docs/report-page.png
