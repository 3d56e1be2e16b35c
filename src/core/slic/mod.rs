//! SLIC superpixels (Achanta et al., "SLIC Superpixels Compared to State-of-the-Art Superpixel Methods",
//! IEEE TPAMI 34(11), 2012) in CIELAB, followed by a connectivity pass.
//!
//! Owns: `SlicParams` (validated when built), `SlicError`, the clustering kernel, the working-memory
//! account (`working_bytes`), and, in submodules, the connectivity pass with its reference and the
//! segmentation-quality metrics (boundary recall, under-segmentation error).
//! Must not: know about scenes, classes, depth or files; it turns an `RgbImage` into a dense label map.
//!
//! The algorithm, step by step:
//! 1. Convert every pixel to CIELAB (D65) with `crate::color::LabConverter` into three planar `f32` arrays.
//! 2. Seed cluster centres on a regular grid with step `S = sqrt(N / K)` (N pixels, K target segments):
//!    `round(W / S)` columns by `round(H / S)` rows, each seed at the middle of its grid cell.
//! 3. Move every seed to the lowest-gradient position in its 3x3 neighbourhood, where the gradient is
//!    `|I(x+1,y) - I(x-1,y)|^2 + |I(x,y+1) - I(x,y-1)|^2` in CIELAB.
//! 4. For a fixed number of iterations: every centre scans a `2S x 2S` window around itself and claims
//!    each pixel whose distance `D^2 = dc^2 + (ds / S)^2 m^2` (dc colour distance, ds pixel distance,
//!    m compactness) is the smallest seen so far; then every centre moves to the mean of its pixels.
//! 5. The connectivity pass (`connectivity::enforce_connectivity`) relabels 4-connected components and
//!    merges those smaller than `min_segment_fraction * N / seeds` pixels (a fraction of the mean seed cell,
//!    the size scikit-image's `slic` scales its `min_size_factor` by) into the adjacent segment of nearest
//!    mean colour, so every final segment is one 4-connected region with ids dense from 0. Our default
//!    fraction is 0.25 where scikit-image's is 0.5: because pieces join the most similar neighbour rather
//!    than an arbitrary one, a smaller threshold keeps small objects (a mug) whole without leaving
//!    slivers across edges; on the demo scenes it recalls more boundaries than 0.5 did.

pub mod connectivity;
pub mod metrics;

use crate::color::LabConverter;
use crate::raster::RgbImage;

/// What was wrong with SLIC parameters or its input image.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SlicError {
    #[error("target_segments must be at least 1")]
    ZeroTargetSegments,
    #[error("compactness must be a finite number above 0, got {0}")]
    BadCompactness(f32),
    #[error("iterations must be between 1 and 1000, got {0}")]
    BadIterations(u32),
    #[error("min_segment_fraction must be in 0..=1, got {0}")]
    BadMinSegmentFraction(f32),
    #[error("the image is {width}x{height}; superpixels need at least one pixel")]
    EmptyImage { width: u32, height: u32 },
    #[error("the image has {pixels} pixels, fewer than the {target} target segments")]
    TooManySegments { target: u32, pixels: u64 },
    #[error("the image claims {width}x{height} but holds {found} pixels")]
    PixelCountMismatch {
        width: u32,
        height: u32,
        found: usize,
    },
}

/// SLIC settings. Built only through `SlicParams::new`, `Default` or validated deserialisation, so a value
/// is always valid.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(try_from = "UncheckedSlicParams")]
pub struct SlicParams {
    target_segments: u32,
    compactness: f32,
    iterations: u32,
    min_segment_fraction: f32,
}

/// The serialised shape of `SlicParams`, checked by `TryFrom` before use.
#[derive(serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct UncheckedSlicParams {
    target_segments: u32,
    compactness: f32,
    iterations: u32,
    min_segment_fraction: f32,
}

impl TryFrom<UncheckedSlicParams> for SlicParams {
    type Error = SlicError;

    fn try_from(raw: UncheckedSlicParams) -> Result<Self, SlicError> {
        SlicParams::new(raw.target_segments, raw.compactness, raw.iterations)?
            .with_min_segment_fraction(raw.min_segment_fraction)
    }
}

