//! ADIF speed: parse-only, full import, export, and Python `adif-io` on the same file.
//!
//! Run: `cargo bench --bench adif`. Set `NEARSKY_ADIF_IO_PYTHON` to a Python that has
//! `adif-io` to time it too (`.ci/run` shows how to make one); `NEARSKY_BENCH_ONLY=parse` or
//! `=export` runs one part alone. Targets: parse-only ≥ 300 MB/s
//! and ≥ 50× the Python reader; import ≥ 200,000 records/s; export of 1,000,000 contacts < 2 s.

use std::path::PathBuf;
use std::time::Instant;

use chrono::{DateTime, Utc};
use nearsky::app::transfer::{self, ExportFormat, ImportOptions};
use nearsky::domain::*;
use nearsky::formats::adif::adi::AdiWriter;
use nearsky::store::{ContactQuery, Logbook};
use uuid::Uuid;

/// Contacts in the drill's own mix: 12 stations, three bands, SSB and digital, a third failed.
fn contacts(n: u64, seed: u128) -> Vec<Contact> {
    let calls: Vec<Callsign> = [
        "Q3NET", "Q4SHL", "Q7HSP", "Q2FIR", "Q5SHL", "Q8WTR", "Q6MOB", "Q1CTY", "Q9RLY", "Q3RED",
        "Q4AIR", "Q2SCH",
    ]
    .iter()
    .map(|c| Callsign::parse(c).unwrap())
    .collect();
    let grids: Vec<Locator> = [
        "JN17ga", "JN17gb", "JN17ig", "JN06wu", "JN17ap", "JN16hc", "JN17wm", "JN18io", "JN26le",
        "IN97oi", "JN28qu", "JN14xc",
    ]
    .iter()
    .map(|g| Locator::parse(g).unwrap())
    .collect();
    let modes = [
        Mode::parse("LSB").unwrap(),
        Mode::parse("USB").unwrap(),
        Mode::parse("OLIVIA 8/250").unwrap(),
    ];
    let freqs = [3_598_000u64, 5_362_500, 7_098_000];
    let t0 = DateTime::<Utc>::from_timestamp(1_759_536_000, 0).unwrap();
    (0..n)
        .map(|i| {
            let a = (i % 12) as usize;
            let b = ((i / 12) % 11 + 1) as usize;
            let b = (a + b) % 12;
            let outcome = [
                Outcome::Worked,
                Outcome::Worked,
                Outcome::NoContact,
                Outcome::Partial,
            ][(i % 4) as usize];
            let f = Frequency::from_hz(freqs[(i % 3) as usize]).unwrap();
            Contact::new(ContactParts {
                id: ContactId(Uuid::from_u128(seed + u128::from(i))),
                drill: Some("Autumn exercise".into()),
                own: StationSnapshot {
                    call: calls[a].clone(),
                    operator: None,
                    locator: Some(grids[a]),
                    power: Power::from_watts(20.0).ok(),
                    antenna: Some("80/40 m link dipole".into()),
                },
                call: calls[b].clone(),
                locator: Some(grids[b]),
                start: t0 + chrono::Duration::seconds(i as i64 * 7),
                end: None,
                band: Band::containing(f).unwrap(),
                frequency: Some(f),
                mode: modes[(i % 3) as usize].clone(),
                sent: Report::parse("57").ok(),
                rcvd: if outcome == Outcome::NoContact {
                    None
                } else {
                    Report::parse("55").ok()
                },
                other_power: None,
                outcome,
                via: None,
                note: if i % 5 == 0 {
                    "fading, repeated twice".into()
                } else {
                    String::new()
                },
                origin: Origin::LoggedHere,
            })
            .unwrap()
        })
        .collect()
}

/// Seconds SQLite alone takes to insert `rows` into a fresh logbook's schema through one
/// prepared statement in one transaction (no reading, checking or duplicate look-ups);
/// `bare` drops the secondary indexes first, to show what they cost.
fn sqlite_floor(path: &std::path::Path, rows: &[Contact], bare: bool) -> f64 {
    drop(Logbook::open(path).unwrap());
    let mut conn = rusqlite::Connection::open(path).unwrap();
    conn.pragma_update(None, "cache_size", -65_536).unwrap();
    conn.execute(
        "INSERT INTO drill (name, description, created_at) VALUES ('Autumn exercise', '', 0)",
        [],
    )
    .unwrap();
    if bare {
        conn.execute_batch(
            "DROP INDEX contact_by_time; DROP INDEX contact_by_drill_band_time;
             DROP INDEX contact_by_call;",
        )
        .unwrap();
    }
    let t = Instant::now();
    let tx = conn.transaction().unwrap();
    {
        let mut stmt = tx
            .prepare(
                "INSERT INTO contact (uuid, drill_id, own_call, own_locator, own_power_w,
                    own_antenna, call, locator, start_utc, band, freq_hz, mode, submode,
                    rst_sent, rst_rcvd, outcome, note, origin_station, origin_file, logged_at)
                 VALUES (?1, 1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15,
                    ?16, ?2, 'drill-100k.adi', 0)",
            )
            .unwrap();
        for c in rows {
            stmt.execute(rusqlite::params![
                c.id.to_string(),
                c.own.call.as_str(),
                c.own.locator.as_ref().map(Locator::as_str),
                c.own.power.map(Power::watts),
                c.own.antenna.as_deref(),
                c.call.as_str(),
                c.locator.as_ref().map(Locator::as_str),
                c.start.timestamp(),
                c.band.name(),
                c.frequency.map(|f| f.hz() as i64),
                c.mode.mode(),
                c.mode.submode(),
                c.sent.map(|r| r.to_string()),
                c.rcvd.map(|r| r.to_string()),
                c.outcome.key(),
                c.note.as_str(),
            ])
            .unwrap();
        }
    }
    tx.commit().unwrap();
    t.elapsed().as_secs_f64()
}

