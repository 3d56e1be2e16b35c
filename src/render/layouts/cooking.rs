//! The kitchen and the bathroom of the Juniper Lane flat.
//!
//! Owns: those two layouts. Kitchen: a counter run with a sink and a cooker on the back wall, a white fridge
//! beside a white larder cabinet (cabinet versus fridge), three bottles and crockery on the counter, a small
//! table with chairs and Fig the cat half behind one of them. Bathroom: a vanity counter with a basin,
//! towels, bottles, a laundry heap and a box.
//! Must not: shade or write anything.

use super::super::belongings::{cardboard_box, clothes, plant, towel};
use super::super::builder::SceneBuilder;
use super::super::figures::cat;
use super::super::fittings::{door, fridge, microwave, on_wall, sink, stove, window, Wall};
use super::super::furniture::{
    cabinet, chair, counter_run, hanging_cabinet, painted, table, wall_shelf, wood, Spot,
};
use super::super::geometry::{v3, Yaw};
use super::super::material::{rgb, Material, Texture};
use super::super::objects::{bottle, bowl, mug, plate};
use super::super::RenderError;
use super::{
    choose, tiles, wall_paint, LayoutOutcome, GLAZE_COLOURS, SKY, WALL_COLOURS, WOOD_COLOURS,
};

/// The kitchen.
pub fn kitchen(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let facing_room = Yaw::facing(0.0, -1.0);
    let cabinet_colour = choose(
        builder,
        &[rgb(120, 150, 140), rgb(230, 228, 220), rgb(70, 90, 120)],
    );
    let worktop = Material::textured(
        choose(
            builder,
            &[rgb(200, 196, 188), rgb(60, 60, 64), rgb(170, 140, 100)],
        ),
        Texture::Mottled {
            size: 0.05,
            strength: 0.12,
        },
    );
    // Back wall, left to right: counter, cooker, counter, larder cabinet, fridge.
    let fridge_x = w - 0.34;
    let larder_x = fridge_x - 0.64;
    let right_end = larder_x - 0.32;
    let left_length = 1.0 + builder.range(0.0, 0.3);
    let left_x = -w + left_length * 0.5;
    let stove_x = -w + left_length + 0.3;
    let right_length = (right_end - (stove_x + 0.3)).max(0.6);
    let right_x = stove_x + 0.3 + right_length * 0.5;
    let (left_counter, _, top) = counter_run(
        builder,
        Spot::new(left_x, d - 0.3, facing_room),
        left_length,
        painted(cabinet_colour),
        worktop,
        2,
    )?;
    stove(builder, Spot::new(stove_x, d - 0.31, facing_room), top)?;
    let (right_counter, _, _) = counter_run(
        builder,
        Spot::new(right_x, d - 0.3, facing_room),
        right_length,
        painted(cabinet_colour),
        worktop,
        if right_length > 0.9 { 2 } else { 1 },
    )?;
    let white = rgb(236, 236, 232);
    cabinet(
        builder,
        Spot::new(larder_x, d - 0.31, facing_room),
        v3(0.6, 2.0, 0.6),
        painted(white),
    )?;
    fridge(
        builder,
        Spot::new(fridge_x, d - 0.33, facing_room),
        rgb(232, 233, 230),
    )?;
    sink(
        builder,
        v3(left_x + 0.1, top, d - 0.3),
        facing_room,
        0.5,
        left_counter,
    )?;
    window(builder, Wall::Back, left_x + 0.1, (0.9, 0.8), 1.15, SKY)?;
    towel(
        builder,
        v3(stove_x, top - 0.22, d - 0.6),
        facing_room,
        choose(
            builder,
            &[rgb(200, 60, 60), rgb(240, 240, 236), rgb(90, 140, 200)],
        ),
        false,
        None,
    )?;
    // Three bottles and crockery on the right counter, the microwave at its far end.
    for index in 0..3 {
        let glass = choose(
            builder,
            &[rgb(60, 120, 70), rgb(110, 70, 40), rgb(180, 200, 210)],
        );
        let height = builder.range(0.24, 0.32);
        bottle(
            builder,
            v3(
                right_x - right_length * 0.35 + index as f64 * 0.11,
                top,
                d - 0.42,
            ),
            height,
            glass,
            Some(right_counter),
        )?;
    }
    if right_length > 1.0 {
        microwave(
            builder,
            v3(right_x + right_length * 0.5 - 0.3, top, d - 0.36),
            facing_room,
            right_counter,
        )?;
    } else {
        microwave(
            builder,
            v3(left_x - left_length * 0.5 + 0.3, top, d - 0.36),
            facing_room,
            left_counter,
        )?;
    }
    let glaze = choose(builder, &GLAZE_COLOURS);
    mug(
        builder,
        v3(right_x + right_length * 0.1, top, d - 0.22),
        Yaw::from_half_tangent(0.3),
        glaze,
        Some(right_counter),
    )?;
    plate(
        builder,
        v3(right_x - right_length * 0.05, top, d - 0.2),
        rgb(240, 240, 236),
        Some(right_counter),
    )?;
    bowl(
        builder,
        v3(left_x - 0.3, top, d - 0.35),
        choose(builder, &GLAZE_COLOURS),
        Some(left_counter),
    )?;
    plant(
        builder,
        v3(left_x + 0.42, top, d - 0.42),
        0.3,
        Some(left_counter),
    )?;
    // The little table by the left wall with two chairs; Fig sits behind the far chair.
    let table_z = d * 0.45 + builder.range(-0.2, 0.2);
    let table_x = -w + 0.6;
    let wood_colour = choose(builder, &WOOD_COLOURS);
    let (kitchen_table, table_top) = table(
        builder,
        Spot::new(table_x, table_z, Yaw::NONE),
        v3(0.8, 0.75, 0.8),
        wood(wood_colour),
        None,
    )?;
    mug(
        builder,
        v3(table_x + 0.1, table_top, table_z - 0.15),
        Yaw::NONE,
        glaze,
        Some(kitchen_table),
    )?;
    plate(
        builder,
        v3(table_x - 0.12, table_top, table_z + 0.1),
        rgb(240, 240, 236),
        Some(kitchen_table),
    )?;
    chair(
        builder,
        Spot::new(table_x + 0.6, table_z, Yaw::facing(-1.0, 0.0)),
        wood(wood_colour),
        None,
    )?;
    chair(
        builder,
        Spot::new(table_x, table_z + 0.62, Yaw::facing(0.0, -1.0)),
        wood(wood_colour),
        None,
    )?;
    cat(
        builder,
        v3(table_x + 0.1, 0.0, table_z + 0.98),
        Yaw::facing(1.0, -0.6),
        rgb(120, 120, 118),
        false,
        None,
    )?;
    door(
        builder,
        Wall::Right,
        d * 0.35,
        choose(builder, &WOOD_COLOURS),
    )?;
    Ok(LayoutOutcome {
        floor: tiles(
            choose(
                builder,
                &[rgb(200, 190, 170), rgb(150, 150, 150), rgb(210, 205, 200)],
            ),
            0.3,
        ),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Kitchen: worktops with a sink and a cooker, a white larder cabinet beside the white \
                      fridge, three bottles on the counter, and Fig the cat behind a chair at the little table."
            .to_string(),
        look_towards: 0.0,
    })
}

