#!/usr/bin/env bash
# Installs the built tree into a temporary prefix, then builds and runs a small program of
# someone else's against it twice: through CMake (find_package(vzero), vzero::vzero) and
# through pkg-config. Usage: tests/install/run.sh BUILD_DIR SOURCE_DIR
set -euo pipefail
build=$1 src=$2
tmp=$(mktemp -d "${TMPDIR:-/tmp}/vzero-install-XXXXXX")
trap 'rm -rf "$tmp"' EXIT
cmake --install "$build" --prefix "$tmp/prefix" >/dev/null
test -x "$tmp/prefix/bin/vzero"
"$tmp/prefix/bin/vzero" --version
cmake -S "$src/tests/install/consumer" -B "$tmp/build" -G Ninja -DCMAKE_BUILD_TYPE=Release \
  -DCMAKE_PREFIX_PATH="$tmp/prefix" >/dev/null
cmake --build "$tmp/build" >/dev/null
demo="$src/demo-data"
"$tmp/build/consumer" "$demo/hydrolase_wide.csv" "$demo/hydrolase_map.csv" "$tmp/rates.csv" | tee "$tmp/cmake.txt"
PKG_CONFIG_PATH="$tmp/prefix/lib/pkgconfig" \
  g++ -std=c++20 -O1 "$src/tests/install/consumer/main.cpp" -o "$tmp/pc_consumer" \
  $(PKG_CONFIG_PATH="$tmp/prefix/lib/pkgconfig" pkg-config --cflags --libs --static vzero)
"$tmp/pc_consumer" "$demo/hydrolase_wide.csv" "$demo/hydrolase_map.csv" "$tmp/rates.csv" >"$tmp/pc.txt"
cmp "$tmp/cmake.txt" "$tmp/pc.txt"
# 96 wells read + the header, from one export.
grep -qx '97 rows, 1 file(s)' "$tmp/cmake.txt"
echo "install: the CMake package and the pkg-config file both build and run a program against vzero"
