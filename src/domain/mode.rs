//! Modes and submodes, from the ADIF 3.1.7 Mode and Submode enumerations.
//!
//! The table is the standard's own (`tables/adif-modes.csv`, copied from the ADIF export). A
//! mode is one of the 49 current MODE values; a submode must be one the table lists for that
//! mode. Import-only MODE values (`PSK31`) become their MODE/SUBMODE pair (`PSK`/`PSK31`), and
//! a submode typed where a mode is expected (`USB`) finds its mode (`SSB`).

use std::collections::HashMap;
use std::fmt;
use std::sync::LazyLock;

use serde::{Deserialize, Serialize};

const TABLE_CSV: &str = include_str!("tables/adif-modes.csv");

struct ModeTable {
    modes: Vec<&'static str>,
    import_only: HashMap<&'static str, (&'static str, &'static str)>,
    submodes: HashMap<&'static str, Vec<&'static str>>,
}

static TABLE: LazyLock<ModeTable> = LazyLock::new(|| {
    let mut t = ModeTable {
        modes: Vec::new(),
        import_only: HashMap::new(),
        submodes: HashMap::new(),
    };
    for line in TABLE_CSV.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let cols: Vec<&'static str> = line.split(',').collect();
        let [
            kind,
            mode,
            submode,
            import_only,
            export_mode,
            export_submode,
            ..,
        ] = cols.as_slice()
        else {
            continue;
        };
        match (*kind, *import_only) {
            ("mode", "N") => t.modes.push(mode),
            ("mode", "Y") => {
                t.import_only.insert(mode, (export_mode, export_submode));
            }
            ("submode", _) => {
                let list = t.submodes.entry(mode).or_default();
                if !list.contains(submode) {
                    list.push(submode);
                }
            }
            _ => {}
        }
    }
    t
});

/// Why a mode or submode was refused.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ModeError {
    #[error("mode is empty (examples: SSB, USB, CW, FT8, OLIVIA, PSK31)")]
    Empty,
    #[error("mode `{0}` is not an ADIF mode (examples: SSB, USB, CW, FT8, OLIVIA, PSK31)")]
    Unknown(String),
    #[error("submode `{submode}` is not a submode of {mode} (known: {known})")]
    UnknownSubmode {
        mode: String,
        submode: String,
        known: String,
    },
    #[error("mode {mode} has no submodes, but submode `{submode}` was given")]
    NoSubmodes { mode: String, submode: String },
    #[error("mode `{given}` means {mode}/{implied}, which conflicts with submode `{submode}`")]
    Conflict {
        given: String,
        mode: String,
        implied: String,
        submode: String,
    },
}

/// An ADIF mode with an optional submode, e.g. SSB/USB or FT8.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Mode {
    mode: String,
    submode: Option<String>,
}

impl Mode {
    /// Checks a mode and optional submode against the ADIF tables (case-insensitive).
    pub fn new(mode: &str, submode: Option<&str>) -> Result<Self, ModeError> {
        // The same few modes come back for every record of a log: remember the answers.
        thread_local! {
            static SEEN: std::cell::RefCell<HashMap<(String, Option<String>), Mode>> = std::cell::RefCell::new(HashMap::new());
        }
        let hit = SEEN.with(|m| {
            m.borrow()
                .iter()
                .find(|((a, b), _)| a == mode && b.as_deref() == submode)
                .map(|(_, v)| v.clone())
        });
        if let Some(m) = hit {
            return Ok(m);
        }
        let checked = Self::check(mode, submode)?;
        SEEN.with(|m| {
            let mut m = m.borrow_mut();
            if m.len() < 64 {
                m.insert(
                    (mode.to_string(), submode.map(str::to_string)),
                    checked.clone(),
                );
            }
        });
        Ok(checked)
    }

    fn check(mode: &str, submode: Option<&str>) -> Result<Self, ModeError> {
        let given = mode.trim().to_ascii_uppercase();
        let submode = submode.map(str::trim).filter(|s| !s.is_empty());
        if given.is_empty() {
            return Err(ModeError::Empty);
        }
        let t = &*TABLE;
        let (mode, implied): (&str, Option<&str>) =
            if let Some(m) = t.modes.iter().find(|m| **m == given) {
                (m, None)
            } else if let Some((m, s)) = t.import_only.get(given.as_str()) {
                (m, Some(s))
            } else if let Some((m, s)) = find_submode_anywhere(&given) {
                (m, Some(s))
            } else {
                return Err(ModeError::Unknown(mode.trim().to_string()));
            };
        let chosen = match (implied, submode) {
            (Some(i), Some(s)) if !i.eq_ignore_ascii_case(s) => {
                return Err(ModeError::Conflict {
                    given,
                    mode: mode.to_string(),
                    implied: i.to_string(),
                    submode: s.to_string(),
                });
            }
            (Some(i), _) => Some(i),
            (None, s) => s,
        };
        let submode = match chosen {
            None => None,
            Some(s) => {
                let list = t.submodes.get(mode).map(Vec::as_slice).unwrap_or(&[]);
                if list.is_empty() {
                    return Err(ModeError::NoSubmodes {
                        mode: mode.to_string(),
                        submode: s.to_string(),
                    });
                }
                match list.iter().find(|k| k.eq_ignore_ascii_case(s)) {
                    Some(k) => Some((*k).to_string()),
                    None => {
                        return Err(ModeError::UnknownSubmode {
                            mode: mode.to_string(),
                            submode: s.to_string(),
                            known: abbreviate(list),
                        });
                    }
                }
            }
        };
        Ok(Self {
            mode: mode.to_string(),
            submode,
        })
    }

