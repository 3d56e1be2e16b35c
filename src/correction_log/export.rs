//! Writing the accepted corrections out as a training dataset directory.
//!
//! Owns: the dataset layout. Each example is a folder like a rendered demo scene
//! (`<name>/image.png`, `labels.png` — the corrected index PNG —, `labels_before.png`, `depth.png` when the
//! scene has depth, `scene.json`), with
//! `index.jsonl` (one record per example), `left_out.jsonl` (the corrections not exported and why:
//! `export_filter`) and `classes.json` (the class manifest) at the top.
//! Must not: change the bytes in the log; they are written as they are.

use std::io::Write;
use std::path::{Path, PathBuf};

use serde::Serialize;

use super::{CorrectionLog, LogError};
use crate::scene::files::{DEPTH_FILE, IMAGE_FILE, LABELS_BEFORE_FILE, LABELS_FILE, METADATA_FILE};
use crate::taxonomy::Taxonomy;

/// What went wrong exporting.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    #[error(transparent)]
    Log(#[from] LogError),
    #[error("cannot write {path}: {source}")]
    Write {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{path} exists and is not empty; choose a new output directory")]
    NotEmpty { path: PathBuf },
}

/// What an export wrote, and what it left out.
#[derive(Clone, Debug, PartialEq)]
pub struct ExportSummary {
    pub examples: usize,
    pub directory: PathBuf,
    pub left_out: Vec<super::export_filter::LeftOut>,
}

#[derive(Serialize)]
struct ExampleRecord<'a> {
    /// The scene's name, as in a rendered scene's `scene.json`.
    name: &'a str,
    width: u32,
    height: u32,
    /// The room type: the corrected scene's, else the one declared at registration.
    room: Option<&'a str>,
    /// The example's folder, relative to the dataset directory.
    directory: String,
    image: String,
    labels: String,
    labels_before: String,
    /// The 16-bit depth PNG (millimetres), when the scene was registered with one.
    #[serde(skip_serializing_if = "Option::is_none")]
    depth: Option<String>,
    scene_id: i64,
    scene_name: &'a str,
    scene_version: i64,
    utterance: &'a str,
    constraints: serde_json::Value,
    /// The operator who said it.
    operator: &'a str,
    /// The operator who confirmed it, for a change that was held for confirmation.
    #[serde(skip_serializing_if = "Option::is_none")]
    confirmed_by: Option<&'a str>,
    created_at: &'a str,
    log_schema: i64,
    /// The id of the classifier model that produced the corrected version, when the log recorded it.
    #[serde(skip_serializing_if = "Option::is_none")]
    model: Option<String>,
}

#[derive(Serialize)]
struct ClassRecord<'a> {
    id: u16,
    name: &'a str,
    group: String,
    safety: bool,
    colour: [u8; 3],
}

#[derive(Serialize)]
struct ClassManifest<'a> {
    taxonomy_schema: u32,
    unlabelled: u16,
    classes: Vec<ClassRecord<'a>>,
}

fn write_file(path: &Path, bytes: &[u8]) -> Result<(), ExportError> {
    std::fs::write(path, bytes).map_err(|source| ExportError::Write {
        path: path.to_path_buf(),
        source,
    })
}

/// Width and height from a PNG's IHDR chunk (bytes 16..24, big-endian; PNG specification, section 11.2.2).
fn png_size(bytes: &[u8]) -> Option<(u32, u32)> {
    let width = bytes.get(16..20)?;
    let height = bytes.get(20..24)?;
    Some((
        u32::from_be_bytes([width[0], width[1], width[2], width[3]]),
        u32::from_be_bytes([height[0], height[1], height[2], height[3]]),
    ))
}

/// The room type the scene was registered with, by name.
/// The scene's registration record (`input_json`) as JSON.
fn registration(log: &CorrectionLog, scene: super::SceneKey) -> Option<serde_json::Value> {
    let row = log
        .scenes()
        .ok()?
        .into_iter()
        .find(|row| row.key == scene)?;
    serde_json::from_str(&row.input_json).ok()
}

/// The room type of the example: the corrected version's, else the one declared at registration.
fn room_name(
    log: &CorrectionLog,
    example: &super::ExampleRow,
    registration: Option<&serde_json::Value>,
    taxonomy: &Taxonomy,
) -> Option<String> {
    let from_version = log.version(example.version).ok().and_then(|(record, _)| {
        let summary: serde_json::Value = serde_json::from_str(&record.summary_json).ok()?;
        summary.get("room")?.as_u64()
    });
    let declared = registration.and_then(|input| input.get("room")?.as_u64());
    let room = u16::try_from(from_version.or(declared)?).ok()?;
    taxonomy
        .room(crate::ids::RoomId(room))
        .map(|info| info.name.clone())
}