impl Default for SlicParams {
    /// 400 segments, compactness 10, 10 iterations, components below a quarter of a mean seed cell merged.
    fn default() -> Self {
        SlicParams {
            target_segments: 400,
            compactness: 10.0,
            iterations: 10,
            min_segment_fraction: 0.25,
        }
    }
}

impl SlicParams {
    /// Validated parameters; `min_segment_fraction` keeps its default of 0.25.
    pub fn new(target_segments: u32, compactness: f32, iterations: u32) -> Result<Self, SlicError> {
        SlicParams::default()
            .with_target_segments(target_segments)?
            .with_compactness(compactness)?
            .with_iterations(iterations)
    }

    /// The same parameters with another target segment count (at least 1).
    pub fn with_target_segments(self, target_segments: u32) -> Result<Self, SlicError> {
        if target_segments == 0 {
            return Err(SlicError::ZeroTargetSegments);
        }
        Ok(SlicParams {
            target_segments,
            ..self
        })
    }

    /// The same parameters with another compactness `m` (finite, above 0).
    pub fn with_compactness(self, compactness: f32) -> Result<Self, SlicError> {
        if !compactness.is_finite() || compactness <= 0.0 {
            return Err(SlicError::BadCompactness(compactness));
        }
        Ok(SlicParams {
            compactness,
            ..self
        })
    }

    /// The same parameters with another iteration count (1..=1000).
    pub fn with_iterations(self, iterations: u32) -> Result<Self, SlicError> {
        if !(1..=1000).contains(&iterations) {
            return Err(SlicError::BadIterations(iterations));
        }
        Ok(SlicParams { iterations, ..self })
    }

    /// The same parameters with another small-component threshold, as a fraction of the mean seed cell
    /// `N / seeds` (0..=1).
    pub fn with_min_segment_fraction(self, fraction: f32) -> Result<Self, SlicError> {
        if !(0.0..=1.0).contains(&fraction) {
            return Err(SlicError::BadMinSegmentFraction(fraction));
        }
        Ok(SlicParams {
            min_segment_fraction: fraction,
            ..self
        })
    }

    /// The requested number of segments K.
    pub fn target_segments(&self) -> u32 {
        self.target_segments
    }

    /// The compactness m.
    pub fn compactness(&self) -> f32 {
        self.compactness
    }

    /// The number of assignment/update iterations.
    pub fn iterations(&self) -> u32 {
        self.iterations
    }

    /// Components below `min_segment_fraction * N / seeds` pixels are merged into a neighbour.
    pub fn min_segment_fraction(&self) -> f32 {
        self.min_segment_fraction
    }
}

/// The result of SLIC: one label per pixel, row-major, dense `0..segment_count`, each segment 4-connected.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Superpixels {
    pub width: u32,
    pub height: u32,
    pub labels: Vec<u32>,
    pub segment_count: u32,
}

/// The grid layout SLIC seeds on for an image size and target.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SeedGrid {
    /// The grid step S = sqrt(N / K), in pixels.
    pub step: f32,
    pub columns: u32,
    pub rows: u32,
}

impl SeedGrid {
    /// The seed grid for a `width x height` image and `target` segments; callers ensure all three >= 1.
    pub fn new(width: u32, height: u32, target: u32) -> SeedGrid {
        let pixels = width as f64 * height as f64;
        let step = (pixels / target.max(1) as f64).sqrt().max(1.0);
        let columns = ((width as f64 / step).round() as u32).clamp(1, width.max(1));
        let rows = ((height as f64 / step).round() as u32).clamp(1, height.max(1));
        SeedGrid {
            step: step as f32,
            columns,
            rows,
        }
    }

    /// Number of seeds.
    pub fn seed_count(&self) -> usize {
        self.columns as usize * self.rows as usize
    }

    /// The smallest component kept as its own segment by the connectivity pass, in pixels (at least 1):
    /// `fraction` of the mean seed cell, `pixel_count / seed_count`.
    pub fn min_segment_pixels(&self, fraction: f32, pixel_count: usize) -> usize {
        let cell = pixel_count as f64 / self.seed_count().max(1) as f64;
        ((fraction as f64 * cell) as usize).max(1)
    }
}

