//! Part files copied page by page into one table read back as the parts stacked.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use polars::prelude::*;
use thermosieve_worker::concat::Concat;
use thermosieve_worker::parts::{read_parquet, write_part};
use thermosieve_worker::WorkerError;

fn frame(ids: &[&str], values: &[Option<f64>]) -> DataFrame {
    df!("case_id" => ids, "value" => values).unwrap()
}

#[test]
fn copied_pages_read_back_as_the_parts_stacked_with_the_tables_metadata() {
    let dir = tempfile::tempdir().unwrap();
    let a = frame(&["a", "b"], &[Some(1.5), None]);
    let b = frame(&["c"], &[Some(-2.25)]);
    let empty = frame(&[], &[]);
    let mut paths = Vec::new();
    for (i, df) in [a.clone(), empty, b.clone()].into_iter().enumerate() {
        let p = dir.path().join(format!("part-{i}.parquet"));
        write_part(&p, &df).unwrap();
        paths.push(p);
    }
    let out = dir.path().join("table.parquet");
    let mut file = std::fs::File::create(&out).unwrap();
    let mut c = Concat::new(&mut file);
    for p in &paths {
        c.append(p).unwrap();
    }
    assert_eq!(c.rows, 3);
    c.finish(vec![("thermosieve.table".into(), "test".into())], &out).unwrap().unwrap();
    drop(file);

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
