//! Shared test helpers (hand-built scenes).
pub mod grid_scene;
