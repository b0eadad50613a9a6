//! One set of input checks on every path: an input table run embedded, gRPC cases through Redis
//! to a worker, and ScreenInline. A bad case is an error row naming its field; the good case
//! beside it is screened.

use super::*;

/// (case id, what its error must name); `None`: the case is good.
const EXPECTED: [(&str, Option<&str>); 5] = [
    ("h2-burn", None),
    ("tiny-cp", Some("cp_kj_per_kg_k: expected a heat capacity from 0.01 to 100")),
    ("step-zero", Some("column step: expected a whole number ≥ 1")),
    ("vacuum-below-zero", Some("pressure_bar: expected a pressure above 0")),
    ("huge-mass", Some("reaction_mass_kg: expected a mass above 0 and up to 1e9 kg")),
];

const TABLE: &str = "case_id,reaction,route_id,step,cp_kj_per_kg_k,pressure_bar,reaction_mass_kg\n\
h2-burn,2 H2(g) + O2(g) -> 2 H2O(l),,,,,\n\
tiny-cp,2 H2(g) + O2(g) -> 2 H2O(l),,,1e-300,,\n\
step-zero,2 H2(g) + O2(g) -> 2 H2O(l),R,0,,,\n\
vacuum-below-zero,2 H2(g) + O2(g) -> 2 H2O(l),,,,-1,\n\
huge-mass,2 H2(g) + O2(g) -> 2 H2O(l),,,,,1e308\n";

fn cases() -> Vec<thermosieve_model::CaseInput> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("checks.csv");
    std::fs::write(&path, TABLE).unwrap();
    input::open(&path, None).unwrap().collect()
}

/// The same cases as a gRPC client sends them: typed fields, no reader's checks on the way.
fn wire_cases() -> Vec<pb::Case> {
    let base = |id: &str| pb::Case {
        case_id: id.into(),
        reaction: "2 H2(g) + O2(g) -> 2 H2O(l)".into(),
        conditions: Some(pb::ProcessConditions::default()),
        ..Default::default()
    };
    let mut v = vec![
        base("h2-burn"),
        base("tiny-cp"),
        base("step-zero"),
        base("vacuum-below-zero"),
        base("huge-mass"),
    ];
    v[1].conditions.as_mut().unwrap().cp_kj_per_kg_k = Some(1e-300);
    v[2].route_id = "R".into();
    v[2].step = Some(0);
    v[3].conditions.as_mut().unwrap().pressure_bar = Some(-1.0);
    v[4].conditions.as_mut().unwrap().reaction_mass_kg = Some(1e308);
    v
}

/// `rows`: (case id, status, error message, ΔH 298).
fn assert_rows(path: &str, rows: &[(String, String, String, Option<f64>)]) {
    assert_eq!(rows.len(), EXPECTED.len(), "{path}: {rows:?}");
    for (id, want) in EXPECTED {
        let (_, status, message, dh) = rows.iter().find(|r| r.0 == id).unwrap_or_else(|| panic!("{path}: no row {id}"));
        match want {
            None => {
                assert_eq!(status, "ok", "{path} {id}: {message}");
                // 2 ΔfH°(H2O, l) = 2 × −285.830 kJ/mol (CODATA Key Values, Cox, Wagman &
                // Medvedev 1989).
                assert!((dh.unwrap() + 571.66).abs() < 0.5, "{path} {id}: {dh:?}");
            }
            Some(text) => {
                assert_eq!(status, "error", "{path} {id}");
                assert!(message.contains(text), "{path} {id}: {message}");
            }
        }
    }
}

fn table_rows(df: &DataFrame) -> Vec<(String, String, String, Option<f64>)> {
    let ids = strings(df, "case_id");
    let status = strings(df, "status");
    let messages = strings(df, "error_message");
    let dh = floats(df, "delta_h_298_kj_per_mol");
    (0..df.height())
        .map(|i| {
            (
                ids[i].clone().unwrap_or_default(),
                status[i].clone().unwrap_or_default(),
                messages[i].clone().unwrap_or_default(),
                dh[i],
            )
        })
        .collect()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn every_path_applies_the_same_input_checks() {
    let dir = tempfile::tempdir().unwrap();
    let out = thermosieve_cli::embedded::run_cases(cases().into_iter(), BatchOptions::default(), dir.path(), 1)
        .await
        .expect("embedded run");
    assert_rows("embedded", &table_rows(&read_table(&out.batch_dir.join("cases.parquet"))));

    let svc = Service::start(1, |_| {}).await;
    let mut client = svc.client().await;
    let mut msgs = vec![pb::SubmitBatchRequest {
        item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader::default())),
    }];
    msgs.extend(wire_cases().into_iter().map(|c| pb::SubmitBatchRequest {
        item: Some(pb::submit_batch_request::Item::Case(c)),
    }));
    let id = client
        .submit_batch(tokio_stream::iter(msgs))
        .await
        .expect("submit")
        .into_inner()
        .batch_id;
    wait_done(&mut client, &id).await;
    let cases = read_table_bytes(fetch(&mut client, &id, pb::Table::Cases).await);
    assert_rows("redis", &table_rows(&cases));

    let inline = client
        .screen_inline(pb::ScreenInlineRequest {
            cases: wire_cases(),
            ..Default::default()
        })
        .await
        .expect("screen inline")
        .into_inner();
    let rows: Vec<_> = inline
        .cases
        .iter()
        .map(|r| {
            (
                r.case_id.clone(),
                r.status.clone(),
                r.error_message.clone(),
                r.delta_h_298_kj_per_mol,
            )
        })
        .collect();
    assert_rows("inline", &rows);
    svc.stop().await;
}
