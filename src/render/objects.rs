//! Small household objects built from solids: mugs, plates, bowls, bottles, vases, books, laptops, remotes,
//! boxes, bags, shoes, clothes, pillows, blankets, plants, toys and towels.
//!
//! Owns: each object's proportions. Every function adds one instance resting at a given surface point and
//! returns it. Look-alikes are deliberate: a mug and a vase share glaze colours, a pillow is close in size and
//! colour to a curled cat.
//! Must not: choose where objects go (layouts do) or shade anything.

use super::builder::{Instance, SceneBuilder};
use super::furniture::{fabric, painted};
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

/// A cardboard box with a tape strip standing at `base`.
pub fn cardboard_box(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    half: Vec3,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("box", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, half.y, 0.0),
        half,
        yaw,
        Material::textured(
            rgb(176, 138, 92),
            Texture::Mottled {
                size: 0.06,
                strength: 0.12,
            },
        ),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, half.y * 2.0 + 0.001, 0.0),
        v3(0.03, 0.001, half.z + 0.001),
        yaw,
        Material::plain(rgb(200, 180, 130)),
    );
    Ok(instance)
}

/// A soft bag with a strap, standing at `base`.
pub fn bag(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("bag", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.15, 0.0),
        v3(0.18, 0.15, 0.08),
        yaw,
        fabric(colour),
    );
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.3, 0.0),
        v3(0.18, 0.05, 0.08),
        yaw,
        fabric(colour),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.4, 0.0),
        v3(0.1, 0.012, 0.012),
        yaw,
        Material::plain(tint(colour, 0.6)),
    );
    for side in [-1.0, 1.0] {
        builder.cuboid(
            instance,
            base + v3(0.0, 0.36, 0.0) + yaw.apply(v3(side * 0.1, 0.0, 0.0)),
            v3(0.012, 0.05, 0.012),
            yaw,
            Material::plain(tint(colour, 0.6)),
        );
    }
    Ok(instance)
}

/// One shoe at `base`, toe towards local +z.
pub fn shoe(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("shoe", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.012, 0.0),
        v3(0.045, 0.012, 0.135),
        yaw,
        Material::plain(rgb(235, 232, 225)),
    );
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.03, 0.0),
        v3(0.045, 0.05, 0.13),
        yaw,
        Material::textured(
            colour,
            Texture::Mottled {
                size: 0.03,
                strength: 0.12,
            },
        ),
    );
    Ok(instance)
}

