//! Coverage, cross-checking and the plan on small drills computed by hand.

use chrono::{DateTime, NaiveDate, TimeZone, Utc};
use nearsky::domain::coverage::{ContradictionKind, Coverage, CoverageConfig, coverage};
use nearsky::domain::plan::{PlanConfig, make_plan};
use nearsky::domain::stats::{Z95, wilson};
use nearsky::domain::*;
use uuid::Uuid;

const STATIONS: [(&str, &str); 5] = [
    ("Q1AAA", "JN17ga"), // A
    ("Q2BBB", "JN17wm"), // B: 115.2 km from A (geographiclib, fixtures/paths.csv)
    ("Q3CCC", "JN18io"), // C: 176.5 km from A
    ("Q4DDD", "JN17gb"), // D: 4.6 km from A
    ("Q5EEE", "JN26le"), // E: 207.0 km from A
];

fn loc(call: &str) -> Locator {
    Locator::parse(STATIONS.iter().find(|s| s.0 == call).unwrap().1).unwrap()
}

fn at(day: u32, h: u32, m: u32, s: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2025, 10, day, h, m, s).unwrap()
}

struct Log(Vec<Contact>);

impl Log {
    fn new() -> Self {
        Log(Vec::new())
    }

    #[allow(clippy::too_many_arguments)]
    fn add(
        &mut self,
        from: &str,
        to: &str,
        t: DateTime<Utc>,
        freq: &str,
        outcome: Outcome,
        rcvd: Option<&str>,
    ) -> &mut Self {
        self.add_at((from, loc(from)), (to, loc(to)), t, freq, outcome, rcvd)
    }

    /// Like `add`, for stations outside `STATIONS`, each given with its locator.
    fn add_at(
        &mut self,
        (from, from_loc): (&str, Locator),
        (to, to_loc): (&str, Locator),
        t: DateTime<Utc>,
        freq: &str,
        outcome: Outcome,
        rcvd: Option<&str>,
    ) -> &mut Self {
        let f = Frequency::parse(freq).unwrap();
        let c = Contact::new(ContactParts {
            id: ContactId(Uuid::from_u128(self.0.len() as u128 + 1)),
            drill: None,
            own: StationSnapshot {
                call: Callsign::parse(from).unwrap(),
                operator: None,
                locator: Some(from_loc),
                power: None,
                antenna: None,
            },
            call: Callsign::parse(to).unwrap(),
            locator: Some(to_loc),
            start: t,
            end: None,
            band: Band::containing(f).unwrap(),
            frequency: Some(f),
            mode: Mode::parse("LSB").unwrap(),
            sent: None,
            rcvd: rcvd.map(|r| Report::parse(r).unwrap()),
            other_power: None,
            outcome,
            via: None,
            note: String::new(),
            origin: Origin::LoggedHere,
        })
        .unwrap();
        self.0.push(c);
        self
    }

    fn coverage(&self) -> Coverage {
        coverage(&self.0, &[], CoverageConfig::default()).unwrap()
    }
}

use Outcome::{NoContact, Partial, Worked};

fn cell<'a>(
    c: &'a Coverage,
    a: &str,
    b: &str,
    band: Band,
    bin: usize,
) -> Option<&'a nearsky::domain::coverage::Cell> {
    let l = c
        .links
        .iter()
        .find(|l| (l.a == a && l.b == b) || (l.a == b && l.b == a))?;
    l.cells.get(&band)?.get(bin)?.as_ref()
}

#[test]
fn both_sides_of_one_contact_make_one_confirmed_observation() {
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, Some("57"))
        .add("Q2BBB", "Q1AAA", at(4, 10, 5, 0), "7.1", Worked, Some("59"));
    let c = log.coverage();
    assert_eq!((c.observations, c.confirmed, c.one_sided), (1, 1, 0));
    let cell = cell(&c, "Q1AAA", "Q2BBB", Band::B40m, 10).unwrap();
    assert_eq!((cell.attempts, cell.worked, cell.confirmed), (1, 1, true));
    assert_eq!(
        cell.best_report.map(|r| r.to_string()).as_deref(),
        Some("59")
    );
    assert!(c.contradictions.is_empty());
    let h = c.hour(Band::B40m, 10).unwrap();
    assert_eq!(
        (
            h.attempts,
            h.worked,
            h.median_km.map(|d| d.round()),
            h.max_km.map(|d| d.round())
        ),
        (1, 1, Some(115.0), Some(115.0))
    );
    // Wilson (1927) 1/1: 0.2065–1 (wilson.csv row k=1, n=1).
    assert!((h.wilson_low - 0.206549).abs() < 1e-6 && h.wilson_high == 1.0);
}

