//! The next drill's band plan, from a drill's coverage.
//!
//! For each bin: a primary and an alternate band, ranked by the lower end of the 95 % Wilson
//! interval of the worked proportion (evidence over luck: 9 of 10 ranks above 3 of 3). Ties
//! are broken by the higher worked proportion, then the larger number of attempts, then the
//! lower frequency. Bands with fewer than `min_attempts` attempts are not ranked. For the
//! links that fail even on the primary band, the relay candidates: stations that worked both
//! ends in that bin, ranked by the weaker of their two links.
//!
//! A plan for another date moves every bin with the Sun: a bin's time is expressed as a
//! fraction of the day (sunrise to sunset) or of the night (sunset to sunrise) at the net's
//! centre, and placed at the same fraction on the new date.

use std::collections::BTreeMap;

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

use super::coverage::Coverage;
use super::stats::{Z95, wilson};
use super::sun;
use super::{Band, LatLon};

/// How a plan is made.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanConfig {
    /// Fewer attempts than this on a band in a bin: "not enough evidence" for that band.
    pub min_attempts: u32,
    /// Plan for this date (bins shifted with the Sun); `None`: the drill's own hours.
    pub for_date: Option<NaiveDate>,
}

impl Default for PlanConfig {
    fn default() -> Self {
        Self {
            min_attempts: 4,
            for_date: None,
        }
    }
}

/// The plan for one bin.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlanBin {
    pub hour_start: String,
    pub minutes: u16,
    pub primary: Option<Band>,
    pub alternate: Option<Band>,
    /// Attempts in the evidence bin, all bands.
    pub attempts: u32,
    pub note: String,
}

/// A relay candidate for a link that is expected to fail.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RelayCandidate {
    pub call: String,
    /// The weaker of its two links: lower Wilson limit of the worked proportion.
    pub strength: f64,
}

/// A link expected to fail in a bin even on the primary band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RelayNeed {
    pub hour_start: String,
    pub a: String,
    pub b: String,
    pub band: Band,
    pub candidates: Vec<RelayCandidate>,
}

impl RelayNeed {
    /// The strongest `most` candidates as `Q1AAA (0.42), Q2BBB (0.31)`; empty when none.
    pub fn candidates_text(&self, most: usize) -> String {
        let parts: Vec<String> = self
            .candidates
            .iter()
            .take(most)
            .map(|c| format!("{} ({:.2})", c.call, c.strength))
            .collect();
        parts.join(", ")
    }

    /// One line for a table: `07:00 Q2FIR-Q9RLY on 80m: Q3NET (0.42), …`, with the strongest
    /// `most` candidates.
    pub fn line(&self, most: usize) -> String {
        let cands = self.candidates_text(most);
        format!(
            "{} {}-{} on {}: {}",
            self.hour_start,
            self.a,
            self.b,
            self.band,
            if cands.is_empty() {
                "no relay candidate"
            } else {
                &cands
            }
        )
    }
}

/// The plan for the next drill.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Plan {
    /// The date the plan is for (`None`: the same hours as the drill).
    pub for_date: Option<NaiveDate>,
    /// The date of the drill the evidence comes from.
    pub evidence_date: Option<NaiveDate>,
    pub min_attempts: u32,
    pub bins: Vec<PlanBin>,
    pub relays: Vec<RelayNeed>,
    /// How bands were ranked, in words.
    pub ranking: String,
}

/// A row of the plan as a table shows it: one bin, or a run of bins where nothing was tried.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanRow<'a> {
    /// The (first) bin.
    pub bin: &'a PlanBin,
    /// Bins the row stands for.
    pub bins: usize,
    pub note: String,
}

impl Plan {
    /// The bins as rows of a table: hours in a row where nothing was tried take one row
    /// ("nothing was tried 09:00–24:00"), so a short drill's plan is not a page of the same
    /// words.
    pub fn rows(&self) -> Vec<PlanRow<'_>> {
        let empty = |b: &PlanBin| b.attempts == 0 && b.primary.is_none();
        let mut rows = Vec::new();
        let mut i = 0;
        while i < self.bins.len() {
            let bin = &self.bins[i];
            // Bins this row stands for: the empty ones in a row, else this one.
            let n = self.bins[i..]
                .iter()
                .take_while(|b| empty(b))
                .count()
                .max(1);
            let last = &self.bins[i + n - 1];
            let note = if n > 1 {
                format!(
                    "no evidence: nothing was tried {}–{}",
                    bin.hour_start,
                    minutes_after(&last.hour_start, last.minutes)
                )
            } else {
                bin.note.clone()
            };
            rows.push(PlanRow { bin, bins: n, note });
            i += n;
        }
        rows
    }
}

