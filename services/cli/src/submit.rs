//! A submission on the wire: the cases of an input table as `SubmitBatchRequest` messages.

use thermosieve_front::convert::case_to_pb;
use thermosieve_model::CaseInput;
use thermosieve_proto::v1 as pb;

/// Cases per `SubmitBatchRequest` a client sends (well under the 4 MiB message limit).
pub const CASES_PER_MESSAGE: usize = 256;

/// The case messages of a submission: cases in order, [`CASES_PER_MESSAGE`] to a message.
pub fn case_messages<I: IntoIterator<Item = CaseInput>>(cases: I) -> impl Iterator<Item = pb::SubmitBatchRequest> {
    let mut cases = cases.into_iter();
    std::iter::from_fn(move || {
        let list: Vec<pb::Case> = cases.by_ref().take(CASES_PER_MESSAGE).map(|c| case_to_pb(&c)).collect();
        if list.is_empty() {
            return None;
        }
        Some(pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Cases(pb::CaseList { cases: list })),
        })
    })
}
