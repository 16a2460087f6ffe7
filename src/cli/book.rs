//! The logbook commands: log, note, list, edit, delete, drill, station, roster, backup, check.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::Context;
use chrono::{DateTime, SecondsFormat, Utc};
use serde_json::json;
use uuid::Uuid;

use super::args::{
    DeleteArgs, DrillCommand, EditArgs, ListArgs, ListFormat, LogArgs, NoteArgs, RosterCommand,
    StationCommand, TextOrJson, WriterArgs,
};
use super::review::wrap;
use super::{CliError, band_flag, clip, count_of, io, usage};
use crate::domain::caution::transmit_cautions;
use crate::domain::geo;
use crate::domain::{
    Band, Callsign, Contact, ContactForm, ContactId, FormContext, Locator, Origin, Outcome, Power,
    StationSnapshot, parse_utc,
};
use crate::store::{ContactQuery, Drill, Logbook, Note, RosterEntry, StationProfile, StoreError};

/// Where the logbook lives when neither `--db` nor `NEARSKY_DB` says: the platform's data
/// directory (XDG on Linux).
pub fn default_db() -> anyhow::Result<PathBuf> {
    let dirs = directories::ProjectDirs::from("", "", "nearsky")
        .context("no home directory to keep the logbook in; give --db PATH")?;
    let dir = dirs.data_dir();
    std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    Ok(dir.join("logbook.db"))
}

/// Opens the logbook the command line names.
pub fn open(db: Option<&Path>) -> Result<Logbook, CliError> {
    let path = match db {
        Some(p) => p.to_path_buf(),
        None => default_db()?,
    };
    Logbook::open(&path).map_err(|e| store_error(e, &path))
}

fn store_error(e: StoreError, path: &Path) -> CliError {
    match e {
        StoreError::Invalid(_) | StoreError::NotFound { .. } => usage(e),
        other => CliError::Failure(
            anyhow::Error::new(other).context(format!("logbook {}", path.display())),
        ),
    }
}

fn st(e: StoreError) -> CliError {
    match e {
        StoreError::Invalid(_) | StoreError::NotFound { .. } => usage(e),
        other => CliError::Failure(other.into()),
    }
}

fn rfc3339(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Secs, true)
}

fn parse_time(
    text: Option<&str>,
    now: DateTime<Utc>,
    flag: &str,
) -> Result<DateTime<Utc>, CliError> {
    match text {
        None => Ok(now),
        Some(t) => parse_utc(t, now.date_naive()).map_err(|e| usage(format!("{flag}: {e}"))),
    }
}

/// A logbook without an own station takes it from the config file's call and locator.
fn station_from_config(
    book: &mut Logbook,
    config: &crate::config::Config,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    if book.current_station().map_err(st)?.is_some() {
        return Ok(());
    }
    if let (Some(call), Some(locator)) = (&config.call, config.locator) {
        let p = StationProfile {
            call: call.clone(),
            operator: None,
            usual_power: config.power,
            antenna: None,
            rig: None,
        };
        book.set_station(&p, Some((locator, now))).map_err(st)?;
        eprintln!(
            "own station {call} at {locator}, from {}",
            config
                .source
                .as_ref()
                .map_or("the config file".to_string(), |p| p.display().to_string())
        );
    }
    Ok(())
}

/// The own station as it is at `at`, for the snapshot every contact carries.
fn own_snapshot(book: &Logbook, at: DateTime<Utc>) -> Result<StationSnapshot, CliError> {
    let Some(p) = book.current_station().map_err(st)? else {
        return Err(usage(
            "no own station yet: run `nearsky station set --call CALL --grid LOCATOR` first",
        ));
    };
    let locator = book.station_locator_at(&p.call, at).map_err(st)?;
    Ok(StationSnapshot {
        call: p.call,
        operator: p.operator,
        locator,
        power: p.usual_power,
        antenna: p.antenna,
    })
}

