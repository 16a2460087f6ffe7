//! Contacts in the logbook: add, edit and delete with a revision trail, page, find duplicates.

use std::collections::HashMap;

use chrono::{DateTime, Utc};
use rusqlite::{OptionalExtension, Row, TransactionBehavior, params, params_from_iter};
use uuid::Uuid;

use super::{Logbook, Result, StoreError};
use crate::domain::{
    Band, Callsign, Contact, ContactId, ContactParts, Frequency, Locator, Mode, Origin, Outcome,
    Power, Report, StationSnapshot,
};

/// A contact as stored, with its bookkeeping.
#[derive(Debug, Clone, PartialEq)]
pub struct StoredContact {
    pub contact: Contact,
    /// 1 when first logged, +1 for every edit or delete.
    pub revision: u32,
    pub deleted: bool,
    pub logged_at: DateTime<Utc>,
}

/// A contact that looks like the one being logged: same station worked on the same band and
/// mode a few minutes apart. Reported, never refused.
#[derive(Debug, Clone, PartialEq)]
pub struct Duplicate {
    pub id: ContactId,
    pub start: DateTime<Utc>,
    pub outcome: Outcome,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RevisionKind {
    Edit,
    Delete,
}

/// The version of a contact before an edit or delete.
#[derive(Debug, Clone, PartialEq)]
pub struct Revision {
    /// The revision number the contact had before the change.
    pub revision: u32,
    pub changed_at: DateTime<Utc>,
    pub kind: RevisionKind,
    pub reason: String,
    pub previous: Contact,
}

/// Which contacts to page through.
#[derive(Debug, Clone, Default)]
pub struct ContactQuery {
    /// Drill by name.
    pub drill: Option<String>,
    pub band: Option<Band>,
    /// Logged by this station: its call is one of the `/`-separated parts of the logging
    /// call (`Q3NET` matches `Q3NET/P`).
    pub station: Option<Callsign>,
    /// Imported from a file of this name (as the import recorded it: the name, no folder).
    pub origin_file: Option<String>,
    /// Start time at or after.
    pub from: Option<DateTime<Utc>>,
    /// Start time before.
    pub until: Option<DateTime<Utc>>,
    pub include_deleted: bool,
}

/// Where the next page starts (exclusive): the last contact of the previous page.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Cursor {
    start: i64,
    row: i64,
}

/// The bound values of a contact's columns, in the order both the insert and the update list
/// them (own station, other station, time, radio, reports, outcome, via, note), between what
/// each statement puts before and after.
macro_rules! contact_params {
    ($c:ident, [$($before:expr),*], [$($after:expr),*]) => {
        params![
            $($before,)*
            $c.own.call.as_str(),
            $c.own.operator.as_ref().map(Callsign::as_str),
            $c.own.locator.as_ref().map(Locator::as_str),
            $c.own.power.map(Power::watts),
            $c.own.antenna.as_deref(),
            $c.call.as_str(),
            $c.locator.as_ref().map(Locator::as_str),
            ts($c.start),
            $c.end.map(ts),
            $c.band.name(),
            $c.frequency.map(|f| f.hz() as i64),
            $c.mode.mode(),
            $c.mode.submode(),
            $c.sent.map(|r| r.to_string()),
            $c.rcvd.map(|r| r.to_string()),
            $c.other_power.map(Power::watts),
            $c.outcome.key(),
            $c.via.as_ref().map(Callsign::as_str),
            $c.note.as_str(),
            $($after),*
        ]
    };
}

/// The contact insert, with `$tail` appended.
macro_rules! insert_contact {
    ($tail:literal) => {
        concat!(
            "INSERT INTO contact (uuid, drill_id, own_call, own_operator, own_locator,
                own_power_w, own_antenna, call, locator, start_utc, end_utc, band, freq_hz, mode,
                submode, rst_sent, rst_rcvd, other_power_w, outcome, via, note, origin_station,
                origin_file, revision, deleted, logged_at)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17,
                ?18, ?19, ?20, ?21, ?22, ?23, 1, 0, ?24)",
            $tail
        )
    };
}
const INSERT_CONTACT: &str = insert_contact!("");
const INSERT_CONTACT_OR_SKIP: &str = insert_contact!(" ON CONFLICT (uuid) DO NOTHING");

