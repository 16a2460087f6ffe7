//! clap definitions of every command and flag.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

/// nearsky: log every contact and failed attempt of an NVIS drill, and learn from them which
/// band works at which hour.
#[derive(Debug, Parser)]
#[command(
    name = "nearsky",
    version,
    about,
    long_about = None,
    after_help = "Without a command, nearsky opens the terminal UI on the logbook.\n\nExamples:\n  nearsky demo\n  nearsky log Q4SHL --freq 7.1 --mode LSB --sent 59 --rcvd 57\n  nearsky coverage\n\nExit codes: 0 ok, 1 failure, 2 usage error, 3 import with rejected records."
)]
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
    /// Log a contact or a failed attempt; it is on disk when the command returns.
    #[command(
        after_help = "Examples:\n  nearsky log Q4SHL --freq 7.1 --mode LSB --sent 59 --rcvd 57\n  nearsky log Q2SCH --band 80m --outcome none --note \"called 3 times\""
    )]
    Log(LogArgs),
    /// Add a timestamped propagation note.
    #[command(
        after_help = "Example:\n  nearsky note \"40 m fading, switching to 60 m\" --band 40m"
    )]
    Note(NoteArgs),
    /// List contacts, newest first.
    #[command(after_help = "Examples:\n  nearsky list\n  nearsky list --band 40m --format csv")]
    List(ListArgs),
    /// Correct a contact; the previous version is kept with the reason.
    #[command(after_help = "Example:\n  nearsky edit 3f2a --rcvd 55 --reason \"misheard report\"")]
    Edit(EditArgs),
    /// Delete a contact; it stays in the file, marked deleted, with the reason.
    #[command(after_help = "Example:\n  nearsky delete 3f2a --reason \"logged twice\"")]
    Delete(DeleteArgs),
    /// Create, list or choose drills.
    #[command(
        subcommand,
        after_help = "Examples:\n  nearsky drill new \"Autumn exercise\"\n  nearsky drill use \"Autumn exercise\""
    )]
    Drill(DrillCommand),
    /// Set, move or show the own station.
    #[command(
        subcommand,
        after_help = "Examples:\n  nearsky station set --call Q3NET --grid JN17ga --power 50\n  nearsky station move --grid JN17gb"
    )]
    Station(StationCommand),
    /// Add or list the other stations of the net.
    #[command(
        subcommand,
        after_help = "Example:\n  nearsky roster add Q4SHL --name \"Shelter 1\" --grid JN17gb"
    )]
    Roster(RosterCommand),
    /// Copy the logbook to a new file (safe while logging goes on).
    #[command(after_help = "Example:\n  nearsky backup /media/usb/drill-backup.db")]
    Backup(BackupArgs),
    /// Check the logbook file for damage.
    #[command(after_help = "Example:\n  nearsky check")]
    Check,
    /// Merge other stations' ADIF files (ADI or ADX) into the logbook.
    #[command(
        after_help = "Examples:\n  nearsky import shelter1.adi hospital.adx\n  nearsky import q4shl.adi --station Q4SHL --drill \"Autumn exercise\" --dry-run"
    )]
    Import(ImportArgs),
    /// Write contacts as ADIF (ADI, ADX) or CSV for a main station log or a spreadsheet.
    #[command(
        after_help = "Examples:\n  nearsky export -o drill.adi\n  nearsky export --station Q4SHL -o q4shl.adi\n  nearsky export --format csv --include-attempts -o drill.csv"
    )]
    Export(ExportArgs),
    /// Which links worked on which band at which hour.
    #[command(
        after_help = "Examples:\n  nearsky coverage\n  nearsky coverage --view links --band 40m\n  nearsky coverage --view hours --format json"
    )]
    Coverage(CoverageArgs),
    /// The band plan for the next drill, from this drill's evidence.
    #[command(
        after_help = "Examples:\n  nearsky plan\n  nearsky plan --for 2026-12-21 --format json > plan.json\n  nearsky drill new \"Winter exercise\" --plan plan.json"
    )]
    Plan(PlanArgs),
    /// Where the stations' logs disagree (band, time, or outcome).
    #[command(after_help = "Example:\n  nearsky crosscheck --drill \"Autumn exercise\"")]
    Crosscheck(CrosscheckArgs),
    /// Write the after-action report: one self-contained HTML page.
    #[command(after_help = "Example:\n  nearsky report -o drill-report.html")]
    Report(ReportArgs),
    /// Print shell completions (bash, zsh, fish, elvish, powershell).
    #[command(
        after_help = "Example:\n  nearsky completions bash > ~/.local/share/bash-completion/completions/nearsky"
    )]
    Completions {
        /// The shell to complete for.
        #[arg(value_enum)]
        shell: clap_complete::Shell,
    },
    /// Print the manual page (roff), made from the same definitions as --help.
    #[command(after_help = "Example:\n  nearsky man > nearsky.1 && man ./nearsky.1")]
    Man,
    /// Internal: adds contacts in a loop for the reliability tests.
    #[command(hide = true, name = "__writer")]
    Writer(WriterArgs),
}

