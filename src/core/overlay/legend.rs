//! The legend panel beside a picture: a heading, then one row per class (a swatch of its colour and its
//! name in mixed case with a note such as its share of the image).
//!
//! Owns: `display_name`, `legend_panel` and the panel's colours.
//! Must not: count pixels or choose which classes appear (the caller passes the rows).

use crate::ids::ClassId;
use crate::raster::RgbImage;
use crate::taxonomy::Taxonomy;

use super::text::{draw_text, line_height, text_width};

/// The legend's background.
pub const PANEL_BACKGROUND: [u8; 3] = [28, 30, 34];

/// The legend's text.
pub const PANEL_TEXT: [u8; 3] = [236, 236, 230];

/// A class name for people: underscores as spaces, first letter capital ("coffee_table" -> "Coffee table").
pub fn display_name(name: &str) -> String {
    let spaced = name.replace('_', " ");
    let mut characters = spaced.chars();
    match characters.next() {
        Some(first) => first.to_uppercase().chain(characters).collect(),
        None => String::new(),
    }
}

/// One legend row: a class's swatch and the text beside it.
#[derive(Clone, Debug, PartialEq)]
pub struct LegendRow {
    pub class: ClassId,
    pub text: String,
}

/// Draws the panel: `heading` lines, a gap, then the rows; at least `height` pixels high (taller when the
/// rows need it).
pub fn legend_panel(
    heading: &[String],
    rows: &[LegendRow],
    taxonomy: &Taxonomy,
    text_size: f32,
    height: u32,
) -> RgbImage {
    let line = line_height(text_size) + 4;
    let margin = 8;
    let swatch = line_height(text_size).saturating_sub(2).max(4);
    let gap = 6;
    let widest = rows
        .iter()
        .map(|row| swatch + gap + text_width(&row.text, text_size))
        .chain(heading.iter().map(|text| text_width(text, text_size)))
        .max()
        .unwrap_or(0);
    let width = widest + 2 * margin;
    let heading_height = if heading.is_empty() {
        0
    } else {
        line * heading.len() as u32 + line / 2
    };
    let needed = 2 * margin + heading_height + line * rows.len() as u32;
    let mut panel = RgbImage::filled(width, height.max(needed), PANEL_BACKGROUND);
    let mut y = margin;
    for text in heading {
        draw_text(
            &mut panel,
            i64::from(margin),
            i64::from(y),
            text,
            text_size,
            PANEL_TEXT,
        );
        y += line;
    }
    if !heading.is_empty() {
        y += line / 2;
    }
    for row in rows {
        let colour = taxonomy
            .class(row.class)
            .map_or([128, 128, 128], |info| info.colour);
        let top = y + (line - swatch) / 2;
        for dy in 0..swatch {
            for dx in 0..swatch {
                let edge = dx == 0 || dy == 0 || dx + 1 == swatch || dy + 1 == swatch;
                panel.set(
                    margin + dx,
                    top + dy,
                    if edge { PANEL_TEXT } else { colour },
                );
            }
        }
        draw_text(
            &mut panel,
            i64::from(margin + swatch + gap),
            i64::from(y + 1),
            &row.text,
            text_size,
            PANEL_TEXT,
        );
        y += line;
    }
    panel
}

/// Splits text into lines of at most `limit` characters at spaces.
pub fn wrap(text: &str, limit: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match lines.last_mut() {
            Some(last) if last.chars().count() + 1 + word.chars().count() <= limit => {
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

    #[test]
    fn names_read_as_words() {
        assert_eq!(display_name("coffee_table"), "Coffee table");
        assert_eq!(display_name("tv"), "Tv");
        assert_eq!(display_name(""), "");
        assert_eq!(
            wrap("a long title for a panel", 10),
            ["a long", "title for", "a panel"]
        );
    }
}
