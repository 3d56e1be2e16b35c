//! The workspace's house rules, checked as an ordinary test: every Rust file opens with a `//!` doc, no Rust
//! file passes `LINE_LIMIT` lines, the crate table in DEVELOPERS.md lists exactly what each manifest
//! depends on, and the manifests keep the architecture's invariants (which crate may use which, and which
//! crate alone links the inference library, the HTTP stack and the database drivers).
//!
//! Owns: those checks only. Must not: build, run or parse Rust code; it reads text files and manifests.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// The longest a Rust file may be, in lines. A file should read at one sitting (STYLE.md: a few hundred
/// lines is healthy, split well before 800); this is the ceiling that fails the build, not the target.
const LINE_LIMIT: usize = 1000;

/// The directories whose Rust files the file rules cover.
const RUST_ROOTS: [&str; 5] = ["src", "tests", "benches", "examples", "fuzz"];

/// The heading of the crate table in DEVELOPERS.md.
const TABLE_HEADING: &str = "### Crates of the workspace";

fn workspace_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn rust_files(directory: &Path, found: &mut Vec<PathBuf>) {
    let mut entries: Vec<PathBuf> = std::fs::read_dir(directory)
        .unwrap_or_else(|error| panic!("reading {}: {error}", directory.display()))
        .map(|entry| entry.unwrap().path())
        .collect();
    entries.sort();
    for path in entries {
        let name = path
            .file_name()
            .and_then(|name| name.to_str())
            .unwrap_or("");
        if path.is_dir() {
            if name != "target" && !name.starts_with('.') {
                rust_files(&path, found);
            }
        } else if name.ends_with(".rs") {
            found.push(path);
        }
    }
}

fn all_rust_files() -> Vec<PathBuf> {
    let root = workspace_root();
    let mut found = Vec::new();
    for directory in RUST_ROOTS {
        rust_files(&root.join(directory), &mut found);
    }
    assert!(found.len() > 100, "found only {} Rust files", found.len());
    found
}

fn relative(path: &Path) -> String {
    path.strip_prefix(workspace_root())
        .unwrap_or(path)
        .display()
        .to_string()
}

#[test]
fn every_rust_file_opens_with_a_module_doc() {
    let missing: Vec<String> = all_rust_files()
        .iter()
        .filter(|path| {
            let text = std::fs::read_to_string(path).unwrap();
            !text.starts_with("//!")
        })
        .map(|path| relative(path))
        .collect();
    assert!(
        missing.is_empty(),
        "these files do not open with a `//!` doc saying what they own and must not reach into: {missing:?}"
    );
}

#[test]
fn no_rust_file_passes_the_line_limit() {
    let long: Vec<String> = all_rust_files()
        .iter()
        .filter_map(|path| {
            let lines = std::fs::read_to_string(path).unwrap().lines().count();
            (lines > LINE_LIMIT).then(|| format!("{} ({lines} lines)", relative(path)))
        })
        .collect();
    assert!(
        long.is_empty(),
        "files over {LINE_LIMIT} lines (split them by what they own): {long:?}"
    );
}

/// One member crate as its manifest states it.
#[derive(Debug)]
struct Manifest {
    directory: String,
    /// Workspace crates among its `[dependencies]`.
    internal: BTreeSet<String>,
    /// Every other crate among its `[dependencies]`.
    external: BTreeSet<String>,
    /// The features it turns on per dependency, beyond the workspace's.
    features: BTreeMap<String, Vec<String>>,
}

fn read_toml(path: &Path) -> toml::Table {
    let text = std::fs::read_to_string(path)
        .unwrap_or_else(|error| panic!("reading {}: {error}", path.display()));
    text.parse::<toml::Table>()
        .unwrap_or_else(|error| panic!("{} is not TOML: {error}", path.display()))
}

fn manifests() -> BTreeMap<String, Manifest> {
    let root = workspace_root();
    let workspace = read_toml(&root.join("Cargo.toml"));
    let members = workspace["workspace"]["members"]
        .as_array()
        .expect("the workspace lists its members");
    let mut found = BTreeMap::new();
    for member in members {
        let directory = member.as_str().unwrap().to_string();
        let manifest = read_toml(&root.join(&directory).join("Cargo.toml"));
        let name = manifest["package"]["name"].as_str().unwrap().to_string();
        let mut internal = BTreeSet::new();
        let mut external = BTreeSet::new();
        let mut features = BTreeMap::new();
        if let Some(dependencies) = manifest
            .get("dependencies")
            .and_then(|value| value.as_table())
        {
            for (dependency, value) in dependencies {
                if dependency.starts_with("sayso") {
                    internal.insert(dependency.clone());
                } else {
                    external.insert(dependency.clone());
                }
                if let Some(list) = value.get("features").and_then(|value| value.as_array()) {
                    let list = list.iter().map(|value| value.as_str().unwrap().to_string());
                    features.insert(dependency.clone(), list.collect());
                }
            }
        }
        found.insert(
            name,
            Manifest {
                directory,
                internal,
                external,
                features,
            },
        );
    }
    found
}

