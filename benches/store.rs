//! Logbook write and paging speed.
//!
//! Run: `cargo bench --bench store`. Prints, in one run:
//! (a) a bare rusqlite single-row INSERT + COMMIT with the logbook's pragmas (WAL,
//!     synchronous=FULL) — the floor; (b) `Logbook::add_contact` with validation from typed
//!     text and the duplicate check; their medians and ratio (target ≤ 1.2);
//! (c) paging the newest 50 contacts of a 1,000,000-contact logbook (target < 5 ms).
//! Files go under `target/` so that fsync reaches a real disk.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use chrono::{DateTime, NaiveDate, Utc};
use nearsky::domain::*;
use nearsky::store::{ContactQuery, Logbook};
use uuid::Uuid;

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

fn own() -> StationSnapshot {
    StationSnapshot {
        call: Callsign::parse("Q3NET").unwrap(),
        operator: None,
        locator: Locator::parse("JN17ga").ok(),
        power: Power::from_watts(50.0).ok(),
        antenna: Some("80/40 m link dipole".into()),
    }
}

fn form(i: u64) -> ContactForm {
    ContactForm {
        call: ["Q4SHL", "Q7HSP", "Q2FIR", "Q5SHL"][(i % 4) as usize].into(),
        locator: "JN17wm".into(),
        time: format!("2026-12-01T{:02}:{:02}:00Z", (i / 60) % 24, i % 60),
        frequency: "7.1".into(),
        mode: "LSB".into(),
        sent: "59".into(),
        rcvd: "57".into(),
        outcome: "worked".into(),
        note: "bench".into(),
        ..ContactForm::default()
    }
}

