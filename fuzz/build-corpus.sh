#!/usr/bin/env bash
# Build the seed corpora of the fuzz targets from the repository's own files:
#   metric_file       metrics/*.toml and the file-only metric tests/data/ayon-beato-garcia.toml
#   measurement_file  examples/measurement_*.toml
#   checks_file       examples/ci-checks.toml and tests/checks/*.toml
#   scan_file         a real scan of the request the harness reads with (tests/common/readers.rs)
#                     and a half-written copy of it
# Run from anywhere; writes fuzz/corpus/<target>/.
set -euo pipefail
cd "$(dirname "$0")"
root=..
for t in metric_file measurement_file checks_file scan_file; do mkdir -p "corpus/$t"; done
cp "$root"/metrics/*.toml "$root"/tests/data/ayon-beato-garcia.toml corpus/metric_file/
cp "$root"/examples/measurement_*.toml corpus/measurement_file/
cp "$root"/examples/ci-checks.toml "$root"/tests/checks/*.toml corpus/checks_file/
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
(cd "$root" && cargo run --release --quiet -- scan --metric reissner-nordstrom \
  --grid q=0:0.9:4 --inclination 30 --out "$tmp/s.jsonl" > /dev/null)
cp "$tmp/s.jsonl" corpus/scan_file/complete.jsonl
size=$(wc -c < "$tmp/s.jsonl")
head -c $((size * 2 / 3)) "$tmp/s.jsonl" > corpus/scan_file/half-written.jsonl
for t in metric_file measurement_file checks_file scan_file; do
  echo "corpus/$t: $(ls "corpus/$t" | wc -l) seeds"
done