#[test]
fn times_just_inside_the_tolerance_match_and_just_outside_contradict() {
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, None)
        .add("Q2BBB", "Q1AAA", at(4, 10, 9, 59), "7.1", Worked, None);
    let c = log.coverage();
    assert_eq!((c.confirmed, c.one_sided), (1, 0));

    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, None)
        .add("Q2BBB", "Q1AAA", at(4, 10, 10, 1), "7.1", Worked, None);
    let c = log.coverage();
    assert_eq!((c.confirmed, c.one_sided, c.observations), (0, 2, 2));
    assert_eq!(c.contradictions.len(), 1);
    assert_eq!(c.contradictions[0].kind, ContradictionKind::Time);
    assert!(
        c.contradictions[0].message.contains("10 min apart"),
        "{}",
        c.contradictions[0].message
    );
    // Failed attempts far apart are separate attempts, not a contradiction.
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", NoContact, None)
        .add("Q2BBB", "Q1AAA", at(4, 10, 30, 0), "7.1", NoContact, None);
    assert!(log.coverage().contradictions.is_empty());
}

#[test]
fn band_and_outcome_disagreements_are_listed() {
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, None)
        .add("Q2BBB", "Q1AAA", at(4, 10, 2, 0), "3.6", Worked, None);
    let c = log.coverage();
    assert_eq!(c.contradictions.len(), 1);
    assert_eq!(c.contradictions[0].kind, ContradictionKind::Band);
    assert_eq!(c.contradictions[0].bands, [Band::B40m, Band::B80m]);
    assert_eq!((c.confirmed, c.one_sided), (0, 2));

    let mut log = Log::new();
    log.add(
        "Q1AAA",
        "Q2BBB",
        at(4, 10, 0, 0),
        "7.1",
        Partial,
        Some("57"),
    )
    .add("Q2BBB", "Q1AAA", at(4, 10, 3, 0), "7.1", NoContact, None);
    let c = log.coverage();
    assert_eq!(c.contradictions.len(), 1);
    assert_eq!(c.contradictions[0].kind, ContradictionKind::Outcome);
    assert!(
        c.contradictions[0]
            .message
            .contains("a report 57 received from Q2BBB"),
        "{}",
        c.contradictions[0].message
    );
    let cell = cell(&c, "Q1AAA", "Q2BBB", Band::B40m, 10).unwrap();
    assert_eq!((cell.attempts, cell.partial, cell.confirmed), (1, 1, true));
}

#[test]
fn a_contact_across_midnight_matches_and_counts_in_its_start_bin() {
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 23, 55, 0), "3.6", Worked, None)
        .add("Q2BBB", "Q1AAA", at(5, 0, 3, 0), "3.6", Worked, None);
    let c = log.coverage();
    assert_eq!(c.confirmed, 1);
    assert_eq!(
        cell(&c, "Q1AAA", "Q2BBB", Band::B80m, 23).unwrap().worked,
        1
    );
    assert!(cell(&c, "Q1AAA", "Q2BBB", Band::B80m, 0).is_none());
    // Two-hour bins: 23:55 is in the 22:00 bin.
    let c2 = coverage(
        &log.0,
        &[],
        CoverageConfig {
            bin_minutes: 120,
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(c2.hours[0].hour_start, "22:00");
}

#[test]
fn empty_logs_single_stations_and_bad_bins() {
    let c = Log::new().coverage();
    assert_eq!((c.observations, c.hours.len(), c.links.len()), (0, 0, 0));
    assert!(
        make_plan(&c, &PlanConfig::default())
            .bins
            .iter()
            .all(|b| b.primary.is_none())
    );
    let mut log = Log::new();
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, None)
        .add("Q1AAA", "Q3CCC", at(4, 10, 1, 0), "7.1", NoContact, None);
    let c = log.coverage();
    assert_eq!((c.confirmed, c.one_sided), (0, 2));
    assert_eq!(c.bands, vec![Band::B40m], "no empty bands");
    let e = coverage(
        &[],
        &[],
        CoverageConfig {
            bin_minutes: 50,
            ..Default::default()
        },
    )
    .unwrap_err();
    assert!(e.to_string().contains("50 minutes"));
}

