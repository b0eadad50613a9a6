//! The crates' dependencies as DEVELOPERS.md draws them, checked on `cargo metadata`: a crate may
//! depend only on crates of a lower layer, and no production crate on the test crate.

use std::collections::BTreeMap;

/// Layer of each production crate: a crate may use only crates of a lower layer.
const LAYERS: [(&str, u8); 7] = [
    ("thermosieve-engine", 0),
    ("thermosieve-proto", 0),
    ("thermosieve-model", 0),
    ("thermosieve-queue", 1),
    ("thermosieve-worker", 2),
    ("thermosieve-front", 3),
    ("thermosieve-cli", 4),
];

/// `cargo metadata` of the workspace, offline, with `extra` arguments.
fn cargo_metadata(extra: &[&str]) -> serde_json::Value {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let out = std::process::Command::new(cargo)
        .args(["metadata", "--format-version", "1", "--offline"])
        .args(extra)
        .current_dir(thermosieve_e2e::root())
        .output()
        .expect("cargo metadata runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).unwrap()
}

/// The host's target triple, as rustc reports it.
fn host_triple() -> String {
    let rustc = std::env::var("RUSTC").unwrap_or_else(|_| "rustc".into());
    let out = std::process::Command::new(rustc).arg("-vV").output().expect("rustc -vV runs");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .find_map(|l| l.strip_prefix("host: "))
        .expect("rustc -vV names the host")
        .to_string()
}

#[test]
fn no_crate_depends_on_a_crate_of_its_own_layer_or_above() {
    let meta = cargo_metadata(&["--no-deps"]);
    let layer: BTreeMap<&str, u8> = LAYERS.into_iter().collect();
    let mut checked = 0;
    let mut wrong = Vec::new();
    for p in meta["packages"].as_array().unwrap() {
        let name = p["name"].as_str().unwrap();
        let Some(&mine) = layer.get(name) else { continue };
        checked += 1;
        for d in p["dependencies"].as_array().unwrap() {
            let dep = d["name"].as_str().unwrap();
            // Build and normal dependencies; dev-dependencies are the tests' business.
            if d["kind"].as_str() == Some("dev") {
                continue;
            }
            if dep == "thermosieve-e2e" || dep == "thermosieve-bench" {
                wrong.push(format!("{name} → {dep} (a test or bench crate)"));
            }
            if let Some(&theirs) = layer.get(dep) {
                if theirs >= mine {
                    wrong.push(format!("{name} (layer {mine}) → {dep} (layer {theirs})"));
                }
            }
        }
    }
    assert_eq!(checked, LAYERS.len(), "a crate of the diagram is missing from the workspace");
    assert!(wrong.is_empty(), "dependencies against the layering of DEVELOPERS.md: {wrong:?}");
}

/// `1.95` → (1, 95, 0).
fn version(v: &str) -> (u32, u32, u32) {
    let mut parts = v.split('.').map(|p| p.parse::<u32>().unwrap_or(0));
    (parts.next().unwrap_or(0), parts.next().unwrap_or(0), parts.next().unwrap_or(0))
}

/// The declared `rust-version` is a promise that this toolchain version builds the project:
/// every crate of the workspace declares it, and it is at least the newest `rust-version` of the
/// dependencies in Cargo.lock built for this platform (a dependency needing a newer compiler
/// breaks the promise). Dependencies of other platforms only are not checked: offline, cargo
/// cannot read manifests it never downloaded.
#[test]
fn the_declared_rust_version_covers_every_dependency() {
    // Only this machine's packages: offline, cargo cannot read the manifests of crates for
    // other platforms (never downloaded), and CI builds for this one.
    let host = host_triple();
    let meta = cargo_metadata(&["--locked", "--filter-platform", &host]);
    let members: Vec<&str> = meta["workspace_members"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|m| m.as_str())
        .collect();
    let mut declared = Vec::new();
    let mut needed = ((0, 0, 0), String::new());
    for p in meta["packages"].as_array().unwrap() {
        let name = p["name"].as_str().unwrap_or_default();
        let rv = p["rust_version"].as_str();
        if members.contains(&p["id"].as_str().unwrap_or_default()) {
            declared.push((name.to_string(), rv.map(str::to_string)));
        } else if let Some(v) = rv {
            if version(v) > needed.0 {
                needed = (version(v), format!("{name} {v}"));
            }
        }
    }
    assert!(declared.len() >= 8, "{declared:?}");
    let missing: Vec<_> = declared.iter().filter(|(_, v)| v.is_none()).map(|(n, _)| n).collect();
    assert!(missing.is_empty(), "crates without rust-version.workspace = true: {missing:?}");
    for (name, v) in &declared {
        let v = v.as_deref().unwrap_or_default();
        assert!(
            version(v) >= needed.0,
            "{name} declares rust-version {v}, but {} needs a newer compiler",
            needed.1
        );
    }
}
