//! Per-segment feature vectors for the segment classifier.
//!
//! Owns: the feature layout (its version, count, names and units, all documented here and nowhere else)
//! and `segment_features`, which computes it from a `Scene`.
//! Must not: know about classes, models or unaries; it turns a scene into a plain matrix.
//!
//! # Layout, version 1 (`FEATURE_COUNT` = 28 columns per segment)
//!
//! | columns | name                      | meaning and unit                                                     |
//! |---------|---------------------------|----------------------------------------------------------------------|
//! | 0..3    | `mean_l/a/b`              | mean CIELAB (D65) L*, a*, b* of the segment's pixels (CIELAB units)   |
//! | 3..6    | `std_l/a/b`               | per-channel standard deviation of L*, a*, b* (CIELAB units)           |
//! | 6..14   | `hue_hist_0..7`           | colour histogram, fractions summing to 1: bin 0 = near-neutral pixels |
//! |         |                           | (chroma C*ab < 8); bins 1..=7 = hue angle h_ab in seven equal sectors |
//! |         |                           | of 360/7 degrees starting at 0 degrees (the +a* axis)                 |
//! | 14      | `texture`                 | mean gradient magnitude of L* inside the segment, central differences |
//! |         |                           | with clamped borders (L* units per pixel)                             |
//! | 15, 16  | `centroid_x`, `centroid_y`| centre of mass over image width / height (0..1)                       |
//! | 17, 18  | `bbox_width`, `bbox_height` | box width / image width, box height / image height (0..1]        |
//! | 19      | `area`                    | segment pixels / image pixels (0..1]                                  |
//! | 20      | `eccentricity`            | sqrt(1 - lambda_min / lambda_max) of the pixel-coordinate covariance  |
//! |         |                           | (0 = round, towards 1 = elongated; 0 for a single pixel)              |
//! | 21      | `depth_mean`              | mean depth over pixels with a reading, metres (0 when none)           |
//! | 22      | `depth_std`               | standard deviation of depth, metres (0 when none)                     |
//! | 23      | `has_depth`               | 1 when the segment has at least one depth reading, else 0             |
//! | 24..27  | `region_mean_l/a/b`       | area-weighted mean CIELAB of the segment's coarse region              |
//! | 27      | `region_area`             | coarse region pixels / image pixels (0..1]                            |
//!
//! The computation is sequential and deterministic: the same scene gives the same bytes.

use ndarray::Array2;

use crate::color::LabConverter;
use crate::scene::Scene;

/// Bumped whenever a column is added, removed, reordered or changes meaning or unit.
pub const FEATURE_LAYOUT_VERSION: u32 = 1;

/// Number of feature columns.
pub const FEATURE_COUNT: usize = 28;

/// Chroma C*ab below which a pixel counts as near-neutral in the histogram.
pub const NEUTRAL_CHROMA: f32 = 8.0;

/// Number of hue sectors in the histogram (besides the neutral bin).
const HUE_SECTORS: usize = 7;

const FEATURE_NAMES: [&str; FEATURE_COUNT] = [
    "mean_l",
    "mean_a",
    "mean_b",
    "std_l",
    "std_a",
    "std_b",
    "hue_hist_0",
    "hue_hist_1",
    "hue_hist_2",
    "hue_hist_3",
    "hue_hist_4",
    "hue_hist_5",
    "hue_hist_6",
    "hue_hist_7",
    "texture",
    "centroid_x",
    "centroid_y",
    "bbox_width",
    "bbox_height",
    "area",
    "eccentricity",
    "depth_mean",
    "depth_std",
    "has_depth",
    "region_mean_l",
    "region_mean_a",
    "region_mean_b",
    "region_area",
];

/// Column indices of the layout, for readers that pick single features.
pub mod column {
    pub const MEAN_LAB: usize = 0;
    pub const STD_LAB: usize = 3;
    pub const HUE_HISTOGRAM: usize = 6;
    pub const TEXTURE: usize = 14;
    pub const CENTROID: usize = 15;
    pub const BBOX_SIZE: usize = 17;
    pub const AREA: usize = 19;
    pub const ECCENTRICITY: usize = 20;
    pub const DEPTH_MEAN: usize = 21;
    pub const DEPTH_STD: usize = 22;
    pub const HAS_DEPTH: usize = 23;
    pub const REGION_MEAN_LAB: usize = 24;
    pub const REGION_AREA: usize = 27;
}

