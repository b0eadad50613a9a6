//! Wire types ↔ the queue's model and the worker's rows. Kept in one module so a new field is
//! mapped in one place.

use thermosieve_engine::ThermoPoint;
use thermosieve_model::{BatchState, CaseInput, Conditions, Progress, Table};
use thermosieve_proto::v1 as pb;
use thermosieve_worker::rows::{species_sources, CaseRow, STATUS_ERROR, STATUS_OK};

/// The wire mapping of the typed conditions, made from their one declaration
/// (`thermosieve_model::condition_fields!`): the proto's `ProcessConditions` has the same names.
macro_rules! conditions_wire {
    ($( $(#[doc = $doc:literal])* $name:ident: $min:expr, $max:expr, $expected:literal, $celsius:expr; )*) => {
        pub fn conditions_from_pb(c: Option<pb::ProcessConditions>) -> Conditions {
            let Some(c) = c else { return Conditions::default() };
            Conditions {
                $($name: c.$name,)*
                extra: c.extra.into_iter().collect(),
            }
        }

        pub fn conditions_to_pb(c: &Conditions) -> pb::ProcessConditions {
            pb::ProcessConditions {
                $($name: c.$name,)*
                extra: c.extra.clone().into_iter().collect(),
            }
        }
    };
}

thermosieve_model::condition_fields!(conditions_wire);

/// A batch file on the wire and in the results folder.
pub fn table_to_pb(t: Table) -> pb::Table {
    match t {
        Table::Cases => pb::Table::Cases,
        Table::Trends => pb::Table::Trends,
        Table::Routes => pb::Table::Routes,
        Table::Species => pb::Table::Species,
        Table::Manifest => pb::Table::Manifest,
    }
}

/// The batch file a wire table number names; `None` for an unknown or unspecified one.
pub fn table_from_pb(t: i32) -> Option<Table> {
    Table::ALL.into_iter().find(|&x| table_to_pb(x) as i32 == t)
}

fn non_empty(s: String) -> Option<String> {
    (!s.is_empty()).then_some(s)
}

/// A wire case as the queue carries it. Nothing is rejected here: checks that make a case an
/// error row happen in the ingest.
/// A wire case as the model's; the checks come after, in [`crate::ingest::validate_case`], the
/// same for every path.
pub fn case_from_pb(c: pb::Case) -> CaseInput {
    let input_error = non_empty(c.input_error);
    let phase = non_empty(c.phase).map(|p| p.to_ascii_lowercase());
    let conditions = conditions_from_pb(c.conditions);
    CaseInput {
        case_id: c.case_id,
        reaction: c.reaction,
        route_id: non_empty(c.route_id),
        step: c.step,
        phase,
        conditions,
        input_error: input_error.map(|e| {
            if e.starts_with("row ") || c.row_number == 0 {
                e
            } else {
                format!("row {}, {e}", c.row_number)
            }
        }),
        row: c.row_number,
    }
}

/// A model case on the wire (the CLI's `submit`).
pub fn case_to_pb(c: &CaseInput) -> pb::Case {
    pb::Case {
        case_id: c.case_id.clone(),
        reaction: c.reaction.clone(),
        route_id: c.route_id.clone().unwrap_or_default(),
        step: c.step,
        phase: c.phase.clone().unwrap_or_default(),
        conditions: Some(conditions_to_pb(&c.conditions)),
        input_error: c.input_error.clone().unwrap_or_default(),
        row_number: c.row,
    }
}

pub fn case_row_to_pb(r: &CaseRow) -> pb::CaseRow {
    pb::CaseRow {
        case_id: r.case_id.clone(),
        route_id: r.route_id.clone().unwrap_or_default(),
        step: r.step,
        status: (if r.ok { STATUS_OK } else { STATUS_ERROR }).to_string(),
        error_message: r.error_message.clone().unwrap_or_default(),
        balanced_equation: r.balanced_equation.clone().unwrap_or_default(),
        delta_h_298_kj_per_mol: r.delta_h_298_kj_per_mol,
        delta_s_298_j_per_mol_k: r.delta_s_298_j_per_mol_k,
        delta_g_298_kj_per_mol: r.delta_g_298_kj_per_mol,
        log10_k_298: r.log10_k_298,
        delta_g_zero_k: r.delta_g_zero_k,
        delta_h_uncertainty_kj_per_mol: r.delta_h_uncertainty_kj_per_mol,
        estimated_species: r.estimated_species,
        all_points_in_valid_range: r.all_points_in_valid_range,
        species_sources: species_sources(&r.species),
        notes: r.notes.clone().unwrap_or_default(),
    }
}

/// The trend rows of one case row.
pub fn trend_rows_to_pb(r: &CaseRow) -> impl Iterator<Item = pb::TrendRow> + '_ {
    r.trends.iter().map(|p| trend_point_to_pb(&r.case_id, p))
}

fn trend_point_to_pb(case_id: &str, r: &ThermoPoint) -> pb::TrendRow {
    pb::TrendRow {
        case_id: case_id.to_string(),
        temperature_k: r.temperature_k,
        delta_h_kj_per_mol: r.delta_h_kj_per_mol,
        delta_s_j_per_mol_k: r.delta_s_j_per_mol_k,
        delta_g_kj_per_mol: r.delta_g_kj_per_mol,
        log10_k: r.log10_k,
        in_valid_range: r.in_valid_range,
    }
}

pub fn state_to_pb(s: BatchState) -> pb::BatchState {
    match s {
        BatchState::Receiving => pb::BatchState::Receiving,
        BatchState::Running => pb::BatchState::Running,
        BatchState::Finalizing => pb::BatchState::Finalizing,
        BatchState::Done => pb::BatchState::Done,
        BatchState::Failed => pb::BatchState::Failed,
        BatchState::Cancelled => pb::BatchState::Cancelled,
    }
}

pub fn status_to_pb(batch_id: &str, p: &Progress) -> pb::BatchStatus {
    let end = p.finished_unix_ms.unwrap_or_else(thermosieve_model::now_unix_ms);
    let tables = if p.state == BatchState::Done {
        vec![
            pb::Table::Cases as i32,
            pb::Table::Trends as i32,
            pb::Table::Routes as i32,
            pb::Table::Species as i32,
            pb::Table::Manifest as i32,
        ]
    } else {
        Vec::new()
    };
    pb::BatchStatus {
        batch_id: batch_id.to_string(),
        state: state_to_pb(p.state) as i32,
        cases_total: p.cases_total,
        cases_done: p.cases_done,
        cases_error: p.cases_error,
        chunks_total: p.chunks_total,
        chunks_done: p.chunks_done,
        chunks_dead_lettered: p.chunks_dead,
        elapsed_seconds: end.saturating_sub(p.created_unix_ms) as f64 / 1000.0,
        message: p.message.clone(),
        tables,
    }
}
