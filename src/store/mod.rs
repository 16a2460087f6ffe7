//! The logbook file: SQLite that loses nothing.
//!
//! The only module that names `rusqlite`. A [`Logbook`] owns one connection in WAL mode with
//! `synchronous=FULL`, so when a write returns, it is on disk and survives a killed process or
//! a flat battery. Every write is one `BEGIN IMMEDIATE` transaction and waits (busy timeout)
//! instead of failing when another process writes at the same moment.
//!
//! Opening is careful: a file that is not a nearsky logbook, or one written by a newer
//! nearsky, is refused before SQLite writes anything to it; an older logbook is copied (SQLite
//! online backup) before it is migrated.

mod contacts;
mod registry;

use std::fs::File;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::Duration;

use rusqlite::{Connection, ErrorCode, OpenFlags, TransactionBehavior};

pub use contacts::{
    ContactQuery, Cursor, Duplicate, Import, Revision, RevisionKind, StoredContact,
};
pub use registry::{Channel, Drill, Note, RosterEntry, ScheduleSlot, StationProfile};

/// `PRAGMA application_id` of a nearsky logbook: "NSKY" in ASCII.
pub const APPLICATION_ID: i32 = 0x4E53_4B59;

/// The migrations, in order. Schema version N is reached by applying the first N.
const MIGRATIONS: [&str; 3] = [
    include_str!("migrations/0001_init.sql"),
    include_str!("migrations/0002_schedule.sql"),
    include_str!("migrations/0003_deleted_index.sql"),
];

/// The schema version this build writes.
pub const SCHEMA_VERSION: i32 = MIGRATIONS.len() as i32;

/// How long a write waits for another process's write to finish before giving up.
const BUSY_TIMEOUT: Duration = Duration::from_secs(15);

/// Why the logbook could not do what was asked.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    #[error("{path}: not a nearsky logbook ({why}); the file was not changed")]
    NotALogbook { path: PathBuf, why: String },
    #[error(
        "{path}: written by a newer nearsky (schema {found}, this one knows up to {known}); the file was not changed"
    )]
    Newer {
        path: PathBuf,
        found: i32,
        known: i32,
    },
    #[error("{path}: {why}")]
    Access { path: PathBuf, why: String },
    #[error("the logbook file is damaged ({0}); restore a backup, the file was not changed")]
    Corrupt(String),
    #[error(
        "the logbook is full: the disk or its size limit has no room left; nothing of this change was stored"
    )]
    Full,
    #[error("the logbook stayed busy for {}s (another program writing?); nothing was stored, try again", BUSY_TIMEOUT.as_secs())]
    Busy,
    #[error("{what} `{key}` not found")]
    NotFound { what: &'static str, key: String },
    #[error("{0}")]
    Invalid(String),
    #[error("stored contact {uuid} no longer passes validation: {why}")]
    BadRow { uuid: String, why: String },
    #[error("logbook error: {0}")]
    Sqlite(rusqlite::Error),
}

impl From<rusqlite::Error> for StoreError {
    fn from(e: rusqlite::Error) -> Self {
        match e.sqlite_error_code() {
            Some(ErrorCode::DiskFull) => StoreError::Full,
            Some(ErrorCode::DatabaseBusy | ErrorCode::DatabaseLocked) => StoreError::Busy,
            Some(ErrorCode::DatabaseCorrupt | ErrorCode::NotADatabase) => {
                StoreError::Corrupt(e.to_string())
            }
            _ => StoreError::Sqlite(e),
        }
    }
}

pub type Result<T> = std::result::Result<T, StoreError>;

/// A nearsky logbook file.
pub struct Logbook {
    conn: Connection,
    path: Option<PathBuf>,
}

/// What the SQLite header of an existing file says, read without opening it as a database.
struct Header {
    user_version: i32,
    application_id: i32,
}

