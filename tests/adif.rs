//! ADIF in and out: the ADIF sheet's worked example and edge cases, round trips, an
//! independent reader (Python `adif-io`), and the merge rules of import.

mod common;

use std::io::Write;
use std::path::Path;

use chrono::{DateTime, TimeZone, Utc};
use nearsky::app::transfer::{self, ExportFormat, ImportOptions};
use nearsky::domain::geo::PathCache;
use nearsky::domain::*;
use nearsky::formats::adif::adi::AdiWriter;
use nearsky::formats::adif::adx::{AdxReader, AdxWriter};
use nearsky::formats::adif::{self, AdiReader, ImportContext, Next, RawRecord};
use nearsky::store::{ContactQuery, Logbook};
use proptest::prelude::*;
use uuid::Uuid;

fn no_place(_: &Callsign) -> Option<Locator> {
    None
}

fn read_adi(text: &[u8]) -> (Vec<Result<Contact, String>>, Vec<String>) {
    let mut r = AdiReader::new(text);
    let mut rec = RawRecord::default();
    let ctx = ImportContext {
        station: None,
        drill: None,
        default_drill: None,
        file: "test.adi",
        station_locator: &no_place,
    };
    let mut out = Vec::new();
    let mut warnings = Vec::new();
    let mut n = 0u128;
    loop {
        match r.next_record(&mut rec).unwrap() {
            Next::End => return (out, warnings),
            Next::Rejected(e) => out.push(Err(e.to_string())),
            Next::Record => {
                n += 1;
                out.push(
                    adif::to_contact(&rec, &ctx, || ContactId(Uuid::from_u128(n)))
                        .map(|i| {
                            warnings.extend(i.warnings);
                            i.contact
                        })
                        .map_err(|e| e.to_string()),
                );
            }
        }
    }
}

const SHEET_EXAMPLE: &str = include_str!("../fixtures/adif/sheet-example.adi");

/// The worked example of the ADIF sheet §7 (adif-io 0.6.1 reads back 2 records with these
/// values, as the sheet records).
#[test]
fn the_sheet_worked_example_imports_with_its_values() {
    let (recs, _) = read_adi(SHEET_EXAMPLE.as_bytes());
    assert_eq!(recs.len(), 2);
    let a = recs[0].as_ref().unwrap();
    assert_eq!(a.call.as_str(), "Q0TEST");
    assert_eq!(
        a.start,
        Utc.with_ymd_and_hms(2025, 6, 14, 18, 5, 12).unwrap()
    );
    assert_eq!(
        a.end,
        Some(Utc.with_ymd_and_hms(2025, 6, 14, 18, 9, 0).unwrap())
    );
    assert_eq!((a.band, a.frequency.unwrap().hz()), (Band::B40m, 7_188_000));
    assert_eq!(a.mode.to_string(), "SSB/LSB");
    assert_eq!(
        (a.sent.unwrap().to_string(), a.rcvd.unwrap().to_string()),
        ("59".into(), "57".into())
    );
    assert_eq!(a.own.power.unwrap().watts(), 100.0);
    assert_eq!(a.own.call.as_str(), "Q0CALL");
    assert_eq!(
        a.locator.unwrap().as_str(),
        "EN34la12bq",
        "GRIDSQUARE + GRIDSQUARE_EXT"
    );
    assert_eq!(a.own.locator.unwrap().as_str(), "EN35fx");
    assert_eq!(a.note, "Net check-in, traffic 0");
    assert_eq!(a.outcome, Outcome::Worked, "no QSO_COMPLETE means complete");
    let b = recs[1].as_ref().unwrap();
    assert_eq!(b.call.as_str(), "Q0DRILL");
    assert_eq!(b.mode.to_string(), "DYNAMIC/VARA HF");
    assert_eq!(b.outcome, Outcome::NoContact, "QSO_COMPLETE NIL");
    assert_eq!(b.frequency.unwrap().hz(), 3_586_500);
}

fn one(text: &str) -> Result<Contact, String> {
    let (mut r, _) = read_adi(text.as_bytes());
    assert_eq!(r.len(), 1, "{text}");
    r.remove(0)
}

