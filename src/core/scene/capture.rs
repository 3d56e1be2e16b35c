//! What a robot has of a scene: a colour image, perhaps a depth map and camera intrinsics, perhaps a name and
//! a declared room. The correction path starts from a `Capture`; ground truth is another layer
//! (`crate::demo::DemoScene`), read only by evaluation and training.
//!
//! Owns: `Capture`, `CameraIntrinsics`, `load_capture` (a scene directory as laid out in `scene::files`,
//! image PNG or JPEG) and turning a capture into a segmented `Scene`.
//! Must not: read ground truth, know classes or rooms beyond their names, or decode images itself
//! (`crate::raster` does).

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::ids::RoomId;
use crate::raster::{read_depth_png, read_rgb_image, DepthImage, RasterError, RgbImage};

use super::files::{image_file, CAMERA_FILE, DEPTH_FILE, IMAGE_FILES, METADATA_FILE};
use super::{Scene, SceneError, SceneParams};

/// Pinhole camera intrinsics in pixels: focal lengths `fx`, `fy` and principal point `cx`, `cy`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CameraIntrinsics {
    pub fx: f64,
    pub fy: f64,
    pub cx: f64,
    pub cy: f64,
}

/// One scene as a robot has it.
#[derive(Clone, Debug, PartialEq)]
pub struct Capture {
    /// A short name: `scene.json`'s `name`, else the directory's name, else what the caller gave.
    pub name: String,
    /// The directory it was read from, when it was read from one.
    pub directory: Option<PathBuf>,
    pub image: RgbImage,
    /// Depth in millimetres (already scaled by `camera.json`'s `depth_unit_mm`), 0 = no reading.
    pub depth: Option<DepthImage>,
    pub camera: Option<CameraIntrinsics>,
    /// The room type's name `scene.json` declares, unchecked against any taxonomy.
    pub room: Option<String>,
}

impl Capture {
    /// A capture of an image alone.
    pub fn from_image(name: impl Into<String>, image: RgbImage) -> Capture {
        Capture {
            name: name.into(),
            directory: None,
            image,
            depth: None,
            camera: None,
            room: None,
        }
    }

    /// Cuts the capture into segments (`Scene::from_image` on copies of its image and depth).
    pub fn segment(&self, room: Option<RoomId>, params: &SceneParams) -> Result<Scene, SceneError> {
        Scene::from_image(
            self.name.clone(),
            self.image.clone(),
            self.depth.clone(),
            room,
            params,
        )
    }
}

/// `scene.json` as the capture reads it: other fields are ignored.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct SceneMetadata {
    #[serde(default)]
    pub name: Option<String>,
    /// A room type's canonical name from the taxonomy, e.g. `kitchen`.
    #[serde(default)]
    pub room: Option<String>,
    #[serde(default)]
    pub width: Option<u32>,
    #[serde(default)]
    pub height: Option<u32>,
}

/// `camera.json`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct CameraFile {
    fx: Option<f64>,
    fy: Option<f64>,
    cx: Option<f64>,
    cy: Option<f64>,
    depth_unit_mm: Option<f64>,
}

fn read_json<T: serde::de::DeserializeOwned>(path: &Path) -> Result<T, SceneError> {
    let metadata_error = |message: String| SceneError::Metadata {
        path: path.to_path_buf(),
        message,
    };
    let bytes =
        std::fs::read(path).map_err(|error| metadata_error(format!("cannot read: {error}")))?;
    let text = std::str::from_utf8(&bytes).map_err(|error| {
        metadata_error(format!(
            "not UTF-8 text (the first bad byte is at offset {})",
            error.valid_up_to()
        ))
    })?;
    serde_json::from_str(text).map_err(|error| metadata_error(format!("not valid: {error}")))
}

/// Why a scene name cannot be shown to people as it is, if it cannot: it holds a control character (NUL,
/// a line break...) or a bidirectional override or isolate (U+202A..U+202E, U+2066..U+2069), which would
/// make the name, or the text printed after it, read differently from what it is.
pub fn scene_name_problem(name: &str) -> Option<String> {
    name.chars().enumerate().find_map(|(index, character)| {
        let bidi = matches!(character, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}');
        (character.is_control() || bidi).then(|| {
            format!(
                "character {index} of the name is U+{:04X}, a {} character; names are plain text",
                u32::from(character),
                if bidi { "text-direction" } else { "control" }
            )
        })
    })
}

/// Reads `camera.json`: the intrinsics (all four or none) and the depth unit in millimetres (default 1).
fn read_camera(path: &Path) -> Result<(Option<CameraIntrinsics>, f64), SceneError> {
    let bad = |message: String| SceneError::Metadata {
        path: path.to_path_buf(),
        message,
    };
    let file: CameraFile = read_json(path)?;
    let camera = match (file.fx, file.fy, file.cx, file.cy) {
        (None, None, None, None) => None,
        (Some(fx), Some(fy), Some(cx), Some(cy)) => {
            if !(fx.is_finite() && fy.is_finite() && fx > 0.0 && fy > 0.0) {
                return Err(bad(format!(
                    "fx and fy must be positive pixel lengths, got {fx} and {fy}"
                )));
            }
            if !(cx.is_finite() && cy.is_finite()) {
                return Err(bad(format!("cx and cy must be finite, got {cx} and {cy}")));
            }
            Some(CameraIntrinsics { fx, fy, cx, cy })
        }
        _ => return Err(bad("give all four of fx, fy, cx, cy or none".to_string())),
    };
    let unit = file.depth_unit_mm.unwrap_or(1.0);
    if !(unit.is_finite() && unit > 0.0) {
        return Err(bad(format!(
            "depth_unit_mm must be a positive number of millimetres per depth unit, got {unit}"
        )));
    }
    Ok((camera, unit))
}

