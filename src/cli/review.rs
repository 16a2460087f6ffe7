//! `nearsky coverage`, `nearsky plan`, `nearsky crosscheck`: the drill reviewed.
//!
//! Tables fit 80 columns and read without colour: cells carry glyphs (`W` worked, `p`
//! partial, `x` nothing heard, `.` not tried; for groups `#` two thirds or more worked, `+`
//! some worked, `x` none).

use std::io::Write;
use std::path::Path;

use chrono::NaiveDate;
use serde_json::json;

use super::args::{CoverageArgs, CoverageView, CrosscheckArgs, PlanArgs, ReviewFormat, TextOrJson};
use super::book::open;
use super::{CliError, band_flag, clip, io, usage};
use crate::domain::coverage::{Coverage, CoverageConfig};
use crate::domain::plan::{Plan, PlanConfig, make_plan};
use crate::domain::{Band, Outcome};
use crate::store::Logbook;

/// The drill a command works on: the one named (which must exist; `all` for every drill), or
/// the drill in use.
pub(super) fn drill_name(book: &Logbook, given: Option<&str>) -> Result<Option<String>, CliError> {
    let fail = |e: crate::store::StoreError| CliError::Failure(e.into());
    match given {
        Some("all") => Ok(None),
        Some(d) => {
            if !book.drills().map_err(fail)?.iter().any(|x| x.name == d) {
                return Err(usage(format!("--drill: drill `{d}` not found")));
            }
            Ok(Some(d.to_string()))
        }
        None => book.current_drill().map_err(fail),
    }
}

/// Says on stderr (so that the output stays clean for scripts) when the chosen drill holds
/// nothing: usually a new drill was just put in use and another one was meant.
fn say_if_empty(drill: Option<&str>, attempts: u64) {
    if attempts > 0 {
        return;
    }
    match drill {
        Some(d) => eprintln!(
            "nearsky: drill `{d}` has no contacts; --drill NAME uses another drill (`nearsky drill list`), --drill all every contact"
        ),
        None => eprintln!("nearsky: the logbook has no contacts yet"),
    }
}

/// Coverage of a drill, for the commands.
pub fn load_coverage(
    book: &Logbook,
    drill: Option<&str>,
    config: CoverageConfig,
) -> Result<Coverage, CliError> {
    crate::app::review::load_coverage(book, drill, config).map_err(|e| match e {
        crate::app::review::ReviewError::Config(c) => usage(c),
        other => CliError::Failure(other.into()),
    })
}

/// The `--for` date of a plan.
fn plan_date(text: Option<&str>) -> Result<Option<NaiveDate>, CliError> {
    text.map(|d| {
        NaiveDate::parse_from_str(d.trim(), "%Y-%m-%d")
            .map_err(|_| usage(format!("--for: `{d}` is not a date (YYYY-MM-DD)")))
    })
    .transpose()
}

/// Pretty JSON on its own line.
fn print_json(out: &mut impl Write, v: &impl serde::Serialize) -> Result<(), CliError> {
    let text = serde_json::to_string_pretty(v).map_err(|e| CliError::Failure(e.into()))?;
    writeln!(out, "{text}").map_err(io)
}

fn glyph(c: Option<&crate::domain::coverage::Cell>) -> char {
    match c.and_then(|c| c.best()) {
        None => '.',
        Some(Outcome::Worked) => 'W',
        Some(Outcome::Partial) => 'p',
        Some(Outcome::NoContact) => 'x',
    }
}

fn group_glyph(worked: u32, attempts: u32) -> char {
    match (worked, attempts) {
        (_, 0) => '.',
        (0, _) => 'x',
        (w, n) if 3 * w >= 2 * n => '#',
        _ => '+',
    }
}

/// Hour labels over the one-character columns of bins `bins`: a label where a bin starts a
/// whole hour, every 1, 2, 3, 4, 6, 12 or 24 hours, whichever first leaves three columns or
/// more between labels.
fn ruler(bins: std::ops::Range<usize>, bin_minutes: u16) -> String {
    let minutes = usize::from(bin_minutes);
    let step = [1, 2, 3, 4, 6, 12, 24]
        .into_iter()
        .find(|h| h * 60 >= 3 * minutes)
        .unwrap_or(24);
    let mut s = String::new();
    let mut bin = bins.start;
    while bin < bins.end {
        let minute = bin * minutes;
        if minute.is_multiple_of(60 * step) && bin + 2 <= bins.end {
            s.push_str(&format!("{:02}", minute / 60));
            bin += 2;
        } else {
            s.push(' ');
            bin += 1;
        }
    }
    s
}