/// `HH:MM` plus some minutes, as `HH:MM` (`24:00` at the end of the day).
fn minutes_after(hhmm: &str, minutes: u16) -> String {
    let parsed = hhmm
        .split_once(':')
        .and_then(|(h, m)| Some(h.parse::<u32>().ok()? * 60 + m.parse::<u32>().ok()?));
    match parsed {
        Some(start) => {
            let end = (start + u32::from(minutes)).min(1440);
            format!("{:02}:{:02}", end / 60, end % 60)
        }
        None => hhmm.to_string(),
    }
}

/// Relay candidates kept per failing link (the strongest).
pub const MAX_RELAY_CANDIDATES: usize = 5;

/// The ranking rule, as stated in the plan.
pub const RANKING: &str = "bands ranked by the lower limit of the 95% Wilson interval of the worked proportion; ties: higher worked proportion, then more attempts, then the lower frequency";

#[derive(Debug, Clone, Copy)]
struct Ranked {
    band: Band,
    low: f64,
    p: f64,
    attempts: u32,
}

fn rank_bands(c: &Coverage, bin: usize, min_attempts: u32) -> Vec<Ranked> {
    let mut r: Vec<Ranked> = c
        .hours
        .iter()
        // A band that never worked in the bin is no choice, however often it was tried.
        .filter(|h| h.bin == bin && h.attempts >= min_attempts && h.worked > 0)
        .map(|h| Ranked {
            band: h.band,
            low: h.wilson_low,
            p: f64::from(h.worked) / f64::from(h.attempts),
            attempts: h.attempts,
        })
        .collect();
    r.sort_by(|x, y| {
        y.low
            .total_cmp(&x.low)
            .then(y.p.total_cmp(&x.p))
            .then(y.attempts.cmp(&x.attempts))
            .then(x.band.cmp(&y.band))
    });
    r
}

/// Up to this many stations, [`Worked`] also keeps a dense strength matrix and per-station
/// bit sets (at most 8 MiB and 128 KiB), which make the relay search fast; above it, only the
/// sorted lists, so that memory never grows with the square of a huge log's stations.
const DENSE_STATIONS: usize = 1024;

/// The links that worked in one bin: each station's list of the stations it worked, with the
/// link's strength (its best band's lower Wilson limit), sorted by station; for a net of up
/// to [`DENSE_STATIONS`] also the same as a matrix and as bit sets.
struct Worked {
    adjacent: Vec<Vec<(usize, f64)>>,
    /// The stations with a list, to clear them for the next bin.
    touched: Vec<usize>,
    dense: Option<Dense>,
}

struct Dense {
    strength: Vec<f64>,
    words: usize,
    bits: Vec<u64>,
}

impl Worked {
    fn new(n: usize) -> Self {
        Self::with_dense(n, n <= DENSE_STATIONS)
    }

    fn with_dense(n: usize, dense: bool) -> Self {
        let words = n.div_ceil(64);
        Self {
            adjacent: vec![Vec::new(); n],
            touched: Vec::new(),
            dense: dense.then(|| Dense {
                strength: vec![-1.0; n * n],
                words,
                bits: vec![0; n * words],
            }),
        }
    }

    fn stations(&self) -> usize {
        self.adjacent.len()
    }

