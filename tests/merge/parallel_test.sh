#!/usr/bin/env bash
# The GNU parallel example (contrib/parallel/run_parts.sh) on the benchmark's simulated
# plates, in 4 parts, merged: every byte must equal one `vzero rates` run over all plates
# (the check value: that one run). Skipped (77) when GNU parallel is not installed.
#   bash tests/merge/parallel_test.sh VZERO MERGE_SIM_PLATES SOURCE_DIR
set -euo pipefail
vz=$1 sim=$2 root=$3
command -v parallel >/dev/null || { echo "skipped: GNU parallel is not installed (apt-get install parallel)"; exit 77; }
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cd "$tmp"
# 10 plates of 384 wells x 30 reads (wide, grid and long exports), 4 parts of 2 or 3 plates.
"$sim" plates 10 384 30
ls plates/plate_* >files.txt
options=(--epsilon 8000 --path-cm 1)  # the simulator's signal scale (tests/bench/bench_files.hpp)
mkdir one
# shellcheck disable=SC2046
"$vz" rates $(cat files.txt) --layout plates/map_384.csv "${options[@]}" \
  -o one/rates.csv --traces one/traces.csv --summary one/summary.csv --quiet
VZERO=$vz bash "$root/contrib/parallel/run_parts.sh" files.txt plates/map_384.csv merged 4 "${options[@]}"
[ "$(ls merged.parts | grep -c '^part_...$')" = 4 ] || { echo "expected 4 parts"; ls merged.parts; exit 1; }
[ "$(ls one)" = "$(ls merged)" ] || { echo "different files: $(ls one) / $(ls merged)"; exit 1; }
for f in rates.csv traces.csv summary.csv datapackage.json; do
  cmp "one/$f" "merged/$f"
done
echo "same: rates.csv traces.csv summary.csv datapackage.json of 4 merged parts and of one run ($(wc -l <one/rates.csv) lines of rates)"