/// The crate table of DEVELOPERS.md: crate -> (directory, workspace crates, outside crates).
fn documented_table() -> BTreeMap<String, (String, BTreeSet<String>, BTreeSet<String>)> {
    let text = std::fs::read_to_string(workspace_root().join("DEVELOPERS.md")).unwrap();
    let start = text
        .find(TABLE_HEADING)
        .unwrap_or_else(|| panic!("DEVELOPERS.md has no `{TABLE_HEADING}` section"));
    let names = |cell: &str| -> BTreeSet<String> {
        cell.split(',')
            .map(|name| name.trim().trim_matches('`').trim().to_string())
            .filter(|name| !name.is_empty() && name != "—")
            .collect()
    };
    let mut table = BTreeMap::new();
    for line in text[start..].lines().skip(1) {
        if line.starts_with("###") {
            break;
        }
        let cells: Vec<&str> = line.trim().trim_matches('|').split('|').collect();
        if cells.len() < 4 || !cells[0].trim().starts_with("`sayso") {
            continue;
        }
        let name = cells[0].trim().trim_matches('`').to_string();
        let directory = cells[1].trim().trim_matches('`').to_string();
        table.insert(name, (directory, names(cells[2]), names(cells[3])));
    }
    table
}

#[test]
fn the_crate_table_in_developers_md_matches_the_manifests() {
    let manifests = manifests();
    let table = documented_table();
    let listed: BTreeSet<&String> = table.keys().collect();
    let members: BTreeSet<&String> = manifests.keys().collect();
    assert_eq!(
        listed, members,
        "DEVELOPERS.md's crate table and the workspace members differ"
    );
    for (name, manifest) in &manifests {
        let (directory, internal, external) = &table[name];
        assert_eq!(
            directory, &manifest.directory,
            "{name}: DEVELOPERS.md says directory {directory}, the workspace says {}",
            manifest.directory
        );
        assert_eq!(
            internal, &manifest.internal,
            "{name}: the workspace crates DEVELOPERS.md lists differ from its manifest"
        );
        assert_eq!(
            external, &manifest.external,
            "{name}: the outside crates DEVELOPERS.md lists differ from its manifest"
        );
    }
}

/// Every workspace crate `name` reaches through its dependencies, itself excluded.
fn reaches(manifests: &BTreeMap<String, Manifest>, name: &str) -> BTreeSet<String> {
    let mut reached = BTreeSet::new();
    let mut pending = vec![name.to_string()];
    while let Some(current) = pending.pop() {
        for dependency in &manifests[&current].internal {
            if reached.insert(dependency.clone()) {
                pending.push(dependency.clone());
            }
        }
    }
    reached
}

#[test]
fn the_manifests_keep_the_layers_apart() {
    let manifests = manifests();
    // The solver knows nothing of language, files or HTTP: it uses no other crate of ours.
    assert!(reaches(&manifests, "sayso-solver").is_empty());
    let rules: [(&str, &[&str]); 5] = [
        // The correction path (core, perception, session) never uses the renderer or the lab.
        (
            "sayso-core",
            &[
                "sayso-perception",
                "sayso-render",
                "sayso-lab",
                "sayso-correction-log",
                "sayso-session",
            ],
        ),
        (
            "sayso-perception",
            &[
                "sayso-render",
                "sayso-lab",
                "sayso-correction-log",
                "sayso-session",
            ],
        ),
        // The session layer knows nothing of HTTP.
        (
            "sayso-session",
            &["sayso-render", "sayso-lab", "sayso-service"],
        ),
        (
            "sayso-correction-log",
            &[
                "sayso-perception",
                "sayso-render",
                "sayso-lab",
                "sayso-session",
            ],
        ),
        (
            "sayso-wire",
            &["sayso-core", "sayso-session", "sayso-service"],
        ),
    ];
    for (name, forbidden) in rules {
        let reached = reaches(&manifests, name);
        for other in forbidden {
            assert!(!reached.contains(*other), "{name} reaches {other}");
        }
    }
    // Each heavy outside library is linked by one crate only (the binary and the tests may use them).
    let owners: [(&str, &str); 7] = [
        ("tract-onnx", "sayso-perception"),
        ("rusqlite", "sayso-correction-log"),
        ("tokio-postgres", "sayso-correction-log"),
        ("deadpool-postgres", "sayso-correction-log"),
        ("axum", "sayso-service"),
        ("hyper", "sayso-service"),
        ("tower", "sayso-service"),
    ];
    for (library, owner) in owners {
        let users: Vec<&String> = manifests
            .iter()
            .filter(|(_, manifest)| manifest.external.contains(library))
            .map(|(name, _)| name)
            .collect();
        assert!(
            users.iter().all(|user| *user == owner),
            "{library} is a dependency of {users:?}; only {owner} may link it"
        );
        assert!(
            manifests[owner].external.contains(library),
            "{owner} no longer uses {library}: drop the rule"
        );
    }
    // utoipa's axum integration is the service's alone (the wire shapes derive schemas without it).
    for (name, manifest) in &manifests {
        let asks_axum = manifest
            .features
            .get("utoipa")
            .is_some_and(|features| features.iter().any(|feature| feature.contains("axum")));
        assert!(
            !asks_axum || name == "sayso-service",
            "{name} turns on utoipa's axum support"
        );
    }
}
