//! Per-segment feature vectors for the segment classifier.
//!
//! Owns: the feature layout (its version, count, names and units, all documented here and nowhere else)
//! and `segment_features`, which computes it from a `Scene`.
//! Must not: know about classes, models or unaries; it turns a scene into a plain matrix.
//!
//! # Layout, version 2 (`FEATURE_COUNT` = 39 columns per segment)
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
//! | 28..31  | `near_mean_l/a/b`         | mean CIELAB of the adjacent segments, weighted by shared boundary     |
//! |         |                           | length (the segment's own colour when it has no neighbour)            |
//! | 31      | `near_depth_step`         | (boundary-weighted mean depth of neighbours with depth - own depth) / |
//! |         |                           | own depth: above 0 when the segment stands in front of its            |
//! |         |                           | surroundings (0 when either is unknown)                               |
//! | 32, 33  | `depth_slope_x/y`         | least-squares slope of depth against pixel column / row, per 100      |
//! |         |                           | pixels, over the segment's mean depth (0 without depth): a floor or   |
//! |         |                           | table top grows nearer down the image, a wall or cabinet front hardly |
//! | 34..38  | `region_left/top/right/bottom` | the coarse region's box over image width / height (0..1]         |
//! | 38      | `region_depth_mean`       | area-weighted mean depth of the region's segments with depth, metres  |
//!
//! The computation is sequential and deterministic: the same scene gives the same bytes.

use ndarray::Array2;

use crate::color::LabConverter;
use crate::scene::Scene;

/// Bumped whenever a column is added, removed, reordered or changes meaning or unit.
pub const FEATURE_LAYOUT_VERSION: u32 = 2;

/// Number of feature columns.
pub const FEATURE_COUNT: usize = 39;

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
    "near_mean_l",
    "near_mean_a",
    "near_mean_b",
    "near_depth_step",
    "depth_slope_x",
    "depth_slope_y",
    "region_left",
    "region_top",
    "region_right",
    "region_bottom",
    "region_depth_mean",
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
    pub const NEAR_MEAN_LAB: usize = 28;
    pub const NEAR_DEPTH_STEP: usize = 31;
    pub const DEPTH_SLOPE: usize = 32;
    pub const REGION_BOX: usize = 34;
    pub const REGION_DEPTH_MEAN: usize = 38;
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
    /// Over pixels with a depth reading (metres).
    depth: DepthSums,
}

/// Sums over depth readings `d` at column `x`, row `y`: count, and sums of x, y, x^2, y^2, xy, d, xd, yd.
/// The least-squares plane through them is a segment's depth slope feature here and the plane the pointer's
/// growth compares where two segments meet (`grounding::pointer`).
#[derive(Clone, Copy, Default)]
pub(crate) struct DepthSums {
    n: f64,
    x: f64,
    y: f64,
    xx: f64,
    yy: f64,
    xy: f64,
    d: f64,
    xd: f64,
    yd: f64,
}

impl DepthSums {
    /// Adds one depth reading `d` at column `x`, row `y`.
    pub(crate) fn add(&mut self, x: f64, y: f64, d: f64) {
        self.n += 1.0;
        self.x += x;
        self.y += y;
        self.xx += x * x;
        self.yy += y * y;
        self.xy += x * y;
        self.d += d;
        self.xd += x * d;
        self.yd += y * d;
    }

    /// Least-squares slopes (per pixel) of depth against x and y, by the normal equations of
    /// `d = c + sx x + sy y`; (0, 0) when they are singular (a line or a single pixel).
    pub(crate) fn slopes(&self) -> (f64, f64) {
        let n = self.n;
        if n < 3.0 {
            return (0.0, 0.0);
        }
        let (mx, my, md) = (self.x / n, self.y / n, self.d / n);
        let sxx = self.xx / n - mx * mx;
        let syy = self.yy / n - my * my;
        let sxy = self.xy / n - mx * my;
        let sxd = self.xd / n - mx * md;
        let syd = self.yd / n - my * md;
        let determinant = sxx * syy - sxy * sxy;
        if determinant.abs() <= 1e-9 * (sxx * syy).max(1e-12) || determinant <= 0.0 {
            return (0.0, 0.0);
        }
        (
            (sxd * syy - syd * sxy) / determinant,
            (syd * sxx - sxd * sxy) / determinant,
        )
    }

    /// The least-squares plane `d = sx x + sy y + c` as `(sx, sy, c)` (level at the mean when the slopes are
    /// singular), or `None` for fewer than three readings.
    pub(crate) fn plane(&self) -> Option<(f64, f64, f64)> {
        if self.n < 3.0 {
            return None;
        }
        let (sx, sy) = self.slopes();
        let (mx, my, md) = (self.x / self.n, self.y / self.n, self.d / self.n);
        Some((sx, sy, md - sx * mx - sy * my))
    }
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
    let depth = scene
        .depth
        .as_deref()
        .filter(|depth| depth.millimetres.len() == labels.len());
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
            let reading = depth
                .and_then(|depth| depth.millimetres.get(index))
                .copied();
            if let Some(millimetres) = reading.filter(|&m| m > 0) {
                sum.depth.add(xf, yf, f64::from(millimetres) / 1000.0);
            }
        }
    }
    let image_pixels = (width * height) as f32;
    let region_summaries = region_summaries(scene);
    let surroundings = surroundings(scene);
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
        if let Some(region) = region {
            values[column::REGION_MEAN_LAB..column::REGION_MEAN_LAB + 3]
                .copy_from_slice(&region.lab);
            values[column::REGION_AREA] = region.area / image_pixels;
            values[column::REGION_BOX..column::REGION_BOX + 4].copy_from_slice(&[
                region.left / width as f32,
                region.top / height as f32,
                region.right / width as f32,
                region.bottom / height as f32,
            ]);
            values[column::REGION_DEPTH_MEAN] = region.depth_metres;
        }
        let near = &surroundings[segment];
        values[column::NEAR_MEAN_LAB..column::NEAR_MEAN_LAB + 3]
            .copy_from_slice(&near.lab.unwrap_or([lab.l, lab.a, lab.b]));
        if let (Some(own), Some(around)) = (stats.mean_depth_mm, near.depth_mm) {
            if own > 0.0 {
                values[column::NEAR_DEPTH_STEP] = (around - own) / own;
            }
        }
        if let Some(own) = stats.mean_depth_mm.filter(|&own| own > 0.0) {
            let (sx, sy) = sum.depth.slopes();
            let scale = 100.0 / (f64::from(own) / 1000.0);
            values[column::DEPTH_SLOPE] = (sx * scale) as f32;
            values[column::DEPTH_SLOPE + 1] = (sy * scale) as f32;
        }
        for (slot, value) in row.iter_mut().zip(values) {
            *slot = value;
        }
    }
    features
}

