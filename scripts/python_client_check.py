#!/usr/bin/env python3
"""Submit a CSV batch through the generated Python client, wait for it, fetch cases.parquet.

Run by scripts/python_client_check.sh (which generates thermosieve/v1/screening_pb2*.py and
starts the service). Standard library + grpcio only.
"""

import argparse
import csv
import json
import os
import sys
import time

import grpc
from parquet_check import check_table
from thermosieve.v1 import screening_pb2 as pb
from thermosieve.v1 import screening_pb2_grpc as rpc

CONDITIONS_K = {"process_temperature_k", "pressure_bar", "scale_mol", "reaction_mass_kg", "cp_kj_per_kg_k",
                "dosing_time_h", "accumulation_fraction", "mtt_k", "t_d24_k", "dsc_onset_k",
                "coolant_temperature_k", "ua_w_per_k"}
CELSIUS = {"process_temperature_c", "mtt_c", "t_d24_c", "dsc_onset_c", "coolant_temperature_c"}


def cases(path):
    with open(path, newline="", encoding="utf-8") as f:
        for n, row in enumerate(csv.DictReader(f), start=1):
            c = pb.Case(case_id=row.get("case_id", ""), reaction=row.get("reaction", ""),
                        route_id=row.get("route_id", ""), phase=row.get("phase", ""), row_number=n)
            errors = []
            if row.get("step"):
                c.step = int(row["step"])
            for k, v in row.items():
                if k in ("case_id", "reaction", "route_id", "step", "phase") or not v:
                    continue
                field = k[:-2] + "_k" if k in CELSIUS else k
                if field in CONDITIONS_K:
                    try:
                        x = float(v) + (273.15 if k in CELSIUS else 0.0)
                    except ValueError:
                        errors.append(f"column {k}: expected a number, got {v!r}")
                        continue
                    setattr(c.conditions, field, x)
                else:
                    c.conditions.extra[k] = v
            if errors:
                c.input_error = f"row {n}, " + "; ".join(errors)
            yield c


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--front", required=True)
    ap.add_argument("--input", required=True)
    ap.add_argument("--out", required=True)
    ap.add_argument("--tls-ca", help="CA certificate (PEM) of a front with TLS")
    a = ap.parse_args()
    # The token comes from the environment, never from the command line.
    token = os.environ.get("THERMOSIEVE_TOKEN")
    if a.tls_ca:
        with open(a.tls_ca, "rb") as f:
            creds = grpc.ssl_channel_credentials(root_certificates=f.read())
        if token:
            creds = grpc.composite_channel_credentials(creds, grpc.access_token_call_credentials(token))
        channel = grpc.secure_channel(a.front, creds)
    else:
        channel = grpc.insecure_channel(a.front)
    if a.tls_ca and token:
        # Without the token the front refuses the call.
        bare = grpc.secure_channel(a.front, grpc.ssl_channel_credentials(root_certificates=open(a.tls_ca, "rb").read()))
        try:
            rpc.ScreeningStub(bare).GetBatchStatus(pb.GetBatchStatusRequest(batch_id="0" * 32), timeout=30)
            raise AssertionError("a call without a token was served")
        except grpc.RpcError as e:
            assert e.code() == grpc.StatusCode.UNAUTHENTICATED, e
        print("python client: a call without the token is UNAUTHENTICATED")
    grpc.channel_ready_future(channel).result(timeout=30)
    stub = rpc.ScreeningStub(channel)
    all_cases = list(cases(a.input))

    def requests():
        yield pb.SubmitBatchRequest(header=pb.BatchHeader(label="python client check"))
        for c in all_cases:
            yield pb.SubmitBatchRequest(case=c)

    r = stub.SubmitBatch(requests())
    print(f"python client: batch {r.batch_id}, {r.cases_received} cases, {r.chunks} chunks")
    last = None
    deadline = time.time() + 180
    for st in stub.WatchBatch(pb.WatchBatchRequest(batch_id=r.batch_id), timeout=180):
        last = st
        if time.time() > deadline:
            break
    assert last is not None and last.state == pb.BATCH_STATE_DONE, last
    os.makedirs(a.out, exist_ok=True)
    data = b"".join(ch.data for ch in stub.FetchTable(pb.FetchTableRequest(batch_id=r.batch_id, table=pb.TABLE_CASES)))
    with open(os.path.join(a.out, "cases.parquet"), "wb") as f:
        f.write(data)
    assert data[:4] == b"PAR1" and data[-4:] == b"PAR1", "cases.parquet is a Parquet file"
    manifest = json.loads(b"".join(ch.data for ch in stub.FetchTable(pb.FetchTableRequest(batch_id=r.batch_id, table=pb.TABLE_MANIFEST))))
    assert manifest["counts"]["cases"] == len(all_cases), manifest["counts"]
    print(f"python client: fetched cases.parquet ({len(data)} bytes); {manifest['counts']['cases']} cases, "
          f"{manifest['counts']['cases_error']} errors")
    print("python client:", check_table(os.path.join(a.out, "cases.parquet"), rows=len(all_cases),
                                         case_ids=[c.case_id for c in all_cases]))
    print("1 passed, 0 failed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
