//! Coverage: which links worked on which band at which hour, cross-checked between both
//! sides' logs, with the propagation evidence of each hour.
//!
//! Input: contacts of a drill (the merged logs of every station), in start-time order. Output:
//! plain data. Memory grows with the number of links × bins and with the records of the last
//! hour or so (kept to match both sides' logs), not with the length of the log.

use std::collections::{BTreeMap, VecDeque};

use chrono::{DateTime, Duration, NaiveDate, Timelike, Utc};
use serde::Serialize;

use super::geo::PathCache;
use super::hashing::FxMap;
use super::skywave::{GROUND_WAVE_KM, Hop, chapman_foe_mhz, default_height_km};
use super::stats::{Z95, weighted_median, wilson};
use super::sun::{self, Daylight};
use super::{Band, Contact, ContactId, LatLon, Locator, Outcome, Report};

/// How coverage is counted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CoverageConfig {
    /// Width of the UTC time-of-day bins, in minutes; must divide 1440.
    pub bin_minutes: u16,
    /// Both sides' records of one contact: same band, start times within this many minutes.
    pub tolerance_minutes: u16,
    /// Two records of a made contact further apart than the tolerance but within this many
    /// minutes are listed as a time contradiction (a wrong clock, most likely).
    pub suspect_minutes: u16,
    /// Upper edges of the distance rings (km); the last ring is open above.
    pub rings_km: Vec<f64>,
    /// 12-month smoothed sunspot number for the Chapman foE estimate (none: no estimate).
    pub sunspot_r12: Option<f64>,
}

impl Default for CoverageConfig {
    fn default() -> Self {
        Self {
            bin_minutes: 60,
            tolerance_minutes: 10,
            suspect_minutes: 60,
            rings_km: vec![50.0, 150.0, 300.0],
            sunspot_r12: None,
        }
    }
}

/// Why a configuration was refused.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ConfigError {
    #[error("bin width {0} minutes must divide the 1440 minutes of a day (e.g. 15, 30, 60, 120)")]
    Bin(u16),
    #[error("distance rings must be positive and increasing, got {0}")]
    Rings(String),
}

impl CoverageConfig {
    pub fn check(&self) -> Result<(), ConfigError> {
        if self.bin_minutes == 0 || 1440 % self.bin_minutes != 0 {
            return Err(ConfigError::Bin(self.bin_minutes));
        }
        let ok =
            self.rings_km.iter().all(|r| *r > 0.0) && self.rings_km.windows(2).all(|w| w[0] < w[1]);
        if !ok {
            return Err(ConfigError::Rings(format!("{:?}", self.rings_km)));
        }
        Ok(())
    }

    pub fn bins(&self) -> usize {
        1440 / usize::from(self.bin_minutes.max(1))
    }

    /// `HH:MM` of a bin's start.
    pub fn hour_start(&self, bin: usize) -> String {
        let m = bin * usize::from(self.bin_minutes);
        format!("{:02}:{:02}", m / 60, m % 60)
    }

    fn bin_of(&self, t: DateTime<Utc>) -> usize {
        let m = t.hour() * 60 + t.minute();
        (m / u32::from(self.bin_minutes.max(1))) as usize
    }

    /// Labels of the rings: `0-50`, `50-150`, …, `>300`.
    pub fn ring_labels(&self) -> Vec<String> {
        let mut out = Vec::new();
        let mut lo = 0.0;
        for r in &self.rings_km {
            out.push(format!("{lo:.0}-{r:.0}"));
            lo = *r;
        }
        out.push(format!(">{lo:.0}"));
        out
    }

    fn ring_of(&self, km: f64) -> usize {
        self.rings_km
            .iter()
            .position(|r| km < *r)
            .unwrap_or(self.rings_km.len())
    }
}

/// One cell of the link × hour matrix.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Cell {
    pub attempts: u32,
    pub worked: u32,
    pub partial: u32,
    pub none: u32,
    /// Best report received in the cell (by either side).
    pub best_report: Option<Report>,
    /// At least one observation in the cell was logged by both sides.
    pub confirmed: bool,
}

impl Cell {
    fn add(&mut self, o: &Observation) {
        self.attempts += 1;
        match o.outcome {
            Outcome::Worked => self.worked += 1,
            Outcome::Partial => self.partial += 1,
            Outcome::NoContact => self.none += 1,
        }
        self.confirmed |= o.confirmed;
        if let Some(r) = o.best_report
            && self.best_report.is_none_or(|b| r.rank() > b.rank())
        {
            self.best_report = Some(r);
        }
    }

    /// The best outcome in the cell.
    pub fn best(&self) -> Option<Outcome> {
        if self.worked > 0 {
            Some(Outcome::Worked)
        } else if self.partial > 0 {
            Some(Outcome::Partial)
        } else if self.none > 0 {
            Some(Outcome::NoContact)
        } else {
            None
        }
    }
}

/// A link (an unordered pair of stations) with its cells per band and bin.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LinkRow {
    pub a: String,
    pub b: String,
    /// Indices of `a` and `b` in [`Coverage::stations`].
    #[serde(skip)]
    pub ia: u32,
    #[serde(skip)]
    pub ib: u32,
    pub distance_km: Option<f64>,
    /// Bearing from `a` to `b`.
    pub bearing_deg: Option<f64>,
    /// Per band, one entry per bin (`None`: no attempt in that bin).
    pub cells: BTreeMap<Band, Vec<Option<Cell>>>,
}

