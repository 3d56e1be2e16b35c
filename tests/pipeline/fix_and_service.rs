//! `sayso fix` and the service answer the same notes on the same scene with the same labels, pixel for
//! pixel: an image with its depth map (a held-out render) and a demo scene by name, each with notes that
//! change the scene. Both run one pipeline (`SceneParams::for_image_size`,
//! `unaries::builtin::classifier_for`, one joint solve); the labels `fix` writes are the scene as it stands
//! after the last note, or the no-note solve when no note changed anything, which is what the service keeps
//! as a scene's first version. (Before that rule `fix` wrote the classifier's own best classes when no
//! note changed anything, and the two agreed on 89-92% of the pixels.) The image-only case is checked by
//! `image_only_classifier`, which reuses the helpers here.
//!
//! Owns: the helpers that run `fix` (the binary, as a user runs it) and the service (the router through
//! `oneshot`, as the HTTP route runs it) on one scene, and the agreement checks with depth and on a demo.
//! Must not: tune anything; the seeds are the retraining gate's held-out range, which nothing trains on.

use std::path::Path;
use std::process::Command;

use crate::send;
use axum::body::Body;
use axum::http::{Request, StatusCode};
use sayso_core::raster::{decode_index_png, read_index_png, IndexImage, DEFAULT_PIXEL_LIMIT};
use sayso_core::taxonomy::Taxonomy;
use sayso_render::writer::write_scene;
use sayso_render::{render_scene, SceneRequest, ROOM_TYPES};

/// A held-out render (room types in turn from `ROOM_TYPES[index]`, as `sayso render --seed SEED` writes
/// them), written whole under `rendered/` of a fresh directory.
pub fn held_out_render(index: usize, seed: u64) -> tempfile::TempDir {
    let taxonomy = Taxonomy::embedded();
    let request = SceneRequest::new(ROOM_TYPES[index % ROOM_TYPES.len()], seed);
    let rendered = render_scene(&taxonomy, &request).unwrap();
    let directory = tempfile::tempdir().unwrap();
    write_scene(&directory.path().join("rendered"), &rendered).unwrap();
    directory
}

/// `sayso fix SCENE --say NOTE...` (SCENE a directory, image or demo name); its labels.png, standard
/// output and standard error. Every exit code of a finished run (0, or 3-5 for unsettled notes) is taken.
pub fn fix_labels(scene: &str, notes: &[&str]) -> (IndexImage, String, String) {
    fix_labels_with_demos(scene, notes, &crate::paths::demo_scenes())
}

/// `fix_labels` with demo scenes from `demos`.
pub fn fix_labels_with_demos(
    scene: &str,
    notes: &[&str],
    demos: &Path,
) -> (IndexImage, String, String) {
    let out = tempfile::tempdir().unwrap();
    let mut command = Command::new(env!("CARGO_BIN_EXE_sayso"));
    command.arg("fix").arg(scene);
    for note in notes {
        command.args(["--say", note]);
    }
    let result = command
        .arg("--demo-dir")
        .arg(demos)
        .arg("--out")
        .arg(out.path())
        .env_remove("SAYSO_MODEL")
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&result.stdout).to_string();
    let stderr = String::from_utf8_lossy(&result.stderr).to_string();
    assert!(
        matches!(result.status.code(), Some(0 | 3 | 4 | 5)),
        "{:?} {stderr}",
        result.status.code()
    );
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    (labels, stdout, stderr)
}

/// The service's router on a fresh SQLite log, with the shipped classifier pair and the committed demos.
pub fn service() -> (tempfile::TempDir, axum::Router) {
    service_with_demos(&crate::paths::demo_scenes())
}

/// The service's router with demo scenes from `demos`.
pub fn service_with_demos(demos: &Path) -> (tempfile::TempDir, axum::Router) {
    let model = sayso_perception::pipeline::model_path(Some(&crate::paths::shipped_model()));
    crate::real_service(&model, None, |config| {
        config.demo_dir = Some(demos.to_path_buf());
    })
}

/// The registration body of an image file, with its depth PNG when given.
pub fn upload_of(image: &Path, depth: Option<&Path>) -> serde_json::Value {
    use base64::Engine;
    let encode = |path: &Path| {
        base64::engine::general_purpose::STANDARD.encode(std::fs::read(path).unwrap())
    };
    let mut body = serde_json::json!({"image_base64": encode(image), "name": "held out"});
    if let Some(depth) = depth {
        body["depth_png_base64"] = serde_json::Value::String(encode(depth));
    }
    body
}

