//! `polytrope-host`: the host command-line tool of the `polytrope` kernel.
//!
//! Each subcommand lives in its own module and exports a
//! [`cli::Command`] (`name`, `summary`, option table, `run`). To add one:
//! create `src/<name>.rs` with `pub const COMMAND: Command = ...`, add
//! `mod <name>;` below and its `COMMAND` to [`COMMANDS`], and register any
//! JSON keys it writes in [`keys`].
//!
//! Caution: not a certified safety function; defer to the machine maker's
//! data, local codes and licensed engineering practice.
#![forbid(unsafe_code)]
#![deny(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod cli;
mod demo;
mod keys;
mod ledger_plot;
mod ledger_view;
mod out;
mod quantity;
mod stage;
// Surge simulation: the Greitzer model core and its subcommand.
mod greitzer;
mod surge_sim;

use std::io::Write;
use std::process::ExitCode;

use cli::{CliError, Command};

/// The binary's name, for messages.
pub const BIN: &str = "polytrope-host";

/// Every subcommand, in the order `help` lists them.
const COMMANDS: &[Command] = &[
    demo::COMMAND,
    stage::COMMAND,
    surge_sim::COMMAND,
    keys::COMMAND,
];

fn usage() -> String {
    let mut s = format!(
        "{BIN} {} — compressor-train calculations with the polytrope kernel\n\n\
         Usage: {BIN} <command> [options]      ({BIN} <command> --help for its options)\n\nCommands:\n",
        env!("CARGO_PKG_VERSION")
    );
    let width = COMMANDS.iter().map(|c| c.name.len()).max().unwrap_or(0);
    for c in COMMANDS {
        s.push_str(&format!("  {:<width$}  {}\n", c.name, c.summary));
    }
    s.push_str(&format!(
        "  {:<width$}  this list\n\n{}\n",
        "help",
        out::CAUTION
    ));
    s
}

fn dispatch(args: &[String]) -> Result<String, CliError> {
    let Some((name, rest)) = args.split_first() else {
        return Err(CliError::Usage(format!("no command given\n\n{}", usage())));
    };
    match name.as_str() {
        "help" | "--help" | "-h" => return Ok(usage()),
        "--version" | "-V" => return Ok(format!("{BIN} {}\n", env!("CARGO_PKG_VERSION"))),
        _ => {}
    }
    let Some(cmd) = COMMANDS.iter().find(|c| c.name == name) else {
        let names: Vec<&str> = COMMANDS.iter().map(|c| c.name).collect();
        return Err(CliError::Usage(format!(
            "unknown command '{name}' (commands: {})",
            names.join(", ")
        )));
    };
    if rest.iter().any(|a| a == "--help" || a == "-h") {
        return Ok(cli::help(cmd));
    }
    let parsed = cli::parse(cmd, rest)?;
    (cmd.run)(&parsed)
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args_os()
        .skip(1)
        .map(|a| a.to_string_lossy().into_owned())
        .collect();
    match dispatch(&args) {
        Ok(text) => {
            // A closed pipe (`| head`) is not an error worth a panic.
            let mut stdout = std::io::stdout().lock();
            match stdout
                .write_all(text.as_bytes())
                .and_then(|()| stdout.flush())
            {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
                Err(_) => ExitCode::from(1),
            }
        }
        Err(e) => {
            let _ = writeln!(std::io::stderr(), "{BIN}: error: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}