    /// Fills in the links of one bin (after clearing what the previous bin left).
    fn fill(&mut self, c: &Coverage, bin: usize, active: &[usize]) {
        let n = self.stations();
        for x in std::mem::take(&mut self.touched) {
            if let Some(d) = &mut self.dense {
                for &(y, _) in &self.adjacent[x] {
                    d.strength[x * n + y] = -1.0;
                }
                d.bits[x * d.words..(x + 1) * d.words].fill(0);
            }
            self.adjacent[x].clear();
        }
        for l in active.iter().map(|i| &c.links[*i]) {
            let best = l
                .cells
                .values()
                .filter_map(|row| row.get(bin).and_then(Option::as_ref))
                .filter(|cell| cell.worked > 0)
                .filter_map(|cell| {
                    wilson(u64::from(cell.worked), u64::from(cell.attempts), Z95).map(|w| w.0)
                })
                .reduce(f64::max);
            let (a, b) = (l.ia as usize, l.ib as usize);
            if let Some(s) = best
                && a < n
                && b < n
            {
                for (x, y) in [(a, b), (b, a)] {
                    if self.adjacent[x].is_empty() {
                        self.touched.push(x);
                    }
                    self.adjacent[x].push((y, s));
                    if let Some(d) = &mut self.dense {
                        d.strength[x * n + y] = s;
                        d.bits[x * d.words + y / 64] |= 1 << (y % 64);
                    }
                }
            }
        }
        for x in &self.touched {
            self.adjacent[*x].sort_unstable_by_key(|e| e.0);
        }
    }

    /// Stations that worked both `a` and `b`, with the weaker of the two links, in station
    /// order.
    fn common(&self, a: usize, b: usize, out: &mut Vec<(usize, f64)>) {
        out.clear();
        if let Some(d) = &self.dense {
            let n = self.stations();
            let (ra, rb) = (a * d.words, b * d.words);
            for w in 0..d.words {
                let mut both = d.bits[ra + w] & d.bits[rb + w];
                while both != 0 {
                    let k = w * 64 + both.trailing_zeros() as usize;
                    both &= both - 1;
                    if k != a && k != b {
                        out.push((k, d.strength[a * n + k].min(d.strength[b * n + k])));
                    }
                }
            }
            return;
        }
        // One merge of the two sorted lists.
        let (xs, ys) = (&self.adjacent[a], &self.adjacent[b]);
        let (mut i, mut j) = (0, 0);
        while i < xs.len() && j < ys.len() {
            let ((k, sa), (m, sb)) = (xs[i], ys[j]);
            match k.cmp(&m) {
                std::cmp::Ordering::Less => i += 1,
                std::cmp::Ordering::Greater => j += 1,
                std::cmp::Ordering::Equal => {
                    if k != a && k != b {
                        out.push((k, sa.min(sb)));
                    }
                    i += 1;
                    j += 1;
                }
            }
        }
    }
}

fn plan_for_bin(
    c: &Coverage,
    bin: usize,
    cfg: &PlanConfig,
    active: &[usize],
    worked: &mut Worked,
) -> (PlanBin, Vec<RelayNeed>) {
    let attempts: u32 = c
        .hours
        .iter()
        .filter(|h| h.bin == bin)
        .map(|h| h.attempts)
        .sum();
    let ranked = rank_bands(c, bin, cfg.min_attempts);
    let hour_start = c.config.hour_start(bin);
    let describe = |r: &Ranked| {
        let h = c.hour(r.band, bin);
        let (w, n) = h.map_or((0, 0), |h| (h.worked, h.attempts));
        format!("{} {w} of {n} worked (Wilson low {:.2})", r.band, r.low)
    };
    let note = match ranked.as_slice() {
        [] if attempts == 0 => "no evidence: nothing was tried in this hour".to_string(),
        [] if c
            .hours
            .iter()
            .filter(|h| h.bin == bin)
            .all(|h| h.worked == 0) =>
        {
            format!("no band worked: {attempts} attempts, all failed")
        }
        [] => format!(
            "not enough evidence: {attempts} attempts, no band with at least {}",
            cfg.min_attempts
        ),
        [p] => describe(p),
        [p, a, ..] => format!("{}; alternate {}", describe(p), describe(a)),
    };
    let primary = ranked.first().map(|r| r.band);
    let alternate = ranked.get(1).map(|r| r.band);
    let mut relays = Vec::new();
    if let Some(band) = primary {
        worked.fill(c, bin, active);
        let mut found = Vec::new();
        for l in active.iter().map(|i| &c.links[*i]) {
            let Some(Some(cell)) = l.cells.get(&band).and_then(|row| row.get(bin)) else {
                continue;
            };
            if cell.worked > 0 || cell.attempts == 0 {
                continue;
            }
            let (a, b) = (l.ia as usize, l.ib as usize);
            if a >= worked.stations() || b >= worked.stations() {
                continue;
            }
            worked.common(a, b, &mut found);
            // Strongest first; equal strengths by call. Only the kept few are fully sorted.
            let order = |x: &(usize, f64), y: &(usize, f64)| {
                y.1.total_cmp(&x.1)
                    .then_with(|| c.stations[x.0].0.cmp(&c.stations[y.0].0))
            };
            if found.len() > MAX_RELAY_CANDIDATES {
                found.select_nth_unstable_by(MAX_RELAY_CANDIDATES - 1, order);
                found.truncate(MAX_RELAY_CANDIDATES);
            }
            found.sort_by(order);
            let candidates = found
                .iter()
                .map(|&(k, st)| RelayCandidate {
                    call: c.stations[k].0.clone(),
                    strength: st,
                })
                .collect();
            relays.push(RelayNeed {
                hour_start: hour_start.clone(),
                a: l.a.clone(),
                b: l.b.clone(),
                band,
                candidates,
            });
        }
    }
    let minutes = c.config.bin_minutes;
    (
        PlanBin {
            hour_start,
            minutes,
            primary,
            alternate,
            attempts,
            note,
        },
        relays,
    )
}

