//! The `sayso` binary: argument parsing and logging set-up, then a call into the library.
//!
//! Owns: process exit codes and the one-line error report.
//! Must not: hold pipeline logic; every subcommand's body lives in `cli/<name>.rs` and calls the library.

mod cli;

use clap::Parser;

fn main() {
    let arguments = cli::Arguments::parse();
    let filter = tracing_subscriber::EnvFilter::try_from_env("SAYSO_LOG").unwrap_or_else(|_| {
        tracing_subscriber::EnvFilter::new(if arguments.verbose { "debug" } else { "warn" })
    });
    tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr)
        .init();
    if let Err(error) = cli::run(arguments) {
        let chain: Vec<String> = error.chain().map(|cause| cause.to_string()).collect();
        eprintln!("sayso: error: {}", chain.join(": "));
        std::process::exit(1);
    }
}
