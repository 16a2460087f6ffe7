//! Import of other stations' ADIF files into the logbook (the merge), and export.

use std::collections::HashMap;
use std::fs::File;
use std::io::{self, BufRead, BufReader, Read, Write};
use std::path::Path;

use chrono::{DateTime, Utc};
use uuid::Uuid;

use crate::domain::{Callsign, ContactId, Locator};
use crate::formats::adif::adx::{AdxReader, AdxWriter};
use crate::formats::adif::{self, AdiReader, ImportContext, Next, RawRecord, RecordError};
use crate::store::{ContactQuery, Logbook, StoreError, StoredContact};

/// How to import.
#[derive(Debug, Clone, Default)]
pub struct ImportOptions {
    /// The logging station, for files that do not say.
    pub station: Option<Callsign>,
    /// Put every record in this drill (created if missing).
    pub drill: Option<String>,
    /// Put the records that name no drill of their own in this one (which must exist): the
    /// drill in use, so that a merged log lands where coverage looks.
    pub default_drill: Option<String>,
    /// Read and check everything, store nothing.
    pub dry_run: bool,
    /// Import the good records of a file that has bad ones (the bad ones are listed).
    pub skip_bad: bool,
}

/// What an import of one file did.
#[derive(Debug, Default)]
pub struct ImportReport {
    pub file: String,
    pub read: usize,
    pub imported: usize,
    pub duplicates: usize,
    pub rejected: Vec<RecordError>,
    pub warnings: Vec<String>,
    /// Records imported (or that a dry run would import) per drill; `None`: in no drill.
    pub drills: std::collections::BTreeMap<Option<String>, usize>,
    /// Whether the records were stored (false for a dry run, or a file refused whole).
    pub stored: bool,
}