/// Multiplies every reading by `unit` millimetres; a reading that would pass 65535 mm is an error naming the
/// first such pixel.
fn scale_depth(depth: &mut DepthImage, unit: f64, path: &Path) -> Result<(), SceneError> {
    if unit == 1.0 {
        return Ok(());
    }
    let width = depth.width.max(1) as usize;
    for (index, value) in depth.millimetres.iter_mut().enumerate() {
        let scaled = (f64::from(*value) * unit).round();
        if scaled > f64::from(u16::MAX) {
            return Err(SceneError::Metadata {
                path: path.to_path_buf(),
                message: format!(
                    "depth {value} at pixel (x {}, y {}) times depth_unit_mm {unit} is {scaled} mm, beyond \
                     the 65535 mm a depth map holds",
                    index % width,
                    index / width
                ),
            });
        }
        *value = scaled as u16;
    }
    Ok(())
}

/// Loads the capture of a scene directory (layout in `scene::files`). Images above `pixel_limit` pixels are
/// refused before decoding; the depth map and any size `scene.json` declares must match the image. Ground
/// truth files, if present, are not read.
pub fn load_capture(directory: &Path, pixel_limit: u64) -> Result<Capture, SceneError> {
    if !directory.is_dir() {
        return Err(SceneError::NotADirectory {
            path: directory.to_path_buf(),
        });
    }
    let image_path = image_file(directory).ok_or_else(|| SceneError::NoImage {
        directory: directory.to_path_buf(),
        tried: IMAGE_FILES.join(", "),
    })?;
    let image = read_rgb_image(&image_path, pixel_limit)?;
    let image_name = image_path
        .file_name()
        .map_or(String::new(), |name| name.to_string_lossy().into_owned());
    let camera_path = directory.join(CAMERA_FILE);
    let (camera, depth_unit) = if camera_path.is_file() {
        read_camera(&camera_path)?
    } else {
        (None, 1.0)
    };
    let depth_path = directory.join(DEPTH_FILE);
    let depth = if depth_path.is_file() {
        let mut depth = read_depth_png(&depth_path, pixel_limit)?;
        if depth.width != image.width || depth.height != image.height {
            return Err(RasterError::SizeMismatch {
                path: depth_path,
                width: image.width,
                height: image.height,
                found_width: depth.width,
                found_height: depth.height,
            }
            .into());
        }
        scale_depth(&mut depth, depth_unit, &camera_path)?;
        Some(depth)
    } else {
        None
    };
    let metadata_path = directory.join(METADATA_FILE);
    let metadata: SceneMetadata = if metadata_path.is_file() {
        read_json(&metadata_path)?
    } else {
        SceneMetadata::default()
    };
    let declared = (metadata.width, metadata.height);
    if declared.0.is_some_and(|width| width != image.width)
        || declared.1.is_some_and(|height| height != image.height)
    {
        return Err(SceneError::Metadata {
            path: metadata_path,
            message: format!(
                "declares {}x{} but {image_name} is {}x{}",
                declared.0.map_or("?".to_string(), |w| w.to_string()),
                declared.1.map_or("?".to_string(), |h| h.to_string()),
                image.width,
                image.height
            ),
        });
    }
    if let Some(problem) = metadata.name.as_deref().and_then(scene_name_problem) {
        return Err(SceneError::Metadata {
            path: metadata_path,
            message: problem,
        });
    }
    let name = metadata.name.clone().unwrap_or_else(|| {
        directory.file_name().map_or("scene".to_string(), |name| {
            name.to_string_lossy().into_owned()
        })
    });
    Ok(Capture {
        name,
        directory: Some(directory.to_path_buf()),
        image,
        depth,
        camera,
        room: metadata.room,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_with_control_or_direction_characters_are_refused() {
        assert_eq!(scene_name_problem("Juniper Lane hall, morning"), None);
        assert_eq!(scene_name_problem("salle de séjour"), None);
        for (name, index) in [
            ("hall\u{0}", 4),
            ("hall\nkitchen", 4),
            ("\u{202E}llah", 0),
            ("hall\u{2067}", 4),
        ] {
            let problem = scene_name_problem(name).unwrap();
            assert!(problem.contains(&format!("character {index}")), "{problem}");
        }
    }

    #[test]
    fn scene_json_that_is_not_utf8_is_named_as_such() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("scene.json");
        std::fs::write(&path, b"{\"name\": \"hall\xff\"}").unwrap();
        let error = read_json::<SceneMetadata>(&path).unwrap_err().to_string();
        assert!(
            error.contains("not UTF-8") && error.contains("offset 14"),
            "{error}"
        );
        std::fs::write(&path, "{\"name\": \"hall\\u202e\"}").unwrap();
        let metadata: SceneMetadata = read_json(&path).unwrap();
        assert!(scene_name_problem(metadata.name.as_deref().unwrap()).is_some());
    }
}
