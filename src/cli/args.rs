//! clap definitions of every command and flag.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

/// nearsky: log every contact and failed attempt of an NVIS drill, and learn from them which
/// band works at which hour.
#[derive(Debug, Parser)]
#[command(name = "nearsky", version, about, long_about = None)]
pub struct Cli {
    /// Logbook file (default: in the platform's data directory; also `NEARSKY_DB`).
    #[arg(long, global = true, env = "NEARSKY_DB", value_name = "PATH")]
    pub db: Option<PathBuf>,

    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Create a logbook holding an invented drill and show it.
    #[command(after_help = "Example:\n  nearsky demo --no-ui")]
    Demo(DemoArgs),
    /// Distance, bearings, take-off angle and path class between two locators.
    #[command(
        after_help = "Examples:\n  nearsky path JN17ga IN76qi\n  nearsky path JN17 JN28 --time 2026-12-01T14:00Z --format json"
    )]
    Path(PathArgs),
    /// The Sun's elevation and azimuth, and the day's sunrise, sunset and twilight.
    #[command(
        after_help = "Examples:\n  nearsky sun JN17ga\n  nearsky sun JN17ga --date 2026-12-21 --format json"
    )]
    Sun(SunArgs),
}

/// Output for commands that print one result.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum TextOrJson {
    #[default]
    Text,
    Json,
}

#[derive(Debug, Args)]
pub struct PathArgs {
    /// Locator of one end (2 to 10 characters, e.g. JN17ga).
    pub from: String,
    /// Locator of the other end.
    pub to: String,
    /// UTC time of the contact: adds the Sun at the path midpoint and picks the layer height
    /// by day or night (e.g. 2026-12-01T14:00Z, or 14:00 for today).
    #[arg(long)]
    pub time: Option<String>,
    /// Virtual height of the reflecting layer in km (default 250 by day, 300 at night, 250
    /// without --time).
    #[arg(long, value_name = "KM")]
    pub height: Option<f64>,
    #[arg(long, value_enum, default_value_t)]
    pub format: TextOrJson,
}

#[derive(Debug, Args)]
pub struct SunArgs {
    /// Locator of the place.
    pub locator: String,
    /// UTC time for elevation and azimuth (default: now).
    #[arg(long)]
    pub time: Option<String>,
    /// Date for sunrise, sunset and twilight (default: the date of --time).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub date: Option<String>,
    #[arg(long, value_enum, default_value_t)]
    pub format: TextOrJson,
}

#[derive(Debug, Default, Args)]
pub struct DemoArgs {
    /// Print a summary instead of opening the terminal UI.
    #[arg(long)]
    pub no_ui: bool,
    /// Overwrite an existing logbook at the demo path.
    #[arg(long)]
    pub force: bool,
}
