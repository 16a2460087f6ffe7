//! The demo drill: deterministic, and its coverage and plan show what the scenario builds in.

mod common;

use common::nearsky;

use nearsky::demo::scenario::{DRILL_NAME, generate};
use nearsky::domain::coverage::{ContradictionKind, CoverageConfig, OperatorNote, coverage};
use nearsky::domain::plan::{PlanConfig, make_plan};
use nearsky::domain::{Band, Outcome};

#[test]
fn the_same_seed_gives_the_same_drill() {
    let (a, b) = (generate(7), generate(7));
    assert_eq!(a.contacts, b.contacts);
    assert_eq!(a.notes, b.notes);
    assert_ne!(generate(8).contacts, a.contacts);
}

#[test]
fn the_demo_follows_the_physics_it_was_built_on() {
    let s = generate(nearsky::demo::SEED);
    let calls: std::collections::BTreeSet<&str> =
        s.contacts.iter().map(|c| c.own.call.as_str()).collect();
    assert!(
        (10..=14).contains(&calls.len()),
        "{} stations log",
        calls.len()
    );
    assert!(calls.iter().all(|c| c.starts_with('Q')));
    assert!(
        s.contacts.iter().any(|c| c.outcome == Outcome::NoContact),
        "failed attempts are logged"
    );
    let notes: Vec<OperatorNote> = s
        .notes
        .iter()
        .map(|(at, band, st, text)| OperatorNote {
            at: *at,
            band: *band,
            station: st.clone(),
            text: text.clone(),
        })
        .collect();
    let c = coverage(&s.contacts, &notes, CoverageConfig::default()).unwrap();
    assert_eq!(c.bands, vec![Band::B80m, Band::B60m, Band::B40m]);
    assert!(
        c.confirmed > 200 && c.one_sided > 200,
        "both sides' logs: {} confirmed, {} one-sided",
        c.confirmed,
        c.one_sided
    );
    for kind in [
        ContradictionKind::Band,
        ContradictionKind::Time,
        ContradictionKind::Outcome,
    ] {
        assert!(
            c.contradictions.iter().any(|x| x.kind == kind),
            "a {kind:?} contradiction"
        );
    }
    let plan = make_plan(&c, &PlanConfig::default());
    // Deep night (00–04 UTC, Sun below −25°): 80 m first.
    for bin in 0..4 {
        assert_eq!(
            plan.bins[bin].primary,
            Some(Band::B80m),
            "{bin:02}:00 {}",
            plan.bins[bin].note
        );
    }
    // Midday (10–13 UTC): 40 m first, and 80 m absorbed.
    for bin in 10..13 {
        assert_eq!(
            plan.bins[bin].primary,
            Some(Band::B40m),
            "{bin:02}:00 {}",
            plan.bins[bin].note
        );
        let h80 = c.hour(Band::B80m, bin).unwrap();
        assert!(
            h80.worked * 3 < h80.attempts,
            "80 m absorbed at {bin:02}:00"
        );
    }
    // 60 m in between: first or second at the twilight hours.
    let twilight_60 = (5..9)
        .chain(17..20)
        .filter(|b| {
            plan.bins[*b].primary == Some(Band::B60m) || plan.bins[*b].alternate == Some(Band::B60m)
        })
        .count();
    assert!(
        twilight_60 >= 5,
        "60 m at twilight: {twilight_60} of 7 hours"
    );
    // 40 m at night: near links fail while far ones still work in some hour (a skip zone).
    let skip = c
        .evidence
        .iter()
        .filter(|e| e.note.contains("40 m skips over near stations"))
        .count();
    assert!(skip >= 1, "a 40 m skip zone");
    // Operators' notes are attached to their hours; a station moved.
    assert!(c.evidence.iter().any(|e| !e.operator_notes.is_empty()));
    assert_eq!(s.moves.len(), 1);
    let mover = &s.moves[0];
    let locs: std::collections::BTreeSet<String> = s
        .contacts
        .iter()
        .filter(|x| x.own.call.as_str() == mover.0)
        .filter_map(|x| x.own.locator.map(|l| l.to_string()))
        .collect();
    assert_eq!(locs.len(), 2, "{locs:?}");
    assert!(
        plan.relays.iter().any(|r| !r.candidates.is_empty()),
        "relay candidates for failing links"
    );
}

