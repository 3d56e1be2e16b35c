//! Shared test helpers (hand-built scenes, one correction turn on them).
pub mod grid_scene;
pub mod turns;
