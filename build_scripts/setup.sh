#!/usr/bin/env bash
# Set up everything nmrcalc needs on a fresh machine: a venv with the package
# (and, with --test, the test extras), the npm packages from package-lock.json,
# and Debian's browsers for the browser tests.  Safe to run again.
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

# The browser tests drive three engines, all from Debian: chromium (Blink) and
# firefox-esr (Gecko) through Playwright, and WebKitGTK's MiniBrowser through its
# WebDriver under a virtual X display (xvfb).
if [ "$want_tests" = 1 ]; then
  missing=()
  command -v chromium >/dev/null || missing+=(chromium)
  command -v firefox-esr >/dev/null || missing+=(firefox-esr)
  command -v WebKitWebDriver >/dev/null || missing+=(webkit2gtk-driver)
  ls /usr/lib/*/webkit2gtk-4.1/MiniBrowser >/dev/null 2>&1 || missing+=(libwebkit2gtk-4.1-0)
  command -v Xvfb >/dev/null || missing+=(xvfb)
  if [ "${#missing[@]}" -gt 0 ]; then
    if [ "$(id -u)" = 0 ]; then
      echo "Installing Debian's ${missing[*]} for the browser tests…"
      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${missing[@]}" >/dev/null
    else
      echo "The browser tests need Debian's ${missing[*]}: run 'sudo apt-get install ${missing[*]}' and try again."
      exit 1
    fi
  fi
fi