/// A pair of shoes side by side at `base`.
pub fn shoe_pair(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<[Instance; 2], RenderError> {
    let left = shoe(
        builder,
        base + yaw.apply(v3(-0.06, 0.0, 0.0)),
        yaw,
        colour,
        support,
    )?;
    let right = shoe(
        builder,
        base + yaw.apply(v3(0.06, 0.0, 0.01)),
        yaw,
        colour,
        support,
    )?;
    Ok([left, right])
}

/// A heap of clothes: several flattened, overlapping blobs in a few fabric colours.
pub fn clothes(
    builder: &SceneBuilder,
    base: Vec3,
    spread: f64,
    colours: &[Colour],
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("clothes", support)?;
    let count = 4 + builder.below(3);
    for index in 0..count {
        let dx = builder.range(-spread, spread);
        let dz = builder.range(-spread * 0.6, spread * 0.6);
        let colour = colours
            .get(index as usize % colours.len().max(1))
            .copied()
            .unwrap_or(rgb(90, 90, 120));
        let yaw = Yaw::from_half_tangent(builder.range(-0.6, 0.6));
        builder.ellipsoid(
            instance,
            base + v3(dx, 0.025 + index as f64 * 0.012, dz),
            v3(spread * 0.7, 0.035, spread * 0.45),
            yaw,
            fabric(colour),
        );
    }
    Ok(instance)
}

/// A pillow (a flattened ellipsoid) lying at `base`, or leaning when `upright`.
pub fn pillow(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    upright: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("pillow", support)?;
    let radii = if upright {
        v3(0.22, 0.2, 0.07)
    } else {
        v3(0.3, 0.07, 0.2)
    };
    builder.ellipsoid(
        instance,
        base + v3(0.0, radii.y * 0.9, 0.0),
        radii,
        yaw,
        fabric(colour),
    );
    Ok(instance)
}

/// A blanket: a thin slab over a surface of `half` size centred at `base`, hanging a little over its sides.
pub fn blanket(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    half: Vec3,
    colour: Colour,
    stripe: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("blanket", support)?;
    let material = Material::textured(
        colour,
        Texture::Stripes {
            period: 0.16,
            other: stripe,
        },
    );
    builder.cuboid(instance, base + v3(0.0, half.y, 0.0), half, yaw, material);
    for side in [-1.0, 1.0] {
        builder.cuboid(
            instance,
            base + v3(0.0, half.y - 0.12, 0.0) + yaw.apply(v3(side * (half.x + 0.01), 0.0, 0.0)),
            v3(0.012, 0.13, half.z),
            yaw,
            material,
        );
    }
    Ok(instance)
}

/// A potted plant: a pot and a few clumps of leaves; `height` overall.
pub fn plant(
    builder: &SceneBuilder,
    base: Vec3,
    height: f64,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("plant", support)?;
    let pot = height * 0.3;
    builder.part(
        instance,
        Shape::octagonal_frustum(pot * 0.45, pot * 0.6, pot),
        base,
        Yaw::NONE,
        painted(rgb(180, 95, 60)),
    );
    let leaves = Material::textured(rgb(70, 130, 60), Texture::Leaves);
    let clumps = [
        (0.0, 0.62, 0.0, 0.42),
        (-0.12, 0.55, 0.05, 0.3),
        (0.12, 0.58, -0.04, 0.32),
        (0.02, 0.8, 0.03, 0.28),
    ];
    for (dx, dy, dz, r) in clumps {
        builder.ellipsoid(
            instance,
            base + v3(dx * height, dy * height, dz * height),
            v3(r * height * 0.7, r * height * 0.6, r * height * 0.7),
            Yaw::NONE,
            leaves,
        );
    }
    Ok(instance)
}

/// A toy: a bright ball, or a little teddy bear of ellipsoids when `bear`.
pub fn toy(
    builder: &SceneBuilder,
    base: Vec3,
    bear: bool,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("toy", support)?;
    if bear {
        let fur = Material::textured(colour, Texture::Fabric);
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.09, 0.0),
            v3(0.08, 0.09, 0.07),
            Yaw::NONE,
            fur,
        );
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.22, 0.0),
            v3(0.06, 0.06, 0.06),
            Yaw::NONE,
            fur,
        );
        for side in [-1.0, 1.0] {
            builder.ellipsoid(
                instance,
                base + v3(side * 0.045, 0.28, 0.0),
                v3(0.022, 0.022, 0.015),
                Yaw::NONE,
                fur,
            );
            builder.ellipsoid(
                instance,
                base + v3(side * 0.06, 0.03, 0.05),
                v3(0.03, 0.03, 0.04),
                Yaw::NONE,
                fur,
            );
        }
    } else {
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.1, 0.0),
            v3(0.1, 0.1, 0.1),
            Yaw::NONE,
            Material::textured(
                colour,
                Texture::Stripes {
                    period: 0.06,
                    other: rgb(245, 240, 230),
                },
            ),
        );
    }
    Ok(instance)
}

/// A towel hanging flat against a wall-facing frame at `centre`, or folded on a surface when `folded`.
pub fn towel(
    builder: &SceneBuilder,
    centre: Vec3,
    yaw: Yaw,
    colour: Colour,
    folded: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("towel", support)?;
    let material = Material::textured(
        colour,
        Texture::Stripes {
            period: 0.05,
            other: tint(colour, 0.8),
        },
    );
    if folded {
        builder.cuboid(
            instance,
            centre + v3(0.0, 0.03, 0.0),
            v3(0.16, 0.03, 0.11),
            yaw,
            material,
        );
    } else {
        builder.cuboid(instance, centre, v3(0.22, 0.3, 0.015), yaw, material);
        builder.cylinder(
            instance,
            centre + v3(0.0, 0.3, 0.0) - v3(0.0, 0.0, 0.0),
            0.012,
            0.012,
            Material::plain(rgb(170, 170, 175)),
        );
    }
    Ok(instance)
}
