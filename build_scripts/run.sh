#!/usr/bin/env bash
# Set up and run the main job: a worked example on the command line.
set -euo pipefail
cd "$(dirname "$0")/.."
bash build_scripts/setup.sh
.venv/bin/python -m nmrcalc demo