const COLUMNS: &str = "c.uuid, d.name, c.own_call, c.own_operator, c.own_locator, c.own_power_w, \
    c.own_antenna, c.call, c.locator, c.start_utc, c.end_utc, c.band, c.freq_hz, c.mode, \
    c.submode, c.rst_sent, c.rst_rcvd, c.other_power_w, c.outcome, c.via, c.note, \
    c.origin_station, c.origin_file, c.revision, c.deleted, c.logged_at, c.id";

/// The conditions of a query, as ` AND …` clauses on `contact c` with their values (bound in
/// order to `?`): only what filters, so SQLite evaluates nothing else per row. The drill is
/// given by its row id (see `query_drill`). Every reader of contacts filters through this.
fn filter_sql(q: &ContactQuery, drill_id: Option<i64>) -> (String, Vec<rusqlite::types::Value>) {
    let mut sql = String::new();
    let mut values: Vec<rusqlite::types::Value> = Vec::new();
    if let Some(id) = drill_id {
        sql.push_str(" AND c.drill_id = ?");
        values.push(id.into());
    }
    if let Some(band) = q.band {
        sql.push_str(" AND c.band = ?");
        values.push(band.name().to_string().into());
    }
    if let Some(call) = &q.station {
        // Call signs hold only letters, digits and `/`, so nothing in them is a LIKE pattern.
        sql.push_str(
            " AND (c.own_call = ? OR c.own_call LIKE ? OR c.own_call LIKE ? OR c.own_call LIKE ?)",
        );
        let c = call.as_str();
        for v in [
            c.to_string(),
            format!("{c}/%"),
            format!("%/{c}"),
            format!("%/{c}/%"),
        ] {
            values.push(v.into());
        }
    }
    if let Some(f) = &q.origin_file {
        sql.push_str(" AND c.origin_file = ?");
        values.push(f.clone().into());
    }
    if let Some(from) = q.from {
        sql.push_str(" AND c.start_utc >= ?");
        values.push(ts(from).into());
    }
    if let Some(until) = q.until {
        sql.push_str(" AND c.start_utc < ?");
        values.push(ts(until).into());
    }
    if !q.include_deleted {
        sql.push_str(" AND c.deleted = 0");
    }
    (sql, values)
}

fn ts(t: DateTime<Utc>) -> i64 {
    t.timestamp()
}

fn from_ts(s: i64) -> DateTime<Utc> {
    DateTime::from_timestamp(s, 0).unwrap_or_default()
}

/// Reads one row back into a checked contact; a row that no longer validates (edited by hand,
/// or damaged) is reported with its UUID and the field.
fn read_row(
    r: &Row<'_>,
) -> rusqlite::Result<std::result::Result<(StoredContact, i64), StoreError>> {
    read_row_with(r, None)
}