#[test]
fn the_demo_command_creates_reuses_and_never_overwrites() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.db");
    let d = db.to_str().unwrap();
    let (code, out, err) = nearsky(&["--db", d, "demo", "--no-ui"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("created the demo logbook") && out.contains(DRILL_NAME),
        "{out}"
    );
    let (code, out, _) = nearsky(&["--db", d, "demo", "--no-ui"]);
    assert_eq!(code, 0);
    assert!(out.contains("using the demo logbook"), "{out}");
    // Another logbook at that path is never overwritten without --force.
    let other = dir.path().join("mine.db");
    let o = other.to_str().unwrap();
    assert_eq!(
        nearsky(&[
            "--db", o, "station", "set", "--call", "Q3NET", "--grid", "JN17ga"
        ])
        .0,
        0
    );
    let (code, _, err) = nearsky(&["--db", o, "demo", "--no-ui"]);
    assert_eq!(code, 2);
    assert!(err.contains("not the demo logbook"), "{err}");
    let before = std::fs::read(&other).unwrap();
    assert_eq!(std::fs::read(&other).unwrap(), before);
    // Two fresh demos are the same logbook, record for record.
    let db2 = dir.path().join("demo2.db");
    nearsky(&["--db", db2.to_str().unwrap(), "demo", "--no-ui"]);
    let list = |p: &str| nearsky(&["--db", p, "export", "--include-attempts", "--format", "csv"]).1;
    assert_eq!(list(d), list(db2.to_str().unwrap()));
}