/// The bins cut into equal runs of at most `room` columns (one when they all fit), so that a
/// matrix of many short bins fits 80 columns as stacked parts of the day.
fn bin_parts(bins: usize, room: usize) -> Vec<std::ops::Range<usize>> {
    let room = room.max(1);
    let parts = (bins.div_ceil(room)..=bins)
        .find(|p| bins.is_multiple_of(*p))
        .unwrap_or(bins)
        .max(1);
    let size = bins / parts;
    (0..parts).map(|i| i * size..(i + 1) * size).collect()
}

/// `, HH:MM–HH:MM UTC` of one part of a matrix shown in several parts; empty when there is
/// one.
fn span_label(
    c: &Coverage,
    parts: &[std::ops::Range<usize>],
    bins: &std::ops::Range<usize>,
) -> String {
    if parts.len() < 2 {
        return String::new();
    }
    let end = bins.end * usize::from(c.config.bin_minutes);
    format!(
        ", {}–{:02}:{:02} UTC",
        c.config.hour_start(bins.start),
        end / 60,
        end % 60
    )
}

fn opt(x: Option<f64>, digits: usize) -> String {
    x.map_or(String::new(), |v| format!("{v:.digits$}"))
}

pub fn coverage(out: &mut impl Write, db: Option<&Path>, a: &CoverageArgs) -> Result<(), CliError> {
    let book = open(db)?;
    let drill = drill_name(&book, a.drill.as_deref())?;
    let band = band_flag(a.band.as_deref())?;
    let config = CoverageConfig {
        bin_minutes: a.bin,
        tolerance_minutes: a.tolerance,
        sunspot_r12: a.sunspots,
        ..CoverageConfig::default()
    };
    let c = load_coverage(&book, drill.as_deref(), config)?;
    say_if_empty(drill.as_deref(), c.observations);
    let bands: Vec<Band> = c
        .bands
        .iter()
        .copied()
        .filter(|b| band.is_none_or(|x| x == *b))
        .collect();
    match (a.view, a.format) {
        (CoverageView::Hours, ReviewFormat::Json) => {
            let rows: Vec<_> = c.hours.iter().filter(|h| bands.contains(&h.band)).map(|h| json!({
                "band": h.band.name(), "hour_start": h.hour_start, "attempts": h.attempts, "worked": h.worked,
                "partial": h.partial, "none": h.none, "wilson_low": h.wilson_low, "wilson_high": h.wilson_high,
                "median_km": h.median_km, "max_km": h.max_km,
            })).collect();
            print_json(out, &rows)?;
        }
        (CoverageView::Hours, ReviewFormat::Csv) => {
            writeln!(out, "band,hour_start,attempts,worked,partial,none,wilson_low,wilson_high,median_km,max_km").map_err(io)?;
            for h in c.hours.iter().filter(|h| bands.contains(&h.band)) {
                writeln!(
                    out,
                    "{},{},{},{},{},{},{:.4},{:.4},{},{}",
                    h.band,
                    h.hour_start,
                    h.attempts,
                    h.worked,
                    h.partial,
                    h.none,
                    h.wilson_low,
                    h.wilson_high,
                    opt(h.median_km, 1),
                    opt(h.max_km, 1)
                )
                .map_err(io)?;
            }
        }
        (CoverageView::Hours, fmt @ (ReviewFormat::Table | ReviewFormat::Md)) => {
            let md = fmt == ReviewFormat::Md;
            if md {
                writeln!(
                    out,
                    "| UTC | {} |",
                    bands
                        .iter()
                        .map(|b| b.name().to_string())
                        .collect::<Vec<_>>()
                        .join(" | ")
                )
                .map_err(io)?;
                writeln!(out, "|---|{}", "---|".repeat(bands.len())).map_err(io)?;
            } else {
                writeln!(
                    out,
                    "worked/attempts and 95% Wilson interval of the worked share, per band"
                )
                .map_err(io)?;
                let mut head = String::from("UTC  ");
                for b in &bands {
                    head.push_str(&format!(" {:<22}", b.name()));
                }
                writeln!(out, "{}", head.trim_end()).map_err(io)?;
            }
            for bin in 0..c.config.bins() {
                if !c
                    .hours
                    .iter()
                    .any(|h| h.bin == bin && bands.contains(&h.band))
                {
                    continue;
                }
                let cells: Vec<String> = bands
                    .iter()
                    .map(|b| match c.hour(*b, bin) {
                        Some(h) => format!(
                            "{:>3}/{:<3} {:.2}-{:.2}",
                            h.worked, h.attempts, h.wilson_low, h.wilson_high
                        ),
                        None => "-".to_string(),
                    })
                    .collect();
                if md {
                    writeln!(
                        out,
                        "| {} | {} |",
                        c.config.hour_start(bin),
                        cells.join(" | ")
                    )
                    .map_err(io)?;
                } else {
                    let row: String = cells.iter().map(|s| format!(" {s:<22}")).collect();
                    writeln!(out, "{}{}", c.config.hour_start(bin), row.trim_end()).map_err(io)?;
                }
            }
            if !md {
                let line = format!(
                    "{} observations: {} confirmed by both sides, {} one-sided; {} contradictions (nearsky crosscheck)",
                    c.observations, c.confirmed, c.one_sided, c.contradictions_total
                );
                writeln!(out, "{}", wrap(&line, "", "  ")).map_err(io)?;
            }
        }
        (CoverageView::Links, ReviewFormat::Json) => {
            let rows: Vec<_> = c.links.iter().map(|l| json!({
                "a": l.a, "b": l.b, "distance_km": l.distance_km, "bearing_deg": l.bearing_deg,
                "bands": l.cells.iter().filter(|(b, _)| bands.contains(b)).map(|(b, cells)| (b.name().to_string(), serde_json::Value::Array(cells.iter().enumerate().filter_map(|(i, cell)| cell.as_ref().map(|cell| json!({
                    "hour_start": c.config.hour_start(i), "attempts": cell.attempts, "worked": cell.worked, "partial": cell.partial, "none": cell.none, "best_report": cell.best_report.map(|r| r.to_string()), "confirmed": cell.confirmed,
                }))).collect::<Vec<_>>()))).collect::<serde_json::Map<_, _>>(),
            })).collect();
            print_json(out, &rows)?;
        }
        (CoverageView::Links, ReviewFormat::Csv) => {
            writeln!(out, "a,b,distance_km,bearing_deg,band,hour_start,attempts,worked,partial,none,best_report,confirmed").map_err(io)?;
            for l in &c.links {
                for (b, cells) in l.cells.iter().filter(|(b, _)| bands.contains(b)) {
                    for (i, cell) in cells.iter().enumerate() {
                        if let Some(cell) = cell {
                            writeln!(
                                out,
                                "{},{},{},{},{},{},{},{},{},{},{},{}",
                                l.a,
                                l.b,
                                opt(l.distance_km, 1),
                                opt(l.bearing_deg, 0),
                                b,
                                c.config.hour_start(i),
                                cell.attempts,
                                cell.worked,
                                cell.partial,
                                cell.none,
                                cell.best_report.map(|r| r.to_string()).unwrap_or_default(),
                                cell.confirmed
                            )
                            .map_err(io)?;
                        }
                    }
                }
            }
        }
        (CoverageView::Links, fmt @ (ReviewFormat::Table | ReviewFormat::Md)) => {
            let fence = fmt == ReviewFormat::Md;
            // 27 columns of link, km and bearing before the bins.
            let parts = bin_parts(c.config.bins(), 80 - 27);
            for (b, part) in bands.iter().flat_map(|b| parts.iter().map(move |p| (b, p))) {
                let span = span_label(&c, &parts, part);
                if fence {
                    writeln!(out, "### {b}{span}\n\n```").map_err(io)?;
                } else {
                    // A part's span says UTC already.
                    let hours = if span.is_empty() { " (UTC hours)" } else { "" };
                    writeln!(
                        out,
                        "{b}{span}: W worked, p partial, x nothing heard, . not tried{hours}"
                    )
                    .map_err(io)?;
                }
                writeln!(
                    out,
                    "{:<15} {:>5} {:>4} {}",
                    "link",
                    "km",
                    "brg",
                    ruler(part.clone(), c.config.bin_minutes)
                )
                .map_err(io)?;
                for l in c.links.iter().filter(|l| l.cells.contains_key(b)) {
                    let row: String = l.cells[b][part.clone()]
                        .iter()
                        .map(|cell| glyph(cell.as_ref()))
                        .collect();
                    let name = format!("{}-{}", l.a, l.b);
                    writeln!(
                        out,
                        "{:<15} {:>5} {:>4} {row}",
                        clip(&name, 15),
                        opt(l.distance_km, 0),
                        opt(l.bearing_deg, 0)
                    )
                    .map_err(io)?;
                }
                writeln!(out, "{}", if fence { "```\n" } else { "" }).map_err(io)?;
            }
        }
        (CoverageView::Rings, ReviewFormat::Json) => {
            let rows: Vec<_> = c.rings.iter().filter(|r| bands.contains(&r.band)).map(|r| json!({
                "band": r.band.name(), "ring_km": r.ring, "hour_start": r.hour_start, "attempts": r.attempts, "worked": r.worked,
            })).collect();
            print_json(out, &rows)?;
        }
        (CoverageView::Rings, ReviewFormat::Csv) => {
            writeln!(out, "band,ring_km,hour_start,attempts,worked").map_err(io)?;
            for r in c.rings.iter().filter(|r| bands.contains(&r.band)) {
                writeln!(
                    out,
                    "{},{},{},{},{}",
                    r.band, r.ring, r.hour_start, r.attempts, r.worked
                )
                .map_err(io)?;
            }
        }
        (CoverageView::Rings, fmt @ (ReviewFormat::Table | ReviewFormat::Md)) => {
            let fence = fmt == ReviewFormat::Md;
            let labels = c.config.ring_labels();
            // 11 columns of ring before the bins.
            let parts = bin_parts(c.config.bins(), 80 - 11);
            for (b, part) in bands.iter().flat_map(|b| parts.iter().map(move |p| (b, p))) {
                let span = span_label(&c, &parts, part);
                if fence {
                    writeln!(out, "### {b}{span}\n\n```").map_err(io)?;
                } else {
                    let legend = if span.is_empty() {
                        " (near rings failing while\n  far ones work: a skip zone)"
                    } else {
                        "\n  (near rings failing while far ones work: a skip zone)"
                    };
                    writeln!(
                        out,
                        "{b}{span}: # most worked, + some, x none, . not tried{legend}"
                    )
                    .map_err(io)?;
                }
                writeln!(
                    out,
                    "{:<10} {}",
                    "ring km",
                    ruler(part.clone(), c.config.bin_minutes)
                )
                .map_err(io)?;
                for label in &labels {
                    let row: String = part
                        .clone()
                        .map(|bin| {
                            let r = c
                                .rings
                                .iter()
                                .find(|r| r.band == *b && r.bin == bin && &r.ring == label);
                            r.map_or('.', |r| group_glyph(r.worked, r.attempts))
                        })
                        .collect();
                    writeln!(out, "{label:<10} {row}").map_err(io)?;
                }
                writeln!(out, "{}", if fence { "```\n" } else { "" }).map_err(io)?;
            }
        }
    }
    if a.view == CoverageView::Hours && a.format == ReviewFormat::Table && !c.evidence.is_empty() {
        writeln!(out, "\nevidence per hour:").map_err(io)?;
        for e in &c.evidence {
            let sun = e.sun_elevation_deg.map_or(String::new(), |s| {
                format!(
                    " [sun {s:.0} deg, {}]",
                    e.daylight.map_or("", |d| d.words())
                )
            });
            writeln!(out, "{}", wrap(&format!("{}{sun}", e.note), "  ", "      ")).map_err(io)?;
            if let Some(f) = e.foe_expected_mhz {
                writeln!(
                    out,
                    "    expected foE (Chapman, sunspots given): {f:.1} MHz"
                )
                .map_err(io)?;
            }
            for (t, b, st, text) in &e.operator_notes {
                let band = b.map_or(String::new(), |b| format!(" {b}"));
                let line = format!(
                    "note {} {st}{band}: {}",
                    t.format("%H:%M"),
                    crate::domain::text::visible(text)
                );
                writeln!(out, "{}", wrap(&line, "    ", "      ")).map_err(io)?;
            }
        }
    }
    Ok(())
}