#[derive(Debug, Args)]
pub struct LogArgs {
    /// The other station's call sign.
    pub call: String,
    /// UTC time (default: now), e.g. 14:05 or 2026-12-01T14:05Z.
    #[arg(long)]
    pub time: Option<String>,
    /// Frequency (7.1, 7100kHz, 5.3625MHz); the band follows from it.
    #[arg(long, alias = "frequency")]
    pub freq: Option<String>,
    /// Band (80m, 60m, 40m) when no frequency is given.
    #[arg(long)]
    pub band: Option<String>,
    /// Mode or submode (USB, LSB, CW, FT8, OLIVIA 8/250); default: the last one used.
    #[arg(long)]
    pub mode: Option<String>,
    /// Own power in W (default: the config file's `power_w`, else the station's usual power).
    #[arg(long)]
    pub power: Option<String>,
    /// Report sent (59, 599, 5/9, -12).
    #[arg(long)]
    pub sent: Option<String>,
    /// Report received.
    #[arg(long)]
    pub rcvd: Option<String>,
    /// Their locator (default: from the roster).
    #[arg(long)]
    pub grid: Option<String>,
    /// Their power in W, if they gave it.
    #[arg(long)]
    pub their_power: Option<String>,
    /// worked, partial (one-way or incomplete) or none (called, nothing heard).
    #[arg(long, default_value = "worked")]
    pub outcome: String,
    /// Station that relayed the exchange.
    #[arg(long)]
    pub via: Option<String>,
    /// Free text kept with the contact.
    #[arg(long)]
    pub note: Option<String>,
    /// Minutes within which the same call, band and mode count as a possible duplicate
    /// (default: the config file's `duplicate_window_minutes`, else 10).
    #[arg(long)]
    pub dup_window: Option<u32>,
    /// Text for people, JSON for scripts.
    #[arg(long, value_enum, default_value_t)]
    pub format: TextOrJson,
}

#[derive(Debug, Args)]
pub struct NoteArgs {
    /// What was observed.
    pub text: String,
    /// The band it is about (default: none, the note is about every band).
    #[arg(long)]
    pub band: Option<String>,
    /// UTC time (default: now).
    #[arg(long)]
    pub time: Option<String>,
}

/// Output for commands that print a list.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum ListFormat {
    #[default]
    Table,
    Csv,
    Json,
}

#[derive(Debug, Args)]
pub struct ListArgs {
    /// Drill name (default: the drill in use; `all` for every drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// Only this band.
    #[arg(long)]
    pub band: Option<String>,
    /// Only what this station logged (Q3NET includes Q3NET/P).
    #[arg(long, value_name = "CALL")]
    pub station: Option<String>,
    /// Most contacts to show.
    #[arg(long, default_value_t = 50)]
    pub limit: usize,
    /// Show deleted contacts too.
    #[arg(long)]
    pub deleted: bool,
    /// A table, CSV or JSON.
    #[arg(long, value_enum, default_value_t)]
    pub format: ListFormat,
}

#[derive(Debug, Args)]
pub struct EditArgs {
    /// The contact's UUID (at least its first 4 characters).
    pub id: String,
    /// New call sign of the other station.
    #[arg(long)]
    pub call: Option<String>,
    /// New UTC time; a time of day alone (14:05) keeps the contact's date.
    #[arg(long)]
    pub time: Option<String>,
    /// New frequency (7.1, 7100kHz); the band follows from it.
    #[arg(long, alias = "frequency")]
    pub freq: Option<String>,
    /// New band, when the contact has no frequency.
    #[arg(long)]
    pub band: Option<String>,
    /// New mode or submode.
    #[arg(long)]
    pub mode: Option<String>,
    /// New own power in W.
    #[arg(long)]
    pub power: Option<String>,
    /// New report sent.
    #[arg(long)]
    pub sent: Option<String>,
    /// New report received.
    #[arg(long)]
    pub rcvd: Option<String>,
    /// New locator of the other station.
    #[arg(long)]
    pub grid: Option<String>,
    /// New power of the other station in W.
    #[arg(long)]
    pub their_power: Option<String>,
    /// New outcome: worked, partial or none.
    #[arg(long)]
    pub outcome: Option<String>,
    /// New relaying station.
    #[arg(long)]
    pub via: Option<String>,
    /// New note.
    #[arg(long)]
    pub note: Option<String>,
    /// Why the contact is changed (kept in the revision trail).
    #[arg(long)]
    pub reason: String,
}

