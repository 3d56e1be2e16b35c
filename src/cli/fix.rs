//! `sayso fix`: the main job on the command line. A scene (demo name, image or directory), optionally the
//! robot's own perception of it (`super::perception`), and one or more operator notes in; the corrected scene graph, label map, before/after overlays and a plain summary out.
//!
//! Owns: the flags, the output file names, drawing the before and after pictures.
//! Must not: run pipeline stages itself; everything goes through `sayso_perception::pipeline`.

use std::path::{Path, PathBuf};

use anyhow::Context;
use sayso_core::demo::demo_directory;
use sayso_core::language::parse_focus;
use sayso_core::overlay::{draw_before_after, OverlayOptions, RegionMap, View};
use sayso_core::raster::{write_palette_png, write_rgb_png};
use sayso_core::scene::files::LABELS_FILE;
use sayso_core::scenegraph::{label_map, object_regions};
use sayso_core::taxonomy::Taxonomy;
use sayso_core::turn::dialogue::Status;
use sayso_perception::pipeline::{
    correct_notes, load_classifier, model_path, prepare_perceived, report_text, CorrectionReport,
    CorrectionSettings, PointedNote, SceneSource,
};
use sayso_perception::unaries::perception::ScoreSource;

/// Correct a scene from operator notes.
#[derive(Debug, clap::Args)]
pub struct FixArgs {
    /// A demo scene name, an image file (PNG or JPEG), or a scene directory holding at least an image
    /// (image.png, image.jpg or image.jpeg; optionally depth.png, camera.json, scene.json, and the robot's
    /// perception: scores.npy with scores_classes.txt, or label_map.png with label_map_classes.txt, and
    /// detections.jsonl; a flag naming the same input wins).
    pub scene: String,
    /// An operator note; repeat for several, applied in order as one conversation.
    #[arg(long = "say", required = true)]
    pub say: Vec<String>,
    /// What the operator points at with the note before it: object:ID or pixel:X,Y (repeat, one after each
    /// pointed note; a focus before every note goes with the first).
    #[arg(long)]
    pub focus: Vec<String>,
    /// Apply changes that remove or rename a person, pet or hazard.
    #[arg(long)]
    pub confirm: bool,
    /// Output directory.
    #[arg(long, default_value = "out/fix")]
    pub out: PathBuf,
    /// Directory holding the demo scenes (default: $SAYSO_DEMO_DIR, else the crate's demo_scenes/).
    #[arg(long)]
    pub demo_dir: Option<PathBuf>,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
    #[command(flatten)]
    pub perception: super::perception::PerceptionArgs,
}

/// Said when an image with no depth map is scored by a model of the built-in contract that has no
/// image-only companion (a model given by --model or $SAYSO_MODEL without `segment_classifier_rgb.onnx`
/// beside it): models trained on renders with depth label an image alone poorly (the shipped one: on four
/// training renders at 640x480, pixel accuracy 92-96% with depth against 5-12% without, measured
/// 2026-12-04). The shipped pair needs no warning: the image-only model scores such a scene.
pub const NO_DEPTH_WARNING: &str = "no depth map, and this classifier has no image-only companion \
     (segment_classifier_rgb.onnx beside it): a model trained on images with depth labels an image alone \
     poorly; add a depth.png beside the image (a scene directory), use the built-in models, or bring the \
     robot's own scores (--scores, --label-map or --user-model; docs/perception.md)";

/// Notes that were not all settled: the process exits with `code` after the outputs are written.
#[derive(Debug, thiserror::Error)]
#[error("{why}")]
pub struct Unsettled {
    pub code: i32,
    pub why: String,
}

/// Exit code: a note was not understood, or a conversation command could not be carried out.
pub const EXIT_NOT_UNDERSTOOD: i32 = 3;
/// Exit code: a note's question is still open, or something it asks for is unmet.
pub const EXIT_UNMET: i32 = 4;
/// Exit code: a change that touches a person, pet or hazard is still held for confirmation.
pub const EXIT_HELD: i32 = 5;

