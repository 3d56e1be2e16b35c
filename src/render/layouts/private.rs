//! The bedroom, the office and the hallway of the Juniper Lane flat.
//!
//! Owns: those three layouts. Bedroom: a bed with pillows and Fig curled up beside them (pillow versus pet),
//! shoes poking out from under the bed, clothes, a bag, a toy bear, a bedside lamp. Office: a desk with a
//! laptop, mug and books, Wren working in a chair, a box under the desk, a bookcase. Hallway: the stairs up,
//! the front door, shoe pairs, a runner rug, a bag, Bramble standing.
//! Must not: shade or write anything.

use super::super::belongings::{
    bag, blanket, cardboard_box, clothes, pillow, plant, shoe_pair, toy,
};
use super::super::builder::SceneBuilder;
use super::super::figures::{cat, dog, person, Outfit, Pose};
use super::super::fittings::{door, lamp, on_wall, rug, stairs, window, Wall};
use super::super::furniture::{
    bed, bookcase, cabinet, chair, desk, fabric, painted, wall_shelf, wood, Spot,
};
use super::super::geometry::{v3, Yaw};
use super::super::material::{rgb, tint};
use super::super::objects::{book, book_row, laptop, mug, vase};
use super::super::RenderError;
use super::{
    choose, floorboards, wall_paint, LayoutOutcome, GLAZE_COLOURS, SKY, WALL_COLOURS, WOOD_COLOURS,
};