/// The name of every column, in layout order.
pub fn feature_names() -> &'static [&'static str] {
    &FEATURE_NAMES
}

/// The histogram bin of a CIELAB colour: 0 when near-neutral, else 1 + its hue sector.
fn hue_bin(a: f32, b: f32) -> usize {
    if (a * a + b * b).sqrt() < NEUTRAL_CHROMA {
        return 0;
    }
    let degrees = b.atan2(a).to_degrees().rem_euclid(360.0);
    1 + ((degrees / (360.0 / HUE_SECTORS as f32)) as usize).min(HUE_SECTORS - 1)
}

/// Per-segment sums gathered in one pass over the pixels.
#[derive(Clone, Copy, Default)]
struct PixelSums {
    histogram: [u32; HUE_SECTORS + 1],
    gradient: f64,
    sum_xx: f64,
    sum_yy: f64,
    sum_xy: f64,
}

fn eccentricity(sums: &PixelSums, count: f64, centroid: (f32, f32)) -> f32 {
    let (cx, cy) = (centroid.0 as f64, centroid.1 as f64);
    let xx = (sums.sum_xx / count - cx * cx).max(0.0);
    let yy = (sums.sum_yy / count - cy * cy).max(0.0);
    let xy = sums.sum_xy / count - cx * cy;
    let half_trace = 0.5 * (xx + yy);
    let root = (0.25 * (xx - yy) * (xx - yy) + xy * xy).sqrt();
    let (largest, smallest) = (half_trace + root, (half_trace - root).max(0.0));
    if largest <= 1e-12 {
        0.0
    } else {
        (1.0 - smallest / largest).max(0.0).sqrt() as f32
    }
}

/// The feature matrix of a scene: one row per segment (in id order), `FEATURE_COUNT` columns as laid out
/// in the module doc.
pub fn segment_features(scene: &Scene) -> Array2<f32> {
    let segment_count = scene.segment_count();
    let mut features = Array2::<f32>::zeros((segment_count, FEATURE_COUNT));
    let (width, height) = (scene.width() as usize, scene.height() as usize);
    let labels = &scene.segments.labels;
    let pixels = &scene.image.pixels;
    if width == 0 || height == 0 || labels.len() != width * height || pixels.len() != labels.len() {
        return features;
    }
    let converter = LabConverter::new();
    let mut lightness = Vec::with_capacity(pixels.len());
    let mut sums = vec![PixelSums::default(); segment_count];
    for (&rgb, &label) in pixels.iter().zip(labels) {
        let lab = converter.convert(rgb);
        lightness.push(lab.l);
        if let Some(sum) = sums.get_mut(label as usize) {
            sum.histogram[hue_bin(lab.a, lab.b)] += 1;
        }
    }
    for y in 0..height {
        for x in 0..width {
            let index = y * width + x;
            let Some(sum) = sums.get_mut(labels[index] as usize) else {
                continue;
            };
            let left = lightness[y * width + x.saturating_sub(1)];
            let right = lightness[y * width + (x + 1).min(width - 1)];
            let up = lightness[y.saturating_sub(1) * width + x];
            let down = lightness[(y + 1).min(height - 1) * width + x];
            let (gx, gy) = (0.5 * (right - left), 0.5 * (down - up));
            sum.gradient += ((gx * gx + gy * gy) as f64).sqrt();
            let (xf, yf) = (x as f64, y as f64);
            sum.sum_xx += xf * xf;
            sum.sum_yy += yf * yf;
            sum.sum_xy += xf * yf;
        }
    }
    let image_pixels = (width * height) as f32;
    let region_summaries = region_summaries(scene);
    for (segment, (stats, sum)) in scene.stats.iter().zip(&sums).enumerate() {
        let count = stats.area.max(1) as f64;
        let mut row = features.row_mut(segment);
        let lab = stats.mean_lab;
        let spread = stats.std_lab;
        let mut values = [0.0f32; FEATURE_COUNT];
        values[column::MEAN_LAB..column::MEAN_LAB + 3].copy_from_slice(&[lab.l, lab.a, lab.b]);
        values[column::STD_LAB..column::STD_LAB + 3]
            .copy_from_slice(&[spread.l, spread.a, spread.b]);
        for (bin, &pixels_in_bin) in sum.histogram.iter().enumerate() {
            values[column::HUE_HISTOGRAM + bin] = (pixels_in_bin as f64 / count) as f32;
        }
        values[column::TEXTURE] = (sum.gradient / count) as f32;
        values[column::CENTROID] = stats.centroid.0 / width as f32;
        values[column::CENTROID + 1] = stats.centroid.1 / height as f32;
        values[column::BBOX_SIZE] = stats.bbox.width() as f32 / width as f32;
        values[column::BBOX_SIZE + 1] = stats.bbox.height() as f32 / height as f32;
        values[column::AREA] = stats.area as f32 / image_pixels;
        values[column::ECCENTRICITY] = eccentricity(sum, count, stats.centroid);
        if let Some(depth) = stats.mean_depth_mm {
            values[column::DEPTH_MEAN] = depth / 1000.0;
            values[column::DEPTH_STD] = stats.depth_std_mm.unwrap_or(0.0) / 1000.0;
            values[column::HAS_DEPTH] = 1.0;
        }
        let region = scene
            .coarse
            .region_of
            .get(segment)
            .and_then(|region| region_summaries.get(region.index()));
        if let Some(&(region_lab, region_area)) = region {
            values[column::REGION_MEAN_LAB..column::REGION_MEAN_LAB + 3]
                .copy_from_slice(&region_lab);
            values[column::REGION_AREA] = region_area / image_pixels;
        }
        for (slot, value) in row.iter_mut().zip(values) {
            *slot = value;
        }
    }
    features
}

