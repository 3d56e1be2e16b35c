//! Colour science: sRGB to CIELAB (D65) and the generated class palette.
//!
//! Owns: the sRGB transfer function (IEC 61966-2-1), the sRGB->XYZ matrix, the CIE 1976 L*a*b* formulas,
//! CIEDE76 distance, and the farthest-point palette generator.
//! Must not: know about scenes, classes or files; it works on plain numbers.

use serde::{Deserialize, Serialize};

/// A colour in CIE 1976 L*a*b* under the D65 white point (L in 0..100).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct Lab {
    pub l: f32,
    pub a: f32,
    pub b: f32,
}

impl Lab {
    /// Euclidean distance in L*a*b* (CIE76 delta E).
    pub fn delta_e(self, other: Lab) -> f32 {
        let dl = self.l - other.l;
        let da = self.a - other.a;
        let db = self.b - other.b;
        (dl * dl + da * da + db * db).sqrt()
    }
}

/// D65 reference white in XYZ, normalised to Y = 1 (CIE 15:2004 / ASTM E308 two-degree observer).
pub const D65_WHITE: [f64; 3] = [0.950_47, 1.0, 1.088_83];

/// Inverse sRGB transfer function (IEC 61966-2-1): encoded 0..1 to linear 0..1.
pub fn srgb_to_linear(encoded: f64) -> f64 {
    if encoded <= 0.040_45 {
        encoded / 12.92
    } else {
        ((encoded + 0.055) / 1.055).powf(2.4)
    }
}

/// sRGB transfer function (IEC 61966-2-1): linear 0..1 to encoded 0..1.
pub fn linear_to_srgb(linear: f64) -> f64 {
    if linear <= 0.003_130_8 {
        linear * 12.92
    } else {
        1.055 * linear.powf(1.0 / 2.4) - 0.055
    }
}

/// Linear sRGB to XYZ (IEC 61966-2-1 matrix, D65).
const RGB_TO_XYZ: [[f64; 3]; 3] = [
    [0.412_453, 0.357_580, 0.180_423],
    [0.212_671, 0.715_160, 0.072_169],
    [0.019_334, 0.119_193, 0.950_227],
];

/// XYZ to linear sRGB, the inverse of `RGB_TO_XYZ`.
const XYZ_TO_RGB: [[f64; 3]; 3] = [
    [3.240_481_340, -1.537_151_516, -0.498_536_326],
    [-0.969_254_949, 1.875_990_000, 0.041_555_926],
    [0.055_646_640, -0.204_041_338, 1.057_311_070],
];

fn lab_f(t: f64) -> f64 {
    // CIE 1976: cube root above (6/29)^3, linear segment below.
    const DELTA: f64 = 6.0 / 29.0;
    if t > DELTA * DELTA * DELTA {
        t.cbrt()
    } else {
        t / (3.0 * DELTA * DELTA) + 4.0 / 29.0
    }
}

fn lab_f_inverse(t: f64) -> f64 {
    const DELTA: f64 = 6.0 / 29.0;
    if t > DELTA {
        t * t * t
    } else {
        3.0 * DELTA * DELTA * (t - 4.0 / 29.0)
    }
}

