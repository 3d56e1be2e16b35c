//! Small things on surfaces: mugs, plates, bowls, bottles, vases, books, laptops and remotes.
//!
//! Owns: each object's proportions. Every function adds one instance resting at a given surface point and
//! returns it. A mug and a vase share glaze colours on purpose (a look-alike pair).
//! Must not: choose where objects go (layouts do) or shade anything.

use super::builder::{Instance, SceneBuilder};
use super::geometry::{v3, Shape, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

/// A glazed ceramic material.
pub fn glaze(colour: Colour) -> Material {
    Material::textured(
        colour,
        Texture::Mottled {
            size: 0.03,
            strength: 0.06,
        },
    )
}

/// A mug: a cylinder with a handle, standing at `base`.
pub fn mug(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("mug", support)?;
    builder.cylinder(instance, base, 0.042, 0.1, glaze(colour));
    builder.cylinder(
        instance,
        base + v3(0.0, 0.092, 0.0),
        0.036,
        0.0085,
        Material::plain(rgb(60, 40, 28)),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.055, 0.0) + yaw.apply(v3(0.052, 0.0, 0.0)),
        v3(0.012, 0.03, 0.008),
        yaw,
        glaze(colour),
    );
    Ok(instance)
}

/// A vase: a rounded body and a neck, in the same glazes as mugs, optionally with a few stems.
pub fn vase(
    builder: &SceneBuilder,
    base: Vec3,
    height: f64,
    colour: Colour,
    flowers: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("vase", support)?;
    let body = height * 0.36;
    builder.ellipsoid(
        instance,
        base + v3(0.0, body, 0.0),
        v3(body * 0.75, body, body * 0.75),
        Yaw::NONE,
        glaze(colour),
    );
    builder.cylinder(
        instance,
        base + v3(0.0, body * 1.5, 0.0),
        body * 0.32,
        height - body * 1.5,
        glaze(colour),
    );
    if flowers {
        let petals = [rgb(220, 70, 80), rgb(245, 200, 60), rgb(240, 240, 235)];
        for (index, (dx, dz)) in [(-0.05, 0.0), (0.04, 0.02), (0.0, -0.04)]
            .iter()
            .enumerate()
        {
            let top = base + v3(*dx, height + 0.12 + index as f64 * 0.03, *dz);
            builder.ellipsoid(
                instance,
                top,
                v3(0.035, 0.03, 0.035),
                Yaw::NONE,
                Material::plain(petals[index % petals.len()]),
            );
        }
    }
    Ok(instance)
}

/// A plate lying at `base`.
pub fn plate(
    builder: &SceneBuilder,
    base: Vec3,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("plate", support)?;
    builder.cylinder(instance, base, 0.12, 0.012, glaze(colour));
    builder.cylinder(instance, base, 0.08, 0.0135, glaze(tint(colour, 0.93)));
    Ok(instance)
}

/// A bowl (a squashed ellipsoid whose lower half sinks into the surface) at `base`.
pub fn bowl(
    builder: &SceneBuilder,
    base: Vec3,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("bowl", support)?;
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.0, 0.0),
        v3(0.085, 0.065, 0.085),
        Yaw::NONE,
        glaze(colour),
    );
    builder.cylinder(
        instance,
        base + v3(0.0, 0.05, 0.0),
        0.07,
        0.016,
        Material::plain(tint(colour, 0.75)),
    );
    Ok(instance)
}

/// A bottle: body, shoulder, neck and cap.
pub fn bottle(
    builder: &SceneBuilder,
    base: Vec3,
    height: f64,
    glass: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("bottle", support)?;
    let radius = height * 0.14;
    let body = height * 0.62;
    let material = Material::textured(
        glass,
        Texture::Mottled {
            size: 0.02,
            strength: 0.15,
        },
    );
    builder.cylinder(instance, base, radius, body, material);
    builder.part(
        instance,
        Shape::octagonal_frustum(radius, radius * 0.35, height * 0.16),
        base + v3(0.0, body, 0.0),
        Yaw::NONE,
        material,
    );
    builder.cylinder(
        instance,
        base + v3(0.0, body + height * 0.16, 0.0),
        radius * 0.33,
        height * 0.2,
        material,
    );
    builder.cylinder(
        instance,
        base + v3(0.0, height * 0.96, 0.0),
        radius * 0.36,
        height * 0.05,
        Material::plain(rgb(200, 190, 60)),
    );
    builder.cylinder(
        instance,
        base + v3(0.0, body * 0.35, 0.0),
        radius * 1.01,
        body * 0.3,
        Material::plain(rgb(235, 228, 210)),
    );
    Ok(instance)
}