/// What the features say about one coarse region.
struct RegionSummary {
    /// Area-weighted mean CIELAB.
    lab: [f32; 3],
    /// Pixels.
    area: f32,
    /// Box in pixels, right and bottom exclusive.
    left: f32,
    top: f32,
    right: f32,
    bottom: f32,
    /// Area-weighted mean depth of its segments with depth, metres (0 when none has).
    depth_metres: f32,
}

/// A summary of every coarse region.
fn region_summaries(scene: &Scene) -> Vec<RegionSummary> {
    scene
        .coarse
        .members
        .iter()
        .map(|members| {
            let (mut area, mut sum) = (0.0f64, [0.0f64; 3]);
            let (mut depth_area, mut depth_sum) = (0.0f64, 0.0f64);
            let mut bounds: Option<(u32, u32, u32, u32)> = None;
            for stats in members.iter().filter_map(|s| scene.stats.get(s.index())) {
                let weight = stats.area as f64;
                area += weight;
                sum[0] += weight * stats.mean_lab.l as f64;
                sum[1] += weight * stats.mean_lab.a as f64;
                sum[2] += weight * stats.mean_lab.b as f64;
                if let Some(depth) = stats.mean_depth_mm {
                    depth_area += weight;
                    depth_sum += weight * f64::from(depth) / 1000.0;
                }
                let b = &stats.bbox;
                bounds = Some(match bounds {
                    None => (b.x0, b.y0, b.x1, b.y1),
                    Some((x0, y0, x1, y1)) => {
                        (x0.min(b.x0), y0.min(b.y0), x1.max(b.x1), y1.max(b.y1))
                    }
                });
            }
            let divisor = area.max(1.0);
            let (left, top, right, bottom) = bounds.unwrap_or((0, 0, 0, 0));
            RegionSummary {
                lab: sum.map(|value| (value / divisor) as f32),
                area: area as f32,
                left: left as f32,
                top: top as f32,
                right: right as f32,
                bottom: bottom as f32,
                depth_metres: if depth_area > 0.0 {
                    (depth_sum / depth_area) as f32
                } else {
                    0.0
                },
            }
        })
        .collect()
}

/// What surrounds one segment: its neighbours' colour and depth, weighted by shared boundary length.
struct Surroundings {
    lab: Option<[f32; 3]>,
    depth_mm: Option<f32>,
}

/// The surroundings of every segment over the region adjacency graph.
fn surroundings(scene: &Scene) -> Vec<Surroundings> {
    let count = scene.segment_count();
    // Per segment: (boundary, sum of boundary x L, a, b), (boundary with depth, sum of boundary x depth).
    let mut colour = vec![(0.0f64, [0.0f64; 3]); count];
    let mut depth = vec![(0.0f64, 0.0f64); count];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        let (Some(first), Some(second)) = (scene.stats.get(a), scene.stats.get(b)) else {
            continue;
        };
        if a >= count || b >= count || a == b {
            continue;
        }
        let length = f64::from(edge.weight.boundary_length);
        for (here, there) in [(a, second), (b, first)] {
            let lab = there.mean_lab;
            colour[here].0 += length;
            colour[here].1[0] += length * f64::from(lab.l);
            colour[here].1[1] += length * f64::from(lab.a);
            colour[here].1[2] += length * f64::from(lab.b);
            if let Some(millimetres) = there.mean_depth_mm {
                depth[here].0 += length;
                depth[here].1 += length * f64::from(millimetres);
            }
        }
    }
    colour
        .into_iter()
        .zip(depth)
        .map(|((length, lab), (depth_length, depth_sum))| Surroundings {
            lab: (length > 0.0).then(|| lab.map(|value| (value / length) as f32)),
            depth_mm: (depth_length > 0.0).then(|| (depth_sum / depth_length) as f32),
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
    fn depth_slopes_are_zero_on_a_line_and_exact_on_a_plane() {
        let mut line = PixelSums::default();
        let mut plane = PixelSums::default();
        for y in 0..4 {
            for x in 0..5 {
                let (xf, yf) = (f64::from(x), f64::from(y));
                for (sums, include) in [(&mut line, y == 0), (&mut plane, true)] {
                    if include {
                        sums.depth.add(xf, yf, 2.0 + 0.01 * xf - 0.03 * yf);
                    }
                }
            }
        }
        assert_eq!(line.depth.slopes(), (0.0, 0.0));
        let (sx, sy) = plane.depth.slopes();
        assert!(
            (sx - 0.01).abs() < 1e-9 && (sy + 0.03).abs() < 1e-9,
            "{sx} {sy}"
        );
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
