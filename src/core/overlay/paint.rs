//! Painting labels over a photo: a translucent class tint, outlines where one object (or class) meets
//! another, and the regions a correction changed, ringed and named.
//!
//! Owns: `tint`, `outline_regions`, `mark_changes` and `ChangedRegion`.
//! Must not: lay out panels or legends (`overlay` and `overlay::legend` do) or decide labels.

use crate::ids::ClassId;
use crate::raster::RgbImage;
use crate::taxonomy::{Taxonomy, UNLABELLED};

use super::legend::display_name;
use super::text::{draw_text, line_height, text_width};

/// The colour of a changed region's ring (with a dark edge outside it, so it reads on any photo).
pub const CHANGE_RING: [u8; 3] = [255, 255, 255];

/// The dark edge outside a changed region's ring, and the background of its name tag.
pub const CHANGE_EDGE: [u8; 3] = [16, 16, 16];

/// Changed regions smaller than this share of the image are ringed but not named (their tags would cover
/// more than they show); our own choice, about 150 pixels of a 640x480 image.
const SMALLEST_NAMED_SHARE: f64 = 0.0005;

/// At most this many changed regions are named, the largest first, so tags do not bury the picture.
const MOST_NAMED: usize = 6;

/// One connected region whose class a correction changed.
#[derive(Clone, Debug, PartialEq)]
pub struct ChangedRegion {
    /// The class most of the region had before.
    pub from: ClassId,
    /// The class most of the region has after.
    pub to: ClassId,
    pub pixels: u64,
    /// Bounding box: columns `x0..x1`, rows `y0..y1`.
    pub bbox: [u32; 4],
}

/// The image with every labelled pixel blended towards its class colour by `alpha` (0 keeps the photo);
/// `UNLABELLED` pixels stay as they are.
pub fn tint(image: &RgbImage, labels: &[u16], taxonomy: &Taxonomy, alpha: f32) -> RgbImage {
    let alpha = alpha.clamp(0.0, 1.0);
    let mut out = image.clone();
    for (pixel, &class) in out.pixels.iter_mut().zip(labels) {
        if class == UNLABELLED {
            continue;
        }
        if let Some(info) = taxonomy.class(ClassId(class)) {
            for (value, &colour) in pixel.iter_mut().zip(&info.colour) {
                let mixed = f32::from(*value) * (1.0 - alpha) + f32::from(colour) * alpha;
                *value = mixed.round().clamp(0.0, 255.0) as u8;
            }
        }
    }
    out
}

/// Whether the pixel at `index` has a 4-neighbour for which `differs(index, neighbour)` holds.
fn on_edge(
    index: usize,
    width: usize,
    height: usize,
    differs: impl Fn(usize, usize) -> bool,
) -> bool {
    let (x, y) = (index % width, index / width);
    (x > 0 && differs(index, index - 1))
        || (x + 1 < width && differs(index, index + 1))
        || (y > 0 && differs(index, index - width))
        || (y + 1 < height && differs(index, index + width))
}

/// Draws each region's outline (pixels with a 4-neighbour in another region, so a line two pixels wide
/// straddles every border) in the full colour of the pixel's class; unlabelled pixels get no outline.
pub fn outline_regions(
    canvas: &mut RgbImage,
    regions: &[u32],
    labels: &[u16],
    taxonomy: &Taxonomy,
) {
    let (width, height) = (canvas.width as usize, canvas.height as usize);
    let count = regions.len().min(width * height);
    for (index, &label) in labels.iter().enumerate().take(count) {
        if label == UNLABELLED {
            continue;
        }
        if on_edge(index, width, height, |a, b| regions[a] != regions[b]) {
            if let Some(info) = taxonomy.class(ClassId(label)) {
                canvas.pixels[index] = info.colour;
            }
        }
    }
}

/// The 4-connected regions where `before` and `after` differ, largest first.
pub fn changed_regions(before: &[u16], after: &[u16], width: u32) -> Vec<ChangedRegion> {
    let width = width.max(1) as usize;
    let count = before.len().min(after.len());
    let height = count / width;
    let changed = |index: usize| before[index] != after[index];
    let mut seen = vec![false; count];
    let mut regions = Vec::new();
    let mut stack = Vec::new();
    for start in 0..count {
        if seen[start] || !changed(start) {
            continue;
        }
        seen[start] = true;
        stack.push(start);
        let mut pairs: Vec<((u16, u16), u64)> = Vec::new();
        let (mut pixels, mut bbox) = (0u64, [u32::MAX, u32::MAX, 0, 0]);
        while let Some(index) = stack.pop() {
            pixels += 1;
            let (x, y) = ((index % width) as u32, (index / width) as u32);
            bbox = [
                bbox[0].min(x),
                bbox[1].min(y),
                bbox[2].max(x + 1),
                bbox[3].max(y + 1),
            ];
            let pair = (before[index], after[index]);
            match pairs.iter_mut().find(|entry| entry.0 == pair) {
                Some(entry) => entry.1 += 1,
                None => pairs.push((pair, 1)),
            }
            let (x, y) = (x as usize, y as usize);
            let neighbours = [
                (x > 0).then(|| index - 1),
                (x + 1 < width).then(|| index + 1),
                (y > 0).then(|| index - width),
                (y + 1 < height).then(|| index + width),
            ];
            for neighbour in neighbours.into_iter().flatten() {
                if !seen[neighbour] && changed(neighbour) {
                    seen[neighbour] = true;
                    stack.push(neighbour);
                }
            }
        }
        pairs.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
        let (from, to) = pairs[0].0;
        regions.push(ChangedRegion {
            from: ClassId(from),
            to: ClassId(to),
            pixels,
            bbox,
        });
    }
    regions.sort_by(|a, b| b.pixels.cmp(&a.pixels).then(a.bbox.cmp(&b.bbox)));
    regions
}

