//! The domain core stays pure: no storage, terminal, file system, network or clock.

use std::path::Path;

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|e| e == "rs") {
            out.push(p);
        }
    }
}

#[test]
fn the_domain_names_no_io_terminal_or_clock() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src/domain");
    let mut files = Vec::new();
    rust_files(&root, &mut files);
    assert!(files.len() >= 10, "found {} files", files.len());
    let forbidden = [
        "rusqlite",
        "ratatui",
        "crossterm",
        "std::fs",
        "std::net",
        "std::io",
        "Utc::now",
        "Local::now",
        "SystemTime",
        "Instant::now",
        "new_v4",
        "std::env",
    ];
    for f in files {
        let text = std::fs::read_to_string(&f).unwrap();
        for word in forbidden {
            assert!(!text.contains(word), "{} mentions `{word}`", f.display());
        }
    }
}

#[test]
fn sqlite_lives_in_the_store_and_the_terminal_in_the_tui() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&root, &mut files);
    for f in files {
        let rel = f
            .strip_prefix(&root)
            .unwrap()
            .to_string_lossy()
            .into_owned();
        let text = std::fs::read_to_string(&f).unwrap();
        if !rel.starts_with("store") {
            assert!(
                !text.contains("rusqlite"),
                "{rel} names rusqlite outside the store"
            );
        }
        if !rel.starts_with("tui") {
            assert!(
                !text.contains("ratatui") && !text.contains("crossterm"),
                "{rel} names the terminal outside the tui"
            );
        }
    }
}
