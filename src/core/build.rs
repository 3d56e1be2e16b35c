//! Build script of `sayso-core`: tells the crate where the workspace root is, as a canonical path, so the
//! committed demo scenes are found at a path without `..` in it (a browser's file upload refuses one).
//!
//! Owns: the `SAYSO_WORKSPACE_DIR` compile-time variable. Must not: generate code or read anything else.

fn main() {
    let manifest = std::path::PathBuf::from(
        std::env::var_os("CARGO_MANIFEST_DIR").expect("cargo sets CARGO_MANIFEST_DIR"),
    );
    let root = manifest
        .join("../..")
        .canonicalize()
        .expect("the workspace root exists");
    println!("cargo:rustc-env=SAYSO_WORKSPACE_DIR={}", root.display());
    println!("cargo:rerun-if-changed=build.rs");
}