/// One line about a contact: what an operator wants to see right after logging it.
pub fn describe(c: &Contact) -> String {
    let mut s = format!(
        "{} {} {} {} {}",
        c.start.format("%Y-%m-%d %H:%M UTC"),
        c.call,
        c.frequency
            .map_or_else(|| c.band.to_string(), |f| format!("{} {}", c.band, f)),
        c.mode.short(),
        c.outcome.words()
    );
    if let Some(r) = c.sent {
        s.push_str(&format!(" sent {r}"));
    }
    if let Some(r) = c.rcvd {
        s.push_str(&format!(" rcvd {r}"));
    }
    if let Some(v) = &c.via {
        s.push_str(&format!(" via {v}"));
    }
    if let (Some(a), Some(b)) = (&c.own.locator, &c.locator) {
        let p = geo::centre_path(a, b);
        match p.bearing_deg {
            Some(brg) => s.push_str(&format!(", {:.0} km at {brg:.0} deg", p.distance_km)),
            None => s.push_str(", same square"),
        }
    }
    s
}

fn distance_bearing(c: &Contact) -> (Option<f64>, Option<f64>) {
    match (&c.own.locator, &c.locator) {
        (Some(a), Some(b)) => {
            let p = geo::centre_path(a, b);
            (Some(p.distance_km), p.bearing_deg)
        }
        _ => (None, None),
    }
}

fn contact_json(c: &Contact, deleted: bool, revision: u32) -> serde_json::Value {
    let (km, brg) = distance_bearing(c);
    json!({
        "id": c.id.to_string(),
        "drill": c.drill,
        "own_call": c.own.call.as_str(),
        "own_locator": c.own.locator.map(|l| l.to_string()),
        "call": c.call.as_str(),
        "locator": c.locator.map(|l| l.to_string()),
        "start": rfc3339(c.start),
        "end": c.end.map(rfc3339),
        "band": c.band.name(),
        "freq_hz": c.frequency.map(|f| f.hz()),
        "mode": c.mode.mode(),
        "submode": c.mode.submode(),
        "rst_sent": c.sent.map(|r| r.to_string()),
        "rst_rcvd": c.rcvd.map(|r| r.to_string()),
        "power_w": c.own.power.map(Power::watts),
        "their_power_w": c.other_power.map(Power::watts),
        "outcome": c.outcome.key(),
        "via": c.via.as_ref().map(Callsign::as_str),
        "note": c.note,
        "distance_km": km.map(|d| (d * 10.0).round() / 10.0),
        "bearing_deg": brg.map(|b| b.round()),
        "deleted": deleted,
        "revision": revision,
    })
}

/// Fills what the operator left out from what the logbook knows: the roster's locator, and
/// band, frequency and mode of the last contact.
fn fill_defaults(book: &Logbook, form: &mut ContactForm) -> Result<(), CliError> {
    if form.locator.trim().is_empty()
        && let Ok(call) = Callsign::parse(&form.call)
        && let Some(e) = book.roster_entry(&call).map_err(st)?
        && let Some(l) = e.locator
    {
        form.locator = l.to_string();
    }
    let (last, _) = book.page(&ContactQuery::default(), 1, None).map_err(st)?;
    if let Some(last) = last.first().map(|s| &s.contact) {
        if form.band.trim().is_empty() && form.frequency.trim().is_empty() {
            match last.frequency {
                Some(f) => form.frequency = f.mhz_text(),
                None => form.band = last.band.to_string(),
            }
        }
        if form.mode.trim().is_empty() {
            form.mode = last.mode.to_string();
        }
    }
    if form.mode.trim().is_empty() {
        return Err(usage(
            "mode: give --mode (no earlier contact to take it from)",
        ));
    }
    if form.band.trim().is_empty() && form.frequency.trim().is_empty() {
        return Err(usage(
            "band: give --freq or --band (no earlier contact to take it from)",
        ));
    }
    Ok(())
}

