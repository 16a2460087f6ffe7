//! `nearsky demo`: a logbook with an invented drill, to try everything on.

use std::io::Write;
use std::path::{Path, PathBuf};

use super::args::{CoverageArgs, CoverageView, DemoArgs, PlanArgs, ReviewFormat};
use super::{CliError, io, review, usage};
use crate::store::{ContactQuery, Logbook};

/// The demo logbook's path: `--db`, or `demo.db` in the data directory (never the operator's
/// own logbook).
pub fn demo_path(db: Option<&Path>) -> Result<PathBuf, CliError> {
    match db {
        Some(p) => Ok(p.to_path_buf()),
        None => Ok(super::book::default_db()?.with_file_name("demo.db")),
    }
}

/// Creates the demo logbook (or reuses the demo logbook already there); returns its path.
pub fn prepare(out: &mut impl Write, db: Option<&Path>, force: bool) -> Result<PathBuf, CliError> {
    let path = demo_path(db)?;
    let exists = std::fs::metadata(&path)
        .map(|m| m.len() > 0)
        .unwrap_or(false);
    if exists && !force {
        let book = Logbook::open(&path).map_err(|e| CliError::Failure(e.into()))?;
        let is_demo = book
            .drills()
            .map_err(|e| CliError::Failure(e.into()))?
            .iter()
            .any(|d| d.name == crate::demo::scenario::DRILL_NAME);
        if !is_demo {
            return Err(usage(format!(
                "{} exists and is not the demo logbook; not overwritten (give another --db, or --force)",
                path.display()
            )));
        }
        writeln!(
            out,
            "using the demo logbook {} (made earlier; --force makes it anew)",
            path.display()
        )
        .map_err(io)?;
        return Ok(path);
    }
    if exists {
        std::fs::remove_file(&path)
            .map_err(|e| CliError::Failure(anyhow::anyhow!("removing {}: {e}", path.display())))?;
        for ext in ["-wal", "-shm"] {
            let _ = std::fs::remove_file(format!("{}{ext}", path.display()));
        }
    }
    let mut book = Logbook::open(&path).map_err(|e| CliError::Failure(e.into()))?;
    let s = crate::demo::install(&mut book, crate::demo::SEED)
        .map_err(|e| CliError::Failure(e.into()))?;
    let said = format!(
        "created the demo logbook {} with {} records (seed {})",
        path.display(),
        s.contacts.len(),
        crate::demo::SEED
    );
    writeln!(out, "{}", review::wrap(&said, "", "  ")).map_err(io)?;
    Ok(path)
}

pub fn demo(out: &mut impl Write, db: Option<&Path>, a: &DemoArgs) -> Result<(), CliError> {
    let path = prepare(out, db, a.force)?;
    use std::io::IsTerminal;
    if !a.no_ui && std::io::stdout().is_terminal() && std::io::stdin().is_terminal() {
        let book = Logbook::open(&path).map_err(|e| CliError::Failure(e.into()))?;
        return crate::tui::run(book, Some(crate::app::ui::Screen::Review))
            .map_err(CliError::Failure);
    }
    writeln!(
        out,
        "\nnearsky demo drill: \"{}\"",
        crate::demo::scenario::DRILL_NAME
    )
    .map_err(io)?;
    writeln!(
        out,
        "An invented scenario: every call sign (prefix Q, allocated to no country), name\nand event is fictional.\n"
    )
    .map_err(io)?;
    crate::demo::print_net(out).map_err(io)?;
    let book = Logbook::open(&path).map_err(|e| CliError::Failure(e.into()))?;
    let n = book
        .count(&ContactQuery::default())
        .map_err(|e| CliError::Failure(e.into()))?;
    writeln!(
        out,
        "\n{n} records from all stations' logs, including every failed attempt.\n"
    )
    .map_err(io)?;
    let db = Some(path.as_path());
    review::coverage(
        out,
        db,
        &CoverageArgs {
            drill: None,
            band: None,
            view: CoverageView::Hours,
            bin: 60,
            tolerance: 10,
            sunspots: None,
            format: ReviewFormat::Table,
        },
    )?;
    writeln!(out).map_err(io)?;
    review::plan(
        out,
        db,
        &PlanArgs {
            drill: None,
            for_date: None,
            min_attempts: 4,
            bin: 60,
            format: ReviewFormat::Table,
        },
    )?;
    writeln!(
        out,
        "\nTry: nearsky --db {} coverage --view links --band 40m",
        path.display()
    )
    .map_err(io)?;
    writeln!(out, "     nearsky --db {} crosscheck", path.display()).map_err(io)?;
    Ok(())
}