const BASE: &str =
    "<CALL:5>Q1ABC<QSO_DATE:8>20250614<TIME_ON:4>1805<MODE:3>SSB<STATION_CALLSIGN:5>Q3NET";

/// The edge cases of the ADIF sheet §8, one by one.
#[test]
fn the_sheet_edge_cases_are_handled_as_recommended() {
    // BAND disagrees with FREQ: reported, not silently changed.
    let e = one(&format!("{BASE}<BAND:3>80m<FREQ:3>7.1<EOR>")).unwrap_err();
    assert!(
        e.contains("field BAND `80m`") && e.contains("40m band"),
        "{e}"
    );
    // FREQ in no band.
    let e = one(&format!("{BASE}<FREQ:3>8.5<EOR>")).unwrap_err();
    assert!(
        e.contains("field FREQ `8.5`") && e.contains("no amateur band"),
        "{e}"
    );
    // Lower-case enumerations.
    let c = one("<call:5>q1abc<qso_date:8>20250614<time_on:4>1805<band:3>40M<mode:3>ssb<submode:3>lsb<station_callsign:5>q3net<qso_complete:3>nil<eor>").unwrap();
    assert_eq!(
        (c.band, c.mode.to_string(), c.outcome),
        (Band::B40m, "SSB/LSB".into(), Outcome::NoContact)
    );
    // Seconds kept; TIME_OFF before TIME_ON without QSO_DATE_OFF is the next day.
    let c = one("<CALL:5>Q1ABC<QSO_DATE:8>20250614<TIME_ON:6>235530<TIME_OFF:4>0010<BAND:3>80m<MODE:2>CW<STATION_CALLSIGN:5>Q3NET<EOR>").unwrap();
    assert_eq!(
        c.start,
        Utc.with_ymd_and_hms(2025, 6, 14, 23, 55, 30).unwrap()
    );
    assert_eq!(
        c.end,
        Some(Utc.with_ymd_and_hms(2025, 6, 15, 0, 10, 0).unwrap())
    );
    // Invalid dates.
    for d in ["19291231", "20250431"] {
        let e = one(&format!("<CALL:5>Q1ABC<QSO_DATE:8>{d}<TIME_ON:4>1805<BAND:3>40m<MODE:3>SSB<STATION_CALLSIGN:5>Q3NET<EOR>")).unwrap_err();
        assert!(e.contains(&format!("field QSO_DATE `{d}`")), "{e}");
    }
    // A file starting with `<` that holds <EOH> before the first <EOR>: header.
    let (r, _) = read_adi(format!("<ADIF_VER:5>3.1.7<EOH>{BASE}<BAND:3>40m<EOR>").as_bytes());
    assert_eq!(r.len(), 1);
    assert!(r[0].is_ok());
    // Header text but no <EOH>: the text is a comment, the fields a record.
    let (r, _) = read_adi(format!("some text\n{BASE}<BAND:3>40m<EOR>").as_bytes());
    assert!(r[0].is_ok());
    // A byte-order mark and a blank line before the first `<`.
    let (r, _) = read_adi(format!("\u{feff}\n{BASE}<BAND:3>40m<EOR>").as_bytes());
    assert!(r[0].is_ok());
    // A line break in NOTES: CR LF becomes a line break.
    let c = one(&format!("{BASE}<BAND:3>40m<NOTES:11>first\r\nnext<EOR>")).unwrap();
    assert_eq!(c.note, "first\nnext");
    let c = one(&format!("{BASE}<BAND:3>40m<NOTES:10>first\nnext<EOR>")).unwrap();
    assert_eq!(c.note, "first\nnext", "bare LF accepted");
    // `<` inside data: the length decides.
    let c = one(&format!("{BASE}<BAND:3>40m<COMMENT:7>a<eor>b<EOR>")).unwrap();
    assert_eq!(c.note, "a<eor>b");
    // Leading zeros in the length; type indicators on standard fields.
    let c = one(&format!("{BASE}<BAND:003>40m<FREQ:5:N>7.188<EOR>")).unwrap();
    assert_eq!(c.frequency.unwrap().hz(), 7_188_000);
    // Unknown, APP_ and user-defined fields do not break the import.
    assert!(
        one(&format!(
            "{BASE}<BAND:3>40m<APP_OTHER_X:1>y<DRILL_ID:3>abc<NEWFIELD:1>z<EOR>"
        ))
        .is_ok()
    );
    // Import-only MODE values become MODE + SUBMODE.
    let c = one("<CALL:5>Q1ABC<QSO_DATE:8>20250614<TIME_ON:4>1805<MODE:5>PSK31<BAND:3>40m<STATION_CALLSIGN:5>Q3NET<EOR>").unwrap();
    assert_eq!(c.mode.to_string(), "PSK/PSK31");
    // GRIDSQUARE_EXT longer than 4: the extra characters are ignored.
    let c = one(&format!(
        "{BASE}<BAND:3>40m<GRIDSQUARE:8>EN34LA12<GRIDSQUARE_EXT:4>BQ12<EOR>"
    ))
    .unwrap();
    assert_eq!(c.locator.unwrap().as_str(), "EN34la12bq");
    // A 10-character GRIDSQUARE is split, with a warning.
    let (r, w) = read_adi(format!("{BASE}<BAND:3>40m<GRIDSQUARE:10>EN34LA12BQ<EOR>").as_bytes());
    assert_eq!(
        r[0].as_ref().unwrap().locator.unwrap().as_str(),
        "EN34la12bq"
    );
    assert!(w.iter().any(|w| w.contains("more than 8")), "{w:?}");
    // Bad tags are skipped, the record kept.
    assert!(one(&format!("{BASE}<BAND:3>40m<NOTES :4>abcd<EOR>")).is_ok());
    // An empty file has no records.
    assert!(read_adi(b"").0.is_empty());
    // A record nobody can attribute.
    let e = one("<CALL:5>Q1ABC<QSO_DATE:8>20250614<TIME_ON:4>1805<BAND:3>40m<MODE:3>SSB<EOR>")
        .unwrap_err();
    assert!(e.contains("give --station"), "{e}");
    // An unreadable report names line, field and value.
    let e = one(&format!("{BASE}\n<BAND:3>40m<RST_RCVD:3>5NN<EOR>")).unwrap_err();
    assert!(e.starts_with("line 2: field RST_RCVD `5NN`"), "{e}");
}

