#!/usr/bin/env bash
# Set up and run the whole ekexplore test suite on a fresh machine.
#
# 1. Installs the package with its test and dashboard extras (pip).
# 2. For the real-browser tests: installs Debian's chromium with apt when
#    `chromium` is missing and apt is available (Playwright never downloads a
#    browser here). When that is impossible the browser tests are skipped and
#    the reason is printed; on CI (CI=true) they are required instead.
# 3. Runs pytest with any extra arguments given.
set -euo pipefail
cd "$(dirname "$0")/.."
PY=${PYTHON:-python3}
"$PY" -m pip install --quiet --disable-pip-version-check -e ".[test,dashboard]"

browser_reason=""
if ! command -v chromium >/dev/null 2>&1; then
    if command -v apt-get >/dev/null 2>&1 && [ "$(id -u)" = "0" ]; then
        echo "tools/test.sh: installing Debian's chromium for the browser tests"
        if ! { apt-get update -qq && DEBIAN_FRONTEND=noninteractive \
                apt-get install -y -qq chromium >/dev/null; }; then
            browser_reason="apt-get install chromium failed"
        fi
    elif command -v apt-get >/dev/null 2>&1 && command -v sudo >/dev/null 2>&1 \
            && sudo -n true 2>/dev/null; then
        echo "tools/test.sh: installing Debian's chromium for the browser tests (sudo)"
        if ! { sudo -n apt-get update -qq && sudo -n DEBIAN_FRONTEND=noninteractive \
                apt-get install -y -qq chromium >/dev/null; }; then
            browser_reason="sudo apt-get install chromium failed"
        fi
    else
        browser_reason="no chromium on PATH and no apt-get with root rights to install it"
    fi
fi
if ! command -v chromium >/dev/null 2>&1 && [ -z "$browser_reason" ]; then
    browser_reason="chromium is still not on PATH after installing"
fi
if ! "$PY" -c "import playwright.sync_api" 2>/dev/null; then
    browser_reason="${browser_reason:+$browser_reason; }the playwright python package did not install"
fi

if [ -n "$browser_reason" ]; then
    if [ "${CI:-}" = "true" ]; then
        echo "tools/test.sh: browser tests are required on CI but cannot run: $browser_reason" >&2
        export EKEXPLORE_REQUIRE_BROWSER=1
    else
        echo "tools/test.sh: SKIPPING the browser tests: $browser_reason"
    fi
else
    echo "tools/test.sh: browser tests use $(command -v chromium) ($(chromium --version 2>/dev/null | head -1))"
    if [ "${CI:-}" = "true" ]; then
        export EKEXPLORE_REQUIRE_BROWSER=1
    fi
fi

"$PY" -m pytest "$@"
