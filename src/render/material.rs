//! Surface appearance: base colours, procedural textures and value noise.
//!
//! Owns: `Material` (albedo, texture, glow) and `Texture`, evaluated at a point of an object's local frame.
//! Textures are built from lattice value noise, stripes and grids using plain arithmetic only.
//! Must not: know about classes, lights or rays; lighting is `shade`'s job.

use super::geometry::Vec3;
use super::random::lattice_hash;

/// A linear-ish RGB colour with channels in 0..1.
pub type Colour = [f64; 3];

/// How a surface's colour varies over it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Texture {
    /// One flat colour.
    Plain,
    /// Soft blotches: value noise with this feature size in metres and strength (0..1).
    Mottled { size: f64, strength: f64 },
    /// Wood: grain lines along local z, `spacing` metres apart.
    Wood { spacing: f64 },
    /// Floor boards along z, `width` metres wide, with seams and grain.
    Planks { width: f64 },
    /// Square tiles of `size` metres with grout of `grout` colour.
    Tiles { size: f64, grout: Colour },
    /// Stripes across local x, `period` metres, alternating with `other`.
    Stripes { period: f64, other: Colour },
    /// A woven look: fine cross-hatch plus soft noise.
    Fabric,
    /// Fur with darker tabby bands of `other`.
    Fur { other: Colour },
    /// Leaves: strong, small-scale green variation.
    Leaves,
    /// A view out of a window: sky gradient with clouds (usually glowing).
    Sky,
    /// A programme on a screen: bright soft blobs (usually glowing).
    Picture,
    /// Book pages seen from the side: fine horizontal lines.
    Pages,
    /// A rug: a border band of `other` and a faint inner pattern.
    RugBorder {
        other: Colour,
        half_width: f64,
        half_depth: f64,
    },
}

/// The look of one part.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Material {
    pub albedo: Colour,
    pub texture: Texture,
    /// Light the surface gives off itself (0 = none, 1 = as bright as its albedo).
    pub glow: f64,
    /// A seed so two objects of the same material are not textured identically.
    pub pattern_seed: u64,
}

impl Material {
    /// A plain, matte material.
    pub fn plain(albedo: Colour) -> Material {
        Material {
            albedo,
            texture: Texture::Plain,
            glow: 0.0,
            pattern_seed: 0,
        }
    }

    /// A matte material with a texture.
    pub fn textured(albedo: Colour, texture: Texture) -> Material {
        Material {
            albedo,
            texture,
            glow: 0.0,
            pattern_seed: 0,
        }
    }

    /// The same material giving off light.
    pub fn glowing(mut self, glow: f64) -> Material {
        self.glow = glow;
        self
    }

    /// The same material with another pattern seed.
    pub fn seeded(mut self, seed: u64) -> Material {
        self.pattern_seed = seed;
        self
    }

    /// The surface colour at `point` (local frame, metres) whose local normal is `normal`.
    pub fn colour_at(&self, point: Vec3, normal: Vec3) -> Colour {
        let seed = self.pattern_seed;
        let base = self.albedo;
        match self.texture {
            Texture::Plain => base,
            Texture::Mottled { size, strength } => {
                let n = value_noise(point * (1.0 / size), seed);
                tint(base, 1.0 + strength * (n - 0.5))
            }
            Texture::Wood { spacing } => {
                let warp = value_noise(v3s(point.x * 3.0, point.y * 3.0, point.z * 0.6), seed);
                let line = fraction((point.x + point.y) / spacing + warp * 2.5);
                let dark = if line < 0.18 { 0.86 } else { 1.0 };
                tint(base, dark * (0.94 + 0.12 * warp))
            }
            Texture::Planks { width } => {
                let board = floor_div(point.x, width);
                let along = point.z + lattice_hash(board, 0, 0, seed) * 3.0;
                let board_length = 1.4;
                let joint = floor_div(along, board_length);
                let shade = 0.88 + 0.2 * lattice_hash(board, joint, 1, seed);
                let across = fraction(point.x / width);
                let end = fraction(along / board_length);
                let seam = if !(0.025..=0.975).contains(&across) || end < 0.006 {
                    0.62
                } else {
                    1.0
                };
                let grain = value_noise(v3s(point.x * 40.0, 0.0, point.z * 2.0), seed ^ 7);
                tint(base, shade * seam * (0.93 + 0.14 * grain))
            }
            Texture::Tiles { size, grout } => {
                let (u, v) = plane_coordinates(point, normal);
                let fu = fraction(u / size);
                let fv = fraction(v / size);
                let margin = 0.035;
                if fu < margin || fv < margin {
                    grout
                } else {
                    let tile = lattice_hash(floor_div(u, size), floor_div(v, size), 3, seed);
                    tint(base, 0.95 + 0.08 * tile)
                }
            }
            Texture::Stripes { period, other } => {
                let phase = fraction(point.x / period);
                let colour = if phase < 0.5 { base } else { other };
                let n = value_noise(point * 25.0, seed);
                tint(colour, 0.94 + 0.1 * n)
            }
            Texture::Fabric => {
                let (u, v) = plane_coordinates(point, normal);
                let weave = (fraction(u * 180.0) - 0.5).abs() + (fraction(v * 180.0) - 0.5).abs();
                let n = value_noise(point * 8.0, seed);
                tint(base, 0.92 + 0.08 * weave + 0.1 * (n - 0.5))
            }
            Texture::Fur { other } => {
                let band = value_noise(v3s(point.x * 14.0, point.y * 3.0, point.z * 3.0), seed);
                let fine = value_noise(point * 90.0, seed ^ 11);
                let colour = if band > 0.62 { other } else { base };
                tint(colour, 0.88 + 0.2 * fine)
            }
            Texture::Leaves => {
                let n = value_noise(point * 30.0, seed);
                let m = value_noise(point * 9.0, seed ^ 5);
                tint(base, 0.55 + 0.7 * n * m + 0.2 * m)
            }
            Texture::Sky => {
                let height = point.y;
                let horizon = [0.86, 0.9, 0.93];
                let cloud = value_noise(v3s(point.x * 2.5, point.y * 5.0, 0.0), seed);
                let mix = (height * 0.6 + 0.5).clamp(0.0, 1.0);
                let mut colour = blend(horizon, base, mix);
                if cloud > 0.6 {
                    colour = blend(colour, [0.97, 0.97, 0.98], (cloud - 0.6) * 2.0);
                }
                colour
            }
            Texture::Picture => {
                let a = value_noise(v3s(point.x * 4.0, point.y * 4.0, 0.0), seed);
                let b = value_noise(v3s(point.x * 3.0, point.y * 5.0, 9.0), seed ^ 3);
                [
                    base[0] * (0.4 + 0.8 * a),
                    base[1] * (0.5 + 0.7 * b),
                    base[2] * (0.3 + 0.9 * (1.0 - a)),
                ]
            }
            Texture::Pages => {
                let line = fraction(point.y * 260.0);
                tint(base, if line < 0.3 { 0.85 } else { 1.0 })
            }
            Texture::RugBorder {
                other,
                half_width,
                half_depth,
            } => {
                let border = 0.12;
                let inner =
                    point.x.abs() < half_width - border && point.z.abs() < half_depth - border;
                let n = value_noise(point * 40.0, seed);
                if inner {
                    let motif = fraction((point.x + point.z) * 6.0) < 0.5;
                    tint(base, if motif { 0.95 } else { 1.03 } * (0.95 + 0.1 * n))
                } else {
                    tint(other, 0.93 + 0.14 * n)
                }
            }
        }
    }
}

