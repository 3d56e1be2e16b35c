//! Drawing what the robot believes over its camera image: class colours blended over each pixel, region
//! boundaries as thin dark lines, and a legend panel listing the classes present with swatches and shares.
//!
//! Owns: `draw_overlay`, its options and its error type, and the bitmap font in `overlay::font`.
//! Must not: decide labels (the caller passes them, from ground truth, a classifier or a corrected scene);
//! class colours come only from `ClassInfo::colour`, the generated palette.

pub mod font;

use crate::ids::ClassId;
use crate::raster::RgbImage;
use crate::taxonomy::{Taxonomy, UNLABELLED};

use font::{draw_text, text_width, GLYPH_HEIGHT};

/// Any per-pixel region map (superpixels, ground-truth instances, or labels themselves), row-major.
#[derive(Clone, Copy, Debug)]
pub struct RegionMap<'a> {
    pub width: u32,
    pub regions: &'a [u32],
}

/// Where each pixel's class comes from.
#[derive(Clone, Copy, Debug)]
pub enum Labelling<'a> {
    /// One class per region of the region map (`classes[region]`).
    PerRegion(&'a [ClassId]),
    /// One class id per pixel, row-major; `UNLABELLED` (255) leaves the pixel unblended.
    PerPixel(&'a [u16]),
}

/// How the overlay looks.
#[derive(Clone, Debug, PartialEq)]
pub struct OverlayOptions {
    /// Weight of the class colour over the image, 0..1.
    pub alpha: f32,
    /// A heading printed at the top of the legend (e.g. what the labels are).
    pub title: String,
    /// Integer scale of the legend text (1 = 5x7 pixel glyphs).
    pub text_scale: u32,
}

impl Default for OverlayOptions {
    fn default() -> OverlayOptions {
        OverlayOptions {
            alpha: 0.45,
            title: String::new(),
            text_scale: 2,
        }
    }
}

/// What was wrong with the overlay's inputs.
#[derive(Debug, thiserror::Error, PartialEq, Eq)]
pub enum OverlayError {
    #[error("region map has {found} pixels but the image has {expected} ({width} wide)")]
    RegionSize {
        found: usize,
        expected: usize,
        width: u32,
    },
    #[error("per-pixel labels have {found} entries but the image has {expected} pixels")]
    LabelSize { found: usize, expected: usize },
    #[error("region {region} has no class: only {classes} per-region classes were given")]
    MissingRegionClass { region: u32, classes: usize },
    #[error("class id {0} is not in the taxonomy")]
    UnknownClass(u16),
}

/// One legend row: a class present in the overlay and its share of the image.
#[derive(Clone, Debug, PartialEq)]
pub struct LegendEntry {
    pub class: ClassId,
    pub pixels: u64,
}

/// The overlay picture and the legend it shows.
#[derive(Clone, Debug, PartialEq)]
pub struct Overlay {
    pub image: RgbImage,
    /// Classes present, most pixels first.
    pub legend: Vec<LegendEntry>,
}

const PANEL_BACKGROUND: [u8; 3] = [28, 30, 34];
const PANEL_TEXT: [u8; 3] = [236, 236, 230];
const BOUNDARY_DARKENING: f32 = 0.35;

/// Blends class colours over `image`, draws region boundaries and a legend panel to the right.
pub fn draw_overlay(
    image: &RgbImage,
    regions: RegionMap<'_>,
    labelling: Labelling<'_>,
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
) -> Result<Overlay, OverlayError> {
    let count = image.pixel_count();
    if regions.regions.len() != count || regions.width != image.width {
        return Err(OverlayError::RegionSize {
            found: regions.regions.len(),
            expected: count,
            width: image.width,
        });
    }
    let class_at = pixel_classes(regions, labelling, count)?;
    let mut pixels_per_class = vec![0u64; taxonomy.class_count()];
    for &class in &class_at {
        if class == UNLABELLED {
            continue;
        }
        let slot = pixels_per_class
            .get_mut(class as usize)
            .ok_or(OverlayError::UnknownClass(class))?;
        *slot += 1;
    }
    let alpha = options.alpha.clamp(0.0, 1.0);
    let (width, height) = (image.width, image.height);
    let mut blended = image.clone();
    for (pixel, &class) in blended.pixels.iter_mut().zip(&class_at) {
        if class == UNLABELLED {
            continue;
        }
        if let Some(info) = taxonomy.class(ClassId(class)) {
            for (value, &tint) in pixel.iter_mut().zip(&info.colour) {
                let mixed = *value as f32 * (1.0 - alpha) + tint as f32 * alpha;
                *value = mixed.round().clamp(0.0, 255.0) as u8;
            }
        }
    }
    // Boundaries: a pixel whose right or lower neighbour is in another region.
    let w = width as usize;
    for y in 0..height as usize {
        for x in 0..w {
            let here = regions.regions[y * w + x];
            let right = x + 1 < w && regions.regions[y * w + x + 1] != here;
            let below = y + 1 < height as usize && regions.regions[(y + 1) * w + x] != here;
            if right || below {
                let pixel = &mut blended.pixels[y * w + x];
                for value in pixel.iter_mut() {
                    *value = (*value as f32 * BOUNDARY_DARKENING).round() as u8;
                }
            }
        }
    }
    let mut legend: Vec<LegendEntry> = pixels_per_class
        .iter()
        .enumerate()
        .filter(|(_, pixels)| **pixels > 0)
        .map(|(class, pixels)| LegendEntry {
            class: ClassId(class as u16),
            pixels: *pixels,
        })
        .collect();
    legend.sort_by(|a, b| b.pixels.cmp(&a.pixels).then(a.class.cmp(&b.class)));
    let image = compose_with_legend(&blended, &legend, taxonomy, options, count as u64);
    Ok(Overlay { image, legend })
}

fn pixel_classes(
    regions: RegionMap<'_>,
    labelling: Labelling<'_>,
    count: usize,
) -> Result<Vec<u16>, OverlayError> {
    match labelling {
        Labelling::PerPixel(labels) => {
            if labels.len() != count {
                return Err(OverlayError::LabelSize {
                    found: labels.len(),
                    expected: count,
                });
            }
            Ok(labels.to_vec())
        }
        Labelling::PerRegion(classes) => regions
            .regions
            .iter()
            .map(|&region| {
                classes.get(region as usize).map(|class| class.0).ok_or(
                    OverlayError::MissingRegionClass {
                        region,
                        classes: classes.len(),
                    },
                )
            })
            .collect(),
    }
}

fn compose_with_legend(
    blended: &RgbImage,
    legend: &[LegendEntry],
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
    total_pixels: u64,
) -> RgbImage {
    let scale = options.text_scale.max(1);
    let line = (GLYPH_HEIGHT + 4) * scale;
    let margin = 4 * scale;
    let swatch = GLYPH_HEIGHT * scale;
    let rows: Vec<String> = legend
        .iter()
        .map(|entry| {
            let share = entry.pixels as f64 * 100.0 / total_pixels.max(1) as f64;
            if share < 0.1 {
                format!("{} {:.2}%", taxonomy.class_name(entry.class), share)
            } else {
                format!("{} {:.1}%", taxonomy.class_name(entry.class), share)
            }
        })
        .collect();
    let title_lines = wrap(&options.title, 20);
    let widest_row = rows
        .iter()
        .map(|row| text_width(row, scale) + swatch + 3 * scale)
        .chain(title_lines.iter().map(|text| text_width(text, scale)))
        .max()
        .unwrap_or(0);
    let panel_width = widest_row + 2 * margin;
    let needed_height = margin * 2 + line * (title_lines.len() as u32 + rows.len() as u32 + 1);
    let height = blended.height.max(needed_height);
    let mut out = RgbImage::filled(blended.width + panel_width, height, PANEL_BACKGROUND);
    for y in 0..blended.height {
        for x in 0..blended.width {
            out.set(x, y, blended.get(x, y));
        }
    }
    let left = blended.width + margin;
    let mut y = margin;
    for text in &title_lines {
        draw_text(&mut out, left, y, text, scale, PANEL_TEXT);
        y += line;
    }
    if !title_lines.is_empty() {
        y += line / 2;
    }
    for (entry, row) in legend.iter().zip(&rows) {
        let colour = taxonomy
            .class(entry.class)
            .map(|info| info.colour)
            .unwrap_or([128, 128, 128]);
        for dy in 0..swatch {
            for dx in 0..swatch {
                out.set(left + dx, y + dy, colour);
            }
        }
        draw_text(
            &mut out,
            left + swatch + 3 * scale,
            y,
            row,
            scale,
            PANEL_TEXT,
        );
        y += line;
    }
    out
}

/// Splits text into lines of at most `limit` characters at spaces.
fn wrap(text: &str, limit: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match lines.last_mut() {
            Some(last) if last.len() + 1 + word.len() <= limit => {
                last.push(' ');
                last.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    fn two_region_scene() -> (RgbImage, Vec<u32>, Vec<u16>) {
        let image = RgbImage::filled(8, 4, [100, 100, 100]);
        let regions: Vec<u32> = (0..32).map(|i| if i % 8 < 4 { 0 } else { 1 }).collect();
        let labels: Vec<u16> = regions
            .iter()
            .map(|&r| if r == 0 { 0 } else { 21 })
            .collect();
        (image, regions, labels)
    }

    #[test]
    fn colours_blend_and_boundaries_darken() {
        let taxonomy = Taxonomy::embedded();
        let (image, regions, labels) = two_region_scene();
        let overlay = draw_overlay(
            &image,
            RegionMap {
                width: 8,
                regions: &regions,
            },
            Labelling::PerPixel(&labels),
            &taxonomy,
            &OverlayOptions::default(),
        )
        .unwrap();
        let floor = taxonomy.class(ClassId(0)).unwrap().colour;
        let expected: Vec<u8> = floor
            .iter()
            .map(|&c| (100.0 * 0.55 + c as f32 * 0.45).round() as u8)
            .collect();
        assert_eq!(overlay.image.get(0, 0).to_vec(), expected);
        // Column 3 touches region 1 on its right, so it is darkened.
        let edge = overlay.image.get(3, 0);
        assert!(edge[0] < expected[0] || expected[0] == 0);
        assert_eq!(overlay.legend.len(), 2);
        assert_eq!(overlay.legend[0].pixels, 16);
        assert!(overlay.image.width > 8);
    }

    #[test]
    fn per_region_classes_match_per_pixel_labels() {
        let taxonomy = Taxonomy::embedded();
        let (image, regions, labels) = two_region_scene();
        let map = RegionMap {
            width: 8,
            regions: &regions,
        };
        let options = OverlayOptions::default();
        let by_pixel = draw_overlay(
            &image,
            map,
            Labelling::PerPixel(&labels),
            &taxonomy,
            &options,
        )
        .unwrap();
        let by_region = draw_overlay(
            &image,
            map,
            Labelling::PerRegion(&[ClassId(0), ClassId(21)]),
            &taxonomy,
            &options,
        )
        .unwrap();
        assert_eq!(by_pixel, by_region);
    }

    #[test]
    fn bad_inputs_are_typed_errors() {
        let taxonomy = Taxonomy::embedded();
        let (image, regions, _) = two_region_scene();
        let map = RegionMap {
            width: 8,
            regions: &regions,
        };
        let options = OverlayOptions::default();
        let error = draw_overlay(
            &image,
            map,
            Labelling::PerRegion(&[ClassId(0)]),
            &taxonomy,
            &options,
        )
        .unwrap_err();
        assert_eq!(
            error,
            OverlayError::MissingRegionClass {
                region: 1,
                classes: 1
            }
        );
        let short = RegionMap {
            width: 8,
            regions: &regions[..10],
        };
        assert!(matches!(
            draw_overlay(&image, short, Labelling::PerPixel(&[]), &taxonomy, &options),
            Err(OverlayError::RegionSize { .. })
        ));
        let bad = vec![200u16; 32];
        assert_eq!(
            draw_overlay(&image, map, Labelling::PerPixel(&bad), &taxonomy, &options).unwrap_err(),
            OverlayError::UnknownClass(200)
        );
    }
}
