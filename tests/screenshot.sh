#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# Opens the window on the demo plan under Xvfb and saves PNG screenshots for
# review: the app renders its own window (MTEPLAN_SCREENSHOT) with the
# cairo renderer, so no GPU and no screen grabber are needed.
# Usage: tests/screenshot.sh [BUILDDIR] [OUTDIR]   (not run by build-aux/test)
set -eu
top=$(cd "$(dirname "$0")/.." && pwd)
build=${1:-$top/_build}
out=${2:-$build/screenshots}
app=$build/src/ui/mteplan
demo=$top/data/examples/cold-copper-shift.mteplan
[ -x "$app" ] || { echo "screenshot.sh: $app not built" >&2; exit 1; }
mkdir -p "$out"
state=$(mktemp -d)
trap 'rm -rf "$state"' EXIT

export GSK_RENDERER=cairo GSETTINGS_BACKEND=memory NO_AT_BRIDGE=1
export GSETTINGS_SCHEMA_DIR=$build/data XDG_STATE_HOME=$state

# name size editor-page plot selected-step
while read -r name size page plot step; do
  MTEPLAN_SCREENSHOT="$out/$name.png" MTEPLAN_SCREENSHOT_SIZE=$size \
  MTEPLAN_SCREENSHOT_PAGE=$page MTEPLAN_SCREENSHOT_PLOT=$plot \
  MTEPLAN_SCREENSHOT_STEP=$step \
    timeout 60 xvfb-run -a -s "-screen 0 1700x1100x24" "$app" "$demo"
done <<'LIST'
small-cathode 1024x700 cathode qe 0
small-laser 1024x700 laser mte 12
small-cryostat 1024x700 cryostat timeline 30
small-scan 1024x700 scan all 0
large-all 1600x1000 cathode all 5
large-detector 1600x1000 detector mte 20
large-timeline 1600x1000 scan timeline 40
LIST

# The system dark style: plots switch to light ink.
GTK_THEME=Adwaita:dark MTEPLAN_SCREENSHOT="$out/dark.png" MTEPLAN_SCREENSHOT_SIZE=1280x800 \
  timeout 60 xvfb-run -a -s "-screen 0 1700x1100x24" "$app" "$demo"
echo "screenshots in $out"