pub fn log(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &LogArgs,
    now: DateTime<Utc>,
    config: &crate::config::Config,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    station_from_config(&mut book, config, now)?;
    let start = parse_time(a.time.as_deref(), now, "--time")?;
    let opt = |o: &Option<String>| o.clone().unwrap_or_default();
    let mut form = ContactForm {
        call: a.call.clone(),
        locator: opt(&a.grid),
        time: rfc3339(start),
        band: opt(&a.band),
        frequency: opt(&a.freq),
        mode: opt(&a.mode),
        sent: opt(&a.sent),
        rcvd: opt(&a.rcvd),
        power: a
            .power
            .clone()
            .or_else(|| config.power.map(|p| p.watts().to_string()))
            .unwrap_or_default(),
        other_power: opt(&a.their_power),
        outcome: a.outcome.clone(),
        via: opt(&a.via),
        note: opt(&a.note),
        ..ContactForm::default()
    };
    fill_defaults(&book, &mut form)?;
    let ctx = FormContext {
        id: ContactId(Uuid::new_v4()),
        own: own_snapshot(&book, start)?,
        drill: book.current_drill().map_err(st)?,
        today: now.date_naive(),
        origin: Origin::LoggedHere,
    };
    let contact = form.validate(&ctx).map_err(usage)?;
    let window = a
        .dup_window
        .or(config.duplicate_window_minutes)
        .unwrap_or(10);
    let dups = book.add_contact(&contact, window).map_err(st)?;
    // On stderr, so that the JSON on stdout stays clean; the contact is logged either way.
    for c in transmit_cautions(contact.band, contact.frequency, contact.own.power) {
        eprintln!("{}", wrap(&format!("caution: {c}"), "", "  "));
    }
    match a.format {
        TextOrJson::Json => {
            let mut v = contact_json(&contact, false, 1);
            v["possible_duplicates"] =
                json!(dups.iter().map(|d| d.id.to_string()).collect::<Vec<_>>());
            writeln!(out, "{v}").map_err(io)?;
        }
        TextOrJson::Text => {
            let said = format!("logged {}", describe(&contact));
            writeln!(out, "{}", wrap(&said, "", "  ")).map_err(io)?;
            writeln!(out, "id {}", contact.id).map_err(io)?;
            for d in dups {
                let said = format!(
                    "warning: possible duplicate of {} at {} ({}); kept both",
                    d.id,
                    d.start.format("%H:%M UTC"),
                    d.outcome.words()
                );
                writeln!(out, "{}", wrap(&said, "", "  ")).map_err(io)?;
            }
        }
    }
    Ok(())
}

pub fn note(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &NoteArgs,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    let at = parse_time(a.time.as_deref(), now, "--time")?;
    let band = band_flag(a.band.as_deref())?;
    let station = own_snapshot(&book, at)?.call;
    let n = Note {
        id: Uuid::new_v4(),
        drill: book.current_drill().map_err(st)?,
        at,
        band,
        station,
        text: a.text.clone(),
    };
    book.add_note(&n).map_err(st)?;
    writeln!(
        out,
        "noted at {}{}",
        at.format("%Y-%m-%d %H:%M UTC"),
        band.map_or(String::new(), |b| format!(" on {b}"))
    )
    .map_err(io)?;
    Ok(())
}

