#!/usr/bin/env bash
# A Python gRPC client generated from the .proto submits the demo batch to a real front
# (redis-server + `thermosieve serve` + `thermosieve work`, all on loopback, all stopped at the
# end) and fetches cases.parquet. Needs python3 with venv, redis-server, and the registry for pip.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-$ROOT/target}
cargo build --locked -q -p thermosieve-cli
BIN=$CARGO_TARGET_DIR/debug/thermosieve

VENV=$ROOT/.venv-client
if [ ! -x "$VENV/bin/python" ]; then
    python3 -m venv "$VENV"
fi
"$VENV/bin/pip" install -q -r scripts/requirements-client.txt

WORK=$(mktemp -d)
PIDS=()
cleanup() {
    # Workers and front first, redis last, so nothing logs a lost connection on the way out.
    for ((i=${#PIDS[@]}-1; i>=0; i--)); do kill "${PIDS[$i]}" 2>/dev/null || true; wait "${PIDS[$i]}" 2>/dev/null || true; done
    rm -rf "$WORK"
}
trap cleanup EXIT

free_port() { "$VENV/bin/python" -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1])'; }
RPORT=$(free_port)
redis-server --port "$RPORT" --bind 127.0.0.1 --save "" --appendonly no --dir "$WORK" >/dev/null &
PIDS+=($!)
for _ in $(seq 100); do
    if "$VENV/bin/python" -c "import socket,sys; s=socket.create_connection(('127.0.0.1',$RPORT)); s.sendall(b'PING\r\n'); sys.exit(0 if s.recv(7)==b'+PONG\r\n' else 1)" 2>/dev/null; then break; fi
    sleep 0.1
done
FPORT=$(free_port)
export THERMOSIEVE_REDIS_URL=redis://127.0.0.1:$RPORT/ THERMOSIEVE_RESULTS_DIR=$WORK/results THERMOSIEVE_LOG=warn
"$BIN" serve --listen 127.0.0.1:"$FPORT" >/dev/null &
PIDS+=($!)
"$BIN" work --threads 2 >/dev/null &
PIDS+=($!)

"$VENV/bin/python" -m grpc_tools.protoc -I proto --python_out="$WORK" --grpc_python_out="$WORK" proto/thermosieve/v1/screening.proto
PYTHONPATH=$WORK "$VENV/bin/python" scripts/python_client_check.py --front 127.0.0.1:"$FPORT" --input examples/nightly_screen.csv --out "$WORK/fetched"