#[derive(Debug, thiserror::Error)]
pub enum TransferError {
    #[error("{path}: {source}")]
    Io { path: String, source: io::Error },
    #[error(transparent)]
    Store(#[from] StoreError),
}

enum Source<R: BufRead> {
    Adi(AdiReader<R>),
    Adx(AdxReader<R>),
}

impl<R: BufRead> Source<R> {
    fn next(&mut self, rec: &mut RawRecord) -> io::Result<Next> {
        match self {
            Self::Adi(r) => r.next_record(rec),
            Self::Adx(r) => r.next_record(rec),
        }
    }
}

/// ADX when the name ends in `.adx` or `.xml`, or the content starts with `<?xml`.
fn open_source(path: &Path) -> io::Result<Source<BufReader<File>>> {
    let mut f = BufReader::with_capacity(1 << 20, File::open(path)?);
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let head = f.fill_buf()?;
    let start = head
        .iter()
        .position(|b| !b.is_ascii_whitespace() && *b != 0xEF && *b != 0xBB && *b != 0xBF)
        .unwrap_or(0);
    let is_xml =
        matches!(ext.as_deref(), Some("adx" | "xml")) || head[start..].starts_with(b"<?xml");
    Ok(if is_xml {
        Source::Adx(AdxReader::new(f))
    } else {
        Source::Adi(AdiReader::new(f))
    })
}

/// Imports one file in one transaction: whole, or (with `skip_bad`) without its bad records,
/// never half by accident. `progress` is called with the number of records read so far.
pub fn import_file(
    book: &mut Logbook,
    path: &Path,
    opts: &ImportOptions,
    progress: &mut dyn FnMut(usize),
) -> Result<ImportReport, TransferError> {
    let name = path.display().to_string();
    let io_err = |source| TransferError::Io {
        path: name.clone(),
        source,
    };
    let src = open_source(path).map_err(io_err)?;
    let mut places: HashMap<Callsign, Locator> = HashMap::new();
    for e in book.roster()? {
        if let Some(l) = e.locator {
            places.insert(e.call, l);
        }
    }
    if let Some(p) = book.current_station()?
        && let Some(l) = book.station_locator_at(&p.call, Utc::now())?
    {
        places.entry(p.call).or_insert(l);
    }
    let file_name = path
        .file_name()
        .map_or(name.clone(), |f| f.to_string_lossy().into_owned());
    let mut report = ImportReport {
        file: name.clone(),
        ..ImportReport::default()
    };
    let mut import = book.begin_import()?;
    if let Some(d) = &opts.drill {
        import.drill(d)?;
    }
    // Reading and checking run on a second thread and hand over checked records in batches
    // through a bounded channel (memory stays bounded); this thread stores them. The two
    // halves take similar time, so on two cores they overlap.
    let (send, receive) = std::sync::mpsc::sync_channel::<Vec<Parsed>>(4);
    let stored = std::thread::scope(|scope| -> Result<bool, TransferError> {
        let reader = scope.spawn(move || read_and_check(src, places, opts, &file_name, send));
        let store = || -> Result<(), TransferError> {
            for batch in receive {
                for item in batch {
                    report.read += 1;
                    match item {
                        Parsed::Rejected(e) => report.rejected.push(e),
                        Parsed::Contact(c, warnings) => {
                            report.warnings.extend(warnings);
                            if import.add(&c)? {
                                report.imported += 1;
                                // No copy of the drill's name but for the first record.
                                match report.drills.get_mut(&c.drill) {
                                    Some(n) => *n += 1,
                                    None => {
                                        report.drills.insert(c.drill.clone(), 1);
                                    }
                                }
                            } else {
                                report.duplicates += 1;
                            }
                        }
                    }
                    if report.read.is_multiple_of(5000) {
                        progress(report.read);
                    }
                }
            }
            Ok(())
        };
        // A store error drops the receiver, which stops the reader at its next batch.
        let stored = store();
        let header_warnings = match reader.join() {
            Ok(r) => r.map_err(io_err)?,
            Err(_) => {
                return Err(TransferError::Io {
                    path: name.clone(),
                    source: io::Error::other("the reading thread failed"),
                });
            }
        };
        stored?;
        report.warnings.extend(header_warnings);
        let refuse = !report.rejected.is_empty() && !opts.skip_bad;
        Ok(!(opts.dry_run || refuse))
    })?;
    if stored {
        import.commit()?;
        report.stored = true;
    }
    Ok(report)
}

/// A record as the reading thread hands it over.
enum Parsed {
    Contact(Box<crate::domain::Contact>, Vec<String>),
    Rejected(RecordError),
}

/// Records per hand-over between the reading and the storing thread.
const BATCH: usize = 256;

/// Reads every record of `src`, checks it with the core types and sends the results in
/// batches; returns the header's warnings. Stops early when the receiver is gone.
fn read_and_check<R: BufRead>(
    mut src: Source<R>,
    places: HashMap<Callsign, Locator>,
    opts: &ImportOptions,
    file_name: &str,
    send: std::sync::mpsc::SyncSender<Vec<Parsed>>,
) -> io::Result<Vec<String>> {
    let lookup = |c: &Callsign| {
        places.get(c).copied().or_else(|| {
            places
                .iter()
                .find(|(k, _)| k.base() == c.base())
                .map(|(_, l)| *l)
        })
    };
    let ctx = ImportContext {
        station: opts.station.as_ref(),
        drill: opts.drill.as_deref(),
        default_drill: opts.default_drill.as_deref(),
        file: file_name,
        station_locator: &lookup,
    };
    let mut rec = RawRecord::default();
    let mut batch = Vec::with_capacity(BATCH);
    loop {
        let item = match src.next(&mut rec)? {
            Next::End => break,
            Next::Rejected(e) => Parsed::Rejected(e),
            Next::Record => match adif::to_contact(&rec, &ctx, || ContactId(Uuid::new_v4())) {
                Err(e) => Parsed::Rejected(e),
                Ok(c) => Parsed::Contact(Box::new(c.contact), c.warnings),
            },
        };
        batch.push(item);
        if batch.len() == BATCH
            && send
                .send(std::mem::replace(&mut batch, Vec::with_capacity(BATCH)))
                .is_err()
        {
            return Ok(Vec::new());
        }
    }
    if !batch.is_empty() {
        let _ = send.send(batch);
    }
    Ok(match &src {
        Source::Adi(r) => r.header_warnings.clone(),
        Source::Adx(_) => Vec::new(),
    })
}

/// Export format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExportFormat {
    Adi,
    Adx,
    Csv,
}

/// Writes the contacts a query selects. Without `include_attempts` only contacts that were
/// made (worked or partial) go out: a main station log should not receive "no contact"
/// records. Returns the number written.
///
/// This thread reads the logbook and writes the output; a second one turns batches of
/// contacts into bytes (through a bounded channel, so memory stays bounded). On two cores
/// the reading and the formatting overlap.
pub fn export(
    book: &Logbook,
    q: &ContactQuery,
    include_attempts: bool,
    format: ExportFormat,
    out: impl Write,
    created: DateTime<Utc>,
) -> Result<usize, TransferError> {
    export_report(book, q, include_attempts, format, out, created).map(|e| e.written)
}

/// What an export wrote.
#[derive(Debug, Default)]
pub struct Exported {
    pub written: usize,
    /// Failed attempts that matched but were left out (without `include_attempts`).
    pub attempts_left_out: usize,
    /// The base calls of the stations that logged what was written, sorted.
    pub stations: Vec<String>,
}