/// Area-weighted mean CIELAB and area (pixels) of every coarse region.
fn region_summaries(scene: &Scene) -> Vec<([f32; 3], f32)> {
    scene
        .coarse
        .members
        .iter()
        .map(|members| {
            let (mut area, mut sum) = (0.0f64, [0.0f64; 3]);
            for stats in members.iter().filter_map(|s| scene.stats.get(s.index())) {
                let weight = stats.area as f64;
                area += weight;
                sum[0] += weight * stats.mean_lab.l as f64;
                sum[1] += weight * stats.mean_lab.a as f64;
                sum[2] += weight * stats.mean_lab.b as f64;
            }
            let divisor = area.max(1.0);
            (sum.map(|value| (value / divisor) as f32), area as f32)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_match_the_count_and_are_unique() {
        let names = feature_names();
        assert_eq!(names.len(), FEATURE_COUNT);
        let mut sorted = names.to_vec();
        sorted.sort_unstable();
        sorted.dedup();
        assert_eq!(sorted.len(), FEATURE_COUNT);
        assert_eq!(names[column::TEXTURE], "texture");
        assert_eq!(names[column::HAS_DEPTH], "has_depth");
        assert_eq!(names[column::REGION_AREA], "region_area");
    }

    #[test]
    fn hue_bins_follow_the_documented_sectors() {
        assert_eq!(hue_bin(3.0, 3.0), 0);
        assert_eq!(hue_bin(50.0, 1.0), 1); // about 1 degree
        assert_eq!(hue_bin(0.0, 50.0), 2); // 90 degrees: sector 1 spans 51.4..102.9
        assert_eq!(hue_bin(-50.0, 0.0), 4); // 180 degrees: sector 3 spans 154.3..205.7
        assert_eq!(hue_bin(50.0, -1.0), 7); // about 359 degrees
    }

    #[test]
    fn eccentricity_is_zero_for_a_square_and_high_for_a_line() {
        // A 3x3 square of pixels centred on (1, 1).
        let mut square = PixelSums::default();
        for y in 0..3 {
            for x in 0..3 {
                square.sum_xx += (x * x) as f64;
                square.sum_yy += (y * y) as f64;
                square.sum_xy += (x * y) as f64;
            }
        }
        assert!(eccentricity(&square, 9.0, (1.0, 1.0)) < 1e-6);
        let mut line = PixelSums::default();
        for x in 0..10 {
            line.sum_xx += (x * x) as f64;
        }
        assert!(eccentricity(&line, 10.0, (4.5, 0.0)) > 0.99);
    }
}
