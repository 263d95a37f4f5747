//! Helpers shared by the integration tests: run the real binary and read its output (snapshots are insta's).
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::{Command, Output};

/// The crate's root folder.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The user's documentation as one text: README.md then every file in docs/, so a test can find a shown
/// command's output wherever the guide keeps it.
pub fn user_docs() -> String {
    let mut text = std::fs::read_to_string(root().join("README.md")).expect("README.md");
    let mut pages: Vec<PathBuf> = std::fs::read_dir(root().join("docs"))
        .expect("docs/")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "md"))
        .collect();
    pages.sort();
    for page in pages {
        text.push_str(&std::fs::read_to_string(page).expect("a docs page"));
    }
    text
}

/// Runs `biasfit` with `args` in the crate root.
pub fn biasfit(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_biasfit"))
        .args(args)
        .current_dir(root())
        .env("NO_COLOR", "1")
        .output()
        .expect("the biasfit binary runs")
}

/// Standard output as text.
pub fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// Standard error as text.
pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}