pub fn list(out: &mut impl Write, db: Option<&Path>, a: &ListArgs) -> Result<(), CliError> {
    let book = open(db)?;
    let drill = super::review::drill_name(&book, a.drill.as_deref())?;
    let band = band_flag(a.band.as_deref())?;
    let station = super::station_flag(a.station.as_deref())?;
    let q = ContactQuery {
        drill,
        band,
        station,
        include_deleted: a.deleted,
        ..ContactQuery::default()
    };
    let (rows, _) = book.page(&q, a.limit, None).map_err(st)?;
    match a.format {
        ListFormat::Json => {
            let v: Vec<_> = rows
                .iter()
                .map(|r| contact_json(&r.contact, r.deleted, r.revision))
                .collect();
            writeln!(out, "{}", serde_json::Value::Array(v)).map_err(io)?;
        }
        ListFormat::Csv => {
            let mut paths = crate::domain::geo::PathCache::new();
            crate::formats::csv::write_header(out).map_err(io)?;
            for r in &rows {
                crate::formats::csv::write_row(out, &r.contact, r.deleted, &mut paths)
                    .map_err(io)?;
            }
        }
        ListFormat::Table => {
            writeln!(
                out,
                "{:<16} {:<10} {:<5} {:<6} {:<10} {:>4} {:>4} {:>4} {:>3} id",
                "UTC", "call", "band", "mode", "outcome", "sent", "rcvd", "km", "brg"
            )
            .map_err(io)?;
            for r in &rows {
                let c = &r.contact;
                let (km, brg) = distance_bearing(c);
                writeln!(
                    out,
                    "{:<16} {:<10} {:<5} {:<6} {:<10} {:>4} {:>4} {:>4} {:>3} {}",
                    c.start.format("%Y-%m-%d %H:%M"),
                    c.call.as_str(),
                    c.band.name(),
                    clip(c.mode.short(), 6),
                    // A deleted contact says so where its outcome would be (80 columns).
                    if r.deleted {
                        "deleted"
                    } else {
                        c.outcome.words()
                    },
                    c.sent.map(|x| x.to_string()).unwrap_or_default(),
                    c.rcvd.map(|x| x.to_string()).unwrap_or_default(),
                    km.map(|d| format!("{d:.0}")).unwrap_or_default(),
                    brg.map(|b| format!("{b:.0}")).unwrap_or_default(),
                    c.id.short(),
                )
                .map_err(io)?;
            }
            if rows.is_empty() {
                writeln!(out, "(no contacts)").map_err(io)?;
            }
        }
    }
    Ok(())
}

/// Corrects a contact. A bare time of day (`--time 14:05`) falls on the contact's own date.
pub fn edit(out: &mut impl Write, db: Option<&Path>, a: &EditArgs) -> Result<(), CliError> {
    let mut book = open(db)?;
    let stored = book.find_contact(&a.id).map_err(st)?;
    let c = &stored.contact;
    let keep = |new: &Option<String>, old: String| new.clone().unwrap_or(old);
    let or_empty = |x: Option<String>| x.unwrap_or_default();
    // When a new frequency is given without a band, the band follows the frequency.
    let band = match (&a.band, &a.freq) {
        (Some(b), _) => b.clone(),
        (None, Some(_)) => String::new(),
        (None, None) => {
            if c.frequency.is_some() {
                String::new()
            } else {
                c.band.to_string()
            }
        }
    };
    let form = ContactForm {
        call: keep(&a.call, c.call.to_string()),
        locator: keep(&a.grid, or_empty(c.locator.map(|l| l.to_string()))),
        time: keep(&a.time, rfc3339(c.start)),
        end_time: or_empty(c.end.map(rfc3339)),
        band,
        frequency: keep(&a.freq, or_empty(c.frequency.map(|f| f.mhz_text()))),
        mode: keep(&a.mode, c.mode.to_string()),
        sent: keep(&a.sent, or_empty(c.sent.map(|r| r.to_string()))),
        rcvd: keep(&a.rcvd, or_empty(c.rcvd.map(|r| r.to_string()))),
        power: keep(
            &a.power,
            or_empty(c.own.power.map(|p| p.watts().to_string())),
        ),
        other_power: keep(
            &a.their_power,
            or_empty(c.other_power.map(|p| p.watts().to_string())),
        ),
        outcome: keep(&a.outcome, c.outcome.key().to_string()),
        via: keep(&a.via, or_empty(c.via.as_ref().map(|v| v.to_string()))),
        note: keep(&a.note, c.note.clone()),
    };
    let ctx = FormContext {
        id: c.id,
        own: c.own.clone(),
        drill: c.drill.clone(),
        today: c.start.date_naive(),
        origin: c.origin.clone(),
    };
    let updated = form.validate(&ctx).map_err(usage)?;
    if updated == *c {
        writeln!(
            out,
            "nothing changed: contact {} stays as it was (revision {})",
            c.id.short(),
            stored.revision
        )
        .map_err(io)?;
        return Ok(());
    }
    book.edit_contact(&updated, &a.reason).map_err(st)?;
    let said = format!("edited {}", describe(&updated));
    writeln!(out, "{}", wrap(&said, "", "  ")).map_err(io)?;
    writeln!(out, "revision {} kept with the reason", stored.revision).map_err(io)?;
    Ok(())
}

