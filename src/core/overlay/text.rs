//! Text on pictures: mixed-case labels drawn with the Go Medium font (`assets/fonts/Go-Medium.ttf`, BSD
//! licence in `assets/fonts/LICENSE.txt`), rasterised by the `ab_glyph` crate with anti-aliased coverage.
//!
//! Owns: the embedded font, measuring a line and drawing it blended over an `RgbImage`.
//! Must not: lay out legends or choose colours (`overlay` does).

use std::sync::OnceLock;

use ab_glyph::{point, Font, FontRef, PxScale, ScaleFont};

use crate::raster::RgbImage;

/// The font file, embedded so pictures need no file at run time.
const FONT_BYTES: &[u8] = include_bytes!("../../../assets/fonts/Go-Medium.ttf");

fn font() -> Option<&'static FontRef<'static>> {
    static FONT: OnceLock<Option<FontRef<'static>>> = OnceLock::new();
    FONT.get_or_init(|| FontRef::try_from_slice(FONT_BYTES).ok())
        .as_ref()
}

/// The height in pixels of a line of text at `size` pixels (ascent plus descent, rounded up).
pub fn line_height(size: f32) -> u32 {
    match font() {
        Some(font) => {
            let scaled = font.as_scaled(PxScale::from(size));
            (scaled.ascent() - scaled.descent()).ceil().max(1.0) as u32
        }
        None => size.ceil() as u32,
    }
}

/// The width in pixels of `text` at `size` pixels, kerning included.
pub fn text_width(text: &str, size: f32) -> u32 {
    let Some(font) = font() else {
        return 0;
    };
    let scaled = font.as_scaled(PxScale::from(size));
    let mut width = 0.0f32;
    let mut previous = None;
    for character in text.chars() {
        let id = scaled.glyph_id(character);
        if let Some(previous) = previous {
            width += scaled.kern(previous, id);
        }
        width += scaled.h_advance(id);
        previous = Some(id);
    }
    width.ceil().max(0.0) as u32
}

/// Draws `text` with its line's top at (`x`, `y`), `size` pixels high, blending `colour` over the image by
/// each pixel's glyph coverage; what falls outside the image is clipped.
pub fn draw_text(image: &mut RgbImage, x: i64, y: i64, text: &str, size: f32, colour: [u8; 3]) {
    let Some(font) = font() else {
        return;
    };
    let scale = PxScale::from(size);
    let scaled = font.as_scaled(scale);
    let baseline = y as f32 + scaled.ascent();
    let mut caret = x as f32;
    let mut previous = None;
    for character in text.chars() {
        let id = scaled.glyph_id(character);
        if let Some(previous) = previous {
            caret += scaled.kern(previous, id);
        }
        let glyph = id.with_scale_and_position(scale, point(caret, baseline));
        caret += scaled.h_advance(id);
        previous = Some(id);
        let Some(outlined) = font.outline_glyph(glyph) else {
            continue;
        };
        let bounds = outlined.px_bounds();
        outlined.draw(|gx, gy, coverage| {
            let px = bounds.min.x as i64 + i64::from(gx);
            let py = bounds.min.y as i64 + i64::from(gy);
            if px < 0 || py < 0 || px >= i64::from(image.width) || py >= i64::from(image.height) {
                return;
            }
            let coverage = coverage.clamp(0.0, 1.0);
            let (px, py) = (px as u32, py as u32);
            let mut pixel = image.get(px, py);
            for (value, &ink) in pixel.iter_mut().zip(&colour) {
                let mixed = f32::from(*value) * (1.0 - coverage) + f32::from(ink) * coverage;
                *value = mixed.round().clamp(0.0, 255.0) as u8;
            }
            image.set(px, py, pixel);
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_font_loads_and_text_leaves_ink() {
        assert!(font().is_some(), "the embedded font parses");
        let mut image = RgbImage::filled(80, 24, [0, 0, 0]);
        draw_text(&mut image, 2, 2, "Towel", 16.0, [255, 255, 255]);
        let inked = image.pixels.iter().filter(|p| p[0] > 128).count();
        assert!(inked > 40, "{inked} inked pixels");
        assert!(text_width("Towel", 16.0) > text_width("Tow", 16.0));
        assert!(line_height(16.0) >= 16);
    }
}