/// Word-wraps `text` to 80 columns: the first line after `first`, the others after `rest`.
pub(crate) fn wrap(text: &str, first: &str, rest: &str) -> String {
    crate::domain::text::wrap_words(text, 80, first, rest, false).join("\n")
}

pub fn plan_of(
    book: &Logbook,
    drill: Option<&str>,
    bin: u16,
    min_attempts: u32,
    for_date: Option<NaiveDate>,
) -> Result<Plan, CliError> {
    let c = load_coverage(
        book,
        drill,
        CoverageConfig {
            bin_minutes: bin,
            ..CoverageConfig::default()
        },
    )?;
    Ok(make_plan(
        &c,
        &PlanConfig {
            min_attempts,
            for_date,
        },
    ))
}

pub fn plan(out: &mut impl Write, db: Option<&Path>, a: &PlanArgs) -> Result<(), CliError> {
    let book = open(db)?;
    let drill = drill_name(&book, a.drill.as_deref())?;
    let for_date = plan_date(a.for_date.as_deref())?;
    let p = plan_of(&book, drill.as_deref(), a.bin, a.min_attempts, for_date)?;
    say_if_empty(
        drill.as_deref(),
        p.bins.iter().map(|b| u64::from(b.attempts)).sum(),
    );
    let name = |b: Option<Band>| b.map_or(String::new(), |b| b.name().to_string());
    match a.format {
        ReviewFormat::Json => {
            print_json(out, &p)?;
        }
        ReviewFormat::Csv => {
            writeln!(out, "hour_start,minutes,primary,alternate,attempts,note").map_err(io)?;
            for b in &p.bins {
                writeln!(
                    out,
                    "{},{},{},{},{},\"{}\"",
                    b.hour_start,
                    b.minutes,
                    name(b.primary),
                    name(b.alternate),
                    b.attempts,
                    b.note.replace('"', "\"\"")
                )
                .map_err(io)?;
            }
        }
        ReviewFormat::Md => {
            writeln!(
                out,
                "| UTC | primary | alternate | attempts | evidence |\n|---|---|---|---|---|"
            )
            .map_err(io)?;
            for b in &p.bins {
                writeln!(
                    out,
                    "| {} | {} | {} | {} | {} |",
                    b.hour_start,
                    name(b.primary),
                    name(b.alternate),
                    b.attempts,
                    b.note
                )
                .map_err(io)?;
            }
            if !p.relays.is_empty() {
                writeln!(
                    out,
                    "\n| UTC | link | on | relay candidates |\n|---|---|---|---|"
                )
                .map_err(io)?;
                for r in &p.relays {
                    let cands = r.candidates_text(usize::MAX);
                    writeln!(
                        out,
                        "| {} | {}–{} | {} | {} |",
                        r.hour_start,
                        r.a,
                        r.b,
                        r.band,
                        if cands.is_empty() {
                            "none".into()
                        } else {
                            cands
                        }
                    )
                    .map_err(io)?;
                }
            }
            writeln!(out, "\n{}", p.ranking).map_err(io)?;
        }
        ReviewFormat::Table => {
            let when = p.for_date.map_or("the same hours".to_string(), |d| {
                format!("{d} (hours moved with the Sun)")
            });
            writeln!(
                out,
                "{}",
                wrap(&format!("plan for {when}; {}", p.ranking), "", "  ")
            )
            .map_err(io)?;
            writeln!(
                out,
                "{:<5} {:<7} {:<9} {:>4}  evidence",
                "UTC", "primary", "alternate", "n"
            )
            .map_err(io)?;
            for row in p.rows() {
                let b = row.bin;
                // The evidence wraps under its own column rather than being cut.
                let first = format!(
                    "{:<5} {:<7} {:<9} {:>4}  ",
                    b.hour_start,
                    name(b.primary),
                    name(b.alternate),
                    b.attempts,
                );
                let rest = " ".repeat(first.chars().count());
                writeln!(out, "{}", wrap(&row.note, &first, &rest)).map_err(io)?;
            }
            if !p.relays.is_empty() {
                writeln!(
                    out,
                    "\nlinks expected to fail even on the primary band, and who could relay:"
                )
                .map_err(io)?;
                for r in &p.relays {
                    writeln!(out, "{}", wrap(&r.line(3), "  ", "      ")).map_err(io)?;
                }
            }
        }
    }
    Ok(())
}

