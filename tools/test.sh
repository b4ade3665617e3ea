#!/usr/bin/env bash
# Set up and run the whole ekexplore test suite on a fresh machine.
# Installs the package with its test and dashboard extras, and Debian's
# chromium for the browser tests where apt is available.
set -euo pipefail
cd "$(dirname "$0")/.."
PY=${PYTHON:-python3}
"$PY" -m pip install --quiet --disable-pip-version-check -e ".[test,dashboard]"
"$PY" -m pytest "$@"