fn bench_dir() -> PathBuf {
    let d = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-store");
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn main() {
    let dir = bench_dir();
    let rounds = 300;

    // (a) the floor: same table, same pragmas, one row per transaction.
    let bare = rusqlite::Connection::open(dir.join("bare.db")).unwrap();
    bare.pragma_update_and_check(None, "journal_mode", "WAL", |_| Ok(()))
        .unwrap();
    bare.pragma_update(None, "synchronous", "FULL").unwrap();
    bare.pragma_update(None, "foreign_keys", true).unwrap();
    bare.execute_batch(
        "CREATE TABLE contact (id INTEGER PRIMARY KEY, uuid TEXT NOT NULL UNIQUE, drill_id INTEGER,
            own_call TEXT NOT NULL, own_operator TEXT, own_locator TEXT, own_power_w REAL, own_antenna TEXT,
            call TEXT NOT NULL, locator TEXT, start_utc INTEGER NOT NULL, end_utc INTEGER, band TEXT NOT NULL,
            freq_hz INTEGER, mode TEXT NOT NULL, submode TEXT, rst_sent TEXT, rst_rcvd TEXT, other_power_w REAL,
            outcome TEXT NOT NULL, via TEXT, note TEXT NOT NULL DEFAULT '', origin_station TEXT, origin_file TEXT,
            revision INTEGER NOT NULL DEFAULT 1, deleted INTEGER NOT NULL DEFAULT 0, logged_at INTEGER NOT NULL);
         CREATE INDEX contact_by_time ON contact(start_utc, id);
         CREATE INDEX contact_by_drill_band_time ON contact(drill_id, band, start_utc, id);
         CREATE INDEX contact_by_call ON contact(call, band, mode, start_utc);",
    )
    .unwrap();

    // (b) the logbook.
    let mut book = Logbook::open(&dir.join("book.db")).unwrap();
    let today = NaiveDate::from_ymd_opt(2026, 12, 1).unwrap();

    let mut bare_t = Vec::new();
    let mut book_t = Vec::new();
    for i in 0..rounds {
        let t = Instant::now();
        bare.execute_batch("BEGIN IMMEDIATE").unwrap();
        bare.execute(
            "INSERT INTO contact (uuid, own_call, own_locator, own_power_w, own_antenna, call, locator,
                start_utc, band, freq_hz, mode, submode, rst_sent, rst_rcvd, outcome, note, logged_at)
             VALUES (?1, 'Q3NET', 'JN17ga', 50.0, '80/40 m link dipole', 'Q4SHL', 'JN17wm', ?2, '40m',
                7100000, 'SSB', 'LSB', '59', '57', 'worked', 'bench', ?2)",
            rusqlite::params![Uuid::new_v4().to_string(), 1_764_547_200 + i as i64],
        )
        .unwrap();
        bare.execute_batch("COMMIT").unwrap();
        bare_t.push(t.elapsed());

        let t = Instant::now();
        let ctx = FormContext {
            id: ContactId(Uuid::new_v4()),
            own: own(),
            drill: None,
            today,
            origin: Origin::LoggedHere,
        };
        let c = form(i).validate(&ctx).unwrap();
        book.add_contact(&c, 10).unwrap();
        book_t.push(t.elapsed());
    }
    let (mb, ml) = (median(bare_t), median(book_t));
    println!(
        "single-contact write, median of {rounds} (WAL, synchronous=FULL, on {}):",
        dir.display()
    );
    println!(
        "  (a) bare rusqlite INSERT + COMMIT:              {:9.3} ms",
        mb.as_secs_f64() * 1e3
    );
    println!(
        "  (b) Logbook::add_contact (validate, dup check): {:9.3} ms",
        ml.as_secs_f64() * 1e3
    );
    println!(
        "  ratio (b)/(a): {:.3}  (target <= 1.2)",
        ml.as_secs_f64() / mb.as_secs_f64()
    );

    // (c) paging a 1,000,000-contact logbook.
    let big = dir.join("million.db");
    let mut book = Logbook::open(&big).unwrap();
    book.add_drill(&nearsky::store::Drill {
        name: "bench".into(),
        starts_at: None,
        ends_at: None,
        net_control: None,
        description: String::new(),
    })
    .unwrap();
    let calls: Vec<Callsign> = (0..20)
        .map(|i| Callsign::parse(&format!("Q{}B{}X", i % 10, (b'A' + i as u8) as char)).unwrap())
        .collect();
    let modes = [
        Mode::parse("LSB").unwrap(),
        Mode::parse("USB").unwrap(),
        Mode::parse("CW").unwrap(),
    ];
    let bands = [
        (Band::B80m, 3_600_000u64),
        (Band::B60m, 5_362_500),
        (Band::B40m, 7_100_000),
    ];
    let t0 = DateTime::<Utc>::from_timestamp(1_764_547_200, 0).unwrap();
    let total = 1_000_000u64;
    let build = Instant::now();
    let mut batch = Vec::with_capacity(100_000);
    for i in 0..total {
        let (band, hz) = bands[(i % 3) as usize];
        let parts = ContactParts {
            id: ContactId(Uuid::from_u128(u128::from(i) + 1)),
            drill: Some("bench".into()),
            own: own(),
            call: calls[(i % 20) as usize].clone(),
            locator: Locator::parse("JN18io").ok(),
            start: t0 + chrono::Duration::seconds(i as i64 * 3),
            end: None,
            band,
            frequency: Frequency::from_hz(hz).ok(),
            mode: modes[(i % 3) as usize].clone(),
            sent: Report::parse("59").ok(),
            rcvd: Report::parse("57").ok(),
            other_power: None,
            outcome: if i % 4 == 0 {
                Outcome::NoContact
            } else {
                Outcome::Worked
            },
            via: None,
            note: String::new(),
            origin: Origin::LoggedHere,
        };
        let parts = if parts.outcome == Outcome::NoContact {
            ContactParts {
                rcvd: None,
                ..parts
            }
        } else {
            parts
        };
        batch.push(Contact::new(parts).unwrap());
        if batch.len() == 100_000 {
            book.add_contacts(&batch).unwrap();
            batch.clear();
        }
    }
    println!();
    println!(
        "built a {total}-contact logbook in {:.1} s",
        build.elapsed().as_secs_f64()
    );
    for (label, q) in [
        ("newest 50, whole log", ContactQuery::default()),
        (
            "newest 50, one drill and band",
            ContactQuery {
                drill: Some("bench".into()),
                band: Some(Band::B60m),
                ..Default::default()
            },
        ),
    ] {
        let mut times = Vec::new();
        for _ in 0..200 {
            let t = Instant::now();
            let (page, _) = book.page(&q, 50, None).unwrap();
            assert_eq!(page.len(), 50);
            times.push(t.elapsed());
        }
        println!(
            "  page {label}: median {:.3} ms (target < 5 ms)",
            median(times).as_secs_f64() * 1e3
        );
    }
    let (first, next) = book.page(&ContactQuery::default(), 50, None).unwrap();
    let t = Instant::now();
    let (second, _) = book.page(&ContactQuery::default(), 50, next).unwrap();
    println!(
        "  next page after the first: {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3
    );
    assert!(second[0].contact.start <= first[49].contact.start);
    let _ = std::fs::remove_dir_all(&dir);
}