/// Like [`read_row`]; column 1 may also hold the drill's id, named through `drills`.
fn read_row_with(
    r: &Row<'_>,
    drills: Option<&HashMap<i64, String>>,
) -> rusqlite::Result<std::result::Result<(StoredContact, i64), StoreError>> {
    let uuid: &str = r.get_ref(0)?.as_str().map_err(rusqlite::Error::from)?;
    let bad = |why: String| StoreError::BadRow {
        uuid: uuid.to_string(),
        why,
    };
    macro_rules! parse {
        ($idx:expr, $name:literal, $f:expr) => {{
            // Borrowed from the row: no copy for a value that is parsed anyway.
            let v: Option<&str> = r
                .get_ref($idx)?
                .as_str_or_null()
                .map_err(rusqlite::Error::from)?;
            match v.map($f).transpose() {
                Ok(x) => x,
                Err(e) => return Ok(Err(bad(format!("{}: {}", $name, e)))),
            }
        }};
    }
    let id = match Uuid::parse_str(uuid) {
        Ok(u) => ContactId(u),
        Err(e) => return Ok(Err(bad(format!("uuid: {e}")))),
    };
    let drill: Option<String> = match r.get_ref(1)? {
        rusqlite::types::ValueRef::Integer(id) => drills.and_then(|d| d.get(&id)).cloned(),
        rusqlite::types::ValueRef::Text(t) => Some(String::from_utf8_lossy(t).into_owned()),
        _ => None,
    };
    let own_call = parse!(2, "own call", Callsign::parse);
    let own_operator = parse!(3, "operator", Callsign::parse);
    let own_locator = parse!(4, "own locator", Locator::parse);
    let own_power: Option<f64> = r.get(5)?;
    let own_antenna: Option<String> = r.get(6)?;
    let call = parse!(7, "call", Callsign::parse);
    let locator = parse!(8, "locator", Locator::parse);
    let start: i64 = r.get(9)?;
    let end: Option<i64> = r.get(10)?;
    let band = parse!(11, "band", Band::parse);
    let freq: Option<i64> = r.get(12)?;
    let mode_text: &str = r.get_ref(13)?.as_str().map_err(rusqlite::Error::from)?;
    let submode: Option<&str> = r
        .get_ref(14)?
        .as_str_or_null()
        .map_err(rusqlite::Error::from)?;
    let sent = parse!(15, "report sent", Report::parse);
    let rcvd = parse!(16, "report received", Report::parse);
    let other_power: Option<f64> = r.get(17)?;
    let outcome = parse!(18, "outcome", Outcome::parse);
    let via = parse!(19, "via", Callsign::parse);
    let note: String = r.get(20)?;
    let origin_station = parse!(21, "origin station", Callsign::parse);
    let origin_file: Option<String> = r.get(22)?;
    let revision: i64 = r.get(23)?;
    let deleted: bool = r.get(24)?;
    let logged_at: i64 = r.get(25)?;
    let row_id: i64 = r.get(26)?;
    let mode = match Mode::new(mode_text, submode) {
        Ok(m) => m,
        Err(e) => return Ok(Err(bad(format!("mode: {e}")))),
    };
    let power = |w: Option<f64>, name: &str| match w.map(Power::from_watts).transpose() {
        Ok(p) => Ok(p),
        Err(e) => Err(bad(format!("{name}: {e}"))),
    };
    let (own_power, other_power) = match (
        power(own_power, "own power"),
        power(other_power, "their power"),
    ) {
        (Ok(a), Ok(b)) => (a, b),
        (Err(e), _) | (_, Err(e)) => return Ok(Err(e)),
    };
    let frequency = match freq
        .map(|f| Frequency::from_hz(f.max(0) as u64))
        .transpose()
    {
        Ok(f) => f,
        Err(e) => return Ok(Err(bad(format!("frequency: {e}")))),
    };
    let (Some(own_call), Some(call), Some(band), Some(outcome)) = (own_call, call, band, outcome)
    else {
        return Ok(Err(bad("a required column is empty".into())));
    };
    let origin = match origin_station {
        None => Origin::LoggedHere,
        Some(station) => Origin::Imported {
            station,
            file: origin_file.unwrap_or_default(),
        },
    };
    let parts = ContactParts {
        id,
        drill,
        own: StationSnapshot {
            call: own_call,
            operator: own_operator,
            locator: own_locator,
            power: own_power,
            antenna: own_antenna,
        },
        call,
        locator,
        start: from_ts(start),
        end: end.map(from_ts),
        band,
        frequency,
        mode,
        sent,
        rcvd,
        other_power,
        outcome,
        via,
        note,
        origin,
    };
    Ok(match Contact::new(parts) {
        Ok(contact) => Ok((
            StoredContact {
                contact,
                revision: revision.max(0) as u32,
                deleted,
                logged_at: from_ts(logged_at),
            },
            row_id,
        )),
        Err(e) => Err(bad(e.to_string())),
    })
}

/// An import in progress: one transaction.
pub struct Import<'a> {
    tx: rusqlite::Transaction<'a>,
    now: DateTime<Utc>,
    /// Row ids of the drills seen so far in this import, by name.
    drills: HashMap<String, i64>,
}