/// The bathroom.
pub fn bathroom(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let facing_room = Yaw::facing(0.0, -1.0);
    let length = 1.2 + builder.range(0.0, 0.3);
    let counter_x = -w + length * 0.5 + builder.range(0.0, 0.3);
    let (counter, _, top) = counter_run(
        builder,
        Spot::new(counter_x, d - 0.3, facing_room),
        length,
        painted(choose(
            builder,
            &[rgb(240, 240, 236), rgb(110, 130, 150), rgb(170, 130, 95)],
        )),
        Material::textured(
            rgb(226, 224, 218),
            Texture::Mottled {
                size: 0.04,
                strength: 0.08,
            },
        ),
        2,
    )?;
    sink(
        builder,
        v3(counter_x, top, d - 0.3),
        facing_room,
        0.5,
        counter,
    )?;
    for index in 0..2 + builder.below(2) {
        let glass = choose(
            builder,
            &[rgb(230, 120, 150), rgb(90, 160, 200), rgb(240, 240, 240)],
        );
        bottle(
            builder,
            v3(counter_x + 0.35 + index as f64 * 0.09, top, d - 0.45),
            builder.range(0.16, 0.22),
            glass,
            Some(counter),
        )?;
    }
    let towel_colour = choose(
        builder,
        &[rgb(240, 240, 236), rgb(120, 170, 190), rgb(200, 100, 80)],
    );
    towel(
        builder,
        v3(counter_x - 0.35, top, d - 0.38),
        facing_room,
        towel_colour,
        true,
        Some(counter),
    )?;
    // A wall cabinet above the basin and a bath towel on the right wall.
    hanging_cabinet(
        builder,
        Spot::new(counter_x - length * 0.3, d - 0.1, facing_room),
        v3(0.45, 0.6, 0.2),
        painted(rgb(240, 240, 236)),
        1.45,
    )?;
    let (hook, hook_yaw) = on_wall(builder, Wall::Right, d * 0.55, 1.25, 0.02);
    towel(builder, hook, hook_yaw, towel_colour, false, None)?;
    window(builder, Wall::Back, w - 0.55, (0.6, 0.6), 1.4, SKY)?;
    door(builder, Wall::Left, d * 0.3, rgb(235, 232, 225))?;
    clothes(
        builder,
        v3(w - 0.6, 0.0, d * 0.45),
        0.2,
        &[rgb(60, 80, 140), rgb(200, 200, 190), rgb(150, 60, 60)],
        None,
    )?;
    cardboard_box(
        builder,
        v3(w - 0.35, 0.0, d - 0.35),
        Yaw::from_half_tangent(0.1),
        v3(0.18, 0.14, 0.15),
        None,
    )?;
    let (centre, yaw) = on_wall(builder, Wall::Right, d * 0.8, 1.5, 0.1);
    let (shelf, shelf_top) = wall_shelf(
        builder,
        centre,
        0.5,
        0.2,
        yaw,
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    let (shelf_point, _) = on_wall(builder, Wall::Right, d * 0.8, shelf_top, 0.1);
    bottle(builder, shelf_point, 0.18, rgb(200, 220, 230), Some(shelf))?;
    Ok(LayoutOutcome {
        floor: tiles(
            choose(builder, &[rgb(220, 220, 215), rgb(120, 130, 140)]),
            0.2,
        ),
        wall: tiles(
            choose(builder, &[rgb(225, 235, 235), rgb(240, 238, 230)]),
            0.15,
        ),
        description:
            "Bathroom: a basin in a vanity counter with bottles and a folded towel, a bath towel \
                      on the wall, Teodor's laundry on the floor and a box in the corner."
                .to_string(),
        look_towards: 0.1,
    })
}
