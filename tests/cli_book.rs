//! The logbook commands run as an operator runs them, on a temporary logbook.

mod common;

use std::path::Path;

fn run(db: &Path, args: &[&str]) -> (i32, String, String) {
    let mut all = vec!["--db", db.to_str().unwrap()];
    all.extend_from_slice(args);
    common::nearsky(&all)
}

fn ok(db: &Path, args: &[&str]) -> String {
    let (code, out, err) = run(db, args);
    assert_eq!(code, 0, "{args:?}: {err}");
    out
}

fn setup() -> (tempfile::TempDir, std::path::PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("log.db");
    ok(
        &db,
        &[
            "station", "set", "--call", "Q3NET", "--grid", "JN17ga", "--power", "50",
        ],
    );
    ok(&db, &["drill", "new", "Test drill", "--ncs", "Q3NET"]);
    ok(
        &db,
        &[
            "roster",
            "add",
            "Q4SHL",
            "--name",
            "Shelter 1",
            "--grid",
            "JN17wm",
        ],
    );
    (dir, db)
}

#[test]
fn a_logged_contact_shows_distance_bearing_and_lands_in_the_list() {
    let (_d, db) = setup();
    let out = ok(
        &db,
        &[
            "log",
            "Q4SHL",
            "--time",
            "2026-12-01 14:05",
            "--freq",
            "7.1",
            "--mode",
            "LSB",
            "--sent",
            "59",
            "--rcvd",
            "57",
        ],
    );
    // JN17ga–JN17wm: 115.192 km at 60.659° (fixtures/paths.csv, geographiclib). The line
    // is wrapped at 80 columns, so it is read with its breaks as spaces.
    let said = out.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        said.contains("Q4SHL 40m 7.1 MHz LSB worked sent 59 rcvd 57, 115 km at 61 deg"),
        "{out}"
    );
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list[0]["call"], "Q4SHL");
    assert_eq!(
        list[0]["locator"], "JN17wm",
        "the roster's locator was filled in"
    );
    assert_eq!(list[0]["freq_hz"], 7_100_000);
    assert_eq!(list[0]["drill"], "Test drill");
    assert_eq!(list[0]["power_w"], 50.0);
}

#[test]
fn listing_an_unknown_drill_is_refused_like_the_other_commands() {
    let (_d, db) = setup();
    let (code, out, err) = run(&db, &["list", "--drill", "Spring drill"]);
    assert_eq!(code, 2, "{out}");
    assert!(
        err.contains("--drill: drill `Spring drill` not found"),
        "{err}"
    );
    // A drill that exists, and `all`, still list.
    ok(&db, &["list", "--drill", "Test drill"]);
    ok(&db, &["list", "--drill", "all"]);
}

#[test]
fn a_failed_attempt_is_logged_and_band_and_mode_carry_over() {
    let (_d, db) = setup();
    ok(
        &db,
        &[
            "log", "Q4SHL", "--time", "14:05", "--freq", "3.6", "--mode", "LSB",
        ],
    );
    ok(
        &db,
        &[
            "log",
            "Q2SCH",
            "--time",
            "14:07",
            "--outcome",
            "none",
            "--note",
            "called 3 times",
        ],
    );
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list[0]["outcome"], "none");
    assert_eq!(list[0]["band"], "80m");
    assert_eq!(list[0]["submode"], "LSB");
    let csv = ok(&db, &["list", "--format", "csv"]);
    assert!(csv.lines().nth(1).unwrap().contains(",none,"), "{csv}");
}

#[test]
fn a_duplicate_is_warned_about_and_kept() {
    let (_d, db) = setup();
    ok(
        &db,
        &[
            "log", "Q4SHL", "--time", "14:05", "--freq", "7.1", "--mode", "LSB",
        ],
    );
    let out = ok(
        &db,
        &[
            "log", "Q4SHL", "--time", "14:09", "--freq", "7.12", "--mode", "USB",
        ],
    );
    assert!(out.contains("possible duplicate"), "{out}");
    let out = ok(
        &db,
        &[
            "log", "Q4SHL", "--time", "14:30", "--freq", "7.1", "--mode", "LSB",
        ],
    );
    assert!(!out.contains("possible duplicate"), "{out}");
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list.as_array().unwrap().len(), 3);
}

