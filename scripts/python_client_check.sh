#!/usr/bin/env bash
# A Python gRPC client generated from the .proto submits the demo batch to a real front
# (redis-server + `thermosieve serve` + `thermosieve work`, all on loopback, all stopped at the
# end) and fetches cases.parquet; then reads an embedded run's tables with pyarrow. Needs python3
# with venv, redis-server, and the registry for pip.
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
# The front as it would be exposed: TLS (a CA and a certificate for localhost made here) and a
# bearer token, read by the clients from the environment.
openssl req -x509 -newkey rsa:2048 -nodes -days 1 -subj "/CN=thermosieve check CA" \
    -keyout "$WORK/ca.key" -out "$WORK/ca.pem" 2>/dev/null
openssl req -newkey rsa:2048 -nodes -subj "/CN=localhost" -keyout "$WORK/front.key" -out "$WORK/front.csr" 2>/dev/null
printf 'subjectAltName=DNS:localhost\nbasicConstraints=CA:FALSE\n' > "$WORK/front.ext"
openssl x509 -req -days 1 -in "$WORK/front.csr" -CA "$WORK/ca.pem" -CAkey "$WORK/ca.key" -CAcreateserial \
    -extfile "$WORK/front.ext" -out "$WORK/front.pem" 2>/dev/null
TOKEN=$(openssl rand -hex 24)
printf '# tenant token\nnightly-check %s\n' "$TOKEN" > "$WORK/tokens"
export THERMOSIEVE_REDIS_URL=redis://127.0.0.1:$RPORT/ THERMOSIEVE_RESULTS_DIR=$WORK/results THERMOSIEVE_LOG=warn
FMETRICS=$(free_port)
WMETRICS=$(free_port)
"$BIN" serve --listen 127.0.0.1:"$FPORT" --tls-cert "$WORK/front.pem" --tls-key "$WORK/front.key" \
    --tokens-file "$WORK/tokens" --metrics-listen 127.0.0.1:"$FMETRICS" >/dev/null &
PIDS+=($!)
"$BIN" work --threads 2 --metrics-listen 127.0.0.1:"$WMETRICS" >/dev/null &
PIDS+=($!)

"$VENV/bin/python" -m grpc_tools.protoc -I proto --python_out="$WORK" --grpc_python_out="$WORK" proto/thermosieve/v1/screening.proto
THERMOSIEVE_TOKEN=$TOKEN PYTHONPATH=$WORK "$VENV/bin/python" scripts/python_client_check.py \
    --front localhost:"$FPORT" --tls-ca "$WORK/ca.pem" --input examples/nightly_screen.csv --out "$WORK/fetched"

# The CLI's own client through the same front: submit, watch, fetch with TLS and the token.
export THERMOSIEVE_FRONT=https://localhost:$FPORT THERMOSIEVE_TLS_CA=$WORK/ca.pem
echo "$TOKEN" > "$WORK/token"
ID=$(THERMOSIEVE_TOKEN_FILE=$WORK/token "$BIN" submit examples/nightly_screen.csv --label "cli check" 2>/dev/null)
THERMOSIEVE_TOKEN=$TOKEN "$BIN" watch "$ID" >/dev/null
THERMOSIEVE_TOKEN=$TOKEN "$BIN" fetch "$ID" --out "$WORK/cli-fetched" >/dev/null
CASES=$(grep -A3 '"counts"' "$WORK/cli-fetched/manifest.json" | sed -n 's/.*"cases": \([0-9]*\).*/\1/p')
ROWS=$(($(wc -l < examples/nightly_screen.csv) - 1))
if [ "$CASES" != "$ROWS" ]; then
    echo "cli check: the fetched manifest counts $CASES cases, the input has $ROWS" >&2
    exit 1
fi
if THERMOSIEVE_TOKEN=not-the-token-at-all "$BIN" fetch "$ID" --out "$WORK/stranger" 2>/dev/null; then
    echo "cli check: a wrong token fetched the batch" >&2
    exit 1
fi
echo "cli client over TLS with a token: $CASES cases fetched; a wrong token is refused"

# /metrics of the front and the worker, read after the two batches: the counts must be theirs.
"$VENV/bin/python" - "$FMETRICS" "$WMETRICS" "$ROWS" <<'PY'
import sys
import urllib.request

front, worker, rows = sys.argv[1], sys.argv[2], int(sys.argv[3])


def scrape(port):
    text = urllib.request.urlopen(f"http://127.0.0.1:{port}/metrics", timeout=10).read().decode()
    values = {}
    for line in text.splitlines():
        if line and not line.startswith("#"):
            name, value = line.rsplit(" ", 1)
            values[name] = float(value)
    return values


f, w = scrape(front), scrape(worker)
cases = w['thermosieve_cases_total{outcome="ok"}'] + w['thermosieve_cases_total{outcome="error"}']
assert cases == 2 * rows, (cases, rows)
assert w['thermosieve_batches_finalized_total{outcome="done"}'] == 2, w
assert w["thermosieve_chunk_seconds_count"] == w["thermosieve_chunks_total"] >= 2, w
assert f['thermosieve_submissions_total{outcome="accepted"}'] == 2, f
assert f["thermosieve_queue_up"] == 1, f
assert f['thermosieve_queue_tasks{stage="waiting"}'] == 0 and f['thermosieve_queue_tasks{stage="in_flight"}'] == 0, f
assert f['thermosieve_batches{state="done"}'] == 2 and f['thermosieve_batches{state="running"}'] == 0, f
print(f"metrics: worker {cases:.0f} cases in {w['thermosieve_chunks_total']:.0f} chunks, front 2 submissions, 2 batches done, queue empty")
PY

# The embedded run's tables, read with pyarrow (scripts/parquet_check.py): the demo three times
# over (ids made unique), 5,997 cases in chunks of 500, so the trends table is joined from 12
# parts into 2 row groups and every offset past the first row group is read.
"$VENV/bin/python" - examples/nightly_screen.csv "$WORK/thrice.csv" <<'PY'
import csv
import sys

with open(sys.argv[1], newline="", encoding="utf-8") as f:
    rows = list(csv.DictReader(f))
with open(sys.argv[2], "w", newline="", encoding="utf-8") as f:
    w = csv.DictWriter(f, fieldnames=list(rows[0]))
    w.writeheader()
    for copy in range(3):
        for r in rows:
            r = dict(r)
            for k in ("case_id", "route_id"):
                if copy and r[k]:
                    r[k] = f"{r[k]}-copy{copy}"
            w.writerow(r)
PY
THERMOSIEVE_LOG=warn "$BIN" run "$WORK/thrice.csv" --out "$WORK/embedded" --chunk-size 500 >/dev/null
CHECK=$("$VENV/bin/python" scripts/parquet_check.py "$WORK"/embedded/*/ "$WORK/thrice.csv")
echo "$CHECK"
if ! grep -q "trends.parquet: .* in 2 row group(s)" <<<"$CHECK"; then
    echo "embedded check: the trends table should span 2 row groups" >&2
    exit 1
fi
