//! Images without depth: the built-in classifier's image-only companion (`models/segment_classifier_rgb.onnx`)
//! scores them, chosen in one place (`unaries::builtin::classifier_for`) for `fix` and the service alike;
//! a model given in the built-in one's place is never replaced.
//!
//! Owns: checks of that choice and of the pixel accuracy it reaches on held-out renders with their depth
//! left out (seeds 500000 and 500001, the retraining gate's held-out range, which no classifier trains on;
//! the image-only model trained on 100000..100099).
//! Must not: tune anything; the floor is a check, far above the depth-trained model's 3-12% on such images.

use std::path::Path;
use std::process::Command;
use std::sync::Arc;

use axum::body::Body;
use axum::http::{Request, StatusCode};
use sayso_core::raster::{decode_index_png, read_index_png, IndexImage, DEFAULT_PIXEL_LIMIT};
use sayso_core::taxonomy::{Taxonomy, UNLABELLED};
use sayso_perception::unaries::UnarySource;
use sayso_render::writer::write_scene;
use sayso_render::{render_scene, SceneRequest, ROOM_TYPES};
use tower::ServiceExt;

/// Held-out renders as `sayso render --seed 500000 --count 2` writes them (room types in turn).
const SEEDS: [u64; 2] = [500_000, 500_001];
/// The note both paths apply.
const NOTE: &str = "there is no sofa";
/// The pixel accuracy the image-only scenes must reach (the depth-trained model reached 3-12% on such
/// images; the image-only one measured 70-90% on seeds 500000-500020, see models/README.md).
const FLOOR: f64 = 0.60;

/// The share of pixels fix and the service must label alike. Both score with the image-only model (the
/// depth-trained one would leave both near 5-12%); measured 2026-12-04 on seed 500000: fix 0.908, service
/// 0.952, agreement 0.917 (the scene's labels the service returns are not fix's after-the-note labels
/// pixel for pixel; not yet explained, see the branch's report).
const AGREEMENT: f64 = 0.85;

/// A held-out render: its image alone in `image/`, its ground-truth labels.
fn image_only_render(index: usize) -> (tempfile::TempDir, IndexImage) {
    let taxonomy = Taxonomy::embedded();
    let request = SceneRequest::new(ROOM_TYPES[index % ROOM_TYPES.len()], SEEDS[index]);
    let rendered = render_scene(&taxonomy, &request).unwrap();
    let directory = tempfile::tempdir().unwrap();
    let full = directory.path().join("rendered");
    write_scene(&full, &rendered).unwrap();
    let image = directory.path().join("image");
    std::fs::create_dir_all(&image).unwrap();
    std::fs::copy(full.join("image.png"), image.join("image.png")).unwrap();
    let truth = read_index_png(&full.join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    (directory, truth)
}

fn pixel_accuracy(labels: &IndexImage, truth: &IndexImage) -> f64 {
    assert_eq!(labels.values.len(), truth.values.len());
    let (right, counted) = labels
        .values
        .iter()
        .zip(&truth.values)
        .filter(|(_, &truth)| truth != UNLABELLED)
        .fold((0usize, 0usize), |(right, counted), (label, truth)| {
            (right + usize::from(label == truth), counted + 1)
        });
    right as f64 / counted.max(1) as f64
}

fn fix_labels(scene: &Path) -> (IndexImage, String) {
    let out = tempfile::tempdir().unwrap();
    let result = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .arg("fix")
        .arg(scene)
        .args(["--say", NOTE, "--out"])
        .arg(out.path())
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&result.stderr).to_string();
    assert!(
        matches!(result.status.code(), Some(0 | 4)),
        "{:?} {stderr}",
        result.status.code()
    );
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    (labels, stderr)
}

fn service() -> (tempfile::TempDir, axum::Router) {
    use sayso_perception::pipeline::model_path;
    use sayso_session::config::ServiceConfig;
    use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector};
    let data = tempfile::tempdir().unwrap();
    let config = ServiceConfig {
        data_dir: data.path().to_path_buf(),
        ..ServiceConfig::default()
    };
    let coordinator = Coordinator::open(
        Arc::new(JointCorrector::load(&model_path(None)).unwrap()),
        &CoordinatorSettings {
            log_path: config.log_path(),
            pixel_limit: config.pixel_limit,
            demo_dir: config.demo_directory(),
        },
    )
    .unwrap();
    let app = sayso_service::app(sayso_service::AppState::new(Arc::new(coordinator), config));
    (data, app)
}