/// One band in one bin, all links together.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BandHour {
    pub band: Band,
    pub bin: usize,
    pub hour_start: String,
    pub attempts: u32,
    pub worked: u32,
    pub partial: u32,
    pub none: u32,
    /// 95 % Wilson score interval of the worked proportion.
    pub wilson_low: f64,
    pub wilson_high: f64,
    pub median_km: Option<f64>,
    pub max_km: Option<f64>,
}

/// One distance ring of one band in one bin.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RingHour {
    pub band: Band,
    pub ring: String,
    pub bin: usize,
    pub hour_start: String,
    pub attempts: u32,
    pub worked: u32,
}

/// What a bin's contacts say about the ionosphere.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Evidence {
    pub bin: usize,
    pub hour_start: String,
    /// The Sun's elevation at the net's centre, mid-bin, on the drill's date.
    pub sun_elevation_deg: Option<f64>,
    pub daylight: Option<Daylight>,
    /// Lower bound on the critical frequency from worked sky-wave contacts (secant law).
    pub fc_floor_mhz: Option<f64>,
    /// How the bound was chosen, e.g. "second highest of 9 contacts, h′ 250 km".
    pub fc_basis: Option<String>,
    /// Chapman-layer E estimate, when a sunspot number is given and the Sun is up.
    pub foe_expected_mhz: Option<f64>,
    /// The figures in plain words.
    pub note: String,
    /// Operators' own notes for this bin: (time, band, station, text).
    pub operator_notes: Vec<(DateTime<Utc>, Option<Band>, String, String)>,
}

/// A disagreement between the two sides' logs, for the net controller to resolve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Contradiction {
    pub kind: ContradictionKind,
    pub a: String,
    pub b: String,
    pub ids: [ContactId; 2],
    pub times: [DateTime<Utc>; 2],
    pub bands: [Band; 2],
    pub message: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ContradictionKind {
    /// Both logged a contact with each other at the same time on different bands.
    Band,
    /// Both logged a contact on the same band, further apart than the tolerance.
    Time,
    /// One side logged a report or a complete contact; the other logged nothing heard.
    Outcome,
}

/// What coverage reads of one record: both ends (base calls and locators), time, band,
/// frequency, outcome and the report received.
#[derive(Debug, Clone, Copy)]
pub struct Sighting<'a> {
    pub id: ContactId,
    /// Base call of the logging station.
    pub from: &'a str,
    pub from_locator: Option<Locator>,
    pub to: &'a str,
    pub to_locator: Option<Locator>,
    pub start: DateTime<Utc>,
    pub band: Band,
    pub freq_hz: Option<u64>,
    pub outcome: Outcome,
    pub rcvd: Option<Report>,
}

/// Contradictions kept in detail; more are counted only, so that memory stays bounded by the
/// links and bins whatever the logs hold.
pub const MAX_CONTRADICTIONS: usize = 1000;

/// A contact an operator's note is attached to.
#[derive(Debug, Clone)]
pub struct OperatorNote {
    pub at: DateTime<Utc>,
    pub band: Option<Band>,
    pub station: String,
    pub text: String,
}

/// The result: every view of the drill's coverage.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Coverage {
    pub config: CoverageConfig,
    pub bands: Vec<Band>,
    /// Links sorted by distance (unknown distances last).
    pub links: Vec<LinkRow>,
    pub hours: Vec<BandHour>,
    pub rings: Vec<RingHour>,
    pub evidence: Vec<Evidence>,
    /// The first [`MAX_CONTRADICTIONS`] contradictions, in detail.
    pub contradictions: Vec<Contradiction>,
    /// All contradictions found, also those beyond the detailed list.
    pub contradictions_total: u64,
    pub observations: u64,
    pub confirmed: u64,
    pub one_sided: u64,
    /// Net centre: mean of the stations' positions.
    pub centre: Option<LatLon>,
    /// Every station seen, with its last known locator.
    pub stations: Vec<(String, Option<Locator>)>,
    /// Date of the first observation (the drill's date, for sun times).
    pub first_date: Option<NaiveDate>,
}

impl Coverage {
    /// The band × hour row of a band and bin, if attempted.
    pub fn hour(&self, band: Band, bin: usize) -> Option<&BandHour> {
        self.hours.iter().find(|h| h.band == band && h.bin == bin)
    }
}

/// One attempt seen from the net: a single record, or both sides' records of one contact.
#[derive(Debug, Clone)]
struct Observation {
    link: (u32, u32),
    band: Band,
    start: DateTime<Utc>,
    outcome: Outcome,
    confirmed: bool,
    best_report: Option<Report>,
    /// Frequency (MHz) and one-hop geometry inputs for the critical-frequency bound.
    freq_mhz: Option<f64>,
    ends: (Option<Locator>, Option<Locator>),
}

