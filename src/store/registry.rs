//! Drills, own station profiles with their location history, the roster of other stations,
//! channels, propagation notes, and which drill and station are in use.

use chrono::{DateTime, Utc};
use rusqlite::{OptionalExtension, TransactionBehavior, params};
use uuid::Uuid;

use super::{Logbook, Result, StoreError};
pub use crate::domain::plan::ScheduleSlot;
use crate::domain::{Band, Callsign, Frequency, Locator, Mode, Power};

const CURRENT_DRILL: &str = "current_drill";
const CURRENT_STATION: &str = "current_station";

/// A drill: one exercise of the net.
#[derive(Debug, Clone, PartialEq)]
pub struct Drill {
    pub name: String,
    pub starts_at: Option<DateTime<Utc>>,
    pub ends_at: Option<DateTime<Utc>>,
    pub net_control: Option<Callsign>,
    pub description: String,
}

/// An own station profile, with where it is now.
#[derive(Debug, Clone, PartialEq)]
pub struct StationProfile {
    pub call: Callsign,
    pub operator: Option<Callsign>,
    pub usual_power: Option<Power>,
    /// e.g. which sections of a link-switched wire are connected.
    pub antenna: Option<String>,
    pub rig: Option<String>,
}

/// Another station of the net.
#[derive(Debug, Clone, PartialEq)]
pub struct RosterEntry {
    pub call: Callsign,
    /// e.g. "Shelter 2".
    pub tactical: String,
    pub locator: Option<Locator>,
    pub role: String,
}

/// A named frequency of a drill.
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    pub name: String,
    pub band: Band,
    pub frequency: Frequency,
    pub mode: Mode,
}

/// An operator's timestamped remark about propagation.
#[derive(Debug, Clone, PartialEq)]
pub struct Note {
    pub id: Uuid,
    pub drill: Option<String>,
    pub at: DateTime<Utc>,
    pub band: Option<Band>,
    pub station: Callsign,
    pub text: String,
}

fn ts(t: DateTime<Utc>) -> i64 {
    t.timestamp()
}

fn from_ts(s: i64) -> DateTime<Utc> {
    DateTime::from_timestamp(s, 0).unwrap_or_default()
}

fn bad(what: &str, key: &str, e: impl std::fmt::Display) -> StoreError {
    StoreError::Invalid(format!("stored {what} `{key}` is unreadable: {e}"))
}

impl Logbook {
    // ----- drills -----

    /// Creates a drill; names are unique.
    pub fn add_drill(&mut self, d: &Drill) -> Result<()> {
        let name = d.name.trim();
        if name.is_empty() {
            return Err(StoreError::Invalid("drill name is empty".into()));
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let exists: bool = tx.query_row(
            "SELECT count(*) > 0 FROM drill WHERE name = ?1",
            [name],
            |r| r.get(0),
        )?;
        if exists {
            return Err(StoreError::Invalid(format!(
                "drill `{name}` already exists"
            )));
        }
        tx.execute(
            "INSERT INTO drill (name, starts_at, ends_at, net_control, description, created_at)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            params![
                name,
                d.starts_at.map(ts),
                d.ends_at.map(ts),
                d.net_control.as_ref().map(Callsign::as_str),
                d.description,
                ts(Utc::now())
            ],
        )?;
        tx.commit()?;
        Ok(())
    }

