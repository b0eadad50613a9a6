//! thermosieve-proto: the `thermosieve.v1` gRPC API, generated from `thermosieve/v1/*.proto`.
//!
//! It owns the wire types and the file descriptor set (for the reflection service). It must not
//! hold service logic: validation and the mapping to the queue's model live in the front crate.
//!
//! # Layout
//! - [`v1`]: messages, the `Screening` client and server traits.
//! - [`FILE_DESCRIPTOR_SET`]: the encoded descriptors of every file, for reflection.

/// Messages and services of package `thermosieve.v1`.
#[allow(clippy::all, missing_docs)]
pub mod v1 {
    tonic::include_proto!("thermosieve.v1");
}

/// Encoded `FileDescriptorSet` of the API, for `tonic-reflection`.
pub const FILE_DESCRIPTOR_SET: &[u8] = tonic::include_file_descriptor_set!("thermosieve_descriptor");