fn read_header(path: &Path) -> Result<Option<Header>> {
    let access = |why: String| StoreError::Access {
        path: path.to_path_buf(),
        why,
    };
    let meta = match std::fs::metadata(path) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(access(format!("cannot read: {e}"))),
    };
    if meta.is_dir() {
        return Err(StoreError::NotALogbook {
            path: path.to_path_buf(),
            why: "it is a directory".into(),
        });
    }
    if meta.len() == 0 {
        return Ok(None);
    }
    let mut head = [0u8; 100];
    let mut f = File::open(path).map_err(|e| access(format!("cannot read: {e}")))?;
    let n = read_up_to(&mut f, &mut head).map_err(|e| access(format!("cannot read: {e}")))?;
    let not = |why: &str| StoreError::NotALogbook {
        path: path.to_path_buf(),
        why: why.into(),
    };
    if n < 100 || &head[..16] != b"SQLite format 3\0" {
        return Err(not("not an SQLite database"));
    }
    let be32 = |at: usize| i32::from_be_bytes([head[at], head[at + 1], head[at + 2], head[at + 3]]);
    let page_size = match u16::from_be_bytes([head[16], head[17]]) {
        1 => 65_536u64,
        p => u64::from(p),
    };
    // Bytes 28..32 hold the size in pages, valid when the change counter (24..28) equals the
    // version-valid-for number (92..96).
    let pages = u64::from(u32::from_be_bytes([head[28], head[29], head[30], head[31]]));
    if be32(24) == be32(92) && pages > 0 && meta.len() < pages * page_size {
        return Err(StoreError::Corrupt(format!(
            "the file is {} bytes but its header says {} pages of {} bytes: it was cut short",
            meta.len(),
            pages,
            page_size
        )));
    }
    // In WAL mode the committed first page may still sit in the WAL file, so an id of 0 here
    // is only a hint: a logbook created a moment before a crash looks like that. It is
    // decided once SQLite reads the file (see `identify`).
    let header = Header {
        user_version: be32(60),
        application_id: be32(68),
    };
    if header.application_id != APPLICATION_ID && header.application_id != 0 {
        return Err(not("an SQLite file of another program"));
    }
    if header.user_version > SCHEMA_VERSION {
        return Err(StoreError::Newer {
            path: path.to_path_buf(),
            found: header.user_version,
            known: SCHEMA_VERSION,
        });
    }
    Ok(Some(header))
}

fn read_up_to(f: &mut File, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut n = 0;
    while n < buf.len() {
        match f.read(&mut buf[n..])? {
            0 => break,
            k => n += k,
        }
    }
    Ok(n)
}

impl Logbook {
    /// Opens a logbook, creating it when the path does not exist or is an empty file.
    pub fn open(path: &Path) -> Result<Logbook> {
        let header = read_header(path)?;
        let flags = OpenFlags::SQLITE_OPEN_READ_WRITE
            | OpenFlags::SQLITE_OPEN_CREATE
            | OpenFlags::SQLITE_OPEN_NO_MUTEX;
        let conn = Connection::open_with_flags(path, flags).map_err(|e| StoreError::Access {
            path: path.to_path_buf(),
            why: format!("cannot open: {e}"),
        })?;
        let mut book = Logbook {
            conn,
            path: Some(path.to_path_buf()),
        };
        book.conn.busy_timeout(BUSY_TIMEOUT)?;
        book.identify()?;
        book.configure()?;
        let version = book.schema_version()?;
        if header.is_some() && version > 0 && version < SCHEMA_VERSION {
            book.backup_before_migration(version)?;
        }
        book.migrate()?;
        Ok(book)
    }

    /// A logbook in memory, for tests and dry runs.
    pub fn open_in_memory() -> Result<Logbook> {
        let conn = Connection::open_in_memory()?;
        let mut book = Logbook { conn, path: None };
        book.configure()?;
        book.migrate()?;
        Ok(book)
    }

    /// The file this logbook lives in (`None` in memory).
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// Reads (without writing) what the file says it is, and refuses what is not a nearsky
    /// logbook of this or an older schema. Nothing has been written to the file before this.
    fn identify(&self) -> Result<()> {
        let path = self.path.clone().unwrap_or_default();
        let id: i32 = self
            .conn
            .pragma_query_value(None, "application_id", |r| r.get(0))?;
        let version = self.schema_version()?;
        let tables: i64 = self
            .conn
            .query_row("SELECT count(*) FROM sqlite_master", [], |r| r.get(0))?;
        if id != APPLICATION_ID && (id != 0 || tables > 0) {
            return Err(StoreError::NotALogbook {
                path,
                why: "an SQLite file of another program".into(),
            });
        }
        if version > SCHEMA_VERSION {
            return Err(StoreError::Newer {
                path,
                found: version,
                known: SCHEMA_VERSION,
            });
        }
        Ok(())
    }

