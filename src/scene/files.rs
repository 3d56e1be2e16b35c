//! The one place that names the files of a scene directory. Every reader and writer of scene directories
//! (the capture loader here, the demo set, the renderer, the service's demo lookup, `fix`) takes its names
//! from this module.
//!
//! Owns: the file names and which of them make up the capture (what a robot has) and which the ground truth
//! (what only evaluation and training read).
//! Must not: read or write anything.
//!
//! A scene directory holds:
//!
//! | file | layer | what |
//! |---|---|---|
//! | `image.png`, `image.jpg` or `image.jpeg` | capture, required | the colour image, 8-bit sRGB (PNG: RGB, RGBA or greyscale; JPEG: baseline or progressive); the first of these names that exists is read |
//! | `depth.png` | capture, optional | a 16-bit single-channel depth map, 0 = no reading; one unit is a millimetre unless `camera.json` says `depth_unit_mm` |
//! | `camera.json` | capture, optional | `{"fx": .., "fy": .., "cx": .., "cy": .., "depth_unit_mm": 1.0}`: pinhole intrinsics in pixels (all four or none) and the depth unit in millimetres (default 1) |
//! | `scene.json` | capture, optional | `{"name": "...", "room": "kitchen", "width": 640, "height": 480}`; every field may be left out, other fields are ignored |
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

/// Ground truth: class per pixel.
pub const LABELS_FILE: &str = "labels.png";

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
