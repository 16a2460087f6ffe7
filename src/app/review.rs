//! The drill's coverage and plan, read from a logbook (shared by the command line and the UI).

use std::ops::Range;

use crate::domain::coverage::{Coverage, CoverageBuilder, CoverageConfig, OperatorNote, Sighting};
use crate::store::{ContactQuery, Logbook, StoreError};

/// Why coverage could not be computed.
#[derive(Debug, thiserror::Error)]
pub enum ReviewError {
    #[error(transparent)]
    Config(#[from] crate::domain::coverage::ConfigError),
    #[error(transparent)]
    Store(#[from] StoreError),
}

/// Coverage of a drill (or of every contact), streamed from the logbook in time order, with
/// the operators' notes attached.
pub fn load_coverage(
    book: &Logbook,
    drill: Option<&str>,
    config: CoverageConfig,
) -> Result<Coverage, ReviewError> {
    let mut b = CoverageBuilder::new(config)?;
    let q = ContactQuery {
        drill: drill.map(str::to_string),
        ..ContactQuery::default()
    };
    // This thread reads the logbook; a second one builds the coverage from batches of what
    // was read (through a bounded channel, so memory stays bounded). On two cores the
    // reading and the building overlap.
    let (send, receive) = std::sync::mpsc::sync_channel::<Batch>(4);
    let b = std::thread::scope(|scope| -> Result<CoverageBuilder, ReviewError> {
        let builder = scope.spawn(move || {
            for batch in receive {
                batch.each(|s| b.add_sighting(s));
            }
            b
        });
        let mut batch = Batch::default();
        let read = book.for_each_sighting(&q, |s| {
            batch.push(s);
            if batch.rows.len() == BATCH {
                // The builder only stops early by panicking, which join() passes on below.
                let _ = send.send(std::mem::take(&mut batch));
            }
        });
        if !batch.rows.is_empty() {
            let _ = send.send(batch);
        }
        drop(send);
        let b = builder
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        read?;
        Ok(b)
    })?;
    let notes: Vec<OperatorNote> = book
        .notes(drill)?
        .into_iter()
        .map(|n| OperatorNote {
            at: n.at,
            band: n.band,
            station: n.station.to_string(),
            text: n.text,
        })
        .collect();
    Ok(b.finish(&notes))
}

/// Sightings per hand-over from the reading to the building thread.
const BATCH: usize = 4096;

/// Sightings read from the logbook, owned so they can move to another thread: their calls are
/// ranges into one text buffer.
#[derive(Default)]
struct Batch {
    text: String,
    rows: Vec<(Sighting<'static>, Range<usize>, Range<usize>)>,
}

impl Batch {
    fn push(&mut self, s: &Sighting<'_>) {
        let from = self.text.len()..self.text.len() + s.from.len();
        self.text.push_str(s.from);
        let to = self.text.len()..self.text.len() + s.to.len();
        self.text.push_str(s.to);
        self.rows.push((
            Sighting {
                from: "",
                to: "",
                ..*s
            },
            from,
            to,
        ));
    }

    fn each(&self, mut f: impl FnMut(&Sighting<'_>)) {
        for (s, from, to) in &self.rows {
            f(&Sighting {
                from: &self.text[from.clone()],
                to: &self.text[to.clone()],
                ..*s
            });
        }
    }
}
