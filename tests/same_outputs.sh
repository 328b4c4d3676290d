#!/usr/bin/env bash
# Writes every output vzero makes for a fixed set of runs into one folder, so that two
# builds (before and after a refactoring or a speed change) can be compared byte for byte.
#
#   bash tests/same_outputs.sh run BUILD_DIR OUT_DIR   # BUILD_DIR has vzero and, when built
#                                                     # with -DVZERO_BENCH=ON, tests/bench/*
#   bash tests/same_outputs.sh compare OUT_A OUT_B     # exit 0 when they are the same
#
# The runs: the invented demo plates (every shape, conversion path and output: rates,
# traces, summary, datapackage.json, fit, diagnostics, report) and the benchmark's
# simulated wide, grid and long plates with a 10-plate batch (vzero_bench --quick writes
# them; its generator is seeded, so they are the same files every time). With
# vzero_accuracy, its per-well listing of 3,200 simulated wells is kept too.
# Inputs are copied into OUT_DIR/in and every command runs from OUT_DIR with relative paths,
# so the recorded paths do not depend on where OUT_DIR is. `compare` ignores the tool
# version recorded in datapackage.json and fit.json, and reports report.html apart (the
# page may change on purpose; the tables may not).
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)

run() {
  local build out
  build=$(cd "$1" && pwd)
  mkdir -p "$2"
  out=$(cd "$2" && pwd)
  local vz="$build/vzero"
  [ -x "$vz" ] || { echo "no vzero program in $build" >&2; exit 1; }
  rm -rf "$out/in" "$out/out"
  mkdir -p "$out/in" "$out/out"
  cp "$root"/demo-data/*.csv "$root"/demo-data/*.txt "$root"/demo-data/*.toml "$out/in/"
  if [ -x "$build/tests/bench/vzero_bench" ]; then
    "$build/tests/bench/vzero_bench" --dir "$out/in/sim" --sections files,batch --quick >/dev/null
    rm -rf "$out/in/sim/out"
  fi
  cd "$out"
  local log=out/commands.txt
  : >"$log"
  # Every command's status and console output are part of what is compared.
  v() {
    echo "\$ vzero $*" >>"$log"
    set +e
    "$vz" "$@" >>"$log" 2>&1
    echo "exit $?" >>"$log"
    set -e
  }
  local d=in
  v inspect $d/hydrolase_wide.csv
  v inspect $d/hydrolase_grid.txt
  v inspect $d/hydrolase_long.csv
  v inspect $d/hydrolase_wide_semicolon.csv
  mkdir -p out/demo
  v rates $d/hydrolase_wide.csv --layout $d/hydrolase_map.csv --method $d/esterase_method.toml \
    -o out/demo/rates.csv --summary out/demo/summary.csv --traces out/demo/traces.csv --report out/demo/run_report.html
  v fit out/demo/rates.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM \
    --enzyme enzyme_nM -o out/demo/fit.csv --json out/demo/fit.json --diagnostics out/demo/diagnostics.csv
  v fit out/demo/summary.csv --x substrate --group inhibitor_uM -o out/demo/fit_mm.csv --json out/demo/fit_mm.json
  v report --rates out/demo/rates.csv --traces out/demo/traces.csv --summary out/demo/summary.csv \
    --fit out/demo/fit.json --diagnostics out/demo/diagnostics.csv --package out/demo/datapackage.json \
    -o out/demo/report.html
  local shape
  for shape in grid:hydrolase_grid.txt long:hydrolase_long.csv semicolon:hydrolase_wide_semicolon.csv; do
    mkdir -p "out/${shape%%:*}"
    v rates "$d/${shape#*:}" --layout $d/hydrolase_map_grid.csv --method $d/esterase_method.toml \
      -o "out/${shape%%:*}/rates.csv" --summary "out/${shape%%:*}/summary.csv" --quiet
  done
  mkdir -p out/water out/fluor out/activity
  v rates $d/hydrolase_wide_waterpeak.csv --layout $d/hydrolase_map.csv --epsilon 18000 --water-peak \
    --blank matched --traces out/water/traces.csv -o out/water/rates.csv
  v rates $d/protease_fluor_wide.csv --layout $d/protease_fluor_map.csv --standards --blank matched \
    -o out/fluor/rates.csv --summary out/fluor/summary.csv --traces out/fluor/traces.csv
  v rates $d/hydrolase_wide.csv --layout $d/hydrolase_map.csv --method $d/esterase_method.toml \
    --well-volume-ul 200 --window leading --estimator ols -o out/activity/rates.csv
  if [ -d in/sim ]; then
    local f n
    for f in in/sim/*_96x30.* in/sim/*_1536x30.*; do
      n=$(basename "$f"); n=${n%.*}
      mkdir -p "out/sim_$n"
      case "$n" in *_96x*) map=in/sim/map_96.csv ;; *) map=in/sim/map_1536.csv ;; esac
      v rates "$f" --layout "$map" --epsilon 6220 --path-cm 1 --signal-ceiling 2.5 \
        -o "out/sim_$n/rates.csv" --summary "out/sim_$n/summary.csv" --traces "out/sim_$n/traces.csv" --quiet
    done
    mkdir -p out/sim_batch
    v rates in/sim/batch/*.csv --layout in/sim/map_1536.csv --epsilon 6220 --path-cm 1 --signal-ceiling 2.5 \
      -o out/sim_batch/rates.csv --summary out/sim_batch/summary.csv --threads 2
  fi
  if [ -x "$build/tests/bench/vzero_accuracy" ]; then
    "$build/tests/bench/vzero_accuracy" --worst 3200 >out/accuracy.txt 2>&1 || echo "exit $?" >>out/accuracy.txt
  fi
  echo "outputs in $out/out ($(find out -type f | wc -l) files)"
}

# The version fields are the only lines allowed to differ.
normalise() {
  case "$1" in
    *.json) sed -E 's/"(tool_version|version)": *"[^"]*"/"\1": "-"/g' "$1" ;;
    *) cat "$1" ;;
  esac
}

# OUT_DIR as given to `run`, or its out/ folder itself; anything else is an error (never "same").
outputs_of() {
  if [ -d "$1/out" ]; then echo "$1/out"
  elif [ -d "$1" ] && [ "$(basename "$1")" = out ]; then echo "$1"
  else echo "$0: no outputs in $1 (give the OUT_DIR of a run)" >&2; return 1
  fi
}

compare() {
  local a b bad=0 f
  a=$(outputs_of "$1") || exit 2
  b=$(outputs_of "$2") || exit 2
  while IFS= read -r f; do
    case "$f" in *.html) continue ;; esac
    if [ ! -f "$b/$f" ]; then echo "only in $1: $f"; bad=1; continue; fi
    if ! cmp -s <(normalise "$a/$f") <(normalise "$b/$f"); then
      echo "differs: $f"
      diff <(normalise "$a/$f") <(normalise "$b/$f") | head -8 || true
      bad=1
    fi
  done < <(cd "$a" && find . -type f | sort)
  while IFS= read -r f; do
    [ -f "$a/$f" ] || { echo "only in $2: $f"; bad=1; }
  done < <(cd "$b" && find . -type f | sort)
  while IFS= read -r f; do
    cmp -s "$a/$f" "$b/$f" 2>/dev/null || echo "note: $f differs (the report page is compared by eye)"
  done < <(cd "$a" && find . -name '*.html' | sort)
  [ $bad = 0 ] && echo "same: every table, JSON file and console output is byte-identical"
  return $bad
}

case "${1:-}" in
  run) [ $# = 3 ] || { echo "usage: $0 run BUILD_DIR OUT_DIR" >&2; exit 2; }; run "$2" "$3" ;;
  compare) [ $# = 3 ] || { echo "usage: $0 compare OUT_A OUT_B" >&2; exit 2; }; compare "$2" "$3" ;;
  *) sed -n '2,17p' "$0" >&2; exit 2 ;;
esac
