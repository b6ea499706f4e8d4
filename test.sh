#!/usr/bin/env bash
# Installs what the tests need (Python packages, and ngspice for the simulator checks), then runs the whole suite.
set -euo pipefail
cd "$(dirname "$0")"
python3 -m pip install --quiet -e '.[test]'
if ! command -v ngspice >/dev/null 2>&1; then
    if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null 2>&1; then
        apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq ngspice >/dev/null
    else
        echo "test.sh: ngspice is not installed; install it (Debian: apt-get install -y ngspice) for the simulator checks" >&2
    fi
fi
# pytest exits 5 when it collects no test; that is a failure here, as is any other non-zero status.
python3 -m pytest "$@"
