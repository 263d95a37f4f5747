//! Issue 16: the main job's text output as insta snapshots, so that a restructuring of the pipeline that was
//! meant to change nothing shows every changed byte. `design` and `order` on the shipped examples with the
//! demo stocks; the solver's elapsed time is the one thing that differs from run to run, and is masked.
//! `INSTA_UPDATE=always cargo test --release --test main_job` rewrites the snapshots after a deliberate
//! change. The README's run of the main job must be the same output, time aside.

mod common;
use common::*;

/// The output with the solver's elapsed time ("200 variants in 0.01 s") masked as `T s`.
fn masked(text: &str) -> String {
    text.lines()
        .map(
            |l| match (l.strip_prefix("solver: "), l.find(" in "), l.find(" s")) {
                (Some(_), Some(i), Some(j)) if j > i => format!("{} in T{}", &l[..i], &l[j..]),
                _ => l.to_string(),
            },
        )
        .collect::<Vec<_>>()
        .join("\n")
}

/// Runs a command that must succeed (exit 0, or 1 when it ran and a check failed) and returns its masked
/// text.
fn text(args: &[&str]) -> String {
    let out = biasfit(args);
    assert!(
        matches!(out.status.code(), Some(0 | 1)),
        "{args:?}: {}",
        stderr(&out)
    );
    masked(&stdout(&out))
}

const DEMOS: [&str; 5] = [
    "line-driver",
    "two-stage",
    "sensor-preamp",
    "pnp-stage",
    "split-emitter",
];

#[test]
fn design_output_of_the_demos() {
    for demo in DEMOS {
        let file = format!("examples/{demo}.toml");
        for stock in ["hobby-drawer", "e12-kit"] {
            let stock_file = format!("stock/{stock}.csv");
            insta::assert_snapshot!(
                format!("design-{demo}-{stock}"),
                text(&["design", &file, "--stock", &stock_file])
            );
        }
    }
}

#[test]
fn order_output_of_the_demos() {
    for demo in DEMOS {
        let file = format!("examples/{demo}.toml");
        insta::assert_snapshot!(
            format!("order-{demo}"),
            text(&[
                "order",
                &file,
                "--stock",
                "stock/hobby-drawer.csv",
                "--catalog",
                "stock/demo-catalogue.csv",
                "--copies",
                "3",
            ])
        );
    }
}

#[test]
fn the_readme_runs_the_main_job_as_it_is() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let shown = "$ biasfit design examples/line-driver.toml --stock stock/hobby-drawer.csv\n";
    let start = readme.find(shown).expect("the README runs the main job") + shown.len();
    let end = readme[start..].find("```").unwrap() + start;
    let out = text(&[
        "design",
        "examples/line-driver.toml",
        "--stock",
        "stock/hobby-drawer.csv",
    ]);
    assert_eq!(
        masked(&readme[start..end]).trim_end(),
        out.trim_end(),
        "the README's run of the main job is stale"
    );
}

#[test]
fn the_mask_hides_only_the_time() {
    assert_eq!(
        masked("a 0.5 s\nsolver: 200 variants in 0.01 s, optimal"),
        "a 0.5 s\nsolver: 200 variants in T s, optimal"
    );
}
