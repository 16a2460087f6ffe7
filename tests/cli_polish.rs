//! The command line as a whole: every command's --help with an example, completions and the
//! man page, and the config file under command-line flags.

mod common;

use clap::CommandFactory;
use common::nearsky_env as run;
use nearsky::cli::Cli;

/// Every command path, e.g. ["drill", "new"], except the hidden test helper.
fn paths(cmd: &clap::Command, prefix: Vec<String>, out: &mut Vec<Vec<String>>) {
    for sub in cmd
        .get_subcommands()
        .filter(|s| !s.is_hide_set() && s.get_name() != "help")
    {
        let mut p = prefix.clone();
        p.push(sub.get_name().to_string());
        out.push(p.clone());
        paths(sub, p, out);
    }
}

#[test]
fn every_command_has_help_with_an_example() {
    let mut all = Vec::new();
    paths(&Cli::command(), Vec::new(), &mut all);
    assert!(all.len() >= 25, "{} commands", all.len());
    for p in &all {
        let mut args: Vec<&str> = p.iter().map(String::as_str).collect();
        args.push("--help");
        let (code, out, err) = run(&args, &[]);
        assert_eq!(code, 0, "{p:?}: {err}");
        let leaf = Cli::command()
            .get_subcommands()
            .find(|c| c.get_name() == p[0])
            .map(|c| c.has_subcommands())
            .unwrap_or(false)
            && p.len() == 1;
        if !leaf {
            assert!(
                out.contains("Example"),
                "{p:?} --help has no example:\n{out}"
            );
        }
    }
    let (code, out, _) = run(&["--help"], &[]);
    assert_eq!(code, 0);
    assert!(out.contains("Exit codes"));
}

#[test]
fn completions_and_the_man_page_are_generated() {
    for shell in ["bash", "zsh", "fish"] {
        let (code, out, _) = run(&["completions", shell], &[]);
        assert_eq!(code, 0);
        assert!(
            out.contains("coverage") && out.contains("import"),
            "{shell}"
        );
    }
    let (code, out, _) = run(&["man"], &[]);
    assert_eq!(code, 0);
    assert!(
        out.contains(".TH nearsky 1") && out.contains("coverage"),
        "{out}"
    );
    let (code, _, err) = run(&["completions", "tcsh"], &[]);
    assert_eq!(code, 2, "a usage error");
    assert!(err.contains("tcsh"));
}

#[test]
fn the_config_file_fills_in_and_flags_win() {
    let dir = tempfile::tempdir().unwrap();
    let cfg = dir.path().join("config.toml");
    std::fs::write(
        &cfg,
        "call = \"Q3NET\"\nlocator = \"JN17ga\"\npower_w = 20\nduplicate_window_minutes = 2\n",
    )
    .unwrap();
    let db = dir.path().join("log.db");
    let d = db.to_str().unwrap();
    let env = [("NEARSKY_CONFIG", cfg.to_str().unwrap())];
    // No station in the logbook: the config's call and locator become it; its power is used.
    let (code, out, err) = run(
        &[
            "--db", d, "log", "Q4SHL", "--time", "10:00", "--freq", "7.1", "--mode", "LSB",
            "--format", "json",
        ],
        &env,
    );
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("own station Q3NET at JN17ga"), "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        (v["own_call"].as_str(), v["power_w"].as_f64()),
        (Some("Q3NET"), Some(20.0))
    );
    // A flag wins over the config: power.
    let (_, out, _) = run(
        &[
            "--db", d, "log", "Q5SHL", "--time", "10:01", "--freq", "7.1", "--mode", "LSB",
            "--power", "5", "--format", "json",
        ],
        &env,
    );
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["power_w"].as_f64(), Some(5.0));
    // The config's 2-minute duplicate window: 4 minutes later is no duplicate...
    let (_, out, _) = run(
        &[
            "--db", d, "log", "Q4SHL", "--time", "10:04", "--freq", "7.1", "--mode", "LSB",
        ],
        &env,
    );
    assert!(!out.contains("possible duplicate"), "{out}");
    // ...unless the flag widens the window.
    let (_, out, _) = run(
        &[
            "--db",
            d,
            "log",
            "Q4SHL",
            "--time",
            "10:08",
            "--freq",
            "7.1",
            "--mode",
            "LSB",
            "--dup-window",
            "10",
        ],
        &env,
    );
    assert!(out.contains("possible duplicate"), "{out}");
    // A bad config is a clear usage error naming file, field and value.
    std::fs::write(&cfg, "power_w = -3\n").unwrap();
    let (code, _, err) = run(
        &["--db", d, "log", "Q4SHL", "--freq", "7.1", "--mode", "LSB"],
        &env,
    );
    assert_eq!(code, 2);
    assert!(err.contains("config.toml: power_w: power `-3 W`"), "{err}");
}

