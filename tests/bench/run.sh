#!/usr/bin/env bash
# The pipeline benchmark in one command:  bash tests/bench/run.sh [vzero_bench options]
# Builds vzero and vzero_bench (Release, in build-bench/ or $VZERO_BENCH_BUILD), installs
# Debian's python3-pandas if it is missing (the two yardsticks only, naive_pandas.py and
# numpy_theil_sen.py; vzero does not need it),
# generates the simulated exports in a temporary folder (about 1 GB with the 50-million-row
# long file; $VZERO_BENCH_DIR to choose it, kept when given), and prints every figure.
# Examples: bash tests/bench/run.sh --quick
#           bash tests/bench/run.sh --sections batch --reps 5
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
build=${VZERO_BENCH_BUILD:-$root/build-bench}
python=/usr/bin/python3   # Debian's, where python3-pandas installs

if ! "$python" -c 'import pandas, numpy' 2>/dev/null; then
  echo "installing python3-pandas for the yardstick" >&2
  if [ "$(id -u)" = 0 ]; then apt-get install -y python3-pandas >/dev/null
  elif command -v sudo >/dev/null; then sudo apt-get install -y python3-pandas >/dev/null
  fi
fi
pandas_args=()
if "$python" -c 'import pandas, numpy' 2>/dev/null; then
  pandas_args=(--pandas "$root/tests/bench/naive_pandas.py" --numpy "$root/tests/bench/numpy_theil_sen.py"
               --python "$python")
else
  echo "python3-pandas is not installed: the pandas comparison is skipped" >&2
fi

cmake -S "$root" -B "$build" -G Ninja -DCMAKE_BUILD_TYPE=Release -DVZERO_BENCH=ON >/dev/null
cmake --build "$build" --target vzero vzero_bench -j2 >/dev/null

if [ -n "${VZERO_BENCH_DIR:-}" ]; then
  dir=$VZERO_BENCH_DIR
  mkdir -p "$dir"
else
  dir=$(mktemp -d "${TMPDIR:-/tmp}/vzero-bench-XXXXXX")
  trap 'rm -rf "$dir"' EXIT
fi
"$build/tests/bench/vzero_bench" --dir "$dir" "${pandas_args[@]}" "$@"