impl Import<'_> {
    /// Stores the contact unless the logbook (or this import so far) already holds it: the
    /// same UUID, or the same logging station, other call, band and mode within a minute.
    /// Returns whether it was stored. The contact's drill is created if missing.
    pub fn add(&mut self, c: &Contact) -> Result<bool> {
        let t = ts(c.start);
        let known = self
            .tx
            .prepare_cached(
                "SELECT 1 FROM contact WHERE call = ?1 AND band = ?2 AND mode = ?3
                   AND start_utc BETWEEN ?4 AND ?5 AND own_call = ?6 AND deleted = 0",
            )?
            .exists(params![
                c.call.as_str(),
                c.band.name(),
                c.mode.mode(),
                t - 60,
                t + 60,
                c.own.call.as_str()
            ])?;
        if known {
            return Ok(false);
        }
        let drill = match c.drill.as_deref() {
            None => None,
            Some(d) => Some(self.drill(d)?),
        };
        // The same UUID makes the insert a no-op: one statement instead of a look-up first.
        Logbook::insert_row(&self.tx, c, drill, self.now, true)
    }

    /// The row id of a drill, created if the logbook does not have it yet.
    pub fn drill(&mut self, name: &str) -> Result<i64> {
        if let Some(id) = self.drills.get(name) {
            return Ok(*id);
        }
        self.tx
            .prepare_cached(
                "INSERT INTO drill (name, description, created_at) SELECT ?1, 'created by an import', ?2
                 WHERE NOT EXISTS (SELECT 1 FROM drill WHERE name = ?1)",
            )?
            .execute(params![name, ts(self.now)])?;
        let id = Logbook::named_drill_id(&self.tx, name)?;
        self.drills.insert(name.to_string(), id);
        Ok(id)
    }

    /// Stores everything inserted; dropping the import instead stores nothing.
    pub fn commit(self) -> Result<()> {
        self.tx.commit()?;
        Ok(())
    }
}

fn snapshot_json(c: &Contact) -> Result<String> {
    serde_json::to_string(c)
        .map_err(|e| StoreError::Invalid(format!("cannot record the previous version: {e}")))
}

impl Logbook {
    /// The row id of a drill by name; a drill that is named but missing is an error.
    pub(super) fn drill_id(tx: &rusqlite::Connection, name: Option<&str>) -> Result<Option<i64>> {
        name.map(|n| Self::named_drill_id(tx, n)).transpose()
    }

    /// The row id of the drill called `name`.
    pub(super) fn named_drill_id(tx: &rusqlite::Connection, name: &str) -> Result<i64> {
        Self::find_drill_id(tx, name)?.ok_or_else(|| StoreError::NotFound {
            what: "drill",
            key: name.to_string(),
        })
    }

    /// The row id of the drill called `name`, if there is one.
    fn find_drill_id(conn: &rusqlite::Connection, name: &str) -> Result<Option<i64>> {
        let mut stmt = conn.prepare_cached("SELECT id FROM drill WHERE name = ?1")?;
        Ok(stmt.query_row([name], |r| r.get(0)).optional()?)
    }

    /// The drill filter of a query as a row id: `Ok(None)` for no drill filter, `Err(())`
    /// inside for a drill that does not exist (nothing matches then).
    fn query_drill(&self, q: &ContactQuery) -> Result<std::result::Result<Option<i64>, ()>> {
        Ok(match &q.drill {
            None => Ok(None),
            Some(name) => Self::find_drill_id(&self.conn, name)?.map(Some).ok_or(()),
        })
    }

    fn duplicates_in(
        conn: &rusqlite::Connection,
        c: &Contact,
        window_minutes: u32,
    ) -> Result<Vec<Duplicate>> {
        let w = i64::from(window_minutes) * 60;
        let start = ts(c.start);
        let mut stmt = conn.prepare_cached(
            "SELECT uuid, start_utc, outcome FROM contact
             WHERE call = ?1 AND band = ?2 AND mode = ?3 AND start_utc BETWEEN ?4 AND ?5
               AND own_call = ?6 AND deleted = 0 AND uuid <> ?7
             ORDER BY start_utc",
        )?;
        let rows = stmt.query_map(
            params![
                c.call.as_str(),
                c.band.name(),
                c.mode.mode(),
                start - w,
                start + w,
                c.own.call.as_str(),
                c.id.to_string()
            ],
            |r| {
                Ok((
                    r.get::<_, String>(0)?,
                    r.get::<_, i64>(1)?,
                    r.get::<_, String>(2)?,
                ))
            },
        )?;
        let mut out = Vec::new();
        for row in rows {
            let (u, s, o) = row?;
            if let (Ok(u), Ok(o)) = (Uuid::parse_str(&u), Outcome::parse(&o)) {
                out.push(Duplicate {
                    id: ContactId(u),
                    start: from_ts(s),
                    outcome: o,
                });
            }
        }
        Ok(out)
    }

    /// Contacts that look like `c` within `window_minutes` (same own call, other call, band
    /// and mode).
    pub fn duplicates(&self, c: &Contact, window_minutes: u32) -> Result<Vec<Duplicate>> {
        Self::duplicates_in(&self.conn, c, window_minutes)
    }