/// A logbook holding the demo drill, in a directory that lives as long as the first value.
fn demo_book() -> (tempfile::TempDir, String) {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("book.db").to_str().unwrap().to_string();
    let (code, _, err) = run(&["--db", &db, "demo", "--no-ui"], &[]);
    assert_eq!(code, 0, "{err}");
    (dir, db)
}

/// A fresh logbook in a temporary directory, with the own station Q3NET at JN17ga.
struct Book {
    dir: tempfile::TempDir,
    db: String,
}

impl Book {
    fn with_station() -> Book {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("book.db").to_str().unwrap().to_string();
        let book = Book { dir, db };
        book.ok(&["station", "set", "--call", "Q3NET", "--grid", "JN17ga"]);
        book
    }

    /// Runs a command on this logbook: (exit code, stdout, stderr).
    fn run(&self, args: &[&str]) -> (i32, String, String) {
        let mut all = vec!["--db", self.db.as_str()];
        all.extend(args);
        run(&all, &[])
    }

    /// Runs a command that must succeed; its stdout.
    fn ok(&self, args: &[&str]) -> String {
        let (code, out, err) = self.run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        out
    }
}

#[test]
fn a_reader_that_stops_early_is_not_an_error() {
    // `nearsky export | head -1`: the pipe closes under the writer.
    let (_dir, db) = demo_book();
    let d = db.as_str();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_nearsky"))
        .args(["--db", d, "export", "--format", "csv", "--include-attempts"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Read one line, then close the pipe.
    let mut stdout = std::io::BufReader::new(child.stdout.take().unwrap());
    let mut first = String::new();
    std::io::BufRead::read_line(&mut stdout, &mut first).unwrap();
    assert!(first.starts_with("id,drill,"), "{first}");
    drop(stdout);
    let out = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{err}");
    assert!(!err.contains("Broken pipe"), "{err}");
}

#[test]
fn an_error_and_its_cause_are_not_said_twice() {
    let (dir, db) = demo_book();
    let d = db.as_str();
    let missing = dir.path().join("no/such/dir/x.adi");
    for args in [
        vec!["export", "-o", missing.to_str().unwrap()],
        vec!["import", missing.to_str().unwrap()],
    ] {
        let mut all = vec!["--db", d];
        all.extend(args);
        let (code, _, err) = run(&all, &[]);
        assert_eq!(code, 1, "{err}");
        assert!(err.contains("x.adi"), "{err}");
        assert_eq!(err.matches("No such file").count(), 1, "{err}");
    }
}

#[test]
fn an_empty_drill_in_use_is_pointed_out_on_stderr() {
    let (_dir, db) = demo_book();
    let d = db.as_str();
    let (code, out, err) = run(&["--db", d, "plan", "--format", "json"], &[]);
    assert_eq!(code, 0, "{err}");
    assert!(!err.contains("no contacts"), "{err}");
    let (code, _, err) = run(&["--db", d, "drill", "new", "Next drill"], &[]);
    assert_eq!(code, 0, "{err}");
    for cmd in ["plan", "coverage"] {
        let (code, json, err) = run(&["--db", d, cmd, "--format", "json"], &[]);
        assert_eq!(code, 0, "{err}");
        assert!(
            err.contains("drill `Next drill` has no contacts") && err.contains("--drill"),
            "{cmd}: {err}"
        );
        // stdout stays JSON for scripts.
        serde_json::from_str::<serde_json::Value>(&json).unwrap();
    }
    let (_, again, err) = run(
        &["--db", d, "plan", "--format", "json", "--drill", "all"],
        &[],
    );
    assert!(!err.contains("no contacts"), "{err}");
    assert_eq!(again, out);
}

#[test]
fn logging_on_60_m_above_15_w_or_off_the_segment_is_cautioned_not_refused() {
    // The limit and segment of ITU Radio Regulations footnote 5.133B (WRC-15).
    let book = Book::with_station();
    let log = |freq: &str, power: &str| {
        book.run(&[
            "log", "Q4SHL", "--freq", freq, "--mode", "USB", "--power", power,
        ])
    };
    let (code, out, err) = log("5.3625", "100");
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("logged"), "{out}");
    // What `log` says fits 80 columns, on stdout and stderr (a second contact a minute
    // later also gets the possible-duplicate warning).
    let (_, out2, err2) = log("5.3625", "100");
    for l in [out.as_str(), err.as_str(), out2.as_str(), err2.as_str()]
        .iter()
        .flat_map(|t| t.lines())
    {
        assert!(l.chars().count() <= 80, "`{l}`");
    }
    assert!(out2.contains("possible duplicate"), "{out2}");
    assert!(
        err.contains("caution: 60 m: 100 W") && err.contains("licence"),
        "{err}"
    );
    let (code, _, err) = log("5.3305", "10");
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("outside the worldwide segment"), "{err}");
    let (code, _, err) = log("5.3625", "10");
    assert_eq!(code, 0);
    assert!(!err.contains("caution"), "{err}");
    let (code, _, err) = log("7.1", "100");
    assert_eq!(code, 0);
    assert!(!err.contains("caution"), "{err}");
}