#[derive(Debug, Clone)]
struct Pending {
    /// Logging station (index).
    from: u32,
    id: ContactId,
    start: DateTime<Utc>,
    /// `start` in nanoseconds since 1970, for cheap comparisons.
    at: i128,
    band: Band,
    outcome: Outcome,
    rcvd: Option<Report>,
    freq_mhz: Option<f64>,
    ends: (Option<Locator>, Option<Locator>),
    flagged: bool,
    /// Already paired with the other side's record: kept in place until its turn to expire,
    /// so that the list stays in arrival order without shifting.
    matched: bool,
}

/// The pending records of one link, in arrival order.
#[derive(Default)]
struct LinkPending {
    records: VecDeque<Pending>,
    /// Whether the start times never decrease along `records`. Then a search for records
    /// within the tolerance of a time may begin where that window begins; otherwise (records
    /// logged out of order) every record is visited.
    in_order: bool,
}

impl LinkPending {
    fn push(&mut self, rec: Pending) {
        match self.records.back() {
            None => self.in_order = true,
            Some(last) if rec.at < last.at => self.in_order = false,
            Some(_) => {}
        }
        self.records.push_back(rec);
    }
}

#[derive(Default)]
struct Stations {
    index: FxMap<String, u32>,
    calls: Vec<String>,
    locators: Vec<Option<Locator>>,
}

impl Stations {
    fn id(&mut self, base: &str, locator: Option<Locator>) -> u32 {
        let i = match self.index.get(base) {
            Some(i) => *i,
            None => {
                let i = self.calls.len() as u32;
                self.index.insert(base.to_string(), i);
                self.calls.push(base.to_string());
                self.locators.push(None);
                i
            }
        };
        if locator.is_some() {
            self.locators[i as usize] = locator;
        }
        i
    }
}

#[derive(Default, Clone, Copy)]
struct FcTop {
    /// Highest two bounds: (MHz, confirmed, height km).
    best: [Option<(f64, bool, f64)>; 2],
    count: u32,
}

impl FcTop {
    fn add(&mut self, v: f64, confirmed: bool, h: f64) {
        self.count += 1;
        match self.best {
            [None, _] => self.best[0] = Some((v, confirmed, h)),
            [Some(a), _] if v > a.0 => {
                self.best[1] = self.best[0];
                self.best[0] = Some((v, confirmed, h));
            }
            [_, None] => self.best[1] = Some((v, confirmed, h)),
            [_, Some(b)] if v > b.0 => self.best[1] = Some((v, confirmed, h)),
            _ => {}
        }
    }

    /// Highest when it is confirmed by both sides, else the second highest (robust to one
    /// mislabelled record), else the only one.
    fn estimate(&self) -> Option<(f64, String)> {
        let a = self.best[0]?;
        let n = self.count;
        let (v, why) = match (a.1, self.best[1]) {
            (true, _) => (a, format!("highest of {n}, confirmed by both sides")),
            (false, Some(b)) => (b, format!("second highest of {n}")),
            (false, None) => (a, "a single contact".to_string()),
        };
        Some((v.0, format!("{why}, h′ {:.0} km", v.2)))
    }
}

/// Builds coverage from contacts given in start-time order.
pub struct CoverageBuilder {
    config: CoverageConfig,
    stations: Stations,
    paths: PathCache,
    /// Pending records by link. A link's entry stays once made: memory follows the links.
    pending: FxMap<(u32, u32), LinkPending>,
    /// Pending records in arrival order, so expiry visits only what expires. A link's records
    /// appear here in the same order as in its [`LinkPending`], so the record to expire is
    /// always at the front of its link's list.
    queue: VecDeque<(DateTime<Utc>, (u32, u32), ContactId)>,
    /// Test only: search every pending record, as if none were in order.
    linear: bool,
    cells: FxMap<((u32, u32), Band, usize), Cell>,
    midpoints: FxMap<(Locator, Locator), LatLon>,
    sun_grid: FxMap<(i32, i32, i64), f64>,
    sun_slots: FxMap<i64, sun::SunAt>,
    link_geo: FxMap<(u32, u32), (Option<Locator>, Option<Locator>)>,
    fc: Vec<FcTop>,
    bin_date: Vec<Option<DateTime<Utc>>>,
    contradictions: Vec<Contradiction>,
    contradictions_total: u64,
    observations: u64,
    confirmed: u64,
    one_sided: u64,
    last_start: Option<DateTime<Utc>>,
    first: Option<DateTime<Utc>>,
    /// Pending records are finalised in batches, at most every few minutes of log time.
    next_expiry: Option<DateTime<Utc>>,
}

const NANOS_PER_MINUTE: i128 = 60_000_000_000;

/// A time in nanoseconds since 1970 (exact for every `DateTime`).
fn nanos(t: DateTime<Utc>) -> i128 {
    i128::from(t.timestamp()) * 1_000_000_000 + i128::from(t.timestamp_subsec_nanos())
}

/// Log time between two passes over the pending records.
const EXPIRY_STEP_MINUTES: i64 = 5;

