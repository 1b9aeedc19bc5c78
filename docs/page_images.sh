#!/usr/bin/env bash
# Rebuild the page images shown in docs/report.md (80 dpi, full pages).
# Needs resplan installed and pdftoppm (Debian package poppler-utils).
# The page numbers follow the current layout; check them after a layout change.
set -euo pipefail
out=$(cd "$(dirname "$0")" && pwd)/images
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
cd "$work"
for ex in hive-scale pipeline-vibration; do
  resplan init --force --example "$ex" "$ex.toml" >/dev/null
  resplan report "$ex.toml" -o "$ex.pdf" >/dev/null
done
page() { pdftoppm -r 80 -png -singlefile -f "$2" -l "$2" "$1.pdf" "$out/$3"; }
page hive-scale 1 report-page-1          # title block, document control, summary
page hive-scale 4 report-figures         # noise density and cumulative noise
page pipeline-vibration 2 report-chain   # requirement and block diagram
page pipeline-vibration 7 report-alias   # the alias figure
