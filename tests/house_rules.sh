#!/usr/bin/env bash
# The layout rules of DEVELOPERS.md, checked on the source tree:
#  - a stage folder src/<stage>/ opens only its own internal headers, src/core/ ones and the
#    public headers (include/vzero/); a single-file stage (src/*.cpp) only core and public ones;
#  - src/core/ opens no stage's internals;
#  - no source file under src/ or include/ is over 420 lines.
# Prints every breach as file:line and exits 1 when there is one.
set -euo pipefail
root="${1:-$(dirname "$0")/..}"
cd "$root"
status=0
for dir in src/*/; do
  stage=$(basename "$dir")
  while IFS= read -r hit; do
    echo "$hit: a $stage file opens another stage's internal header"
    status=1
  done < <(grep -Hn '^#include "' "$dir"*.cpp "$dir"*.hpp 2>/dev/null |
             grep -v "#include \"$stage/\|#include \"core/\|#include \"vzero/" || true)
done
while IFS= read -r hit; do
  echo "$hit: a single-file stage opens a stage folder's internal header"
  status=1
done < <(grep -Hn '^#include "' src/*.cpp | grep -v '#include "core/\|#include "vzero/' || true)
while read -r lines file; do
  [ "$file" = total ] && continue
  if [ "$lines" -gt 420 ]; then
    echo "$file:1: $lines lines (split it into named parts; DEVELOPERS.md, Rules a change keeps)"
    status=1
  fi
done < <(find src include -name '*.cpp' -o -name '*.hpp' | sort | xargs wc -l)
[ "$status" = 0 ] && echo "house rules kept: includes by stage, file sizes"
exit "$status"
