//! The logbook loses nothing: killed writers, two writers at once, a full disk, bad files,
//! and migrations from every earlier schema version.

use std::collections::HashSet;
use std::io::Read;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use nearsky::domain::{ContactId, Mode};
use nearsky::store::{ContactQuery, Logbook, StoreError};
use uuid::Uuid;

fn writer(db: &Path, count: u64, call: &str) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_nearsky"));
    c.arg("--db")
        .arg(db)
        .args(["__writer", "--count", &count.to_string(), "--call", call]);
    c.stdout(Stdio::piped()).stderr(Stdio::piped());
    c
}

fn uuids(text: &str) -> Vec<ContactId> {
    // Only complete lines: a line cut by the kill proves nothing either way.
    let complete = match text.rfind('\n') {
        Some(i) => &text[..=i],
        None => "",
    };
    complete
        .lines()
        .map(|l| ContactId(Uuid::parse_str(l.trim()).unwrap()))
        .collect()
}

struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
}

/// Kills a writer with SIGKILL at random moments, again and again; after each kill every
/// UUID the writer printed (it prints only after the add returned) must be in the logbook and
/// SQLite's integrity check must pass. `NEARSKY_KILLS` sets the number of kills (default 200;
/// `scripts/kill-test.sh` runs 1000).
#[test]
fn every_acknowledged_contact_survives_sigkill() {
    let kills: usize = std::env::var("NEARSKY_KILLS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(200);
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("kill.db");
    let mut rng = Rng(0x5eed);
    let mut acknowledged: Vec<ContactId> = Vec::new();
    let mut killed_mid_run = 0;
    let started = Instant::now();
    for _ in 0..kills {
        let mut child = writer(&db, 0, "Q1TST").spawn().unwrap();
        std::thread::sleep(Duration::from_micros(2_000 + rng.next() % 40_000));
        if child.try_wait().unwrap().is_none() {
            killed_mid_run += 1;
        }
        child.kill().unwrap();
        child.wait().unwrap();
        let mut out = String::new();
        child
            .stdout
            .take()
            .unwrap()
            .read_to_string(&mut out)
            .unwrap();
        acknowledged.extend(uuids(&out));
        let book = Logbook::open(&db).unwrap();
        assert_eq!(book.check().unwrap(), Vec::<String>::new());
        for id in acknowledged.iter().rev().take(200) {
            book.contact(*id)
                .unwrap_or_else(|e| panic!("acknowledged {id} lost: {e}"));
        }
    }
    let book = Logbook::open(&db).unwrap();
    for id in &acknowledged {
        book.contact(*id)
            .unwrap_or_else(|e| panic!("acknowledged {id} lost: {e}"));
    }
    eprintln!(
        "kill test: {kills} SIGKILLs ({killed_mid_run} while writing), {} acknowledged contacts all present, integrity ok, {:.1} s",
        acknowledged.len(),
        started.elapsed().as_secs_f64()
    );
    assert!(
        killed_mid_run >= kills * 9 / 10,
        "most kills must land while the writer runs"
    );
    assert!(acknowledged.len() > kills, "the writers made progress");
}

/// Two processes add contacts to one file at the same time: every contact is stored and no
/// lock error reaches either of them.
#[test]
fn two_writers_at_once_lose_nothing_and_see_no_lock_error() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("two.db");
    Logbook::open(&db).unwrap();
    let a = writer(&db, 150, "Q1AAA").spawn().unwrap();
    let b = writer(&db, 150, "Q1BBB").spawn().unwrap();
    let (a, b) = (a.wait_with_output().unwrap(), b.wait_with_output().unwrap());
    for o in [&a, &b] {
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(o.status.success(), "writer failed: {err}");
        assert!(!err.to_lowercase().contains("locked"), "{err}");
    }
    let ids: HashSet<ContactId> = uuids(&String::from_utf8_lossy(&a.stdout))
        .into_iter()
        .chain(uuids(&String::from_utf8_lossy(&b.stdout)))
        .collect();
    assert_eq!(ids.len(), 300);
    let book = Logbook::open(&db).unwrap();
    assert_eq!(book.count(&ContactQuery::default()).unwrap(), 300);
    for id in ids {
        book.contact(id).unwrap();
    }
}