/// The smallest text size a change's tag is drawn at to fit a narrow picture.
const SMALLEST_TAG_SIZE: f32 = 7.0;

/// A change's tag, "New (was Old)", and the text size that fits it in a picture `width` pixels wide with
/// its 8 pixels of margin: `text_size`, else smaller (down to `SMALLEST_TAG_SIZE`), else the new class's
/// name alone at that size.
fn fitted_tag(new: &str, old: &str, text_size: f32, width: u32) -> (String, f32) {
    let text = format!("{new} (was {old})");
    let room = width.saturating_sub(8);
    let wide = text_width(&text, text_size);
    if wide <= room {
        return (text, text_size);
    }
    let size = (text_size * room as f32 / wide.max(1) as f32).max(SMALLEST_TAG_SIZE);
    if text_width(&text, size) <= room {
        (text, size)
    } else {
        (new.to_string(), size)
    }
}

/// Rings every pixel region where `before` and `after` differ (a white line two pixels wide on the border,
/// a dark line outside it) and names the larger ones "New (was Old)" on a dark tag above their box.
pub fn mark_changes(
    canvas: &mut RgbImage,
    before: &[u16],
    after: &[u16],
    taxonomy: &Taxonomy,
    text_size: f32,
) -> Vec<ChangedRegion> {
    let (width, height) = (canvas.width as usize, canvas.height as usize);
    let count = (width * height).min(before.len()).min(after.len());
    let changed = |index: usize| before[index] != after[index];
    let ring: Vec<bool> = (0..count)
        .map(|index| on_edge(index, width, height, |a, b| changed(a) != changed(b)))
        .collect();
    for index in 0..count {
        if ring[index] {
            canvas.pixels[index] = CHANGE_RING;
        } else if on_edge(index, width, height, |_, b| ring[b]) && !changed(index) {
            canvas.pixels[index] = CHANGE_EDGE;
        }
    }
    let regions = changed_regions(&before[..count], &after[..count], canvas.width);
    let smallest = (count as f64 * SMALLEST_NAMED_SHARE).max(1.0) as u64;
    for region in regions
        .iter()
        .filter(|region| region.pixels >= smallest)
        .take(MOST_NAMED)
    {
        let (text, size) = fitted_tag(
            &display_name(taxonomy.class_name(region.to)),
            &display_name(taxonomy.class_name(region.from)),
            text_size,
            canvas.width,
        );
        let tag_height = line_height(size) + 4;
        let tag_width = text_width(&text, size) + 8;
        let x = i64::from(region.bbox[0])
            .min(i64::from(canvas.width) - i64::from(tag_width))
            .max(0);
        let above = i64::from(region.bbox[1]) - i64::from(tag_height) - 2;
        let y = if above >= 0 {
            above
        } else {
            i64::from(region.bbox[3]) + 2
        };
        let y = y
            .min(i64::from(canvas.height) - i64::from(tag_height))
            .max(0);
        for ty in y..(y + i64::from(tag_height)).min(i64::from(canvas.height)) {
            for tx in x..(x + i64::from(tag_width)).min(i64::from(canvas.width)) {
                canvas.set(tx as u32, ty as u32, CHANGE_EDGE);
            }
        }
        draw_text(canvas, x + 4, y + 2, &text, size, CHANGE_RING);
    }
    regions
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_change_tag_fits_a_narrow_picture() {
        // Wide enough: the tag as it is.
        let (text, size) = fitted_tag("Floor", "Sofa", 15.0, 640);
        assert_eq!((text.as_str(), size), ("Floor (was Sofa)", 15.0));
        // A 96-pixel picture (the perception fixture's): smaller text, whole tag inside.
        let (text, size) = fitted_tag("Floor", "Sofa", 15.0, 96);
        assert!((SMALLEST_TAG_SIZE..15.0).contains(&size), "{size}");
        assert!(text_width(&text, size) + 8 <= 96, "{text} at {size}");
        // Too narrow even at the smallest size: the new class alone.
        let (text, size) = fitted_tag("Television", "Picture frame", 15.0, 60);
        assert_eq!((text.as_str(), size), ("Television", SMALLEST_TAG_SIZE));
    }
}
