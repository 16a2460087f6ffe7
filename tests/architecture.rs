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
