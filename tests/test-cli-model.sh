#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# mteplan-cli model: outside check values and exit statuses (TAP).
set -u
cli=${MTEPLAN_CLI:?}
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }
check() { if eval "$2"; then ok "$1"; else not_ok "$1"; fi; }
json_num() { python3 -c "import json,sys; print(json.load(sys.stdin)['$1'])"; }

# Spec check table: MTE at threshold, 300 K = 28.3375 meV (derived).
out=$("$cli" model --work-function 4.5 --temperature 300 --photon-energy 4.5 --json); rc=$?
check "threshold exit 0" '[ $rc -eq 0 ]'
mte=$(echo "$out" | json_num mte_meV)
check "MTE at threshold 300 K is 28.3375 meV (1e-4 rel)" \
  "python3 -c 'import sys; sys.exit(0 if abs($mte/28.3375-1) < 1e-4 else 1)'"
for key in excess_energy_eV photon_energy_eV yield_eV2 mte_meV energy_second_moment_meV2; do
  check "json has $key" "echo \"\$out\" | grep -q '\"$key\"'"
done

# Thermal limit: 4 K, 0.3 eV below threshold: MTE = kT (CODATA k_B) to 1e-6.
out=$("$cli" model --work-function 4.5 --temperature 4 --photon-energy 4.2 --json); rc=$?
check "cold exit 0" '[ $rc -eq 0 ]'
mte=$(echo "$out" | json_num mte_meV)
check "MTE at 4 K, 0.3 eV below threshold equals kT" \
  "python3 -c 'import sys; kT=8.617333262145179e-5*4*1e3; sys.exit(0 if abs($mte/kT-1) < 1e-6 else 1)'"
check "no NaN or inf in output" "! echo \"\$out\" | grep -Eiq 'nan|inf'"

# Wavelength input: 275.52 nm is 4.5 eV (CODATA hc).
out=$("$cli" model --work-function 4.5 --temperature 300 --wavelength 275.5204409626672 --json)
pe=$(echo "$out" | json_num photon_energy_eV)
check "wavelength converts with hc = 1239.84198 eV nm" \
  "python3 -c 'import sys; sys.exit(0 if abs($pe-4.5) < 1e-12 else 1)'"

# Table output mentions MTE.
check "table output" "\"$cli\" model --work-function 4.5 --temperature 300 --photon-energy 4.6 | grep -q MTE"

# Bad input: exit 2 and one line naming the option.
bad() {
  local label=$1 expect=$2; shift 2
  local err; err=$("$cli" model "$@" 2>&1 >/dev/null); local rc=$?
  if [ $rc -eq 2 ] && echo "$err" | grep -q -- "$expect" && [ "$(echo "$err" | wc -l)" -eq 1 ]; then
    ok "bad input: $label"
  else
    not_ok "bad input: $label (rc=$rc, '$err')"
  fi
}
bad "non-number" "--temperature" --work-function 4.5 --temperature warm --photon-energy 4.5
bad "negative temperature" "--temperature" --work-function 4.5 --temperature -5 --photon-energy 4.5
bad "work function too small" "--work-function" --work-function 0.2 --temperature 300 --photon-energy 4.5
bad "work function too large" "--work-function" --work-function 12 --temperature 300 --photon-energy 4.5
bad "missing option" "--work-function" --temperature 300 --photon-energy 4.5
bad "nan" "--photon-energy" --work-function 4.5 --temperature 300 --photon-energy nan
bad "both energy and wavelength" "--wavelength" --work-function 4.5 --temperature 300 --photon-energy 4.5 --wavelength 250

# Top-level commands.
check "--version" "\"$cli\" --version | grep -q '^mteplan-cli '"
check "--help lists model" "\"$cli\" --help | grep -q model"
check "help model shows options" "\"$cli\" help model | grep -q -- --work-function"
"$cli" frobnicate >/dev/null 2>&1; rc=$?
check "unknown command exits 2" '[ $rc -eq 2 ]'

echo "1..$n"
[ $failed -eq 0 ]