pub fn delete(out: &mut impl Write, db: Option<&Path>, a: &DeleteArgs) -> Result<(), CliError> {
    let mut book = open(db)?;
    let stored = book.find_contact(&a.id).map_err(st)?;
    book.delete_contact(stored.contact.id, &a.reason)
        .map_err(st)?;
    let said = format!(
        "deleted {} (kept in the file, marked deleted)",
        describe(&stored.contact)
    );
    writeln!(out, "{}", wrap(&said, "", "  ")).map_err(io)?;
    Ok(())
}

/// Reads a plan written by `nearsky plan --format json` (or `--format csv`) as a schedule.
fn read_plan(path: &Path) -> Result<Vec<crate::domain::plan::ScheduleSlot>, CliError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| usage(format!("--plan: {}: {e}", path.display())))?;
    let plan: crate::domain::plan::Plan = match serde_json::from_str(&text) {
        Ok(p) => p,
        Err(json_err) => plan_from_csv(&text).map_err(|csv_err| {
            usage(format!(
                "--plan: {} is neither a JSON plan ({json_err}) nor a CSV plan ({csv_err})",
                path.display()
            ))
        })?,
    };
    Ok(crate::domain::plan::schedule(&plan))
}

fn plan_from_csv(text: &str) -> Result<crate::domain::plan::Plan, String> {
    let mut lines = text.lines();
    let header = lines.next().ok_or("empty file")?;
    if !header.starts_with("hour_start,minutes,primary,alternate") {
        return Err("line 1: expected the header hour_start,minutes,primary,alternate,...".into());
    }
    let mut bins = Vec::new();
    for (i, line) in lines.enumerate().filter(|(_, l)| !l.trim().is_empty()) {
        let cols: Vec<&str> = line.splitn(6, ',').collect();
        let n = i + 2;
        let [hour, minutes, primary, alternate, attempts, ..] = cols.as_slice() else {
            return Err(format!("line {n}: expected at least 5 columns"));
        };
        let band = |s: &str| {
            if s.is_empty() {
                Ok(None)
            } else {
                crate::domain::Band::parse(s)
                    .map(Some)
                    .map_err(|e| format!("line {n}: {e}"))
            }
        };
        bins.push(crate::domain::plan::PlanBin {
            hour_start: hour.to_string(),
            minutes: minutes
                .parse()
                .map_err(|_| format!("line {n}: minutes `{minutes}` is not a number"))?,
            primary: band(primary)?,
            alternate: band(alternate)?,
            attempts: attempts
                .parse()
                .map_err(|_| format!("line {n}: attempts `{attempts}` is not a number"))?,
            note: cols
                .get(5)
                .map(|s| s.trim_matches('"').to_string())
                .unwrap_or_default(),
        });
    }
    Ok(crate::domain::plan::Plan {
        for_date: None,
        evidence_date: None,
        min_attempts: 0,
        bins,
        relays: Vec::new(),
        ranking: String::new(),
    })
}