    /// Parses what an operator types: `USB`, `ssb`, `FT8`, `OLIVIA 8/250`, or `SSB/USB`.
    pub fn parse(text: &str) -> Result<Self, ModeError> {
        match text.split_once('/') {
            Some((m, s)) if TABLE.modes.iter().any(|k| k.eq_ignore_ascii_case(m.trim())) => {
                Self::new(m, Some(s))
            }
            _ => Self::new(text, None),
        }
    }

    /// The ADIF MODE value, upper case.
    pub fn mode(&self) -> &str {
        &self.mode
    }

    /// The ADIF SUBMODE value as the table spells it.
    pub fn submode(&self) -> Option<&str> {
        self.submode.as_deref()
    }

    /// The short name an operator uses: the submode when there is one (`USB`), else the mode.
    pub fn short(&self) -> &str {
        self.submode.as_deref().unwrap_or(&self.mode)
    }

    /// The mode as an operator types it into a form: the short name, unless that would read
    /// back as another mode; then `MODE/SUBMODE`.
    pub fn as_typed(&self) -> String {
        let short = self.short();
        if Mode::parse(short).as_ref() == Ok(self) {
            short.to_string()
        } else {
            self.to_string()
        }
    }
}

fn find_submode_anywhere(upper: &str) -> Option<(&'static str, &'static str)> {
    let mut found = TABLE
        .submodes
        .iter()
        .flat_map(|(m, subs)| subs.iter().map(move |s| (*m, *s)))
        .filter(|(_, s)| s.eq_ignore_ascii_case(upper));
    let first = found.next()?;
    // A submode name listed under two modes would be ambiguous; none is in ADIF 3.1.7.
    found.next().is_none().then_some(first)
}

fn abbreviate(list: &[&str]) -> String {
    if list.len() <= 8 {
        list.join(", ")
    } else {
        format!("{}, … ({} in all)", list[..8].join(", "), list.len())
    }
}

impl fmt::Display for Mode {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.submode {
            Some(s) => write!(f, "{}/{}", self.mode, s),
            None => f.write_str(&self.mode),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_table_has_every_current_mode() {
        assert_eq!(
            TABLE.modes.len(),
            49,
            "ADIF 3.1.7 lists 49 current MODE values"
        );
        assert_eq!(TABLE.import_only.len(), 42, "and 42 import-only ones");
    }

    #[test]
    fn hf_emergency_modes_are_accepted() {
        for m in [
            "SSB", "CW", "AM", "FM", "RTTY", "PSK", "MFSK", "OLIVIA", "FT8", "PKT", "ARDOP", "MT63",
        ] {
            assert_eq!(Mode::parse(m).unwrap().mode(), m);
        }
        let usb = Mode::new("ssb", Some("usb")).unwrap();
        assert_eq!(
            (usb.mode(), usb.submode(), usb.short()),
            ("SSB", Some("USB"), "USB")
        );
        assert_eq!(usb.to_string(), "SSB/USB");
        // In a form: the short name, which reads back as the same mode (ADIF 3.1.7 lists
        // USB under SSB only).
        assert_eq!(usb.as_typed(), "USB");
        assert_eq!(Mode::parse(&usb.as_typed()).unwrap(), usb);
        assert_eq!(Mode::parse("CW").unwrap().as_typed(), "CW");
    }

    #[test]
    fn a_submode_alone_finds_its_mode() {
        let m = Mode::parse("lsb").unwrap();
        assert_eq!((m.mode(), m.submode()), ("SSB", Some("LSB")));
        let m = Mode::parse("VARA HF").unwrap();
        assert_eq!((m.mode(), m.submode()), ("DYNAMIC", Some("VARA HF")));
        let m = Mode::parse("olivia 8/250").unwrap();
        assert_eq!((m.mode(), m.submode()), ("OLIVIA", Some("OLIVIA 8/250")));
        let m = Mode::parse("SSB/USB").unwrap();
        assert_eq!(m.submode(), Some("USB"));
    }

    #[test]
    fn import_only_modes_become_mode_and_submode() {
        let m = Mode::new("PSK31", None).unwrap();
        assert_eq!((m.mode(), m.submode()), ("PSK", Some("PSK31")));
        let m = Mode::new("C4FM", None).unwrap();
        assert_eq!((m.mode(), m.submode()), ("DIGITALVOICE", Some("C4FM")));
    }

    #[test]
    fn bad_modes_and_submodes_name_the_value() {
        assert_eq!(
            Mode::parse("PACKET").unwrap_err().to_string(),
            "mode `PACKET` is not an ADIF mode (examples: SSB, USB, CW, FT8, OLIVIA, PSK31)"
        );
        assert_eq!(
            Mode::new("SSB", Some("FT8")).unwrap_err().to_string(),
            "submode `FT8` is not a submode of SSB (known: LSB, USB)"
        );
        assert_eq!(
            Mode::new("FT8", Some("FT4")).unwrap_err().to_string(),
            "mode FT8 has no submodes, but submode `FT4` was given"
        );
        assert!(
            Mode::new("PSK31", Some("PSK63"))
                .unwrap_err()
                .to_string()
                .contains("conflicts")
        );
        assert_eq!(Mode::parse(" ").unwrap_err(), ModeError::Empty);
    }

    #[test]
    fn the_ten_extra_psk_names_are_accepted() {
        // propagation of the ADIF quirk described in the ADIF sheet §6.5
        assert!(Mode::new("PSK", Some("PSK1000R")).is_ok());
    }
}