impl CoverageBuilder {
    pub fn new(config: CoverageConfig) -> Result<Self, ConfigError> {
        config.check()?;
        let bins = config.bins();
        Ok(Self {
            config,
            stations: Stations::default(),
            paths: PathCache::new(),
            pending: FxMap::default(),
            queue: VecDeque::new(),
            linear: false,
            cells: FxMap::default(),
            midpoints: FxMap::default(),
            sun_grid: FxMap::default(),
            sun_slots: FxMap::default(),
            link_geo: FxMap::default(),
            fc: vec![FcTop::default(); bins],
            bin_date: vec![None; bins],
            contradictions: Vec::new(),
            contradictions_total: 0,
            observations: 0,
            confirmed: 0,
            one_sided: 0,
            last_start: None,
            first: None,
            next_expiry: None,
        })
    }

    /// Adds one contact. Contacts must come in start-time order; one out of order is still
    /// counted, only its matching with the other side's record may be missed.
    pub fn add(&mut self, c: &Contact) {
        self.add_sighting(&Sighting {
            id: c.id,
            from: c.own.call.base(),
            from_locator: c.own.locator,
            to: c.call.base(),
            to_locator: c.locator,
            start: c.start,
            band: c.band,
            freq_hz: c.frequency.map(|f| f.hz()),
            outcome: c.outcome,
            rcvd: c.rcvd,
        });
    }

    /// Adds one record given as just what coverage needs (a reader that skips the rest).
    pub fn add_sighting(&mut self, c: &Sighting<'_>) {
        let from = self.stations.id(c.from, c.from_locator);
        let to = self.stations.id(c.to, c.to_locator);
        if from == to {
            return;
        }
        self.first.get_or_insert(c.start);
        let now = self.last_start.map_or(c.start, |l| l.max(c.start));
        self.last_start = Some(now);
        if self.next_expiry.is_none_or(|t| now >= t) {
            self.expire(now - Duration::minutes(i64::from(self.config.suspect_minutes)));
            self.next_expiry = Some(now + Duration::minutes(EXPIRY_STEP_MINUTES));
        }
        let link = (from.min(to), from.max(to));
        let mut rec = Pending {
            from,
            id: c.id,
            start: c.start,
            at: nanos(c.start),
            band: c.band,
            outcome: c.outcome,
            rcvd: c.rcvd,
            freq_mhz: c.freq_hz.map(|f| f as f64 / 1e6),
            ends: if from < to {
                (c.from_locator, c.to_locator)
            } else {
                (c.to_locator, c.from_locator)
            },
            flagged: false,
            matched: false,
        };
        let tol = i128::from(self.config.tolerance_minutes) * NANOS_PER_MINUTE;
        let list = self.pending.entry(link).or_default();
        // Records within the tolerance of this one: in order, they begin at `window`, and the
        // scan can stop at the first record past the tolerance.
        let ordered = list.in_order && !self.linear;
        let window = if ordered {
            list.records.partition_point(|p| p.at < rec.at - tol)
        } else {
            0
        };
        let near = |p: &Pending| (p.at - rec.at).abs() <= tol;
        let past = |p: &Pending| ordered && p.at - rec.at > tol;
        let matched = list
            .records
            .range(window..)
            .take_while(|p| !past(p))
            .position(|p| !p.matched && p.from != from && p.band == rec.band && near(p))
            .map(|i| window + i);
        if let Some(i) = matched {
            let other = &mut list.records[i];
            other.matched = true;
            let other = other.clone();
            self.pair(link, other, rec);
            return;
        }
        // Both claim a contact with each other at the same time, on different bands.
        if rec.outcome.made_contact()
            && let Some(p) = list
                .records
                .range_mut(window..)
                .take_while(|p| !past(p))
                .find(|p| {
                    !p.matched
                        && p.from != from
                        && p.band != rec.band
                        && p.outcome.made_contact()
                        && !p.flagged
                        && near(p)
                })
        {
            p.flagged = true;
            rec.flagged = true;
            self.contradictions_total += 1;
            // The details only while they are kept.
            if self.contradictions.len() < MAX_CONTRADICTIONS {
                let (a, b) = (
                    self.stations.calls[p.from as usize].clone(),
                    self.stations.calls[from as usize].clone(),
                );
                let msg = format!(
                    "{a} logged {b} on {} at {}, {b} logged {a} on {} at {}",
                    p.band,
                    p.start.format("%H:%M"),
                    rec.band,
                    rec.start.format("%H:%M")
                );
                let found = Contradiction {
                    kind: ContradictionKind::Band,
                    a,
                    b,
                    ids: [p.id, rec.id],
                    times: [p.start, rec.start],
                    bands: [p.band, rec.band],
                    message: msg,
                };
                self.contradictions.push(found);
            }
        }
        self.queue.push_back((rec.start, link, rec.id));
        list.push(rec);
    }