#[derive(Debug, Args)]
pub struct DeleteArgs {
    /// The contact's UUID (at least its first 4 characters).
    pub id: String,
    /// Why the contact is deleted (kept in the revision trail).
    #[arg(long)]
    pub reason: String,
}

#[derive(Debug, Subcommand)]
pub enum DrillCommand {
    /// Create a drill and use it.
    #[command(
        after_help = "Examples:\n  nearsky drill new \"Autumn exercise\" --ncs Q3NET\n  nearsky drill new \"Winter exercise\" --plan plan.json"
    )]
    New {
        /// The drill's name, e.g. "Autumn exercise".
        name: String,
        /// Net control station.
        #[arg(long)]
        ncs: Option<String>,
        /// What the drill is about.
        #[arg(long)]
        description: Option<String>,
        /// Planned start, UTC.
        #[arg(long)]
        start: Option<String>,
        /// Planned end, UTC.
        #[arg(long)]
        end: Option<String>,
        /// Load the band schedule from a plan file (`nearsky plan --format json`).
        #[arg(long, value_name = "FILE")]
        plan: Option<PathBuf>,
    },
    /// List drills.
    #[command(after_help = "Example:\n  nearsky drill list")]
    List,
    /// Choose the drill new contacts belong to.
    #[command(after_help = "Example:\n  nearsky drill use \"Autumn exercise\"")]
    Use {
        /// The drill's name (`nearsky drill list`).
        name: String,
    },
    /// Move the contacts imported from a file into a drill (after an import made while
    /// another drill was in use); each keeps its previous version with the reason.
    #[command(
        after_help = "Example:\n  nearsky drill move \"Autumn exercise\" --file shelter1.adi --reason \"imported into the wrong drill\""
    )]
    Move {
        /// The drill to move them into (it must exist).
        name: String,
        /// The imported file (its name is what the import recorded).
        #[arg(long, value_name = "FILE")]
        file: PathBuf,
        /// Only contacts now in this drill (default: in any drill).
        #[arg(long, value_name = "DRILL")]
        from: Option<String>,
        /// Why they move (kept in each contact's revision trail).
        #[arg(long)]
        reason: String,
    },
}

#[derive(Debug, Subcommand)]
pub enum StationCommand {
    /// Create or update the own station and use it.
    #[command(
        after_help = "Example:\n  nearsky station set --call Q3NET --grid JN17ga --power 50 --antenna \"80/40 m link dipole\""
    )]
    Set {
        /// The own call sign.
        #[arg(long)]
        call: String,
        /// The station's Maidenhead locator, e.g. JN17ga.
        #[arg(long)]
        grid: String,
        /// The operator at the key, if not the station's own call.
        #[arg(long)]
        operator: Option<String>,
        /// Usual power in W.
        #[arg(long)]
        power: Option<String>,
        /// Antenna, e.g. "80/40 m link dipole, links open for 40 m".
        #[arg(long)]
        antenna: Option<String>,
        /// Transceiver.
        #[arg(long)]
        rig: Option<String>,
    },
    /// Record that the station moved (portable stations do, during a drill).
    #[command(after_help = "Example:\n  nearsky station move --grid JN17gb --time 14:30")]
    Move {
        /// The new locator.
        #[arg(long)]
        grid: String,
        /// When it moved, UTC (default: now).
        #[arg(long)]
        time: Option<String>,
    },
    /// Show the station in use and where it has been.
    #[command(after_help = "Example:\n  nearsky station show")]
    Show,
}

#[derive(Debug, Subcommand)]
pub enum RosterCommand {
    /// Add or update a station of the net.
    #[command(
        after_help = "Example:\n  nearsky roster add Q4SHL --name \"Shelter 1\" --grid JN17wm --role shelter"
    )]
    Add {
        /// The station's call sign.
        call: String,
        /// Tactical name, e.g. "Shelter 2".
        #[arg(long)]
        name: Option<String>,
        /// Its locator, for distance and bearing.
        #[arg(long)]
        grid: Option<String>,
        /// Its part in the net, e.g. shelter, relay.
        #[arg(long)]
        role: Option<String>,
    },
    /// List the roster with distance and bearing from the own station.
    #[command(after_help = "Example:\n  nearsky roster list")]
    List,
}