/// Fraction of the day (0..1, sunrise to sunset) or night (1..2, sunset to sunrise) of a
/// minute of the UTC day, for a place and date. `None` in polar day or night.
fn sun_phase(at: LatLon, date: NaiveDate, minute: f64) -> Option<(f64, f64, f64)> {
    let d = sun::day(at, date);
    let midnight = date.and_hms_opt(0, 0, 0)?.and_utc();
    let rise = (d.sunrise.time()? - midnight).num_seconds() as f64 / 60.0;
    let set = (d.sunset.time()? - midnight).num_seconds() as f64 / 60.0;
    let rise = rise.rem_euclid(1440.0);
    let day_len = (set - rise).rem_euclid(1440.0);
    let t = (minute - rise).rem_euclid(1440.0);
    let phase = if t < day_len {
        t / day_len
    } else {
        1.0 + (t - day_len) / (1440.0 - day_len)
    };
    Some((phase, rise, day_len))
}

fn minute_at_phase(phase: f64, rise: f64, day_len: f64) -> f64 {
    let t = if phase < 1.0 {
        phase * day_len
    } else {
        day_len + (phase - 1.0) * (1440.0 - day_len)
    };
    (rise + t).rem_euclid(1440.0)
}

/// Makes the plan from a drill's coverage.
pub fn make_plan(c: &Coverage, cfg: &PlanConfig) -> Plan {
    let bins = c.config.bins();
    // For each bin, the links tried in it: the per-bin work then follows the cells, not the
    // links times the bins.
    let mut active: Vec<Vec<usize>> = vec![Vec::new(); bins];
    // The last link listed in each bin, so that a link with cells on several bands is listed
    // once.
    let mut last = vec![usize::MAX; bins];
    for (i, l) in c.links.iter().enumerate() {
        for row in l.cells.values() {
            for (b, cell) in row.iter().enumerate().take(bins) {
                if cell.is_some() && last[b] != i {
                    last[b] = i;
                    active[b].push(i);
                }
            }
        }
    }
    let mut worked = Worked::new(c.stations.len());
    let per_bin: Vec<(PlanBin, Vec<RelayNeed>)> = (0..bins)
        .map(|b| plan_for_bin(c, b, cfg, &active[b], &mut worked))
        .collect();
    let shift = match (cfg.for_date, c.first_date, c.centre) {
        (Some(to), Some(from), Some(centre)) if to != from => Some((to, from, centre)),
        _ => None,
    };
    let bin_minutes = f64::from(c.config.bin_minutes);
    let sources: Vec<usize> = (0..bins)
        .map(|target| match shift {
            None => target,
            Some((to, from, centre)) => {
                // Map the target bin's start, middle and end to the drill's date; of the bins
                // that span covers, take the one with the most evidence (the middle's on ties).
                let map = |minute: f64| match (
                    sun_phase(centre, to, minute),
                    sun_phase(centre, from, 0.0),
                ) {
                    (Some((phase, _, _)), Some((_, rise, day_len))) => {
                        Some(minute_at_phase(phase, rise, day_len))
                    }
                    _ => None,
                };
                let start = target as f64 * bin_minutes;
                match (
                    map(start),
                    map(start + bin_minutes / 2.0),
                    map(start + bin_minutes - 0.01),
                ) {
                    (Some(s0), Some(mid), Some(s1)) => {
                        let bin_of = |m: f64| ((m / bin_minutes) as usize).min(bins - 1);
                        let (b0, bm, b1) = (bin_of(s0), bin_of(mid), bin_of(s1));
                        let span: Vec<usize> = if b0 <= b1 {
                            (b0..=b1).collect()
                        } else {
                            (b0..bins).chain(0..=b1).collect()
                        };
                        let weight = |b: usize| per_bin[b].0.attempts;
                        span.into_iter()
                            .max_by_key(|b| (weight(*b), *b == bm))
                            .unwrap_or(bm)
                    }
                    _ => target,
                }
            }
        })
        .collect();
    // Each source bin's result moves to its last target and is copied for the others.
    let mut uses = vec![0usize; bins];
    for s in &sources {
        uses[*s] += 1;
    }
    let mut per_bin: Vec<Option<(PlanBin, Vec<RelayNeed>)>> =
        per_bin.into_iter().map(Some).collect();
    let mut out_bins = Vec::with_capacity(bins);
    let mut relays = Vec::new();
    for (target, &source) in sources.iter().enumerate() {
        uses[source] -= 1;
        let taken = if uses[source] == 0 {
            per_bin[source].take()
        } else {
            per_bin[source].clone()
        };
        let Some((mut pb, needs)) = taken else {
            continue;
        };
        let target_start = c.config.hour_start(target);
        if source != target {
            pb.note = format!(
                "{} (evidence from {} UTC on the drill's date, moved with the Sun)",
                pb.note, pb.hour_start
            );
        }
        pb.hour_start = target_start.clone();
        for mut n in needs {
            n.hour_start = target_start.clone();
            relays.push(n);
        }
        out_bins.push(pb);
    }
    Plan {
        for_date: cfg.for_date,
        evidence_date: c.first_date,
        min_attempts: cfg.min_attempts,
        bins: out_bins,
        relays,
        ranking: RANKING.to_string(),
    }
}

