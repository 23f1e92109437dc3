#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# mteplan-cli rehearse: the JSON keys, byte-identical output whatever the
# number of threads, and exit 2 on bad options (TAP).
set -u
cli=${MTEPLAN_CLI:?}
src=${G_TEST_SRCDIR:?}/..
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }
check() { if eval "$2"; then ok "$1"; else not_ok "$1"; fi; }

demo="$src/data/examples/cold-copper-shift.mteplan"
if [ ! -e "$demo" ]; then
  echo "1..0 # SKIP no demo plan"
  exit 0
fi

# Few trials: the demo records about 10^5 electrons per step and trial.
"$cli" rehearse "$demo" --trials 6 --seed 42 --threads 1 --json >"$tmp/t1.json"; rc1=$?
"$cli" rehearse "$demo" --trials 6 --seed 42 --threads 2 --json >"$tmp/t2.json"; rc2=$?
check "exit 0 with 1 thread" '[ $rc1 -eq 0 ]'
check "exit 0 with 2 threads" '[ $rc2 -eq 0 ]'
check "JSON byte-identical across --threads 1 and 2" 'cmp -s "$tmp/t1.json" "$tmp/t2.json"'
check "JSON has the contract keys" "python3 -c '
import json, sys
d = json.load(open(\"$tmp/t1.json\"))
assert d[\"seed\"] == 42 and d[\"trials\"] == 6
assert len(d[\"steps\"]) > 0
for s in d[\"steps\"]:
    for k in (\"index\", \"temperature_K\", \"photon_energy_eV\", \"mte_bias_meV\",
              \"mte_spread_meV\", \"predicted_sigma_meV\", \"fraction_within_target\"):
        assert k in s, k
    assert 0.0 <= s[\"fraction_within_target\"] <= 1.0
sh = d[\"shift\"]
for k in (\"probability_within_beam_time\", \"probability_within_cryogen\"):
    assert 0.0 <= sh[k] <= 1.0, k
for k in (\"beam_time_h_percentiles\", \"cryogen_L_percentiles\"):
    p = [sh[k][q] for q in (\"p5\", \"p16\", \"p50\", \"p84\", \"p95\")]
    assert p == sorted(p), k
'"
check "no wall-clock figures or NaN in the JSON" "! grep -Eiq 'nan|elapsed|wall|_ms\"|seconds' '$tmp/t1.json'"

"$cli" rehearse "$demo" --trials 6 --seed 43 --threads 1 --json >"$tmp/t3.json"
check "another seed gives other figures" '! cmp -s "$tmp/t1.json" "$tmp/t3.json"'

out=$("$cli" rehearse "$demo" --trials 200 --no-counting); rc=$?
check "table output, shift only" '[ $rc -eq 0 ] && echo "$out" | grep -q "beam time"'

# Bad options: exit 2 and one line naming the option and its range.
bad() {
  local label=$1 expect=$2; shift 2
  local err; err=$("$cli" rehearse "$@" 2>&1 >/dev/null); local rc=$?
  if [ $rc -eq 2 ] && echo "$err" | grep -q -- "$expect" && [ "$(echo "$err" | wc -l)" -eq 1 ]; then
    ok "bad input: $label"
  else
    not_ok "bad input: $label (rc=$rc, '$err')"
  fi
}
bad "trials 0" "--trials.*1 to 1000000" "$demo" --trials 0
bad "trials too many" "--trials.*1 to 1000000" "$demo" --trials 1000001
bad "trials not a number" "--trials" "$demo" --trials many
bad "threads 0" "--threads.*1 to 64" "$demo" --threads 0
bad "threads 65" "--threads.*1 to 64" "$demo" --threads 65
bad "negative seed" "--seed" "$demo" --seed -1
bad "qe sigma" "--qe-sigma" "$demo" --qe-sigma 7
bad "no plan" "PLAN" --trials 10
bad "missing plan file" "no-such-plan" "$tmp/no-such-plan.mteplan"

check "help rehearse shows options" "\"$cli\" help rehearse | grep -q -- --threads"

echo "1..$n"
[ $failed -eq 0 ]