#[test]
fn every_argument_says_what_it_is() {
    let mut all = Vec::new();
    paths(&Cli::command(), Vec::new(), &mut all);
    let mut missing = Vec::new();
    for p in &all {
        let mut cmd = Cli::command();
        for name in p {
            cmd = cmd.find_subcommand(name).unwrap().clone();
        }
        for a in cmd.get_arguments() {
            let id = a.get_id().as_str();
            if id == "help" || id == "version" {
                continue;
            }
            if a.get_help().is_none() {
                missing.push(format!("{} {id}", p.join(" ")));
            }
        }
    }
    assert!(missing.is_empty(), "arguments without help: {missing:#?}");
}

#[test]
fn export_for_one_main_log_takes_one_stations_contacts() {
    // The demo logbook holds every station's records, as a net controller's merged one does.
    let (_dir, db) = demo_book();
    let d = db.as_str();
    let (code, all, err) = run(&["--db", d, "export"], &[]);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("logged by 12 stations") && err.contains("--station CALL"),
        "{err}"
    );
    let (code, one, err) = run(&["--db", d, "export", "--station", "Q4SHL"], &[]);
    assert_eq!(code, 0, "{err}");
    assert!(!err.contains("stations ("), "{err}");
    let records = one.matches("<EOR>").count();
    assert!(
        records > 10 && records < all.matches("<EOR>").count(),
        "{records}"
    );
    assert_eq!(one.matches("<STATION_CALLSIGN:5>Q4SHL").count(), records);
    // `list` takes the same filter.
    let (code, listed, err) = run(
        &[
            "--db",
            d,
            "list",
            "--station",
            "Q4SHL",
            "--format",
            "json",
            "--limit",
            "500",
        ],
        &[],
    );
    assert_eq!(code, 0, "{err}");
    let rows: serde_json::Value = serde_json::from_str(&listed).unwrap();
    let rows = rows.as_array().unwrap();
    assert!(!rows.is_empty());
    assert!(rows.iter().all(|r| r["own_call"] == "Q4SHL"), "{listed}");
    let (code, _, err) = run(&["--db", d, "export", "--station", "Q4 SHL"], &[]);
    assert_eq!(code, 2);
    assert!(err.contains("--station") && err.contains("Q4 SHL"), "{err}");
}

#[test]
fn an_import_lands_in_the_drill_in_use_unless_a_record_names_its_own() {
    let book = Book::with_station();
    let dir = &book.dir;
    let ok = |args: &[&str]| book.ok(args);
    ok(&["drill", "new", "Test net"]);
    // As another program writes it: no drill of nearsky's; then one that names its drill.
    let file = dir.path().join("q4shl.adi");
    std::fs::write(
        &file,
        "<ADIF_VER:5>3.1.4 <EOH>\n\
         <CALL:5>Q3NET <QSO_DATE:8>20261201 <TIME_ON:4>0800 <BAND:3>80m <MODE:3>SSB <STATION_CALLSIGN:5>Q4SHL <EOR>\n\
         <CALL:5>Q7HSP <QSO_DATE:8>20261201 <TIME_ON:4>0805 <BAND:3>40m <MODE:3>SSB <STATION_CALLSIGN:5>Q4SHL <APP_NEARSKY_DRILL:5>Other <EOR>\n",
    )
    .unwrap();
    let out = ok(&["import", file.to_str().unwrap()]);
    assert!(out.contains("put in `Test net`, the drill in use"), "{out}");
    // One record went elsewhere, so the import says where each went.
    assert!(
        out.contains("  1 into drill `Other`") && out.contains("  1 into drill `Test net`"),
        "{out}"
    );
    let in_use = ok(&["list", "--format", "json"]);
    let rows: serde_json::Value = serde_json::from_str(&in_use).unwrap();
    let calls: Vec<&str> = rows
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["call"].as_str().unwrap())
        .collect();
    assert_eq!(calls, ["Q3NET"], "{in_use}");
    let other = ok(&["list", "--drill", "Other", "--format", "json"]);
    assert!(other.contains("Q7HSP"), "{other}");
    // The coverage of the drill in use sees the imported record.
    let cov = ok(&["coverage", "--view", "links"]);
    assert!(
        cov.contains("Q4SHL") || cov.contains("Q3NET-Q4SHL"),
        "{cov}"
    );
}

