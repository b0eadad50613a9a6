//! Compiles `thermosieve/v1/*.proto` with protox (pure Rust: no system protoc) and generates
//! the tonic client and server. The file descriptor set is written to OUT_DIR for the
//! reflection service: with `compile_fds`, tonic-prost-build does not write it itself.

use std::path::PathBuf;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let protos = ["thermosieve/v1/screening.proto"];
    for p in &protos {
        println!("cargo:rerun-if-changed={p}");
    }
    let fds = protox::compile(protos, ["."])?;
    let out = PathBuf::from(std::env::var("OUT_DIR")?);
    std::fs::write(out.join("thermosieve_descriptor.bin"), prost::Message::encode_to_vec(&fds))?;
    tonic_prost_build::configure()
        .build_client(true)
        .build_server(true)
        .compile_fds(fds)?;
    Ok(())
}
