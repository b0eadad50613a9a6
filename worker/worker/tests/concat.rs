//! Part files copied page by page into one table read back as the parts stacked.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use polars::prelude::*;
use thermosieve_worker::concat::Concat;
use thermosieve_worker::parts::{read_parquet, write_part};
use thermosieve_worker::WorkerError;

fn frame(ids: &[&str], values: &[Option<f64>]) -> DataFrame {
    df!("case_id" => ids, "value" => values).unwrap()
}

/// Write `parts` as part files in `dir` and join them into `dir/table.parquet` with the table
/// metadata `extra`. Returns the table's path, the rows `Concat` counted and the size it returned.
fn join(dir: &std::path::Path, parts: &[DataFrame], extra: Vec<(String, String)>) -> (std::path::PathBuf, u64, u64) {
    let out = dir.join("table.parquet");
    let mut file = std::fs::File::create(&out).unwrap();
    let mut c = Concat::new(&mut file);
    for (i, df) in parts.iter().enumerate() {
        let p = dir.join(format!("part-{i}.parquet"));
        write_part(&p, df).unwrap();
        c.append(&p).unwrap();
    }
    let rows = c.rows;
    let size = c.finish(extra, &out).unwrap().unwrap();
    (out, rows, size)
}

#[test]
fn copied_pages_read_back_as_the_parts_stacked_with_the_tables_metadata() {
    let dir = tempfile::tempdir().unwrap();
    let a = frame(&["a", "b"], &[Some(1.5), None]);
    let b = frame(&["c"], &[Some(-2.25)]);
    let empty = frame(&[], &[]);
    let (out, rows, _) = join(
        dir.path(),
        &[a.clone(), empty, b.clone()],
        vec![("thermosieve.table".into(), "test".into())],
    );
    assert_eq!(rows, 3);

    let back = read_parquet(&out).unwrap();
    assert!(back.equals_missing(&a.vstack(&b).unwrap()), "{back}");
    let mut reader = ParquetReader::new(std::fs::File::open(&out).unwrap());
    // Small parts join into one row group.
    assert_eq!(reader.get_metadata().unwrap().row_groups.len(), 1);
    let md = reader.get_metadata().unwrap().key_value_metadata().clone().unwrap();
    assert!(md
        .iter()
        .any(|k| k.key == "thermosieve.table" && k.value.as_deref() == Some("test")));
}

#[test]
fn a_part_with_another_schema_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let p1 = dir.path().join("one.parquet");
    let p2 = dir.path().join("two.parquet");
    write_part(&p1, &frame(&["a"], &[Some(1.0)])).unwrap();
    write_part(&p2, &df!("case_id" => ["b"], "other" => [1u32]).unwrap()).unwrap();
    let mut sink = Vec::new();
    let mut c = Concat::new(&mut sink);
    c.append(&p1).unwrap();
    let e = c.append(&p2).unwrap_err();
    assert!(matches!(e, WorkerError::Concat { .. }), "{e}");
    assert!(e.to_string().contains("schema differs"), "{e}");
}

#[test]
fn a_part_with_dictionary_pages_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let plain = dir.path().join("plain.parquet");
    let dictionary = dir.path().join("dictionary.parquet");
    let repeated = || vec!["same text"; 500];
    write_part(&plain, &df!("case_id" => repeated()).unwrap()).unwrap();
    // Polars' own writer uses a dictionary for a column of one repeated string.
    ParquetWriter::new(std::fs::File::create(&dictionary).unwrap())
        .finish(&mut df!("case_id" => repeated()).unwrap())
        .unwrap();
    let mut sink = Vec::new();
    let mut c = Concat::new(&mut sink);
    c.append(&plain).unwrap();
    let e = c.append(&dictionary).unwrap_err();
    assert!(e.to_string().contains("dictionary page"), "{e}");
}

/// Rows `from..to`: an id, a float that rises with the row (every seventh missing) and a count.
fn numbered(from: u32, to: u32) -> DataFrame {
    let ids: Vec<String> = (from..to).map(|i| format!("case-{i:06}")).collect();
    let values: Vec<Option<f64>> = (from..to).map(|i| (i % 7 != 0).then(|| f64::from(i) * 0.5 - 1000.0)).collect();
    let counts: Vec<u32> = (from..to).map(|i| i * 3).collect();
    df!("case_id" => ids, "value" => values, "count" => counts).unwrap()
}

#[test]
fn row_groups_past_the_first_read_back_with_their_own_statistics() {
    use polars_parquet::parquet::read::read_metadata;
    use polars_parquet::parquet::statistics::Statistics;

    let dir = tempfile::tempdir().unwrap();
    // 40,000 + 30,000 rows pass ROW_GROUP_ROWS (65,536): the first row group closes after the
    // second part, the third part makes the second row group, written at an offset of its own.
    let bounds = [(0u32, 40_000u32), (40_000, 70_000), (70_000, 90_000)];
    let parts: Vec<DataFrame> = bounds.iter().map(|(from, to)| numbered(*from, *to)).collect();
    let (out, _, size) = join(dir.path(), &parts, Vec::new());
    assert_eq!(size, std::fs::metadata(&out).unwrap().len(), "returned size is the file's");

    let whole = numbered(0, 90_000);
    assert!(read_parquet(&out).unwrap().equals_missing(&whole));

    // Each row group's chunk statistics describe its own rows: a reader that skips row groups
    // by them (a filter on value or count) must not skip rows it needs.
    let meta = read_metadata(&mut std::fs::File::open(&out).unwrap()).unwrap();
    assert_eq!(meta.num_rows, 90_000, "the footer's row count is the row groups' sum");
    let groups: Vec<(u32, u32)> = vec![(0, 70_000), (70_000, 90_000)];
    assert_eq!(meta.row_groups.len(), groups.len());
    for (g, (from, to)) in meta.row_groups.iter().zip(&groups) {
        assert_eq!(g.num_rows(), (to - from) as usize);
        let rows = numbered(*from, *to);
        let cols = g.parquet_columns();
        let Statistics::Binary(ids) = cols[0].statistics(&meta.footer_buf).unwrap().unwrap() else {
            panic!("case_id statistics")
        };
        assert_eq!(ids.min_value.as_deref(), Some(format!("case-{from:06}").as_bytes()));
        assert_eq!(ids.max_value.as_deref(), Some(format!("case-{:06}", to - 1).as_bytes()));
        let Statistics::Double(values) = cols[1].statistics(&meta.footer_buf).unwrap().unwrap() else {
            panic!("value statistics")
        };
        let v = rows.column("value").unwrap().f64().unwrap();
        assert_eq!(values.min_value, v.min());
        assert_eq!(values.max_value, v.max());
        assert_eq!(values.null_count, Some(v.null_count() as i64));
        let Statistics::Int32(counts) = cols[2].statistics(&meta.footer_buf).unwrap().unwrap() else {
            panic!("count statistics")
        };
        assert_eq!(counts.min_value, Some((from * 3) as i32));
        assert_eq!(counts.max_value, Some(((to - 1) * 3) as i32));
    }
}

#[test]
fn only_empty_parts_make_no_row_group() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("empty.parquet");
    write_part(&p, &frame(&[], &[])).unwrap();
    let mut sink = Vec::new();
    let mut c = Concat::new(&mut sink);
    c.append(&p).unwrap();
    c.append(&p).unwrap();
    // None: the caller writes its empty table instead.
    assert_eq!(c.finish(Vec::new(), &p).unwrap(), None);
    assert!(sink.is_empty());
}