pub fn drill(
    out: &mut impl Write,
    db: Option<&Path>,
    cmd: &DrillCommand,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    match cmd {
        DrillCommand::New {
            name,
            ncs,
            description,
            start,
            end,
            plan,
        } => {
            let schedule = plan.as_deref().map(read_plan).transpose()?;
            let net_control = ncs
                .as_deref()
                .map(Callsign::parse)
                .transpose()
                .map_err(|e| usage(format!("--ncs: {e}")))?;
            let starts_at = start
                .as_deref()
                .map(|t| parse_time(Some(t), now, "--start"))
                .transpose()?;
            let ends_at = end
                .as_deref()
                .map(|t| parse_time(Some(t), now, "--end"))
                .transpose()?;
            let d = Drill {
                name: name.trim().to_string(),
                starts_at,
                ends_at,
                net_control,
                description: description.clone().unwrap_or_default(),
            };
            book.add_drill(&d).map_err(st)?;
            book.use_drill(&d.name).map_err(st)?;
            writeln!(out, "drill `{}` created and in use", d.name).map_err(io)?;
            if let Some(slots) = schedule {
                book.set_schedule(&d.name, &slots).map_err(st)?;
                writeln!(
                    out,
                    "band schedule: {} from the plan",
                    count_of(slots.len() as u64, "slot")
                )
                .map_err(io)?;
                if slots.iter().all(|s| s.primary.is_none()) {
                    writeln!(
                        out,
                        "  the plan names no band for any hour (not enough evidence): log the drill as it goes"
                    )
                    .map_err(io)?;
                }
                for s in &slots {
                    let b = |b: Option<crate::domain::Band>| {
                        b.map_or("-".to_string(), |b| b.to_string())
                    };
                    writeln!(
                        out,
                        "  {:02}:{:02} for {:>4} min: {} (alternate {})",
                        s.start_minute / 60,
                        s.start_minute % 60,
                        s.minutes,
                        b(s.primary),
                        b(s.alternate)
                    )
                    .map_err(io)?;
                }
            }
        }
        DrillCommand::List => {
            let current = book.current_drill().map_err(st)?;
            let mut in_drills = 0;
            for d in book.drills().map_err(st)? {
                let mark = if current.as_deref() == Some(d.name.as_str()) {
                    "*"
                } else {
                    " "
                };
                let when = d
                    .starts_at
                    .map(|t| t.format(" from %Y-%m-%d %H:%M UTC").to_string())
                    .unwrap_or_default();
                let ncs = d
                    .net_control
                    .map(|c| format!(", net control {c}"))
                    .unwrap_or_default();
                let n = book
                    .count(&ContactQuery {
                        drill: Some(d.name.clone()),
                        ..ContactQuery::default()
                    })
                    .map_err(st)?;
                in_drills += n;
                writeln!(out, "{mark} {}: {}", d.name, count_of(n, "contact")).map_err(io)?;
                // When and who, on a line of their own (80 columns).
                let detail = format!("{when}{ncs}");
                if let Some(detail) = detail.strip_prefix(", ").or(detail.strip_prefix(' ')) {
                    writeln!(out, "    {detail}").map_err(io)?;
                }
            }
            // Contacts in no drill (imported or logged while none was in use).
            let all = book.count(&ContactQuery::default()).map_err(st)?;
            if all > in_drills {
                writeln!(
                    out,
                    "  (in no drill: {})",
                    count_of(all - in_drills, "contact")
                )
                .map_err(io)?;
            }
        }
        DrillCommand::Use { name } => {
            book.use_drill(name).map_err(st)?;
            writeln!(out, "drill `{name}` in use").map_err(io)?;
        }
        DrillCommand::Move {
            name,
            file,
            from,
            reason,
        } => {
            let from = super::review::drill_name(&book, from.as_deref().or(Some("all")))?;
            let origin = file.file_name().map_or(file.display().to_string(), |f| {
                f.to_string_lossy().into_owned()
            });
            let q = ContactQuery {
                drill: from,
                origin_file: Some(origin.clone()),
                ..ContactQuery::default()
            };
            let moved = book.move_to_drill(&q, name, reason).map_err(st)?;
            writeln!(
                out,
                "moved {} imported from {origin} into drill `{name}`; the previous versions are kept",
                count_of(moved as u64, "contact")
            )
            .map_err(io)?;
        }
    }
    Ok(())
}