#[test]
fn review_commands_on_the_demo() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.db");
    let d = db.to_str().unwrap();
    nearsky(&["--db", d, "demo", "--no-ui"]);
    let (code, out, err) = nearsky(&["--db", d, "coverage", "--view", "hours", "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let rows = v.as_array().unwrap();
    assert_eq!(rows.len(), 72, "3 bands × 24 hours");
    for key in [
        "band",
        "hour_start",
        "attempts",
        "worked",
        "partial",
        "none",
        "wilson_low",
        "wilson_high",
        "median_km",
        "max_km",
    ] {
        assert!(rows[0].get(key).is_some(), "{key}");
    }
    assert!(
        rows.iter()
            .any(|r| r["band"] == "40m" && r["hour_start"] == "12:00")
    );
    // Every view fits 80 columns at any bin width: short bins stack as parts of the day, and
    // each hour label sits over the bin that starts that hour.
    for bin in ["10", "15", "30", "60", "120"] {
        for view in ["links", "hours", "rings"] {
            let (code, out, _) = nearsky(&["--db", d, "coverage", "--view", view, "--bin", bin]);
            assert_eq!(code, 0);
            assert!(
                out.lines().all(|l| l.chars().count() <= 80),
                "{view} at {bin} min fits 80 columns:\n{out}"
            );
            let minutes: usize = bin.parse().unwrap();
            let lines: Vec<&str> = out.lines().collect();
            for (i, ruler) in lines.iter().enumerate() {
                let Some(width) = ["link               km  brg ", "ring km    "]
                    .iter()
                    .find(|p| ruler.starts_with(**p))
                    .map(|p| p.len())
                else {
                    continue;
                };
                // The part's first bin, from the heading above ("40m, 12:00–24:00 UTC: ...").
                let start = lines[..i]
                    .iter()
                    .rev()
                    .find_map(|l| {
                        l.split_once(", ")
                            .and_then(|(_, r)| r.get(..5))
                            .filter(|t| t.as_bytes().get(2) == Some(&b':'))
                    })
                    .map_or(0, |t| {
                        let (h, m) = t.split_once(':').unwrap();
                        (h.parse::<usize>().unwrap() * 60 + m.parse::<usize>().unwrap()) / minutes
                    });
                let labels: Vec<(usize, usize)> = ruler[width..]
                    .char_indices()
                    .filter(|(k, c)| {
                        c.is_ascii_digit() && (*k == 0 || &ruler[width + k - 1..width + k] == " ")
                    })
                    .map(|(k, _)| (k, ruler[width + k..width + k + 2].parse().unwrap()))
                    .collect();
                assert!(labels.len() >= 3, "{ruler}");
                for (k, hour) in labels {
                    assert_eq!(
                        (start + k) * minutes,
                        hour * 60,
                        "{view} at {bin} min: {ruler}"
                    );
                }
            }
        }
    }
    let (_, out, _) = nearsky(&["--db", d, "plan", "--format", "json"]);
    let p: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(p["bins"].as_array().unwrap().len(), 24);
    for key in ["hour_start", "primary", "alternate", "attempts", "note"] {
        assert!(p["bins"][0].get(key).is_some(), "{key}");
    }
    assert!(p["relays"].is_array());
    let (_, table, _) = nearsky(&["--db", d, "plan"]);
    assert!(table.lines().all(|l| l.chars().count() <= 80), "{table}");
    // Every bin's evidence is in the table whole (wrapped under its column, not cut).
    let flat = table.split_whitespace().collect::<Vec<_>>().join(" ");
    for b in p["bins"].as_array().unwrap() {
        let note = b["note"].as_str().unwrap();
        let note = note.split_whitespace().collect::<Vec<_>>().join(" ");
        assert!(flat.contains(&note), "{note}\n{table}");
    }
    let (_, cc, _) = nearsky(&["--db", d, "crosscheck"]);
    assert!(
        cc.contains("confirmed by both sides") && cc.contains("clock may be wrong"),
        "{cc}"
    );
    // A plan for another date, loaded as the schedule of the next drill.
    let plan_file = dir.path().join("plan.json");
    let (code, out, _) = nearsky(&["--db", d, "plan", "--for", "2025-12-21", "--format", "json"]);
    assert_eq!(code, 0);
    std::fs::write(&plan_file, out).unwrap();
    let (code, out, err) = nearsky(&[
        "--db",
        d,
        "drill",
        "new",
        "Winter exercise",
        "--plan",
        plan_file.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("band schedule:"), "{out}");
    let book = nearsky::store::Logbook::open(&db).unwrap();
    let slots = book.schedule("Winter exercise").unwrap();
    assert!(!slots.is_empty());
    assert_eq!(
        slots.iter().map(|s| u32::from(s.minutes)).sum::<u32>(),
        1440,
        "the schedule covers the day"
    );
    let (code, _, err) = nearsky(&["--db", d, "plan", "--for", "21.12.2025"]);
    assert_eq!(code, 2);
    assert!(err.contains("`21.12.2025`"), "{err}");
    let bad = dir.path().join("bad.json");
    std::fs::write(&bad, "{ not a plan").unwrap();
    let (code, _, err) = nearsky(&[
        "--db",
        d,
        "drill",
        "new",
        "Bad",
        "--plan",
        bad.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("neither a JSON plan"), "{err}");
}

#[test]
fn every_table_of_the_command_line_fits_80_columns() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.db");
    let d = db.to_str().unwrap();
    let (_, intro, _) = nearsky(&["--db", d, "demo", "--no-ui"]);
    // A deleted contact and a long roster role, the widest rows of their tables.
    let (_, json, _) = nearsky(&["--db", d, "list", "--format", "json", "--limit", "1"]);
    let first: serde_json::Value = serde_json::from_str(&json).unwrap();
    let id = first[0]["id"].as_str().unwrap().to_string();
    let (code, _, err) = nearsky(&["--db", d, "delete", &id[..8], "--reason", "test"]);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = nearsky(&[
        "--db",
        d,
        "roster",
        "add",
        "Q7LNG",
        "--name",
        "A very long tactical name indeed",
        "--role",
        "relay for the northern valley shelters and the hospital",
    ]);
    assert_eq!(code, 0, "{err}");
    let mut outputs = vec![("demo --no-ui".to_string(), intro)];
    for args in [
        vec!["list", "--deleted"],
        vec!["roster", "list"],
        vec!["crosscheck"],
        vec!["drill", "list"],
        vec!["station", "show"],
    ] {
        let mut all = vec!["--db", d];
        all.extend(&args);
        let (code, out, err) = nearsky(&all);
        assert_eq!(code, 0, "{args:?}: {err}");
        outputs.push((args.join(" "), out));
    }
    for (what, out) in &outputs {
        // A line naming the file is as long as its path.
        for l in out.lines().filter(|l| !l.contains(d)) {
            assert!(l.chars().count() <= 80, "{what}: `{l}`");
        }
    }
    let list = &outputs[1].1;
    assert!(list.contains(" deleted "), "{list}");
    let roster = &outputs[2].1;
    assert!(roster.contains("relay for the northern vall…"), "{roster}");
}