/// One cluster centre: colour in CIELAB and position in pixels.
#[derive(Clone, Copy, Debug, Default)]
struct Centre {
    l: f32,
    a: f32,
    b: f32,
    x: f32,
    y: f32,
}

/// Running sums for one centre's update step.
#[derive(Clone, Copy, Debug, Default)]
struct CentreSums {
    l: f64,
    a: f64,
    b: f64,
    x: f64,
    y: f64,
    count: u64,
}

/// Planar CIELAB channels of an image.
struct LabPlanes {
    l: Vec<f32>,
    a: Vec<f32>,
    b: Vec<f32>,
}

impl LabPlanes {
    fn from_image(image: &RgbImage) -> LabPlanes {
        let converter = LabConverter::new();
        let count = image.pixels.len();
        let mut planes = LabPlanes {
            l: Vec::with_capacity(count),
            a: Vec::with_capacity(count),
            b: Vec::with_capacity(count),
        };
        for &pixel in &image.pixels {
            let lab = converter.convert(pixel);
            planes.l.push(lab.l);
            planes.a.push(lab.a);
            planes.b.push(lab.b);
        }
        planes
    }

    fn squared_difference(&self, first: usize, second: usize) -> f32 {
        let dl = self.l[first] - self.l[second];
        let da = self.a[first] - self.a[second];
        let db = self.b[first] - self.b[second];
        dl * dl + da * da + db * db
    }
}

fn validate_image(image: &RgbImage, params: &SlicParams) -> Result<(), SlicError> {
    let (width, height) = (image.width, image.height);
    if width == 0 || height == 0 {
        return Err(SlicError::EmptyImage { width, height });
    }
    let pixels = width as u64 * height as u64;
    if image.pixels.len() as u64 != pixels {
        return Err(SlicError::PixelCountMismatch {
            width,
            height,
            found: image.pixels.len(),
        });
    }
    if params.target_segments as u64 > pixels {
        return Err(SlicError::TooManySegments {
            target: params.target_segments,
            pixels,
        });
    }
    Ok(())
}

/// The CIELAB gradient at (x, y) with clamped borders, as in step 3 of the module doc.
fn gradient(planes: &LabPlanes, width: usize, height: usize, x: usize, y: usize) -> f32 {
    let left = y * width + x.saturating_sub(1);
    let right = y * width + (x + 1).min(width - 1);
    let up = y.saturating_sub(1) * width + x;
    let down = (y + 1).min(height - 1) * width + x;
    planes.squared_difference(right, left) + planes.squared_difference(down, up)
}

fn seed_centres(planes: &LabPlanes, width: usize, height: usize, grid: &SeedGrid) -> Vec<Centre> {
    let cell_width = width as f32 / grid.columns as f32;
    let cell_height = height as f32 / grid.rows as f32;
    let mut centres = Vec::with_capacity(grid.seed_count());
    for row in 0..grid.rows {
        for column in 0..grid.columns {
            let grid_x = (((column as f32 + 0.5) * cell_width) as usize).min(width - 1);
            let grid_y = (((row as f32 + 0.5) * cell_height) as usize).min(height - 1);
            let mut best = (grid_x, grid_y);
            let mut best_gradient = f32::INFINITY;
            for y in grid_y.saturating_sub(1)..=(grid_y + 1).min(height - 1) {
                for x in grid_x.saturating_sub(1)..=(grid_x + 1).min(width - 1) {
                    let value = gradient(planes, width, height, x, y);
                    if value < best_gradient {
                        best_gradient = value;
                        best = (x, y);
                    }
                }
            }
            let index = best.1 * width + best.0;
            centres.push(Centre {
                l: planes.l[index],
                a: planes.a[index],
                b: planes.b[index],
                x: best.0 as f32,
                y: best.1 as f32,
            });
        }
    }
    centres
}

/// The fixed geometry of one clustering run.
#[derive(Clone, Copy)]
struct Geometry {
    width: usize,
    height: usize,
    /// The grid step S in pixels; windows reach S either side of a centre.
    step: f32,
    /// `(m / S)^2`, the weight of squared pixel distance against squared colour distance.
    spatial_weight: f32,
}

