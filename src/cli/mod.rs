//! Command-line surface: one clap subcommand per file, each a thin call into the library.
//!
//! Owns: flag names, help text, and turning library results into files and printed summaries.
//! Must not: implement pipeline stages; anything worth testing without a process lives in the library.

use clap::{Parser, Subcommand};

mod classes;
mod demo;
mod export;
mod field_notes;
pub mod fix;
mod migrate;
mod model_watch;
mod open_log;
mod parse;
mod perception;
mod render;
mod retrain;
mod score;
mod serve;
mod store;
mod train;
mod trial;
mod tune;
mod unaries;

/// sayso: correct a robot's semantic scene picture from plain-language operator notes.
#[derive(Debug, Parser)]
#[command(
    name = "sayso",
    version,
    about,
    long_about = None,
    after_help = "Exit codes: 0 success (also when the reader of standard output stops early, as `| head` does); \
                  1 the command failed (reason on standard error); 2 the command line was not understood."
)]
pub struct Arguments {
    /// Log sayso's own debug lines (stage timings, sizes) to standard error; SAYSO_LOG (e.g.
    /// SAYSO_LOG=sayso=trace, or tract=debug for the inference library) overrides.
    #[arg(long, short, global = true)]
    pub verbose: bool,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the class taxonomy.
    Classes(classes::ClassesArgs),
    /// Draw what the robot believes about a demo scene (overlay picture and summary).
    Demo(demo::DemoArgs),
    /// Render scenes of the invented Juniper Lane flat with ground truth.
    Render(render::RenderArgs),
    /// Train the built-in segment classifier and write its ONNX file and model card.
    Train(train::TrainArgs),
    /// Turn per-pixel scores, a user ONNX model or a label map into per-segment unaries.
    Unaries(unaries::UnariesArgs),
    /// Parse operator utterances into typed constraints (JSON and a gloss).
    Parse(parse::ParseArgs),
    /// Count room/class statistics and tune energy weights on training renders (never the demo scenes).
    Tune(tune::TuneArgs),
    /// Apply every demo scene's notes and score them against ground truth.
    Score(score::ScoreArgs),
    /// Measure the notes on fresh renders with an automatic operator, against the no-note solve.
    Trial(trial::TrialArgs),
    /// Start the correction service.
    Serve(serve::ServeArgs),
    /// Write the accepted corrections as a training dataset directory.
    Export(export::ExportArgs),
    /// Correct a scene from operator notes: scene graph, label map, overlays and a summary.
    Fix(fix::FixArgs),
    /// Apply a file of field notes to stored scenes and write a report.
    FieldNotes(field_notes::FieldNotesArgs),
    /// Register scenes in the correction log without the HTTP service.
    Store(store::StoreArgs),
    /// Bring the correction log's schema (SQLite or PostgreSQL) up to this build's version.
    Migrate(migrate::MigrateArgs),
}

/// Runs one subcommand.
pub fn run(arguments: Arguments) -> anyhow::Result<()> {
    match arguments.command {
        Command::Classes(args) => classes::run(args),
        Command::Store(args) => store::run(args),
        Command::Migrate(args) => migrate::run(args),
        Command::Demo(args) => demo::run(args),
        Command::Render(args) => render::run(args),
        Command::Train(args) => train::run(args),
        Command::Unaries(args) => unaries::run(args),
        Command::Parse(args) => parse::run(args),
        Command::Serve(args) => serve::run(args),
        Command::Export(args) => export::run(args),
        Command::FieldNotes(args) => field_notes::run(args),
        Command::Fix(args) => fix::run(args),
        Command::Score(args) => score::run(args),
        Command::Tune(args) => tune::run(args),
        Command::Trial(args) => trial::run(args),
    }
}
