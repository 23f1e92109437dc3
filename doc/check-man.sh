#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Formats a manual page with every groff warning on; fails on any warning.
set -u
page=$1
warnings=$(LC_ALL=C.UTF-8 groff -man -Tutf8 -ww -z "$page" 2>&1)
if [ -n "$warnings" ]; then
  printf '%s\n' "$warnings"
  exit 1
fi
# The page must render its NAME section.
LC_ALL=C.UTF-8 groff -man -Tutf8 -P-cbou "$page" 2>/dev/null | grep -q "NAME" || exit 1
exit 0
