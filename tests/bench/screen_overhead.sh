#!/usr/bin/env bash
# The cost of screening on the benchmark's 100-plate batch (100 × 1536 wells × 60 reads,
# simulated, invented): `vzero rates` as section 4 of vzero_bench runs it, once with the
# benchmark's plate map (no controls) and once with control roles in the map and
# --plate-quality and --hit-threshold on (rates.csv then gains activity_pct, inhibition_pct
# and hit, and the plate-quality table is written). Runs alternate; each time is the best of
# REPS. docs/performance.md quotes the result.
#
#   bash tests/bench/screen_overhead.sh [REPS] [THREADS]
#   VZERO_BENCH_BUILD=build VZERO_BENCH_DIR=/tmp/vzero-bench bash tests/bench/screen_overhead.sh 5 2
#
# The batch and map_1536.csv are those vzero_bench writes ($VZERO_BENCH_DIR, generated here by
# `vzero_bench --sections batch` when missing). The controls map turns sample columns 1–2 into
# full-activity and 43–44 into no-activity wells (their substrate varies by row, so the
# plates' Z′ means nothing here: this measures time only).
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
build=${VZERO_BENCH_BUILD:-$root/build-bench}
dir=${VZERO_BENCH_DIR:-/tmp/vzero-bench}
reps=${1:-5}
threads=${2:-2}

if [ ! -x "$build/tests/bench/vzero_bench" ] || [ ! -x "$build/vzero" ]; then
  cmake -S "$root" -B "$build" -G Ninja -DCMAKE_BUILD_TYPE=Release -DVZERO_BENCH=ON >/dev/null
  cmake --build "$build" --target vzero vzero_bench -j2 >/dev/null
fi
mkdir -p "$dir"
if [ ! -f "$dir/batch/plate_100.csv" ] || [ ! -f "$dir/map_1536.csv" ]; then
  echo "generating the batch in $dir (vzero_bench --sections batch --reps 1)" >&2
  "$build/tests/bench/vzero_bench" --dir "$dir" --sections batch --reps 1 >/dev/null
fi

# well,role,substrate,enzyme: columns 1-2 full-activity, 43-44 no-activity.
awk -F, 'BEGIN { OFS = "," }
  /^#/ || $1 == "well" { print; next }
  { col = substr($1, match($1, /[0-9]+$/)) + 0
    if ($2 == "sample" && col <= 2) $2 = "full-activity"
    else if ($2 == "sample" && col >= 43 && col <= 44) $2 = "no-activity"
    print }' "$dir/map_1536.csv" >"$dir/map_1536_controls.csv"

files=("$dir"/batch/plate_*.csv)
out=$(mktemp -d "${TMPDIR:-/tmp}/vzero-screen-XXXXXX")
trap 'rm -rf "$out"' EXIT
common=(--epsilon 8000 --path-cm 1 --signal-ceiling 2.5 -o "$out/rates.csv" --summary "$out/summary.csv" --quiet
        --threads "$threads")

# One run: "wall cpu" in seconds (cpu = user + system of vzero and its threads).
seconds() {
  local TIMEFORMAT='%R %U %S' t
  t=$({ time "$@" >/dev/null; } 2>&1)
  awk -v t="${t##*$'\n'}" 'BEGIN { split(t, a, " "); printf "%.3f %.3f\n", a[1], a[2] + a[3] }'
}
min() { awk -v a="$1" -v b="$2" 'BEGIN { print (a < b ? a : b) }'; }
off_wall=1e9 off_cpu=1e9 on_wall=1e9 on_cpu=1e9
for ((i = 0; i < reps; i++)); do
  read -r w c < <(seconds "$build/vzero" rates "${files[@]}" --layout "$dir/map_1536.csv" "${common[@]}")
  off_wall=$(min "$w" "$off_wall") off_cpu=$(min "$c" "$off_cpu")
  read -r w c < <(seconds "$build/vzero" rates "${files[@]}" --layout "$dir/map_1536_controls.csv" "${common[@]}" \
                    --plate-quality "$out/plate_quality.csv" --hit-threshold 50)
  on_wall=$(min "$w" "$on_wall") on_cpu=$(min "$c" "$on_cpu")
done
rows=$(($(wc -l <"$out/plate_quality.csv") - 1))
printf '100-plate batch, %s thread(s), best of %s (wall, and CPU = user + system):\n' "$threads" "$reps"
printf '  no controls (screening off)                    %7.2f s wall  %7.2f s CPU\n' "$off_wall" "$off_cpu"
printf '  controls + --plate-quality + --hit-threshold   %7.2f s wall  %7.2f s CPU  (%d plate-quality rows)\n' \
  "$on_wall" "$on_cpu" "$rows"
awk -v a="$on_wall" -v b="$off_wall" -v c="$on_cpu" -v d="$off_cpu" \
  'BEGIN { printf "  extra time: %.1f %% wall, %.1f %% CPU\n", 100 * (a - b) / b, 100 * (c - d) / d }'