/// Export of 1,000,000 contacts, beside the store's read-back of the same rows.
fn export_bench(dir: &std::path::Path, now: DateTime<Utc>) {
    let big = dir.join("export.db");
    let mut book = Logbook::open(&big).unwrap();
    book.add_drill(&nearsky::store::Drill {
        name: "Autumn exercise".into(),
        starts_at: None,
        ends_at: None,
        net_control: None,
        description: String::new(),
    })
    .unwrap();
    // NEARSKY_BENCH_EXPORT_CHUNKS=N exports N × 100,000 contacts instead (for profiling).
    let chunks = std::env::var("NEARSKY_BENCH_EXPORT_CHUNKS")
        .ok()
        .and_then(|n| n.parse::<u128>().ok())
        .unwrap_or(10);
    for chunk in 0..chunks {
        book.add_contacts(&contacts(100_000, 1_000_000 * (chunk + 1)))
            .unwrap();
    }
    let t = Instant::now();
    let mut read = 0u64;
    book.for_each_contact(&ContactQuery::default(), |_| {
        read += 1;
        Ok(())
    })
    .unwrap();
    let read_secs = t.elapsed().as_secs_f64();
    println!("read back:   {read} contacts in {read_secs:.2} s (the store's share of the export)");
    // The floor of the read-back: SQLite stepping through the same rows in the same order and
    // handing over every column, with nothing decoded or checked.
    let conn = rusqlite::Connection::open(&big).unwrap();
    let mut stmt = conn
        .prepare(
            "SELECT uuid, drill_id, own_call, own_operator, own_locator, own_power_w, own_antenna,
                call, locator, start_utc, end_utc, band, freq_hz, mode, submode, rst_sent,
                rst_rcvd, other_power_w, outcome, via, note, origin_station, origin_file,
                revision, deleted, logged_at, id
             FROM contact WHERE deleted = 0 ORDER BY start_utc, id",
        )
        .unwrap();
    let t = Instant::now();
    let mut rows = stmt.query([]).unwrap();
    let mut bytes = 0usize;
    while let Some(r) = rows.next().unwrap() {
        for i in 0..27 {
            bytes += match r.get_ref(i).unwrap() {
                rusqlite::types::ValueRef::Text(t) | rusqlite::types::ValueRef::Blob(t) => t.len(),
                _ => 8,
            };
        }
    }
    let floor_secs = t.elapsed().as_secs_f64();
    println!(
        "  SQLite alone: the same rows and columns in {floor_secs:.2} s ({:.0} MB handed over), nothing decoded",
        bytes as f64 / 1e6
    );
    let t = Instant::now();
    let mut sink = std::io::sink();
    let n = transfer::export(
        &book,
        &ContactQuery::default(),
        true,
        ExportFormat::Adi,
        &mut sink,
        now,
    )
    .unwrap();
    let secs = t.elapsed().as_secs_f64();
    println!(
        "export:      {n} contacts in {:.2} s, {:.0} records/s  (target: 1,000,000 in < 2 s); {:.2}x the read-back alone",
        secs,
        n as f64 / secs,
        secs / read_secs
    );
}