pub fn station(
    out: &mut impl Write,
    db: Option<&Path>,
    cmd: &StationCommand,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    match cmd {
        StationCommand::Set {
            call,
            grid,
            operator,
            power,
            antenna,
            rig,
        } => {
            let p = StationProfile {
                call: Callsign::parse(call).map_err(|e| usage(format!("--call: {e}")))?,
                operator: operator
                    .as_deref()
                    .map(Callsign::parse)
                    .transpose()
                    .map_err(|e| usage(format!("--operator: {e}")))?,
                usual_power: power
                    .as_deref()
                    .map(Power::parse)
                    .transpose()
                    .map_err(|e| usage(format!("--power: {e}")))?,
                antenna: antenna.clone(),
                rig: rig.clone(),
            };
            let l = Locator::parse(grid).map_err(|e| usage(format!("--grid: {e}")))?;
            book.set_station(&p, Some((l, now))).map_err(st)?;
            writeln!(out, "own station {} at {l}", p.call).map_err(io)?;
        }
        StationCommand::Move { grid, time } => {
            let l = Locator::parse(grid).map_err(|e| usage(format!("--grid: {e}")))?;
            let at = parse_time(time.as_deref(), now, "--time")?;
            book.move_station(l, at).map_err(st)?;
            writeln!(out, "moved to {l} from {}", at.format("%Y-%m-%d %H:%M UTC")).map_err(io)?;
        }
        StationCommand::Show => {
            let Some(p) = book.current_station().map_err(st)? else {
                writeln!(
                    out,
                    "no own station yet: run `nearsky station set --call CALL --grid LOCATOR`"
                )
                .map_err(io)?;
                return Ok(());
            };
            writeln!(out, "call      {}", p.call).map_err(io)?;
            if let Some(o) = &p.operator {
                writeln!(out, "operator  {o}").map_err(io)?;
            }
            if let Some(w) = p.usual_power {
                writeln!(out, "power     {w}").map_err(io)?;
            }
            if let Some(a) = &p.antenna {
                writeln!(out, "antenna   {a}").map_err(io)?;
            }
            if let Some(r) = &p.rig {
                writeln!(out, "rig       {r}").map_err(io)?;
            }
            for (since, l) in book.station_moves(&p.call).map_err(st)? {
                writeln!(out, "at {l} from {}", since.format("%Y-%m-%d %H:%M UTC")).map_err(io)?;
            }
        }
    }
    Ok(())
}