fn call_strategy() -> impl Strategy<Value = Callsign> {
    (
        "[0-9]",
        "[A-Z]{1,3}",
        prop::option::of(prop::sample::select(vec!["P", "M", "QRP"])),
    )
        .prop_map(|(d, s, suffix)| {
            let base = format!("Q{d}{s}");
            Callsign::parse(&suffix.map_or(base.clone(), |x| format!("{base}/{x}"))).unwrap()
        })
}

fn locator_strategy() -> impl Strategy<Value = Locator> {
    (
        40.0f64..55.0,
        -5.0f64..15.0,
        prop::sample::select(vec![
            Precision::Square,
            Precision::Subsquare,
            Precision::Extended,
            Precision::ExtendedSubsquare,
        ]),
    )
        .prop_map(|(lat, lon, p)| Locator::from_lat_lon(LatLon { lat, lon }, p).unwrap())
}

fn contact_strategy(unicode: bool) -> impl Strategy<Value = Contact> {
    let text = if unicode {
        "[a-zA-Z0-9 äéß∑\n.,:<>&;]{0,40}"
    } else {
        "[ -~\n]{0,40}"
    };
    let freq = prop::sample::select(vec![
        3_500_000u64,
        3_650_500,
        5_362_500,
        5_403_500,
        7_000_000,
        7_123_456,
        7_300_000,
    ]);
    let mode = prop::sample::select(vec![
        "LSB",
        "USB",
        "CW",
        "FT8",
        "OLIVIA 8/250",
        "PSK31",
        "VARA HF",
        "AM",
    ]);
    let report = prop::option::of(prop::sample::select(vec![
        "59", "57", "599", "-12", "+05", "33",
    ]));
    let outcome = prop::sample::select(vec![Outcome::Worked, Outcome::Partial, Outcome::NoContact]);
    (
        (
            call_strategy(),
            call_strategy(),
            prop::option::of(call_strategy()),
            prop::option::of(call_strategy()),
        ),
        (
            prop::option::of(locator_strategy()),
            prop::option::of(locator_strategy()),
        ),
        (0i64..2_000_000_000, prop::option::of(0i64..86_400)),
        (freq, prop::bool::ANY, mode),
        (report.clone(), report, outcome),
        (
            prop::option::of(prop::sample::select(vec![
                0.5f64, 5.0, 20.0, 50.0, 100.0, 12.5,
            ])),
            prop::option::of(1u32..400),
        ),
        (
            text,
            prop::option::of("[A-Za-z0-9 ]{1,20}"),
            prop::option::of("[A-Za-z0-9 /,]{1,30}"),
            any::<u128>(),
        ),
    )
        .prop_filter_map(
            "a valid contact",
            |(
                (own, call, op, via),
                (loc, own_loc),
                (t, dur),
                (hz, band_only, mode),
                (sent, rcvd, outcome),
                (pw, their),
                (note, drill, antenna, id),
            )| {
                let f = Frequency::from_hz(hz).ok()?;
                let start = DateTime::from_timestamp(t, 0)?;
                let parts = ContactParts {
                    id: ContactId(Uuid::from_u128(id)),
                    drill: drill
                        .map(|d| d.trim().to_string())
                        .filter(|d| !d.is_empty()),
                    own: StationSnapshot {
                        call: own.clone(),
                        operator: op.filter(|o| *o != own),
                        locator: own_loc,
                        power: pw.and_then(|w| Power::from_watts(w).ok()),
                        antenna: antenna.filter(|a| !a.is_empty()),
                    },
                    call,
                    locator: loc,
                    start,
                    end: dur.map(|d| start + chrono::Duration::seconds(d)),
                    band: Band::containing(f).ok()?,
                    frequency: (!band_only).then_some(f),
                    mode: Mode::parse(mode).ok()?,
                    sent: sent.and_then(|r| Report::parse(r).ok()),
                    rcvd: if outcome == Outcome::NoContact {
                        None
                    } else {
                        rcvd.and_then(|r| Report::parse(r).ok())
                    },
                    other_power: their.and_then(|w| Power::from_watts(f64::from(w)).ok()),
                    outcome,
                    via,
                    note,
                    origin: Origin::LoggedHere,
                };
                Contact::new(parts).ok()
            },
        )
}