/// Writes every counting training example of `log` into `directory` (created; must be empty if it exists),
/// leaving out corrections undone or later contradicted, and listing those and the rejected proposals in
/// `left_out.jsonl`.
pub fn export_dataset(
    log: &CorrectionLog,
    taxonomy: &Taxonomy,
    directory: &Path,
) -> Result<ExportSummary, ExportError> {
    export_dataset_showing(log, taxonomy, directory, &indicatif::ProgressBar::hidden())
}

/// `export_dataset`, advancing `progress` once per example written (its length is set here).
pub fn export_dataset_showing(
    log: &CorrectionLog,
    taxonomy: &Taxonomy,
    directory: &Path,
    progress: &indicatif::ProgressBar,
) -> Result<ExportSummary, ExportError> {
    if let Ok(mut entries) = std::fs::read_dir(directory) {
        if entries.next().is_some() {
            return Err(ExportError::NotEmpty {
                path: directory.to_path_buf(),
            });
        }
    }
    std::fs::create_dir_all(directory).map_err(|source| ExportError::Write {
        path: directory.to_path_buf(),
        source,
    })?;
    let manifest = ClassManifest {
        taxonomy_schema: crate::taxonomy::TAXONOMY_SCHEMA,
        unlabelled: crate::taxonomy::UNLABELLED,
        classes: taxonomy
            .classes()
            .iter()
            .map(|class| ClassRecord {
                id: class.id.0,
                name: &class.name,
                group: format!("{:?}", class.group).to_lowercase(),
                safety: class.safety,
                colour: class.colour,
            })
            .collect(),
    };
    let manifest_text = serde_json::to_string_pretty(&manifest).unwrap_or_default();
    write_file(&directory.join("classes.json"), manifest_text.as_bytes())?;
    let index_path = directory.join("index.jsonl");
    let mut index = Vec::new();
    let audit = super::export_filter::audit(log)?;
    let examples = audit.kept;
    progress.set_length(examples.len() as u64);
    for example in &examples {
        let folder = format!("example-{:06}", example.id);
        let example_directory = directory.join(&folder);
        std::fs::create_dir_all(&example_directory).map_err(|source| ExportError::Write {
            path: example_directory.clone(),
            source,
        })?;
        write_file(
            &example_directory.join(IMAGE_FILE),
            &log.blob(&example.image_hash)?,
        )?;
        write_file(
            &example_directory.join(LABELS_FILE),
            &log.blob(&example.labels_after_hash)?,
        )?;
        write_file(
            &example_directory.join(LABELS_BEFORE_FILE),
            &log.blob(&example.labels_before_hash)?,
        )?;
        let image = log.blob(&example.image_hash)?;
        let (width, height) = png_size(&image).unwrap_or((0, 0));
        let registered = registration(log, example.scene);
        let room = room_name(log, example, registered.as_ref(), taxonomy);
        let depth_hash = registered
            .as_ref()
            .and_then(|input| input.get("depth_png")?.as_str().map(str::to_string));
        let depth = match depth_hash {
            Some(hash) => {
                write_file(&example_directory.join(DEPTH_FILE), &log.blob(&hash)?)?;
                Some(format!("{folder}/{DEPTH_FILE}"))
            }
            None => None,
        };
        let record = ExampleRecord {
            name: &example.scene_name,
            width,
            height,
            room: room.as_deref(),
            directory: folder.clone(),
            image: format!("{folder}/{IMAGE_FILE}"),
            labels: format!("{folder}/{LABELS_FILE}"),
            labels_before: format!("{folder}/{LABELS_BEFORE_FILE}"),
            depth,
            scene_id: example.scene.0,
            scene_name: &example.scene_name,
            scene_version: example.version.0,
            utterance: &example.utterance,
            constraints: serde_json::from_str(&example.constraints_json)
                .unwrap_or(serde_json::Value::Null),
            operator: &example.operator,
            confirmed_by: example.confirmed_by.as_deref(),
            created_at: &example.created_at,
            log_schema: example.row_schema,
            model: log.version(example.version)?.0.model,
        };
        let scene_text = serde_json::to_string_pretty(&record).unwrap_or_default();
        write_file(
            &example_directory.join(METADATA_FILE),
            scene_text.as_bytes(),
        )?;
        let line = serde_json::to_string(&record).unwrap_or_default();
        index.extend_from_slice(line.as_bytes());
        index.push(b'\n');
        progress.inc(1);
    }
    progress.finish_and_clear();
    let mut left_out_text = String::new();
    for left in &audit.left_out {
        left_out_text.push_str(&serde_json::to_string(left).unwrap_or_default());
        left_out_text.push('\n');
    }
    write_file(&directory.join("left_out.jsonl"), left_out_text.as_bytes())?;
    let mut file = std::fs::File::create(&index_path).map_err(|source| ExportError::Write {
        path: index_path.clone(),
        source,
    })?;
    file.write_all(&index)
        .map_err(|source| ExportError::Write {
            path: index_path.clone(),
            source,
        })?;
    Ok(ExportSummary {
        examples: examples.len(),
        directory: directory.to_path_buf(),
        left_out: audit.left_out,
    })
}
