//! The living room and the dining room of the Juniper Lane flat.
//!
//! Owns: those two layouts. Living room: a sofa with pillows and Bramble the dog curled up among them
//! (pillow versus pet), a television showing a sky beside a real window (tv versus window), a rug close to the
//! floorboards in colour (rug versus floor), a bookcase of books, a mug and a vase in the same glaze (mug versus
//! vase), a remote and a laptop on the coffee table, and a chair with Fig behind it. Dining room: a table with
//! four to six chairs, place settings, bottles, a vase of flowers, a box under the table and someone standing.
//! Must not: shade or write anything.

use super::super::belongings::{blanket, cardboard_box, pillow, plant, toy};
use super::super::builder::SceneBuilder;
use super::super::figures::{cat, dog, person, Outfit, Pose};
use super::super::fittings::{door, lamp, on_wall, rug, television, window, Wall};
use super::super::furniture::{bookcase, cabinet, chair, fabric, sofa, table, wood, Spot};
use super::super::geometry::{v3, Yaw};
use super::super::material::{rgb, tint};
use super::super::objects::{book, book_row, bottle, bowl, laptop, mug, plate, remote, vase};
use super::super::RenderError;
use super::{
    choose, floorboards, wall_paint, LayoutOutcome, GLAZE_COLOURS, SKY, WALL_COLOURS, WOOD_COLOURS,
};