fn as_imported(c: &Contact, file: &str) -> ContactParts {
    let mut p = c.clone().into_parts();
    p.origin = Origin::Imported {
        station: p.own.call.clone(),
        file: file.to_string(),
    };
    p
}

fn fixed_time() -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 12, 1, 12, 0, 0).unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// Arbitrary valid contacts → ADI → import gives the same contacts.
    #[test]
    fn contacts_round_trip_through_adi(contacts in prop::collection::vec(contact_strategy(false), 1..8)) {
        let mut w = AdiWriter::new(Vec::new(), fixed_time()).unwrap();
        for c in &contacts {
            w.write(c).unwrap();
        }
        let bytes = w.finish().unwrap();
        prop_assert!(bytes.is_ascii());
        let (back, _) = read_adi(&bytes);
        prop_assert_eq!(back.len(), contacts.len());
        for (a, b) in contacts.iter().zip(back) {
            let b = b.map_err(TestCaseError::fail)?;
            prop_assert_eq!(as_imported(a, "test.adi"), b.into_parts());
        }
    }

    /// Likewise through ADX, with non-ASCII text (kept whole in *_INTL fields).
    #[test]
    fn contacts_round_trip_through_adx(contacts in prop::collection::vec(contact_strategy(true), 1..8)) {
        let mut w = AdxWriter::new(Vec::new(), fixed_time()).unwrap();
        for c in &contacts {
            w.write(c).unwrap();
        }
        let bytes = w.finish().unwrap();
        let mut r = AdxReader::new(&bytes[..]);
        let ctx = ImportContext { station: None, drill: None, default_drill: None, file: "test.adx", station_locator: &no_place };
        let mut rec = RawRecord::default();
        for a in &contacts {
            let n = r.next_record(&mut rec).unwrap();
            prop_assert!(matches!(n, Next::Record), "{:?}", n);
            let b = adif::to_contact(&rec, &ctx, || ContactId(Uuid::nil())).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert_eq!(as_imported(a, "test.adx"), b.contact.into_parts());
        }
        prop_assert!(matches!(r.next_record(&mut rec).unwrap(), Next::End));
    }
}

