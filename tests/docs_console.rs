//! Issue 16: every ```console block of the README and of docs/*.md is run by trycmd against the real binary,
//! and its output must be the one shown, so that the user's guide cannot drift from the tool. (Blocks marked
//! ```text are not run; the tests beside each command check those whose output holds nothing that changes
//! from run to run.) `TRYCMD=overwrite cargo test --release --test docs_console` rewrites the shown output
//! after a deliberate change.
//!
//! The commands run in a scratch folder that links the repository's `examples/` and `stock/`, so that the
//! paths the guide uses resolve and a block that writes a file (`biasfit new led-string panel.toml`) writes
//! it there, afresh on every run, never into the checkout.

use std::path::{Path, PathBuf};

#[test]
fn the_console_blocks_of_the_docs_show_real_output() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let scratch = Path::new(env!("CARGO_TARGET_TMPDIR")).join("docs-console");
    let _ = std::fs::remove_dir_all(&scratch);
    std::fs::create_dir_all(&scratch).unwrap();
    for folder in ["examples", "stock"] {
        std::os::unix::fs::symlink(root.join(folder), scratch.join(folder)).unwrap();
    }
    // The only test in this binary, so that moving the process's folder affects nothing else.
    std::env::set_current_dir(&scratch).unwrap();
    trycmd::TestCases::new()
        .register_bin("biasfit", Path::new(env!("CARGO_BIN_EXE_biasfit")))
        .env("NO_COLOR", "1")
        .case(root.join("README.md"))
        .case(root.join("docs/*.md"))
        .run();
}
