//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::PathBuf;

/// Path of a file under `fixtures/`.
pub fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

/// A fixture CSV as rows of named columns. The first line (`# ...`) is the provenance line and
/// is returned separately, so tests can assert which reference they use.
pub struct Csv {
    pub provenance: String,
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
}

impl Csv {
    pub fn read(name: &str) -> Csv {
        let text = std::fs::read_to_string(fixture(name)).unwrap();
        let mut lines = text.lines();
        let provenance = lines.next().unwrap().to_string();
        assert!(
            provenance.starts_with('#'),
            "{name} must start with its provenance line"
        );
        let header = lines
            .next()
            .unwrap()
            .split(',')
            .map(str::to_string)
            .collect();
        let rows = lines
            .filter(|l| !l.trim().is_empty())
            .map(split_csv)
            .collect();
        Csv {
            provenance,
            header,
            rows,
        }
    }

    pub fn col(&self, name: &str) -> usize {
        self.header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no column {name}"))
    }

    /// Rows as (column name → value) lookups.
    pub fn records(&self) -> Vec<Record<'_>> {
        self.rows
            .iter()
            .map(|r| Record { csv: self, row: r })
            .collect()
    }
}

pub struct Record<'a> {
    csv: &'a Csv,
    row: &'a [String],
}

impl Record<'_> {
    pub fn get(&self, name: &str) -> &str {
        self.row.get(self.csv.col(name)).map_or("", String::as_str)
    }
    pub fn f64(&self, name: &str) -> f64 {
        self.get(name)
            .parse()
            .unwrap_or_else(|_| panic!("{name} = `{}`", self.get(name)))
    }
    pub fn opt_f64(&self, name: &str) -> Option<f64> {
        let v = self.get(name);
        if v.is_empty() {
            None
        } else {
            Some(self.f64(name))
        }
    }
}

/// Splits one CSV line; handles double-quoted fields (the fixtures quote only notes).
fn split_csv(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    for ch in line.chars() {
        match ch {
            '"' => quoted = !quoted,
            ',' if !quoted => out.push(std::mem::take(&mut cur)),
            c => cur.push(c),
        }
    }
    out.push(cur);
    out
}

/// Runs the nearsky binary with arguments and extra environment variables: (exit code,
/// stdout, stderr).
pub fn nearsky_env(args: &[&str], envs: &[(&str, &str)]) -> (i32, String, String) {
    let mut c = std::process::Command::new(env!("CARGO_BIN_EXE_nearsky"));
    c.args(args);
    for (k, v) in envs {
        c.env(k, v);
    }
    let out = c.output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Runs the nearsky binary: (exit code, stdout, stderr).
pub fn nearsky(args: &[&str]) -> (i32, String, String) {
    nearsky_env(args, &[])
}
