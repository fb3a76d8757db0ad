#!/usr/bin/env bash
# Set up everything nmrcalc needs on a fresh machine: a venv with the package
# (and, with --test, the test extras), the npm packages from package-lock.json,
# and Debian's chromium for the browser tests.  Safe to run again.
set -euo pipefail
cd "$(dirname "$0")/.."
want_tests=0
[ "${1:-}" = "--test" ] && want_tests=1

python3 -c 'import sys; assert sys.version_info >= (3, 11), "nmrcalc needs Python 3.11 or newer"'
[ -x .venv/bin/python ] || python3 -m venv .venv
.venv/bin/python -m pip install -q --disable-pip-version-check --upgrade pip
if [ "$want_tests" = 1 ]; then
  .venv/bin/python -m pip install -q --disable-pip-version-check -e '.[test]' -c build_scripts/constraints.txt
else
  .venv/bin/python -m pip install -q --disable-pip-version-check -e .
fi

if [ -f package-lock.json ]; then
  command -v npm >/dev/null || { echo "npm is needed to build the page (apt-get install npm)"; exit 1; }
  npm ci --no-audit --no-fund --loglevel=error
fi

if [ "$want_tests" = 1 ] && ! command -v chromium >/dev/null; then
  if [ "$(id -u)" = 0 ]; then
    echo "Installing Debian's chromium for the browser tests…"
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
  else
    echo "The browser tests need Debian's chromium: run 'sudo apt-get install chromium' and try again."
    exit 1
  fi
fi