/// Contacts used for the independent-reader fixture: deterministic, ASCII.
fn fixture_contacts() -> Vec<Contact> {
    let own = StationSnapshot {
        call: Callsign::parse("Q3NET").unwrap(),
        operator: Some(Callsign::parse("Q3OPR").unwrap()),
        locator: Locator::parse("JN17ga").ok(),
        power: Power::from_watts(50.0).ok(),
        antenna: Some("80/40 m link dipole, 40 m links open".into()),
    };
    let mk = |i: u128,
              call: &str,
              loc: &str,
              t: (u32, u32, u32),
              f: &str,
              mode: &str,
              sent: Option<&str>,
              rcvd: Option<&str>,
              outcome: Outcome,
              note: &str| {
        let freq = Frequency::parse(f).unwrap();
        Contact::new(ContactParts {
            id: ContactId(Uuid::from_u128(0x5eed_0000 + i)),
            drill: Some("Autumn exercise".into()),
            own: own.clone(),
            call: Callsign::parse(call).unwrap(),
            locator: Locator::parse(loc).ok(),
            start: Utc.with_ymd_and_hms(2025, 10, 4, t.0, t.1, t.2).unwrap(),
            end: None,
            band: Band::containing(freq).unwrap(),
            frequency: Some(freq),
            mode: Mode::parse(mode).unwrap(),
            sent: sent.map(|s| Report::parse(s).unwrap()),
            rcvd: rcvd.map(|s| Report::parse(s).unwrap()),
            other_power: None,
            outcome,
            via: None,
            note: note.into(),
            origin: Origin::LoggedHere,
        })
        .unwrap()
    };
    vec![
        mk(
            1,
            "Q4SHL",
            "JN17wm",
            (10, 0, 5),
            "7.1",
            "LSB",
            Some("59"),
            Some("57"),
            Outcome::Worked,
            "first check-in",
        ),
        mk(
            2,
            "Q2SCH",
            "JN14xc12",
            (10, 5, 0),
            "7.1",
            "LSB",
            Some("55"),
            None,
            Outcome::NoContact,
            "called 3 times\nno answer",
        ),
        mk(
            3,
            "Q9RLY/P",
            "JN26le",
            (22, 10, 30),
            "3.6",
            "LSB",
            Some("57"),
            Some("53"),
            Outcome::Worked,
            "",
        ),
        mk(
            4,
            "Q7HSP",
            "JN17ig25ab",
            (22, 40, 0),
            "5.3625",
            "OLIVIA 8/250",
            Some("-12"),
            Some("+03"),
            Outcome::Partial,
            "one-way <copy> & fading",
        ),
    ]
}

fn fixture_export() -> Vec<u8> {
    let mut w = AdiWriter::new(Vec::new(), fixed_time()).unwrap();
    for c in fixture_contacts() {
        w.write(&c).unwrap();
    }
    w.finish().unwrap()
}

/// Regenerates `fixtures/adif/nearsky-export.adi` (run with `--ignored`, then
/// `scripts/adif_io_read.py` to refresh the reader's output beside it).
#[test]
#[ignore = "generator for the adif-io fixture"]
fn regenerate_the_independent_reader_fixture() {
    std::fs::write(common::fixture("adif/nearsky-export.adi"), fixture_export()).unwrap();
}

/// Field values as nearsky means them, per record, for comparison with another reader.
fn our_fields() -> Vec<Vec<(String, String)>> {
    let mut paths = PathCache::new();
    fixture_contacts()
        .iter()
        .map(|c| {
            let mut v = Vec::new();
            adif::for_each_field(c, true, &mut paths, |n, val| {
                v.push((n.to_string(), val.to_string()));
                Ok(())
            })
            .unwrap();
            v
        })
        .collect()
}

