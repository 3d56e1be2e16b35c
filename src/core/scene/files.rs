//! The one place that names the files of a scene directory. Every reader and writer of scene directories
//! (the capture loader here, the demo set, the renderer, the service's demo lookup, `fix`) takes its names
//! from this module.
//!
//! Owns: the file names and which of them make up the capture (what a robot's camera has), which the robot's
//! own perception of it (read by `fix DIR` and `store --scene DIR`; a flag naming the same input wins), and
//! which the ground truth (what only evaluation and training read).
//! Must not: read or write anything (it only asks which files exist).
//!
//! A scene directory holds:
//!
//! | file | layer | what |
//! |---|---|---|
//! | `image.png`, `image.jpg` or `image.jpeg` | capture, required | the colour image, 8-bit sRGB (PNG: RGB, RGBA or greyscale; JPEG: baseline or progressive); the first of these names that exists is read |
//! | `depth.png` | capture, optional | a 16-bit single-channel depth map, 0 = no reading; one unit is a millimetre unless `camera.json` says `depth_unit_mm` |
//! | `camera.json` | capture, optional | `{"fx": .., "fy": .., "cx": .., "cy": .., "depth_unit_mm": 1.0}`: pinhole intrinsics in pixels (all four or none) and the depth unit in millimetres (default 1) |
//! | `scene.json` | capture, optional | `{"name": "...", "room": "kitchen", "width": 640, "height": 480}`; every field may be left out, other fields are ignored |
//! | `scores.npy` | perception, optional | the robot's per-pixel class scores (`docs/perception.md`) |
//! | `scores_classes.txt` | perception, optional | the class names of `scores.npy`'s channels, one per line |
//! | `label_map.png` | perception, optional | the robot's own label map (instead of `scores.npy`, not with it) |
//! | `label_map_classes.txt` | perception, optional | the class list of `label_map.png`, one name per line |
//! | `detections.jsonl` | perception, optional | the robot's detections, JSON Lines; `mask_png` paths are relative to the directory |
//! | `labels.png` | ground truth | index PNG, pixel = class id, 255 = unlabelled |
//! | `instances.png` | ground truth | index PNG, pixel = object number (0 = none) |
//! | `objects.json` | ground truth | the objects of `instances.png` (written by the renderer) |

/// The colour image names tried in order; the renderer writes the first.
pub const IMAGE_FILES: [&str; 3] = ["image.png", "image.jpg", "image.jpeg"];

/// The colour image name sayso itself writes.
pub const IMAGE_FILE: &str = IMAGE_FILES[0];

/// The optional 16-bit depth map.
pub const DEPTH_FILE: &str = "depth.png";

/// The optional camera intrinsics and depth unit.
pub const CAMERA_FILE: &str = "camera.json";

/// The optional metadata (name, room, size).
pub const METADATA_FILE: &str = "scene.json";

/// Perception: the robot's per-pixel class scores (NPY). The perception files are named as the upload's
/// parts (`scores`, `scores_classes`, `label_map`, `label_map_classes`, `detections`) with an extension.
pub const SCORES_FILE: &str = "scores.npy";

/// Perception: the class names of `SCORES_FILE`'s channels.
pub const SCORES_CLASSES_FILE: &str = "scores_classes.txt";

/// Perception: the robot's own label map (an index PNG).
pub const LABEL_MAP_FILE: &str = "label_map.png";

/// Perception: the class list of `LABEL_MAP_FILE`.
pub const LABEL_MAP_CLASSES_FILE: &str = "label_map_classes.txt";

/// Perception: the robot's detections in JSON Lines.
pub const DETECTIONS_FILE: &str = "detections.jsonl";

/// Ground truth: class per pixel.
pub const LABELS_FILE: &str = "labels.png";

/// An exported correction: the labels before it (beside `LABELS_FILE`, the labels after), written by the
/// correction log's export and read by retraining.
pub const LABELS_BEFORE_FILE: &str = "labels_before.png";

/// Ground truth: object number per pixel.
pub const INSTANCES_FILE: &str = "instances.png";

/// Ground truth: the objects' records.
pub const OBJECTS_FILE: &str = "objects.json";

/// The colour image of a scene directory: the first of `IMAGE_FILES` that is a file.
pub fn image_file(directory: &std::path::Path) -> Option<std::path::PathBuf> {
    IMAGE_FILES
        .iter()
        .map(|name| directory.join(name))
        .find(|path| path.is_file())
}

/// The perception files a scene directory holds (each `None` when it is not there as a file).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct PerceptionFiles {
    pub scores: Option<std::path::PathBuf>,
    pub scores_classes: Option<std::path::PathBuf>,
    pub label_map: Option<std::path::PathBuf>,
    pub label_map_classes: Option<std::path::PathBuf>,
    pub detections: Option<std::path::PathBuf>,
}

/// Which of the perception files are in `directory`.
pub fn perception_files(directory: &std::path::Path) -> PerceptionFiles {
    let file = |name: &str| {
        let path = directory.join(name);
        path.is_file().then_some(path)
    };
    PerceptionFiles {
        scores: file(SCORES_FILE),
        scores_classes: file(SCORES_CLASSES_FILE),
        label_map: file(LABEL_MAP_FILE),
        label_map_classes: file(LABEL_MAP_CLASSES_FILE),
        detections: file(DETECTIONS_FILE),
    }
}
