#!/usr/bin/env bash
# Set up and run the main job: build the offline page (dist/site/ and the
# single file dist/nmrcalc.html) and open the single file, or print its path
# where no display exists.  A worked example runs on the command line too.
set -euo pipefail
cd "$(dirname "$0")/.."
bash build_scripts/setup.sh
.venv/bin/python build_scripts/build_web.py
.venv/bin/python -m nmrcalc demo
page="$(pwd)/dist/nmrcalc.html"
if [ -n "${DISPLAY:-}${WAYLAND_DISPLAY:-}" ] && command -v xdg-open >/dev/null; then
  xdg-open "$page" >/dev/null 2>&1 &
  echo "Opened $page"
else
  echo "The offline page is ready: $page"
  echo "(the folder build for a static host is in $(pwd)/dist/site/)"
fi