    pub fn drills(&self) -> Result<Vec<Drill>> {
        let mut stmt = self.conn.prepare(
            "SELECT name, starts_at, ends_at, net_control, description FROM drill ORDER BY id",
        )?;
        let rows = stmt.query_map([], |r| {
            Ok((
                r.get::<_, String>(0)?,
                r.get::<_, Option<i64>>(1)?,
                r.get::<_, Option<i64>>(2)?,
                r.get::<_, Option<String>>(3)?,
                r.get::<_, String>(4)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (name, s, e, ncs, description) = row?;
            let net_control = ncs
                .map(|c| Callsign::parse(&c).map_err(|e| bad("drill", &name, e)))
                .transpose()?;
            out.push(Drill {
                name,
                starts_at: s.map(from_ts),
                ends_at: e.map(from_ts),
                net_control,
                description,
            });
        }
        Ok(out)
    }

    /// Makes a drill the one new contacts belong to.
    pub fn use_drill(&mut self, name: &str) -> Result<()> {
        if !self.drills()?.iter().any(|d| d.name == name) {
            return Err(StoreError::NotFound {
                what: "drill",
                key: name.to_string(),
            });
        }
        self.set_setting(CURRENT_DRILL, Some(name))
    }

    /// The drill in use, if any.
    pub fn current_drill(&self) -> Result<Option<String>> {
        self.setting(CURRENT_DRILL)
    }

    /// Replaces a drill's band schedule.
    pub fn set_schedule(&mut self, drill: &str, slots: &[ScheduleSlot]) -> Result<()> {
        for s in slots {
            if s.start_minute >= 1440 || s.minutes == 0 {
                return Err(StoreError::Invalid(format!(
                    "schedule slot at minute {} for {} minutes is outside one UTC day",
                    s.start_minute, s.minutes
                )));
            }
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let id = Logbook::named_drill_id(&tx, drill)?;
        tx.execute("DELETE FROM schedule_slot WHERE drill_id = ?1", [id])?;
        for s in slots {
            tx.execute(
                "INSERT INTO schedule_slot (drill_id, start_minute, minutes, primary_band, alternate_band, note)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                params![id, s.start_minute, s.minutes, s.primary.map(Band::name), s.alternate.map(Band::name), s.note],
            )?;
        }
        tx.commit()?;
        Ok(())
    }

    /// A drill's band schedule, in time order.
    pub fn schedule(&self, drill: &str) -> Result<Vec<ScheduleSlot>> {
        let mut stmt = self.conn.prepare(
            "SELECT s.start_minute, s.minutes, s.primary_band, s.alternate_band, s.note FROM schedule_slot s
             JOIN drill d ON d.id = s.drill_id WHERE d.name = ?1 ORDER BY s.start_minute",
        )?;
        let rows = stmt.query_map([drill], |r| {
            Ok((
                r.get::<_, u16>(0)?,
                r.get::<_, u16>(1)?,
                r.get::<_, Option<String>>(2)?,
                r.get::<_, Option<String>>(3)?,
                r.get::<_, String>(4)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (start_minute, minutes, p, a, note) = row?;
            let band = |b: Option<String>| {
                b.map(|b| Band::parse(&b).map_err(|e| bad("schedule band", &b, e)))
                    .transpose()
            };
            out.push(ScheduleSlot {
                start_minute,
                minutes,
                primary: band(p)?,
                alternate: band(a)?,
                note,
            });
        }
        Ok(out)
    }

    // ----- own stations -----

    /// Creates or updates an own station profile and makes it the one in use. When
    /// `locator` is given it is recorded as the station's position from `since` on.
    pub fn set_station(
        &mut self,
        p: &StationProfile,
        locator: Option<(Locator, DateTime<Utc>)>,
    ) -> Result<()> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        tx.execute(
            "INSERT INTO station (call, operator, usual_power_w, antenna, rig) VALUES (?1, ?2, ?3, ?4, ?5)
             ON CONFLICT(call) DO UPDATE SET operator = excluded.operator,
                usual_power_w = excluded.usual_power_w, antenna = excluded.antenna, rig = excluded.rig",
            params![p.call.as_str(), p.operator.as_ref().map(Callsign::as_str), p.usual_power.map(Power::watts), p.antenna, p.rig],
        )?;
        if let Some((l, since)) = locator {
            tx.execute(
                "INSERT INTO station_location (station_id, since, locator)
                 VALUES ((SELECT id FROM station WHERE call = ?1), ?2, ?3)",
                params![p.call.as_str(), ts(since), l.as_str()],
            )?;
        }
        tx.execute(
            "INSERT INTO setting(key, value) VALUES (?1, ?2) ON CONFLICT(key) DO UPDATE SET value = excluded.value",
            [CURRENT_STATION, p.call.as_str()],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Records that the station in use moved to `locator` at `since`.
    pub fn move_station(&mut self, locator: Locator, since: DateTime<Utc>) -> Result<()> {
        let Some(p) = self.current_station()? else {
            return Err(StoreError::Invalid(
                "no own station yet: use `nearsky station set` first".into(),
            ));
        };
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        tx.execute(
            "INSERT INTO station_location (station_id, since, locator)
             VALUES ((SELECT id FROM station WHERE call = ?1), ?2, ?3)",
            params![p.call.as_str(), ts(since), locator.as_str()],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// The own station profile in use.
    pub fn current_station(&self) -> Result<Option<StationProfile>> {
        let Some(call) = self.setting(CURRENT_STATION)? else {
            return Ok(None);
        };
        let row = self
            .conn
            .query_row(
                "SELECT call, operator, usual_power_w, antenna, rig FROM station WHERE call = ?1",
                [&call],
                |r| {
                    Ok((
                        r.get::<_, String>(0)?,
                        r.get::<_, Option<String>>(1)?,
                        r.get::<_, Option<f64>>(2)?,
                        r.get::<_, Option<String>>(3)?,
                        r.get::<_, Option<String>>(4)?,
                    ))
                },
            )
            .optional()?;
        let Some((c, op, pw, antenna, rig)) = row else {
            return Ok(None);
        };
        Ok(Some(StationProfile {
            call: Callsign::parse(&c).map_err(|e| bad("station", &c, e))?,
            operator: op
                .map(|o| Callsign::parse(&o).map_err(|e| bad("station", &c, e)))
                .transpose()?,
            usual_power: pw
                .map(|w| Power::from_watts(w).map_err(|e| bad("station", &c, e)))
                .transpose()?,
            antenna,
            rig,
        }))
    }

    /// Where an own station was at `at`: the latest position recorded at or before it (or the
    /// earliest one, for a time before any record).
    pub fn station_locator_at(
        &self,
        call: &Callsign,
        at: DateTime<Utc>,
    ) -> Result<Option<Locator>> {
        let sql_before =
            "SELECT l.locator FROM station_location l JOIN station s ON s.id = l.station_id
             WHERE s.call = ?1 AND l.since <= ?2 ORDER BY l.since DESC, l.id DESC LIMIT 1";
        let sql_first =
            "SELECT l.locator FROM station_location l JOIN station s ON s.id = l.station_id
             WHERE s.call = ?1 ORDER BY l.since, l.id LIMIT 1";
        let mut found: Option<String> = self
            .conn
            .query_row(sql_before, params![call.as_str(), ts(at)], |r| r.get(0))
            .optional()?;
        if found.is_none() {
            found = self
                .conn
                .query_row(sql_first, [call.as_str()], |r| r.get(0))
                .optional()?;
        }
        found
            .map(|l| Locator::parse(&l).map_err(|e| bad("station locator", &l, e)))
            .transpose()
    }

    /// The recorded positions of a station, oldest first.
    pub fn station_moves(&self, call: &Callsign) -> Result<Vec<(DateTime<Utc>, Locator)>> {
        let mut stmt = self.conn.prepare(
            "SELECT l.since, l.locator FROM station_location l JOIN station s ON s.id = l.station_id
             WHERE s.call = ?1 ORDER BY l.since, l.id",
        )?;
        let rows = stmt.query_map([call.as_str()], |r| {
            Ok((r.get::<_, i64>(0)?, r.get::<_, String>(1)?))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (s, l) = row?;
            out.push((
                from_ts(s),
                Locator::parse(&l).map_err(|e| bad("station locator", &l, e))?,
            ));
        }
        Ok(out)
    }

    // ----- roster -----

    /// Adds or updates a station of the net.
    pub fn roster_put(&mut self, e: &RosterEntry) -> Result<()> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        tx.execute(
            "INSERT INTO roster (call, tactical, locator, role, position)
             VALUES (?1, ?2, ?3, ?4, (SELECT coalesce(max(position), 0) + 1 FROM roster))
             ON CONFLICT(call) DO UPDATE SET tactical = excluded.tactical,
                locator = excluded.locator, role = excluded.role",
            params![
                e.call.as_str(),
                e.tactical.trim(),
                e.locator.as_ref().map(Locator::as_str),
                e.role.trim()
            ],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// The roster in its calling order.
    pub fn roster(&self) -> Result<Vec<RosterEntry>> {
        let mut stmt = self
            .conn
            .prepare("SELECT call, tactical, locator, role FROM roster ORDER BY position, id")?;
        let rows = stmt.query_map([], |r| {
            Ok((
                r.get::<_, String>(0)?,
                r.get::<_, String>(1)?,
                r.get::<_, Option<String>>(2)?,
                r.get::<_, String>(3)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (c, tactical, l, role) = row?;
            out.push(RosterEntry {
                call: Callsign::parse(&c).map_err(|e| bad("roster call", &c, e))?,
                tactical,
                locator: l
                    .map(|l| Locator::parse(&l).map_err(|e| bad("roster locator", &c, e)))
                    .transpose()?,
                role,
            });
        }
        Ok(out)
    }

    /// One roster entry by call (exact, or by base call).
    pub fn roster_entry(&self, call: &Callsign) -> Result<Option<RosterEntry>> {
        Ok(self
            .roster()?
            .into_iter()
            .find(|e| e.call == *call)
            .or_else(|| {
                self.roster()
                    .ok()?
                    .into_iter()
                    .find(|e| e.call.base() == call.base())
            }))
    }

    /// Sets the calling order: the calls given come first, in that order.
    pub fn roster_reorder(&mut self, calls: &[Callsign]) -> Result<()> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        tx.execute(
            "UPDATE roster SET position = position + ?1",
            [calls.len() as i64 + 1],
        )?;
        for (i, c) in calls.iter().enumerate() {
            tx.execute(
                "UPDATE roster SET position = ?1 WHERE call = ?2",
                params![i as i64, c.as_str()],
            )?;
        }
        tx.commit()?;
        Ok(())
    }

    // ----- channels -----

    pub fn add_channel(&mut self, drill: &str, ch: &Channel) -> Result<()> {
        ch.band
            .check(ch.frequency)
            .map_err(|e| StoreError::Invalid(format!("channel `{}`: {e}", ch.name)))?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let id = Logbook::named_drill_id(&tx, drill)?;
        tx.execute(
            "INSERT INTO channel (drill_id, name, band, freq_hz, mode, submode) VALUES (?1, ?2, ?3, ?4, ?5, ?6)
             ON CONFLICT(drill_id, name) DO UPDATE SET band = excluded.band, freq_hz = excluded.freq_hz,
                mode = excluded.mode, submode = excluded.submode",
            params![id, ch.name.trim(), ch.band.name(), ch.frequency.hz() as i64, ch.mode.mode(), ch.mode.submode()],
        )?;
        tx.commit()?;
        Ok(())
    }

    pub fn channels(&self, drill: &str) -> Result<Vec<Channel>> {
        let mut stmt = self.conn.prepare(
            "SELECT c.name, c.band, c.freq_hz, c.mode, c.submode FROM channel c JOIN drill d ON d.id = c.drill_id
             WHERE d.name = ?1 ORDER BY c.freq_hz",
        )?;
        let rows = stmt.query_map([drill], |r| {
            Ok((
                r.get::<_, String>(0)?,
                r.get::<_, String>(1)?,
                r.get::<_, i64>(2)?,
                r.get::<_, String>(3)?,
                r.get::<_, Option<String>>(4)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (name, band, hz, mode, sub) = row?;
            out.push(Channel {
                band: Band::parse(&band).map_err(|e| bad("channel", &name, e))?,
                frequency: Frequency::from_hz(hz.max(0) as u64)
                    .map_err(|e| bad("channel", &name, e))?,
                mode: Mode::new(&mode, sub.as_deref()).map_err(|e| bad("channel", &name, e))?,
                name,
            });
        }
        Ok(out)
    }

    // ----- propagation notes -----

    pub fn add_note(&mut self, n: &Note) -> Result<()> {
        let text = n.text.trim();
        if text.is_empty() {
            return Err(StoreError::Invalid("note text is empty".into()));
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let drill = Logbook::drill_id(&tx, n.drill.as_deref())?;
        tx.execute(
            "INSERT INTO propagation_note (uuid, drill_id, at_utc, band, station, text) VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            params![n.id.to_string(), drill, ts(n.at), n.band.map(Band::name), n.station.as_str(), text],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Notes of a drill (or all), oldest first.
    pub fn notes(&self, drill: Option<&str>) -> Result<Vec<Note>> {
        let mut stmt = self.conn.prepare(
            "SELECT n.uuid, d.name, n.at_utc, n.band, n.station, n.text FROM propagation_note n
             LEFT JOIN drill d ON d.id = n.drill_id WHERE ?1 IS NULL OR d.name = ?1 ORDER BY n.at_utc, n.id",
        )?;
        let rows = stmt.query_map([drill], |r| {
            Ok((
                r.get::<_, String>(0)?,
                r.get::<_, Option<String>>(1)?,
                r.get::<_, i64>(2)?,
                r.get::<_, Option<String>>(3)?,
                r.get::<_, String>(4)?,
                r.get::<_, String>(5)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (u, drill, at, band, station, text) = row?;
            out.push(Note {
                id: Uuid::parse_str(&u).map_err(|e| bad("note", &u, e))?,
                drill,
                at: from_ts(at),
                band: band
                    .map(|b| Band::parse(&b).map_err(|e| bad("note", &u, e)))
                    .transpose()?,
                station: Callsign::parse(&station).map_err(|e| bad("note", &u, e))?,
                text,
            });
        }
        Ok(out)
    }
}