/// A small net over two hours, with every cell, ring and plan entry computed by hand.
#[test]
fn a_hand_computed_drill() {
    let mut log = Log::new();
    // 10:00–11:00: 40 m works for A–B (115 km), A–C (176 km), A–E (207 km); A–D (5 km)
    // fails on 40 m but works on 80 m (ground wave). 80 m fails for B and C (absorption).
    log.add("Q1AAA", "Q2BBB", at(4, 10, 0, 0), "7.1", Worked, Some("59"))
        .add("Q1AAA", "Q3CCC", at(4, 10, 2, 0), "7.1", Worked, Some("57"))
        .add("Q1AAA", "Q5EEE", at(4, 10, 4, 0), "7.1", Worked, Some("55"))
        .add("Q1AAA", "Q4DDD", at(4, 10, 6, 0), "7.1", NoContact, None)
        .add(
            "Q1AAA",
            "Q4DDD",
            at(4, 10, 20, 0),
            "3.6",
            Worked,
            Some("59"),
        )
        .add("Q1AAA", "Q2BBB", at(4, 10, 22, 0), "3.6", NoContact, None)
        .add("Q1AAA", "Q3CCC", at(4, 10, 24, 0), "3.6", NoContact, None)
        .add("Q1AAA", "Q5EEE", at(4, 10, 26, 0), "3.6", NoContact, None)
        // C and E both worked D? No: D is only reachable from A; C worked B.
        .add(
            "Q3CCC",
            "Q2BBB",
            at(4, 10, 30, 0),
            "7.1",
            Worked,
            Some("57"),
        )
        .add(
            "Q2BBB",
            "Q3CCC",
            at(4, 10, 31, 0),
            "7.1",
            Worked,
            Some("55"),
        )
        .add("Q3CCC", "Q4DDD", at(4, 10, 40, 0), "7.1", NoContact, None)
        .add("Q2BBB", "Q4DDD", at(4, 10, 42, 0), "7.1", NoContact, None)
        .add("Q1AAA", "Q4DDD", at(4, 10, 44, 0), "7.1", NoContact, None);
    let c = log.coverage();
    assert_eq!((c.observations, c.confirmed), (12, 1));
    let h40 = c.hour(Band::B40m, 10).unwrap();
    assert_eq!((h40.attempts, h40.worked, h40.none), (8, 4, 4));
    let (lo, hi) = wilson(4, 8, Z95).unwrap();
    assert_eq!((h40.wilson_low, h40.wilson_high), (lo, hi));
    let h80 = c.hour(Band::B80m, 10).unwrap();
    assert_eq!((h80.attempts, h80.worked), (4, 1));
    // Worked 40 m distances: A–B 115.2, A–C 176.5, A–E 207.0, B–C (JN17wm–JN18io).
    assert!((h40.max_km.unwrap() - 207.0).abs() < 0.1);
    // Rings on 40 m: 0–50 km: A–D ×2, C–D, B–D tried, none worked — near links fail while
    // far ones work, so the note names a skip zone.
    let near = c
        .rings
        .iter()
        .find(|r| r.band == Band::B40m && r.ring == "0-50")
        .unwrap();
    assert_eq!((near.attempts, near.worked), (2, 0), "A–D twice (4.6 km)");
    let mid = c
        .rings
        .iter()
        .find(|r| r.band == Band::B40m && r.ring == "50-150")
        .unwrap();
    // B–C (JN17wm–JN18io) is about 148 km, C–D about 172 km (in the next ring).
    assert_eq!(
        (mid.attempts, mid.worked),
        (3, 2),
        "A–B and B–C worked; B–D failed"
    );
    let ev = c.evidence.iter().find(|e| e.bin == 10).unwrap();
    assert!(
        ev.note
            .starts_with("10:00–11:00 UTC: 80 m 1 of 4 worked, 40 m 4 of 8 worked"),
        "{}",
        ev.note
    );
    assert!(
        ev.note.contains("40 m skips over near stations"),
        "{}",
        ev.note
    );
    assert!(ev.fc_floor_mhz.is_some());
    // The plan: 40 m (4/8, Wilson low 0.215) over 80 m (1/4, 0.046).
    let plan = make_plan(&c, &PlanConfig::default());
    let b = &plan.bins[10];
    assert_eq!(
        (b.primary, b.alternate),
        (Some(Band::B40m), Some(Band::B80m))
    );
    // Links failing on 40 m in that bin: A–D, C–D, B–D. Relay for C–D: A worked C (40 m,
    // 1/1 → 0.2065) and D (80 m, 1/1 → 0.2065): strength 0.2065. B–D likewise via A.
    let cd = plan
        .relays
        .iter()
        .find(|r| (r.a == "Q3CCC" && r.b == "Q4DDD") || (r.a == "Q4DDD" && r.b == "Q3CCC"))
        .unwrap();
    assert_eq!(cd.candidates.len(), 1);
    assert_eq!(cd.candidates[0].call, "Q1AAA");
    assert!((cd.candidates[0].strength - 0.206549).abs() < 1e-5);
    let ad = plan
        .relays
        .iter()
        .find(|r| r.a == "Q1AAA" && r.b == "Q4DDD")
        .unwrap();
    assert!(ad.candidates.is_empty(), "nobody else reaches D");
    // Below the minimum number of attempts: not enough evidence.
    let strict = make_plan(
        &c,
        &PlanConfig {
            min_attempts: 10,
            ..Default::default()
        },
    );
    assert_eq!(strict.bins[10].primary, None);
    assert!(
        strict.bins[10].note.starts_with("not enough evidence"),
        "{}",
        strict.bins[10].note
    );
}

