#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Fails when a page in help/C is not in the list given as arguments (the
# help_pages list of help/meson.build), so that no page goes uninstalled.
# Usage: check-pages.sh HELP_C_DIR PAGE...
set -u
dir=$1; shift
status=0
for f in "$dir"/*.page; do
  name=$(basename "$f")
  found=no
  for p in "$@"; do
    [ "$p" = "$name" ] && found=yes
  done
  if [ "$found" = no ]; then
    echo "$name is not listed in help/meson.build"
    status=1
  fi
done
exit $status
