//! Work that joins the layers, shared by the command line and the terminal UI: moving logs in
//! and out of the logbook.

pub mod review;
pub mod transfer;
pub mod ui;
