//! A tiny 5x7 bitmap font of our own design, as data, for legends and titles drawn into images.
//!
//! Owns: the glyph table (lower-case text is drawn in capital shapes; a-z, 0-9 and a few marks) and drawing a
//! string into an RGB image at an integer scale.
//! Must not: know about classes or overlays.

use crate::raster::RgbImage;

/// Glyph width and height in font pixels.
pub const GLYPH_WIDTH: u32 = 5;
pub const GLYPH_HEIGHT: u32 = 7;
/// Horizontal advance per character in font pixels (glyph plus one column of space).
pub const ADVANCE: u32 = 6;

/// Each glyph is seven rows of five cells, `#` for ink.
const GLYPHS: &[(char, [&str; 7])] = &[
    (
        'a',
        [
            ".###.", "#...#", "#...#", "#####", "#...#", "#...#", "#...#",
        ],
    ),
    (
        'b',
        [
            "####.", "#...#", "#...#", "####.", "#...#", "#...#", "####.",
        ],
    ),
    (
        'c',
        [
            ".####", "#....", "#....", "#....", "#....", "#....", ".####",
        ],
    ),
    (
        'd',
        [
            "###..", "#..#.", "#...#", "#...#", "#...#", "#..#.", "###..",
        ],
    ),
    (
        'e',
        [
            "#####", "#....", "#....", "####.", "#....", "#....", "#####",
        ],
    ),
    (
        'f',
        [
            "#####", "#....", "#....", "####.", "#....", "#....", "#....",
        ],
    ),
    (
        'g',
        [
            ".####", "#....", "#....", "#.###", "#...#", "#...#", ".###.",
        ],
    ),
    (
        'h',
        [
            "#...#", "#...#", "#...#", "#####", "#...#", "#...#", "#...#",
        ],
    ),
    (
        'i',
        [
            "#####", "..#..", "..#..", "..#..", "..#..", "..#..", "#####",
        ],
    ),
    (
        'j',
        [
            "..###", "...#.", "...#.", "...#.", "...#.", "#..#.", ".##..",
        ],
    ),
    (
        'k',
        [
            "#...#", "#..#.", "#.#..", "##...", "#.#..", "#..#.", "#...#",
        ],
    ),
    (
        'l',
        [
            "#....", "#....", "#....", "#....", "#....", "#....", "#####",
        ],
    ),
    (
        'm',
        [
            "#...#", "##.##", "#.#.#", "#.#.#", "#...#", "#...#", "#...#",
        ],
    ),
    (
        'n',
        [
            "#...#", "##..#", "#.#.#", "#..##", "#...#", "#...#", "#...#",
        ],
    ),
    (
        'o',
        [
            ".###.", "#...#", "#...#", "#...#", "#...#", "#...#", ".###.",
        ],
    ),
    (
        'p',
        [
            "####.", "#...#", "#...#", "####.", "#....", "#....", "#....",
        ],
    ),
    (
        'q',
        [
            ".###.", "#...#", "#...#", "#...#", "#.#.#", "#..#.", ".##.#",
        ],
    ),
    (
        'r',
        [
            "####.", "#...#", "#...#", "####.", "#.#..", "#..#.", "#...#",
        ],
    ),
    (
        's',
        [
            ".####", "#....", "#....", ".###.", "....#", "....#", "####.",
        ],
    ),
    (
        't',
        [
            "#####", "..#..", "..#..", "..#..", "..#..", "..#..", "..#..",
        ],
    ),
    (
        'u',
        [
            "#...#", "#...#", "#...#", "#...#", "#...#", "#...#", ".###.",
        ],
    ),
    (
        'v',
        [
            "#...#", "#...#", "#...#", "#...#", ".#.#.", ".#.#.", "..#..",
        ],
    ),
    (
        'w',
        [
            "#...#", "#...#", "#...#", "#.#.#", "#.#.#", "##.##", "#...#",
        ],
    ),
    (
        'x',
        [
            "#...#", ".#.#.", ".#.#.", "..#..", ".#.#.", ".#.#.", "#...#",
        ],
    ),
    (
        'y',
        [
            "#...#", "#...#", ".#.#.", "..#..", "..#..", "..#..", "..#..",
        ],
    ),
    (
        'z',
        [
            "#####", "....#", "...#.", "..#..", ".#...", "#....", "#####",
        ],
    ),
    (
        '0',
        [
            ".###.", "#...#", "#..##", "#.#.#", "##..#", "#...#", ".###.",
        ],
    ),
    (
        '1',
        [
            "..#..", ".##..", "..#..", "..#..", "..#..", "..#..", ".###.",
        ],
    ),
    (
        '2',
        [
            ".###.", "#...#", "....#", "...#.", "..#..", ".#...", "#####",
        ],
    ),
    (
        '3',
        [
            "####.", "....#", "....#", ".###.", "....#", "....#", "####.",
        ],
    ),
    (
        '4',
        [
            "...#.", "..##.", ".#.#.", "#..#.", "#####", "...#.", "...#.",
        ],
    ),
    (
        '5',
        [
            "#####", "#....", "####.", "....#", "....#", "#...#", ".###.",
        ],
    ),
    (
        '6',
        [
            ".###.", "#....", "#....", "####.", "#...#", "#...#", ".###.",
        ],
    ),
    (
        '7',
        [
            "#####", "....#", "...#.", "..#..", "..#..", ".#...", ".#...",
        ],
    ),
    (
        '8',
        [
            ".###.", "#...#", "#...#", ".###.", "#...#", "#...#", ".###.",
        ],
    ),
    (
        '9',
        [
            ".###.", "#...#", "#...#", ".####", "....#", "....#", ".###.",
        ],
    ),
    (
        ' ',
        [
            ".....", ".....", ".....", ".....", ".....", ".....", ".....",
        ],
    ),
    (
        '_',
        [
            ".....", ".....", ".....", ".....", ".....", ".....", "#####",
        ],
    ),
    (
        '-',
        [
            ".....", ".....", ".....", ".###.", ".....", ".....", ".....",
        ],
    ),
    (
        '.',
        [
            ".....", ".....", ".....", ".....", ".....", ".##..", ".##..",
        ],
    ),
    (
        ',',
        [
            ".....", ".....", ".....", ".....", ".##..", "..#..", ".#...",
        ],
    ),
    (
        ':',
        [
            ".....", ".##..", ".##..", ".....", ".##..", ".##..", ".....",
        ],
    ),
    (
        '%',
        [
            "##..#", "##..#", "...#.", "..#..", ".#...", "#..##", "#..##",
        ],
    ),
    (
        '(',
        [
            "...#.", "..#..", ".#...", ".#...", ".#...", "..#..", "...#.",
        ],
    ),
    (
        ')',
        [
            ".#...", "..#..", "...#.", "...#.", "...#.", "..#..", ".#...",
        ],
    ),
    (
        '/',
        [
            "....#", "....#", "...#.", "..#..", ".#...", "#....", "#....",
        ],
    ),
    (
        '\'',
        [
            "..#..", "..#..", ".#...", ".....", ".....", ".....", ".....",
        ],
    ),
];