    /// Finalises pending single records that can no longer be matched.
    fn expire(&mut self, before: DateTime<Utc>) {
        let tol = i128::from(self.config.tolerance_minutes) * NANOS_PER_MINUTE;
        let mut done = Vec::new();
        while let Some(&(t, link, id)) = self.queue.front() {
            if t >= before {
                break;
            }
            self.queue.pop_front();
            let Some(list) = self.pending.get_mut(&link) else {
                continue;
            };
            // The record is at the front of its link's list (see `queue`); the search is only
            // a safeguard.
            let front = list.records.front().is_some_and(|p| p.id == id);
            let Some(i) = (if front {
                Some(0)
            } else {
                list.records.iter().position(|p| p.id == id)
            }) else {
                continue;
            };
            let Some(p) = list.records.remove(i) else {
                continue;
            };
            // Already matched with the other side's record: nothing left to do.
            if p.matched {
                continue;
            }
            // A made contact that the other side logged too, but too far apart in time. In
            // order, the records after `p` start no earlier, so the candidates begin past the
            // tolerance.
            let other = if p.outcome.made_contact() && !p.flagged {
                let from = if list.in_order && !self.linear && i == 0 {
                    list.records.partition_point(|q| q.at - p.at <= tol)
                } else {
                    0
                };
                list.records
                    .range_mut(from..)
                    .find(|q| {
                        !q.matched
                            && q.from != p.from
                            && q.band == p.band
                            && q.outcome.made_contact()
                            && !q.flagged
                            && (q.at - p.at).abs() > tol
                    })
                    .map(|q| {
                        q.flagged = true;
                        (q.id, q.start, q.from)
                    })
            } else {
                None
            };
            done.push((link, p, other));
        }
        done.sort_by_key(|d| d.1.start);
        for (link, p, other) in done {
            if let Some((qid, qt, qfrom)) = other
                && self.count_contradiction()
            {
                let (a, b) = (
                    self.stations.calls[p.from as usize].clone(),
                    self.stations.calls[qfrom as usize].clone(),
                );
                let msg = format!(
                    "{a} logged {b} at {}, {b} logged {a} at {} on {}: {} min apart (tolerance {} min); a station clock may be wrong",
                    p.start.format("%H:%M"),
                    qt.format("%H:%M"),
                    p.band,
                    (qt - p.start).num_minutes().abs(),
                    self.config.tolerance_minutes
                );
                self.contradictions.push(Contradiction {
                    kind: ContradictionKind::Time,
                    a,
                    b,
                    ids: [p.id, qid],
                    times: [p.start, qt],
                    bands: [p.band, p.band],
                    message: msg,
                });
            }
            self.single(link, p);
        }
    }

    /// Counts a contradiction; whether its details are still kept (so only then worth making).
    fn count_contradiction(&mut self) -> bool {
        self.contradictions_total += 1;
        self.contradictions.len() < MAX_CONTRADICTIONS
    }

    fn single(&mut self, link: (u32, u32), p: Pending) {
        self.one_sided += 1;
        let o = Observation {
            link,
            band: p.band,
            start: p.start,
            outcome: p.outcome,
            confirmed: false,
            best_report: p.rcvd,
            freq_mhz: p.freq_mhz,
            ends: p.ends,
        };
        self.observe(o);
    }

    fn pair(&mut self, link: (u32, u32), x: Pending, y: Pending) {
        self.confirmed += 1;
        let (first, second) = if x.start <= y.start { (x, y) } else { (y, x) };
        let denies = |claim: &Pending, other: &Pending| {
            other.outcome == Outcome::NoContact
                && (claim.rcvd.is_some() || claim.outcome == Outcome::Worked)
        };
        let contradiction = denies(&first, &second) || denies(&second, &first);
        let outcome = match (first.outcome, second.outcome) {
            (Outcome::Worked, Outcome::Worked) => Outcome::Worked,
            (Outcome::NoContact, Outcome::NoContact) => Outcome::NoContact,
            _ => Outcome::Partial,
        };
        if contradiction && self.count_contradiction() {
            let (claim, other) = if denies(&first, &second) {
                (&first, &second)
            } else {
                (&second, &first)
            };
            let (a, b) = (
                self.stations.calls[claim.from as usize].clone(),
                self.stations.calls[other.from as usize].clone(),
            );
            let what = match claim.rcvd {
                Some(r) => format!("a report {r} received from {b}"),
                None => format!("a complete contact with {b}"),
            };
            let msg = format!(
                "{a} logged {what} on {} at {}, but {b} logged nothing heard at {}",
                claim.band,
                claim.start.format("%H:%M"),
                other.start.format("%H:%M")
            );
            self.contradictions.push(Contradiction {
                kind: ContradictionKind::Outcome,
                a,
                b,
                ids: [claim.id, other.id],
                times: [claim.start, other.start],
                bands: [claim.band, other.band],
                message: msg,
            });
        }
        let best_report = match (first.rcvd, second.rcvd) {
            (Some(a), Some(b)) => Some(if a.rank() >= b.rank() { a } else { b }),
            (a, b) => a.or(b),
        };
        let ends = (
            first.ends.0.or(second.ends.0),
            first.ends.1.or(second.ends.1),
        );
        let o = Observation {
            link,
            band: first.band,
            start: first.start,
            outcome,
            confirmed: true,
            best_report,
            freq_mhz: first.freq_mhz.or(second.freq_mhz),
            ends,
        };
        self.observe(o);
    }

