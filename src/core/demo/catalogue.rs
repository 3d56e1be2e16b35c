//! The committed demo set: which scenes of the Juniper Lane flat live under `demo_scenes/`, with their seeds.
//!
//! Demo seeds live in 1000..=1999. Training renders use seeds from 100000 up, so they never repeat a demo scene.
//! Owns: that list and the README text describing it. Must not: render or read files (the render request
//! for an entry is `sayso_render::SceneRequest::from(&entry)`).

/// The lowest and highest seed a demo scene may use.
pub const DEMO_SEEDS: std::ops::RangeInclusive<u64> = 1000..=1999;
/// The first seed for training renders.
pub const FIRST_TRAINING_SEED: u64 = 100_000;

/// One demo scene: directory name, room type and seed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DemoEntry {
    pub name: &'static str,
    pub room: &'static str,
    pub seed: u64,
    /// A one-line description of this particular scene.
    pub note: &'static str,
}

/// Every demo scene, in listing order (the first is the default scene of `sayso demo`).
pub const DEMO_SCENES: [DemoEntry; 18] = [
    DemoEntry { name: "living_room_evening", room: "living_room", seed: 1001 , note: "Wren unwinds on the sofa while Bramble naps among the cushions; the tv glows across from the window." },
    DemoEntry { name: "kitchen_breakfast", room: "kitchen", seed: 1002 , note: "Morning in the kitchen: crockery out, bottles lined up, Fig peering from behind a chair." },
    DemoEntry { name: "bedroom_lazy_sunday", room: "bedroom", seed: 1003 , note: "Fig asleep on the covers next to the pillows; trainers kicked half under the bed." },
    DemoEntry { name: "bathroom_laundry_day", room: "bathroom", seed: 1004 , note: "A heap of Teodor's washing on the tiles, towels out, bottles by the basin." },
    DemoEntry { name: "hallway_coming_home", room: "hallway", seed: 1005 , note: "Shoes everywhere by the shoe cabinet; Bramble waiting on the runner at the foot of the stairs." },
    DemoEntry { name: "office_deadline", room: "office", seed: 1006 , note: "Wren hunched over the laptop with a mug and a pile of books; a box parked under the desk." },
    DemoEntry { name: "dining_room_supper", room: "dining_room", seed: 1007 , note: "The table laid for supper with plates, bowls and a vase of flowers; Teodor standing by the wall." },
    DemoEntry { name: "living_room_rainy_afternoon", room: "living_room", seed: 1011 , note: "A second living-room arrangement: different sofa fabric and shelf contents, same look-alikes." },
    DemoEntry { name: "kitchen_washing_up", room: "kitchen", seed: 1012 , note: "The kitchen in other colours, with the white larder cabinet right beside the white fridge." },
    DemoEntry { name: "bedroom_unmade", room: "bedroom", seed: 1013 , note: "A rumpled bed with a toy bear and a book, clothes over the desk chair, a bag on the floor." },
    DemoEntry { name: "bathroom_morning", room: "bathroom", seed: 1014 , note: "The small bathroom in the morning: a folded towel, a hung towel, a box in the corner." },
    DemoEntry { name: "hallway_muddy_boots", room: "hallway", seed: 1015 , note: "A longer hallway: the front door at the end, the stairs rising on the left, three pairs of shoes." },
    DemoEntry { name: "office_late_shift", room: "office", seed: 1016 , note: "The office at a different desk position, shelves packed with books." },
    DemoEntry { name: "dining_room_guests", room: "dining_room", seed: 1017 , note: "Chairs round the whole table for guests, bottles and mugs out, a box under the table." },
    DemoEntry { name: "living_room_tidy", room: "living_room", seed: 1021 , note: "The living room tidied: the rug nearly the colour of the floorboards, the remote on the coffee table." },
    DemoEntry { name: "kitchen_baking", room: "kitchen", seed: 1022 , note: "Baking day: worktops in a new colour, microwave, cooker and sink all in view." },
    DemoEntry { name: "bedroom_packing", room: "bedroom", seed: 1023 , note: "A bag on the floor and clothes piled on the chair; Fig curled up close to the grey pillows." },
    DemoEntry { name: "dining_room_after_dinner", room: "dining_room", seed: 1027 , note: "After dinner: plates still out, the sideboard lamp on, someone clearing up." },
];

/// The demo entry with this name.
pub fn demo_entry(name: &str) -> Option<&'static DemoEntry> {
    DEMO_SCENES.iter().find(|entry| entry.name == name)
}

/// The text of `demo_scenes/README.md` for these entries.
pub fn readme_text(entries: &[DemoEntry]) -> String {
    let mut text = String::from(
        "# Demo scenes: the flat at 14 Juniper Lane\n\n\
         Rendered by `sayso render --demo` (deterministic: same seed, same bytes). Each directory holds\n\
         image.png (RGB), depth.png (16-bit millimetres along the optical axis), labels.png (class id per pixel,\n\
         255 = unlabelled), instances.png (0 = floor/walls/ceiling, 1.. = object), objects.json and scene.json.\n\n\
         Demo seeds are kept in 1000..=1999; training renders start at seed 100000, so the two never overlap.\n\n\
         | name | room | seed | description |\n|---|---|---|---|\n",
    );
    for entry in entries {
        text.push_str(&format!(
            "| {} | {} | {} | {} |\n",
            entry.name, entry.room, entry.seed, entry.note
        ));
    }
    text
}