    fn configure(&mut self) -> Result<()> {
        self.conn.busy_timeout(BUSY_TIMEOUT)?;
        self.conn.pragma_update(None, "foreign_keys", true)?;
        if self.path.is_some() {
            let mode: String =
                self.conn
                    .pragma_update_and_check(None, "journal_mode", "WAL", |r| r.get(0))?;
            if !mode.eq_ignore_ascii_case("wal") {
                return Err(StoreError::Invalid(format!(
                    "could not switch the logbook to WAL mode (got {mode})"
                )));
            }
        }
        self.conn.pragma_update(None, "synchronous", "FULL")?;
        Ok(())
    }

    fn schema_version(&self) -> Result<i32> {
        Ok(self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))?)
    }

    /// Applies every migration this file lacks, each in its own transaction. Another process
    /// may be doing the same: the version is read again once the write lock is held.
    fn migrate(&mut self) -> Result<()> {
        for (i, sql) in MIGRATIONS.iter().enumerate() {
            let target = i as i32 + 1;
            if self.schema_version()? >= target {
                continue;
            }
            let tx = self
                .conn
                .transaction_with_behavior(TransactionBehavior::Immediate)?;
            let now: i32 = tx.pragma_query_value(None, "user_version", |r| r.get(0))?;
            if now >= target {
                continue;
            }
            if now == 0 {
                let tables: i64 =
                    tx.query_row("SELECT count(*) FROM sqlite_master", [], |r| r.get(0))?;
                if tables > 0 {
                    return Err(StoreError::NotALogbook {
                        path: self.path.clone().unwrap_or_default(),
                        why: "an SQLite file with tables of another program".into(),
                    });
                }
                tx.pragma_update(None, "application_id", APPLICATION_ID)?;
            }
            tx.execute_batch(sql)?;
            tx.pragma_update(None, "user_version", target)?;
            tx.commit()?;
        }
        Ok(())
    }

    fn backup_before_migration(&self, from_version: i32) -> Result<()> {
        let Some(path) = &self.path else {
            return Ok(());
        };
        let mut n = 0;
        let target = loop {
            let suffix = if n == 0 {
                String::new()
            } else {
                format!(".{n}")
            };
            let name = format!("{}.schema{from_version}.backup{suffix}", path.display());
            let candidate = PathBuf::from(name);
            if !candidate.exists() {
                break candidate;
            }
            n += 1;
        };
        self.backup_to(&target)
    }

    /// Copies the whole logbook to `target` with SQLite's online backup (safe while other
    /// processes write). An existing file at `target` is refused.
    pub fn backup_to(&self, target: &Path) -> Result<()> {
        if target.exists() {
            return Err(StoreError::Access {
                path: target.to_path_buf(),
                why: "already exists; not overwritten".into(),
            });
        }
        self.conn.backup(
            rusqlite::MAIN_DB,
            target,
            None::<fn(rusqlite::backup::Progress)>,
        )?;
        Ok(())
    }

    /// Runs SQLite's integrity check and the logbook's own consistency checks; returns the
    /// problems found (empty when all is well).
    pub fn check(&self) -> Result<Vec<String>> {
        let mut problems = Vec::new();
        let mut stmt = self.conn.prepare("PRAGMA integrity_check")?;
        let rows = stmt.query_map([], |r| r.get::<_, String>(0))?;
        for r in rows {
            let r = r?;
            if r != "ok" {
                problems.push(r);
            }
        }
        let mut stmt = self.conn.prepare("PRAGMA foreign_key_check")?;
        let n = stmt.query_map([], |_| Ok(()))?.count();
        if n > 0 {
            problems.push(format!("{n} rows refer to missing drills or contacts"));
        }
        problems.extend(self.check_contacts()?);
        Ok(problems)
    }

    /// Caps the file at about `bytes` (SQLite `max_page_count`), so a small board's storage
    /// cannot be filled by the logbook. A write past the cap fails with [`StoreError::Full`].
    pub fn set_size_limit(&self, bytes: u64) -> Result<()> {
        let page: i64 = self
            .conn
            .pragma_query_value(None, "page_size", |r| r.get(0))?;
        let pages = (bytes / page.max(1) as u64).max(1);
        self.conn
            .pragma_update(None, "max_page_count", pages as i64)?;
        Ok(())
    }

    fn setting(&self, key: &str) -> Result<Option<String>> {
        use rusqlite::OptionalExtension;
        Ok(self
            .conn
            .query_row("SELECT value FROM setting WHERE key = ?1", [key], |r| {
                r.get(0)
            })
            .optional()?)
    }

    fn set_setting(&mut self, key: &str, value: Option<&str>) -> Result<()> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        match value {
            Some(v) => tx.execute(
                "INSERT INTO setting(key, value) VALUES (?1, ?2) ON CONFLICT(key) DO UPDATE SET value = excluded.value",
                [key, v],
            )?,
            None => tx.execute("DELETE FROM setting WHERE key = ?1", [key])?,
        };
        tx.commit()?;
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_new_logbook_carries_the_id_and_version() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("log.db");
        let book = Logbook::open(&path).unwrap();
        let id: i32 = book
            .conn
            .pragma_query_value(None, "application_id", |r| r.get(0))
            .unwrap();
        assert_eq!(id, APPLICATION_ID);
        assert_eq!(book.schema_version().unwrap(), SCHEMA_VERSION);
        let mode: String = book
            .conn
            .pragma_query_value(None, "journal_mode", |r| r.get(0))
            .unwrap();
        assert_eq!(mode, "wal");
        let sync: i32 = book
            .conn
            .pragma_query_value(None, "synchronous", |r| r.get(0))
            .unwrap();
        assert_eq!(sync, 2, "FULL");
        drop(book);
        assert!(Logbook::open(&path).is_ok(), "reopens");
    }

    /// The lean reader coverage uses selects the same contacts, in the same order, as the full
    /// reader, and counting and paging agree, for every filter: drill (also an unknown one),
    /// band, time range, deleted.
    #[test]
    fn every_reader_selects_the_same_contacts() {
        use crate::domain::{
            Band, Callsign, Contact, ContactId, ContactParts, Frequency, Locator, Mode, Outcome,
            StationSnapshot,
        };
        use chrono::DateTime;
        let mut book = Logbook::open_in_memory().unwrap();
        for name in ["spring", "autumn"] {
            book.add_drill(&Drill {
                name: name.into(),
                starts_at: None,
                ends_at: None,
                net_control: None,
                description: String::new(),
            })
            .unwrap();
        }
        let t0 = DateTime::from_timestamp(1_759_536_000, 0).unwrap();
        let bands = [(Band::B80m, 3_600_000), (Band::B40m, 7_100_000)];
        let contacts: Vec<Contact> = (0..60u64)
            .map(|i| {
                let (band, hz) = bands[(i % 2) as usize];
                Contact::new(ContactParts {
                    id: ContactId(uuid::Uuid::from_u64_pair(9, i)),
                    drill: [None, Some("spring".to_string()), Some("autumn".to_string())]
                        [(i % 3) as usize]
                        .clone(),
                    own: StationSnapshot {
                        call: Callsign::parse(["Q1AA", "Q2BB/P"][(i % 2) as usize]).unwrap(),
                        operator: None,
                        locator: Locator::parse("JN58td").ok(),
                        power: None,
                        antenna: None,
                    },
                    call: Callsign::parse(["Q3CC", "Q4DD"][(i / 2 % 2) as usize]).unwrap(),
                    locator: Locator::parse("JN48qm").ok(),
                    // Not in time order, so the order comes from the query.
                    start: t0 + chrono::Duration::minutes(((i * 37) % 60) as i64 * 7),
                    end: None,
                    band,
                    frequency: Frequency::from_hz(hz).ok(),
                    mode: Mode::parse("LSB").unwrap(),
                    sent: None,
                    rcvd: None,
                    other_power: None,
                    outcome: [Outcome::Worked, Outcome::NoContact][(i / 3 % 2) as usize],
                    via: None,
                    note: String::new(),
                    origin: crate::domain::Origin::LoggedHere,
                })
                .unwrap()
            })
            .collect();
        book.add_contacts(&contacts).unwrap();
        for c in contacts.iter().step_by(7) {
            book.delete_contact(c.id, "test").unwrap();
        }
        let queries = [
            ContactQuery::default(),
            ContactQuery {
                include_deleted: true,
                ..ContactQuery::default()
            },
            ContactQuery {
                drill: Some("spring".into()),
                ..ContactQuery::default()
            },
            ContactQuery {
                drill: Some("no such drill".into()),
                ..ContactQuery::default()
            },
            ContactQuery {
                band: Some(Band::B40m),
                from: Some(t0 + chrono::Duration::minutes(60)),
                until: Some(t0 + chrono::Duration::minutes(300)),
                drill: Some("autumn".into()),
                include_deleted: true,
                station: None,
                origin_file: None,
            },
            // The base call matches the portable one; a call that only begins the same does not.
            ContactQuery {
                station: Callsign::parse("Q2BB").ok(),
                ..ContactQuery::default()
            },
            ContactQuery {
                station: Callsign::parse("Q1AA").ok(),
                drill: Some("spring".into()),
                ..ContactQuery::default()
            },
            ContactQuery {
                station: Callsign::parse("Q1A").ok(),
                ..ContactQuery::default()
            },
            // Logged here, so from no file.
            ContactQuery {
                origin_file: Some("q1aa.adi".into()),
                ..ContactQuery::default()
            },
        ];
        for q in &queries {
            let mut full = Vec::new();
            book.for_each_contact(q, |s| {
                full.push((
                    s.contact.id,
                    s.contact.start,
                    s.contact.own.call.base().to_string(),
                ));
                Ok(())
            })
            .unwrap();
            let mut lean = Vec::new();
            book.for_each_sighting(q, |s| lean.push((s.id, s.start, s.from.to_string())))
                .unwrap();
            assert_eq!(lean, full, "{q:?}");
            let expect_some = q.drill.as_deref() != Some("no such drill")
                && q.station.as_ref().is_none_or(|s| s.as_str() != "Q1A")
                && q.origin_file.is_none();
            assert_eq!(!full.is_empty(), expect_some, "{q:?}");
            if let Some(s) = &q.station {
                assert!(full.iter().all(|c| c.2 == s.as_str()), "{q:?}");
            }
            // Counting and paging (newest first, 7 at a time) agree with both.
            assert_eq!(book.count(q).unwrap(), full.len() as u64, "{q:?}");
            let mut paged = Vec::new();
            let mut after = None;
            loop {
                let (page, next) = book.page(q, 7, after).unwrap();
                paged.extend(page.into_iter().map(|s| {
                    (
                        s.contact.id,
                        s.contact.start,
                        s.contact.own.call.base().to_string(),
                    )
                }));
                match next {
                    Some(n) => after = Some(n),
                    None => break,
                }
            }
            paged.reverse();
            assert_eq!(paged, full, "{q:?}");
        }
    }

    #[test]
    fn schedules_replace_and_cover_minutes_across_midnight() {
        use crate::domain::Band;
        let mut book = Logbook::open_in_memory().unwrap();
        let d = Drill {
            name: "d".into(),
            starts_at: None,
            ends_at: None,
            net_control: None,
            description: String::new(),
        };
        book.add_drill(&d).unwrap();
        let slot = |start, primary| ScheduleSlot {
            start_minute: start,
            minutes: 120,
            primary,
            alternate: None,
            note: String::new(),
        };
        book.set_schedule(
            "d",
            &[slot(1380, Some(Band::B80m)), slot(600, Some(Band::B40m))],
        )
        .unwrap();
        let s = book.schedule("d").unwrap();
        assert_eq!(s.len(), 2);
        assert_eq!(s[0].start_minute, 600);
        assert!(s[1].covers(1430) && s[1].covers(30) && !s[1].covers(60));
        assert!(s[0].covers(600) && !s[0].covers(720));
        let e = book.set_schedule("d", &[slot(1500, None)]).unwrap_err();
        assert!(e.to_string().contains("minute 1500"), "{e}");
        assert_eq!(
            book.schedule("d").unwrap().len(),
            2,
            "a refused schedule changes nothing"
        );
        assert!(
            book.set_schedule("nope", &[])
                .unwrap_err()
                .to_string()
                .contains("drill `nope` not found")
        );
    }
}