#[test]
fn counts_of_one_read_as_one() {
    let book = Book::with_station();
    let file = book.dir.path().join("one.adi");
    let f = file.to_str().unwrap();
    book.ok(&["log", "Q4SHL", "--freq", "7.1", "--mode", "LSB"]);
    let (_, _, err) = book.run(&["export", "-o", f]);
    assert!(err.contains("wrote 1 contact to"), "{err}");
    let (_, out, _) = book.run(&["import", f]);
    assert!(out.contains(": 1 record read;"), "{out}");
}

#[test]
fn records_imported_into_the_wrong_drill_can_be_moved_with_their_history() {
    let book = Book::with_station();
    let (dir, d) = (&book.dir, book.db.as_str());
    let ok = |args: &[&str]| book.ok(args);
    ok(&["drill", "new", "Autumn exercise"]);
    // The next drill is made (and put in use) before last drill's logs are merged.
    ok(&["drill", "new", "Winter exercise"]);
    let file = dir.path().join("q4shl.adi");
    std::fs::write(
        &file,
        "<CALL:5>Q3NET <QSO_DATE:8>20261201 <TIME_ON:4>0800 <BAND:3>80m <MODE:3>SSB <STATION_CALLSIGN:5>Q4SHL <EOR>\n\
         <CALL:5>Q7HSP <QSO_DATE:8>20261201 <TIME_ON:4>0805 <BAND:3>40m <MODE:3>SSB <STATION_CALLSIGN:5>Q4SHL <EOR>\n",
    )
    .unwrap();
    let out = ok(&["import", file.to_str().unwrap()]);
    assert!(
        out.contains("`Winter exercise`") && out.contains("drill move"),
        "{out}"
    );
    // Importing again into the right drill only finds duplicates; moving them works.
    let again = ok(&[
        "import",
        file.to_str().unwrap(),
        "--drill",
        "Autumn exercise",
    ]);
    assert!(
        again.contains("imported 0, duplicates skipped 2"),
        "{again}"
    );
    let moved = ok(&[
        "drill",
        "move",
        "Autumn exercise",
        "--file",
        file.to_str().unwrap(),
        "--reason",
        "imported into the wrong drill",
    ]);
    assert!(moved.contains("moved 2 contacts"), "{moved}");
    let json = |drill: &str| -> Vec<serde_json::Value> {
        let out = ok(&["list", "--drill", drill, "--format", "json"]);
        serde_json::from_str::<serde_json::Value>(&out)
            .unwrap()
            .as_array()
            .unwrap()
            .clone()
    };
    let autumn = json("Autumn exercise");
    assert_eq!(autumn.len(), 2);
    // Each keeps its previous version: the revision went up by one.
    assert!(autumn.iter().all(|r| r["revision"] == 2), "{autumn:?}");
    assert!(json("Winter exercise").is_empty());
    // The drill list says where the contacts are.
    let drills = ok(&["drill", "list"]);
    assert!(
        drills.contains("  Autumn exercise: 2 contacts")
            && drills.contains("* Winter exercise: 0 contacts")
            && !drills.contains("in no drill"),
        "{drills}"
    );
    // Nothing left to move; an unknown drill is refused.
    let none = ok(&[
        "drill",
        "move",
        "Autumn exercise",
        "--file",
        "q4shl.adi",
        "--reason",
        "x",
    ]);
    assert!(none.contains("moved 0 contacts"), "{none}");
    let (code, _, err) = run(
        &[
            "--db",
            d,
            "drill",
            "move",
            "Spring",
            "--file",
            "q4shl.adi",
            "--reason",
            "x",
        ],
        &[],
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("drill `Spring` not found"), "{err}");
}