/// Which note each `--focus` goes with, from the order of the flags on the command line: the nearest
/// `--say` before it, or the first note when it comes before every `--say`.
fn focus_owners(arguments: &[String]) -> Vec<usize> {
    let mut notes_seen = 0usize;
    let mut owners = Vec::new();
    let mut skip_value = false;
    for argument in arguments {
        if skip_value {
            skip_value = false;
            continue;
        }
        let is = |flag: &str| argument == flag || argument.starts_with(&format!("{flag}="));
        if is("--say") {
            notes_seen += 1;
            skip_value = argument == "--say";
        } else if is("--focus") {
            owners.push(notes_seen.saturating_sub(1));
            skip_value = argument == "--focus";
        } else if argument == "--" {
            break;
        }
    }
    owners
}

/// The notes with their focus.
fn pointed_notes(args: &FixArgs, arguments: &[String]) -> anyhow::Result<Vec<PointedNote>> {
    let mut notes: Vec<PointedNote> = args
        .say
        .iter()
        .map(|text| PointedNote {
            text: text.clone(),
            focus: None,
        })
        .collect();
    let owners = focus_owners(arguments);
    for (index, focus) in args.focus.iter().enumerate() {
        let owner = owners.get(index).copied().unwrap_or(0);
        let note = notes
            .get_mut(owner)
            .ok_or_else(|| anyhow::anyhow!("--focus {focus} has no --say note to go with"))?;
        if note.focus.is_some() {
            anyhow::bail!(
                "two --focus flags go with the note {:?}; put each --focus after the --say it belongs to",
                note.text
            );
        }
        note.focus = Some(parse_focus(focus)?);
    }
    Ok(notes)
}

/// Whether every note was settled, else the exit code and why.
fn settled(report: &CorrectionReport) -> Result<(), Unsettled> {
    let not_understood = report
        .turns
        .iter()
        .filter(|t| matches!(t.status, Status::NotUnderstood | Status::Refused))
        .count();
    let last_asked = report
        .turns
        .last()
        .is_some_and(|t| t.status == Status::Asked);
    let unmet = report.turns.iter().filter(|t| !t.unmet.is_empty()).count();
    let held = report.turns.last().map_or(0, |t| {
        t.waiting.len().max(usize::from(t.status == Status::Held))
    });
    if not_understood > 0 {
        return Err(Unsettled {
            code: EXIT_NOT_UNDERSTOOD,
            why: format!("{not_understood} note(s) not understood or not done"),
        });
    }
    if last_asked || unmet > 0 {
        return Err(Unsettled {
            code: EXIT_UNMET,
            why: if last_asked {
                "a question waits for an answer".to_string()
            } else {
                format!("{unmet} note(s) left something unmet")
            },
        });
    }
    if held > 0 {
        return Err(Unsettled {
            code: EXIT_HELD,
            why: format!(
                "{held} change(s) touch a person, pet or hazard and wait for confirmation"
            ),
        });
    }
    Ok(())
}

pub fn run(args: FixArgs) -> anyhow::Result<()> {
    let arguments: Vec<String> = std::env::args().collect();
    let notes = pointed_notes(&args, &arguments)?;
    let taxonomy = Taxonomy::embedded();
    let looks_like_path = args.scene.contains(['/', '\\'])
        || [".png", ".jpg", ".jpeg"]
            .iter()
            .any(|extension| args.scene.to_ascii_lowercase().ends_with(extension));
    if looks_like_path && !Path::new(&args.scene).exists() {
        anyhow::bail!(
            "{} is not a file or directory (a demo scene is named without '/' or an extension)",
            args.scene
        );
    }
    let source = SceneSource::from_text(&args.scene, &demo_directory(args.demo_dir.as_deref()));
    let capture = source.load()?;
    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let perception_args = match &source {
        SceneSource::Directory(directory) => {
            let (with_files, taken) = args.perception.with_scene_files(directory)?;
            if !taken.is_empty() {
                eprintln!(
                    "sayso: the robot's perception from {}: {}",
                    directory.display(),
                    taken.join(", ")
                );
            }
            with_files
        }
        _ => args.perception.clone(),
    };
    let perception =
        perception_args.perception(capture.image.width, capture.image.height, &taxonomy)?;
    if capture.depth.is_none()
        && matches!(perception.scores, ScoreSource::BuiltIn)
        && classifier.image_only().is_none()
    {
        eprintln!("sayso: {NO_DEPTH_WARNING}");
    }
    let prepared = prepare_perceived(capture, &perception, &taxonomy, &classifier)?;
    if !prepared.dropped_classes.is_empty() {
        eprintln!(
            "sayso: left out classes with unknown names: {}",
            prepared.dropped_classes.join(", ")
        );
    }
    let report = correct_notes(prepared, &notes, args.confirm, &settings)?;
    write_outputs(&report, &taxonomy, &args.out)?;
    print!("{}", report_text(&report, &taxonomy));
    println!("wrote {}", args.out.display());
    settled(&report)?;
    Ok(())
}