pub fn crosscheck(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &CrosscheckArgs,
) -> Result<(), CliError> {
    let book = open(db)?;
    let drill = drill_name(&book, a.drill.as_deref())?;
    let c = load_coverage(
        &book,
        drill.as_deref(),
        CoverageConfig {
            tolerance_minutes: a.tolerance,
            ..CoverageConfig::default()
        },
    )?;
    match a.format {
        TextOrJson::Json => {
            let v = json!({
                "observations": c.observations, "confirmed": c.confirmed, "one_sided": c.one_sided,
                "contradictions_total": c.contradictions_total,
                "contradictions": c.contradictions,
            });
            print_json(out, &v)?;
        }
        TextOrJson::Text => {
            let line = format!(
                "{} observations: {} confirmed by both sides, {} one-sided (tolerance {} min)",
                c.observations, c.confirmed, c.one_sided, a.tolerance
            );
            writeln!(out, "{}", wrap(&line, "", "  ")).map_err(io)?;
            if c.contradictions.is_empty() {
                writeln!(out, "no contradictions").map_err(io)?;
            } else if c.contradictions_total > c.contradictions.len() as u64 {
                writeln!(
                    out,
                    "{} contradictions; the first {} are listed",
                    c.contradictions_total,
                    c.contradictions.len()
                )
                .map_err(io)?;
            }
            for x in &c.contradictions {
                let kind = match x.kind {
                    crate::domain::coverage::ContradictionKind::Band => "band",
                    crate::domain::coverage::ContradictionKind::Time => "time",
                    crate::domain::coverage::ContradictionKind::Outcome => "outcome",
                };
                writeln!(
                    out,
                    "{}",
                    wrap(&x.message, &format!("{kind:<8} "), "         ")
                )
                .map_err(io)?;
                writeln!(
                    out,
                    "         contacts {} and {}",
                    x.ids[0].short(),
                    x.ids[1].short()
                )
                .map_err(io)?;
            }
        }
    }
    Ok(())
}