#[test]
fn the_drill_list_counts_contacts_in_no_drill_too() {
    let book = Book::with_station();
    for args in [
        // Logged before any drill exists: in no drill.
        vec!["log", "Q4SHL", "--freq", "7.1", "--mode", "LSB"],
        vec!["drill", "new", "Autumn exercise"],
        vec!["log", "Q4SHL", "--freq", "3.6", "--mode", "LSB"],
        vec!["log", "Q7HSP", "--freq", "3.6", "--mode", "LSB"],
    ] {
        book.ok(&args);
    }
    let out = book.ok(&["drill", "list"]);
    assert_eq!(
        out, "* Autumn exercise: 2 contacts\n  (in no drill: 1 contact)\n",
        "{out}"
    );
}

#[test]
fn a_refused_file_says_nothing_was_stored() {
    let book = Book::with_station();
    book.ok(&["drill", "new", "Autumn exercise"]);
    let file = book.dir.path().join("mixed.adi");
    std::fs::write(
        &file,
        "<CALL:5>Q3NET <QSO_DATE:8>20261201 <TIME_ON:4>0800 <BAND:3>80m <MODE:3>SSB <EOR>\n\
         <CALL:5>Q3NET <QSO_DATE:8>20261201 <TIME_ON:4>0810 <BAND:3>80m <MODE:3>SSB <STATION_CALLSIGN:5>Q4SHL <EOR>\n",
    )
    .unwrap();
    let (code, out, err) = book.run(&["import", file.to_str().unwrap()]);
    assert_eq!(code, 1, "{err}");
    assert!(
        out.contains("2 records read; rejected 1, so nothing was stored (1 would have been imported, 0 duplicates)"),
        "{out}"
    );
    // Nothing landed, so no word about where it would have gone.
    assert!(!out.contains("drill: records"), "{out}");
    assert!(err.contains("--skip-bad"), "{err}");
}

#[test]
fn an_export_says_how_many_failed_attempts_it_left_out() {
    let b = Book::with_station();
    b.ok(&["log", "Q4SHL", "--freq", "3.6", "--mode", "LSB"]);
    for call in ["Q7HSP", "Q2FIR"] {
        b.ok(&[
            "log",
            call,
            "--band",
            "80m",
            "--mode",
            "LSB",
            "--outcome",
            "none",
        ]);
    }
    let (code, out, err) = b.run(&["export", "--format", "adi"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(out.matches("<EOR>").count(), 1, "{out}");
    assert!(
        err.contains("2 failed attempts not written") && err.contains("--include-attempts"),
        "{err}"
    );
    let (code, out, err) = b.run(&["export", "--format", "adi", "--include-attempts"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(out.matches("<EOR>").count(), 3, "{out}");
    assert!(!err.contains("not written"), "{err}");
}

#[test]
fn a_plan_table_puts_hours_without_attempts_in_a_row_on_one_line() {
    let b = Book::with_station();
    b.ok(&[
        "log", "Q4SHL", "--time", "08:05", "--freq", "3.6", "--mode", "LSB",
    ]);
    b.ok(&[
        "log", "Q7HSP", "--time", "10:20", "--band", "80m", "--mode", "LSB",
    ]);
    let out = b.ok(&["plan"]);
    let rows: Vec<&str> = out
        .lines()
        .skip_while(|l| !l.starts_with("UTC"))
        .skip(1)
        .filter(|l| !l.starts_with(' '))
        .collect();
    let starts: Vec<&str> = rows.iter().map(|r| &r[..5]).collect();
    // 00–08 empty, 08 tried, 09 alone (one empty hour keeps its own wording), 10 tried,
    // 11–24 empty.
    assert_eq!(
        starts,
        ["00:00", "08:00", "09:00", "10:00", "11:00"],
        "{out}"
    );
    assert!(rows[0].ends_with("nothing was tried 00:00–08:00"), "{out}");
    assert!(rows[2].ends_with("nothing was tried in this hour"), "{out}");
    assert!(rows[4].ends_with("nothing was tried 11:00–24:00"), "{out}");
    assert!(out.lines().all(|l| l.chars().count() <= 80), "{out}");
    // JSON keeps every bin.
    let json: serde_json::Value =
        serde_json::from_str(&b.ok(&["plan", "--format", "json"])).unwrap();
    assert_eq!(json["bins"].as_array().map(Vec::len), Some(24));
}