fn main() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-adif");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let now = DateTime::<Utc>::from_timestamp(1_764_590_400, 0).unwrap();
    // NEARSKY_BENCH_ONLY=export times the export alone (for profiling the export).
    if std::env::var("NEARSKY_BENCH_ONLY").as_deref() == Ok("export") {
        export_bench(&dir, now);
        return;
    }

    let records = 100_000u64;
    let mut w = AdiWriter::new(Vec::new(), now).unwrap();
    for c in contacts(records, 0) {
        w.write(&c).unwrap();
    }
    let bytes = w.finish().unwrap();
    let file = dir.join("drill-100k.adi");
    std::fs::write(&file, &bytes).unwrap();
    let mb = bytes.len() as f64 / 1e6;
    println!("file: {records} records, {mb:.1} MB");

    // Parse only, best of 5.
    let mut best = f64::INFINITY;
    for _ in 0..5 {
        let t = Instant::now();
        let (ok, bad) = transfer::parse_only(&bytes[..]).unwrap();
        assert_eq!((ok, bad), (records as usize, 0));
        best = best.min(t.elapsed().as_secs_f64());
    }
    let parse_mbs = mb / best;
    println!(
        "parse only:  {:8.1} ms  {parse_mbs:7.1} MB/s  (target >= 300 MB/s)",
        best * 1e3
    );
    // NEARSKY_BENCH_ONLY=parse stops here (for profiling the reader).
    if std::env::var("NEARSKY_BENCH_ONLY").as_deref() == Ok("parse") {
        return;
    }

    // Parse and check every record with the core types, no store.
    let t = Instant::now();
    let mut reader = nearsky::formats::adif::AdiReader::new(&bytes[..]);
    let mut rec = nearsky::formats::adif::RawRecord::default();
    let none = |_: &Callsign| None;
    let ctx = nearsky::formats::adif::ImportContext {
        station: None,
        drill: None,
        default_drill: None,
        file: "bench.adi",
        station_locator: &none,
    };
    let mut checked = 0;
    while let nearsky::formats::adif::Next::Record = reader.next_record(&mut rec).unwrap() {
        nearsky::formats::adif::to_contact(&rec, &ctx, || ContactId(Uuid::nil())).unwrap();
        checked += 1;
    }
    let secs = t.elapsed().as_secs_f64();
    println!(
        "parse+check: {:8.1} ms  {:9.0} records/s ({checked} records, no store)",
        secs * 1e3,
        checked as f64 / secs
    );

    // Full import into a fresh logbook on disk: validation, duplicate checks, one transaction.
    let mut book = Logbook::open(&dir.join("import.db")).unwrap();
    let t = Instant::now();
    let r =
        transfer::import_file(&mut book, &file, &ImportOptions::default(), &mut |_| {}).unwrap();
    let secs = t.elapsed().as_secs_f64();
    assert_eq!(r.imported, records as usize);
    println!(
        "full import: {:8.1} ms  {:7.1} MB/s  {:9.0} records/s  (target >= 200,000 records/s)",
        secs * 1e3,
        mb / secs,
        records as f64 / secs
    );

    // The floor: the same rows through one prepared INSERT into the same schema, with no
    // reading, checking or duplicate look-ups (what SQLite alone takes on this machine).
    let rows = contacts(records, 0);
    let floor = sqlite_floor(&dir.join("floor.db"), &rows, false);
    println!(
        "SQLite floor: {:7.1} ms  {:9.0} records/s  (same rows, one prepared INSERT, no checks); import takes {:.2}x the floor",
        floor * 1e3,
        records as f64 / floor,
        secs / floor
    );
    let bare = sqlite_floor(&dir.join("floor-bare.db"), &rows, true);
    println!(
        "  the same without the three secondary indexes (UUID index kept): {:7.1} ms  {:9.0} records/s",
        bare * 1e3,
        records as f64 / bare
    );

    export_bench(&dir, now);

    // The independent Python reader on the same file.
    match std::env::var("NEARSKY_ADIF_IO_PYTHON") {
        Err(_) => {
            println!("adif-io:     not timed (set NEARSKY_ADIF_IO_PYTHON to a Python with adif-io)")
        }
        Ok(py) => {
            let code = "import sys,time,adif_io\nt=open(sys.argv[1],encoding='ascii',newline='').read()\ns=time.perf_counter()\nq,h=adif_io.read_from_string(t)\nprint(len(q), time.perf_counter()-s)";
            // Three rounds, each timing both readers back to back, so that a machine whose
            // speed drifts compares like with like; the median round's ratio is the figure.
            let mut ratios = Vec::new();
            for round in 1..=3 {
                let ours = (0..3)
                    .map(|_| {
                        let t = Instant::now();
                        transfer::parse_only(&bytes[..]).unwrap();
                        t.elapsed().as_secs_f64()
                    })
                    .fold(f64::INFINITY, f64::min);
                let out = std::process::Command::new(&py)
                    .arg("-c")
                    .arg(code)
                    .arg(&file)
                    .output()
                    .unwrap();
                let text = String::from_utf8_lossy(&out.stdout);
                let mut it = text.split_whitespace();
                let (count, secs): (usize, f64) = (
                    it.next().and_then(|x| x.parse().ok()).unwrap_or(0),
                    it.next().and_then(|x| x.parse().ok()).unwrap_or(f64::NAN),
                );
                println!(
                    "adif-io:     {:8.1} ms  {:7.1} MB/s  ({count} records); nearsky {:6.1} ms  {:6.1} MB/s just before: round {round} ratio {:.0}x",
                    secs * 1e3,
                    mb / secs,
                    ours * 1e3,
                    mb / ours,
                    secs / ours
                );
                ratios.push(secs / ours);
            }
            ratios.sort_by(f64::total_cmp);
            println!(
                "ratio nearsky parse / adif-io: {:.0}x faster, median of 3 rounds  (target >= 50x)",
                ratios[1]
            );
        }
    }
    // NEARSKY_BENCH_KEEP=1 keeps the generated file and logbooks (for profiling).
    if std::env::var_os("NEARSKY_BENCH_KEEP").is_none() {
        let _ = std::fs::remove_dir_all(&dir);
    }
}