pub fn report(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &super::args::ReportArgs,
    now: chrono::DateTime<chrono::Utc>,
) -> Result<(), CliError> {
    let book = open(db)?;
    let drill = drill_name(&book, a.drill.as_deref())?;
    if a.output.exists() && !a.force {
        return Err(usage(format!(
            "{} exists; pass --force to overwrite it",
            a.output.display()
        )));
    }
    let for_date = plan_date(a.for_date.as_deref())?;
    let c = load_coverage(&book, drill.as_deref(), CoverageConfig::default())?;
    let p = make_plan(
        &c,
        &PlanConfig {
            for_date,
            ..PlanConfig::default()
        },
    );
    let fail = |e: crate::store::StoreError| CliError::Failure(e.into());
    let ncs = match &drill {
        Some(d) => book
            .drills()
            .map_err(fail)?
            .into_iter()
            .find(|x| &x.name == d)
            .and_then(|x| x.net_control)
            .map(|c| c.to_string()),
        None => None,
    };
    let home = match book.current_station().map_err(fail)? {
        Some(s) => book.station_locator_at(&s.call, now).map_err(fail)?,
        None => None,
    };
    let records = book
        .count(&crate::store::ContactQuery {
            drill: drill.clone(),
            ..Default::default()
        })
        .map_err(fail)?;
    let info = crate::formats::report::ReportInfo {
        drill: drill.as_deref(),
        net_control: ncs.as_deref(),
        created: now,
        records,
        home,
    };
    let page = crate::formats::report::html(&c, &p, &info);
    std::fs::write(&a.output, page)
        .map_err(|e| CliError::Failure(anyhow::anyhow!("{}: {e}", a.output.display())))?;
    writeln!(out, "wrote the report to {}", a.output.display()).map_err(io)?;
    Ok(())
}
