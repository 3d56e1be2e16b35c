//! `sayso store`: register scenes in the correction log without the HTTP service, so field notes can be
//! applied to them in bulk and their corrections exported.
//!
//! Owns: the command's flags and its output (one `scene id<TAB>name` line per stored scene).
//! Must not: check or decode uploads itself; the coordinator's registration does, as for the HTTP route.

use std::path::{Path, PathBuf};

use anyhow::Context;
use sayso_core::raster::{encode_index_png, IndexImage, DEFAULT_PIXEL_LIMIT};
use sayso_core::scene::files::image_file;
use sayso_core::scene::load_capture;
use sayso_core::taxonomy::Taxonomy;
use sayso_session::SceneUpload;

use super::open_log::{open_coordinator, ServiceFlags};

/// Register demo scenes by name, a scene from an image (PNG or JPEG) with an optional depth PNG and the
/// robot's own perception, or a scene directory, in the correction log; prints each new scene id.
#[derive(Debug, clap::Args)]
pub struct StoreArgs {
    #[command(flatten)]
    pub service: ServiceFlags,
    /// Demo scene names (from the demo directory); repeat for several.
    #[arg(long = "demo")]
    pub demos: Vec<String>,
    /// A colour image, PNG or JPEG, to register (instead of --demo).
    #[arg(long, conflicts_with = "demos")]
    pub image: Option<PathBuf>,
    /// A scene directory to register (instead of --demo or --image): its image, depth (scaled by
    /// camera.json's depth unit) and name, and the robot's perception files in it (scores.npy with
    /// scores_classes.txt, or label_map.png with label_map_classes.txt, and detections.jsonl; a flag naming
    /// the same input wins). The layout is `fix DIR`'s.
    #[arg(long, value_name = "DIR", conflicts_with_all = ["demos", "image", "depth"])]
    pub scene: Option<PathBuf>,
    /// A 16-bit depth PNG in millimetres matching --image.
    #[arg(long, requires = "image")]
    pub depth: Option<PathBuf>,
    /// The scene's name [default: the file or demo name].
    #[arg(long)]
    pub name: Option<String>,
    /// The operator the registration is logged as.
    #[arg(long, default_value = "local")]
    pub operator: String,
    /// The robot's own perception of --image (kept with the scene; field notes applied to it later are
    /// solved on it).
    #[command(flatten)]
    pub perception: super::perception::PerceptionArgs,
}

pub fn run(args: StoreArgs) -> anyhow::Result<()> {
    let config = args.service.config()?;
    let coordinator = open_coordinator(&config)?;
    let mut uploads = Vec::new();
    for demo in &args.demos {
        uploads.push(SceneUpload {
            demo: Some(demo.clone()),
            name: args.name.clone(),
            ..SceneUpload::default()
        });
    }
    let brings_perception = args.perception.scores.is_some()
        || args.perception.label_map.is_some()
        || args.perception.user_model.is_some()
        || args.perception.detections.is_some();
    if brings_perception && args.image.is_none() && args.scene.is_none() {
        anyhow::bail!(
            "--scores, --label-map, --user-model and --detections go with an --image or a --scene"
        );
    }
    let taxonomy = Taxonomy::embedded();
    if let Some(directory) = &args.scene {
        let upload = scene_upload(directory, &args, &taxonomy)?;
        if warns_without_depth(&config) {
            warn_without_depth(&upload);
        }
        uploads.push(upload);
    }
    if let Some(image) = &args.image {
        let read = |path: &PathBuf| {
            std::fs::read(path).with_context(|| format!("reading {}", path.display()))
        };
        let mut upload = SceneUpload {
            image_png: Some(read(image)?),
            depth_png: args.depth.as_ref().map(read).transpose()?,
            name: args.name.clone().or_else(|| {
                image
                    .file_stem()
                    .map(|stem| stem.to_string_lossy().into_owned())
            }),
            ..SceneUpload::default()
        };
        args.perception.fill_upload(&mut upload, image, &taxonomy)?;
        if warns_without_depth(&config) {
            warn_without_depth(&upload);
        }
        uploads.push(upload);
    }
    if uploads.is_empty() {
        anyhow::bail!("name at least one --demo scene, an --image or a --scene to store");
    }
    for upload in uploads {
        let created = coordinator
            .register_scene(upload, &args.operator)
            .map_err(|error| anyhow::anyhow!("{}: {}", error.code, error.message))?;
        println!("{}\t{}", created.scene_id, created.name);
    }
    Ok(())
}

/// A scene directory as a registration: the capture as `fix DIR` reads it (its depth re-encoded in
/// millimetres) and its perception files under the flags.
fn scene_upload(
    directory: &Path,
    args: &StoreArgs,
    taxonomy: &Taxonomy,
) -> anyhow::Result<SceneUpload> {
    let capture = load_capture(directory, DEFAULT_PIXEL_LIMIT)
        .with_context(|| format!("reading the scene {}", directory.display()))?;
    let image = image_file(directory)
        .ok_or_else(|| anyhow::anyhow!("{} holds no image", directory.display()))?;
    let depth_png = match &capture.depth {
        Some(depth) => Some(
            encode_index_png(&IndexImage {
                width: depth.width,
                height: depth.height,
                values: depth.millimetres.clone(),
            })
            .map_err(|message| anyhow::anyhow!("encoding the depth map: {message}"))?,
        ),
        None => None,
    };
    let mut upload = SceneUpload {
        image_png: Some(
            std::fs::read(&image).with_context(|| format!("reading {}", image.display()))?,
        ),
        depth_png,
        name: args.name.clone().or(Some(capture.name.clone())),
        ..SceneUpload::default()
    };
    let (perception, taken) = args.perception.with_scene_files(directory)?;
    if !taken.is_empty() {
        eprintln!(
            "sayso: the robot's perception from {}: {}",
            directory.display(),
            taken.join(", ")
        );
    }
    perception.fill_upload(&mut upload, &image, taxonomy)?;
    Ok(upload)
}

/// Whether a scene without depth would be scored by a classifier with no image-only companion: no user
/// model scores it and the configured model has no `segment_classifier_rgb.onnx` beside it
/// (`pipeline::load_classifier`, which the service's corrector loads it with).
fn warns_without_depth(config: &sayso_service::config::ServiceConfig) -> bool {
    config.user_model.is_none()
        && sayso_perception::pipeline::image_only_companion(
            &sayso_perception::pipeline::model_path(config.model.as_deref()),
        )
        .is_none()
}

/// Says so when a scene without depth will be scored by a classifier with no image-only companion (the
/// caller checks that with `warns_without_depth`).
fn warn_without_depth(upload: &SceneUpload) {
    if upload.depth_png.is_none() && upload.scores_npy.is_none() && upload.label_map_png.is_none() {
        eprintln!("sayso: {}", super::fix::NO_DEPTH_WARNING);
    }
}
