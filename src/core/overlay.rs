//! Drawing what the robot believes over its camera image so a person can read it: the photo under a
//! translucent class tint, the outlines of the regions the caller names (objects, not superpixels), and a
//! legend of the classes shown in mixed-case text; and a correction's before and after side by side at the
//! same size, with the regions it changed ringed and named.
//!
//! Owns: `draw_overlay`, `draw_before_after`, their options and error type; painting (`overlay::paint`), the
//! legend panel (`overlay::legend`) and text (`overlay::text`, the Go font by `ab_glyph`).
//! Must not: decide labels (the caller passes them, from ground truth, a classifier or a corrected scene);
//! class colours come only from `ClassInfo::colour`, the generated palette.

pub mod legend;
pub mod paint;
pub mod text;

use crate::ids::ClassId;
use crate::raster::RgbImage;
use crate::taxonomy::{Taxonomy, UNLABELLED};

use legend::{display_name, legend_panel, wrap, LegendRow, PANEL_BACKGROUND, PANEL_TEXT};
use paint::{mark_changes, outline_regions, tint, ChangedRegion};
use text::{draw_text, line_height, text_width};

/// Any per-pixel region map, row-major: its borders are outlined. Pass objects (scene-graph objects,
/// ground-truth instances, or the labels themselves), not superpixels.
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
    /// Weight of the class colour over the photo, 0..1 (the photo keeps the rest).
    pub alpha: f32,
    /// A heading printed at the top of the legend (e.g. what the labels are).
    pub title: String,
    /// Text height in pixels.
    pub text_size: f32,
}

