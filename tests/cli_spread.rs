//! `biasfit spread` through the real binary: the report is snapshotted, the JSON keeps its contract, a design
//! result is read back, the same seed gives the same output, the SVG is written, every bad input is refused
//! with one line and exit code 2, and the README shows the command's real output.

mod common;
use common::*;
use std::path::PathBuf;

const LINE_DRIVER: [&str; 4] = [
    "spread",
    "examples/line-driver.toml",
    "--use",
    "R1=39k,R2=7k5,RC=2k7,RE=560+39",
];

fn with(extra: &[&'static str]) -> Vec<&'static str> {
    let mut v = LINE_DRIVER.to_vec();
    v.extend_from_slice(extra);
    v
}

fn temp(name: &str) -> PathBuf {
    std::env::temp_dir().join(format!("biasfit-spread-{}-{name}", std::process::id()))
}

#[test]
fn line_driver_report_snapshot() {
    let out = biasfit(&with(&["--runs", "4000"]));
    assert!(out.status.success(), "{}", stderr(&out));
    insta::assert_snapshot!("spread-line-driver", stdout(&out));
}

#[test]
fn json_keeps_the_contract() {
    let out = biasfit(&with(&["--runs", "3000", "--seed", "7", "--json"]));
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let s = &v["stages"][0];
    assert_eq!(s["name"], "line driver");
    for k in ["ic", "vce", "ve", "stiffness"] {
        let pair = s["worst"][k]
            .as_array()
            .unwrap_or_else(|| panic!("worst.{k}"));
        assert_eq!(pair.len(), 2, "worst.{k}");
    }
    let mc = &s["monte_carlo"];
    assert_eq!(
        (mc["runs"].as_u64(), mc["seed"].as_u64()),
        (Some(3000), Some(7))
    );
    for k in ["yield_10", "yield_5"] {
        assert!(mc[k].is_number(), "{k}");
    }
    for q in ["ic", "vce"] {
        assert!(mc[q]["mean"].is_number() && mc[q]["sd"].is_number(), "{q}");
    }
    for k in ["R1", "R2", "RC", "RE", "beta"] {
        assert!(
            s["sensitivity"][k]["ic"].is_number() && s["sensitivity"][k]["vce"].is_number(),
            "{k}"
        );
    }
    // SI base units: the target current is 2 mA, written as 0.002.
    assert!((s["target"]["ic"].as_f64().unwrap() - 0.002).abs() < 1e-12);
}

#[test]
fn the_same_seed_gives_the_same_output() {
    let a = biasfit(&with(&["--runs", "2000", "--seed", "42"]));
    let b = biasfit(&with(&["--runs", "2000", "--seed", "42"]));
    let c = biasfit(&with(&["--runs", "2000", "--seed", "43"]));
    assert_eq!(stdout(&a), stdout(&b));
    assert_ne!(stdout(&a), stdout(&c));
}

#[test]
fn reads_a_design_result_back() {
    let design = biasfit(&[
        "design",
        "examples/two-stage.toml",
        "--stock",
        "stock/hobby-drawer.csv",
        "--json",
    ]);
    assert!(design.status.success(), "{}", stderr(&design));
    let path = temp("two-stage.json");
    std::fs::write(&path, &design.stdout).unwrap();
    let p = path.to_string_lossy().into_owned();
    let out = biasfit(&[
        "spread",
        "examples/two-stage.toml",
        "--result",
        &p,
        "--runs",
        "2000",
        "--json",
    ]);
    let _ = std::fs::remove_file(&path);
    assert!(out.status.success(), "{}", stderr(&out));
    let d: serde_json::Value = serde_json::from_slice(&design.stdout).unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["stages"].as_array().unwrap().len(), 2);
    for k in 0..2 {
        // The stages are built from exactly the parts the design chose.
        assert_eq!(
            v["stages"][k]["slots"], d["stages"][k]["slots"],
            "stage {k}"
        );
        assert_eq!(v["stages"][k]["name"], d["stages"][k]["name"]);
    }
}

#[test]
fn writes_the_histograms_and_the_load_line_with_its_cloud() {
    let dir = temp("drawings");
    let d = dir.to_string_lossy().into_owned();
    let args: Vec<&str> = LINE_DRIVER
        .iter()
        .copied()
        .chain(["--runs", "1000", "--svg", &d])
        .collect();
    let out = biasfit(&args);
    assert!(out.status.success(), "{}", stderr(&out));
    let svg = std::fs::read_to_string(dir.join("histograms.svg")).unwrap();
    // The first line marks the file as biasfit's (so a later run may replace it without a question).
    let svg = svg
        .strip_prefix("<!-- written by biasfit -->\n")
        .expect("the mark");
    assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    assert!(svg.contains("line driver: IC of 1\u{2009}000 builds"));
    let load_line = std::fs::read_to_string(dir.join("line-driver-load-line.svg")).unwrap();
    // The cloud: one mark per drawn build, far more marks than a plain load line has.
    let plain = biasfit(&[
        "check",
        "examples/line-driver.toml",
        "--use",
        "R1=39k,R2=7k5,RC=2k7,RE=560+39",
        "--svg",
        &format!("{d}/plain"),
    ]);
    assert!(plain.status.success(), "{}", stderr(&plain));
    let without = std::fs::read_to_string(dir.join("plain/line-driver-load-line.svg")).unwrap();
    assert!(load_line.matches("<circle").count() > without.matches("<circle").count() + 500);
    assert!(dir.join("line-driver-schematic.svg").exists());
    let _ = std::fs::remove_dir_all(&dir);
    // An unwritable folder is an output failure: exit 4, one line.
    let args: Vec<&str> = LINE_DRIVER
        .iter()
        .copied()
        .chain(["--runs", "10", "--svg", "/proc/no-such-dir"])
        .collect();
    let out = biasfit(&args);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    assert_eq!(stderr(&out).lines().count(), 1);
}

#[test]
fn bad_input_is_refused_in_one_line() {
    let bad_result = temp("bad.json");
    std::fs::write(
        &bad_result,
        "{\"stages\": [{\"name\": \"line driver\", \"slots\": {}}]}",
    )
    .unwrap();
    let bad = bad_result.to_string_lossy().into_owned();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            with(&["--temp", "70..-20"]),
            "--temp 70..-20: the lower end comes first",
        ),
        (with(&["--temp", "hot"]), "expected a range in °C as LO..HI"),
        (
            with(&["--runs", "0"]),
            "invalid value '0' for '--runs <N>': expected a number of builds",
        ),
        (with(&["--tolerance", "7"]), "--tolerance"),
        (with(&["--dist", "lognormal"]), "lognormal"),
        (
            vec![
                "spread",
                "examples/line-driver.toml",
                "--use",
                "R1=39k,R2=7k5,RC=2k7",
            ],
            "no value for RE",
        ),
        (
            vec![
                "spread",
                "examples/line-driver.toml",
                "--use",
                "R1=39k,R2=7k5,RC=2k7,RE=56x",
            ],
            "--use RE",
        ),
        (vec!["spread", "examples/line-driver.toml"], "--use"),
        (
            vec![
                "spread",
                "examples/line-driver.toml",
                "--use",
                "R1=39k",
                "--result",
                "x.json",
            ],
            "cannot be used with",
        ),
        (
            vec![
                "spread",
                "examples/line-driver.toml",
                "--result",
                "missing.json",
            ],
            "missing.json: cannot read the design result",
        ),
        (
            vec!["spread", "examples/line-driver.toml", "--result", &bad],
            "no network for R1, R2, RC, RE",
        ),
        (
            vec![
                "spread",
                "examples/two-stage.toml",
                "--use",
                "RC=4k7,RE=6k8,RB=68k",
            ],
            "pick the one the --use values are for with --stage",
        ),
        (
            vec!["spread", "examples/none.toml", "--use", "R1=1k"],
            "examples/none.toml",
        ),
    ];
    for (args, want) in cases {
        let out = biasfit(&args);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(want), "{args:?}: wanted {want:?} in {err}");
        // Clap's refusals are folded into one line like biasfit's own.
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        assert!(err.starts_with("error: "), "{err}");
    }
    let _ = std::fs::remove_file(&bad_result);
}