/// The service's labels of a scene (`registration` is the body of `POST /v1/scenes`) after `notes`, said
/// in order in one conversation; with each note's status.
pub async fn service_labels(
    app: &axum::Router,
    registration: serde_json::Value,
    notes: &[&str],
) -> (IndexImage, Vec<String>) {
    let (created, statuses) = crate::register_and_say(app, registration, notes).await;
    let request = Request::get(format!("/v1/scenes/{}/labels.png", created["scene_id"]))
        .body(Body::empty())
        .unwrap();
    let (status, bytes) = send(app, request).await;
    assert_eq!(status, StatusCode::OK);
    let labels = decode_index_png(&bytes, Path::new("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    (labels, statuses)
}

/// How many pixels two label maps of one image label differently.
pub fn differing_pixels(a: &IndexImage, b: &IndexImage) -> usize {
    assert_eq!((a.width, a.height), (b.width, b.height));
    a.values
        .iter()
        .zip(&b.values)
        .filter(|(x, y)| x != y)
        .count()
}

/// A render with its depth map and without it: the image (and `depth.png`) alone in a scene directory for
/// `fix`, the same files uploaded to the service. The first note changes nothing (the scene already shows
/// no sofa), the second removes the mug the robot sees.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn with_depth_and_without_fix_and_the_service_write_the_same_labels() {
    let (_data, app) = service();
    let render = held_out_render(0, 500_000);
    let rendered = render.path().join("rendered");
    let notes = ["there is no sofa", "there is no mug"];
    for files in [&["image.png", "depth.png"][..], &["image.png"][..]] {
        let scene = render.path().join(files.join("+"));
        std::fs::create_dir_all(&scene).unwrap();
        for file in files {
            std::fs::copy(rendered.join(file), scene.join(file)).unwrap();
        }
        let (fixed, said, _) = fix_labels(scene.to_str().unwrap(), &notes);
        assert!(
            said.contains("changed: object removed: mug"),
            "{files:?}: the second note changes the scene: {said}"
        );
        let depth = scene.join("depth.png");
        let (served, statuses) = service_labels(
            &app,
            upload_of(&scene.join("image.png"), depth.is_file().then_some(&*depth)),
            &notes,
        )
        .await;
        let differing = differing_pixels(&fixed, &served);
        eprintln!("{files:?}: {differing} pixels differ; the service {statuses:?}");
        assert_eq!(
            differing, 0,
            "{files:?}: fix said {said}; the service {statuses:?}"
        );
    }
}

/// A demo scene by name (its image and depth, not its ground truth) through `fix NAME` and the service's
/// `{"demo": NAME}`, with the scene's first two scripted notes, which change it.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_demo_scene_gets_the_same_labels_from_fix_and_the_service() {
    let (_data, app) = service();
    let name = "living_room_evening";
    let notes = ["there's just one sofa", "there's no bag in here"];
    let (fixed, said, _) = fix_labels(name, &notes);
    assert!(
        said.lines()
            .any(|line| line.trim_start().starts_with("changed:") && !line.contains("nothing")),
        "the notes change the demo scene: {said}"
    );
    let (served, statuses) = service_labels(&app, serde_json::json!({"demo": name}), &notes).await;
    let differing = differing_pixels(&fixed, &served);
    eprintln!("{name}: {differing} pixels differ; service {statuses:?}");
    assert_eq!(differing, 0, "fix said {said}; the service {statuses:?}");
}

/// A demo scene whose `camera.json` gives its depth in half millimetres: the service's `{"demo": NAME}`
/// reads its depth through the one scene loader, scaled as `fix NAME` scales it (before, the service sent
/// the raw depth PNG on and ignored the unit).
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_demo_scene_with_a_depth_unit_is_read_alike_by_fix_and_the_service() {
    let demos = tempfile::tempdir().unwrap();
    let name = "hall_in_half_millimetres";
    let scene = demos.path().join(name);
    std::fs::create_dir_all(&scene).unwrap();
    let source = crate::paths::demo_scenes().join("living_room_evening");
    let depth = read_index_png(&source.join("depth.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    // The same distances in units of half a millimetre (values doubled, capped at the 16-bit range).
    let doubled = IndexImage {
        values: depth
            .values
            .iter()
            .map(|&mm| mm.saturating_mul(2))
            .collect(),
        ..depth
    };
    sayso_core::raster::write_index_png(&scene.join("depth.png"), &doubled).unwrap();
    for file in ["image.png", "scene.json"] {
        std::fs::copy(source.join(file), scene.join(file)).unwrap();
    }
    std::fs::write(scene.join("camera.json"), r#"{"depth_unit_mm": 0.5}"#).unwrap();
    let (_data, app) = service_with_demos(demos.path());
    let notes = ["there's no bag in here"];
    let (fixed, said, _) = fix_labels_with_demos(name, &notes, demos.path());
    let (served, statuses) = service_labels(&app, serde_json::json!({"demo": name}), &notes).await;
    let differing = differing_pixels(&fixed, &served);
    eprintln!("{name}: {differing} pixels differ; service {statuses:?}");
    assert_eq!(differing, 0, "fix said {said}; the service {statuses:?}");
}