impl Default for OverlayOptions {
    /// A 40% tint (the photo stays readable under it; our own choice) and 15-pixel text.
    fn default() -> OverlayOptions {
        OverlayOptions {
            alpha: 0.4,
            title: String::new(),
            text_size: 15.0,
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

/// Tints `image` with the classes, outlines the regions of `regions` and puts a legend of the classes
/// present (most pixels first, with their share) to the right.
pub fn draw_overlay(
    image: &RgbImage,
    regions: RegionMap<'_>,
    labelling: Labelling<'_>,
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
) -> Result<Overlay, OverlayError> {
    check_regions(image, regions)?;
    let class_at = pixel_classes(regions, labelling, image.pixel_count())?;
    let legend = count_classes(&class_at, taxonomy)?;
    let mut painted = tint(image, &class_at, taxonomy, options.alpha);
    outline_regions(&mut painted, regions.regions, &class_at, taxonomy);
    let rows = share_rows(taxonomy, &legend, &[], class_at.len() as u64);
    let panel = legend_panel(
        &wrap(&options.title, 28),
        &rows,
        taxonomy,
        options.text_size,
        image.height,
    );
    let image = beside(&[&painted, &panel], 0);
    Ok(Overlay { image, legend })
}

/// One labelled view of the image for `draw_before_after`.
#[derive(Clone, Copy, Debug)]
pub struct View<'a> {
    /// Outlined regions (objects).
    pub regions: RegionMap<'a>,
    /// One class per pixel, row-major (`UNLABELLED` leaves the photo as it is).
    pub labels: &'a [u16],
    /// Printed above the view.
    pub title: &'a str,
}

/// Before and after, drawn alike.
#[derive(Clone, Debug, PartialEq)]
pub struct BeforeAfter {
    /// The two views side by side, titled, with one legend to the right.
    pub side_by_side: RgbImage,
    /// The before view alone, titled, with the same legend (so it has the size of `after`).
    pub before: RgbImage,
    /// The after view alone, titled, with the changed regions ringed and named, and the same legend.
    pub after: RgbImage,
    /// Classes in either view, most pixels after first, then those only before.
    pub legend: Vec<LegendEntry>,
    /// The regions whose class changed, largest first.
    pub changed: Vec<ChangedRegion>,
}

/// Gap between the two views of `side_by_side`, in pixels.
pub const VIEW_GAP: u32 = 8;

/// Checks both views against the image and answers the legend of `draw_before_after` with its rows.
fn checked_legend(
    image: &RgbImage,
    before: View<'_>,
    after: View<'_>,
    taxonomy: &Taxonomy,
) -> Result<(Vec<LegendEntry>, Vec<LegendRow>), OverlayError> {
    let count = image.pixel_count();
    for view in [before, after] {
        check_regions(image, view.regions)?;
        if view.labels.len() != count {
            return Err(OverlayError::LabelSize {
                found: view.labels.len(),
                expected: count,
            });
        }
    }
    let before_counts = count_classes(before.labels, taxonomy)?;
    let mut legend = count_classes(after.labels, taxonomy)?;
    let only_before: Vec<LegendEntry> = before_counts
        .into_iter()
        .filter(|entry| !legend.iter().any(|shown| shown.class == entry.class))
        .collect();
    let rows = share_rows(taxonomy, &legend, &only_before, count as u64);
    legend.extend(only_before);
    Ok((legend, rows))
}

/// Draws a correction's before and after at the same size: each view tinted and outlined, the after view
/// with every changed region ringed and the larger ones named "New (was Old)", and one legend of the classes
/// in either view with their share after (or "before only").
pub fn draw_before_after(
    image: &RgbImage,
    before: View<'_>,
    after: View<'_>,
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
) -> Result<BeforeAfter, OverlayError> {
    let (legend, rows) = checked_legend(image, before, after, taxonomy)?;
    let mut before_picture = tint(image, before.labels, taxonomy, options.alpha);
    outline_regions(
        &mut before_picture,
        before.regions.regions,
        before.labels,
        taxonomy,
    );
    let (after_picture, changed) = after_picture(image, before, after, taxonomy, options);
    let before_view = titled(&before_picture, before.title, options.text_size);
    let after_view = titled(&after_picture, after.title, options.text_size);
    let panel = legend_panel(
        &wrap(&options.title, 28),
        &rows,
        taxonomy,
        options.text_size,
        before_view.height,
    );
    Ok(BeforeAfter {
        side_by_side: beside(&[&before_view, &after_view, &panel], VIEW_GAP),
        before: beside(&[&before_view, &panel], 0),
        after: beside(&[&after_view, &panel], 0),
        legend,
        changed,
    })
}

/// The `after` picture of `draw_before_after` alone, pixel for pixel, without drawing the before view or
/// the side-by-side picture: one tinted copy of the image and the finished picture are the only buffers of
/// its size (a 4096x4096 view is 50 MB a buffer; `draw_before_after` makes nine).
pub fn draw_after(
    image: &RgbImage,
    before: View<'_>,
    after: View<'_>,
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
) -> Result<RgbImage, OverlayError> {
    let (_, rows) = checked_legend(image, before, after, taxonomy)?;
    let (picture, _) = after_picture(image, before, after, taxonomy, options);
    let strip = line_height(options.text_size) + 8;
    let panel = legend_panel(
        &wrap(&options.title, 28),
        &rows,
        taxonomy,
        options.text_size,
        picture.height + strip,
    );
    // As `beside(&[&titled(..), &panel], 0)`: the title is drawn before the panel (at least as tall as the
    // titled picture) is pasted, so what a title too wide for the picture spills is covered by the panel,
    // as the titled picture's own edge clips it.
    let mut out = RgbImage::filled(
        picture.width + panel.width,
        (picture.height + strip).max(panel.height),
        PANEL_BACKGROUND,
    );
    paste(&mut out, &picture, 0, strip);
    let width = picture.width;
    drop(picture);
    let size = title_size(width, after.title, options.text_size);
    draw_text(&mut out, 6, 4, after.title, size, PANEL_TEXT);
    paste(&mut out, &panel, width, 0);
    Ok(out)
}

/// The after view untitled: tinted, outlined, every changed region ringed; with what changed.
fn after_picture(
    image: &RgbImage,
    before: View<'_>,
    after: View<'_>,
    taxonomy: &Taxonomy,
    options: &OverlayOptions,
) -> (RgbImage, Vec<ChangedRegion>) {
    let mut picture = tint(image, after.labels, taxonomy, options.alpha);
    outline_regions(&mut picture, after.regions.regions, after.labels, taxonomy);
    let changed = mark_changes(
        &mut picture,
        before.labels,
        after.labels,
        taxonomy,
        options.text_size,
    );
    (picture, changed)
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

fn check_regions(image: &RgbImage, regions: RegionMap<'_>) -> Result<(), OverlayError> {
    let count = image.pixel_count();
    if regions.regions.len() != count || regions.width != image.width {
        return Err(OverlayError::RegionSize {
            found: regions.regions.len(),
            expected: count,
            width: image.width,
        });
    }
    Ok(())
}

/// Pixels per class present, most first (ties by class id); an id outside the taxonomy is an error.
fn count_classes(labels: &[u16], taxonomy: &Taxonomy) -> Result<Vec<LegendEntry>, OverlayError> {
    let mut pixels_per_class = vec![0u64; taxonomy.class_count()];
    for &class in labels {
        if class == UNLABELLED {
            continue;
        }
        *pixels_per_class
            .get_mut(class as usize)
            .ok_or(OverlayError::UnknownClass(class))? += 1;
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
    Ok(legend)
}

/// Legend rows: "Name 12.3%" for `shown`, "Name (before only)" for `gone`; safety-critical classes say so.
fn share_rows(
    taxonomy: &Taxonomy,
    shown: &[LegendEntry],
    gone: &[LegendEntry],
    total: u64,
) -> Vec<LegendRow> {
    shown
        .iter()
        .map(|entry| (entry, false))
        .chain(gone.iter().map(|entry| (entry, true)))
        .map(|(entry, gone)| LegendRow {
            class: entry.class,
            text: {
                let name = display_name(taxonomy.class_name(entry.class));
                let note = if gone {
                    "(before only)".to_string()
                } else {
                    let share = entry.pixels as f64 * 100.0 / total.max(1) as f64;
                    if share < 0.1 {
                        format!("{share:.2}%")
                    } else {
                        format!("{share:.1}%")
                    }
                };
                let safety = if taxonomy.is_safety_critical(entry.class) {
                    " (safety)"
                } else {
                    ""
                };
                format!("{name} {note}{safety}")
            },
        })
        .collect()
}

/// The smallest title text, in pixels, on a picture too narrow for the usual size (our own choice).
const SMALLEST_TITLE_SIZE: f32 = 7.0;

/// The picture under a strip holding its title; on a picture too narrow for the title the text is made
/// smaller to fit (down to `SMALLEST_TITLE_SIZE`), so a small image's panels still say which is which.
fn titled(picture: &RgbImage, title: &str, text_size: f32) -> RgbImage {
    let size = title_size(picture.width, title, text_size);
    let strip = line_height(text_size) + 8;
    let mut out = RgbImage::filled(picture.width, picture.height + strip, PANEL_BACKGROUND);
    paste(&mut out, picture, 0, strip);
    draw_text(&mut out, 6, 4, title, size, PANEL_TEXT);
    out
}

/// The text size of a title over a picture `width` pixels wide (see `titled`).
fn title_size(width: u32, title: &str, text_size: f32) -> f32 {
    let room = width.saturating_sub(12) as f32;
    let wide = text_width(title, text_size) as f32;
    if wide > room && wide > 0.0 {
        (text_size * room / wide).max(SMALLEST_TITLE_SIZE)
    } else {
        text_size
    }
}

/// The pictures left to right, tops aligned, `gap` pixels apart, on the panel background.
fn beside(pictures: &[&RgbImage], gap: u32) -> RgbImage {
    let width = pictures.iter().map(|p| p.width).sum::<u32>()
        + gap * (pictures.len() as u32).saturating_sub(1);
    let height = pictures.iter().map(|p| p.height).max().unwrap_or(0);
    let mut out = RgbImage::filled(width, height, PANEL_BACKGROUND);
    let mut left = 0;
    for picture in pictures {
        paste(&mut out, picture, left, 0);
        left += picture.width + gap;
    }
    out
}

/// Copies `picture` onto `canvas` with its top left corner at (`left`, `top`), row by row; what falls
/// outside the canvas is left out.
fn paste(canvas: &mut RgbImage, picture: &RgbImage, left: u32, top: u32) {
    let (canvas_width, picture_width) = (canvas.width as usize, picture.width as usize);
    let columns = picture_width.min(canvas_width.saturating_sub(left as usize));
    let rows = picture.height.min(canvas.height.saturating_sub(top));
    for y in 0..rows as usize {
        let from = y * picture_width;
        let to = (top as usize + y) * canvas_width + left as usize;
        canvas.pixels[to..to + columns].copy_from_slice(&picture.pixels[from..from + columns]);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The rightmost column of the title strip holding a pixel other than the background.
    fn title_end(out: &RgbImage, strip: u32) -> u32 {
        (0..out.width)
            .filter(|&x| (0..strip).any(|y| out.get(x, y) != PANEL_BACKGROUND))
            .max()
            .unwrap_or(0)
    }

    #[test]
    fn a_title_is_made_smaller_to_fit_a_narrow_picture() {
        let size = 15.0;
        let strip = line_height(size) + 8;
        let title = "Before the notes";
        assert!(
            text_width(title, size) + 12 > 96,
            "the title must not fit at full size"
        );
        let narrow = titled(&RgbImage::filled(96, 20, [90, 90, 90]), title, size);
        assert!(title_end(&narrow, strip) < 96 - 4);
        assert_eq!(narrow.height, 20 + strip);
        // A wide picture keeps the full size: the title ends where its full width does.
        let wide = titled(&RgbImage::filled(400, 20, [90, 90, 90]), title, size);
        assert!(title_end(&wide, strip) + 12 >= 6 + text_width(title, size));
    }

    fn two_region_scene() -> (RgbImage, Vec<u32>, Vec<u16>) {
        let image = RgbImage::filled(8, 4, [100, 100, 100]);
        let regions: Vec<u32> = (0..32).map(|i| if i % 8 < 4 { 0 } else { 1 }).collect();
        let labels: Vec<u16> = regions
            .iter()
            .map(|&r| if r == 0 { 0 } else { 21 })
            .collect();
        (image, regions, labels)
    }

    /// `draw_after` draws `draw_before_after`'s after picture pixel for pixel: on a picture wide enough for
    /// its title and on one so narrow the title spills past it, with a region changed between the views.
    #[test]
    fn the_after_view_alone_is_the_after_picture_of_both() {
        let taxonomy = Taxonomy::embedded();
        for (width, height) in [(200u32, 120u32), (40, 30)] {
            let image = RgbImage {
                width,
                height,
                pixels: (0..width * height)
                    .map(|i| [(i % 251) as u8, (i / 7 % 253) as u8, 90])
                    .collect(),
            };
            let regions: Vec<u32> = (0..width * height)
                .map(|i| u32::from(i % width >= width / 2) + 2 * u32::from(i / width >= height / 2))
                .collect();
            let before: Vec<u16> = regions
                .iter()
                .map(|&r| [0, 21, 3, 21][r as usize])
                .collect();
            let after: Vec<u16> = regions
                .iter()
                .map(|&r| [0, 21, 5, 21][r as usize])
                .collect();
            let map = RegionMap {
                width,
                regions: &regions,
            };
            let views = (
                View {
                    regions: map,
                    labels: &before,
                    title: "Before",
                },
                View {
                    regions: map,
                    labels: &after,
                    title: "Ringed: what this version's note changed",
                },
            );
            let options = OverlayOptions {
                title: "Juniper Lane, the den".to_string(),
                ..OverlayOptions::default()
            };
            let both = draw_before_after(&image, views.0, views.1, &taxonomy, &options).unwrap();
            assert!(!both.changed.is_empty());
            let alone = draw_after(&image, views.0, views.1, &taxonomy, &options).unwrap();
            assert_eq!(alone, both.after, "{width}x{height}");
        }
    }

    #[test]
    fn colours_tint_and_region_borders_take_the_class_colour() {
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
            .map(|&c| (100.0 * 0.6 + c as f32 * 0.4).round() as u8)
            .collect();
        assert_eq!(overlay.image.get(0, 0).to_vec(), expected);
        // Column 3 touches region 1 on its right: it is outlined in its own class's full colour.
        assert_eq!(overlay.image.get(3, 0), floor);
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