/// The shape for characters the table lacks: a hollow box.
const MISSING: [&str; 7] = [
    "#####", "#...#", "#...#", "#...#", "#...#", "#...#", "#####",
];

/// The rows of the glyph for `character` (upper-case letters use the lower-case entries).
pub fn glyph(character: char) -> &'static [&'static str; 7] {
    let lower = character.to_ascii_lowercase();
    GLYPHS
        .iter()
        .find(|(key, _)| *key == lower)
        .map(|(_, rows)| rows)
        .unwrap_or(&MISSING)
}

/// Width in image pixels of `text` drawn at `scale`.
pub fn text_width(text: &str, scale: u32) -> u32 {
    text.chars().count() as u32 * ADVANCE * scale
}

/// Draws `text` with its top-left corner at (`x`, `y`); pixels outside the image are skipped.
pub fn draw_text(image: &mut RgbImage, x: u32, y: u32, text: &str, scale: u32, colour: [u8; 3]) {
    for (index, character) in text.chars().enumerate() {
        let left = x + index as u32 * ADVANCE * scale;
        for (row, cells) in glyph(character).iter().enumerate() {
            for (column, cell) in cells.bytes().enumerate() {
                if cell != b'#' {
                    continue;
                }
                for dy in 0..scale {
                    for dx in 0..scale {
                        let px = left + column as u32 * scale + dx;
                        let py = y + row as u32 * scale + dy;
                        if px < image.width && py < image.height {
                            image.set(px, py, colour);
                        }
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_glyph_is_five_by_seven_and_distinct() {
        for (key, rows) in GLYPHS {
            for row in rows {
                assert_eq!(row.len(), 5, "glyph {key:?}");
                assert!(row.bytes().all(|b| b == b'#' || b == b'.'));
            }
        }
        for (index, (first, rows)) in GLYPHS.iter().enumerate() {
            for (second, other) in &GLYPHS[index + 1..] {
                assert_ne!(rows, other, "{first:?} and {second:?} look the same");
            }
        }
    }

    #[test]
    fn drawing_marks_only_ink_cells() {
        let mut image = RgbImage::filled(12, 7, [0, 0, 0]);
        draw_text(&mut image, 0, 0, "l", 1, [255, 255, 255]);
        // 'l' is a left column plus a bottom row: 7 + 4 ink cells.
        let ink = image
            .pixels
            .iter()
            .filter(|p| **p == [255, 255, 255])
            .count();
        assert_eq!(ink, 11);
        assert_eq!(image.get(0, 0), [255, 255, 255]);
        assert_eq!(image.get(1, 0), [0, 0, 0]);
        assert_eq!(text_width("ab", 2), 24);
    }
}
