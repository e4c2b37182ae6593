#!/usr/bin/env bash
# MPI runs compared byte for byte with one process (docs/cluster.md), for an umbral built with
# `--features mpi`: a 2-rank scan that mixes points without a horizon (instant) and ray-traced
# points (slow), a 2-rank image and calibration, and a 2-rank scan whose worker rank is killed
# (SIGKILL) part-way, then rerun: it resumes from the scan file and ends with the same bytes.
#
# Usage: tests/mpi/run.sh PATH/TO/umbral   (as root, e.g. in CI, export
# OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1 first)
set -euo pipefail
umbral=$(realpath "${1:?give the umbral binary built with --features mpi}")
ranks=(mpirun --oversubscribe --bind-to none -np 2)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$work"
passed=0
failed=0
check() { # check NAME FILE-A FILE-B
  if cmp -s "$2" "$3"; then
    echo "ok: $1"
    passed=$((passed + 1))
  else
    echo "FAILED: $1 ($2 and $3 differ)"
    failed=$((failed + 1))
  fi
}

# 14 points of Johannsen-Psaltis: eps3 from -2 to 4 at a = 0.5 and 0.9; at a = 0.9 the largest
# eps3 have no horizon (instant), the others are ray traced from 64 curve points.
scan=(scan --metric johannsen-psaltis --grid eps3=-2:4:7 --grid a=0.5:0.9:2 --inclination 50
  --points 64 --tolerance 1e-6 --quiet)
"$umbral" "${scan[@]}" --out single.jsonl > /dev/null
"${ranks[@]}" "$umbral" "${scan[@]}" --out ranks.jsonl > ranks.txt
if ! grep -q "14 points" ranks.txt || ! grep -q '"no_horizon"' single.jsonl ||
  ! grep -q '"raytrace"' single.jsonl; then
  echo "FAILED: the scan is not the mix of instant and ray-traced points it should be"
  failed=$((failed + 1))
fi
check "2-rank scan (instant and ray-traced points)" single.jsonl ranks.jsonl

image=(image --metric kerr --set a=0.5 --inclination 60 --pixels 24 --blur-m 2)
"$umbral" "${image[@]}" --out single.fits > /dev/null
"${ranks[@]}" "$umbral" "${image[@]}" --out ranks.fits > /dev/null
check "2-rank image" single.fits ranks.fits

calibrate=(calibrate --metric schwarzschild --inclination 30 --resolution-uas 10
  --theta-g-uas 3.8 --pixels 16 --quiet)
"$umbral" "${calibrate[@]}" --out single.json > /dev/null
"${ranks[@]}" "$umbral" "${calibrate[@]}" --out ranks.json > /dev/null
check "2-rank calibration" single.json ranks.json

# A posterior whose table (Kerr-Newman over q, --tabulate) the ranks trace: the same table
# file and the same report.
printf '[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n' > r.toml
infer=(infer --metric kerr-newman --measurement r.toml --quiet --tabulate --table-nodes 9
  --prior q=uniform:0:0.5 --prior inclination=fixed:40 --sampler quadrature --samples 200 --json)
"$umbral" "${infer[@]}" --table-dir single-tables > single-infer.json
"${ranks[@]}" "$umbral" "${infer[@]}" --table-dir ranks-tables > ranks-infer.json
check "2-rank posterior table" single-tables/umbral-table-*.jsonl ranks-tables/umbral-table-*.jsonl
check "2-rank posterior report" single-infer.json ranks-infer.json

# A dead rank: 900 separable points, the worker rank killed once 40 are in the file.
long=(scan --metric kerr-newman --grid a=0:0.9:30 --grid q=0:0.5:30 --inclination 60 --quiet)
"$umbral" "${long[@]}" --out long-single.jsonl > /dev/null
"${ranks[@]}" "$umbral" "${long[@]}" --out long.jsonl > /dev/null 2>&1 &
launcher=$!
worker=""
for _ in $(seq 1 3000); do
  for pid in $(pgrep -P "$launcher" || true); do
    if tr '\0' '\n' < "/proc/$pid/environ" 2>/dev/null | grep -qx "OMPI_COMM_WORLD_RANK=1"; then
      worker=$pid
    fi
  done
  lines=$( (wc -l < long.jsonl) 2>/dev/null || echo 0)
  if [ -n "$worker" ] && [ "$lines" -gt 40 ]; then break; fi
  sleep 0.01
done
kept_before=$(($(wc -l < long.jsonl) - 1))
if [ -n "$worker" ]; then kill -KILL "$worker"; fi
wait "$launcher" || true # the launcher ends the job when a rank dies
on_disk=$(($(wc -l < long.jsonl) - 1))
"${ranks[@]}" "$umbral" "${long[@]}" --out long.jsonl > resumed.txt
kept=$(sed -n 's/.*computed, \([0-9]*\) kept.*/\1/p' resumed.txt)
echo "killed the worker rank with $kept_before points in the file ($on_disk when the job ended); the rerun kept $kept"
if [ -n "$worker" ] && [ "$on_disk" -lt 900 ] && [ "$kept" -ge "$kept_before" ]; then
  passed=$((passed + 1))
  echo "ok: the rerun kept every point that was in the file"
else
  failed=$((failed + 1))
  echo "FAILED: worker '$worker', $on_disk points on disk, $kept kept"
fi
check "2-rank scan resumed after a dead rank" long-single.jsonl long.jsonl

echo "mpi: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
