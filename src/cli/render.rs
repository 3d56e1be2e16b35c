//! `sayso render`: draw scenes of the Juniper Lane flat with ground truth, or re-render the committed demo set.
//!
//! Owns: the flags and the progress lines. Must not: draw anything itself; the renderer is `sayso_render`.

use std::path::PathBuf;

use anyhow::{bail, Context};
use sayso_core::demo::demo_directory;
use sayso_core::taxonomy::Taxonomy;
use sayso_render::catalogue::{readme_text, DEMO_SCENES, FIRST_TRAINING_SEED};
use sayso_render::writer::write_scene;
use sayso_render::{render_scene, SceneRequest, ROOM_TYPES};

/// Render scenes of the invented flat: image, depth, labels, instances, objects and scene metadata.
#[derive(Debug, clap::Args)]
pub struct RenderArgs {
    /// Seed of the first scene (later scenes use the following seeds).
    #[arg(long, default_value_t = FIRST_TRAINING_SEED)]
    pub seed: u64,
    /// Room type (kitchen, living_room, bedroom, bathroom, hallway, office, dining_room); without it rooms cycle.
    #[arg(long)]
    pub room: Option<String>,
    /// Directory to write scene directories into (with --demo: the demo directory to rewrite).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Number of scenes, with consecutive seeds.
    #[arg(long, default_value_t = 1)]
    pub count: u32,
    /// Re-render the committed demo set (demo_scenes/ and its README.md).
    #[arg(long)]
    pub demo: bool,
}

pub fn run(args: RenderArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    if args.demo {
        let directory = demo_directory(args.out.as_deref());
        for entry in DEMO_SCENES.iter() {
            let scene = render_scene(&taxonomy, &SceneRequest::from(entry))
                .with_context(|| format!("rendering demo scene {}", entry.name))?;
            write_scene(&directory.join(entry.name), &scene)?;
            println!(
                "{}: {} seed {}, {} objects",
                entry.name,
                entry.room,
                entry.seed,
                scene.objects.len()
            );
        }
        let readme = directory.join("README.md");
        std::fs::write(&readme, readme_text(&DEMO_SCENES))
            .with_context(|| format!("writing {}", readme.display()))?;
        return Ok(());
    }
    let Some(out) = args.out else {
        bail!("--out DIR is required unless --demo is given");
    };
    if let Some(room) = &args.room {
        if !ROOM_TYPES.contains(&room.as_str()) {
            bail!(
                "unknown room type '{room}' (expected one of: {})",
                ROOM_TYPES.join(", ")
            );
        }
    }
    for index in 0..args.count {
        let seed = args.seed + index as u64;
        let room = match &args.room {
            Some(room) => room.clone(),
            None => ROOM_TYPES[index as usize % ROOM_TYPES.len()].to_string(),
        };
        let request = SceneRequest::new(&room, seed);
        let scene = render_scene(&taxonomy, &request)?;
        let directory = out.join(&request.name);
        write_scene(&directory, &scene)?;
        println!("{}: {} objects", directory.display(), scene.objects.len());
    }
    Ok(())
}