/// The titles of the before and after pictures, each naming the room type the scene graph holds (a note
/// such as "this is the bathroom" may change nothing else that shows): "Before the notes: kitchen",
/// "After 2 notes: bathroom".
fn view_titles(notes: usize, room_before: &str, room_after: &str) -> (String, String) {
    let room = |name: &str| name.replace('_', " ");
    (
        format!("Before the notes: {}", room(room_before)),
        format!(
            "After {notes} note{}: {}",
            if notes == 1 { "" } else { "s" },
            room(room_after)
        ),
    )
}

/// Writes scene_graph.json, labels.png (a palette PNG: pixel value = class id, shown in the class's colour),
/// overlay_before.png and overlay_after.png (the same size), before_after.png (both side by side) and
/// summary.txt.
pub fn write_outputs(
    report: &CorrectionReport,
    taxonomy: &Taxonomy,
    out: &Path,
) -> anyhow::Result<()> {
    std::fs::create_dir_all(out).with_context(|| format!("creating {}", out.display()))?;
    let scene = &report.prepared.scene;
    let name = &report.prepared.capture.name;
    let before_graph = &report.baseline.graph;
    let after_graph = report
        .correction
        .as_ref()
        .map_or(before_graph, |correction| &correction.graph);
    let before_labels = label_map(scene, &before_graph.segment_labels).values;
    let after_labels = label_map(scene, &after_graph.segment_labels).values;
    let before_regions = object_regions(scene, before_graph);
    let after_regions = object_regions(scene, after_graph);
    let (before_title, after_title) = view_titles(
        report.turns.len(),
        &before_graph.room_name,
        &after_graph.room_name,
    );
    let pictures = draw_before_after(
        &scene.image,
        View {
            regions: RegionMap {
                width: scene.width(),
                regions: &before_regions,
            },
            labels: &before_labels,
            title: &before_title,
        },
        View {
            regions: RegionMap {
                width: scene.width(),
                regions: &after_regions,
            },
            labels: &after_labels,
            title: &after_title,
        },
        taxonomy,
        &OverlayOptions {
            title: name.clone(),
            ..OverlayOptions::default()
        },
    )?;
    write_rgb_png(&out.join("overlay_before.png"), &pictures.before)?;
    write_rgb_png(&out.join("overlay_after.png"), &pictures.after)?;
    write_rgb_png(&out.join("before_after.png"), &pictures.side_by_side)?;
    write_palette_png(
        &out.join(LABELS_FILE),
        &label_map(scene, report.final_labels()),
        &taxonomy.label_palette(),
    )?;
    let path = out.join("scene_graph.json");
    std::fs::write(&path, serde_json::to_string_pretty(after_graph)? + "\n")
        .with_context(|| format!("writing {}", path.display()))?;
    let path = out.join("summary.txt");
    std::fs::write(&path, report_text(report, taxonomy))
        .with_context(|| format!("writing {}", path.display()))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_pictures_name_the_room_before_and_after() {
        assert_eq!(
            view_titles(2, "kitchen", "living_room"),
            (
                "Before the notes: kitchen".to_string(),
                "After 2 notes: living room".to_string()
            )
        );
        assert_eq!(view_titles(1, "office", "office").1, "After 1 note: office");
    }
}
