#!/usr/bin/env bash
# Parallel efficiency of MPI runs at 1 and 2 ranks, and rank 0's service rate, for
# docs/cluster.md. Needs hyperfine, Open MPI and an umbral built with `--features mpi`
# (`cargo build --release --features mpi --bin umbral --example cluster_handout`).
#
# Usage: benches/cluster.sh [RUNS]   (from the repository's folder; as root, export
# OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1 first)
set -euo pipefail
runs=${1:-3}
umbral=$(realpath target/release/umbral)
handout=$(realpath target/release/examples/cluster_handout)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$work"
mpi="mpirun --oversubscribe --bind-to none"

# A mixed scan: 39 points of Johannsen-Psaltis (eps3 from -2 to 4 at a = 0.5, 0.7, 0.9), of
# which those without a horizon cost nothing and the others are ray traced (curves from 64
# points, doubled where needed; the table in docs/cluster.md was measured with exactly 32).
scan="scan --metric johannsen-psaltis --grid eps3=-2:4:13 --grid a=0.5:0.9:3 --inclination 50"
scan="$scan --points 64 --tolerance 1e-7 --quiet --out s.jsonl"
hyperfine --runs "$runs" --prepare 'rm -f s.jsonl' --export-markdown mixed.md \
  -n "1 process, 1 thread" "RAYON_NUM_THREADS=1 $umbral $scan" \
  -n "2 ranks, 1 thread each" "$mpi -x RAYON_NUM_THREADS=1 -np 2 $umbral $scan" \
  -n "1 process, 2 threads" "RAYON_NUM_THREADS=2 $umbral $scan" \
  -n "2 ranks, 2 threads each" "$mpi -x RAYON_NUM_THREADS=2 -np 2 $umbral $scan"
cat mixed.md

# Points that cost nothing (Kerr-Newman without a horizon: a^2 + q^2 > 1): 100 000 points
# through rank 0's loop (each received, decoded, checked into the scan file and counted).
trivial="scan --metric kerr-newman --grid a=0.8:0.99:400 --grid q=0.7:1:250 --inclination 60"
trivial="$trivial --quiet --out t.jsonl"
hyperfine --runs "$runs" --prepare 'rm -f t.jsonl' --export-markdown trivial.md \
  -n "1 process" "$umbral $trivial" \
  -n "2 ranks" "$mpi -np 2 $umbral $trivial"
cat trivial.md

# Round trips and the hand-out rate of trivial items (examples/cluster_handout.rs).
$mpi -np 2 "$handout"
