#!/usr/bin/env bash
# The whole test suite: installs redis-server when missing, runs every Rust test, then the
# Python client check when python3 is available. Run from anywhere: scripts/test.sh
set -euo pipefail
cd "$(dirname "$0")/.."

if ! command -v redis-server >/dev/null 2>&1; then
    if [ "$(id -u)" = "0" ]; then
        echo "redis-server missing: installing it (apt-get install -y redis-server)"
        apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq redis-server >/dev/null
    elif command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
        echo "redis-server missing: installing it (sudo apt-get install -y redis-server)"
        sudo apt-get update -qq && sudo DEBIAN_FRONTEND=noninteractive apt-get install -y -qq redis-server >/dev/null
    else
        echo "error: the end-to-end tests need redis-server (Redis 7+); install it, e.g. 'apt-get install -y redis-server', and rerun" >&2
        exit 1
    fi
fi
# The tests start their own redis-server per test on free ports; none uses 6379.

cargo test --workspace --locked

if command -v python3 >/dev/null 2>&1; then
    scripts/python_client_check.sh
    scripts/check_manifests.sh
else
    echo "python3 not found: skipping the Python client check and the manifest check"
fi
