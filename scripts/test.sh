#!/usr/bin/env bash
# The project's whole test suite, from a fresh clone: `scripts/test.sh`.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo test --workspace --locked