async fn send(app: &axum::Router, request: Request<Body>) -> (StatusCode, Vec<u8>) {
    let response = app.clone().oneshot(request).await.unwrap();
    let status = response.status();
    let bytes = axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .unwrap();
    (status, bytes.to_vec())
}

async fn post(
    app: &axum::Router,
    path: &str,
    body: serde_json::Value,
) -> (StatusCode, serde_json::Value) {
    let request = Request::post(path)
        .header("content-type", "application/json")
        .body(Body::from(body.to_string()))
        .unwrap();
    let (status, bytes) = send(app, request).await;
    (status, serde_json::from_slice(&bytes).unwrap_or_default())
}

/// The service's labels of an image after `NOTE`.
async fn service_labels(app: &axum::Router, image: &Path) -> IndexImage {
    use base64::Engine;
    let encoded = base64::engine::general_purpose::STANDARD.encode(std::fs::read(image).unwrap());
    let (status, created) = post(
        app,
        "/v1/scenes",
        serde_json::json!({"image_base64": encoded, "name": "held out"}),
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{created}");
    let (status, conversation) = post(
        app,
        "/v1/conversations",
        serde_json::json!({"scene_id": created["scene_id"]}),
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{conversation}");
    let path = format!(
        "/v1/conversations/{}/utterances",
        conversation["conversation_id"]
    );
    let (status, reply) = post(app, &path, serde_json::json!({"text": NOTE})).await;
    assert_eq!(status, StatusCode::OK, "{reply}");
    let request = Request::get(format!("/v1/scenes/{}/labels.png", created["scene_id"]))
        .body(Body::empty())
        .unwrap();
    let (status, bytes) = send(app, request).await;
    assert_eq!(status, StatusCode::OK);
    decode_index_png(&bytes, Path::new("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn an_image_without_depth_is_labelled_well_and_alike_by_fix_and_the_service() {
    let (_data, app) = service();
    for (index, seed) in SEEDS.iter().enumerate() {
        let (directory, truth) = image_only_render(index);
        let scene = directory.path().join("image");
        let (fixed, said) = fix_labels(&scene);
        assert!(
            !said.contains("no depth map"),
            "the shipped pair needs no warning: {said}"
        );
        let accuracy = pixel_accuracy(&fixed, &truth);
        assert!(
            accuracy > FLOOR,
            "seed {}: fix's pixel accuracy {accuracy:.3} on the image alone",
            seed
        );
        let served = service_labels(&app, &scene.join("image.png")).await;
        let served_accuracy = pixel_accuracy(&served, &truth);
        let agreement = pixel_accuracy(&served, &fixed);
        eprintln!(
            "seed {}: fix {accuracy:.4}, service {served_accuracy:.4}, agreement {agreement:.4}",
            seed
        );
        assert!(
            served_accuracy > FLOOR,
            "seed {}: the service's pixel accuracy {served_accuracy:.3} on the image alone",
            seed
        );
        assert!(
            agreement > AGREEMENT,
            "seed {}: fix and the service agree on {agreement:.3} of the pixels",
            seed
        );
    }
}

#[test]
fn the_image_only_model_scores_scenes_without_depth_and_only_the_built_in_pair_has_one() {
    use sayso_core::scene::load_capture;
    use sayso_perception::pipeline::{load_classifier, model_path, prepare_loaded};
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy).unwrap();
    assert!(classifier.image_only().is_some());
    let (directory, _) = image_only_render(0);
    let rendered = directory.path().join("rendered");
    let with_depth = load_capture(&rendered, DEFAULT_PIXEL_LIMIT).unwrap();
    let without = load_capture(&directory.path().join("image"), DEFAULT_PIXEL_LIMIT).unwrap();
    let model_of = |capture| match prepare_loaded(capture, &classifier).unwrap().unaries.source {
        UnarySource::BuiltIn { model } => model,
        other => panic!("{other:?}"),
    };
    assert!(model_of(with_depth).ends_with("/segment_classifier.onnx"));
    assert!(model_of(without).ends_with("/segment_classifier_rgb.onnx"));

    // The same file under another name is a model of the user's: loaded alone, never replaced.
    let copy = tempfile::tempdir().unwrap();
    let mine = copy.path().join("mine.onnx");
    std::fs::copy(model_path(None), &mine).unwrap();
    let user = load_classifier(&mine, &taxonomy).unwrap();
    assert!(user.image_only().is_none());
    let without = load_capture(&directory.path().join("image"), DEFAULT_PIXEL_LIMIT).unwrap();
    match prepare_loaded(without, &user).unwrap().unaries.source {
        UnarySource::BuiltIn { model } => assert!(model.ends_with("mine.onnx"), "{model}"),
        other => panic!("{other:?}"),
    }
}