/// A book standing upright at `base` (spine facing local +z), or lying flat when `lying`.
#[allow(clippy::too_many_arguments)]
pub fn book(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    size: Vec3,
    cover: Colour,
    lying: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("book", support)?;
    let half = if lying {
        v3(size.y * 0.5, size.x * 0.5, size.z * 0.5)
    } else {
        size * 0.5
    };
    builder.cuboid(
        instance,
        base + v3(0.0, half.y, 0.0),
        half,
        yaw,
        Material::textured(
            cover,
            Texture::Mottled {
                size: 0.05,
                strength: 0.1,
            },
        ),
    );
    // Pages show on the side away from the spine.
    builder.cuboid(
        instance,
        base + v3(0.0, half.y, 0.0) + yaw.apply(v3(0.0, 0.0, -0.004)),
        v3(half.x + 0.0008, half.y - 0.006, half.z - 0.002),
        yaw,
        Material::textured(rgb(236, 230, 212), Texture::Pages),
    );
    Ok(instance)
}

/// A row of upright books along local x from `start`; returns the books.
#[allow(clippy::too_many_arguments)]
pub fn book_row(
    builder: &SceneBuilder,
    start: Vec3,
    yaw: Yaw,
    length: f64,
    depth: f64,
    max_height: f64,
    support: Instance,
) -> Result<Vec<Instance>, RenderError> {
    let covers = [
        rgb(150, 40, 40),
        rgb(40, 70, 130),
        rgb(60, 110, 60),
        rgb(200, 160, 50),
        rgb(90, 60, 110),
        rgb(30, 30, 35),
        rgb(190, 100, 40),
        rgb(220, 215, 200),
    ];
    let mut books = Vec::new();
    let mut used = 0.0;
    while used < length {
        let thickness = builder.range(0.02, 0.05);
        if used + thickness > length {
            break;
        }
        let height = builder.range(max_height * 0.7, max_height);
        let cover = covers[builder.below(covers.len() as u32) as usize];
        let centre = start + yaw.apply(v3(used + thickness * 0.5, 0.0, 0.0));
        books.push(book(
            builder,
            centre,
            yaw,
            v3(thickness * 0.5 * 2.0 - 0.002, height, depth),
            cover,
            false,
            Some(support),
        )?);
        used += thickness;
        if builder.chance(0.12) {
            used += builder.range(0.03, 0.1);
        }
    }
    Ok(books)
}

/// An open laptop at `base`, screen at the back (local -z).
pub fn laptop(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("laptop", support)?;
    let shell = Material::textured(
        rgb(150, 152, 158),
        Texture::Mottled {
            size: 0.02,
            strength: 0.05,
        },
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.009, 0.0),
        v3(0.16, 0.009, 0.115),
        yaw,
        shell,
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.0185, 0.0) + yaw.apply(v3(0.0, 0.0, 0.02)),
        v3(0.13, 0.0008, 0.06),
        yaw,
        Material::plain(rgb(45, 45, 50)),
    );
    let lid = Shape::extruded_profile(
        &[
            (-0.115, 0.018),
            (-0.1, 0.018),
            (-0.16, 0.23),
            (-0.175, 0.23),
        ],
        0.16,
    );
    builder.part(instance, lid, base, yaw, shell);
    let screen = Shape::extruded_profile(
        &[
            (-0.099, 0.03),
            (-0.0985, 0.03),
            (-0.155, 0.222),
            (-0.1555, 0.222),
        ],
        0.145,
    );
    builder.part(
        instance,
        screen,
        base + yaw.apply(v3(0.0, 0.0, 0.001)),
        yaw,
        Material::textured(rgb(120, 170, 230), Texture::Picture).glowing(0.6),
    );
    Ok(instance)
}

/// A remote control lying at `base`.
pub fn remote(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("remote", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.011, 0.0),
        v3(0.025, 0.011, 0.085),
        yaw,
        Material::plain(rgb(32, 32, 36)),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.0225, 0.0) + yaw.apply(v3(0.0, 0.0, 0.05)),
        v3(0.008, 0.001, 0.008),
        yaw,
        Material::plain(rgb(190, 40, 40)),
    );
    Ok(instance)
}