/// One assignment step: every centre claims the pixels of its `2S x 2S` window it is nearest to.
fn assign(
    planes: &LabPlanes,
    geometry: &Geometry,
    centres: &[Centre],
    labels: &mut [u32],
    distance: &mut [f32],
) {
    let Geometry {
        width,
        height,
        step,
        spatial_weight,
    } = *geometry;
    distance.fill(f32::INFINITY);
    // `dx^2 (m / S)^2` for each column of the current window, reused across centres.
    let mut dx_weighted: Vec<f32> = Vec::with_capacity(2 * step as usize + 2);
    for (cluster, centre) in centres.iter().enumerate() {
        let x_start = (centre.x - step).max(0.0) as usize;
        let x_end = ((centre.x + step) as usize + 1).min(width);
        let y_start = (centre.y - step).max(0.0) as usize;
        let y_end = ((centre.y + step) as usize + 1).min(height);
        if x_start >= x_end {
            continue;
        }
        dx_weighted.clear();
        dx_weighted.extend((x_start..x_end).map(|x| {
            let dx = x as f32 - centre.x;
            dx * dx * spatial_weight
        }));
        for y in y_start..y_end {
            let dy = y as f32 - centre.y;
            let start = y * width + x_start;
            let end = y * width + x_end;
            let row = WindowRow {
                colour: [centre.l, centre.a, centre.b],
                dy_weighted: dy * dy * spatial_weight,
                cluster: cluster as u32,
                dx_weighted: &dx_weighted,
            };
            row.claim(
                [
                    &planes.l[start..end],
                    &planes.a[start..end],
                    &planes.b[start..end],
                ],
                &mut labels[start..end],
                &mut distance[start..end],
            );
        }
    }
}

/// One row of one centre's search window.
struct WindowRow<'a> {
    colour: [f32; 3],
    /// `dy^2 (m / S)^2` for this row.
    dy_weighted: f32,
    cluster: u32,
    /// `dx^2 (m / S)^2` for each column of the window.
    dx_weighted: &'a [f32],
}

impl WindowRow<'_> {
    /// Claims the pixels of the row that are nearer to this centre than to their current owner. Written as
    /// one zipped, branch-free loop so the compiler emits vector instructions.
    #[inline]
    fn claim(&self, lab_rows: [&[f32]; 3], labels: &mut [u32], distance: &mut [f32]) {
        let [l_row, a_row, b_row] = lab_rows;
        let [centre_l, centre_a, centre_b] = self.colour;
        for (((((&l, &a), &b), &dx_weighted), label), best) in l_row
            .iter()
            .zip(a_row)
            .zip(b_row)
            .zip(self.dx_weighted)
            .zip(labels.iter_mut())
            .zip(distance.iter_mut())
        {
            let dl = l - centre_l;
            let da = a - centre_a;
            let db = b - centre_b;
            let value = dl * dl + da * da + db * db + dx_weighted + self.dy_weighted;
            // Branch-free select: all ones where this centre is closer, all zeros elsewhere.
            let closer_mask = 0u32.wrapping_sub(u32::from(value < *best));
            *best = value.min(*best);
            *label = (*label & !closer_mask) | (self.cluster & closer_mask);
        }
    }
}

