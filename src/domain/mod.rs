//! The pure core of nearsky: types, validation and computations. No I/O, no clock, no terminal,
//! no SQL; everything else in the crate depends on this module, never the other way round.

pub mod callsign;
pub mod caution;
pub mod contact;
pub mod coverage;
pub mod frequency;
pub mod latlon;
pub mod locator;
pub mod mode;
pub mod outcome;
pub mod plan;
pub mod power;
pub mod report;
pub mod utc;

pub use callsign::{Callsign, CallsignError};
pub use contact::{
    Contact, ContactError, ContactForm, ContactId, ContactParts, Field, FieldError, FormContext,
    Origin, StationSnapshot,
};
pub use frequency::{Band, BandError, BandSegment, Frequency, FrequencyError, Spot};
pub use latlon::{LatLon, LatLonError};
pub use locator::{Locator, LocatorError, Precision};
pub use mode::{Mode, ModeError};
pub use outcome::{Outcome, OutcomeError};
pub use power::{Power, PowerError};
pub use report::{Report, ReportError};
pub use utc::{TimeError, parse_utc};
pub mod geo;
mod hashing;
pub mod skywave;
pub mod stats;
pub mod sun;
pub mod text;
