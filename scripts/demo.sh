#!/usr/bin/env bash
# Screen the demo batch in one process and print where the tables are.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo run --release --locked -p thermosieve-cli -- run examples/nightly_screen.csv --out results/
