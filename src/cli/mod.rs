//! Command-line surface: one clap subcommand per file, each a thin call into the library.
//!
//! Owns: flag names, help text, and turning library results into files and printed summaries.
//! Must not: implement pipeline stages; anything worth testing without a process lives in the library.

use clap::{Parser, Subcommand};

mod classes;
mod parse;

/// sayso: correct a robot's semantic scene picture from plain-language operator notes.
#[derive(Debug, Parser)]
#[command(name = "sayso", version, about, long_about = None)]
pub struct Arguments {
    /// Log debug detail to standard error (or set SAYSO_LOG, e.g. SAYSO_LOG=sayso=trace).
    #[arg(long, short, global = true)]
    pub verbose: bool,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the class taxonomy.
    Classes(classes::ClassesArgs),
    /// Parse operator utterances into typed constraints (JSON and a gloss).
    Parse(parse::ParseArgs),
}

/// Runs one subcommand.
pub fn run(arguments: Arguments) -> anyhow::Result<()> {
    match arguments.command {
        Command::Classes(args) => classes::run(args),
        Command::Parse(args) => parse::run(args),
    }
}
