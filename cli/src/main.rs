//! The `subrange` command: compress, decompress, bench, inspect, analyze.
//!
//! Each command lives in its own module; this file parses the arguments,
//! runs the command, and turns its result into one line on stderr and an exit
//! code (see [`exit`] for the table of codes). A panic — a bug — is caught by
//! a hook that prints one line and exits with the internal-error code, so no
//! backtrace dump ever reaches a user.

mod analyze;
mod baseline;
mod bench;
mod cli;
mod codec;
mod compress;
mod entropy;
mod exit;
mod files;
mod inspect;
mod interrupt;
mod json;
mod plot;
mod presets;
mod progress;
mod report;
#[cfg(test)]
mod scratch;
mod summary;
mod target;
mod window;

use std::io::{self, Write};

use clap::Parser;

use crate::cli::{Cli, Command};
use crate::exit::{CliError, CliResult, Code};

fn main() {
    install_panic_hook();
    interrupt::watch();
    let cli = Cli::parse();
    let result = match &cli.command {
        Command::Compress(args) => compress::compress(args),
        Command::Decompress(args) => compress::decompress(args),
        Command::Inspect(args) => inspect::run(args),
        Command::Bench(args) => bench::run(args),
        Command::Analyze(args) => analyze::run(args),
    };
    if let Err(err) = result {
        if !err.is_quiet() {
            eprintln!("subrange: {err}");
        }
        std::process::exit(err.code().status());
    }
}

/// Prints one line for a panic and exits with [`Code::Internal`].
fn install_panic_hook() {
    std::panic::set_hook(Box::new(|info| {
        let payload = info.payload();
        let what = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown cause".to_string());
        let place = info
            .location()
            .map(|l| format!(" at {}:{}", l.file(), l.line()))
            .unwrap_or_default();
        let line = format!("subrange: internal error: {what}{place} (a bug; please report it)");
        let _ = writeln!(io::stderr(), "{}", line.replace('\n', " "));
        std::process::exit(Code::Internal.status());
    }));
}

/// Writes a report to standard output. A reader that went away (`| head`)
/// is not an error for a report.
pub fn print_stdout(text: &str) -> CliResult {
    let mut out = io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(CliError::io("cannot write standard output", e)),
    }
}
