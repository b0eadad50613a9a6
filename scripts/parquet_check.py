#!/usr/bin/env python3
"""Read a batch's tables with pyarrow, not with polars, the library that wrote them.

    parquet_check.py BATCH_DIR INPUT.csv

Checks every table the manifest lists: the footer's row count equals the row groups' sum and the
manifest's count; every numeric column's row-group statistics (null count, min, max) bound that
row group's rows; the cases table holds the input's case ids in input order. Also imported by
python_client_check.py for the table fetched over gRPC.
"""

import csv
import json
import os
import sys


def check_table(path, rows=None, case_ids=None):
    """Footer rows = row groups' rows (= `rows`), case ids in order when given, and each row
    group's statistics against its rows. Returns (rows, row groups, statistics checked)."""
    import pyarrow.parquet as pq

    f = pq.ParquetFile(path)
    md = f.metadata
    groups = sum(md.row_group(i).num_rows for i in range(md.num_row_groups))
    assert md.num_rows == groups, (path, md.num_rows, groups)
    if rows is not None:
        assert md.num_rows == rows, (path, md.num_rows, rows)
    if case_ids is not None:
        assert f.read(columns=["case_id"]).column("case_id").to_pylist() == case_ids, f"{path}: case ids in input order"
    checked = 0
    for g in range(md.num_row_groups):
        group = f.read_row_group(g)
        for j in range(md.num_columns):
            st = md.row_group(g).column(j).statistics
            col = group.column(j)
            if st is None:
                continue
            name = md.schema.column(j).name
            assert st.null_count == col.null_count, (path, g, name, st.null_count, col.null_count)
            values = [v for v in col.drop_null().to_pylist() if v == v]  # without NaN
            if not st.has_min_max or not values or isinstance(values[0], str):
                continue  # text bounds may be truncated; numbers must be exact
            assert st.min <= min(values) and st.max >= max(values), (path, g, name, st.min, st.max)
            checked += 1
    return md.num_rows, md.num_row_groups, checked


def main():
    batch_dir, input_csv = sys.argv[1], sys.argv[2]
    with open(os.path.join(batch_dir, "manifest.json"), encoding="utf-8") as f:
        manifest = json.load(f)
    with open(input_csv, newline="", encoding="utf-8") as f:
        case_ids = [row["case_id"] for row in csv.DictReader(f)]
    assert manifest["counts"]["cases"] == len(case_ids), (manifest["counts"], len(case_ids))
    for entry in manifest["files"]:
        name = entry["name"]
        path = os.path.join(batch_dir, name)
        ids = case_ids if name == "cases.parquet" else None
        rows, groups, checked = check_table(path, rows=entry["rows"], case_ids=ids)
        print(f"embedded run: pyarrow reads {name}: {rows} rows in {groups} row group(s), "
              f"{checked} numeric column statistics bound their rows")
    print("1 passed, 0 failed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