fn compare_with_adif_io(json: &str) {
    let v: serde_json::Value = serde_json::from_str(json).unwrap();
    let records = v["records"].as_array().unwrap();
    let ours = our_fields();
    assert_eq!(records.len(), ours.len(), "adif-io read every record");
    for (theirs, ours) in records.iter().zip(&ours) {
        let theirs = theirs.as_object().unwrap();
        assert_eq!(
            theirs.len(),
            ours.len(),
            "same number of fields: {theirs:?}"
        );
        for (name, value) in ours {
            assert_eq!(
                theirs[name.as_str()].as_str(),
                Some(value.as_str()),
                "field {name}"
            );
        }
    }
    assert_eq!(v["headers"]["PROGRAMID"], "nearsky");
    assert_eq!(v["headers"]["ADIF_VER"], "3.1.7");
}

/// The independent reader: what Python `adif-io` 0.6.1 (PyPI) made of nearsky's ADI output,
/// stored beside it (`fixtures/adif/nearsky-export.adif-io.json`, by `scripts/adif_io_read.py`).
/// The export must still be byte-identical to the stored file for that to hold.
#[test]
fn adif_io_reads_our_adi_with_the_same_values() {
    let stored = std::fs::read(common::fixture("adif/nearsky-export.adi")).unwrap();
    assert_eq!(
        String::from_utf8_lossy(&fixture_export()),
        String::from_utf8_lossy(&stored),
        "the writer's output changed: regenerate the fixture"
    );
    let json =
        std::fs::read_to_string(common::fixture("adif/nearsky-export.adif-io.json")).unwrap();
    assert!(json.contains("\"reader\": \"adif-io 0.6.1\""));
    compare_with_adif_io(&json);
}

/// The same check live, when a Python with `adif-io` is named in `NEARSKY_ADIF_IO_PYTHON`
/// (`.ci/run` installs one into a virtual environment).
#[test]
fn adif_io_reads_our_adi_live_when_available() {
    let Ok(python) = std::env::var("NEARSKY_ADIF_IO_PYTHON") else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("export.adi");
    std::fs::write(&path, fixture_export()).unwrap();
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("scripts/adif_io_read.py");
    let out = std::process::Command::new(python)
        .arg(script)
        .arg(&path)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    compare_with_adif_io(&String::from_utf8_lossy(&out.stdout));
}

fn logbook_with(contacts: &[Contact]) -> (tempfile::TempDir, Logbook) {
    let dir = tempfile::tempdir().unwrap();
    let mut book = Logbook::open(&dir.path().join("log.db")).unwrap();
    book.add_drill(&nearsky::store::Drill {
        name: "Autumn exercise".into(),
        starts_at: None,
        ends_at: None,
        net_control: None,
        description: String::new(),
    })
    .unwrap();
    book.add_contacts(contacts).unwrap();
    (dir, book)
}

#[test]
fn export_leaves_out_failed_attempts_unless_asked() {
    let (_d, book) = logbook_with(&fixture_contacts());
    let mut out = Vec::new();
    let n = transfer::export(
        &book,
        &ContactQuery::default(),
        false,
        ExportFormat::Adi,
        &mut out,
        fixed_time(),
    )
    .unwrap();
    assert_eq!(n, 3);
    assert!(!String::from_utf8_lossy(&out).contains("Q2SCH"));
    let mut out = Vec::new();
    let n = transfer::export(
        &book,
        &ContactQuery::default(),
        true,
        ExportFormat::Adi,
        &mut out,
        fixed_time(),
    )
    .unwrap();
    assert_eq!(n, 4);
    let text = String::from_utf8_lossy(&out);
    assert!(
        text.contains("<CALL:5>Q2SCH")
            && text.contains("<QSO_COMPLETE:3>NIL")
            && text.contains("<APP_NEARSKY_OUTCOME:4>none")
    );
    let mut out = Vec::new();
    transfer::export(
        &book,
        &ContactQuery::default(),
        true,
        ExportFormat::Csv,
        &mut out,
        fixed_time(),
    )
    .unwrap();
    let csv = String::from_utf8(out).unwrap();
    assert_eq!(
        csv.lines().count(),
        1 + 4 + 1,
        "header, 4 rows, one note spans two lines"
    );
    assert!(csv.contains("\"one-way <copy> & fading\"") || csv.contains("one-way <copy> & fading"));
}

fn write_file(dir: &Path, name: &str, bytes: &[u8]) -> std::path::PathBuf {
    let p = dir.join(name);
    std::fs::File::create(&p).unwrap().write_all(bytes).unwrap();
    p
}

