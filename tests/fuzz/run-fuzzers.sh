#!/bin/sh
# Runs the vzero fuzzers one after another, gently (one job, one worker, nice 10), from a
# fuzz build (cmake --preset fuzz && cmake --build --preset fuzz).
#   tests/fuzz/run-fuzzers.sh [SECONDS_PER_TARGET] [TARGET...]
# Default: 600 s for each of profile wide grid long plate_map detect method xlsx. The growing corpora
# go to build-fuzz/tests/fuzz/corpus-<target>/, findings to artifacts/<target>/, logs to
# logs/<target>.log; a summary line per target is printed at the end.
set -u
seconds=${1:-600}
[ $# -gt 0 ] && shift
targets=${*:-profile wide grid long plate_map detect method xlsx}
here=$(cd "$(dirname "$0")" && pwd)
build=${VZERO_FUZZ_BUILD:-$here/../../build-fuzz}/tests/fuzz
cd "$build" || exit 2
for t in $targets; do
  case $t in
    profile|method) dict=profile.dict; max_len=8192 ;;
    plate_map) dict=plate_map.dict; max_len=8192 ;;
    xlsx) dict=export.dict; max_len=262144 ;;  # the seed workbooks are 35-150 KB
    *) dict=export.dict; max_len=16384 ;;
  esac
  mkdir -p "corpus-$t" "artifacts/$t" logs
  echo "fuzz_$t: ${seconds} s"
  # One process in the foreground (no -jobs): its log is its own, so two runs of this script
  # with different targets can share the build folder.
  nice -n "${VZERO_FUZZ_NICE:-10}" "./fuzz_$t" -max_total_time="$seconds" -max_len="$max_len" \
    -timeout="${VZERO_FUZZ_TIMEOUT:-10}" -rss_limit_mb=2048 -dict="$here/$dict" -artifact_prefix="artifacts/$t/" \
    -print_final_stats=1 "corpus-$t" "seeds/$t" > "logs/$t.log" 2>&1
  grep -E "^stat::number_of_executed_units|^stat::average_exec_per_sec|DONE|ERROR|SUMMARY" "logs/$t.log" | tail -5
  ls "artifacts/$t"
done
