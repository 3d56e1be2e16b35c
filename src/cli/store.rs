//! `sayso store`: register scenes in the correction log without the HTTP service, so field notes can be
//! applied to them in bulk and their corrections exported.
//!
//! Owns: the command's flags and its output (one `scene id<TAB>name` line per stored scene).
//! Must not: check or decode uploads itself; the coordinator's registration does, as for the HTTP route.

use std::path::PathBuf;

use anyhow::Context;
use sayso::session::SceneUpload;

use super::open_log::{open_coordinator, ServiceFlags};

/// Register demo scenes by name, or a scene from an image (PNG or JPEG) with an optional depth PNG and the
/// robot's own perception, in the correction log; prints each new scene id.
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
    if brings_perception && args.image.is_none() {
        anyhow::bail!("--scores, --label-map, --user-model and --detections go with an --image");
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
        args.perception.fill_upload(&mut upload, image)?;
        uploads.push(upload);
    }
    if uploads.is_empty() {
        anyhow::bail!("name at least one --demo scene or an --image to store");
    }
    for upload in uploads {
        let created = coordinator
            .register_scene(upload, &args.operator)
            .map_err(|error| anyhow::anyhow!("{}: {}", error.code, error.message))?;
        println!("{}\t{}", created.scene_id, created.name);
    }
    Ok(())
}
