#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# Checks po/POTFILES.in: sorted, no duplicates, every listed file exists, and
# every source file with translatable strings (C, .ui, desktop, metainfo,
# GSettings schema, MIME type) is listed. Prints TAP. Usage: check-potfiles.sh SRCDIR
set -u
top=${1:?source directory}
cd "$top" || exit 1
potfiles=po/POTFILES.in
n=0; failed=0
ok() { n=$((n+1)); echo "ok $n - $1"; }
not_ok() { n=$((n+1)); failed=$((failed+1)); echo "not ok $n - $1"; }

listed=$(grep -v '^[[:space:]]*#' "$potfiles" | sed '/^[[:space:]]*$/d')

if [ "$listed" = "$(printf '%s\n' "$listed" | LC_ALL=C sort -u)" ]; then
  ok "POTFILES.in is sorted without duplicates"
else
  not_ok "POTFILES.in is sorted without duplicates"
  diff <(printf '%s\n' "$listed") <(printf '%s\n' "$listed" | LC_ALL=C sort -u) | sed 's/^/# /'
fi

missing_files=""
while IFS= read -r f; do
  [ -f "$f" ] || missing_files+=" $f"
done <<< "$listed"
if [ -z "$missing_files" ]; then
  ok "every file in POTFILES.in exists"
else
  not_ok "every file in POTFILES.in exists"
  echo "# not found:$missing_files"
fi

# Files that carry translatable strings.
{
  grep -rlE '(^|[^A-Za-z0-9_])(_|N_|C_|NC_|Q_|g_dngettext|g_dpgettext2|ngettext)[[:space:]]*\(' \
    --include='*.c' --include='*.h' src 2>/dev/null
  grep -rl 'translatable="yes"' --include='*.ui' --include='*.ui.in' src data 2>/dev/null
  find data -maxdepth 2 \( -name '*.desktop' -o -name '*.desktop.in' \
    -o -name '*.metainfo.xml' -o -name '*.metainfo.xml.in' \
    -o -name '*.gschema.xml' -o -name '*.gschema.xml.in' -o -name '*.mime.xml' \) 2>/dev/null
} | sed 's|^\./||' | LC_ALL=C sort -u > "${TMPDIR:-/tmp}/mteplan-potfiles.$$"

unlisted=""
while IFS= read -r f; do
  if ! printf '%s\n' "$listed" | grep -qxF "$f"; then
    unlisted+=" $f"
  fi
done < "${TMPDIR:-/tmp}/mteplan-potfiles.$$"
rm -f "${TMPDIR:-/tmp}/mteplan-potfiles.$$"
if [ -z "$unlisted" ]; then
  ok "every file with translatable strings is in POTFILES.in"
else
  not_ok "every file with translatable strings is in POTFILES.in"
  echo "# add to po/POTFILES.in:$unlisted"
fi

echo "1..$n"
[ "$failed" -eq 0 ]
