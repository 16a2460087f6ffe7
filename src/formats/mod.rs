//! File formats: bytes to and from domain types. Never sees the logbook or the terminal.

pub mod adif;
pub mod csv;
pub mod report;
