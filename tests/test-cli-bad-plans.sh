#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# mteplan-cli plan over the bad-input corpus (tests/data/bad/EXPECTED):
# every file exits with status 2 and prints its own message (TAP).
set -u
cli=${MTEPLAN_CLI:?}
dir=${G_TEST_SRCDIR:?}/data/bad
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }

while IFS=$'\t' read -r file message; do
  case "$file" in ''|'#'*) continue ;; esac
  err=$("$cli" plan "$dir/$file" 2>&1 >/dev/null); rc=$?
  if [ "$rc" -ne 2 ]; then
    not_ok "$file: exit status $rc, expected 2"
  elif [[ "$err" != *"$message"* ]]; then
    not_ok "$file: message “$err” lacks “$message”"
  else
    ok "$file: exit 2, $message"
  fi
done < "$dir/EXPECTED"

# A plan that does not exist is bad input too.
"$cli" plan "$dir/no-such-plan.mteplan" >/dev/null 2>&1; rc=$?
if [ "$rc" -eq 2 ]; then ok "missing file: exit 2"; else not_ok "missing file: exit $rc"; fi

echo "1..$n"
[ "$failed" -eq 0 ]