#[test]
fn edits_and_deletes_keep_the_trail_and_need_a_reason() {
    let (_d, db) = setup();
    let out = ok(
        &db,
        &[
            "log", "Q4SHL", "--time", "14:05", "--freq", "7.1", "--mode", "LSB", "--rcvd", "57",
        ],
    );
    let id = out
        .lines()
        .find_map(|l| l.strip_prefix("id "))
        .unwrap()
        .to_string();
    let short = &id[..8];
    let (code, _, err) = run(&db, &["edit", short, "--rcvd", "55", "--reason", " "]);
    assert_eq!(code, 2);
    assert!(err.contains("a reason is required"), "{err}");
    ok(
        &db,
        &["edit", short, "--rcvd", "55", "--reason", "misheard"],
    );
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list[0]["rst_rcvd"], "55");
    assert_eq!(list[0]["revision"], 2);
    // The same value again changes nothing, so no revision is added.
    let out = ok(
        &db,
        &["edit", short, "--rcvd", "55", "--reason", "checked again"],
    );
    assert!(out.starts_with("nothing changed"), "{out}");
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list[0]["revision"], 2);
    ok(&db, &["delete", short, "--reason", "wrong station"]);
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list.as_array().unwrap().len(), 0);
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--deleted", "--format", "json"])).unwrap();
    assert_eq!(list[0]["deleted"], true);
    let book = nearsky::store::Logbook::open(&db).unwrap();
    let revs = book
        .revisions(nearsky::domain::ContactId(
            uuid::Uuid::parse_str(&id).unwrap(),
        ))
        .unwrap();
    assert_eq!(revs.len(), 2);
    assert_eq!(revs[0].reason, "misheard");
    assert_eq!(revs[0].previous.rcvd.unwrap().to_string(), "57");
    assert_eq!(revs[1].reason, "wrong station");
}

#[test]
fn bad_input_names_the_field_and_stores_nothing() {
    let (_d, db) = setup();
    let (code, _, err) = run(&db, &["log", "Q4 SHL", "--freq", "7.1", "--mode", "LSB"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("call: call sign `Q4 SHL` contains a space"),
        "{err}"
    );
    let (code, _, err) = run(
        &db,
        &[
            "log", "Q4SHL", "--freq", "8.2", "--mode", "LSB", "--grid", "JN58ty",
        ],
    );
    assert_eq!(code, 2);
    assert!(
        err.contains("locator `JN58ty`") && err.contains("frequency 8.2 MHz is in no amateur band"),
        "{err}"
    );
    let list = ok(&db, &["list"]);
    assert!(list.contains("(no contacts)"), "{list}");
}

#[test]
fn station_moves_are_kept_and_used_for_later_contacts() {
    let (_d, db) = setup();
    ok(
        &db,
        &[
            "station",
            "move",
            "--grid",
            "JN18io",
            "--time",
            "2026-12-01 12:00",
        ],
    );
    ok(
        &db,
        &[
            "log",
            "Q4SHL",
            "--time",
            "2026-12-01 11:00",
            "--freq",
            "7.1",
            "--mode",
            "LSB",
        ],
    );
    ok(
        &db,
        &[
            "log",
            "Q4SHL",
            "--time",
            "2026-12-01 13:00",
            "--freq",
            "7.1",
            "--mode",
            "LSB",
        ],
    );
    let list: serde_json::Value =
        serde_json::from_str(&ok(&db, &["list", "--format", "json"])).unwrap();
    assert_eq!(list[0]["own_locator"], "JN18io", "after the move");
    let show = ok(&db, &["station", "show"]);
    assert!(
        show.contains("at JN18io from 2026-12-01 12:00 UTC"),
        "{show}"
    );
}

#[test]
fn backup_and_check_work_on_a_live_logbook() {
    let (d, db) = setup();
    ok(&db, &["log", "Q4SHL", "--freq", "7.1", "--mode", "LSB"]);
    let copy = d.path().join("copy.db");
    ok(&db, &["backup", copy.to_str().unwrap()]);
    assert!(ok(&copy, &["check"]).contains("ok"));
    let (code, _, err) = run(&db, &["backup", copy.to_str().unwrap()]);
    assert_ne!(code, 0);
    assert!(err.contains("already exists"), "{err}");
    let list: serde_json::Value =
        serde_json::from_str(&ok(&copy, &["list", "--format", "json"])).unwrap();
    assert_eq!(list.as_array().unwrap().len(), 1);
}