fn v3s(x: f64, y: f64, z: f64) -> Vec3 {
    Vec3 { x, y, z }
}

/// Multiplies every channel by `factor`.
pub fn tint(colour: Colour, factor: f64) -> Colour {
    [colour[0] * factor, colour[1] * factor, colour[2] * factor]
}

/// Linear blend from `a` (at 0) to `b` (at 1).
pub fn blend(a: Colour, b: Colour, amount: f64) -> Colour {
    let amount = amount.clamp(0.0, 1.0);
    [
        a[0] + (b[0] - a[0]) * amount,
        a[1] + (b[1] - a[1]) * amount,
        a[2] + (b[2] - a[2]) * amount,
    ]
}

/// A colour from 0..255 sRGB-style integers.
pub fn rgb(red: u8, green: u8, blue: u8) -> Colour {
    [
        red as f64 / 255.0,
        green as f64 / 255.0,
        blue as f64 / 255.0,
    ]
}

fn fraction(value: f64) -> f64 {
    value - value.floor()
}

fn floor_div(value: f64, size: f64) -> i64 {
    (value / size).floor() as i64
}

/// The two in-plane coordinates of a point on a face with this normal.
fn plane_coordinates(point: Vec3, normal: Vec3) -> (f64, f64) {
    let (ax, ay, az) = (normal.x.abs(), normal.y.abs(), normal.z.abs());
    if ay >= ax && ay >= az {
        (point.x, point.z)
    } else if ax >= az {
        (point.z, point.y)
    } else {
        (point.x, point.y)
    }
}

/// Smooth value noise in 0..1 with unit feature size.
pub fn value_noise(point: Vec3, seed: u64) -> f64 {
    let (x0, y0, z0) = (point.x.floor(), point.y.floor(), point.z.floor());
    let smooth = |t: f64| t * t * (3.0 - 2.0 * t);
    let (tx, ty, tz) = (
        smooth(point.x - x0),
        smooth(point.y - y0),
        smooth(point.z - z0),
    );
    let (ix, iy, iz) = (x0 as i64, y0 as i64, z0 as i64);
    let corner = |dx: i64, dy: i64, dz: i64| lattice_hash(ix + dx, iy + dy, iz + dz, seed);
    let lerp = |a: f64, b: f64, t: f64| a + (b - a) * t;
    let x00 = lerp(corner(0, 0, 0), corner(1, 0, 0), tx);
    let x10 = lerp(corner(0, 1, 0), corner(1, 1, 0), tx);
    let x01 = lerp(corner(0, 0, 1), corner(1, 0, 1), tx);
    let x11 = lerp(corner(0, 1, 1), corner(1, 1, 1), tx);
    lerp(lerp(x00, x10, ty), lerp(x01, x11, ty), tz)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn value_noise_is_continuous_and_bounded() {
        let mut previous = value_noise(v3s(0.0, 0.3, 0.7), 5);
        for step in 1..2000 {
            let x = step as f64 * 0.001;
            let value = value_noise(v3s(x, 0.3, 0.7), 5);
            assert!((0.0..=1.0).contains(&value));
            assert!((value - previous).abs() < 0.01, "jump at {x}");
            previous = value;
        }
    }

    #[test]
    fn tiles_show_grout_on_the_grid_lines() {
        let grout = [0.1, 0.1, 0.1];
        let material = Material::textured([0.9, 0.9, 0.9], Texture::Tiles { size: 0.3, grout });
        let up = v3s(0.0, 1.0, 0.0);
        assert_eq!(material.colour_at(v3s(0.301, 0.0, 0.15), up), grout);
        assert_ne!(material.colour_at(v3s(0.15, 0.0, 0.15), up), grout);
    }
}
