//! `nearsky import` and `nearsky export`.

use std::io::{IsTerminal, Write};
use std::path::Path;

use chrono::{DateTime, Utc};

use super::args::{ExportArgs, ExportFormatArg, ImportArgs};
use super::book::open;
use super::{CliError, count_of, io, station_flag, usage};
use crate::app::transfer::{self, ExportFormat, ImportOptions};
use crate::store::ContactQuery;

/// Runs `nearsky import`; returns whether any records were rejected.
pub fn import(out: &mut impl Write, db: Option<&Path>, a: &ImportArgs) -> Result<bool, CliError> {
    let mut book = open(db)?;
    let station = station_flag(a.station.as_deref())?;
    // Without --drill, records that name no drill go into the drill in use: that is where
    // coverage, plan and crosscheck look.
    let default_drill = if a.drill.is_none() {
        book.current_drill()
            .map_err(|e| CliError::Failure(e.into()))?
    } else {
        None
    };
    let opts = ImportOptions {
        station,
        drill: a.drill.clone(),
        default_drill: default_drill.clone(),
        dry_run: a.dry_run,
        skip_bad: a.skip_bad,
    };
    let tty = std::io::stderr().is_terminal();
    let mut any_rejected = false;
    // Whether any record was (or, in a dry run, would be) stored.
    let mut landed = false;
    let mut refused = Vec::new();
    for f in &a.files {
        let name = f.display().to_string();
        let mut progress = |n: usize| {
            if tty {
                eprint!("\r{name}: {n} records read");
            }
        };
        let r = transfer::import_file(&mut book, f, &opts, &mut progress)
            .map_err(|e| CliError::Failure(e.into()))?;
        if tty && r.read >= 5000 {
            eprintln!();
        }
        let read = count_of(r.read as u64, "record");
        if a.dry_run || r.stored {
            let verb = if a.dry_run {
                "would import"
            } else {
                "imported"
            };
            writeln!(
                out,
                "{}: {read} read; {verb} {}, duplicates skipped {}, rejected {}",
                r.file,
                r.imported,
                r.duplicates,
                r.rejected.len()
            )
            .map_err(io)?;
            landed |= r.imported > 0;
        } else {
            writeln!(
                out,
                "{}: {read} read; rejected {}, so nothing was stored ({} would have been imported, {} duplicates)",
                r.file,
                r.rejected.len(),
                r.imported,
                r.duplicates
            )
            .map_err(io)?;
        }
        // Where the records went: a drill name typed differently at another station would
        // otherwise split a drill without a word.
        if r.drills
            .keys()
            .any(|d| d.as_ref() != default_drill.as_ref().or(a.drill.as_ref()))
        {
            for (d, n) in &r.drills {
                let drill = d
                    .as_ref()
                    .map_or("no drill".to_string(), |d| format!("drill `{d}`"));
                writeln!(out, "  {n} into {drill}").map_err(io)?;
            }
        }
        for e in &r.rejected {
            writeln!(out, "  rejected: {e}").map_err(io)?;
        }
        for w in r.warnings.iter().take(50) {
            writeln!(out, "  warning: {w}").map_err(io)?;
        }
        if r.warnings.len() > 50 {
            writeln!(out, "  ... and {} more warnings", r.warnings.len() - 50).map_err(io)?;
        }
        if !r.rejected.is_empty() {
            any_rejected = true;
            if !a.skip_bad && !a.dry_run {
                refused.push(r.file.clone());
            }
        }
    }
    if let Some(d) = default_drill.as_ref().filter(|_| landed) {
        writeln!(
            out,
            "drill: records that name none are put in `{d}`, the drill in use (--drill NAME for\n  another; `nearsky drill move` moves them if this was the wrong one)"
        )
        .map_err(io)?;
    }
    if !refused.is_empty() {
        return Err(CliError::Failure(anyhow::anyhow!(
            "{} not imported because of the rejected records above; fix them, or pass --skip-bad to import the rest",
            refused.join(", ")
        )));
    }
    Ok(any_rejected)
}

pub fn export(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &ExportArgs,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let book = open(db)?;
    if let Some(d) = &a.drill
        && !book
            .drills()
            .map_err(|e| CliError::Failure(e.into()))?
            .iter()
            .any(|x| &x.name == d)
    {
        return Err(usage(format!("--drill: drill `{d}` not found")));
    }
    let station = station_flag(a.station.as_deref())?;
    let q = ContactQuery {
        drill: a.drill.clone(),
        station,
        ..ContactQuery::default()
    };
    let format = match a.format {
        ExportFormatArg::Adi => ExportFormat::Adi,
        ExportFormatArg::Adx => ExportFormat::Adx,
        ExportFormatArg::Csv => ExportFormat::Csv,
    };
    let done = match &a.output {
        None => transfer::export_report(
            &book,
            &q,
            a.include_attempts,
            format,
            std::io::BufWriter::new(out),
            now,
        ),
        Some(path) => {
            if path.exists() && !a.force {
                return Err(usage(format!(
                    "{} exists; pass --force to overwrite it",
                    path.display()
                )));
            }
            let f = std::fs::File::create(path)
                .map_err(|e| CliError::Failure(anyhow::anyhow!("{}: {e}", path.display())))?;
            let done = transfer::export_report(
                &book,
                &q,
                a.include_attempts,
                format,
                std::io::BufWriter::new(f),
                now,
            );
            if let Ok(e) = &done {
                eprintln!(
                    "wrote {} to {}",
                    count_of(e.written as u64, "contact"),
                    path.display()
                );
            }
            done
        }
    };
    let done = done.map_err(|e| CliError::Failure(e.into()))?;
    if done.attempts_left_out > 0 {
        eprintln!(
            "note: {} not written (contacts only; --include-attempts writes them too)",
            count_of(done.attempts_left_out as u64, "failed attempt")
        );
    }
    // A main station log should get one station's contacts: say so when there are several.
    let calls = &done.stations;
    if calls.len() > 1 {
        let shown: Vec<&str> = calls.iter().take(4).map(String::as_str).collect();
        let more = if calls.len() > 4 { ", …" } else { "" };
        eprintln!(
            "note: these contacts were logged by {} stations ({}{more}); --station CALL exports one station's, for its main log",
            calls.len(),
            shown.join(", ")
        );
    }
    Ok(())
}
