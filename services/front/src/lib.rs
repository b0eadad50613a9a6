//! thermosieve-front: the service's front door.
//!
//! It owns the `thermosieve.v1.Screening` gRPC service: validating requests (a malformed request
//! is INVALID_ARGUMENT naming the field; a bad case becomes an error row), making batch ids,
//! cutting case streams into chunks that keep each route whole, enqueueing with backpressure,
//! reporting progress and serving finished tables. It must not compute chemistry itself (workers do, except for the
//! small ScreenInline and ResolveSpecies calls) nor hold a whole batch in memory.
//!
//! # Layout
//! - [`ingest`]: batch options, ids, chunking by route, backpressure, sealing.
//! - [`convert`]: wire types ↔ model and rows.
//! - [`service`]: the tonic service, health and reflection, [`service::serve`].
//! - [`auth`]: bearer tokens and tenants (constant-time comparison, never logged).
//! - [`error`]: [`FrontError`] and its one mapping to `tonic::Code`.

pub mod auth;
pub mod convert;
pub mod error;
pub mod ingest;
pub mod service;

pub use error::FrontError;
pub use service::{serve, Access, Front, FrontConfig};