fn sample_contact(i: i64) -> nearsky::domain::Contact {
    use nearsky::domain::*;
    let parts = ContactParts {
        id: ContactId(Uuid::from_u128(0xabc0_0000 + i as u128)),
        drill: None,
        own: StationSnapshot {
            call: Callsign::parse("Q3NET").unwrap(),
            operator: None,
            locator: Locator::parse("JN17ga").ok(),
            power: Power::from_watts(50.0).ok(),
            antenna: None,
        },
        call: Callsign::parse("Q4SHL").unwrap(),
        locator: Locator::parse("JN17wm").ok(),
        start: chrono::DateTime::from_timestamp(1_764_590_400 + i * 60, 0).unwrap(),
        end: None,
        band: Band::B40m,
        frequency: Frequency::parse("7.1").ok(),
        mode: Mode::parse("LSB").unwrap(),
        sent: Report::parse("59").ok(),
        rcvd: Report::parse("57").ok(),
        other_power: None,
        outcome: Outcome::Worked,
        via: None,
        note: "x".repeat(500),
        origin: Origin::LoggedHere,
    };
    Contact::new(parts).unwrap()
}

/// A write that cannot fit gives a clear error; the logbook stays intact and opens afterwards
/// with every earlier contact.
#[test]
fn a_full_disk_is_a_clear_error_and_loses_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("full.db");
    let mut book = Logbook::open(&db).unwrap();
    for i in 0..20 {
        book.add_contact(&sample_contact(i), 10).unwrap();
    }
    let size = std::fs::metadata(&db).unwrap().len() + 8192;
    book.set_size_limit(size).unwrap();
    let mut stored = 20;
    let err = loop {
        match book.add_contact(&sample_contact(stored), 10) {
            Ok(_) => stored += 1,
            Err(e) => break e,
        }
        assert!(stored < 10_000, "the size limit never bit");
    };
    assert!(matches!(err, StoreError::Full), "{err:?}");
    assert!(err.to_string().contains("the logbook is full"), "{err}");
    drop(book);
    let book = Logbook::open(&db).unwrap();
    assert_eq!(book.check().unwrap(), Vec::<String>::new());
    assert_eq!(book.count(&ContactQuery::default()).unwrap(), stored as u64);
    for i in 0..stored {
        book.contact(sample_contact(i).id).unwrap();
    }
}

fn refused(path: &Path) -> String {
    let before = std::fs::read(path).ok();
    let err = match Logbook::open(path) {
        Ok(_) => panic!("{} must be refused", path.display()),
        Err(e) => e.to_string(),
    };
    assert_eq!(std::fs::read(path).ok(), before, "file changed");
    let wal = format!("{}-wal", path.display());
    assert!(
        !Path::new(&wal).exists(),
        "a WAL file was created beside {}",
        path.display()
    );
    err
}

