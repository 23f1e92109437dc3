#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# Valgrind memcheck over the command line on every example and every bad
# file: no invalid reads or writes, no definite leaks (TAP).
set -u
cli=${MTEPLAN_CLI:?}
src=${G_TEST_SRCDIR:?}/..
if ! command -v valgrind >/dev/null 2>&1; then
  echo "1..0 # SKIP valgrind is not installed"
  exit 0
fi
n=0; failed=0
vg() {
  local label=$1; shift
  local log; log=$(mktemp)
  G_SLICE=always-malloc G_DEBUG=gc-friendly valgrind -q --error-exitcode=99 \
    --leak-check=full --errors-for-leak-kinds=definite --show-leak-kinds=definite \
    "$cli" "$@" >/dev/null 2>"$log"
  local rc=$?
  n=$((n+1))
  if [ $rc -eq 99 ]; then
    failed=$((failed+1)); echo "not ok $n - $label"; sed 's/^/# /' "$log" | head -40
  else
    echo "ok $n - $label (exit $rc)"
  fi
  rm -f "$log"
}
vg "model" model --work-function 4.5 --temperature 40 --photon-energy 4.4 --bandwidth 8 --json
for f in "$src"/data/examples/*.mteplan "$src"/tests/data/bad/*; do
  [ -f "$f" ] || continue
  vg "plan $(basename "$f")" plan "$f" --json -
done
echo "1..$n"
[ $failed -eq 0 ]
