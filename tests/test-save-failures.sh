#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# A failed save leaves the previous file intact, leaves no temporary file
# behind and says why: on a full disk (a tiny tmpfs) and on a read-only
# one. Needs root to mount; skipped otherwise (TAP).
set -u
cli=${MTEPLAN_CLI:?}
src=${G_TEST_SRCDIR:?}/..
demo=$src/data/examples/cold-copper-shift.mteplan
mnt=$(mktemp -d)
cleanup() { umount "$mnt" 2>/dev/null; rmdir "$mnt" 2>/dev/null; }
trap cleanup EXIT
if [ "$(id -u)" -ne 0 ] || ! mount -t tmpfs -o size=256k tmpfs "$mnt" 2>/dev/null; then
  echo "1..0 # SKIP needs root and tmpfs to stage a full and a read-only disk"
  exit 0
fi
n=0; failed=0
check() { n=$((n+1)); if eval "$2"; then echo "ok $n - $1"; else failed=$((failed+1)); echo "not ok $n - $1"; fi; }

# Full disk: an older sheet and schedule are there, then the disk fills up.
printf 'older sheet\n' > "$mnt/sheet.pdf"
printf 'older schedule\n' > "$mnt/schedule.json"
dd if=/dev/zero of="$mnt/filler" bs=4k 2>/dev/null
"$cli" plan "$demo" --pdf "$mnt/sheet.pdf" >/dev/null 2>"$mnt.err"; rc=$?
check "full disk: the PDF export fails (exit $rc)" '[ $rc -ne 0 ]'
check "full disk: the message says why" 'grep -qi "space" "$mnt.err"'
check "full disk: the older sheet is intact" '[ "$(cat "$mnt/sheet.pdf")" = "older sheet" ]'
"$cli" plan "$demo" --json "$mnt/schedule.json" >/dev/null 2>"$mnt.err"; rc=$?
check "full disk: the JSON export fails (exit $rc)" '[ $rc -ne 0 ]'
check "full disk: the older schedule is intact" '[ "$(cat "$mnt/schedule.json")" = "older schedule" ]'
check "full disk: no temporary file is left" '[ "$(ls -A "$mnt" | sort | tr "\n" " ")" = "filler schedule.json sheet.pdf " ]'

# Read-only disk (root ignores file modes, not a read-only mount).
rm -f "$mnt/filler"
mount -o remount,ro "$mnt"
"$cli" plan "$demo" --pdf "$mnt/sheet.pdf" >/dev/null 2>"$mnt.err"; rc=$?
check "read-only disk: the PDF export fails (exit $rc)" '[ $rc -ne 0 ]'
check "read-only disk: the message says why" 'grep -qi "read-only" "$mnt.err"'
check "read-only disk: the older sheet is intact" '[ "$(cat "$mnt/sheet.pdf")" = "older sheet" ]'
rm -f "$mnt.err"
echo "1..$n"
[ $failed -eq 0 ]
