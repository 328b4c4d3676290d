#!/usr/bin/env bash
# Many plates on every core of this machine (or on several machines) with GNU parallel
# (Debian package `parallel`), then one merged set of outputs.
#
#   bash contrib/parallel/run_parts.sh FILES.txt MAP.csv OUT_FOLDER [PARTS] [vzero rates options...]
#
#   FILES.txt   your exports, one path per line (as for `vzero rates --files-from`; lines
#               starting with # and blank lines are skipped). Paths are relative to the folder
#               you run this script from, and are recorded as written.
#   MAP.csv     the plate map every export uses (--layout)
#   OUT_FOLDER  where the merged rates.csv, traces.csv, summary.csv and datapackage.json go;
#               each part's own outputs stay in OUT_FOLDER.parts/ (delete them when done)
#   PARTS       how many pieces to cut the list into (default 4); parallel runs as many at
#               once as the machine has cores
#   the rest    options for every `vzero rates` run, e.g. --epsilon 6220 --path-cm 0.55, or
#               --method assay.toml (every part must use the same ones, or the merge refuses)
#
# Example (from the folder that holds the exports):
#   ls plates/*.csv > files.txt
#   bash contrib/parallel/run_parts.sh files.txt map.csv results 8 --method assay.toml
#
# The result is byte for byte what one `vzero rates` run over every file in FILES.txt (in
# its order) would have written; see docs/cluster.md. Set VZERO=/path/to/vzero to use a
# vzero that is not on your PATH. To spread the parts over machines that share this folder,
# add `--sshloginfile nodes.txt` to the parallel command below.
set -euo pipefail
[ $# -ge 3 ] || { sed -n '2,23p' "$0" >&2; exit 2; }
list=$1 map=$2 out=$3
parts=${4:-4}
shift $(($# < 4 ? $# : 4))
vzero=${VZERO:-vzero}
work=$out.parts
rm -rf "$work"
mkdir -p "$work"

# 1. The list without comments and blank lines, cut into consecutive pieces: part_001.txt
#    holds the first files, part_002.txt the next, ... (piece k: lines (k-1)*total/PARTS + 1 to
#    k*total/PARTS, rounded down). Consecutive pieces merged in piece order give the list's order.
grep -v -E '^[[:space:]]*(#|$)' "$list" >"$work/all.txt" || true
total=$(wc -l <"$work/all.txt")
[ "$total" -gt 0 ] || { echo "$list names no export" >&2; exit 1; }
[ "$parts" -le "$total" ] || parts=$total
for k in $(seq 1 "$parts"); do
  awk -v k="$k" -v n="$parts" 'NR > int((k - 1) * n_total / n) && NR <= int(k * n_total / n)' n_total="$total" \
    "$work/all.txt" >"$work/part_$(printf '%03d' "$k").txt"
done
rm "$work/all.txt"

# 2. One `vzero rates` run per piece, each into its own folder (part_001/ ...), as many at once
#    as there are cores. --halt stops everything at the first failed part: its message says
#    which file and why. (-q hands the options over as they are; the function runs in bash.)
run_part() {  # run_part VZERO MAP [options...] PIECE.txt
  local vzero=$1 map=$2 list=${!#}
  local dir=${list%.txt}
  mkdir -p "$dir"
  "$vzero" rates --files-from "$list" --layout "$map" -o "$dir/rates.csv" --traces "$dir/traces.csv" \
    --summary "$dir/summary.csv" --quiet "${@:3:$#-3}"
}
export -f run_part
PARALLEL_SHELL=$BASH parallel --will-cite --halt now,fail=1 -q run_part "$vzero" "$map" "$@" ::: "$work"/part_*.txt

# 3. The parts' outputs merged, in piece order (the glob sorts part_001, part_002, ...).
parts_done=()
for f in "$work"/part_*.txt; do parts_done+=("${f%.txt}"); done
"$vzero" merge "${parts_done[@]}" -o "$out"
