//! The optional configuration file: own call, locator, usual power and the duplicate window.
//!
//! `config.toml` in the platform's config directory (`~/.config/nearsky/` on Linux), or the
//! file `NEARSKY_CONFIG` names. Command-line flags take precedence over it. Example:
//!
//! ```toml
//! call = "Q3NET"
//! locator = "JN17ga"
//! power_w = 50
//! duplicate_window_minutes = 10
//! ```

use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::domain::{Callsign, Locator, Power};

/// The checked configuration; every entry optional.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Config {
    pub call: Option<Callsign>,
    pub locator: Option<Locator>,
    pub power: Option<Power>,
    pub duplicate_window_minutes: Option<u32>,
    /// Where it was read from (`None`: no file).
    pub source: Option<PathBuf>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Raw {
    call: Option<String>,
    locator: Option<String>,
    power_w: Option<f64>,
    duplicate_window_minutes: Option<u32>,
}

/// Why the configuration file was refused.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    #[error("{path}: {why}")]
    Read { path: PathBuf, why: String },
    #[error("{path}: {field}: {why}")]
    Field {
        path: PathBuf,
        field: &'static str,
        why: String,
    },
}

/// The file to read: `NEARSKY_CONFIG`, else the platform's config directory.
pub fn default_path() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os("NEARSKY_CONFIG") {
        return Some(PathBuf::from(p));
    }
    directories::ProjectDirs::from("", "", "nearsky").map(|d| d.config_dir().join("config.toml"))
}

/// Reads the configuration; a missing file is an empty configuration.
pub fn load(path: Option<&Path>) -> Result<Config, ConfigError> {
    let Some(path) = path else {
        return Ok(Config::default());
    };
    let text = match std::fs::read_to_string(path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Config::default()),
        Err(e) => {
            return Err(ConfigError::Read {
                path: path.to_path_buf(),
                why: e.to_string(),
            });
        }
    };
    let raw: Raw = toml::from_str(&text).map_err(|e| ConfigError::Read {
        path: path.to_path_buf(),
        why: e.to_string().trim().to_string(),
    })?;
    let field = |field: &'static str, why: String| ConfigError::Field {
        path: path.to_path_buf(),
        field,
        why,
    };
    Ok(Config {
        call: raw
            .call
            .as_deref()
            .map(Callsign::parse)
            .transpose()
            .map_err(|e| field("call", e.to_string()))?,
        locator: raw
            .locator
            .as_deref()
            .map(Locator::parse)
            .transpose()
            .map_err(|e| field("locator", e.to_string()))?,
        power: raw
            .power_w
            .map(Power::from_watts)
            .transpose()
            .map_err(|e| field("power_w", e.to_string()))?,
        duplicate_window_minutes: raw.duplicate_window_minutes,
        source: Some(path.to_path_buf()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_valid_file_and_a_missing_one() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("config.toml");
        std::fs::write(
            &p,
            "call = \"q3net\"\nlocator = \"jn17ga\"\npower_w = 20\nduplicate_window_minutes = 5\n",
        )
        .unwrap();
        let c = load(Some(&p)).unwrap();
        assert_eq!(c.call.unwrap().as_str(), "Q3NET");
        assert_eq!(c.locator.unwrap().as_str(), "JN17ga");
        assert_eq!(c.power.unwrap().watts(), 20.0);
        assert_eq!(c.duplicate_window_minutes, Some(5));
        assert_eq!(
            load(Some(&dir.path().join("none.toml"))).unwrap(),
            Config::default()
        );
    }

    #[test]
    fn bad_entries_name_the_file_the_field_and_the_value() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("config.toml");
        std::fs::write(&p, "locator = \"JN58ty\"\n").unwrap();
        let e = load(Some(&p)).unwrap_err().to_string();
        assert!(e.contains("config.toml: locator: locator `JN58ty`"), "{e}");
        std::fs::write(&p, "colour = \"red\"\n").unwrap();
        let e = load(Some(&p)).unwrap_err().to_string();
        assert!(e.contains("colour"), "{e}");
    }
}
