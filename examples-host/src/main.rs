//! `polytrope-host`: the host command-line tool of the `polytrope` kernel.
//!
//! Each subcommand lives in its own module with a `run` entry point; its
//! options are a `clap` derive struct (in [`cli`] or beside the module). To
//! add one: create `src/<name>.rs`, add `mod <name>;` below, a variant to
//! [`cli::Cmd`] and a line to `dispatch`, and register any JSON keys it
//! writes in [`keys`].
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

mod blob;
mod check;
mod cli;
mod config;
mod demo;
mod evaluate;
// Register image over Modbus TCP, and its map.
mod gateway;
mod host_gas;
mod keys;
mod ledger_plot;
mod ledger_view;
mod orifice_cmd;
mod out;
mod plots;
mod quantity;
mod rating;
mod replay;
mod stage;
mod starter;
mod surgemap;
mod train_any;
mod unit_system;
mod units;
// Surge simulation: the Greitzer model core and its subcommand.
mod greitzer;
mod surge_sim;
// GERG-2008 property tables for the device.
mod gerg_table;
mod tables;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;
use cli::{Cli, CliError, Cmd};

/// The binary's name, for messages.
pub const BIN: &str = "polytrope-host";

/// Applies a `--units SYSTEM` choice for the whole process.
fn choose_units(name: &Option<String>) -> Result<(), CliError> {
    unit_system::choose_from(name.as_deref()).map_err(|e| CliError::Usage(format!("--units: {e}")))
}

fn dispatch(cli: &Cli) -> Result<String, CliError> {
    match &cli.command {
        Cmd::Demo(a) if a.units.is_some() => {
            choose_units(&a.units)?;
            dispatch_inner(cli)
        }
        Cmd::Stage(a) => {
            choose_units(&a.units)?;
            stage::run(&a.parsed())
        }
        Cmd::Evaluate(a) => {
            choose_units(&a.units)?;
            evaluate::run(a)
        }
        Cmd::Replay(a) => {
            choose_units(&a.units)?;
            replay::run(a)
        }
        _ => dispatch_inner(cli),
    }
}

fn dispatch_inner(cli: &Cli) -> Result<String, CliError> {
    match &cli.command {
        Cmd::Demo(a) => {
            let text = demo::run(&a.parsed())?;
            if let Some(dir) = &a.plots {
                let written = plots::demo_plots(dir)?;
                let mut t = text;
                for f in written {
                    t.push_str(&format!("plot written: {}\n", f.display()));
                }
                return Ok(t);
            }
            Ok(text)
        }
        Cmd::Stage(a) => stage::run(&a.parsed()),
        Cmd::SurgeSim(a) => surge_sim::run(&a.parsed()),
        Cmd::Keys => keys::run(&cli::Parsed::default()),
        Cmd::NewTrain(a) => starter::run(a),
        Cmd::Check(a) => check::run(a),
        Cmd::Evaluate(a) => evaluate::run(a),
        Cmd::Replay(a) => replay::run(a),
        Cmd::Rate(a) => rating::run(a),
        Cmd::Orifice(a) => orifice_cmd::run(a),
        Cmd::Blob(a) => blob::run(a),
        Cmd::Gateway(a) => gateway::run(&a.parsed()),
        Cmd::RegisterMap(a) => gateway::run_map(a),
        Cmd::Tables(a) => tables::run(a),
    }
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            // Help and version go to stdout with success; usage errors exit 2.
            let _ = e.print();
            return if e.use_stderr() {
                ExitCode::from(2)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    match dispatch(&cli) {
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