pub fn roster(
    out: &mut impl Write,
    db: Option<&Path>,
    cmd: &RosterCommand,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    match cmd {
        RosterCommand::Add {
            call,
            name,
            grid,
            role,
        } => {
            let e = RosterEntry {
                call: Callsign::parse(call).map_err(usage)?,
                tactical: name.clone().unwrap_or_default(),
                locator: grid
                    .as_deref()
                    .map(Locator::parse)
                    .transpose()
                    .map_err(|e| usage(format!("--grid: {e}")))?,
                role: role.clone().unwrap_or_default(),
            };
            book.roster_put(&e).map_err(st)?;
            writeln!(out, "roster: {} {}", e.call, e.tactical).map_err(io)?;
        }
        RosterCommand::List => {
            let home = match book.current_station().map_err(st)? {
                Some(p) => book.station_locator_at(&p.call, now).map_err(st)?,
                None => None,
            };
            writeln!(
                out,
                "{:<10} {:<16} {:<10} {:>6} {:>4}  role",
                "call", "name", "grid", "km", "brg"
            )
            .map_err(io)?;
            for e in book.roster().map_err(st)? {
                let (km, brg) = match (&home, &e.locator) {
                    (Some(a), Some(b)) => {
                        let p = geo::centre_path(a, b);
                        (
                            format!("{:.0}", p.distance_km),
                            p.bearing_deg.map_or("-".into(), |b| format!("{b:.0}")),
                        )
                    }
                    _ => (String::new(), String::new()),
                };
                let grid = e.locator.map(|l| l.to_string()).unwrap_or_default();
                writeln!(
                    out,
                    "{:<10} {:<16} {:<10} {km:>6} {brg:>4}  {}",
                    e.call.as_str(),
                    clip(&e.tactical, 16),
                    grid,
                    // What is left of 80 columns.
                    clip(&e.role, 28)
                )
                .map_err(io)?;
            }
        }
    }
    Ok(())
}

pub fn backup(out: &mut impl Write, db: Option<&Path>, target: &Path) -> Result<(), CliError> {
    let book = open(db)?;
    book.backup_to(target).map_err(st)?;
    writeln!(out, "copied to {}", target.display()).map_err(io)?;
    Ok(())
}

pub fn check(out: &mut impl Write, db: Option<&Path>) -> Result<(), CliError> {
    let book = open(db)?;
    let problems = book.check().map_err(st)?;
    if problems.is_empty() {
        writeln!(out, "ok: the logbook is intact").map_err(io)?;
        return Ok(());
    }
    for p in &problems {
        writeln!(out, "problem: {p}").map_err(io)?;
    }
    Err(CliError::Failure(anyhow::anyhow!(
        "{} problems found",
        problems.len()
    )))
}

/// The reliability tests' child: adds contacts in a loop, printing each UUID only after the
/// add has returned (so every printed UUID must be on disk).
pub fn writer(
    out: &mut impl Write,
    db: Option<&Path>,
    a: &WriterArgs,
    now: DateTime<Utc>,
) -> Result<(), CliError> {
    let mut book = open(db)?;
    let own = Callsign::parse(&a.call).map_err(usage)?;
    let profile = StationProfile {
        call: own.clone(),
        operator: None,
        usual_power: Power::from_watts(20.0).ok(),
        antenna: None,
        rig: None,
    };
    if book.current_station().map_err(st)?.map(|p| p.call) != Some(own.clone()) {
        book.set_station(&profile, Locator::parse("JN17ga").ok().map(|l| (l, now)))
            .map_err(st)?;
    }
    let other = Callsign::parse("Q9ZZZ").map_err(usage)?;
    let mut i: u64 = 0;
    while a.count == 0 || i < a.count {
        let parts = crate::domain::ContactParts {
            id: ContactId(Uuid::new_v4()),
            drill: None,
            own: StationSnapshot {
                call: own.clone(),
                operator: None,
                locator: Locator::parse("JN17ga").ok(),
                power: profile.usual_power,
                antenna: None,
            },
            call: other.clone(),
            locator: Locator::parse("JN18io").ok(),
            start: now + chrono::Duration::seconds(i as i64),
            end: None,
            band: Band::B40m,
            frequency: None,
            mode: crate::domain::Mode::parse("LSB").map_err(usage)?,
            sent: None,
            rcvd: None,
            other_power: None,
            outcome: if i.is_multiple_of(3) {
                Outcome::NoContact
            } else {
                Outcome::Worked
            },
            via: None,
            note: format!("writer {i}"),
            origin: Origin::LoggedHere,
        };
        let c = Contact::new(parts).map_err(usage)?;
        book.add_contact(&c, 0).map_err(st)?;
        writeln!(out, "{}", c.id).map_err(io)?;
        out.flush().map_err(io)?;
        i += 1;
    }
    Ok(())
}
