//! The scene model: what the robot sees, cut into segments, with the statistics every later stage reads.
//!
//! Owns: `Scene` and its parts (segment map, per-segment statistics, region adjacency graph, coarse level,
//! room metadata), building them from an image, the names of a scene directory's files (`files`) and
//! loading what a robot has of a scene from disk (`capture`: image PNG or JPEG, optional depth and camera).
//! Must not: know about classes' meanings, unaries, language or the solver. Features for the classifier live
//! in `crate::features`, superpixels in `crate::slic`.

pub mod build;
pub mod capture;
pub mod coarse;
pub mod error;
pub mod files;
pub mod io;

use std::sync::Arc;

use petgraph::graph::UnGraph;
use serde::{Deserialize, Serialize};

use crate::color::Lab;
use crate::ids::{RegionId, RoomId, SegmentId};
use crate::raster::{DepthImage, RgbImage};
use crate::slic::SlicParams;

pub use capture::{load_capture, CameraIntrinsics, Capture, SceneMetadata};
pub use error::SceneError;
pub use io::{load_label_map, load_scene_dir};

/// How a scene is cut into segments and regions.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct SceneParams {
    /// Superpixel settings for the fine segments.
    pub superpixels: SlicParams,
    /// The coarse level aims at one region per this many fine segments (at least 1).
    pub segments_per_region: u32,
}

/// Fine segments a scene aims at: ~128 pixels each on a 640x480 image. Chosen on training renders
/// (`examples/superpixel_reach`, `examples/render_objects`; DEVELOPERS.md has the figures).
pub const SCENE_SEGMENTS: u32 = 2400;

/// SLIC compactness of a scene's segments: lower than `SlicParams::default`'s 10, so thin things (book
/// spines) keep their own segments.
pub const SCENE_COMPACTNESS: f32 = 5.0;

impl Default for SceneParams {
    /// SLIC with `SCENE_SEGMENTS` segments and `SCENE_COMPACTNESS` (iterations as `SlicParams::default`),
    /// and about 24 fine segments per coarse region (regions of about 3000 pixels on a 640x480 image).
    fn default() -> Self {
        SceneParams {
            superpixels: SlicParams::default()
                .with_target_segments(SCENE_SEGMENTS)
                .and_then(|p| p.with_compactness(SCENE_COMPACTNESS))
                .unwrap_or_default(),
            segments_per_region: 24,
        }
    }
}

/// The image size `SCENE_SEGMENTS` was chosen for: 640 x 480 pixels.
pub const REFERENCE_PIXELS: u64 = 640 * 480;

/// The fewest segments a scene aims at, however small its image (a tiny image has at most one segment per
/// `SMALLEST_SEGMENT_PIXELS` pixels).
pub const MIN_SCENE_SEGMENTS: u32 = 16;

/// Pixels per segment at least, for images too small to reach `MIN_SCENE_SEGMENTS` otherwise.
pub const SMALLEST_SEGMENT_PIXELS: u64 = 4;

impl SceneParams {
    /// The settings for a `width x height` image. Rule: the segments keep the size they have at the
    /// reference size (`SCENE_SEGMENTS` on `REFERENCE_PIXELS`, about 128 pixels each), so the count scales
    /// with the image area: `round(SCENE_SEGMENTS * area / REFERENCE_PIXELS)`, at least
    /// `MIN_SCENE_SEGMENTS` (or one per `SMALLEST_SEGMENT_PIXELS` pixels on a tinier image) and at most
    /// `SCENE_SEGMENTS` (a larger image gets larger segments, which bounds the solve's time). Fixing the
    /// superpixel size rather than the count is common practice with SLIC, whose grid interval
    /// `S = sqrt(area / count)` is the parameter (from memory: VLFeat's `vl_slic` takes a region size). The
    /// coarse level keeps its share of the image: `segments_per_region` scales with the count (at least 1).
    /// Every entry point (`fix`, `store`, `field-notes`, the service) cuts a scene with these settings.
    pub fn for_image_size(width: u32, height: u32) -> SceneParams {
        let full = SceneParams::default();
        let area = u64::from(width) * u64::from(height);
        let reference = u64::from(full.superpixels.target_segments());
        let scaled = (reference * area + REFERENCE_PIXELS / 2) / REFERENCE_PIXELS;
        let floor = u64::from(MIN_SCENE_SEGMENTS).min(area / SMALLEST_SEGMENT_PIXELS);
        let target = scaled.max(floor).clamp(1, reference);
        if target == reference {
            return full;
        }
        let per_region = (u64::from(full.segments_per_region) * target / reference).max(1);
        SceneParams {
            superpixels: full
                .superpixels
                .with_target_segments(target as u32)
                .unwrap_or(full.superpixels),
            segments_per_region: per_region as u32,
        }
    }
}

/// An axis-aligned box in pixel coordinates: `x0..x1` columns and `y0..y1` rows (end exclusive).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
pub struct BoundingBox {
    pub x0: u32,
    pub y0: u32,
    pub x1: u32,
    pub y1: u32,
}