#[derive(Debug, Args)]
pub struct BackupArgs {
    /// Where to write the copy (must not exist).
    pub path: PathBuf,
}

#[derive(Debug, Args)]
pub struct ImportArgs {
    /// ADIF files (.adi, or .adx/.xml for ADX).
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// The station that logged the records, for files without STATION_CALLSIGN/OPERATOR.
    #[arg(long)]
    pub station: Option<String>,
    /// Put the records in this drill (created if missing).
    #[arg(long)]
    pub drill: Option<String>,
    /// Check everything and report, but store nothing.
    #[arg(long)]
    pub dry_run: bool,
    /// Import the good records of a file that has bad ones, listing the bad ones.
    #[arg(long)]
    pub skip_bad: bool,
}

#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum ExportFormatArg {
    #[default]
    Adi,
    Adx,
    Csv,
}

#[derive(Debug, Args)]
pub struct ExportArgs {
    /// ADI (tagged text), ADX (XML) or CSV.
    #[arg(long, value_enum, default_value_t)]
    pub format: ExportFormatArg,
    /// Only this drill (default: every drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// Only what this station logged (Q3NET includes Q3NET/P): for one operator's main log
    /// from a merged logbook.
    #[arg(long, value_name = "CALL")]
    pub station: Option<String>,
    /// Also export failed attempts (marked QSO_COMPLETE NIL and APP_NEARSKY_OUTCOME none).
    #[arg(long)]
    pub include_attempts: bool,
    /// Output file (default: standard output).
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Overwrite an existing output file.
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum CoverageView {
    Links,
    #[default]
    Hours,
    Rings,
}

/// Output of the review commands.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum ReviewFormat {
    #[default]
    Table,
    Csv,
    Json,
    Md,
}

#[derive(Debug, Args)]
pub struct CoverageArgs {
    /// Drill name (default: the drill in use; `all` for every drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// Only this band.
    #[arg(long)]
    pub band: Option<String>,
    /// Band × hour (hours), link × hour (links) or distance ring × hour (rings).
    #[arg(long, value_enum, default_value_t)]
    pub view: CoverageView,
    /// Width of the UTC hour bins in minutes (must divide 1440).
    #[arg(long, default_value_t = 60)]
    pub bin: u16,
    /// Both sides' records within this many minutes are one contact.
    #[arg(long, default_value_t = 10)]
    pub tolerance: u16,
    /// Sunspot number (12-month smoothed) for the Chapman foE estimate in the evidence.
    #[arg(long)]
    pub sunspots: Option<f64>,
    /// A table for 80 columns, CSV, JSON (stable shapes, see README) or Markdown.
    #[arg(long, value_enum, default_value_t)]
    pub format: ReviewFormat,
}

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// The drill whose evidence to plan from (default: the drill in use; `all` for every
    /// drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// Plan for this date: hours move with sunrise and sunset at the net's centre.
    #[arg(long = "for", value_name = "YYYY-MM-DD")]
    pub for_date: Option<String>,
    /// Fewer attempts than this on a band in an hour: not enough evidence.
    #[arg(long, default_value_t = 4)]
    pub min_attempts: u32,
    /// Width of the UTC hour bins in minutes (must divide 1440).
    #[arg(long, default_value_t = 60)]
    pub bin: u16,
    /// A table for 80 columns, CSV, JSON (stable shapes, see README) or Markdown.
    #[arg(long, value_enum, default_value_t)]
    pub format: ReviewFormat,
}

#[derive(Debug, Args)]
pub struct CrosscheckArgs {
    /// Drill name (default: the drill in use; `all` for every drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// Both sides' records within this many minutes are one contact.
    #[arg(long, default_value_t = 10)]
    pub tolerance: u16,
    /// Text for people, JSON for scripts.
    #[arg(long, value_enum, default_value_t)]
    pub format: TextOrJson,
}

#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Drill name (default: the drill in use; `all` for every drill).
    #[arg(long)]
    pub drill: Option<String>,
    /// The HTML file to write.
    #[arg(short = 'o', long = "output", value_name = "FILE.html")]
    pub output: PathBuf,
    /// Plan the next drill for this date (hours moved with the Sun).
    #[arg(long = "for", value_name = "YYYY-MM-DD")]
    pub for_date: Option<String>,
    /// Overwrite an existing file.
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args)]
pub struct WriterArgs {
    /// How many contacts to add (0: until killed).
    #[arg(long, default_value_t = 0)]
    pub count: u64,
    /// Distinguishes concurrent writers.
    #[arg(long, default_value = "Q1TST")]
    pub call: String,
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
    /// Text for people, JSON for scripts.
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
    /// Text for people, JSON for scripts.
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