/// The plan's bins merged into schedule slots: runs of bins with the same primary and
/// alternate become one slot.
pub fn schedule(plan: &Plan) -> Vec<ScheduleSlot> {
    let mut out: Vec<ScheduleSlot> = Vec::new();
    for b in &plan.bins {
        let Some((h, m)) = b.hour_start.split_once(':') else {
            continue;
        };
        let (Ok(h), Ok(m)) = (h.parse::<u16>(), m.parse::<u16>()) else {
            continue;
        };
        let start = h * 60 + m;
        match out.last_mut() {
            Some(last)
                if last.primary == b.primary
                    && last.alternate == b.alternate
                    && last.start_minute + last.minutes == start =>
            {
                last.minutes += b.minutes;
            }
            _ => out.push(ScheduleSlot {
                start_minute: start,
                minutes: b.minutes,
                primary: b.primary,
                alternate: b.alternate,
                note: b.note.clone(),
            }),
        }
    }
    out
}

/// One slot of a drill's band schedule: from `start_minute` (UTC, minutes after midnight) for
/// `minutes`, the band to use first and the one to fall back to.
#[derive(Debug, Clone, PartialEq)]
pub struct ScheduleSlot {
    pub start_minute: u16,
    pub minutes: u16,
    pub primary: Option<Band>,
    pub alternate: Option<Band>,
    pub note: String,
}

impl ScheduleSlot {
    /// Whether the slot covers a minute of the UTC day (slots may run past midnight).
    pub fn covers(&self, minute_of_day: u16) -> bool {
        let end = u32::from(self.start_minute) + u32::from(self.minutes);
        let m = u32::from(minute_of_day);
        (u32::from(self.start_minute)..end).contains(&m) || (end > 1440 && m < end - 1440)
    }
}