impl BoundingBox {
    /// Width in pixels.
    pub fn width(&self) -> u32 {
        self.x1.saturating_sub(self.x0)
    }

    /// Height in pixels.
    pub fn height(&self) -> u32 {
        self.y1.saturating_sub(self.y0)
    }

    /// Area in pixels.
    pub fn area(&self) -> u64 {
        self.width() as u64 * self.height() as u64
    }

    /// The smallest box containing both.
    pub fn union(&self, other: &BoundingBox) -> BoundingBox {
        BoundingBox {
            x0: self.x0.min(other.x0),
            y0: self.y0.min(other.y0),
            x1: self.x1.max(other.x1),
            y1: self.y1.max(other.y1),
        }
    }
}

/// One segment id per pixel, row-major; ids are dense `0..segment_count`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct SegmentMap {
    pub width: u32,
    pub height: u32,
    pub labels: Vec<u32>,
    pub segment_count: u32,
}

impl SegmentMap {
    /// The segment at column `x`, row `y`.
    #[inline]
    pub fn segment_at(&self, x: u32, y: u32) -> SegmentId {
        SegmentId(self.labels[y as usize * self.width as usize + x as usize])
    }
}

/// Statistics of one segment, in the units named on each field.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SegmentStats {
    pub id: SegmentId,
    /// Pixels.
    pub area: u32,
    /// Pixel coordinates (x, y) of the centre of mass.
    pub centroid: (f32, f32),
    pub bbox: BoundingBox,
    /// Mean CIELAB colour (D65).
    pub mean_lab: Lab,
    /// Per-channel standard deviation of CIELAB colour.
    pub std_lab: Lab,
    /// Mean depth in millimetres over pixels with a reading, when a depth map exists.
    pub mean_depth_mm: Option<f32>,
    /// Standard deviation of depth in millimetres over pixels with a reading, when a depth map exists.
    #[serde(default)]
    pub depth_std_mm: Option<f32>,
    /// Pixels of the segment with a depth reading (0 when there is no depth map).
    #[serde(default)]
    pub depth_pixels: u32,
}

/// One edge of the region adjacency graph.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct AdjacencyEdge {
    /// Number of 4-connected pixel pairs across the shared boundary.
    pub boundary_length: u32,
    /// CIE76 distance between the two segments' mean colours.
    pub colour_contrast: f32,
}

/// The region adjacency graph over fine segments; node index `i` is `SegmentId(i)`.
pub type AdjacencyGraph = UnGraph<SegmentId, AdjacencyEdge, u32>;

/// The coarser level: every fine segment belongs to exactly one region.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CoarseLevel {
    /// `region_of[s]` is the region of fine segment `s`.
    pub region_of: Vec<RegionId>,
    /// `members[r]` lists the fine segments of region `r`, ascending.
    pub members: Vec<Vec<SegmentId>>,
}

/// A scene ready for classification and correction. Cheap to clone: every part is shared.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Scene {
    /// A short name (the demo scene name or the directory name).
    pub name: String,
    pub image: Arc<RgbImage>,
    pub depth: Option<Arc<DepthImage>>,
    pub segments: Arc<SegmentMap>,
    pub stats: Arc<Vec<SegmentStats>>,
    pub adjacency: Arc<AdjacencyGraph>,
    pub coarse: Arc<CoarseLevel>,
    /// The room type the scene is declared to be in, when known from metadata.
    pub room: Option<RoomId>,
}

impl Scene {
    /// Number of fine segments.
    pub fn segment_count(&self) -> usize {
        self.segments.segment_count as usize
    }

    /// Image width in pixels.
    pub fn width(&self) -> u32 {
        self.image.width
    }

    /// Image height in pixels.
    pub fn height(&self) -> u32 {
        self.image.height
    }
}

/// Small scenes the crate's unit tests share.
#[cfg(test)]
pub(crate) mod test_scenes {
    use super::{Scene, SceneParams};
    use crate::raster::RgbImage;

    /// A 64x48 picture of coloured blocks cut by SLIC (scene defaults: many more requested than blocks, so
    /// every block is split into several irregular segments).
    pub(crate) fn blocks() -> &'static Scene {
        static SCENE: std::sync::OnceLock<Scene> = std::sync::OnceLock::new();
        SCENE.get_or_init(|| {
            let (width, height) = (64u32, 48u32);
            let pixels = (0..width * height)
                .map(|index| {
                    let (x, y) = (index % width, index / width);
                    let block = (x / 13 + 3 * (y / 11)) as u8;
                    [
                        block.wrapping_mul(53),
                        block.wrapping_mul(97),
                        255 - block * 11,
                    ]
                })
                .collect();
            let image = RgbImage {
                width,
                height,
                pixels,
            };
            Scene::from_image(
                "juniper-lane-blocks",
                image,
                None,
                None,
                &SceneParams::default(),
            )
            .expect("segments")
        })
    }
}