/// The living room.
pub fn living_room(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let floor_colour = choose(builder, &WOOD_COLOURS);
    let towards_right = Yaw::facing(1.0, 0.0);
    let sofa_z = d * 0.6 + builder.range(-0.15, 0.15);
    let sofa_spot = Spot::new(-w + 0.46, sofa_z, towards_right);
    let sofa_colour = choose(
        builder,
        &[rgb(90, 110, 140), rgb(150, 120, 100), rgb(110, 130, 100)],
    );
    let (the_sofa, seat) = sofa(builder, sofa_spot, 2.0, fabric(sofa_colour))?;
    // Pillows against the back cushion, and Bramble curled up in a pillow-like heap.
    let pillow_colour = choose(
        builder,
        &[rgb(190, 150, 100), rgb(200, 190, 170), rgb(170, 90, 70)],
    );
    for offset in [-0.7, 0.7] {
        pillow(
            builder,
            sofa_spot.at(v3(offset, seat, -0.22)),
            towards_right,
            pillow_colour,
            true,
            Some(the_sofa),
        )?;
    }
    let seated_on_left = builder.chance(0.5);
    let (dog_offset, person_offset) = if seated_on_left {
        (0.35, -0.25)
    } else {
        (-0.3, 0.3)
    };
    dog(
        builder,
        sofa_spot.at(v3(dog_offset, seat, 0.05)),
        towards_right,
        tint(pillow_colour, 0.95),
        true,
        Some(the_sofa),
    )?;
    person(
        builder,
        Spot::new(
            sofa_spot.at(v3(person_offset, 0.0, 0.0)).x,
            sofa_spot.at(v3(person_offset, 0.0, 0.0)).z,
            towards_right,
        ),
        Pose::Seated {
            seat_millimetres: (seat * 1000.0) as u32,
        },
        Outfit {
            top: choose(
                builder,
                &[rgb(180, 60, 60), rgb(60, 120, 90), rgb(230, 200, 80)],
            ),
            trousers: rgb(50, 60, 90),
            skin: choose(
                builder,
                &[rgb(200, 160, 130), rgb(140, 95, 70), rgb(230, 195, 170)],
            ),
            hair: rgb(40, 30, 25),
        },
        Some(the_sofa),
    )?;
    blanket(
        builder,
        sofa_spot.at(v3(-0.92, 0.66, 0.0)),
        towards_right,
        v3(0.09, 0.01, 0.42),
        rgb(200, 180, 140),
        rgb(150, 70, 60),
        Some(the_sofa),
    )?;
    // Rug close to the floor colour, coffee table on it.
    let table_x = -w + 1.55;
    let rug_instance = rug(
        builder,
        Spot::new(table_x, sofa_z, towards_right),
        1.1,
        0.75,
        tint(floor_colour, 1.08),
        tint(floor_colour, 0.85),
    )?;
    let (coffee_table, top) = table(
        builder,
        Spot::new(table_x, sofa_z, towards_right),
        v3(1.0, 0.42, 0.55),
        wood(choose(builder, &WOOD_COLOURS)),
        Some(rug_instance),
    )?;
    let glaze = choose(builder, &GLAZE_COLOURS);
    mug(
        builder,
        v3(table_x - 0.12, top, sofa_z + 0.3),
        Yaw::NONE,
        glaze,
        Some(coffee_table),
    )?;
    remote(
        builder,
        v3(table_x + 0.1, top, sofa_z - 0.05),
        Yaw::from_half_tangent(0.4),
        Some(coffee_table),
    )?;
    laptop(
        builder,
        v3(table_x, top, sofa_z - 0.28),
        Yaw::facing(-1.0, 0.0),
        Some(coffee_table),
    )?;
    toy(
        builder,
        v3(table_x + 0.55, 0.008, sofa_z + 0.55),
        false,
        rgb(220, 60, 50),
        Some(rug_instance),
    )?;
    // Television on a low cabinet by the back wall, showing a sky; a real window on the back wall.
    let stand = cabinet(
        builder,
        Spot::new(w - 0.65, d - 0.21, Yaw::facing(0.0, -1.0)),
        v3(1.0, 0.5, 0.4),
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    let (screen_centre, screen_yaw) =
        on_wall(builder, Wall::Back, w - 0.65, 0.5 + 0.06 + 0.3, 0.22);
    television(builder, screen_centre, screen_yaw, 0.9, Some(stand), SKY)?;
    window(builder, Wall::Back, -w + 1.05, (0.8, 1.1), 0.9, SKY)?;
    // Bookcase on the back wall with rows of books and a vase in the mug's glaze on top.
    let case_x = builder.range(-0.05, 0.05);
    let (case, levels) = bookcase(
        builder,
        Spot::new(case_x, d - 0.17, Yaw::facing(0.0, -1.0)),
        v3(0.9, 1.8, 0.32),
        4,
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    let row_yaw = Yaw::facing(0.0, -1.0);
    for level in levels.iter().take(3) {
        let fill = builder.range(0.45, 0.8);
        book_row(
            builder,
            v3(case_x + 0.4, *level, d - 0.19),
            row_yaw,
            fill,
            0.22,
            0.3,
            case,
        )?;
    }
    if let Some(level) = levels.get(3) {
        vase(
            builder,
            v3(case_x - 0.2, *level, d - 0.2),
            0.25,
            glaze,
            false,
            Some(case),
        )?;
        book(
            builder,
            v3(case_x + 0.2, *level, d - 0.2),
            row_yaw,
            v3(0.03, 0.22, 0.16),
            rgb(40, 70, 130),
            true,
            Some(case),
        )?;
    }
    lamp(
        builder,
        v3(-w + 0.3, 0.0, d - 0.3),
        1.6,
        rgb(240, 220, 180),
        None,
    )?;
    plant(builder, v3(w - 0.3, 0.0, d - 1.55), 0.9, None)?;
    // A wooden chair near the bookcase with Fig sitting behind it.
    let chair_x = case_x + 0.95;
    chair(
        builder,
        Spot::new(chair_x, d - 1.0, Yaw::facing(-0.5, -1.0)),
        wood(choose(builder, &WOOD_COLOURS)),
        None,
    )?;
    cat(
        builder,
        v3(chair_x + 0.05, 0.0, d - 0.62),
        Yaw::facing(-1.0, -0.3),
        rgb(120, 120, 118),
        false,
        None,
    )?;
    door(builder, Wall::Right, 0.9, rgb(235, 232, 225))?;
    Ok(LayoutOutcome {
        floor: floorboards(floor_colour),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Living room: Wren on the sofa beside Bramble curled up among the pillows, a television showing a sky across from a real window, a rug almost the colour of the floor, a mug and a vase in the same glaze, and Fig behind a chair.".to_string(),
        look_towards: -0.15,
    })
}

/// The dining room.
pub fn dining_room(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let floor_colour = choose(builder, &WOOD_COLOURS);
    let table_z = d * 0.55 + builder.range(-0.15, 0.15);
    let table_x = builder.range(-0.3, 0.3);
    let rug_instance = rug(
        builder,
        Spot::new(table_x, table_z, Yaw::NONE),
        1.35,
        1.05,
        choose(
            builder,
            &[rgb(150, 60, 50), rgb(60, 80, 110), tint(floor_colour, 1.1)],
        ),
        rgb(210, 190, 150),
    )?;
    let wood_colour = choose(builder, &WOOD_COLOURS);
    let (dining_table, top) = table(
        builder,
        Spot::new(table_x, table_z, Yaw::NONE),
        v3(1.6, 0.75, 0.9),
        wood(wood_colour),
        Some(rug_instance),
    )?;
    // Chairs: two on each long side, sometimes one at each end too.
    let chair_material = wood(tint(wood_colour, 0.9));
    for sx in [-0.4, 0.4] {
        for (sz, facing) in [(-0.68, 1.0), (0.68, -1.0)] {
            chair(
                builder,
                Spot::new(table_x + sx, table_z + sz, Yaw::facing(0.0, facing)),
                chair_material,
                Some(rug_instance),
            )?;
        }
    }
    if builder.chance(0.6) {
        for (sx, facing) in [(-1.05, 1.0), (1.05, -1.0)] {
            chair(
                builder,
                Spot::new(table_x + sx, table_z, Yaw::facing(facing, 0.0)),
                chair_material,
                Some(rug_instance),
            )?;
        }
    }
    // Place settings, bottles and a vase of flowers in a mug glaze.
    let glaze = choose(builder, &GLAZE_COLOURS);
    for sx in [-0.4, 0.4] {
        for sz in [-0.27, 0.27] {
            plate(
                builder,
                v3(table_x + sx, top, table_z + sz),
                rgb(242, 240, 234),
                Some(dining_table),
            )?;
        }
    }
    bowl(
        builder,
        v3(table_x - 0.4, top + 0.012, table_z - 0.27),
        glaze,
        Some(dining_table),
    )?;
    mug(
        builder,
        v3(table_x + 0.6, top, table_z + 0.15),
        Yaw::NONE,
        glaze,
        Some(dining_table),
    )?;
    mug(
        builder,
        v3(table_x - 0.62, top, table_z + 0.12),
        Yaw::from_half_tangent(0.5),
        glaze,
        Some(dining_table),
    )?;
    for index in 0..2 + builder.below(2) {
        bottle(
            builder,
            v3(table_x + 0.12 + index as f64 * 0.1, top, table_z + 0.02),
            builder.range(0.26, 0.32),
            choose(
                builder,
                &[rgb(60, 120, 70), rgb(110, 40, 50), rgb(180, 200, 210)],
            ),
            Some(dining_table),
        )?;
    }
    vase(
        builder,
        v3(table_x - 0.15, top, table_z),
        0.2,
        glaze,
        true,
        Some(dining_table),
    )?;
    cardboard_box(
        builder,
        v3(table_x + 0.25, 0.008, table_z + 0.05),
        Yaw::from_half_tangent(0.2),
        v3(0.2, 0.16, 0.16),
        Some(rug_instance),
    )?;
    // A sideboard on the back wall with a lamp, a bowl and a plant beside it.
    let sideboard_x = builder.range(-0.4, 0.4);
    let sideboard = cabinet(
        builder,
        Spot::new(sideboard_x, d - 0.23, Yaw::facing(0.0, -1.0)),
        v3(1.5, 0.85, 0.45),
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    lamp(
        builder,
        v3(sideboard_x - 0.5, 0.85, d - 0.25),
        0.5,
        rgb(240, 230, 200),
        Some(sideboard),
    )?;
    bowl(
        builder,
        v3(sideboard_x + 0.3, 0.85, d - 0.25),
        rgb(230, 180, 60),
        Some(sideboard),
    )?;
    plant(builder, v3(-w + 0.35, 0.0, d - 0.35), 1.1, None)?;
    window(builder, Wall::Left, d * 0.55, (1.2, 1.2), 0.85, SKY)?;
    door(
        builder,
        Wall::Right,
        d * 0.7,
        choose(builder, &WOOD_COLOURS),
    )?;
    person(
        builder,
        Spot::new(w - 0.6, d - 1.3, Yaw::facing(-1.0, -0.4)),
        Pose::Standing,
        Outfit {
            top: choose(
                builder,
                &[rgb(70, 90, 160), rgb(160, 80, 120), rgb(90, 90, 90)],
            ),
            trousers: rgb(40, 40, 50),
            skin: choose(
                builder,
                &[rgb(200, 160, 130), rgb(120, 85, 60), rgb(230, 195, 170)],
            ),
            hair: rgb(70, 50, 30),
        },
        None,
    )?;
    Ok(LayoutOutcome {
        floor: floorboards(floor_colour),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Dining room: a table laid for four with chairs all round, bottles and a vase of flowers among the mugs, a box under the table, a sideboard with a lamp, and Teodor standing by the wall.".to_string(),
        look_towards: 0.0,
    })
}
