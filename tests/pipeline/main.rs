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

/// One request through a service router, answered with its status and body.
pub async fn send(
    app: &axum::Router,
    request: axum::http::Request<axum::body::Body>,
) -> (axum::http::StatusCode, Vec<u8>) {
    use tower::ServiceExt;
    let response = app.clone().oneshot(request).await.unwrap();
    let status = response.status();
    let bytes = axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .unwrap();
    (status, bytes.to_vec())
}
