//! nearsky: a drill logbook for NVIS emergency-communication nets.
//!
//! Layers, from the bottom: [`domain`] (pure types and computations); [`demo`] (the invented
//! scenario); [`cli`] (the command line).

pub mod app;
pub mod cli;
pub mod config;
pub mod demo;
pub mod domain;
pub mod formats;
pub mod store;
pub mod tui;