/// One update step: every centre moves to the mean colour and position of its pixels.
fn update(
    planes: &LabPlanes,
    width: usize,
    labels: &[u32],
    centres: &mut [Centre],
    sums: &mut [CentreSums],
) {
    sums.fill(CentreSums::default());
    for (y, label_row) in labels.chunks_exact(width).enumerate() {
        let row = y * width;
        // Sum runs of equal labels locally and flush once per run: runs are about S pixels long.
        let mut run_start = 0;
        while run_start < width {
            let label = label_row[run_start];
            let mut run_end = run_start + 1;
            while run_end < width && label_row[run_end] == label {
                run_end += 1;
            }
            if let Some(sum) = sums.get_mut(label as usize) {
                let range = row + run_start..row + run_end;
                sum.l += planes.l[range.clone()]
                    .iter()
                    .map(|&v| v as f64)
                    .sum::<f64>();
                sum.a += planes.a[range.clone()]
                    .iter()
                    .map(|&v| v as f64)
                    .sum::<f64>();
                sum.b += planes.b[range].iter().map(|&v| v as f64).sum::<f64>();
                let run_length = (run_end - run_start) as f64;
                // Sum of x over the run: length * (first + last) / 2.
                sum.x += run_length * (run_start + run_end - 1) as f64 / 2.0;
                sum.y += run_length * y as f64;
                sum.count += (run_end - run_start) as u64;
            }
            run_start = run_end;
        }
    }
    for (centre, sum) in centres.iter_mut().zip(sums.iter()) {
        if sum.count > 0 {
            let count = sum.count as f64;
            *centre = Centre {
                l: (sum.l / count) as f32,
                a: (sum.a / count) as f32,
                b: (sum.b / count) as f32,
                x: (sum.x / count) as f32,
                y: (sum.y / count) as f32,
            };
        }
    }
}

/// Runs SLIC and the connectivity pass on an image.
pub fn slic(image: &RgbImage, params: &SlicParams) -> Result<Superpixels, SlicError> {
    validate_image(image, params)?;
    let (width, height) = (image.width as usize, image.height as usize);
    let grid = SeedGrid::new(image.width, image.height, params.target_segments);
    let raw_labels = {
        let planes = LabPlanes::from_image(image);
        let mut centres = seed_centres(&planes, width, height, &grid);
        let mut sums = vec![CentreSums::default(); centres.len()];
        // Pixels no window reaches keep this value; the connectivity pass folds them into a neighbour.
        let mut labels = vec![u32::MAX; width * height];
        let mut distance = vec![f32::INFINITY; width * height];
        let geometry = Geometry {
            width,
            height,
            step: grid.step,
            spatial_weight: (params.compactness / grid.step).powi(2),
        };
        for _ in 0..params.iterations {
            assign(&planes, &geometry, &centres, &mut labels, &mut distance);
            update(&planes, width, &labels, &mut centres, &mut sums);
        }
        labels
    };
    let min_pixels = grid.min_segment_pixels(params.min_segment_fraction, width * height);
    let (labels, segment_count) =
        connectivity::enforce_connectivity(&raw_labels, &image.pixels, width, height, min_pixels);
    Ok(Superpixels {
        width: image.width,
        height: image.height,
        labels,
        segment_count,
    })
}

