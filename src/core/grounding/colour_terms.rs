//! Prototype colours of the basic colour terms, and naming a CIELAB colour with the nearest term.
//!
//! Owns: one sRGB prototype per `ColourTerm` and the nearest-prototype rule.
//! Must not: know about segments or objects.
//!
//! The prototypes are typical focal colours written from memory (approximate sRGB), not measured values;
//! the nearest-prototype rule in CIELAB (CIE76 distance) is common practice for naming colours.

use crate::color::{srgb8_to_lab, Lab};
use crate::language::constraint::ColourTerm;

/// Every colour term with its prototype sRGB colour.
pub const PROTOTYPES: [(ColourTerm, [u8; 3]); 11] = [
    (ColourTerm::Black, [20, 20, 20]),
    (ColourTerm::White, [245, 245, 240]),
    (ColourTerm::Red, [200, 30, 35]),
    (ColourTerm::Green, [40, 150, 60]),
    (ColourTerm::Yellow, [240, 215, 40]),
    (ColourTerm::Blue, [35, 80, 190]),
    (ColourTerm::Brown, [120, 75, 40]),
    (ColourTerm::Purple, [120, 50, 150]),
    (ColourTerm::Pink, [240, 150, 180]),
    (ColourTerm::Orange, [240, 130, 30]),
    (ColourTerm::Grey, [128, 128, 128]),
];

/// The prototype of a term in CIELAB.
pub fn prototype_lab(term: ColourTerm) -> Lab {
    let rgb = PROTOTYPES
        .iter()
        .find(|(candidate, _)| *candidate == term)
        .map(|(_, rgb)| *rgb)
        .unwrap_or([128, 128, 128]);
    srgb8_to_lab(rgb)
}

/// The term whose prototype is nearest.
pub fn nearest_term(colour: Lab) -> ColourTerm {
    let mut best = (ColourTerm::Grey, f32::INFINITY);
    for (term, _) in PROTOTYPES {
        let distance = colour.delta_e(prototype_lab(term));
        if distance < best.1 {
            best = (term, distance);
        }
    }
    best.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_prototype_names_itself_and_obvious_colours_get_their_term() {
        for (term, rgb) in PROTOTYPES {
            assert_eq!(nearest_term(srgb8_to_lab(rgb)), term);
        }
        assert_eq!(nearest_term(srgb8_to_lab([0, 0, 255])), ColourTerm::Blue);
        assert_eq!(
            nearest_term(srgb8_to_lab([255, 255, 255])),
            ColourTerm::White
        );
        assert_eq!(nearest_term(srgb8_to_lab([90, 90, 90])), ColourTerm::Grey);
    }
}
