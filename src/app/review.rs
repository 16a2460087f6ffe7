//! The drill's coverage and plan, read from a logbook (shared by the command line and the UI).

use crate::domain::coverage::{Coverage, CoverageBuilder, CoverageConfig, OperatorNote};
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
    book.for_each_sighting(&q, |s| b.add_sighting(s))?;
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