#[test]
fn when_every_attempt_fails_no_band_is_planned() {
    let mut log = Log::new();
    for i in 0..5 {
        log.add(
            "Q1AAA",
            "Q2BBB",
            at(4, 3, i * 10, 0),
            "7.1",
            NoContact,
            None,
        );
    }
    let c = log.coverage();
    let h = c.hour(Band::B40m, 3).unwrap();
    // Wilson 0/5: 0–0.4345.
    assert_eq!(h.wilson_low, 0.0);
    assert!((h.wilson_high - 0.434482).abs() < 1e-5);
    let plan = make_plan(&c, &PlanConfig::default());
    assert_eq!(plan.bins[3].primary, None);
    assert_eq!(plan.bins[3].note, "no band worked: 5 attempts, all failed");
}

#[test]
fn ties_break_on_proportion_then_attempts_then_the_lower_band() {
    let mut log = Log::new();
    for i in 0..4 {
        log.add("Q1AAA", "Q2BBB", at(4, 12, i * 5, 0), "7.1", Worked, None);
        log.add(
            "Q1AAA",
            "Q3CCC",
            at(4, 12, i * 5 + 1, 0),
            "5.3625",
            Worked,
            None,
        );
    }
    let plan = make_plan(&log.coverage(), &PlanConfig::default());
    assert_eq!(
        (plan.bins[12].primary, plan.bins[12].alternate),
        (Some(Band::B60m), Some(Band::B40m)),
        "equal evidence: the lower frequency first"
    );
}