/// Converts an 8-bit sRGB triple to CIELAB (D65), in double precision.
pub fn srgb8_to_lab_f64(rgb: [u8; 3]) -> [f64; 3] {
    let linear = rgb.map(|channel| srgb_to_linear(channel as f64 / 255.0));
    let mut xyz = [0.0f64; 3];
    for (row, out) in RGB_TO_XYZ.iter().zip(xyz.iter_mut()) {
        *out = row[0] * linear[0] + row[1] * linear[1] + row[2] * linear[2];
    }
    let fx = lab_f(xyz[0] / D65_WHITE[0]);
    let fy = lab_f(xyz[1] / D65_WHITE[1]);
    let fz = lab_f(xyz[2] / D65_WHITE[2]);
    [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
}

/// Converts an 8-bit sRGB triple to CIELAB (D65).
pub fn srgb8_to_lab(rgb: [u8; 3]) -> Lab {
    let [l, a, b] = srgb8_to_lab_f64(rgb);
    Lab {
        l: l as f32,
        a: a as f32,
        b: b as f32,
    }
}

/// Converts CIELAB (D65) back to 8-bit sRGB, clipping out-of-gamut values.
pub fn lab_to_srgb8(lab: Lab) -> [u8; 3] {
    let fy = (lab.l as f64 + 16.0) / 116.0;
    let fx = fy + lab.a as f64 / 500.0;
    let fz = fy - lab.b as f64 / 200.0;
    let xyz = [
        lab_f_inverse(fx) * D65_WHITE[0],
        lab_f_inverse(fy) * D65_WHITE[1],
        lab_f_inverse(fz) * D65_WHITE[2],
    ];
    let mut rgb = [0u8; 3];
    for (row, out) in XYZ_TO_RGB.iter().zip(rgb.iter_mut()) {
        let linear = row[0] * xyz[0] + row[1] * xyz[1] + row[2] * xyz[2];
        let encoded = linear_to_srgb(linear.clamp(0.0, 1.0));
        *out = (encoded * 255.0).round().clamp(0.0, 255.0) as u8;
    }
    rgb
}

/// `lab_f` in single precision with a fast cube root, for whole-image conversion.
#[inline]
fn lab_f_fast(t: f32) -> f32 {
    const DELTA: f32 = 6.0 / 29.0;
    if t > DELTA * DELTA * DELTA {
        // Cube root: a bit-level first guess (exponent divided by three), then two Halley steps,
        // each of which roughly triples the number of correct digits; the result is within f32 rounding.
        let mut root = f32::from_bits(t.to_bits() / 3 + 709_921_077);
        for _ in 0..2 {
            let cube = root * root * root;
            root *= (cube + t + t) / (cube + cube + t);
        }
        root
    } else {
        t / (3.0 * DELTA * DELTA) + 4.0 / 29.0
    }
}

/// A lookup table from each 8-bit sRGB channel value to its linear value, for fast whole-image conversion.
pub struct LabConverter {
    linear: [f32; 256],
}

impl Default for LabConverter {
    fn default() -> Self {
        Self::new()
    }
}

impl LabConverter {
    /// Builds the 256-entry linearisation table.
    pub fn new() -> Self {
        let mut linear = [0.0f32; 256];
        for (value, slot) in linear.iter_mut().enumerate() {
            *slot = srgb_to_linear(value as f64 / 255.0) as f32;
        }
        Self { linear }
    }

    /// Converts one pixel; agrees with `srgb8_to_lab` to about 1e-3 in L*a*b* units.
    #[inline]
    pub fn convert(&self, rgb: [u8; 3]) -> Lab {
        let r = self.linear[rgb[0] as usize];
        let g = self.linear[rgb[1] as usize];
        let b = self.linear[rgb[2] as usize];
        let x = (0.412_453 * r + 0.357_580 * g + 0.180_423 * b) / D65_WHITE[0] as f32;
        let y = 0.212_671 * r + 0.715_160 * g + 0.072_169 * b;
        let z = (0.019_334 * r + 0.119_193 * g + 0.950_227 * b) / D65_WHITE[2] as f32;
        let fx = lab_f_fast(x);
        let fy = lab_f_fast(y);
        let fz = lab_f_fast(z);
        Lab {
            l: 116.0 * fy - 16.0,
            a: 500.0 * (fx - fy),
            b: 200.0 * (fy - fz),
        }
    }
}

/// Lightness range of the class palette's colours (CIE L*): light enough to read over a dark photo, dark
/// enough to show on white.
pub const PALETTE_LIGHTNESS: std::ops::RangeInclusive<f32> = 50.0..=80.0;

/// How much lightness counts when the palette spreads its colours: under a translucent tint a photo's own
/// shading hides lightness differences, so colours are spread mostly by hue and chroma (the a*b* plane).
pub const PALETTE_LIGHTNESS_WEIGHT: f32 = 0.3;

/// For up to `PALETTE_SEPARATED_COUNT` colours, every pair of the palette is at least this far apart in CIE76
/// delta E*ab (`tests` check it with this module's CIELAB, itself checked against scikit-image).
pub const PALETTE_MIN_DELTA_E: f32 = 20.0;

/// ... and at least this far apart in the a*b* plane alone (hue and chroma, lightness left out).
pub const PALETTE_MIN_CHROMATIC_DISTANCE: f32 = 18.0;

/// The palette size the two distances above are guaranteed (and tested) for: the taxonomy's 41 classes.
pub const PALETTE_SEPARATED_COUNT: usize = 41;

/// Distance in the a*b* plane (hue and chroma), lightness left out.
pub fn chromatic_distance(first: Lab, second: Lab) -> f32 {
    ((first.a - second.a).powi(2) + (first.b - second.b).powi(2)).sqrt()
}

fn palette_distance(first: Lab, second: Lab) -> f32 {
    ((PALETTE_LIGHTNESS_WEIGHT * (first.l - second.l)).powi(2)
        + (first.a - second.a).powi(2)
        + (first.b - second.b).powi(2))
    .sqrt()
}

/// Generates `count` colours that are well separated in CIELAB, deterministically.
///
/// Candidates are an sRGB grid (every channel in steps of 17) restricted to `PALETTE_LIGHTNESS`; the first
/// pick is the candidate nearest a mid grey-blue, and every later pick is the candidate farthest from all
/// picks so far (greedy farthest-point sampling) in CIELAB with lightness weighted by
/// `PALETTE_LIGHTNESS_WEIGHT`. See `PALETTE_MIN_DELTA_E` for what that guarantees.
pub fn generate_palette(count: usize) -> Vec<[u8; 3]> {
    let mut candidates: Vec<([u8; 3], Lab)> = Vec::new();
    for r in (0..=255u16).step_by(17) {
        for g in (0..=255u16).step_by(17) {
            for b in (0..=255u16).step_by(17) {
                let rgb = [r as u8, g as u8, b as u8];
                let lab = srgb8_to_lab(rgb);
                if PALETTE_LIGHTNESS.contains(&lab.l) {
                    candidates.push((rgb, lab));
                }
            }
        }
    }
    let mut palette = Vec::with_capacity(count);
    if count == 0 || candidates.is_empty() {
        return palette;
    }
    let seed = srgb8_to_lab([90, 110, 160]);
    let mut nearest_distance: Vec<f32> = vec![f32::INFINITY; candidates.len()];
    let first = candidates
        .iter()
        .enumerate()
        .min_by(|x, y| x.1 .1.delta_e(seed).total_cmp(&y.1 .1.delta_e(seed)))
        .map(|(index, _)| index)
        .unwrap_or(0);
    let mut pick = first;
    while palette.len() < count {
        let (rgb, lab) = candidates[pick];
        palette.push(rgb);
        for (distance, candidate) in nearest_distance.iter_mut().zip(candidates.iter()) {
            *distance = distance.min(palette_distance(candidate.1, lab));
        }
        pick = nearest_distance
            .iter()
            .enumerate()
            .max_by(|x, y| x.1.total_cmp(y.1).then(y.0.cmp(&x.0)))
            .map(|(index, _)| index)
            .unwrap_or(0);
    }
    palette
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn white_is_l100_and_black_is_l0() {
        let white = srgb8_to_lab_f64([255, 255, 255]);
        assert!((white[0] - 100.0).abs() < 1e-3, "{white:?}");
        assert!(white[1].abs() < 1e-2 && white[2].abs() < 1e-2, "{white:?}");
        let black = srgb8_to_lab_f64([0, 0, 0]);
        assert!(black[0].abs() < 1e-9);
    }

    #[test]
    fn round_trip_is_within_one_code_value() {
        for rgb in [
            [12u8, 200, 99],
            [255, 0, 0],
            [3, 3, 3],
            [128, 128, 128],
            [250, 240, 10],
        ] {
            let back = lab_to_srgb8(srgb8_to_lab(rgb));
            for channel in 0..3 {
                assert!(
                    (back[channel] as i32 - rgb[channel] as i32).abs() <= 1,
                    "{rgb:?} -> {back:?}"
                );
            }
        }
    }

    #[test]
    fn fast_converter_matches_reference() {
        let converter = LabConverter::new();
        for rgb in [[0u8, 0, 0], [12, 200, 99], [255, 255, 255], [77, 13, 240]] {
            let fast = converter.convert(rgb);
            let slow = srgb8_to_lab(rgb);
            assert!(fast.delta_e(slow) < 1e-2, "{rgb:?}: {fast:?} vs {slow:?}");
        }
    }

    #[test]
    fn palette_is_deterministic_and_separated_by_hue_not_only_lightness() {
        let first = generate_palette(PALETTE_SEPARATED_COUNT);
        assert_eq!(first, generate_palette(PALETTE_SEPARATED_COUNT));
        assert_eq!(first.len(), PALETTE_SEPARATED_COUNT);
        let labs: Vec<Lab> = first.iter().map(|&rgb| srgb8_to_lab(rgb)).collect();
        let (mut closest, mut closest_chromatic) = (f32::INFINITY, f32::INFINITY);
        for i in 0..labs.len() {
            assert!(
                (PALETTE_LIGHTNESS.start() - 0.01..=PALETTE_LIGHTNESS.end() + 0.01)
                    .contains(&labs[i].l),
                "{:?} has L* {}",
                first[i],
                labs[i].l
            );
            for j in (i + 1)..labs.len() {
                closest = closest.min(labs[i].delta_e(labs[j]));
                closest_chromatic = closest_chromatic.min(chromatic_distance(labs[i], labs[j]));
            }
        }
        assert!(
            closest >= PALETTE_MIN_DELTA_E,
            "closest pair {closest} apart"
        );
        assert!(
            closest_chromatic >= PALETTE_MIN_CHROMATIC_DISTANCE,
            "closest pair {closest_chromatic} apart in a*b*"
        );
    }
}
