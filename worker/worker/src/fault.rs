//! Named points in finalization where the crash tests stop a real worker process.
//!
//! Built only with the `fault-points` feature, which the workspace's test builds turn on and
//! release builds never do. `THERMOSIEVE_FAULT_AT=<point>` aborts the process at that point (as
//! a kill -9 would stop it there); `<point>:sleep=<ms>` pauses it there instead, so a test can
//! restart Redis while the worker sits at that point. Without the feature every point is empty.

/// The tables are written (cases, trends, routes, species), the manifest is not.
pub const TABLES_WRITTEN: &str = "tables-written";
/// The manifest is written, DONE is not recorded.
pub const MANIFEST_WRITTEN: &str = "manifest-written";
/// DONE is recorded and the task acknowledged, the parts are not yet removed.
pub const DONE_RECORDED: &str = "done-recorded";

/// Every point, in the order a finalization passes them.
pub const POINTS: [&str; 3] = [TABLES_WRITTEN, MANIFEST_WRITTEN, DONE_RECORDED];

/// Stop or pause here when `THERMOSIEVE_FAULT_AT` names `point`.
#[cfg(feature = "fault-points")]
pub fn at(point: &str) {
    let Ok(wanted) = std::env::var("THERMOSIEVE_FAULT_AT") else {
        return;
    };
    let (name, action) = wanted.split_once(':').unwrap_or((wanted.as_str(), "abort"));
    if name != point {
        return;
    }
    match action.strip_prefix("sleep=").and_then(|ms| ms.parse::<u64>().ok()) {
        Some(ms) => {
            eprintln!("fault point {point}: pausing {ms} ms");
            std::thread::sleep(std::time::Duration::from_millis(ms));
        }
        None => {
            eprintln!("fault point {point}: aborting");
            std::process::abort();
        }
    }
}

/// Without the `fault-points` feature: nothing.
#[cfg(not(feature = "fault-points"))]
#[inline(always)]
pub fn at(_point: &str) {}
