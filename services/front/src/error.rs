//! The front's one error enum, mapped once to `tonic::Code`.

use thermosieve_queue::QueueError;

/// Seconds a refused submission is told to wait (message text and `retry-after` metadata).
pub const RETRY_AFTER_S: u64 = 5;

/// Why a front request failed.
#[derive(Debug, thiserror::Error)]
pub enum FrontError {
    /// A malformed request: names the field.
    #[error("{field}: {reason}")]
    InvalidArgument { field: String, reason: String },
    #[error("no batch {0}")]
    NotFound(String),
    #[error("the queue holds {depth} chunks, at its limit of {limit}; retry in {RETRY_AFTER_S} s or later")]
    QueueFull { depth: u64, limit: u64 },
    /// Too many submissions at once (in all, or of one tenant).
    #[error("{0}; retry in {RETRY_AFTER_S} s or later")]
    Busy(String),
    #[error("{0}")]
    FailedPrecondition(String),
    #[error("queue: {0}")]
    Queue(#[from] QueueError),
    #[error("{path}: {source}")]
    Io { path: String, source: std::io::Error },
    /// A worker step (batch folder, part or table files) failed.
    #[error("{0}")]
    Worker(#[from] thermosieve_worker::WorkerError),
    /// A task the front waits on (the engine on inline cases, an embedded worker) panicked or
    /// was cancelled.
    #[error("{what} stopped: {source}")]
    Task {
        what: &'static str,
        source: tokio::task::JoinError,
    },
    /// The gRPC server could not be set up (TLS settings) or stopped with an error.
    #[error("grpc server: {0}")]
    Transport(#[from] tonic::transport::Error),
    #[error("grpc reflection: {0}")]
    Reflection(#[from] tonic_reflection::server::Error),
    /// The system's random source failed (batch ids).
    #[error("random source: {0}")]
    Random(getrandom::Error),
    /// An embedded run's batch did not end DONE, or its queue lost it.
    #[error("batch ended {state}: {message}")]
    BatchEnded { state: &'static str, message: String },
}

impl FrontError {
    pub fn invalid(field: &str, reason: impl Into<String>) -> FrontError {
        FrontError::InvalidArgument {
            field: field.to_string(),
            reason: reason.into(),
        }
    }
}

impl From<FrontError> for tonic::Status {
    fn from(e: FrontError) -> tonic::Status {
        let code = match &e {
            FrontError::InvalidArgument { .. } => tonic::Code::InvalidArgument,
            FrontError::NotFound(_) => tonic::Code::NotFound,
            FrontError::QueueFull { .. } | FrontError::Busy(_) => tonic::Code::ResourceExhausted,
            FrontError::FailedPrecondition(_) => tonic::Code::FailedPrecondition,
            FrontError::Queue(q) if q.retryable() => tonic::Code::Unavailable,
            FrontError::Queue(QueueError::UnknownBatch(_)) => tonic::Code::NotFound,
            FrontError::Queue(_)
            | FrontError::Io { .. }
            | FrontError::Worker(_)
            | FrontError::Task { .. }
            | FrontError::Transport(_)
            | FrontError::Reflection(_)
            | FrontError::Random(_)
            | FrontError::BatchEnded { .. } => tonic::Code::Internal,
        };
        if code == tonic::Code::Internal {
            tracing::error!(error = %e, "internal error");
        }
        let mut status = tonic::Status::new(code, e.to_string());
        if code == tonic::Code::ResourceExhausted {
            status.metadata_mut().insert("retry-after", RETRY_AFTER_S.into());
        }
        status
    }
}
