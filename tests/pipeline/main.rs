//! The correction pipeline's cross-crate tests in one test binary: scenes built from images and scene
//! directories, perception inputs, grounding, the joint solve, object hypotheses, the scene graph and notes
//! that correct. One binary links the workspace once, not once per file.
//!
//! Owns: the module list and the helpers these modules share. Must not: hold tests of its own.

#[path = "../common/mod.rs"]
mod common;
#[path = "../../benches/support/demo_turns.rs"]
mod demo_turns;
#[path = "../paths.rs"]
mod paths;

mod demo_scenes;
mod fix_and_service;
mod grounding_relations;
mod image_only_classifier;
mod joint_correct;
mod joint_demo_energies;
mod joint_hypotheses;
mod joint_milp;
mod joint_placed;
mod notes_correct;
mod perception_inputs;
mod scene_building;
mod scene_capture;
mod scene_graph_objects;
mod unaries_reference;
