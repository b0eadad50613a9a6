#!/usr/bin/env python3
"""Read a batch's tables with pyarrow, not with polars, the library that wrote them.

    parquet_check.py BATCH_DIR INPUT.csv

Checks the four tables: the footer's row count equals the row groups' sum, the rows read and the
count expected (input cases; ok cases × grid temperatures for trends; the manifest's routes and
species); every row group's null counts, and its numeric min and max equal to its rows' own; the
cases table holds the input's case ids in input order. Also imported by python_client_check.py
for the table fetched over gRPC.
"""

import csv
import json
import os
import sys


class CheckFailed(Exception):
    pass


def check(ok, *what):
    """An assertion that `python -O` keeps."""
    if not ok:
        raise CheckFailed(" ".join(str(w) for w in what))


def check_table(path, rows=None, case_ids=None):
    """Footer rows = row groups' rows = rows read (= `rows`), case ids in order when given, and
    each row group's statistics against its rows: null counts, and for numbers min and max equal
    to the rows' own. Returns what was read, as a line to print."""
    import pyarrow.parquet as pq

    f = pq.ParquetFile(path)
    md = f.metadata
    groups = sum(md.row_group(i).num_rows for i in range(md.num_row_groups))
    check(md.num_rows == groups, path, "footer rows", md.num_rows, "row groups' rows", groups)
    if rows is not None:
        check(md.num_rows == rows, path, "footer rows", md.num_rows, "expected", rows)
    if case_ids is not None:
        read = f.read(columns=["case_id"]).column("case_id").to_pylist()
        check(read == case_ids, path, "case ids are not the input's, in input order")
    checked = 0
    numeric_columns = 0
    for g in range(md.num_row_groups):
        group = f.read_row_group(g)
        check(group.num_rows == md.row_group(g).num_rows, path, "row group", g, "reads", group.num_rows, "rows, states",
              md.row_group(g).num_rows)
        for j in range(md.num_columns):
            name = md.schema.column(j).name
            col = group.column(j)
            values = [v for v in col.drop_null().to_pylist() if v == v]  # without NaN
            numeric = bool(values) and isinstance(values[0], (int, float)) and not isinstance(values[0], bool)
            numeric_columns += numeric
            st = md.row_group(g).column(j).statistics
            if st is None:
                check(not numeric, path, "row group", g, name, "has no statistics")
                continue
            check(st.null_count == col.null_count, path, g, name, "null count", st.null_count, "rows", col.null_count)
            if not numeric or not st.has_min_max:
                continue  # text bounds may be truncated; numbers must be exact
            check(st.min == min(values) and st.max == max(values), path, g, name, "statistics", st.min, st.max,
                  "rows", min(values), max(values))
            checked += 1
    check(numeric_columns == 0 or checked > 0, path, "no numeric statistics were checked")
    return (f"pyarrow reads {os.path.basename(path)}: {md.num_rows} rows in {md.num_row_groups} row group(s), "
            f"{checked} numeric column statistics equal their rows'")


def main():
    batch_dir, input_csv = sys.argv[1], sys.argv[2]
    with open(os.path.join(batch_dir, "manifest.json"), encoding="utf-8") as f:
        manifest = json.load(f)
    with open(input_csv, newline="", encoding="utf-8") as f:
        case_ids = [row["case_id"] for row in csv.DictReader(f)]
    counts = manifest["counts"]
    check(counts["cases"] == len(case_ids), "manifest counts", counts["cases"], "cases, the input has", len(case_ids))
    tables = {e["name"]: e for e in manifest["files"]}
    want = {"cases.parquet", "trends.parquet", "routes.parquet", "species.parquet"}
    check(set(tables) == want, "manifest lists", sorted(tables), "expected", sorted(want))
    # One trends row per ok case and grid temperature.
    expected = {
        "cases.parquet": len(case_ids),
        "trends.parquet": counts["cases_ok"] * len(manifest["temperature_grid_k"]),
        "routes.parquet": counts["routes"],
        "species.parquet": counts["species"],
    }
    for name in sorted(want):
        check(tables[name]["rows"] == expected[name], name, "manifest rows", tables[name]["rows"], "expected", expected[name])
        ids = case_ids if name == "cases.parquet" else None
        print("embedded run:", check_table(os.path.join(batch_dir, name), rows=expected[name], case_ids=ids))
    print("1 passed, 0 failed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