#[test]
fn importing_twice_adds_nothing_and_bad_files_are_all_or_nothing() {
    let (dir, book) = logbook_with(&fixture_contacts());
    let mut out = Vec::new();
    transfer::export(
        &book,
        &ContactQuery::default(),
        true,
        ExportFormat::Adi,
        &mut out,
        fixed_time(),
    )
    .unwrap();
    let file = write_file(dir.path(), "q3net.adi", &out);
    let mut merged = Logbook::open(&dir.path().join("merged.db")).unwrap();
    let opts = ImportOptions::default();
    let r = transfer::import_file(&mut merged, &file, &opts, &mut |_| {}).unwrap();
    assert_eq!(
        (r.imported, r.duplicates, r.rejected.len(), r.stored),
        (4, 0, 0, true)
    );
    let r = transfer::import_file(&mut merged, &file, &opts, &mut |_| {}).unwrap();
    assert_eq!((r.imported, r.duplicates), (0, 4), "same UUIDs");
    // Without nearsky's UUIDs the natural key (station, call, band, mode, time within a
    // minute) still finds them.
    let stripped: String = String::from_utf8_lossy(&out)
        .lines()
        .map(|l| {
            let i = l.find("<APP_NEARSKY_UUID").unwrap_or(l.len());
            let j = l[i..].find(' ').map_or(l.len(), |k| i + k + 1);
            format!("{}{}\n", &l[..i], &l[j..])
        })
        .collect();
    let file2 = write_file(dir.path(), "no-uuid.adi", stripped.as_bytes());
    let r = transfer::import_file(&mut merged, &file2, &opts, &mut |_| {}).unwrap();
    assert_eq!((r.imported, r.duplicates), (0, 4));
    // One bad record: the file is not imported at all, unless --skip-bad.
    let bad = format!(
        "{}<CALL:5>Q1ABC<QSO_DATE:8>20251004<TIME_ON:4>1100<BAND:3>40m<FREQ:3>3.6<MODE:3>SSB<STATION_CALLSIGN:5>Q5SHL<EOR>\n<CALL:5>Q1ABC<QSO_DATE:8>20251004<TIME_ON:4>1200<BAND:3>40m<MODE:3>SSB<STATION_CALLSIGN:5>Q5SHL<EOR>\n",
        "header\n<EOH>\n"
    );
    let file3 = write_file(dir.path(), "q5shl.adi", bad.as_bytes());
    let before = merged.count(&ContactQuery::default()).unwrap();
    let r = transfer::import_file(&mut merged, &file3, &opts, &mut |_| {}).unwrap();
    assert_eq!((r.imported, r.rejected.len(), r.stored), (1, 1, false));
    assert!(
        r.rejected[0]
            .to_string()
            .starts_with("line 3: field BAND `40m`"),
        "{}",
        r.rejected[0]
    );
    assert_eq!(
        merged.count(&ContactQuery::default()).unwrap(),
        before,
        "nothing of a refused file is stored"
    );
    let r = transfer::import_file(
        &mut merged,
        &file3,
        &ImportOptions {
            skip_bad: true,
            ..opts.clone()
        },
        &mut |_| {},
    )
    .unwrap();
    assert_eq!((r.imported, r.rejected.len(), r.stored), (1, 1, true));
    assert_eq!(merged.count(&ContactQuery::default()).unwrap(), before + 1);
    // A dry run stores nothing.
    let file4 = write_file(
        dir.path(),
        "fresh.adi",
        "<CALL:5>Q2ABC<QSO_DATE:8>20251004<TIME_ON:4>1300<BAND:3>60m<MODE:3>SSB<EOR>".as_bytes(),
    );
    let r = transfer::import_file(
        &mut merged,
        &file4,
        &ImportOptions {
            dry_run: true,
            station: Callsign::parse("Q5SHL").ok(),
            ..opts.clone()
        },
        &mut |_| {},
    )
    .unwrap();
    assert_eq!((r.imported, r.stored), (1, false));
    assert_eq!(merged.count(&ContactQuery::default()).unwrap(), before + 1);
    // Records are attributed to the station that logged them.
    let r = transfer::import_file(
        &mut merged,
        &file4,
        &ImportOptions {
            station: Callsign::parse("Q5SHL").ok(),
            drill: Some("Merged".into()),
            ..opts
        },
        &mut |_| {},
    )
    .unwrap();
    assert!(r.stored);
    let (page, _) = merged
        .page(
            &ContactQuery {
                drill: Some("Merged".into()),
                ..Default::default()
            },
            10,
            None,
        )
        .unwrap();
    assert_eq!(page[0].contact.own.call.as_str(), "Q5SHL");
    assert_eq!(
        page[0].contact.origin,
        Origin::Imported {
            station: Callsign::parse("Q5SHL").unwrap(),
            file: "fresh.adi".into()
        }
    );
}