/// Counts of the plan's primary bands, for summaries.
pub fn primary_counts(plan: &Plan) -> BTreeMap<Band, usize> {
    let mut m = BTreeMap::new();
    for b in plan.bins.iter().filter_map(|b| b.primary) {
        *m.entry(b).or_insert(0) += 1;
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::coverage::{CoverageConfig, coverage};
    use crate::domain::{
        Callsign, Contact, ContactId, ContactParts, Frequency, Locator, Mode, Origin, Outcome,
        StationSnapshot,
    };
    use chrono::{TimeZone, Utc};

    #[test]
    fn table_rows_join_hours_where_nothing_was_tried() {
        // Half-hour bins: 00:00 and 00:30 empty, 01:00 tried, 01:30 empty, 02:00 and 02:30
        // empty (the end of the day in this small plan).
        let bin = |start: &str, attempts: u32| PlanBin {
            hour_start: start.into(),
            minutes: 30,
            primary: (attempts > 0).then_some(Band::B80m),
            alternate: None,
            attempts,
            note: if attempts > 0 {
                "tried".into()
            } else {
                "empty".into()
            },
        };
        let plan = Plan {
            for_date: None,
            evidence_date: None,
            min_attempts: 1,
            bins: vec![
                bin("00:00", 0),
                bin("00:30", 0),
                bin("01:00", 5),
                bin("01:30", 0),
                bin("02:00", 3),
                bin("23:00", 0),
                bin("23:30", 0),
            ],
            relays: vec![],
            ranking: String::new(),
        };
        let rows: Vec<(String, usize, String)> = plan
            .rows()
            .into_iter()
            .map(|r| (r.bin.hour_start.clone(), r.bins, r.note))
            .collect();
        assert_eq!(
            rows,
            vec![
                (
                    "00:00".into(),
                    2,
                    "no evidence: nothing was tried 00:00–01:00".into()
                ),
                ("01:00".into(), 1, "tried".into()),
                ("01:30".into(), 1, "empty".into()),
                ("02:00".into(), 1, "tried".into()),
                (
                    "23:00".into(),
                    2,
                    "no evidence: nothing was tried 23:00–24:00".into()
                ),
            ]
        );
    }

    /// A pseudo-random drill among 40 stations (a fixed linear congruential sequence).
    fn drill() -> Coverage {
        let mut x: u64 = 20251004;
        let mut next = |m: u64| {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (x >> 33) % m
        };
        let calls: Vec<Callsign> = (0..40)
            .map(|i| Callsign::parse(&format!("Q{}T{:02}", i % 10, i)).unwrap())
            .collect();
        let grid = Locator::parse("JN17ga").unwrap();
        let t0 = Utc.with_ymd_and_hms(2025, 10, 4, 0, 0, 0).unwrap();
        let contacts: Vec<Contact> = (0..3000u64)
            .map(|i| {
                let a = next(40) as usize;
                let b = (a + 1 + next(39) as usize) % 40;
                let f = Frequency::from_hz([3_600_000, 7_100_000][next(2) as usize]).unwrap();
                Contact::new(ContactParts {
                    id: ContactId(uuid::Uuid::from_u128(u128::from(i) + 1)),
                    drill: None,
                    own: StationSnapshot {
                        call: calls[a].clone(),
                        operator: None,
                        locator: Some(grid),
                        power: None,
                        antenna: None,
                    },
                    call: calls[b].clone(),
                    locator: Some(grid),
                    start: t0 + chrono::Duration::seconds(i as i64 * 28),
                    end: None,
                    band: Band::containing(f).unwrap(),
                    frequency: Some(f),
                    mode: Mode::parse("LSB").unwrap(),
                    sent: None,
                    rcvd: None,
                    other_power: None,
                    outcome: [Outcome::Worked, Outcome::NoContact][next(2) as usize],
                    via: None,
                    note: String::new(),
                    origin: Origin::LoggedHere,
                })
                .unwrap()
            })
            .collect();
        coverage(&contacts, &[], CoverageConfig::default()).unwrap()
    }

    #[test]
    fn the_dense_and_the_sparse_relay_search_agree() {
        let c = drill();
        let n = c.stations.len();
        assert_eq!(n, 40);
        let all: Vec<usize> = (0..c.links.len()).collect();
        let (mut dense, mut sparse) = (Worked::with_dense(n, true), Worked::with_dense(n, false));
        let (mut x, mut y) = (Vec::new(), Vec::new());
        let mut found = 0;
        // Every bin in turn, so that clearing the previous bin is checked too.
        for bin in 0..c.config.bins() {
            dense.fill(&c, bin, &all);
            sparse.fill(&c, bin, &all);
            for a in 0..n {
                for b in 0..n {
                    dense.common(a, b, &mut x);
                    sparse.common(a, b, &mut y);
                    assert_eq!(x, y, "bin {bin}, stations {a} and {b}");
                    found += x.len();
                }
            }
        }
        assert!(found > 1000, "the drill has relays to find: {found}");
    }
}
