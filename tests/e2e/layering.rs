//! The crates' dependencies as DEVELOPERS.md draws them, checked on `cargo metadata`: a crate may
//! depend only on crates of a lower layer, and no production crate on the test crate.

use std::collections::BTreeMap;

/// Layer of each production crate: a crate may use only crates of a lower layer.
const LAYERS: [(&str, u8); 6] = [
    ("thermosieve-engine", 0),
    ("thermosieve-proto", 0),
    ("thermosieve-queue", 0),
    ("thermosieve-worker", 1),
    ("thermosieve-front", 2),
    ("thermosieve-cli", 3),
];

#[test]
fn no_crate_depends_on_a_crate_of_its_own_layer_or_above() {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let out = std::process::Command::new(cargo)
        .args(["metadata", "--format-version", "1", "--no-deps", "--offline"])
        .current_dir(thermosieve_e2e::root())
        .output()
        .expect("cargo metadata runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let meta: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
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
