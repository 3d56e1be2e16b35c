//! `sayso classes`: print the class taxonomy with groups, safety flags and generated colours.
//!
//! Owns: the table layout of that listing (columns aligned by `comfy-table`, no borders, no colour codes).
//! Must not: change the taxonomy.

use std::path::PathBuf;

use comfy_table::presets::NOTHING;
use comfy_table::{CellAlignment, Table};
use sayso_core::taxonomy::Taxonomy;

/// Print the class taxonomy (id, name, group, safety flag, colour, typical rooms).
#[derive(Debug, clap::Args)]
pub struct ClassesArgs {
    /// A taxonomy file to read instead of the embedded grammar/classes.toml.
    #[arg(long)]
    pub taxonomy: Option<PathBuf>,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: ClassesArgs) -> anyhow::Result<()> {
    let taxonomy = match &args.taxonomy {
        Some(path) => Taxonomy::load(path)?,
        None => Taxonomy::embedded(),
    };
    if args.json {
        println!("{}", serde_json::to_string_pretty(&taxonomy)?);
        return Ok(());
    }
    let mut table = Table::new();
    table.load_style(NOTHING);
    table.set_header(["id", "name", "group", "safety", "colour", "rooms"]);
    for class in taxonomy.classes() {
        let rooms: Vec<&str> = class
            .rooms
            .iter()
            .filter_map(|room| taxonomy.room(*room).map(|info| info.name.as_str()))
            .collect();
        let [r, g, b] = class.colour;
        table.add_row([
            class.id.to_string(),
            class.name.clone(),
            format!("{:?}", class.group).to_lowercase(),
            if class.safety { "yes" } else { "" }.to_string(),
            format!("#{r:02x}{g:02x}{b:02x}"),
            rooms.join(","),
        ]);
    }
    if let Some(column) = table.column_mut(0) {
        column.set_cell_alignment(CellAlignment::Right);
    }
    for line in table.lines() {
        println!("{}", line.trim_end());
    }
    Ok(())
}
