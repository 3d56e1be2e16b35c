//! The `sayso` binary: argument parsing and logging set-up, then a call into the library.
//!
//! Owns: process exit codes, the one-line error report, what `-v` shows and the quiet end on a closed
//! standard output.
//! Must not: hold pipeline logic; every subcommand's body lives in `cli/<name>.rs` and calls the library.
//!
//! Exit codes: 0 success (also when whoever reads standard output stops early, as `| head` does); 1 the
//! command failed (the reason is printed on standard error as `sayso: error: ...`); 2 the command line
//! was not understood (clap's usage error). `sayso fix` writes its outputs and then ends with 3 when a note
//! was not understood (or a conversation command could not be done), else 4 when a question waits for an
//! answer or a note left something unmet, else 5 when a change to a person, pet or hazard is still held
//! for confirmation (`cli::fix::Unsettled`).

mod cli;

use std::io::IsTerminal;

use clap::Parser;

/// The exit code of a command that failed.
const EXIT_FAILED: i32 = 1;

/// Whether a panic is the standard library's report that standard output was closed under a `print!`
/// (the reader of a pipe went away): that ends sayso quietly with success, as a finished listing would.
fn closed_standard_output(info: &std::panic::PanicHookInfo<'_>) -> bool {
    let payload = info.payload();
    let message = payload
        .downcast_ref::<String>()
        .map(String::as_str)
        .or_else(|| payload.downcast_ref::<&str>().copied())
        .unwrap_or("");
    message.starts_with("failed printing to stdout") && message.contains("Broken pipe")
}

fn main() {
    let report_panic = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        if closed_standard_output(info) {
            std::process::exit(0);
        }
        report_panic(info)
    }));
    let arguments = cli::Arguments::parse();
    // `-v` shows sayso's own debug lines (stage timings and sizes), not those of the libraries it uses.
    let filter = tracing_subscriber::EnvFilter::try_from_env("SAYSO_LOG").unwrap_or_else(|_| {
        tracing_subscriber::EnvFilter::new(if arguments.verbose {
            "warn,sayso=debug,sayso_solver=debug,sayso_core=debug,sayso_perception=debug,sayso_render=debug,sayso_lab=debug,sayso_correction_log=debug,sayso_session=debug,sayso_service=debug"
        } else {
            "warn"
        })
    });
    tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr)
        .with_ansi(std::io::stderr().is_terminal())
        .init();
    if let Err(error) = cli::run(arguments) {
        let closed = error.chain().any(|cause| {
            cause
                .downcast_ref::<std::io::Error>()
                .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
        });
        if closed {
            // A command that writes through `io::Write` sees the closed pipe as an error: the same quiet end.
            std::process::exit(0);
        }
        if let Some(unsettled) = error.downcast_ref::<cli::fix::Unsettled>() {
            eprintln!("sayso: {unsettled}");
            std::process::exit(unsettled.code);
        }
        // A cause whose text its parent's message already ends with is not repeated.
        let mut chain: Vec<String> = Vec::new();
        for cause in error.chain() {
            let text = cause.to_string();
            if !chain.last().is_some_and(|last| last.ends_with(&text)) {
                chain.push(text);
            }
        }
        eprintln!("sayso: error: {}", chain.join(": "));
        std::process::exit(EXIT_FAILED);
    }
}
