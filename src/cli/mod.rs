//! The command line: clap definitions and the non-interactive commands. Thin: every command
//! calls the same library functions the terminal UI uses.

pub mod args;
pub(crate) mod book;
mod demo;
mod review;
mod sky;
mod transfer;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;

pub use args::{Cli, Command};

/// Exit codes (documented in the README): 0 ok, 1 failure, 2 usage error.
pub mod exit {
    pub const OK: u8 = 0;
    pub const FAILURE: u8 = 1;
    pub const USAGE: u8 = 2;
    /// `nearsky import`: some records were rejected (with `--skip-bad` the rest was imported).
    pub const REJECTED: u8 = 3;
}

/// An error that ends a command, with the exit code it maps to.
#[derive(Debug, thiserror::Error)]
pub enum CliError {
    /// The user asked for something malformed: exit code 2.
    #[error("{0}")]
    Usage(String),
    /// Anything else that failed: exit code 1.
    #[error(transparent)]
    Failure(#[from] anyhow::Error),
    /// The command did its work but some input was rejected: exit code 3.
    #[error("some records were rejected (listed above)")]
    Rejected,
}

impl CliError {
    fn code(&self) -> u8 {
        match self {
            Self::Usage(_) => exit::USAGE,
            Self::Failure(_) => exit::FAILURE,
            Self::Rejected => exit::REJECTED,
        }
    }
}

/// `1 contact`, `2 contacts`: a count with its noun (`noun` takes an `s` for the plural).
pub(crate) fn count_of(n: impl Into<u64>, noun: &str) -> String {
    let n = n.into();
    if n == 1 {
        format!("1 {noun}")
    } else {
        format!("{n} {noun}s")
    }
}

/// `s` cut to `n` characters for a table column, with `…` where it was cut.
pub(crate) fn clip(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        return s.to_string();
    }
    let mut out: String = s.chars().take(n.saturating_sub(1)).collect();
    out.push('…');
    out
}

/// A failed write to the output: exit code 1.
pub(crate) fn io(e: std::io::Error) -> CliError {
    CliError::Failure(e.into())
}

/// The `--band` flag, checked.
pub(crate) fn band_flag(text: Option<&str>) -> Result<Option<crate::domain::Band>, CliError> {
    text.map(crate::domain::Band::parse)
        .transpose()
        .map_err(|e| usage(format!("--band: {e}")))
}

/// The `--station` flag, checked.
pub(crate) fn station_flag(
    text: Option<&str>,
) -> Result<Option<crate::domain::Callsign>, CliError> {
    text.map(crate::domain::Callsign::parse)
        .transpose()
        .map_err(|e| usage(format!("--station: {e}")))
}

/// Turns a validation error into a usage error (exit code 2).
pub(crate) fn usage(e: impl std::fmt::Display) -> CliError {
    CliError::Usage(e.to_string())
}

/// Entry point of the binary.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::from(exit::OK),
        // The reader of the output went away (`nearsky export | head`): not an error.
        Err(CliError::Failure(e)) if broken_pipe(&e) => ExitCode::from(exit::OK),
        Err(e) => {
            let mut err = std::io::stderr().lock();
            let mut shown = e.to_string();
            let _ = writeln!(err, "nearsky: {shown}");
            if let CliError::Failure(inner) = &e {
                // Causes not already said by the message above them.
                for cause in inner.chain().skip(1) {
                    let cause = cause.to_string();
                    if !shown.contains(&cause) {
                        let _ = writeln!(err, "  because: {cause}");
                    }
                    shown = cause;
                }
            }
            ExitCode::from(e.code())
        }
    }
}

/// Whether an error comes from writing to a pipe whose reader has closed it.
fn broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}

fn run(cli: Cli) -> Result<(), CliError> {
    let mut out = std::io::stdout().lock();
    // The clock is read here, at the edge, and passed in.
    let now = chrono::Utc::now();
    let db = cli.db.as_deref();
    let result = match cli.command {
        Some(Command::Demo(a)) => demo::demo(&mut out, db, &a),
        Some(Command::Path(a)) => sky::path(&mut out, &a, now),
        Some(Command::Sun(a)) => sky::sun(&mut out, &a, now),
        Some(Command::Log(a)) => {
            let config =
                crate::config::load(crate::config::default_path().as_deref()).map_err(usage)?;
            book::log(&mut out, db, &a, now, &config)
        }
        Some(Command::Note(a)) => book::note(&mut out, db, &a, now),
        Some(Command::List(a)) => book::list(&mut out, db, &a),
        Some(Command::Edit(a)) => book::edit(&mut out, db, &a),
        Some(Command::Delete(a)) => book::delete(&mut out, db, &a),
        Some(Command::Drill(c)) => book::drill(&mut out, db, &c, now),
        Some(Command::Station(c)) => book::station(&mut out, db, &c, now),
        Some(Command::Roster(c)) => book::roster(&mut out, db, &c, now),
        Some(Command::Backup(a)) => book::backup(&mut out, db, &a.path),
        Some(Command::Check) => book::check(&mut out, db),
        Some(Command::Writer(a)) => book::writer(&mut out, db, &a, now),
        Some(Command::Import(a)) => match transfer::import(&mut out, db, &a) {
            Ok(true) => Err(CliError::Rejected),
            Ok(false) => Ok(()),
            Err(e) => Err(e),
        },
        Some(Command::Export(a)) => transfer::export(&mut out, db, &a, now),
        Some(Command::Coverage(a)) => review::coverage(&mut out, db, &a),
        Some(Command::Plan(a)) => review::plan(&mut out, db, &a),
        Some(Command::Crosscheck(a)) => review::crosscheck(&mut out, db, &a),
        Some(Command::Report(a)) => review::report(&mut out, db, &a, now),
        Some(Command::Completions { shell }) => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut cmd, "nearsky", &mut out);
            Ok(())
        }
        Some(Command::Man) => {
            let cmd = <Cli as clap::CommandFactory>::command();
            clap_mangen::Man::new(cmd)
                .render(&mut out)
                .map_err(|e| CliError::Failure(e.into()))
        }
        None => {
            let book = book::open(db)?;
            drop(out);
            crate::tui::run(book, None).map_err(CliError::Failure)
        }
    };
    match result {
        // A closed pipe (`nearsky list | head`) is not a failure.
        Err(CliError::Failure(e))
            if e.downcast_ref::<std::io::Error>()
                .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe) =>
        {
            Ok(())
        }
        other => other,
    }
}