    /// Stores a contact. When this returns `Ok`, the contact is on disk. Possible duplicates
    /// within `window_minutes` are returned for the caller to show; the contact is stored all
    /// the same. A contact whose UUID is already stored is refused.
    pub fn add_contact(&mut self, c: &Contact, window_minutes: u32) -> Result<Vec<Duplicate>> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let dups = Self::duplicates_in(&tx, c, window_minutes)?;
        Self::insert(&tx, c, chrono::Utc::now())?;
        tx.commit()?;
        Ok(dups)
    }

    /// Stores many contacts in one transaction: all of them, or (on any error) none.
    pub fn add_contacts(&mut self, contacts: &[Contact]) -> Result<usize> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let now = chrono::Utc::now();
        for c in contacts {
            Self::insert(&tx, c, now)?;
        }
        tx.commit()?;
        Ok(contacts.len())
    }

    pub(super) fn insert(
        tx: &rusqlite::Connection,
        c: &Contact,
        logged_at: DateTime<Utc>,
    ) -> Result<()> {
        let drill = Self::drill_id(tx, c.drill.as_deref())?;
        Self::insert_row(tx, c, drill, logged_at, false).map(|_| ())
    }

    /// Inserts one contact row. With `skip_same_uuid` a contact whose UUID is already stored
    /// is left alone (returns false); without, it is an error.
    fn insert_row(
        tx: &rusqlite::Connection,
        c: &Contact,
        drill: Option<i64>,
        logged_at: DateTime<Utc>,
        skip_same_uuid: bool,
    ) -> Result<bool> {
        let (origin_station, origin_file) = match &c.origin {
            Origin::LoggedHere => (None, None),
            Origin::Imported { station, file } => (Some(station.as_str()), Some(file.as_str())),
        };
        let mut stmt = tx.prepare_cached(if skip_same_uuid {
            INSERT_CONTACT_OR_SKIP
        } else {
            INSERT_CONTACT
        })?;
        let mut uuid = Uuid::encode_buffer();
        let uuid = c.id.0.hyphenated().encode_lower(&mut uuid);
        let r = stmt.execute(contact_params!(
            c,
            [&*uuid, drill],
            [origin_station, origin_file, ts(logged_at)]
        ));
        match r {
            Err(e) if e.sqlite_error_code() == Some(rusqlite::ErrorCode::ConstraintViolation) => {
                Err(StoreError::Invalid(format!(
                    "contact {} is already in the logbook",
                    c.id
                )))
            }
            other => other.map(|n| n > 0).map_err(StoreError::from),
        }
    }

    /// Calls `f` for every contact that matches, oldest first, streaming (for exports). Drill
    /// names come from one look-up table instead of a join per row.
    pub fn for_each_contact(
        &self,
        q: &ContactQuery,
        mut f: impl FnMut(StoredContact) -> Result<()>,
    ) -> Result<()> {
        let mut names = HashMap::new();
        let mut stmt = self.conn.prepare("SELECT id, name FROM drill")?;
        for row in stmt.query_map([], |r| Ok((r.get::<_, i64>(0)?, r.get::<_, String>(1)?)))? {
            let (id, name) = row?;
            names.insert(id, name);
        }
        let drill_id = match &q.drill {
            None => None,
            Some(d) => match names.iter().find(|(_, n)| *n == d) {
                Some((id, _)) => Some(*id),
                None => return Ok(()),
            },
        };
        let columns = COLUMNS.replace("d.name", "c.drill_id");
        let (filter, values) = filter_sql(q, drill_id);
        let sql =
            format!("SELECT {columns} FROM contact c WHERE 1{filter} ORDER BY c.start_utc, c.id");
        let mut stmt = self.conn.prepare(&sql)?;
        let mut rows = stmt.query(params_from_iter(values))?;
        while let Some(r) = rows.next()? {
            let (c, _) = read_row_with(r, Some(&names))??;
            f(c)?;
        }
        Ok(())
    }

    /// Calls `f` for every contact that matches, oldest first, with only what coverage needs:
    /// a lean reader that skips the columns and checks coverage does not use. A row whose
    /// stored values cannot be read is reported like [`Logbook::contact`] would.
    pub fn for_each_sighting(
        &self,
        q: &ContactQuery,
        mut f: impl FnMut(&crate::domain::coverage::Sighting<'_>),
    ) -> Result<()> {
        use crate::domain::callsign::base_of;
        let Ok(drill_id) = self.query_drill(q)? else {
            return Ok(());
        };
        let (filter, values) = filter_sql(q, drill_id);
        let sql = format!(
            "SELECT c.uuid, c.own_call, c.own_locator, c.call, c.locator, c.start_utc, c.band,
                    c.freq_hz, c.outcome, c.rst_rcvd
             FROM contact c WHERE 1{filter} ORDER BY c.start_utc, c.id"
        );
        let mut stmt = self.conn.prepare(&sql)?;
        let mut rows = stmt.query(params_from_iter(values))?;
        while let Some(r) = rows.next()? {
            let uuid = r.get_ref(0)?.as_str().unwrap_or("");
            let bad = |why: &str| StoreError::BadRow {
                uuid: uuid.to_string(),
                why: why.to_string(),
            };
            let id = Uuid::parse_str(uuid).map_err(|e| bad(&format!("uuid: {e}")))?;
            let own = r.get_ref(1)?.as_str().map_err(|_| bad("own call"))?;
            let call = r.get_ref(3)?.as_str().map_err(|_| bad("call"))?;
            let loc = |i: usize| -> Result<Option<Locator>> {
                match r.get_ref(i)?.as_str_or_null().map_err(|_| bad("locator"))? {
                    None => Ok(None),
                    Some(t) => Locator::parse(t)
                        .map(Some)
                        .map_err(|e| bad(&format!("locator: {e}"))),
                }
            };
            let band = Band::parse(r.get_ref(6)?.as_str().map_err(|_| bad("band"))?)
                .map_err(|e| bad(&format!("band: {e}")))?;
            let freq: Option<i64> = r.get(7)?;
            let outcome = match r.get_ref(8)?.as_str().map_err(|_| bad("outcome"))? {
                "worked" => Outcome::Worked,
                "partial" => Outcome::Partial,
                "none" => Outcome::NoContact,
                o => return Err(bad(&format!("outcome `{o}`"))),
            };
            let rcvd = r
                .get_ref(9)?
                .as_str_or_null()
                .map_err(|_| bad("report received"))?
                .map(Report::parse)
                .transpose()
                .map_err(|e| bad(&format!("report received: {e}")))?;
            let s = crate::domain::coverage::Sighting {
                id: ContactId(id),
                from: base_of(own),
                from_locator: loc(2)?,
                to: base_of(call),
                to_locator: loc(4)?,
                start: from_ts(r.get(5)?),
                band,
                freq_hz: freq.map(|f| f.max(0) as u64),
                outcome,
                rcvd,
            };
            f(&s);
        }
        Ok(())
    }

    /// Starts an import: one transaction for a whole file. Nothing is stored unless
    /// [`Import::commit`] is called.
    pub fn begin_import(&mut self) -> Result<Import<'_>> {
        // A bulk import touches every index page; a larger page cache keeps them in memory
        // (64 MiB at most, released when the connection closes).
        self.conn.pragma_update(None, "cache_size", -65_536)?;
        Ok(Import {
            tx: self
                .conn
                .transaction_with_behavior(TransactionBehavior::Immediate)?,
            now: chrono::Utc::now(),
            drills: HashMap::new(),
        })
    }

    /// One contact by id, deleted or not.
    pub fn contact(&self, id: ContactId) -> Result<StoredContact> {
        let sql = format!(
            "SELECT {COLUMNS} FROM contact c LEFT JOIN drill d ON d.id = c.drill_id WHERE c.uuid = ?1"
        );
        let found = self
            .conn
            .query_row(&sql, [id.to_string()], read_row)
            .optional()?;
        match found {
            None => Err(StoreError::NotFound {
                what: "contact",
                key: id.to_string(),
            }),
            Some(r) => r.map(|(c, _)| c),
        }
    }

    /// Finds a contact by the start of its UUID (at least 4 characters, as typed).
    pub fn find_contact(&self, prefix: &str) -> Result<StoredContact> {
        let p = prefix.trim().to_ascii_lowercase();
        if p.len() < 4 || !p.chars().all(|c| c.is_ascii_hexdigit() || c == '-') {
            return Err(StoreError::Invalid(format!(
                "contact id `{prefix}`: give at least 4 characters of its UUID"
            )));
        }
        let mut stmt = self
            .conn
            .prepare("SELECT uuid FROM contact WHERE uuid LIKE ?1 || '%' LIMIT 2")?;
        let ids: Vec<String> = stmt
            .query_map([&p], |r| r.get(0))?
            .collect::<rusqlite::Result<_>>()?;
        match ids.as_slice() {
            [one] => {
                let u = Uuid::parse_str(one).map_err(|e| StoreError::Invalid(e.to_string()))?;
                self.contact(ContactId(u))
            }
            [] => Err(StoreError::NotFound {
                what: "contact",
                key: prefix.to_string(),
            }),
            _ => Err(StoreError::Invalid(format!(
                "contact id `{prefix}` matches more than one contact; give more of it"
            ))),
        }
    }

    /// A page of contacts, newest first, starting after `after` (from the previous page).
    /// Uses the time indexes: the cost depends on the page size, not on the log's size.
    pub fn page(
        &self,
        q: &ContactQuery,
        limit: usize,
        after: Option<Cursor>,
    ) -> Result<(Vec<StoredContact>, Option<Cursor>)> {
        let Ok(drill_id) = self.query_drill(q)? else {
            return Ok((Vec::new(), None));
        };
        let (filter, mut values) = filter_sql(q, drill_id);
        let mut sql = format!(
            "SELECT {COLUMNS} FROM contact c LEFT JOIN drill d ON d.id = c.drill_id WHERE 1{filter}"
        );
        if let Some(cur) = after {
            sql.push_str(" AND (c.start_utc < ? OR (c.start_utc = ? AND c.id < ?))");
            values.extend([cur.start.into(), cur.start.into(), cur.row.into()]);
        }
        sql.push_str(" ORDER BY c.start_utc DESC, c.id DESC LIMIT ?");
        values.push((limit as i64).into());
        let mut stmt = self.conn.prepare_cached(&sql)?;
        let rows = stmt.query_map(params_from_iter(values.iter()), read_row)?;
        let mut out = Vec::with_capacity(limit);
        let mut last = None;
        for r in rows {
            let (c, row) = r??;
            last = Some(Cursor {
                start: ts(c.contact.start),
                row,
            });
            out.push(c);
        }
        let next = if out.len() == limit { last } else { None };
        Ok((out, next))
    }

    /// How many contacts match (deleted ones only when asked). Counted from indexes: all
    /// matching rows, minus the deleted ones (a small partial index).
    pub fn count(&self, q: &ContactQuery) -> Result<u64> {
        let Ok(drill_id) = self.query_drill(q)? else {
            return Ok(0);
        };
        let every = ContactQuery {
            include_deleted: true,
            ..q.clone()
        };
        let (filter, values) = filter_sql(&every, drill_id);
        let count = |sql: String| -> Result<i64> {
            let mut stmt = self.conn.prepare_cached(&sql)?;
            Ok(stmt.query_row(params_from_iter(values.iter()), |r| r.get(0))?)
        };
        let total = count(format!("SELECT count(*) FROM contact c WHERE 1{filter}"))?;
        let deleted = if q.include_deleted {
            0
        } else {
            count(format!(
                "SELECT count(*) FROM contact c WHERE 1{filter} AND c.deleted = 1"
            ))?
        };
        Ok((total - deleted).max(0) as u64)
    }

    fn require_reason(reason: &str) -> Result<&str> {
        let r = reason.trim();
        if r.is_empty() {
            return Err(StoreError::Invalid(
                "a reason is required for every edit and delete".into(),
            ));
        }
        Ok(r)
    }

    fn keep_revision(
        tx: &rusqlite::Connection,
        current: &StoredContact,
        kind: &str,
        reason: &str,
    ) -> Result<i64> {
        let row: i64 = tx.query_row(
            "SELECT id FROM contact WHERE uuid = ?1",
            [current.contact.id.to_string()],
            |r| r.get(0),
        )?;
        tx.execute(
            "INSERT INTO contact_revision (contact_id, revision, changed_at, kind, reason, previous)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            params![row, current.revision, ts(chrono::Utc::now()), kind, reason, snapshot_json(&current.contact)?],
        )?;
        Ok(row)
    }

    /// Replaces a contact (same id) with `updated`, keeping the previous version with the
    /// reason. Deleted contacts cannot be edited.
    pub fn edit_contact(&mut self, updated: &Contact, reason: &str) -> Result<()> {
        let reason = Self::require_reason(reason)?;
        let current = self.contact(updated.id)?;
        if current.deleted {
            return Err(StoreError::Invalid(format!(
                "contact {} was deleted; it cannot be edited",
                updated.id
            )));
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let row = Self::keep_revision(&tx, &current, "edit", reason)?;
        let logged_at = current.logged_at;
        // Rewrite every column in place (the row id, and so the revision trail, stays).
        let drill = Self::drill_id(&tx, updated.drill.as_deref())?;
        let c = updated;
        tx.execute(
            "UPDATE contact SET drill_id = ?2, own_call = ?3, own_operator = ?4, own_locator = ?5,
                own_power_w = ?6, own_antenna = ?7, call = ?8, locator = ?9, start_utc = ?10,
                end_utc = ?11, band = ?12, freq_hz = ?13, mode = ?14, submode = ?15, rst_sent = ?16,
                rst_rcvd = ?17, other_power_w = ?18, outcome = ?19, via = ?20, note = ?21,
                revision = revision + 1, logged_at = ?22
             WHERE id = ?1",
            contact_params!(c, [row, drill], [ts(logged_at)]),
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Moves the contacts `q` selects into drill `to` (which must exist), each keeping its
    /// previous version with `reason`, all in one transaction: for records imported while the
    /// wrong drill was in use. Deleted contacts and those already in `to` stay as they are.
    /// Returns how many moved.
    pub fn move_to_drill(&mut self, q: &ContactQuery, to: &str, reason: &str) -> Result<usize> {
        let reason = Self::require_reason(reason)?;
        let live = ContactQuery {
            include_deleted: false,
            ..q.clone()
        };
        let mut selected = Vec::new();
        self.for_each_contact(&live, |s| {
            if s.contact.drill.as_deref() != Some(to) {
                selected.push(s);
            }
            Ok(())
        })?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let drill = Self::named_drill_id(&tx, to)?;
        for s in &selected {
            let row = Self::keep_revision(&tx, s, "edit", reason)?;
            tx.execute(
                "UPDATE contact SET drill_id = ?2, revision = revision + 1 WHERE id = ?1",
                params![row, drill],
            )?;
        }
        tx.commit()?;
        Ok(selected.len())
    }

    /// Marks a contact deleted (it stays in the file), keeping the version and the reason.
    pub fn delete_contact(&mut self, id: ContactId, reason: &str) -> Result<()> {
        let reason = Self::require_reason(reason)?;
        let current = self.contact(id)?;
        if current.deleted {
            return Err(StoreError::Invalid(format!(
                "contact {id} is already deleted"
            )));
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let row = Self::keep_revision(&tx, &current, "delete", reason)?;
        tx.execute(
            "UPDATE contact SET deleted = 1, revision = revision + 1 WHERE id = ?1",
            [row],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// The earlier versions of a contact, oldest first.
    pub fn revisions(&self, id: ContactId) -> Result<Vec<Revision>> {
        let mut stmt = self.conn.prepare(
            "SELECT r.revision, r.changed_at, r.kind, r.reason, r.previous FROM contact_revision r
             JOIN contact c ON c.id = r.contact_id WHERE c.uuid = ?1 ORDER BY r.revision",
        )?;
        let rows = stmt.query_map([id.to_string()], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, i64>(1)?,
                r.get::<_, String>(2)?,
                r.get::<_, String>(3)?,
                r.get::<_, String>(4)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (rev, at, kind, reason, prev) = row?;
            let previous: Contact =
                serde_json::from_str(&prev).map_err(|e| StoreError::BadRow {
                    uuid: id.to_string(),
                    why: format!("revision {rev}: {e}"),
                })?;
            let kind = if kind == "delete" {
                RevisionKind::Delete
            } else {
                RevisionKind::Edit
            };
            out.push(Revision {
                revision: rev.max(0) as u32,
                changed_at: from_ts(at),
                kind,
                reason,
                previous,
            });
        }
        Ok(out)
    }

    /// Every stored contact that no longer validates, as messages.
    pub(super) fn check_contacts(&self) -> Result<Vec<String>> {
        let sql = format!("SELECT {COLUMNS} FROM contact c LEFT JOIN drill d ON d.id = c.drill_id");
        let mut stmt = self.conn.prepare(&sql)?;
        let rows = stmt.query_map([], read_row)?;
        let mut problems = Vec::new();
        for r in rows {
            if let Err(e) = r? {
                problems.push(e.to_string());
            }
        }
        Ok(problems)
    }
}
