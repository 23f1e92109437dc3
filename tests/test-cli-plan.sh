#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# mteplan-cli plan: exit statuses, the JSON contract of plan-format.md
# ("The schedule (output)") and the CSV header (TAP).
set -u
cli=${MTEPLAN_CLI:?}
src=${G_TEST_SRCDIR:?}/..
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }
check() { if eval "$2"; then ok "$1"; else not_ok "$1"; fi; }

# Every example plan is scheduled; the feasible ones exit 0.
for plan in "$src"/data/examples/*.mteplan; do
  [ -e "$plan" ] || continue
  name=$(basename "$plan")
  "$cli" plan "$plan" --json "$tmp/$name.json" >"$tmp/$name.txt" 2>"$tmp/$name.err"; rc=$?
  check "$name: exit 0 or 1 (rc=$rc)" '[ $rc -eq 0 ] || [ $rc -eq 1 ]'
  check "$name: JSON feasible matches the exit status" \
    "python3 -c 'import json,sys; d=json.load(open(\"$tmp/$name.json\")); sys.exit(0 if d[\"feasible\"] == ($rc == 0) else 1)'"
  check "$name: summary names the totals" "grep -q 'Beam time' '$tmp/$name.txt'"
done

demo="$src/data/examples/cold-copper-shift.mteplan"
if [ -e "$demo" ]; then
  out=$("$cli" plan "$demo" --json -); rc=$?
  check "demo plan exit 0" '[ $rc -eq 0 ]'
  check "JSON has the contract keys" "echo \"\$out\" | python3 -c '
import json, sys
d = json.load(sys.stdin)
top = [\"plan_title\", \"feasible\", \"policy\", \"stretch_factor\", \"totals\", \"blocks\",
       \"left_out\", \"warnings\", \"sensitivity\", \"work_function_eV\",
       \"effective_work_function_eV\"]
tot = [\"beam_time_h\", \"beam_time_available_h\", \"cryogen_L\", \"cryogen_available_L\"]
blk = [\"temperature_K\", \"start_h\", \"end_h\", \"cryogen_L\", \"steps\", \"settle_h\",
       \"cryogen_start_L\", \"cryogen_end_L\", \"cut_list\"]
stp = [\"index\", \"wavelength_nm\", \"photon_energy_eV\", \"excess_energy_eV\", \"qe\",
       \"transmission\", \"signal_rate_per_s\", \"mte_meV\", \"target_sigma_meV\", \"dwell_s\",
       \"reached_sigma_meV\", \"start_h\", \"cryogen_left_L\", \"status\", \"kind\",
       \"priority\", \"optical_density\", \"required_dwell_s\", \"done\", \"end_h\"]
assert all(k in d for k in top), top
assert all(k in d[\"totals\"] for k in tot)
assert d[\"blocks\"], \"no blocks\"
for b in d[\"blocks\"]:
    assert all(k in b for k in blk)
    for s in b[\"steps\"]:
        assert all(k in s for k in stp), s
        assert s[\"status\"] in (\"ok\", \"short\", \"unreachable\")
        assert s[\"kind\"] in (\"mte\", \"qe_sweep\")
assert d[\"policy\"] in (\"drop\", \"stretch\")
assert d[\"totals\"][\"beam_time_h\"] <= d[\"totals\"][\"beam_time_available_h\"]
assert d[\"totals\"][\"cryogen_L\"] <= d[\"totals\"][\"cryogen_available_L\"]
assert set(d[\"sensitivity\"]) == {\"low\", \"high\"}
'"
  check "no NaN or infinity in JSON" "! echo \"\$out\" | grep -Eiq 'nan|infinity'"

  csv=$("$cli" plan "$demo" --csv -); rc=$?
  check "CSV exit 0" '[ $rc -eq 0 ]'
  check "CSV header with units" "echo \"\$csv\" | head -1 | grep -q '^block_temperature_K,index,kind,wavelength_nm,photon_energy_eV'"
  check "CSV one row per step" "[ \$(echo \"\$csv\" | wc -l) -eq \$((\$(echo \"\$out\" | grep -c '\"index\"') + 1)) ]"

  # Files are written, and the same plan gives the same schedule.
  "$cli" plan "$demo" --json "$tmp/a.json" >/dev/null && "$cli" plan "$demo" --json "$tmp/b.json" >/dev/null
  check "deterministic JSON" "cmp -s '$tmp/a.json' '$tmp/b.json'"

  # Re-plan options shift the clock and the budget.
  out2=$("$cli" plan "$demo" --elapsed-h 2 --cryogen-left-L 30 --json -); rc=$?
  check "re-plan exit 0 or 1" '[ $rc -eq 0 ] || [ $rc -eq 1 ]'
  check "elapsed time offsets the clock" "echo \"\$out2\" | python3 -c 'import json,sys; d=json.load(sys.stdin); sys.exit(0 if abs(d[\"blocks\"][0][\"start_h\"]-2) < 1e-9 and abs(d[\"totals\"][\"beam_time_available_h\"]-(json.load(open(\"$tmp/a.json\"))[\"totals\"][\"beam_time_available_h\"]-2)) < 1e-9 else 1)'"

  # A plan that cannot fit even after its policy: exit 1, reasons on stderr.
  python3 - "$demo" "$tmp/tiny.mteplan" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
d["beam_time_h"] = 0.01
d["over_budget"] = "stretch"
json.dump(d, open(sys.argv[2], "w"))
PY
  err=$("$cli" plan "$tmp/tiny.mteplan" 2>&1 >/dev/null); rc=$?
  check "infeasible plan exits 1 (rc=$rc)" '[ $rc -eq 1 ]'
  check "infeasible plan says why on stderr" "echo \"\$err\" | grep -q 'available'"
  python3 - "$demo" "$tmp/tiny-drop.mteplan" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
d["beam_time_h"] = 0.01
d["over_budget"] = "drop"
json.dump(d, open(sys.argv[2], "w"))
PY
  "$cli" plan "$tmp/tiny-drop.mteplan" >/dev/null 2>&1; rc=$?
  check "nothing fits under drop: exit 1 (rc=$rc)" '[ $rc -eq 1 ]'

  # Bad options.
  err=$("$cli" plan "$demo" --elapsed-h soon 2>&1 >/dev/null); rc=$?
  check "bad --elapsed-h exits 2 naming the option" '[ $rc -eq 2 ] && echo "$err" | grep -q -- --elapsed-h'
  err=$("$cli" plan "$demo" --paper tabloid 2>&1 >/dev/null); rc=$?
  check "bad --paper exits 2" '[ $rc -eq 2 ] && echo "$err" | grep -q -- --paper'
fi

# Bad input: exit 2 with the loader's message naming the field.
bad="$src/tests/data/bad/wrong-type-rate.mteplan"
if [ -e "$bad" ]; then
  err=$("$cli" plan "$bad" 2>&1 >/dev/null); rc=$?
  check "bad plan exits 2 (rc=$rc)" '[ $rc -eq 2 ]'
  check "bad plan message names the field" "echo \"\$err\" | grep -q 'repetition_rate_kHz'"
fi
printf '{ "format": "mteplan", "version": 1, ' > "$tmp/truncated.mteplan"
"$cli" plan "$tmp/truncated.mteplan" >/dev/null 2>&1; rc=$?
check "truncated plan exits 2" '[ $rc -eq 2 ]'
"$cli" plan "$tmp/missing.mteplan" >/dev/null 2>&1; rc=$?
check "missing file exits 2" '[ $rc -eq 2 ]'
"$cli" plan >/dev/null 2>&1; rc=$?
check "no plan argument exits 2" '[ $rc -eq 2 ]'
check "help plan lists --json" "\"$cli\" help plan | grep -q -- --json"

echo "1..$n"
[ $failed -eq 0 ]
