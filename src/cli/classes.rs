//! `sayso classes`: print the class taxonomy with groups, safety flags and generated colours.
//!
//! Owns: the table layout of that listing. Must not: change the taxonomy.

use std::path::PathBuf;

use sayso::taxonomy::Taxonomy;

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
    println!(
        "{:>3}  {:<10} {:<10} {:<6} {:<8} rooms",
        "id", "name", "group", "safety", "colour"
    );
    for class in taxonomy.classes() {
        let rooms: Vec<&str> = class
            .rooms
            .iter()
            .filter_map(|room| taxonomy.room(*room).map(|info| info.name.as_str()))
            .collect();
        let [r, g, b] = class.colour;
        println!(
            "{:>3}  {:<10} {:<10} {:<6} #{r:02x}{g:02x}{b:02x}  {}",
            class.id,
            class.name,
            format!("{:?}", class.group).to_lowercase(),
            if class.safety { "yes" } else { "" },
            rooms.join(",")
        );
    }
    Ok(())
}