    fn observe(&mut self, o: Observation) {
        self.observations += 1;
        let bin = self.config.bin_of(o.start);
        if self.bin_date[bin].is_none_or(|d| o.start < d) {
            self.bin_date[bin] = Some(o.start);
        }
        let geo = self.link_geo.entry(o.link).or_default();
        if o.ends.0.is_some() && o.ends.1.is_some() {
            *geo = o.ends;
        }
        if o.outcome == Outcome::Worked
            && let (Some(a), Some(b), Some(f)) = (o.ends.0, o.ends.1, o.freq_mhz)
            && !a.is_too_coarse_for_distance()
            && !b.is_too_coarse_for_distance()
        {
            let path = self.paths.centre(&a, &b);
            let d = path.distance_km;
            if d >= GROUND_WAVE_KM {
                let mid = *self
                    .midpoints
                    .entry(if a <= b { (a, b) } else { (b, a) })
                    .or_insert_with(|| {
                        let (ca, cb) = (self.paths.point(&a), self.paths.point(&b));
                        super::geo::midpoint_along(ca, &path, cb)
                    });
                // The Sun at the midpoint, on a grid of 0.5° and 10 minutes: plenty for the
                // reflection height, and computed once per grid cell.
                let key = (
                    (mid.lat * 2.0).round() as i32,
                    (mid.lon * 2.0).round() as i32,
                    o.start.timestamp().div_euclid(600),
                );
                let slots = &mut self.sun_slots;
                let elev = *self.sun_grid.entry(key).or_insert_with(|| {
                    let at = LatLon {
                        lat: f64::from(key.0) / 2.0,
                        lon: f64::from(key.1) / 2.0,
                    };
                    // What depends on the time alone, once per 10 minutes.
                    let sun = slots.entry(key.2).or_insert_with(|| {
                        let t = DateTime::from_timestamp(key.2 * 600 + 300, 0).unwrap_or(o.start);
                        sun::SunAt::new(t)
                    });
                    sun.elevation_deg(at)
                });
                let h = default_height_km(elev);
                let floor = Hop::new(d, h).critical_frequency_floor_mhz(f);
                self.fc[bin].add(floor, o.confirmed, h);
            }
        }
        self.cells.entry((o.link, o.band, bin)).or_default().add(&o);
    }

    /// Finishes: every pending record becomes an observation, and the views are built.
    pub fn finish(mut self, notes: &[OperatorNote]) -> Coverage {
        self.expire(DateTime::<Utc>::MAX_UTC);
        let cfg = self.config.clone();
        let bins = cfg.bins();
        let mut bands: Vec<Band> = self.cells.keys().map(|k| k.1).collect();
        bands.sort();
        bands.dedup();
        // Links: the cells in link, band and bin order; a link's row is made at its first cell.
        let mut cells: Vec<_> = std::mem::take(&mut self.cells).into_iter().collect();
        cells.sort_unstable_by_key(|(k, _)| (k.0, k.1, k.2));
        let mut links: Vec<LinkRow> = Vec::new();
        // Distance of each cell's link, for the band × hour pass below.
        let mut cell_distance: Vec<Option<f64>> = Vec::with_capacity(cells.len());
        let mut last_link = None;
        for &((link, band, bin), ref cell) in &cells {
            if last_link != Some(link) {
                last_link = Some(link);
                let (la, lb) = self.link_geo.get(&link).copied().unwrap_or_default();
                let la = la.or(self.stations.locators[link.0 as usize]);
                let lb = lb.or(self.stations.locators[link.1 as usize]);
                let (d, brg) = match (la, lb) {
                    (Some(a), Some(b)) => {
                        let p = self.paths.centre(&a, &b);
                        (Some(p.distance_km), p.bearing_deg)
                    }
                    _ => (None, None),
                };
                links.push(LinkRow {
                    a: self.stations.calls[link.0 as usize].clone(),
                    b: self.stations.calls[link.1 as usize].clone(),
                    ia: link.0,
                    ib: link.1,
                    distance_km: d,
                    bearing_deg: brg,
                    cells: BTreeMap::new(),
                });
            }
            let Some(row) = links.last_mut() else {
                continue;
            };
            cell_distance.push(row.distance_km);
            let row = row.cells.entry(band).or_insert_with(|| vec![None; bins]);
            row[bin] = Some(cell.clone());
        }
        // Band × hour and rings, in one pass over the cells.
        let labels = cfg.ring_labels();
        struct Acc {
            h: BandHour,
            dists: Vec<(f64, u64)>,
            rings: Vec<(u32, u32)>,
        }
        let mut acc: BTreeMap<(Band, usize), Acc> = BTreeMap::new();
        for ((key, cell), distance) in cells.iter().zip(&cell_distance) {
            let (band, bin) = (key.1, key.2);
            let a = acc.entry((band, bin)).or_insert_with(|| Acc {
                h: BandHour {
                    band,
                    bin,
                    hour_start: cfg.hour_start(bin),
                    attempts: 0,
                    worked: 0,
                    partial: 0,
                    none: 0,
                    wilson_low: 0.0,
                    wilson_high: 0.0,
                    median_km: None,
                    max_km: None,
                },
                dists: Vec::new(),
                rings: vec![(0, 0); labels.len()],
            });
            a.h.attempts += cell.attempts;
            a.h.worked += cell.worked;
            a.h.partial += cell.partial;
            a.h.none += cell.none;
            if let Some(d) = distance {
                if cell.worked > 0 {
                    a.dists.push((*d, u64::from(cell.worked)));
                }
                let r = cfg.ring_of(*d);
                a.rings[r].0 += cell.attempts;
                a.rings[r].1 += cell.worked;
            }
        }
        let mut hours = Vec::with_capacity(acc.len());
        let mut rings = Vec::new();
        for ((band, bin), a) in acc {
            let mut h = a.h;
            let (lo, hi) =
                wilson(u64::from(h.worked), u64::from(h.attempts), Z95).unwrap_or((0.0, 1.0));
            h.wilson_low = lo;
            h.wilson_high = hi;
            h.max_km = a.dists.iter().map(|d| d.0).reduce(f64::max);
            h.median_km = weighted_median(a.dists);
            hours.push(h);
            for (r, (attempts, worked)) in a.rings.into_iter().enumerate() {
                if attempts > 0 {
                    rings.push(RingHour {
                        band,
                        ring: labels[r].clone(),
                        bin,
                        hour_start: cfg.hour_start(bin),
                        attempts,
                        worked,
                    });
                }
            }
        }
        // By distance, then by the calls: the order is sorted by index and applied once, so
        // that the (large) rows move once rather than at every step of the sort.
        let mut order: Vec<usize> = (0..links.len()).collect();
        order.sort_unstable_by(|&i, &j| {
            let (x, y) = (&links[i], &links[j]);
            match (x.distance_km, y.distance_km) {
                (Some(a), Some(b)) => a
                    .total_cmp(&b)
                    .then_with(|| (&x.a, &x.b).cmp(&(&y.a, &y.b))),
                (Some(_), None) => std::cmp::Ordering::Less,
                (None, Some(_)) => std::cmp::Ordering::Greater,
                (None, None) => (&x.a, &x.b).cmp(&(&y.a, &y.b)),
            }
        });
        let mut slots: Vec<Option<LinkRow>> = links.into_iter().map(Some).collect();
        let links: Vec<LinkRow> = order.iter().filter_map(|&i| slots[i].take()).collect();
        // Net centre.
        let known: Vec<LatLon> = self
            .stations
            .locators
            .iter()
            .flatten()
            .map(Locator::centre)
            .collect();
        let centre = (!known.is_empty()).then(|| LatLon {
            lat: known.iter().map(|p| p.lat).sum::<f64>() / known.len() as f64,
            lon: known.iter().map(|p| p.lon).sum::<f64>() / known.len() as f64,
        });
        let first_date = self.first.map(|t| t.date_naive());
        let mut coverage = Coverage {
            config: cfg.clone(),
            bands,
            links,
            hours,
            rings,
            evidence: Vec::new(),
            contradictions: std::mem::take(&mut self.contradictions),
            contradictions_total: self.contradictions_total,
            observations: self.observations,
            confirmed: self.confirmed,
            one_sided: self.one_sided,
            centre,
            stations: self
                .stations
                .calls
                .iter()
                .cloned()
                .zip(self.stations.locators.iter().copied())
                .collect(),
            first_date,
        };
        coverage.evidence = (0..bins)
            .filter(|b| self.bin_date[*b].is_some() || notes.iter().any(|n| cfg.bin_of(n.at) == *b))
            .map(|bin| self.evidence(&coverage, bin, notes))
            .collect();
        coverage
    }