/// The bedroom.
pub fn bedroom(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let floor_colour = choose(builder, &WOOD_COLOURS);
    let towards_camera = Yaw::facing(0.0, -1.0);
    let (bed_width, bed_length) = (1.5, 2.05);
    let bed_x = -w + 0.3 + bed_width * 0.5 + builder.range(0.0, 0.4);
    let bed_spot = Spot::new(bed_x, d - bed_length * 0.5, towards_camera);
    let sheet_colour = choose(
        builder,
        &[rgb(235, 232, 225), rgb(200, 210, 225), rgb(225, 215, 200)],
    );
    let (the_bed, mattress) = bed(
        builder,
        bed_spot,
        bed_width,
        bed_length,
        wood(choose(builder, &WOOD_COLOURS)),
        fabric(sheet_colour),
    )?;
    let pillow_colour = choose(
        builder,
        &[rgb(150, 150, 148), rgb(230, 228, 220), rgb(200, 170, 140)],
    );
    for offset in [-0.35, 0.35] {
        pillow(
            builder,
            bed_spot.at(v3(offset, mattress, -bed_length * 0.5 + 0.32)),
            towards_camera,
            pillow_colour,
            false,
            Some(the_bed),
        )?;
    }
    let blanket_colour = choose(
        builder,
        &[rgb(70, 90, 140), rgb(160, 70, 70), rgb(90, 130, 100)],
    );
    let cover = blanket(
        builder,
        bed_spot.at(v3(0.0, mattress, 0.28)),
        towards_camera,
        v3(bed_width * 0.5 + 0.01, 0.02, bed_length * 0.34),
        blanket_colour,
        tint(blanket_colour, 0.75),
        Some(the_bed),
    )?;
    // Fig curled up on the blanket, grey like the pillows in some seeds.
    cat(
        builder,
        bed_spot.at(v3(0.25, mattress + 0.04, 0.1)),
        Yaw::facing(1.0, 0.4),
        rgb(140, 138, 134),
        true,
        Some(cover),
    )?;
    toy(
        builder,
        bed_spot.at(v3(-0.4, mattress + 0.04, 0.45)),
        true,
        rgb(170, 120, 70),
        Some(cover),
    )?;
    book(
        builder,
        bed_spot.at(v3(-0.1, mattress + 0.04, 0.6)),
        Yaw::from_half_tangent(0.2),
        v3(0.025, 0.22, 0.15),
        rgb(40, 90, 60),
        true,
        Some(cover),
    )?;
    // Shoes poking out from under the foot of the bed.
    shoe_pair(
        builder,
        bed_spot.at(v3(0.3, 0.0, bed_length * 0.5 - 0.05)),
        Yaw::facing(0.3, -1.0),
        choose(
            builder,
            &[rgb(60, 40, 30), rgb(200, 60, 60), rgb(40, 40, 45)],
        ),
        None,
    )?;
    // Bedside cabinet with a lamp and a book.
    let side_x = bed_x + bed_width * 0.5 + 0.3;
    let bedside = cabinet(
        builder,
        Spot::new(side_x, d - 0.22, towards_camera),
        v3(0.45, 0.55, 0.4),
        painted(rgb(236, 234, 228)),
    )?;
    lamp(
        builder,
        v3(side_x - 0.08, 0.55, d - 0.25),
        0.45,
        rgb(250, 230, 190),
        Some(bedside),
    )?;
    book(
        builder,
        v3(side_x + 0.12, 0.55, d - 0.2),
        Yaw::NONE,
        v3(0.03, 0.2, 0.14),
        rgb(150, 40, 40),
        true,
        Some(bedside),
    )?;
    rug(
        builder,
        Spot::new(
            bed_x + bed_width * 0.5 + 0.5,
            d - bed_length - 0.1,
            Yaw::NONE,
        ),
        0.7,
        0.45,
        tint(floor_colour, 1.15),
        tint(floor_colour, 0.9),
    )?;
    // A desk by the right wall with a chair, a bag hanging off it and clothes over the back.
    let desk_z = d * 0.35 + builder.range(-0.1, 0.2);
    let (bedroom_desk, desk_top) = desk(
        builder,
        Spot::new(w - 0.32, desk_z, Yaw::facing(-1.0, 0.0)),
        v3(1.1, 0.74, 0.6),
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    laptop(
        builder,
        v3(w - 0.35, desk_top, desk_z),
        Yaw::facing(-1.0, 0.0),
        Some(bedroom_desk),
    )?;
    let (bedroom_chair, seat) = chair(
        builder,
        Spot::new(w - 0.95, desk_z + 0.1, Yaw::facing(1.0, 0.0)),
        wood(choose(builder, &WOOD_COLOURS)),
        None,
    )?;
    clothes(
        builder,
        v3(w - 0.95, seat, desk_z + 0.1),
        0.16,
        &[rgb(230, 230, 220), rgb(70, 80, 120)],
        Some(bedroom_chair),
    )?;
    bag(
        builder,
        v3(w - 1.0, 0.0, desk_z - 0.45),
        Yaw::facing(-1.0, -0.5),
        choose(builder, &[rgb(120, 80, 50), rgb(40, 60, 90)]),
        None,
    )?;
    window(builder, Wall::Back, w - 0.9, (0.9, 1.0), 1.0, SKY)?;
    door(builder, Wall::Left, 0.8, rgb(235, 232, 225))?;
    Ok(LayoutOutcome {
        floor: floorboards(floor_colour),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Bedroom: Fig curled up on the blanket near pillows of a similar grey, shoes half under the bed, a toy bear and a book on the covers, a bedside lamp, clothes on the desk chair and a bag on the floor.".to_string(),
        look_towards: 0.0,
    })
}

/// The office.
pub fn office(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let towards_camera = Yaw::facing(0.0, -1.0);
    let desk_x = builder.range(-0.5, 0.3);
    let (work_desk, top) = desk(
        builder,
        Spot::new(desk_x, d - 0.36, towards_camera),
        v3(1.4, 0.74, 0.7),
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    laptop(
        builder,
        v3(desk_x - 0.1, top, d - 0.4),
        Yaw::facing(0.0, -1.0),
        Some(work_desk),
    )?;
    mug(
        builder,
        v3(desk_x + 0.3, top, d - 0.25),
        Yaw::NONE,
        choose(builder, &GLAZE_COLOURS),
        Some(work_desk),
    )?;
    for index in 0..3 {
        book(
            builder,
            v3(desk_x + 0.5, top + index as f64 * 0.03, d - 0.5),
            Yaw::from_half_tangent(0.1 * index as f64),
            v3(0.03, 0.24, 0.17),
            choose(
                builder,
                &[rgb(150, 40, 40), rgb(40, 70, 130), rgb(200, 160, 50)],
            ),
            true,
            Some(work_desk),
        )?;
    }
    lamp(
        builder,
        v3(desk_x - 0.55, top, d - 0.55),
        0.45,
        rgb(240, 240, 230),
        Some(work_desk),
    )?;
    cardboard_box(
        builder,
        v3(desk_x + 0.05, 0.0, d - 0.4),
        Yaw::NONE,
        v3(0.22, 0.17, 0.2),
        None,
    )?;
    // Wren in the desk chair, her back to the camera.
    let chair_spot = Spot::new(desk_x - 0.05, d - 1.0, Yaw::facing(0.0, 1.0));
    let (desk_chair, seat) = chair(builder, chair_spot, painted(rgb(40, 40, 45)), None)?;
    person(
        builder,
        chair_spot,
        Pose::Seated {
            seat_millimetres: (seat * 1000.0) as u32,
        },
        Outfit {
            top: choose(
                builder,
                &[rgb(200, 200, 190), rgb(90, 60, 110), rgb(60, 110, 140)],
            ),
            trousers: rgb(60, 50, 45),
            skin: choose(builder, &[rgb(200, 160, 130), rgb(120, 85, 60)]),
            hair: rgb(25, 20, 20),
        },
        Some(desk_chair),
    )?;
    // Bookcase on the left wall, a filing cabinet, a plant and a bag.
    let case_z = d * 0.45;
    let (case, levels) = bookcase(
        builder,
        Spot::new(-w + 0.17, case_z, Yaw::facing(1.0, 0.0)),
        v3(1.0, 1.9, 0.32),
        5,
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    for level in &levels {
        let fill = builder.range(0.5, 0.9);
        book_row(
            builder,
            v3(-w + 0.19, *level, case_z + 0.45),
            Yaw::facing(1.0, 0.0),
            fill,
            0.22,
            0.3,
            case,
        )?;
    }
    cabinet(
        builder,
        Spot::new(w - 0.3, d - 0.3, towards_camera),
        v3(0.5, 0.75, 0.55),
        painted(rgb(150, 155, 160)),
    )?;
    plant(builder, v3(w - 0.3, 0.75, d - 0.3), 0.45, None)?;
    bag(
        builder,
        v3(w - 0.6, 0.0, d * 0.4),
        Yaw::facing(-1.0, -1.0),
        rgb(60, 50, 40),
        None,
    )?;
    window(builder, Wall::Right, d * 0.45, (1.0, 1.1), 0.95, SKY)?;
    door(builder, Wall::Left, d * 0.85, rgb(235, 232, 225))?;
    Ok(LayoutOutcome {
        floor: floorboards(choose(builder, &WOOD_COLOURS)),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Office: Wren at the desk with a laptop, a mug and a stack of books, a box under the desk, a full bookcase on the left wall and a plant on the filing cabinet.".to_string(),
        look_towards: -0.3,
    })
}

/// The hallway.
pub fn hallway(builder: &SceneBuilder) -> Result<LayoutOutcome, RenderError> {
    let room = builder.room;
    let (w, d) = (room.half_width, room.depth);
    let floor_colour = choose(builder, &WOOD_COLOURS);
    let steps = 10;
    stairs(
        builder,
        Spot::new(-w + 0.5, d - 0.26 * steps as f64, Yaw::NONE),
        0.95,
        steps,
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    door(
        builder,
        Wall::Back,
        w - 0.7,
        choose(
            builder,
            &[rgb(160, 50, 50), rgb(50, 80, 110), rgb(60, 100, 70)],
        ),
    )?;
    let runner = rug(
        builder,
        Spot::new(0.35, d * 0.45, Yaw::NONE),
        0.45,
        d * 0.3,
        tint(floor_colour, 0.95),
        choose(builder, &[rgb(150, 60, 50), rgb(60, 80, 110)]),
    )?;
    // Shoe cabinet on the right wall with a vase and a lamp on it.
    let cabinet_z = d * 0.5 + builder.range(-0.2, 0.2);
    let shoe_cabinet = cabinet(
        builder,
        Spot::new(w - 0.18, cabinet_z, Yaw::facing(-1.0, 0.0)),
        v3(1.0, 0.8, 0.34),
        painted(choose(builder, &[rgb(236, 234, 228), rgb(120, 140, 130)])),
    )?;
    vase(
        builder,
        v3(w - 0.2, 0.8, cabinet_z - 0.3),
        0.28,
        choose(builder, &GLAZE_COLOURS),
        true,
        Some(shoe_cabinet),
    )?;
    lamp(
        builder,
        v3(w - 0.2, 0.8, cabinet_z + 0.3),
        0.45,
        rgb(245, 225, 190),
        Some(shoe_cabinet),
    )?;
    for (index, colour) in [rgb(40, 40, 45), rgb(200, 190, 170), rgb(150, 50, 50)]
        .iter()
        .enumerate()
    {
        shoe_pair(
            builder,
            v3(w - 0.55, 0.0, cabinet_z - 0.8 + index as f64 * 0.3),
            Yaw::facing(-1.0, 0.1),
            *colour,
            None,
        )?;
    }
    shoe_pair(
        builder,
        v3(0.3, 0.008, d * 0.3),
        Yaw::facing(0.4, -1.0),
        rgb(90, 60, 40),
        Some(runner),
    )?;
    let (shelf_centre, shelf_yaw) = on_wall(builder, Wall::Right, cabinet_z, 1.55, 0.12);
    let (shelf, shelf_top) = wall_shelf(
        builder,
        shelf_centre,
        0.9,
        0.24,
        shelf_yaw,
        wood(choose(builder, &WOOD_COLOURS)),
    )?;
    let (row_start, _) = on_wall(builder, Wall::Right, cabinet_z - 0.4, shelf_top, 0.12);
    book_row(
        builder,
        row_start,
        Yaw::facing(-1.0, 0.0),
        0.4,
        0.18,
        0.24,
        shelf,
    )?;
    bag(
        builder,
        v3(-w + 1.3, 0.0, d * 0.28),
        Yaw::facing(1.0, -0.5),
        choose(builder, &[rgb(160, 110, 60), rgb(50, 50, 60)]),
        None,
    )?;
    clothes(
        builder,
        v3(w - 0.9, 0.0, d - 0.35),
        0.2,
        &[rgb(90, 70, 50), rgb(40, 50, 80)],
        None,
    )?;
    cardboard_box(
        builder,
        v3(0.1, 0.0, d - 0.35),
        Yaw::from_half_tangent(-0.15),
        v3(0.25, 0.18, 0.2),
        None,
    )?;
    plant(builder, v3(-w + 1.3, 0.0, d - 0.3), 0.8, None)?;
    dog(
        builder,
        v3(0.2, 0.008, d * 0.55),
        Yaw::facing(-0.6, -1.0),
        rgb(190, 120, 60),
        false,
        Some(runner),
    )?;
    Ok(LayoutOutcome {
        floor: floorboards(floor_colour),
        wall: wall_paint(choose(builder, &WALL_COLOURS)),
        description: "Hallway: the stairs up on the left, the front door at the end, pairs of shoes by the shoe cabinet, a runner rug with Bramble standing on it, a bag and a box.".to_string(),
        look_towards: 0.0,
    })
}