#[test]
fn readme_shows_real_output() {
    let readme = user_docs();
    let args = with(&[]);
    let out = stdout(&biasfit(&args));
    let block = format!("$ biasfit {}\n{out}```", args.join(" "));
    assert!(
        readme.contains(&block),
        "README's output of biasfit {} is stale; it is now:\n{out}",
        args.join(" ")
    );
}

/// Issue 17, item 6: the histograms have a count axis with headroom above the tallest bar, the combined
/// yield heads each row (and each stage of the build sheet) rather than sitting in one chart's title, and a
/// plotted sample of a larger run says it is a sample.
#[test]
fn drawings_have_count_axes_the_yield_up_front_and_say_when_they_sample() {
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("spread-drawings-17");
    let _ = std::fs::remove_dir_all(&dir);
    let html = dir.join("sheet.html");
    let svg = dir.join("svg");
    let out = biasfit(&[
        "spread",
        "examples/line-driver.toml",
        "--use",
        "R1=39k,R2=7k5,RC=2k7,RE=560+39",
        "--runs",
        "20000",
        "--svg",
        svg.to_str().unwrap(),
        "--html",
        html.to_str().unwrap(),
        "--json",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let mc = &v["stages"][0]["monte_carlo"];
    let yield_10 = mc["yield_10"].as_f64().unwrap();
    let hist = std::fs::read_to_string(svg.join("histograms.svg")).unwrap();
    let doc = roxmltree::Document::parse(&hist).expect("well-formed SVG");
    // The heading of the row carries the combined yield, as the JSON has it.
    let heading = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("heading"))
        .and_then(|n| n.text())
        .expect("a row heading");
    let shown = format!("{} %", biasfit::notation::trim_number(100.0 * yield_10, 3));
    assert!(
        heading.contains(&format!(
            "IC and VCE both within ±10 % of target in {shown} of 20\u{2009}000 builds"
        )),
        "{heading}"
    );
    // Neither chart title carries it any more.
    assert!(!hist.contains("VCE; both within"), "{hist}");
    // Each chart has a count axis labelled "builds" whose top is above its tallest bar.
    assert_eq!(hist.matches(">builds</text>").count(), 2);
    let counts: Vec<u64> = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("count"))
        .map(|n| n.text().unwrap().replace('\u{2009}', "").parse().unwrap())
        .collect();
    assert_eq!(counts.len(), 6, "three ticks a chart");
    let bars: Vec<u64> = doc
        .descendants()
        .filter(|n| n.has_tag_name("title"))
        .filter_map(|n| n.text()?.rsplit(": ").next()?.parse().ok())
        .collect();
    let tallest = *bars.iter().max().unwrap();
    let top = *counts.iter().max().unwrap();
    assert!(
        top as f64 >= 1.1 * tallest as f64,
        "headroom: top {top}, tallest bar {tallest}"
    );
    // The load line plots 2 000 of the 20 000 builds and says so.
    let line = std::fs::read_to_string(svg.join("line-driver-load-line.svg")).unwrap();
    assert!(
        line.contains("a sample of 2\u{2009}000 of 20\u{2009}000 simulated builds"),
        "{line}"
    );
    let sheet = std::fs::read_to_string(&html).unwrap();
    assert!(sheet.contains("a sample of 2\u{2009}000 of 20\u{2009}000 simulated builds"));
    assert!(sheet.contains(&format!(
        "IC and VCE both within ±10 % of target in {shown}"
    )));
    // A run small enough to plot whole is not called a sample.
    let out = biasfit(&[
        "spread",
        "examples/line-driver.toml",
        "--use",
        "R1=39k,R2=7k5,RC=2k7,RE=560+39",
        "--runs",
        "500",
        "--svg",
        svg.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let line = std::fs::read_to_string(svg.join("line-driver-load-line.svg")).unwrap();
    assert!(
        line.contains("Monte Carlo: 500 simulated builds") && !line.contains("sample"),
        "{line}"
    );
}
