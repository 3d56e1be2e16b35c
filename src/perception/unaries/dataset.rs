//! Reads a training dataset directory: one subdirectory per scene holding `image.png` (RGB) and
//! `labels.png` (index PNG of class ids, 255 = unlabelled), optionally `depth.png` (16-bit millimetres) and
//! `scene.json` (kept as raw JSON). The demo renderer writes this layout and the correction-log export
//! writes it too, so one reader serves both.
//!
//! Owns: `DatasetEntry`, `LabelledImage`, `DatasetError`, `list_dataset`, `load_labelled_image`, and
//! `majority_labels` (a segment's training label is the most common ground-truth class of its pixels).
//! Must not: build segments or features; callers do that with the scene and feature stages.

use std::path::{Path, PathBuf};

use crate::ids::ClassId;
use crate::raster::{
    read_depth_png, read_index_png, read_rgb_png, DepthImage, IndexImage, RasterError, RgbImage,
    DEFAULT_PIXEL_LIMIT,
};
use crate::scene::files::{DEPTH_FILE, IMAGE_FILE, LABELS_FILE, METADATA_FILE};
use crate::scene::SegmentMap;
use crate::taxonomy::UNLABELLED;

/// Why a dataset could not be read.
#[derive(Debug, thiserror::Error)]
pub enum DatasetError {
    #[error("cannot list dataset directory {path}: {source}")]
    List {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("dataset directory {path} holds no scene subdirectories")]
    Empty { path: PathBuf },
    #[error("scene directory {path} has no {file}")]
    MissingFile { path: PathBuf, file: &'static str },
    #[error(transparent)]
    Raster(#[from] RasterError),
    #[error(transparent)]
    Scene(#[from] crate::scene::SceneError),
    #[error(transparent)]
    Classifier(#[from] super::classifier::ClassifierError),
    #[error(transparent)]
    Metrics(#[from] super::metrics::MetricsError),
    #[error("{path}: {message}")]
    Metadata { path: PathBuf, message: String },
    #[error("{path} is {found_width}x{found_height} but the image is {width}x{height}")]
    SizeMismatch {
        path: PathBuf,
        width: u32,
        height: u32,
        found_width: u32,
        found_height: u32,
    },
    #[error("labels.png in {path} has value {value}, not a class id below {class_count} nor 255")]
    BadLabel {
        path: PathBuf,
        value: u16,
        class_count: usize,
    },
    #[error(
        "the segment map is {segments_width}x{segments_height} but the labels are {width}x{height}"
    )]
    SegmentSize {
        segments_width: u32,
        segments_height: u32,
        width: u32,
        height: u32,
    },
}

/// One scene directory of a dataset.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DatasetEntry {
    pub name: String,
    pub directory: PathBuf,
}

/// A scene's image with its ground truth.
#[derive(Clone, Debug, PartialEq)]
pub struct LabelledImage {
    pub name: String,
    pub image: RgbImage,
    pub labels: IndexImage,
    pub depth: Option<DepthImage>,
    pub metadata: Option<serde_json::Value>,
}

/// The scene subdirectories of `directory` that hold an `image.png`, sorted by name. A subdirectory
/// without `image.png` is skipped (it is not a scene); one with an image but no `labels.png` is an error
/// when the scene is loaded.
pub fn list_dataset(directory: &Path) -> Result<Vec<DatasetEntry>, DatasetError> {
    let list_error = |source| DatasetError::List {
        path: directory.to_path_buf(),
        source,
    };
    let mut entries = Vec::new();
    for item in std::fs::read_dir(directory).map_err(list_error)? {
        let item = item.map_err(list_error)?;
        let path = item.path();
        if path.is_dir() && path.join(IMAGE_FILE).is_file() {
            entries.push(DatasetEntry {
                name: item.file_name().to_string_lossy().into_owned(),
                directory: path,
            });
        }
    }
    if entries.is_empty() {
        return Err(DatasetError::Empty {
            path: directory.to_path_buf(),
        });
    }
    entries.sort_by(|a, b| a.name.cmp(&b.name));
    Ok(entries)
}

/// Loads one scene's image, labels and optional depth and metadata, checking sizes and label values.
pub fn load_labelled_image(
    entry: &DatasetEntry,
    class_count: usize,
) -> Result<LabelledImage, DatasetError> {
    let directory = &entry.directory;
    let labels_path = directory.join(LABELS_FILE);
    if !labels_path.is_file() {
        return Err(DatasetError::MissingFile {
            path: directory.clone(),
            file: LABELS_FILE,
        });
    }
    let image = read_rgb_png(&directory.join(IMAGE_FILE), DEFAULT_PIXEL_LIMIT)?;
    let labels = read_index_png(&labels_path, DEFAULT_PIXEL_LIMIT)?;
    let same_size = |path: PathBuf, found_width: u32, found_height: u32| {
        if found_width != image.width || found_height != image.height {
            Err(DatasetError::SizeMismatch {
                path,
                width: image.width,
                height: image.height,
                found_width,
                found_height,
            })
        } else {
            Ok(())
        }
    };
    same_size(labels_path.clone(), labels.width, labels.height)?;
    if let Some(&value) = labels
        .values
        .iter()
        .find(|&&v| v != UNLABELLED && v as usize >= class_count)
    {
        return Err(DatasetError::BadLabel {
            path: directory.clone(),
            value,
            class_count,
        });
    }
    let depth_path = directory.join(DEPTH_FILE);
    let depth = if depth_path.is_file() {
        let depth = read_depth_png(&depth_path, DEFAULT_PIXEL_LIMIT)?;
        same_size(depth_path, depth.width, depth.height)?;
        Some(depth)
    } else {
        None
    };
    let metadata_path = directory.join(METADATA_FILE);
    let metadata = if metadata_path.is_file() {
        let text =
            std::fs::read_to_string(&metadata_path).map_err(|error| DatasetError::Metadata {
                path: metadata_path.clone(),
                message: error.to_string(),
            })?;
        Some(
            serde_json::from_str(&text).map_err(|error| DatasetError::Metadata {
                path: metadata_path.clone(),
                message: error.to_string(),
            })?,
        )
    } else {
        None
    };
    Ok(LabelledImage {
        name: entry.name.clone(),
        image,
        labels,
        depth,
        metadata,
    })
}

/// Each segment's most common ground-truth class (ties go to the smaller class id); `None` for a segment
/// whose pixels are all unlabelled.
pub fn majority_labels(
    segments: &SegmentMap,
    labels: &IndexImage,
    class_count: usize,
) -> Result<Vec<Option<ClassId>>, DatasetError> {
    if segments.width != labels.width
        || segments.height != labels.height
        || segments.labels.len() != labels.values.len()
    {
        return Err(DatasetError::SegmentSize {
            segments_width: segments.width,
            segments_height: segments.height,
            width: labels.width,
            height: labels.height,
        });
    }
    let segment_count = segments.segment_count as usize;
    let mut votes = vec![0u32; segment_count * class_count];
    for (&segment, &label) in segments.labels.iter().zip(&labels.values) {
        if label == UNLABELLED
            || (segment as usize) >= segment_count
            || label as usize >= class_count
        {
            continue;
        }
        votes[segment as usize * class_count + label as usize] += 1;
    }
    Ok((0..segment_count)
        .map(|segment| {
            let row = &votes[segment * class_count..(segment + 1) * class_count];
            let (best, &count) = row
                .iter()
                .enumerate()
                .rev()
                .max_by_key(|(_, &count)| count)?;
            (count > 0).then_some(ClassId(best as u16))
        })
        .collect())
}

/// Reads an exported feature matrix as CSV: one row per segment, the class index first, then the features.
/// Blank lines are skipped; anything else that is not a number is an error naming the line.
pub fn read_feature_csv(path: &Path) -> Result<(ndarray::Array2<f32>, Vec<usize>), DatasetError> {
    let bad = |message: String| DatasetError::Metadata {
        path: path.to_path_buf(),
        message,
    };
    let text = std::fs::read_to_string(path).map_err(|error| bad(error.to_string()))?;
    let mut labels = Vec::new();
    let mut values = Vec::new();
    let mut width = None;
    for (number, line) in text.lines().enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let mut fields = line.split(',').map(str::trim);
        let label = fields
            .next()
            .and_then(|field| field.parse::<usize>().ok())
            .ok_or_else(|| {
                bad(format!(
                    "line {}: the first field must be a class index",
                    number + 1
                ))
            })?;
        let row: Vec<f32> = fields
            .map(|field| field.parse::<f32>())
            .collect::<Result<_, _>>()
            .map_err(|error| bad(format!("line {}: {error}", number + 1)))?;
        if *width.get_or_insert(row.len()) != row.len() || row.is_empty() {
            return Err(bad(format!(
                "line {} has {} features, expected {}",
                number + 1,
                row.len(),
                width.unwrap_or(0)
            )));
        }
        labels.push(label);
        values.extend(row);
    }
    let width = width.ok_or_else(|| bad("no rows".to_string()))?;
    let matrix = ndarray::Array2::from_shape_vec((labels.len(), width), values)
        .map_err(|error| bad(error.to_string()))?;
    Ok((matrix, labels))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::{write_index_png, write_rgb_png};

    #[test]
    fn reads_scene_directories_in_order_and_checks_them() {
        let root = tempfile::tempdir().unwrap();
        for (name, label) in [("b_scene", 2u16), ("a_scene", 1)] {
            let directory = root.path().join(name);
            std::fs::create_dir(&directory).unwrap();
            write_rgb_png(
                &directory.join("image.png"),
                &RgbImage::filled(3, 2, [10, 20, 30]),
            )
            .unwrap();
            write_index_png(
                &directory.join("labels.png"),
                &IndexImage::filled(3, 2, label),
            )
            .unwrap();
        }
        std::fs::write(
            root.path().join("b_scene/scene.json"),
            "{\"room\": \"kitchen\"}",
        )
        .unwrap();
        std::fs::create_dir(root.path().join("notes")).unwrap();
        let entries = list_dataset(root.path()).unwrap();
        assert_eq!(
            entries.iter().map(|e| e.name.as_str()).collect::<Vec<_>>(),
            ["a_scene", "b_scene"]
        );
        let scene = load_labelled_image(&entries[1], 41).unwrap();
        assert_eq!(scene.labels.values[0], 2);
        assert_eq!(scene.metadata.unwrap()["room"], "kitchen");
        assert!(matches!(
            load_labelled_image(&entries[1], 2),
            Err(DatasetError::BadLabel { value: 2, .. })
        ));
        write_index_png(
            &root.path().join("a_scene/labels.png"),
            &IndexImage::filled(2, 2, 1),
        )
        .unwrap();
        assert!(matches!(
            load_labelled_image(&entries[0], 41),
            Err(DatasetError::SizeMismatch { .. })
        ));
        std::fs::remove_file(root.path().join("a_scene/labels.png")).unwrap();
        assert!(matches!(
            load_labelled_image(&entries[0], 41),
            Err(DatasetError::MissingFile { .. })
        ));
    }

    #[test]
    fn majority_label_per_segment() {
        let segments = SegmentMap {
            width: 4,
            height: 1,
            labels: vec![0, 0, 0, 1],
            segment_count: 3,
        };
        let labels = IndexImage {
            width: 4,
            height: 1,
            values: vec![3, 5, 5, UNLABELLED],
        };
        let majority = majority_labels(&segments, &labels, 6).unwrap();
        assert_eq!(majority, vec![Some(ClassId(5)), None, None]);
        let tie = IndexImage {
            width: 4,
            height: 1,
            values: vec![4, 2, UNLABELLED, 1],
        };
        assert_eq!(
            majority_labels(&segments, &tie, 6).unwrap()[0],
            Some(ClassId(2))
        );
    }
}