    fn evidence(&self, c: &Coverage, bin: usize, notes: &[OperatorNote]) -> Evidence {
        let cfg = &c.config;
        let mid_minutes = i64::try_from(bin).unwrap_or(0) * i64::from(cfg.bin_minutes)
            + i64::from(cfg.bin_minutes) / 2;
        let date = self.bin_date[bin].map(|d| d.date_naive()).or(c.first_date);
        let instant = date
            .and_then(|d| d.and_hms_opt(0, 0, 0))
            .map(|d| d.and_utc() + Duration::minutes(mid_minutes));
        let sun_elev = match (c.centre, instant) {
            (Some(p), Some(t)) => Some(sun::position(p, t).elevation_deg),
            _ => None,
        };
        let daylight = sun_elev.map(Daylight::of);
        let fc = self.fc[bin].estimate();
        let foe = match (cfg.sunspot_r12, sun_elev) {
            (Some(r12), Some(e)) => chapman_foe_mhz(90.0 - e, r12),
            _ => None,
        };
        let note = describe(c, bin, daylight, fc.as_ref().map(|f| f.0));
        Evidence {
            bin,
            hour_start: cfg.hour_start(bin),
            sun_elevation_deg: sun_elev,
            daylight,
            fc_floor_mhz: fc.as_ref().map(|f| f.0),
            fc_basis: fc.map(|f| f.1),
            foe_expected_mhz: foe,
            note,
            operator_notes: notes
                .iter()
                .filter(|n| cfg.bin_of(n.at) == bin)
                .map(|n| (n.at, n.band, n.station.clone(), n.text.clone()))
                .collect(),
        }
    }
}

fn band_words(b: Band) -> String {
    b.name().replace('m', " m")
}