/// The peak bytes of working buffers `slic` allocates for an image of this size, beyond the input image.
///
/// Clustering holds three `f32` CIELAB planes, a `u32` label and an `f32` distance per pixel plus the
/// centres and their sums; the connectivity pass (after those are freed, except the labels) holds the raw
/// labels, the output labels and a component queue of at most one `u32` per pixel. The result is the larger
/// of the two phases, counting the returned labels as working memory.
pub fn working_bytes(width: u32, height: u32, params: &SlicParams) -> usize {
    let pixels = width as usize * height as usize;
    let grid = SeedGrid::new(width.max(1), height.max(1), params.target_segments);
    let clusters = grid.seed_count();
    let f32_bytes = std::mem::size_of::<f32>();
    let u32_bytes = std::mem::size_of::<u32>();
    let clustering = pixels * (3 * f32_bytes + u32_bytes + f32_bytes)
        + clusters * (std::mem::size_of::<Centre>() + std::mem::size_of::<CentreSums>());
    let connectivity = pixels * (3 * u32_bytes);
    clustering.max(connectivity)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn two_halves(width: u32, height: u32) -> RgbImage {
        let mut image = RgbImage::filled(width, height, [200, 40, 40]);
        for y in 0..height {
            for x in width / 2..width {
                image.set(x, y, [30, 60, 220]);
            }
        }
        image
    }

    #[test]
    fn bad_parameters_are_typed_errors() {
        assert_eq!(
            SlicParams::new(0, 10.0, 10),
            Err(SlicError::ZeroTargetSegments)
        );
        assert!(matches!(
            SlicParams::new(10, f32::NAN, 10),
            Err(SlicError::BadCompactness(_))
        ));
        assert_eq!(
            SlicParams::new(10, 10.0, 0),
            Err(SlicError::BadIterations(0))
        );
        assert!(SlicParams::default()
            .with_min_segment_fraction(1.5)
            .is_err());
    }

    #[test]
    fn deserialised_parameters_are_validated() {
        let good = serde_json::to_string(&SlicParams::default()).unwrap();
        let back: SlicParams = serde_json::from_str(&good).unwrap();
        assert_eq!(back, SlicParams::default());
        let bad = good.replace("\"iterations\":10", "\"iterations\":0");
        assert_ne!(bad, good);
        let error = serde_json::from_str::<SlicParams>(&bad).unwrap_err();
        assert!(error.to_string().contains("iterations"), "{error}");
    }

    #[test]
    fn bad_images_are_typed_errors() {
        let params = SlicParams::default();
        let empty = RgbImage::filled(0, 5, [0, 0, 0]);
        assert!(matches!(
            slic(&empty, &params),
            Err(SlicError::EmptyImage { .. })
        ));
        let tiny = RgbImage::filled(1, 1, [0, 0, 0]);
        assert!(matches!(
            slic(&tiny, &params),
            Err(SlicError::TooManySegments { pixels: 1, .. })
        ));
        let broken = RgbImage {
            width: 4,
            height: 4,
            pixels: vec![[0, 0, 0]; 3],
        };
        assert!(matches!(
            slic(&broken, &SlicParams::new(1, 10.0, 10).unwrap()),
            Err(SlicError::PixelCountMismatch { .. })
        ));
    }

    #[test]
    fn one_pixel_with_one_segment_works() {
        let tiny = RgbImage::filled(1, 1, [9, 9, 9]);
        let result = slic(&tiny, &SlicParams::new(1, 10.0, 10).unwrap()).unwrap();
        assert_eq!(result.labels, vec![0]);
        assert_eq!(result.segment_count, 1);
    }

    #[test]
    fn as_many_segments_as_pixels_works() {
        let image = two_halves(4, 3);
        let result = slic(&image, &SlicParams::new(12, 10.0, 10).unwrap()).unwrap();
        assert!(result.segment_count >= 1 && result.segment_count <= 12);
        assert!(result
            .labels
            .iter()
            .all(|&label| label < result.segment_count));
    }

    #[test]
    fn segments_do_not_cross_a_strong_edge() {
        let image = two_halves(64, 48);
        let result = slic(&image, &SlicParams::new(12, 10.0, 10).unwrap()).unwrap();
        let (width, height) = (64usize, 48usize);
        for y in 0..height {
            let left = result.labels[y * width + width / 2 - 1];
            let right = result.labels[y * width + width / 2];
            assert_ne!(left, right, "row {y} has one segment across the edge");
        }
        let count = result.segment_count as f32;
        assert!((8.0..=16.0).contains(&count), "{count} segments");
    }

    proptest::proptest! {
        #[test]
        fn every_slic_segment_is_connected_and_ids_are_dense(
            width in 1u32..24,
            height in 1u32..24,
            target in 1u32..40,
            seed in proptest::collection::vec(proptest::prelude::any::<u8>(), 12),
        ) {
            // A blocky random image: each 4x4 tile takes one of the seed colours.
            let mut image = RgbImage::filled(width, height, [0, 0, 0]);
            for y in 0..height {
                for x in 0..width {
                    let tile = ((x / 4 + y / 4 * 7) % 4) as usize * 3;
                    image.set(x, y, [seed[tile], seed[tile + 1], seed[tile + 2]]);
                }
            }
            let target = target.min(width * height);
            let result = slic(&image, &SlicParams::new(target, 10.0, 10).unwrap()).unwrap();
            proptest::prop_assert!(connectivity::is_each_segment_connected(
                &result.labels,
                width as usize,
                height as usize,
                result.segment_count,
            ));
        }
    }

    #[test]
    fn working_memory_is_twenty_bytes_per_pixel_plus_centres() {
        let bytes = working_bytes(640, 480, &SlicParams::default());
        let per_pixel = bytes as f64 / (640.0 * 480.0);
        assert!((20.0..20.5).contains(&per_pixel), "{per_pixel}");
    }
}