/// `n` contacts a minute apart, cycling through the fixture's, with ids from `first_id`.
fn many_contacts(n: u32, first_id: u128) -> Vec<Contact> {
    let base = fixture_contacts();
    (0..n)
        .map(|i| {
            let mut p = as_imported(&base[i as usize % base.len()], "many.adi");
            p.id = ContactId(Uuid::from_u128(first_id + u128::from(i)));
            p.start = fixed_time() + chrono::Duration::minutes(i64::from(i));
            p.end = None;
            Contact::new(p).unwrap()
        })
        .collect()
}

#[test]
fn a_long_export_keeps_every_contact_in_time_order_in_every_format() {
    // 2,600 contacts: more than two of the export's hand-over batches.
    let many = many_contacts(2600, 10_000);
    let (_d, book) = logbook_with(&many);
    let export = |format| {
        let mut out = Vec::new();
        let n = transfer::export(
            &book,
            &ContactQuery::default(),
            true,
            format,
            &mut out,
            fixed_time(),
        )
        .unwrap();
        (n, out)
    };
    let (n, adi) = export(ExportFormat::Adi);
    assert_eq!(n, 2600);
    let (read, _) = read_adi(&adi);
    let ids: Vec<ContactId> = read.into_iter().map(|c| c.unwrap().id).collect();
    let expected: Vec<ContactId> = many.iter().map(|c| c.id).collect();
    assert_eq!(ids, expected);
    let (n, adx) = export(ExportFormat::Adx);
    assert_eq!(n, 2600);
    let adx = String::from_utf8(adx).unwrap();
    assert_eq!(adx.matches("<RECORD>").count(), 2600);
    assert!(adx.starts_with("<?xml") && adx.trim_end().ends_with("</ADX>"));
    let (n, csv) = export(ExportFormat::Csv);
    assert_eq!(n, 2600);
    let csv = String::from_utf8(csv).unwrap();
    let first_column: Vec<&str> = csv
        .lines()
        .skip(1)
        .filter_map(|l| l.split(',').next())
        .filter(|id| id.len() == 36)
        .collect();
    let expected: Vec<String> = many.iter().map(|c| c.id.to_string()).collect();
    assert_eq!(first_column, expected);
}

#[test]
fn an_export_whose_output_fails_says_so_and_stops() {
    // An output that takes 10,000 bytes and then fails, as a full disk would.
    struct Full(usize);
    impl Write for Full {
        fn write(&mut self, b: &[u8]) -> std::io::Result<usize> {
            if self.0 + b.len() > 10_000 {
                return Err(std::io::Error::other("no space left on device"));
            }
            self.0 += b.len();
            Ok(b.len())
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }
    let many = many_contacts(3000, 50_000);
    let (_d, book) = logbook_with(&many);
    for format in [ExportFormat::Adi, ExportFormat::Adx, ExportFormat::Csv] {
        let e = transfer::export(
            &book,
            &ContactQuery::default(),
            true,
            format,
            Full(0),
            fixed_time(),
        )
        .unwrap_err();
        assert!(e.to_string().contains("no space left on device"), "{e}");
        // The output's own error is kept as it is, wherever the export was when it failed,
        // so that the command line can tell a closed pipe from a real failure.
        let transfer::TransferError::Io { source, .. } = &e else {
            panic!("{e:?}");
        };
        assert_eq!(source.kind(), std::io::ErrorKind::Other, "{e:?}");
    }
}
