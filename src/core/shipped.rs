//! Where the committed folders the build ships with are, fixed at compile time: `build.rs` gives the
//! workspace root as a canonical path (no `..` in it), and every compiled-in default path is named here or
//! built from what is named here.
//!
//! Owns: `WORKSPACE_DIR` and `COMPILED_MODELS_DIR` (the demo scenes' folder is `demo::COMPILED_DEMO_DIR`, beside its lookup).
//! Must not: read files; a path here is only a default, overridden by the caller's settings.

/// The workspace root, canonical (where `models/`, `demo_scenes/`, `grammar/` and `tests/` are).
pub const WORKSPACE_DIR: &str = env!("SAYSO_WORKSPACE_DIR");

/// The committed `models/` folder at the workspace root: the built-in classifier and its companions
/// (`sayso_perception::pipeline::shipped_model_path` names the classifier's file in it).
pub const COMPILED_MODELS_DIR: &str = concat!(env!("SAYSO_WORKSPACE_DIR"), "/models");

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_models_folder_holds_the_embedded_weights_without_dots_in_its_path() {
        let folder = std::path::Path::new(COMPILED_MODELS_DIR);
        assert!(
            folder.join("energy_weights.json").is_file(),
            "{COMPILED_MODELS_DIR}"
        );
        assert!(!COMPILED_MODELS_DIR.contains("/../"));
    }
}
