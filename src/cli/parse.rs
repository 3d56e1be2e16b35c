//! `sayso parse`: read operator utterances (arguments or standard input, one per line) and print what the
//! parser understood, as JSON and as a plain-English gloss.
//!
//! Owns: the flags of this subcommand and the JSON line layout. Lines are one conversation, so later lines
//! see earlier referents and conflicts are reported.
//! Must not: parse language itself; everything goes through `sayso_core::language`.

use std::io::{BufRead, Write};
use std::path::PathBuf;

use anyhow::Context;
use sayso_core::language::notation::notation_list;
use sayso_core::language::{parse_focus, Conversation, Grammar};
use serde_json::json;

/// Parse operator utterances into constraints.
#[derive(Debug, clap::Args)]
pub struct ParseArgs {
    /// Utterances to parse; with none, lines are read from standard input.
    pub text: Vec<String>,
    /// What the operator points at: object:ID or pixel:X,Y (applies to every utterance).
    #[arg(long)]
    pub focus: Option<String>,
    /// A grammar directory (classes.toml, lexicon/*.lex, rules/*.rules, site/*.lex) instead of the built-in one.
    #[arg(long)]
    pub grammar: Option<PathBuf>,
    /// Pretty-print the JSON (one object per utterance over several lines).
    #[arg(long)]
    pub pretty: bool,
    /// Print only the gloss, not the JSON.
    #[arg(long)]
    pub gloss_only: bool,
}

pub fn run(args: ParseArgs) -> anyhow::Result<()> {
    let grammar = match &args.grammar {
        Some(directory) => Grammar::load(directory)
            .with_context(|| format!("reading grammar directory {}", directory.display()))?,
        None => Grammar::embedded().context("the built-in grammar")?,
    };
    let focus = args.focus.as_deref().map(parse_focus).transpose()?;
    let mut conversation = Conversation::new(grammar.taxonomy().clone())?;
    let lines: Vec<String> = if args.text.is_empty() {
        std::io::stdin()
            .lock()
            .lines()
            .collect::<Result<_, _>>()
            .context("reading standard input")?
    } else {
        args.text.clone()
    };
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let mut failed = 0usize;
    for line in &lines {
        let value = match grammar.parse(line, focus) {
            Ok(parse) => {
                let turn = conversation.add(&parse);
                let notation = notation_list(&parse.constraints, grammar.taxonomy());
                {
                    let mut gloss = format!("{line:?}: {}", parse.utterance_kind.name());
                    for constraint in &parse.constraints {
                        gloss.push_str(&format!(
                            "\n  - {} ({:.2})",
                            constraint.gloss, constraint.confidence
                        ));
                    }
                    for conflict in &turn.conflicts {
                        gloss.push_str(&format!("\n  ! {:?}: {}", conflict.kind, conflict.message));
                    }
                    if args.gloss_only {
                        writeln!(out, "{gloss}")?;
                        continue;
                    }
                    eprintln!("{gloss}");
                }
                json!({
                    "utterance": line,
                    "utterance_kind": parse.utterance_kind,
                    "notation": notation,
                    "constraints": parse.constraints,
                    "ignored": parse.ignored,
                    "notes": parse.notes,
                    "bindings": turn.bindings,
                    "conflicts": turn.conflicts,
                })
            }
            Err(error) => {
                failed += 1;
                json!({ "utterance_length": line.chars().count(), "error": error.to_string() })
            }
        };
        if args.pretty {
            writeln!(out, "{}", serde_json::to_string_pretty(&value)?)?;
        } else {
            writeln!(out, "{}", serde_json::to_string(&value)?)?;
        }
    }
    if failed > 0 {
        anyhow::bail!("{failed} of {} utterances could not be parsed", lines.len());
    }
    Ok(())
}
