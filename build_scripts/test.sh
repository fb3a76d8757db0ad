#!/usr/bin/env bash
# Install what the tests need (see setup.sh) and run every test.
set -euo pipefail
cd "$(dirname "$0")/.."
bash build_scripts/setup.sh --test
exec .venv/bin/python -m pytest -q "$@"
