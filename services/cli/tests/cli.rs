//! The `thermosieve` binary as a user runs it: `run` on a small table, and the exit codes for
//! bad usage.

use std::process::Command;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_thermosieve"))
}

#[test]
fn run_writes_the_tables_and_prints_where_they_are() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("cases.tsv");
    std::fs::write(
        &input,
        "case_id\treaction\troute_id\tstep\nq1\tNaOH(s) + HCl(g) -> NaCl(s) + H2O(l)\tR\t1\nq2\tXq + O2 -> XqO\tR\t2\n",
    )
    .unwrap();
    let out = dir.path().join("results");
    let o = bin()
        .args(["run"])
        .arg(&input)
        .arg("--out")
        .arg(&out)
        .args(["--temperatures-k", "300,400"])
        .env("THERMOSIEVE_LOG", "warn")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("2 cases (1 ok, 1 error)"), "{text}");
    assert!(text.contains("cases.parquet") && text.contains("caution:"), "{text}");
    let batch = std::fs::read_dir(&out).unwrap().next().unwrap().unwrap().path();
    for f in [
        "cases.parquet",
        "trends.parquet",
        "routes.parquet",
        "species.parquet",
        "manifest.json",
    ] {
        assert!(batch.join(f).exists(), "{f}");
    }
}

#[test]
fn bad_usage_exits_2_with_a_message() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("cases.csv");
    std::fs::write(&input, "id,equation\n1,x\n").unwrap();
    let o = bin().arg("run").arg(&input).arg("--out").arg(dir.path()).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no column \"case_id\""));
    let good = dir.path().join("good.csv");
    std::fs::write(&good, "case_id,reaction\n1,CO + O2 -> CO2\n").unwrap();
    let o = bin()
        .arg("run")
        .arg(&good)
        .arg("--out")
        .arg(dir.path())
        .args(["--temperatures-k", "1"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("temperatures-k"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
}

#[test]
fn json_logs_are_one_object_per_line_without_batch_ids() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("cases.csv");
    std::fs::write(&input, "case_id,reaction\nc1,2 H2(g) + O2(g) -> 2 H2O(l)\n").unwrap();
    let o = bin()
        .arg("run")
        .arg(&input)
        .arg("--out")
        .arg(dir.path().join("out"))
        .env("THERMOSIEVE_LOG", "info")
        .env("THERMOSIEVE_LOG_FORMAT", "json")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stderr = String::from_utf8_lossy(&o.stderr);
    let logs: Vec<serde_json::Value> = stderr
        .lines()
        .map(|l| serde_json::from_str(l).unwrap_or_else(|e| panic!("not JSON ({e}): {l}")))
        .collect();
    let written = logs
        .iter()
        .find(|v| v["fields"]["message"] == "batch tables written")
        .unwrap_or_else(|| panic!("{stderr}"));
    assert_eq!(written["level"], "INFO");
    // The batch is named by its first 8 hex digits only: the full id is a capability.
    let id = std::fs::read_dir(dir.path().join("out"))
        .unwrap()
        .next()
        .unwrap()
        .unwrap()
        .file_name();
    let id = id.to_string_lossy();
    assert_eq!(written["fields"]["batch"], id[..8]);
    assert!(!stderr.contains(id.as_ref()), "{stderr}");
}
