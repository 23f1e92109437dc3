#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# Fails when po/LANG.po lacks a translation (missing, empty or fuzzy) for a
# string that the sources listed in POTFILES.in mark as translatable today.
# Usage: check-po-complete.sh SRCDIR LANG
set -u
top=${1:?source directory}
lang=${2:?language}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
# The keywords of meson's "glib" gettext preset and po/meson.build's extra ones.
if ! xgettext --package-name=mteplan -f "$top/po/POTFILES.in" -D "$top" \
    --from-code=UTF-8 --add-comments -k_ -kN_ -kC_:1c,2 -kNC_:1c,2 \
    -kg_dcgettext:2 -kg_dngettext:2,3 -kg_dpgettext2:2c,3 \
    -kadd_warning_n:3,4 --flag=add_warning_n:3:c-format --flag=add_warning_n:4:c-format \
    -o "$tmp/current.pot" 2>"$tmp/xgettext.log"; then
  cat "$tmp/xgettext.log"
  exit 1
fi
if ! msgcmp "$top/po/$lang.po" "$tmp/current.pot" 2>"$tmp/msgcmp.log"; then
  head -n 40 "$tmp/msgcmp.log"
  echo "po/$lang.po is incomplete: run 'meson compile -C BUILDDIR mteplan-pot mteplan-update-po' and translate"
  exit 1
fi
exit 0
