//! A robot's own scene, with no renderer behind it: an image alone, an image with depth, a JPEG, corrected
//! through `sayso fix` and through the service; the JPEG decoder checked against a reference decoding; the
//! capture loader's refusals.
//!
//! Owns: checks that the correction path reads only the capture (`sayso_core::scene::capture`).
//! Must not: judge correction quality (the built-in classifier runs, but only the plumbing is checked).

use std::path::{Path, PathBuf};
use std::process::Command;

use axum::http::StatusCode;
use sayso_core::raster::{read_rgb_image, read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::scene::{load_capture, SceneError};

/// A file of the committed demo scene `kitchen_breakfast`.
fn demo(name: &str) -> PathBuf {
    crate::paths::demo_scenes()
        .join("kitchen_breakfast")
        .join(name)
}

/// A committed capture fixture (`tests/fixtures/capture/`).
fn capture(name: &str) -> PathBuf {
    crate::paths::fixture("capture").join(name)
}

/// A scene directory holding copies of `files` (source path, name inside the directory).
fn scene_dir(files: &[(PathBuf, &str)]) -> tempfile::TempDir {
    let directory = tempfile::tempdir().unwrap();
    for (source, name) in files {
        std::fs::copy(source, directory.path().join(name)).unwrap();
    }
    directory
}

fn image_only() -> tempfile::TempDir {
    scene_dir(&[(demo("image.png"), "image.png")])
}

fn image_and_depth() -> tempfile::TempDir {
    scene_dir(&[
        (demo("image.png"), "image.png"),
        (demo("depth.png"), "depth.png"),
    ])
}

fn jpeg_only() -> tempfile::TempDir {
    scene_dir(&[(capture("living_room_320.jpg"), "image.jpg")])
}

#[test]
fn the_jpeg_decoder_agrees_with_pillow() {
    // Reference: Pillow (PyPI) decoding of the same file, by tests/fixtures/capture/make_capture_fixtures.py.
    // Two conforming decoders may differ by rounding in the inverse DCT and chroma upsampling, so a
    // difference of a few levels is allowed per sample (common practice), and the mean difference must stay
    // far below one level.
    let ours = read_rgb_image(&capture("living_room_320.jpg"), DEFAULT_PIXEL_LIMIT).unwrap();
    let reference =
        read_rgb_png(&capture("living_room_320_pillow.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!((ours.width, ours.height), (320, 240));
    assert_eq!((reference.width, reference.height), (320, 240));
    let mut largest = 0i32;
    let mut total = 0u64;
    for (a, b) in ours.pixels.iter().zip(&reference.pixels) {
        for channel in 0..3 {
            let difference = (i32::from(a[channel]) - i32::from(b[channel])).abs();
            largest = largest.max(difference);
            total += difference as u64;
        }
    }
    let mean = total as f64 / (ours.pixels.len() * 3) as f64;
    assert!(largest <= 4, "largest difference {largest}");
    assert!(mean < 0.5, "mean difference {mean}");
}

#[test]
fn a_capture_reads_no_ground_truth_and_names_what_is_missing() {
    let only = image_only();
    let capture = load_capture(only.path(), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(capture.depth.is_none() && capture.camera.is_none() && capture.room.is_none());
    assert_eq!((capture.image.width, capture.image.height), (640, 480));

    let empty = tempfile::tempdir().unwrap();
    let error = load_capture(empty.path(), DEFAULT_PIXEL_LIMIT).unwrap_err();
    assert!(matches!(error, SceneError::NoImage { .. }), "{error}");
    let message = error.to_string();
    assert!(
        message.contains("image.png") && message.contains("image.jpg"),
        "{message}"
    );

    // Too large a JPEG is refused from its header, naming the limit.
    let jpeg = jpeg_only();
    let error = load_capture(jpeg.path(), 1000).unwrap_err().to_string();
    assert!(
        error.contains("320x240") && error.contains("1000"),
        "{error}"
    );
}

#[test]
fn camera_json_scales_depth_and_bad_intrinsics_are_named() {
    let directory = image_and_depth();
    let plain = load_capture(directory.path(), DEFAULT_PIXEL_LIMIT).unwrap();
    std::fs::write(
        directory.path().join("camera.json"),
        r#"{"fx": 525.0, "fy": 525.0, "cx": 319.5, "cy": 239.5, "depth_unit_mm": 0.5}"#,
    )
    .unwrap();
    let scaled = load_capture(directory.path(), DEFAULT_PIXEL_LIMIT).unwrap();
    let camera = scaled.camera.expect("intrinsics read");
    assert_eq!((camera.fx, camera.cy), (525.0, 239.5));
    let (plain, scaled) = (plain.depth.unwrap(), scaled.depth.unwrap());
    for (a, b) in plain.millimetres.iter().zip(&scaled.millimetres) {
        assert_eq!(*b, ((f64::from(*a) * 0.5).round()) as u16);
    }

    std::fs::write(directory.path().join("camera.json"), r#"{"fx": 525.0}"#).unwrap();
    let error = load_capture(directory.path(), DEFAULT_PIXEL_LIMIT)
        .unwrap_err()
        .to_string();
    assert!(
        error.contains("camera.json") && error.contains("all four"),
        "{error}"
    );
    std::fs::write(
        directory.path().join("camera.json"),
        r#"{"depth_unit_mm": 1000}"#,
    )
    .unwrap();
    let error = load_capture(directory.path(), DEFAULT_PIXEL_LIMIT)
        .unwrap_err()
        .to_string();
    assert!(error.contains("65535 mm"), "{error}");
}

fn fix(directory: &Path, out: &Path) {
    let result = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .arg("fix")
        .arg(directory)
        .args(["--say", "there are two mugs", "--out"])
        .arg(out)
        .output()
        .unwrap();
    // 0: the note was met; 4: it was read and solved, and a question about it waits (the image alone may
    // show more mugs than two); 5: the solve's change touches a person, pet or hazard and is held (with the
    // image-only classifier one of these inputs ends so, seen 2026-12-04). Every way the outputs are written;
    // 1 or 3 would be a failure here.
    assert!(
        matches!(result.status.code(), Some(0 | 4 | 5)),
        "{:?} {}",
        result.status.code(),
        String::from_utf8_lossy(&result.stderr)
    );
    let graph: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("scene_graph.json")).unwrap())
            .unwrap();
    assert!(!graph["objects"].as_array().unwrap().is_empty());
    let before = read_rgb_png(&out.join("overlay_before.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let after = read_rgb_png(&out.join("overlay_after.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!(
        (before.width, before.height),
        (after.width, after.height),
        "before and after are drawn at the same size"
    );
    let both = read_rgb_png(&out.join("before_after.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(both.width > after.width && both.height == after.height);
    let stdout = String::from_utf8_lossy(&result.stdout);
    assert!(stdout.contains("there are two mugs"), "{stdout}");
}

#[test]
fn fix_corrects_an_image_alone_an_image_with_depth_and_a_jpeg() {
    for directory in [image_only(), image_and_depth(), jpeg_only()] {
        let out = tempfile::tempdir().unwrap();
        fix(directory.path(), out.path());
    }
    // An image file named directly is a scene too.
    let out = tempfile::tempdir().unwrap();
    fix(&capture("living_room_320.jpg"), out.path());
    // labels.png is a palette PNG whose pixel values are class ids.
    let decoder = png::Decoder::new(std::fs::File::open(out.path().join("labels.png")).unwrap());
    assert_eq!(
        decoder.read_info().unwrap().info().color_type,
        png::ColorType::Indexed
    );
    let labels =
        sayso_core::raster::read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT)
            .unwrap();
    assert_eq!((labels.width, labels.height), (320, 240));
    assert!(labels.values.iter().all(|&value| value < 41));
}

/// The service over the joint pipeline and built-in classifier, its log in a fresh directory (returned so it
/// lives as long as the router).
fn service() -> (tempfile::TempDir, axum::Router) {
    crate::real_service(&sayso_perception::pipeline::model_path(None), None, |_| {})
}

fn base64_of(path: &Path) -> String {
    use base64::Engine;
    base64::engine::general_purpose::STANDARD.encode(std::fs::read(path).unwrap())
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_service_corrects_an_image_alone_an_image_with_depth_and_a_jpeg() {
    let (_data, app) = service();
    let jpeg = capture("living_room_320.jpg");
    let uploads = [
        serde_json::json!({"image_base64": base64_of(&demo("image.png"))}),
        serde_json::json!({
            "image_base64": base64_of(&demo("image.png")),
            "depth_png_base64": base64_of(&demo("depth.png")),
        }),
        serde_json::json!({"image_base64": base64_of(&jpeg), "name": "a jpeg"}),
    ];
    for (upload, size) in uploads
        .into_iter()
        .zip([(640, 480), (640, 480), (320, 240)])
    {
        let (created, _) = crate::register_and_say(&app, upload, &["there are two mugs"]).await;
        assert_eq!(
            (created["width"].as_u64(), created["height"].as_u64()),
            (Some(size.0), Some(size.1))
        );
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_service_finds_demo_scenes_like_fix_and_says_where_it_looked() {
    let (_data, app) = service();
    let (status, created) = crate::post_json(
        &app,
        "/v1/scenes",
        serde_json::json!({"demo": "kitchen_breakfast"}),
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{created}");
    let (status, error) =
        crate::post_json(&app, "/v1/scenes", serde_json::json!({"demo": "attic"})).await;
    assert_eq!(status, StatusCode::NOT_FOUND, "{error}");
    let message = error["message"].as_str().unwrap();
    assert!(
        message.contains(sayso_core::demo::COMPILED_DEMO_DIR)
            && message.contains("kitchen_breakfast"),
        "{message}"
    );
}