#[test]
fn bad_files_are_refused_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let p = |n: &str| dir.path().join(n);

    let mut rng = Rng(42);
    let random: Vec<u8> = (0..10_000).map(|_| rng.next() as u8).collect();
    std::fs::write(p("random.bin"), &random).unwrap();
    assert!(refused(&p("random.bin")).contains("not an SQLite database"));

    let foreign = p("foreign.db");
    let c = rusqlite::Connection::open(&foreign).unwrap();
    c.execute_batch("CREATE TABLE t(x); INSERT INTO t VALUES (1);")
        .unwrap();
    drop(c);
    assert!(refused(&foreign).contains("another program"));

    let newer = p("newer.db");
    drop(Logbook::open(&newer).unwrap());
    let c = rusqlite::Connection::open(&newer).unwrap();
    c.pragma_update(None, "user_version", 99).unwrap();
    c.pragma_update(None, "journal_mode", "DELETE").unwrap();
    drop(c);
    let e = refused(&newer);
    assert!(
        e.contains("newer nearsky") && e.contains("schema 99"),
        "{e}"
    );

    let trunc = p("truncated.db");
    let mut book = Logbook::open(&trunc).unwrap();
    for i in 0..200 {
        book.add_contact(&sample_contact(i), 0).unwrap();
    }
    drop(book);
    let c = rusqlite::Connection::open(&trunc).unwrap();
    c.pragma_update(None, "journal_mode", "DELETE").unwrap();
    drop(c);
    let bytes = std::fs::read(&trunc).unwrap();
    std::fs::write(&trunc, &bytes[..bytes.len() / 2]).unwrap();
    assert!(refused(&trunc).contains("cut short"));

    std::fs::create_dir(p("a-directory")).unwrap();
    assert!(refused(&p("a-directory")).contains("is a directory"));

    let e = match Logbook::open(&p("no/such/dir/log.db")) {
        Ok(_) => panic!("opened a path in a missing directory"),
        Err(e) => e.to_string(),
    };
    assert!(
        e.contains("no/such/dir/log.db") && e.contains("cannot open"),
        "{e}"
    );

    // A zero-length file is simply a new logbook.
    std::fs::write(p("empty.db"), b"").unwrap();
    let book = Logbook::open(&p("empty.db")).unwrap();
    assert_eq!(book.count(&ContactQuery::default()).unwrap(), 0);
}

/// Every earlier schema version is kept as a fixture (SQL text, so it can be reviewed); opening
/// one migrates it, keeps a backup copy of the file as it was, and keeps every record.
#[test]
fn logbooks_of_every_earlier_schema_open_and_keep_their_records() {
    let dir = tempfile::tempdir().unwrap();
    for version in 1..=nearsky::store::SCHEMA_VERSION {
        let sql = std::fs::read_to_string(
            Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("fixtures/logbooks/v{version}.sql")),
        )
        .unwrap();
        let db = dir.path().join(format!("v{version}.db"));
        let c = rusqlite::Connection::open(&db).unwrap();
        // As the sqlite3 shell reads a dump: tables come in name order, before their parents.
        c.pragma_update(None, "foreign_keys", false).unwrap();
        c.execute_batch(&sql).unwrap();
        c.pragma_update(None, "application_id", nearsky::store::APPLICATION_ID)
            .unwrap();
        c.pragma_update(None, "user_version", version).unwrap();
        drop(c);
        let book = Logbook::open(&db).unwrap();
        assert_eq!(book.check().unwrap(), Vec::<String>::new());
        let (rows, _) = book.page(&ContactQuery::default(), 100, None).unwrap();
        assert_eq!(rows.len(), 3, "v{version}");
        let deleted = book
            .page(
                &ContactQuery {
                    include_deleted: true,
                    ..Default::default()
                },
                100,
                None,
            )
            .unwrap()
            .0;
        assert_eq!(deleted.len(), 4);
        assert!(
            rows.iter()
                .any(|r| r.contact.mode == Mode::parse("LSB").unwrap())
        );
        assert_eq!(book.roster().unwrap().len(), 2);
        assert_eq!(book.notes(None).unwrap().len(), 1);
        if version >= 2 {
            let slots = book.schedule("Fixture drill").unwrap();
            assert_eq!(slots.len(), 1);
            assert_eq!(slots[0].primary, Some(nearsky::domain::Band::B40m));
        }
        let edited = rows
            .iter()
            .find(|r| r.revision == 2)
            .expect("the edited contact");
        assert_eq!(
            book.revisions(edited.contact.id).unwrap()[0].reason,
            "note added after the net"
        );
        if version < nearsky::store::SCHEMA_VERSION {
            assert!(
                dir.path()
                    .join(format!("v{version}.db.schema{version}.backup"))
                    .exists()
            );
        }
    }
}