#[test]
fn a_plan_for_another_date_moves_with_the_sun() {
    // Evidence: 40 m works from 12:00 to 13:00 UTC on 2025-10-04 at the net (about 47 N,
    // 2.6 E; sunrise 05:53, sunset 17:23 UTC, sunrise.csv / ephem). On 2025-12-21 (sunrise
    // 07:33, sunset 16:03) the same fraction of daylight falls later in the morning and the
    // whole day is shorter, so the bins keep their place relative to noon but not to the clock.
    let mut log = Log::new();
    for i in 0..5 {
        log.add("Q1AAA", "Q2BBB", at(4, 6, i * 10, 0), "3.6", Worked, None);
        log.add("Q1AAA", "Q2BBB", at(4, 17, i * 10, 0), "7.1", Worked, None);
    }
    let c = log.coverage();
    let same = make_plan(&c, &PlanConfig::default());
    assert_eq!(same.bins[6].primary, Some(Band::B80m));
    assert_eq!(same.bins[17].primary, Some(Band::B40m));
    let winter = make_plan(
        &c,
        &PlanConfig {
            for_date: NaiveDate::from_ymd_opt(2025, 12, 21),
            ..Default::default()
        },
    );
    // 06:00–07:00 in October is just after sunrise; in December that part of the day is at
    // about 08:00. 17:00–18:00 in October is the last hour of daylight; in December that is
    // about 15:00–16:00.
    assert_eq!(
        winter.bins[6].primary, None,
        "06:00 in December is before sunrise: {}",
        winter.bins[6].note
    );
    assert_eq!(
        winter.bins[8].primary,
        Some(Band::B80m),
        "{}",
        winter.bins[8].note
    );
    assert_eq!(
        winter.bins[15].primary,
        Some(Band::B40m),
        "{}",
        winter.bins[15].note
    );
    assert!(winter.bins[15].note.contains("moved with the Sun"));
}

#[test]
fn contradictions_beyond_the_cap_are_counted_not_kept() {
    use nearsky::domain::coverage::MAX_CONTRADICTIONS;
    let mut log = Log::new();
    let n = MAX_CONTRADICTIONS + 50;
    let t0 = at(4, 0, 0, 0);
    for i in 0..n {
        let t = t0 + chrono::Duration::minutes(i as i64 * 30);
        log.add("Q1AAA", "Q2BBB", t, "7.1", Worked, None)
            .add("Q2BBB", "Q1AAA", t, "3.6", Worked, None);
    }
    let c = log.coverage();
    assert_eq!(c.contradictions_total, n as u64);
    assert_eq!(c.contradictions.len(), MAX_CONTRADICTIONS);
}

#[test]
fn relay_candidates_are_the_strongest_five_among_many_stations() {
    // 72 stations (more than one 64-station word of the plan's sets): A and B fail on 40 m at
    // 10 UTC; each of 70 relays worked both of them 1 to 4 times (relay k: 1 + k mod 4).
    let grid = Locator::parse("JN17ia").unwrap();
    let mut log = Log::new();
    let mut add = |from: &str, to: &str, outcome: Outcome| {
        let t = at(4, 10, 0, 0) + chrono::Duration::seconds(log.0.len() as i64 * 10);
        log.add_at((from, grid), (to, grid), t, "7.1", outcome, None);
    };
    for _ in 0..3 {
        add("Q1AAA", "Q2BBB", NoContact);
    }
    for k in 0..70 {
        let relay = format!("Q1R{k:02}");
        for _ in 0..=(k % 4) {
            add("Q1AAA", &relay, Worked);
            add("Q2BBB", &relay, Worked);
        }
    }
    let c = log.coverage();
    let plan = make_plan(&c, &PlanConfig::default());
    assert_eq!(plan.bins[10].primary, Some(Band::B40m));
    let ab = plan
        .relays
        .iter()
        .find(|r| r.a == "Q1AAA" && r.b == "Q2BBB")
        .unwrap();
    // Relays that worked both ends 4 of 4 times are the strongest; equal ones go by call.
    let calls: Vec<&str> = ab.candidates.iter().map(|r| r.call.as_str()).collect();
    assert_eq!(calls, ["Q1R03", "Q1R07", "Q1R11", "Q1R15", "Q1R19"]);
    let four = wilson(4, 4, Z95).unwrap().0;
    assert!(
        ab.candidates
            .iter()
            .all(|r| (r.strength - four).abs() < 1e-12)
    );
    // Wilson (1927) score interval, closed form by hand: 4/4 at z = 1.96 gives 0.5101; the
    // implementation itself is checked against fixtures/wilson.csv in domain_references.
    assert!((four - 0.5101).abs() < 1e-4, "{four}");
}
