//! The fuzz targets' bodies, shared by cargo-fuzz (`fuzz/fuzz_targets/*.rs`, nightly) and the stable
//! harness `tests/cli/fuzz_corpus.rs` (every target over its committed corpus plus seeded mutations, in
//! `cargo test`).
//!
//! Owns: one function per target, each taking arbitrary bytes into one input reader of sayso: the
//! utterance parser, the PNG, JPEG and index-PNG decoders, the NPY reader, the label map (index PNG, its
//! class list and its per-class probabilities), the detections (JSON Lines), the scene loader (a scene
//! directory's `scene.json` and `camera.json`) and the wire JSON of the service (every request body, the
//! scene upload and field notes).
//! Must not: check answers; a target passes when the reader returns, with a value or a typed error, without
//! a panic and within bounded memory (the limits passed here are small on purpose).

#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use sayso_core::language::Grammar;
use sayso_core::raster;
use sayso_core::taxonomy::Taxonomy;

/// The pixel limit the decoders are fuzzed under (a fuzzer's memory is small).
pub const FUZZ_PIXEL_LIMIT: u64 = 1 << 20;

/// A target's body: arbitrary bytes in, nothing out (a panic is the failure).
pub type Target = fn(&[u8]);

/// Every target by name, in the order of `fuzz/fuzz_targets/`.
pub const TARGETS: [(&str, Target); 7] = [
    ("parser", parser),
    ("image", image),
    ("npy", npy),
    ("label_map", label_map),
    ("detections", detections),
    ("scene_loader", scene_loader),
    ("wire_json", wire_json),
];

fn grammar() -> &'static Grammar {
    static GRAMMAR: OnceLock<Grammar> = OnceLock::new();
    GRAMMAR.get_or_init(|| Grammar::embedded().expect("the embedded grammar reads"))
}

fn taxonomy() -> &'static Taxonomy {
    static TAXONOMY: OnceLock<Taxonomy> = OnceLock::new();
    TAXONOMY.get_or_init(Taxonomy::embedded)
}

/// An utterance, as the service and `fix` read one (bytes decoded as lossy UTF-8).
pub fn parser(data: &[u8]) {
    let text = String::from_utf8_lossy(data);
    let _ = grammar().parse(&text, None);
    let _ = sayso_core::turn::words::command(&text);
}

/// A colour image (PNG or JPEG, told apart by content) and an index or depth PNG.
pub fn image(data: &[u8]) {
    let origin = Path::new("fuzz");
    if let Ok(image) = raster::decode_rgb_image(data, origin, FUZZ_PIXEL_LIMIT) {
        assert_eq!(
            image.pixels.len(),
            image.width as usize * image.height as usize
        );
    }
    if let Ok(index) = raster::decode_index_png(data, origin, FUZZ_PIXEL_LIMIT) {
        assert_eq!(
            index.values.len(),
            index.width as usize * index.height as usize
        );
    }
}

/// Per-pixel scores as NPY bytes.
pub fn npy(data: &[u8]) {
    if let Ok(array) = sayso_perception::unaries::byo_npy::parse_npy(data) {
        assert_eq!(
            array.values.len(),
            array.values.shape().iter().product::<usize>()
        );
    }
}

/// A label map: the bytes as an index PNG, read into per-class probabilities, and as a class list.
pub fn label_map(data: &[u8]) {
    if let Ok(labels) = raster::decode_index_png(data, Path::new("fuzz"), FUZZ_PIXEL_LIMIT) {
        let classes = taxonomy().classes().len();
        let _ = sayso_perception::unaries::byo_label_map::label_map_probabilities(
            &labels, None, classes,
        );
    }
    let _ = sayso_perception::unaries::perception::read_class_list(&String::from_utf8_lossy(data));
}

/// Detections as JSON Lines on a 64 x 48 image.
pub fn detections(data: &[u8]) {
    let synonyms = sayso_perception::unaries::byo::SynonymTable::embedded(taxonomy());
    let text = String::from_utf8_lossy(data);
    let _ = sayso_perception::unaries::byo_detections::parse_detections(
        &text,
        None,
        64,
        48,
        taxonomy(),
        &synonyms,
    );
}

/// A scene directory whose `scene.json` is the bytes before the first NUL and whose `camera.json` is the
/// bytes after it (absent without a NUL), beside a small image and depth map.
pub fn scene_loader(data: &[u8]) {
    let directory = scene_directory();
    let (scene_json, camera_json) = match data.iter().position(|&byte| byte == 0) {
        Some(split) => (&data[..split], Some(&data[split + 1..])),
        None => (data, None),
    };
    std::fs::write(directory.join("scene.json"), scene_json).expect("write scene.json");
    let camera = directory.join("camera.json");
    match camera_json {
        Some(bytes) => std::fs::write(&camera, bytes).expect("write camera.json"),
        None => {
            let _ = std::fs::remove_file(&camera);
        }
    }
    let _ = sayso_core::scene::capture::load_capture(&directory, FUZZ_PIXEL_LIMIT);
}

/// This thread's scene directory, with an 8 x 6 image and depth map written once.
fn scene_directory() -> PathBuf {
    thread_local! {
        static DIRECTORY: PathBuf = {
            let directory = std::env::temp_dir().join(format!(
                "sayso-fuzz-scene-{}-{:?}",
                std::process::id(),
                std::thread::current().id()
            ));
            std::fs::create_dir_all(&directory).expect("scene directory");
            let image = raster::RgbImage::filled(8, 6, [120, 90, 60]);
            raster::write_rgb_png(&directory.join("image.png"), &image).expect("image.png");
            let depth = raster::IndexImage::filled(8, 6, 1500);
            std::fs::write(
                directory.join("depth.png"),
                raster::encode_index_png(&depth).expect("depth png"),
            )
            .expect("depth.png");
            directory
        };
    }
    DIRECTORY.with(Clone::clone)
}

/// The service's request bodies and the field-notes file.
pub fn wire_json(data: &[u8]) {
    use sayso_wire::{
        FocusIn, OpenConversationRequest, PageQuery, RegisterSceneRequest, UtteranceRequest,
    };
    if let Ok(request) = serde_json::from_slice::<RegisterSceneRequest>(data) {
        let _ = sayso_session::SceneUpload::from_request(request);
    }
    if let Ok(request) = serde_json::from_slice::<UtteranceRequest>(data) {
        let _ = sayso_session::check_utterance_text(&request.text);
    }
    let _ = serde_json::from_slice::<OpenConversationRequest>(data);
    let _ = serde_json::from_slice::<FocusIn>(data);
    let _ = serde_json::from_slice::<PageQuery>(data);
    let _ = sayso_session::field_notes::parse_note_bytes(data);
}
