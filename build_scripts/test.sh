#!/usr/bin/env bash
# Install what the tests need (see setup.sh), lint and type-check, and run every test.
set -euo pipefail
cd "$(dirname "$0")/.."
bash build_scripts/setup.sh --test
.venv/bin/ruff check .
.venv/bin/mypy
exec .venv/bin/python -m pytest -q "$@"
