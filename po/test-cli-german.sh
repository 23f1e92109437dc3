#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# mteplan-cli in German: messages are translated, machine-readable output
# (JSON, CSV) is byte-identical to the English run. Prints TAP.
# Needs MTEPLAN_CLI, MTEPLAN_LOCALEDIR (BUILDDIR/po with the built
# catalogues) and MTEPLAN_SOURCE_DIR.
set -u
cli=${MTEPLAN_CLI:?}
src=${MTEPLAN_SOURCE_DIR:?}
export MTEPLAN_LOCALEDIR=${MTEPLAN_LOCALEDIR:?}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }
check() { if eval "$2"; then ok "$1"; else not_ok "$1"; fi; }

unset LC_ALL LC_MESSAGES LC_NUMERIC LANG LANGUAGE
# German messages need a locale whose LC_MESSAGES is not "C". With
# de_DE.UTF-8 generated (build-aux/deps.sh does it), numbers in tables follow
# German conventions too, which is what the JSON must not do. Otherwise
# C.UTF-8 with LANGUAGE=de still selects the German catalogue (glibc).
if locale -a 2>/dev/null | grep -qiE '^de_DE\.utf-?8$'; then
  de_locale=de_DE.UTF-8
else
  de_locale=C.UTF-8
  echo "# de_DE.UTF-8 is not generated; using C.UTF-8 with LANGUAGE=de"
fi
en() { env LC_ALL=C.UTF-8 LANGUAGE= "$cli" "$@"; }
de() { env LC_ALL=$de_locale LANGUAGE=de "$cli" "$@"; }

# Messages: the usage text and a subcommand's help are German.
en --help >"$tmp/en-help" 2>&1
de --help >"$tmp/de-help" 2>&1
check "English help is English" 'grep -q "Show help for a command" "$tmp/en-help"'
check "German help is German" 'grep -q "Hilfe zu einem Befehl anzeigen" "$tmp/de-help"'
check "German help has no untranslated command summary" \
  '! grep -q "Show help for a command" "$tmp/de-help"'
de help model >"$tmp/de-help-model" 2>&1
check "German option descriptions" 'grep -q "Austrittsarbeit" "$tmp/de-help-model"'

# Tables are translated.
args=(model --work-function 4.5 --temperature 300 --photon-energy 4.6)
de "${args[@]}" >"$tmp/de-table"
check "German table labels" 'grep -q "Austrittsarbeit" "$tmp/de-table" && grep -q "Photonenenergie" "$tmp/de-table"'

# JSON is the same bytes in both languages.
en "${args[@]}" --json >"$tmp/en.json"; rc_en=$?
de "${args[@]}" --json >"$tmp/de.json"; rc_de=$?
check "model --json exits 0 in both languages" '[ $rc_en -eq 0 ] && [ $rc_de -eq 0 ]'
check "model --json is byte-identical in German" 'cmp -s "$tmp/en.json" "$tmp/de.json"'
check "model --json has a decimal point, not a comma" 'grep -q "\"mte_meV\" *: *[0-9]*\.[0-9]" "$tmp/de.json"'

# Errors are translated and keep their exit status.
de model --work-function abc --temperature 300 --photon-energy 4.6 >/dev/null 2>"$tmp/de-err"; rc_de=$?
en model --work-function abc --temperature 300 --photon-energy 4.6 >/dev/null 2>"$tmp/en-err"; rc_en=$?
check "bad input exits 2 in both languages" '[ $rc_en -eq 2 ] && [ $rc_de -eq 2 ]'
check "German error message differs from English and names the option" \
  '! cmp -s "$tmp/en-err" "$tmp/de-err" && grep -q -- "--work-function" "$tmp/de-err"'

# The planner's machine-readable output, once the planner exists.
demo=$src/data/examples/cold-copper-shift.mteplan
if [ -f "$demo" ] && en help plan >/dev/null 2>&1; then
  en plan "$demo" --json - >"$tmp/en-plan.json" 2>/dev/null; rc_en=$?
  de plan "$demo" --json - >"$tmp/de-plan.json" 2>/dev/null; rc_de=$?
  check "plan --json exits alike in both languages" '[ $rc_en -eq $rc_de ] && [ -s "$tmp/en-plan.json" ]'
  check "plan --json is byte-identical in German" 'cmp -s "$tmp/en-plan.json" "$tmp/de-plan.json"'
  en plan "$demo" --csv "$tmp/en.csv" >/dev/null 2>&1
  de plan "$demo" --csv "$tmp/de.csv" >/dev/null 2>&1
  check "plan --csv is byte-identical in German" '[ -s "$tmp/en.csv" ] && cmp -s "$tmp/en.csv" "$tmp/de.csv"'
  # Plans with left-out steps and warnings: reasons and warnings in the JSON
  # are data for scripts, so they stay English (translate them for display).
  for other in "$src/data/examples/tight-helium-budget.mteplan" "$src/tests/data/spec-example.mteplan"; do
    [ -f "$other" ] || continue
    name=$(basename "$other")
    en plan "$other" --json - >"$tmp/en-o.json" 2>/dev/null
    de plan "$other" --json - >"$tmp/de-o.json" 2>/dev/null
    check "plan --json of $name is byte-identical in German" \
      '[ -s "$tmp/en-o.json" ] && cmp -s "$tmp/en-o.json" "$tmp/de-o.json"'
    diff "$tmp/en-o.json" "$tmp/de-o.json" | head -n 6 | sed 's/^/# /'
    en plan "$other" --csv - >"$tmp/en-o.csv" 2>/dev/null
    de plan "$other" --csv - >"$tmp/de-o.csv" 2>/dev/null
    check "plan --csv of $name is byte-identical in German" \
      '[ -s "$tmp/en-o.csv" ] && cmp -s "$tmp/en-o.csv" "$tmp/de-o.csv"'
  done
else
  echo "# the planner or the demo plan is not there yet: plan output not compared"
fi
measured=$src/tests/data/measured/cold-sweep.csv
if [ -f "$demo" ] && [ -f "$measured" ] && en help fit >/dev/null 2>&1; then
  en fit "$demo" "$measured" --qe-only --json >"$tmp/en-fit.json" 2>/dev/null; rc_en=$?
  de fit "$demo" "$measured" --qe-only --json >"$tmp/de-fit.json" 2>/dev/null; rc_de=$?
  check "fit --json exits alike and is byte-identical in German" \
    '[ $rc_en -eq $rc_de ] && [ -s "$tmp/en-fit.json" ] && cmp -s "$tmp/en-fit.json" "$tmp/de-fit.json"'
fi
if [ -f "$demo" ] && en help rehearse >/dev/null 2>&1; then
  en rehearse "$demo" --trials 2 --seed 3 --threads 1 --json >"$tmp/en-r.json" 2>/dev/null
  de rehearse "$demo" --trials 2 --seed 3 --threads 1 --json >"$tmp/de-r.json" 2>/dev/null
  check "rehearse --json is byte-identical in German" \
    '[ -s "$tmp/en-r.json" ] && cmp -s "$tmp/en-r.json" "$tmp/de-r.json"'
fi

echo "1..$n"
[ "$failed" -eq 0 ]