/// The figures of one bin in plain words.
fn describe(c: &Coverage, bin: usize, daylight: Option<Daylight>, fc: Option<f64>) -> String {
    let cfg = &c.config;
    let end = cfg.hour_start((bin + 1) % cfg.bins());
    let rows: Vec<&BandHour> = c.hours.iter().filter(|h| h.bin == bin).collect();
    if rows.is_empty() {
        return format!("{}–{end} UTC: no attempts", cfg.hour_start(bin));
    }
    let counts: Vec<String> = rows
        .iter()
        .map(|h| {
            format!(
                "{} {} of {} worked",
                band_words(h.band),
                h.worked,
                h.attempts
            )
        })
        .collect();
    let mut s = format!("{}–{end} UTC: {}", cfg.hour_start(bin), counts.join(", "));
    let rate = |b: Band| {
        rows.iter()
            .find(|h| h.band == b)
            .filter(|h| h.attempts >= 3)
            .map(|h| f64::from(h.worked) / f64::from(h.attempts))
    };
    let mut remarks = Vec::new();
    if daylight == Some(Daylight::Day)
        && let Some(r80) = rate(Band::B80m)
        && r80 < 0.4
        && (rate(Band::B40m).is_some_and(|r| r > r80 + 0.3)
            || rate(Band::B60m).is_some_and(|r| r > r80 + 0.3))
    {
        remarks.push("daytime absorption likely on 80 m".to_string());
    }
    // A skip zone: near links failing while far ones work, on one band.
    let nearest = cfg.ring_labels().into_iter().next();
    for h in &rows {
        let near: Vec<&RingHour> = c
            .rings
            .iter()
            .filter(|r| r.band == h.band && r.bin == bin && nearest.as_ref() == Some(&r.ring))
            .collect();
        let far_worked = c.rings.iter().any(|r| {
            r.band == h.band && r.bin == bin && nearest.as_ref() != Some(&r.ring) && r.worked > 0
        });
        let near_failed =
            near.iter().map(|r| r.attempts).sum::<u32>() >= 2 && near.iter().all(|r| r.worked == 0);
        if near_failed && far_worked {
            remarks.push(format!(
                "{} skips over near stations (skip zone)",
                band_words(h.band)
            ));
        }
        if daylight == Some(Daylight::Night)
            && h.band == Band::B40m
            && h.attempts >= 3
            && h.worked == 0
        {
            remarks.push("40 m above the critical frequency at night".to_string());
        }
    }
    if let Some(f) = fc {
        remarks.push(format!(
            "worked sky-wave paths imply a critical frequency of at least {f:.1} MHz"
        ));
    }
    if !remarks.is_empty() {
        s.push_str(" — ");
        s.push_str(&remarks.join("; "));
    }
    s
}

/// Coverage of contacts in any order (sorted here by start time).
pub fn coverage(
    contacts: &[Contact],
    notes: &[OperatorNote],
    config: CoverageConfig,
) -> Result<Coverage, ConfigError> {
    let mut order: Vec<&Contact> = contacts.iter().collect();
    order.sort_by_key(|c| c.start);
    let mut b = CoverageBuilder::new(config)?;
    for c in order {
        b.add(c);
    }
    Ok(b.finish(notes))
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use uuid::Uuid;

    /// One generated record: logging station, other station, minutes after the start (may go
    /// backwards), band, outcome, whether a report was received.
    type Rec = (usize, usize, i64, usize, usize, bool);

    fn build(recs: &[Rec], linear: bool) -> Coverage {
        const CALLS: [&str; 4] = ["Q1AA", "Q2BB", "Q3CC", "Q4DD"];
        const GRIDS: [&str; 4] = ["JN58td", "JN48qm", "JO50ab", "JN68ax"];
        let bands = [Band::B80m, Band::B40m];
        let outcomes = [Outcome::Worked, Outcome::Partial, Outcome::NoContact];
        let t0 = DateTime::<Utc>::from_timestamp(1_759_536_000, 0).unwrap_or_default();
        let mut b = CoverageBuilder::new(CoverageConfig::default())
            .unwrap_or_else(|e| panic!("default config refused: {e}"));
        b.linear = linear;
        let mut at = t0;
        for (i, &(from, to, step, band, outcome, report)) in recs.iter().enumerate() {
            at += Duration::seconds(step * 20);
            b.add_sighting(&Sighting {
                id: ContactId(Uuid::from_u64_pair(7, i as u64)),
                from: CALLS[from],
                from_locator: Locator::parse(GRIDS[from]).ok(),
                to: CALLS[to],
                to_locator: Locator::parse(GRIDS[to]).ok(),
                start: at,
                band: bands[band],
                freq_hz: Some(if band == 0 { 3_600_000 } else { 7_100_000 }),
                outcome: outcomes[outcome],
                rcvd: report.then(|| Report::parse("57").ok()).flatten(),
            });
        }
        b.finish(&[])
    }

    proptest! {
        /// The windowed search over in-order pending records (where most records are) finds
        /// exactly what a search over every pending record finds, with records out of order
        /// mixed in.
        #[test]
        fn windowed_matching_equals_full_search(
            recs in proptest::collection::vec(
                (0..4usize, 0..4usize, -40..60i64, 0..2usize, 0..3usize, any::<bool>()),
                0..300,
            )
        ) {
            let fast = build(&recs, false);
            let full = build(&recs, true);
            prop_assert_eq!(fast, full);
        }
    }
}