/// [`export`], also telling which stations logged the contacts written (a main station log
/// should receive one station's).
pub fn export_report(
    book: &Logbook,
    q: &ContactQuery,
    include_attempts: bool,
    format: ExportFormat,
    mut out: impl Write,
    created: DateTime<Utc>,
) -> Result<Exported, TransferError> {
    let io_err = |source| TransferError::Io {
        path: "output".into(),
        source,
    };
    let (send, receive) = std::sync::mpsc::sync_channel::<Vec<StoredContact>>(4);
    let (send_bytes, bytes) = std::sync::mpsc::channel::<Vec<u8>>();
    std::thread::scope(|scope| -> Result<Exported, TransferError> {
        let formatter = scope.spawn(move || -> io::Result<()> {
            let mut sink = Sink::new(format, created)?;
            for batch in receive {
                for s in &batch {
                    sink.write(s)?;
                }
                if send_bytes.send(sink.take()).is_err() {
                    return Ok(());
                }
            }
            let _ = send_bytes.send(sink.finish()?);
            Ok(())
        });
        let mut n = 0;
        let mut left_out = 0;
        let mut stations = std::collections::HashSet::new();
        let mut batch = Vec::with_capacity(EXPORT_BATCH);
        // A failed write to the output, kept as it is (a closed pipe is told apart from
        // other failures by its kind).
        let mut write_failed: Option<io::Error> = None;
        let written = book.for_each_contact(q, |s| {
            if include_attempts || s.contact.outcome.made_contact() {
                n += 1;
                let base = s.contact.own.call.base();
                if !stations.contains(base) {
                    stations.insert(base.to_string());
                }
                batch.push(s);
            } else {
                left_out += 1;
            }
            if batch.len() == EXPORT_BATCH {
                // A closed channel means the formatter failed: stop reading; join() below
                // says why.
                let full = std::mem::replace(&mut batch, Vec::with_capacity(EXPORT_BATCH));
                if send.send(full).is_err() {
                    return Err(StoreError::Invalid("the export stopped".into()));
                }
                while let Ok(b) = bytes.try_recv() {
                    if let Err(e) = out.write_all(&b) {
                        write_failed = Some(e);
                        return Err(StoreError::Invalid("the export stopped".into()));
                    }
                }
            }
            Ok(())
        });
        if !batch.is_empty() {
            let _ = send.send(batch);
        }
        drop(send);
        let mut rest = Ok(());
        for b in bytes {
            if rest.is_ok() {
                rest = out.write_all(&b);
            }
        }
        let formatted = formatter
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        // The formatter's own error first: when it failed, the reading stopped because of it;
        // likewise a failed write.
        formatted.map_err(io_err)?;
        if let Some(e) = write_failed {
            return Err(io_err(e));
        }
        written?;
        rest.map_err(io_err)?;
        out.flush().map_err(io_err)?;
        let mut stations: Vec<String> = stations.into_iter().collect();
        stations.sort();
        Ok(Exported {
            written: n,
            attempts_left_out: left_out,
            stations,
        })
    })
}

/// Contacts per hand-over to the formatting thread.
const EXPORT_BATCH: usize = 1024;

/// An export format writing into memory, emptied batch by batch.
enum Sink {
    Adi(adif::adi::AdiWriter<Vec<u8>>),
    Adx(AdxWriter<Vec<u8>>),
    Csv(Vec<u8>, crate::domain::geo::PathCache),
}

impl Sink {
    fn new(format: ExportFormat, created: DateTime<Utc>) -> io::Result<Self> {
        Ok(match format {
            ExportFormat::Adi => Self::Adi(adif::adi::AdiWriter::new(Vec::new(), created)?),
            ExportFormat::Adx => Self::Adx(AdxWriter::new(Vec::new(), created)?),
            ExportFormat::Csv => {
                let mut out = Vec::new();
                crate::formats::csv::write_header(&mut out)?;
                Self::Csv(out, crate::domain::geo::PathCache::new())
            }
        })
    }

    fn write(&mut self, s: &StoredContact) -> io::Result<()> {
        match self {
            Self::Adi(w) => w.write(&s.contact),
            Self::Adx(w) => w.write(&s.contact),
            Self::Csv(out, paths) => {
                crate::formats::csv::write_row(out, &s.contact, s.deleted, paths)
            }
        }
    }

    /// The bytes written since the last call.
    fn take(&mut self) -> Vec<u8> {
        std::mem::take(match self {
            Self::Adi(w) => w.get_mut(),
            Self::Adx(w) => w.get_mut(),
            Self::Csv(out, _) => out,
        })
    }

    /// The last bytes, with the format's closing part.
    fn finish(self) -> io::Result<Vec<u8>> {
        match self {
            Self::Adi(w) => w.finish(),
            Self::Adx(w) => w.finish(),
            Self::Csv(out, _) => Ok(out),
        }
    }
}

/// Reads a whole file's records without storing anything (used by benchmarks and fuzzing):
/// returns (records, rejected).
pub fn parse_only(data: impl Read) -> io::Result<(usize, usize)> {
    let mut r = AdiReader::new(data);
    let mut rec = RawRecord::default();
    let (mut ok, mut bad) = (0, 0);
    loop {
        match r.next_record(&mut rec)? {
            Next::Record => ok += 1,
            Next::Rejected(_) => bad += 1,
            Next::End => return Ok((ok, bad)),
        }
    }
}
