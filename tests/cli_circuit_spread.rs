//! Issue 12, item 4: `biasfit spread` on circuits, through the real binary. The Monte Carlo is held to the
//! uniform distribution's moments, the worst case to the resistor's band, and the sensitivities to the
//! exponent of a power law; a seed repeats its builds exactly.

mod common;
use common::*;
use serde_json::Value;

/// A 2 mA source into one slot: the node's voltage is I·R, so every statistic is known in closed form.
const SOURCE: &str = "[[circuit]]\nname = \"sense\"\n\
[[circuit.part]]\nname = \"I1\"\nkind = \"current-source\"\nbetween = [\"gnd\", \"a\"]\namps = \"2mA\"\n\
[[circuit.part]]\nname = \"R1\"\nkind = \"resistor\"\nbetween = [\"a\", \"gnd\"]\n\
[[circuit.target]]\nnode = \"a\"\nvolts = 6.6\n";

fn temp_file(name: &str, text: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("biasfit-cspread-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let f = dir.join(name);
    std::fs::write(&f, text).unwrap();
    f
}

fn spread(args: &[&str]) -> Value {
    let mut all = vec!["spread"];
    all.extend_from_slice(args);
    all.push("--json");
    let out = biasfit(&all);
    assert_eq!(out.status.code(), Some(0), "{args:?}: {}", stderr(&out));
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn the_monte_carlo_has_the_uniform_distributions_moments() {
    let f = temp_file("source.toml", SOURCE);
    let f = f.to_str().unwrap();
    let v = spread(&[
        f,
        "--use",
        "R1=3k3",
        "--tolerance",
        "10%",
        "--runs",
        "20000",
    ]);
    let c = &v["circuits"][0];
    assert_eq!(c["name"].as_str(), Some("sense"));
    let t = &c["spread"]["targets"][0];
    let nominal = 0.002 * 3300.0;
    assert!((t["nominal"].as_f64().unwrap() - nominal).abs() < 1e-9);
    // R uniform on ±10 %: V = I·R is uniform on nominal·(1 ± 0.1), so its mean is the nominal and its
    // standard deviation nominal·0.1/√3 (the uniform distribution's moments: (b − a)/√12; NIST/SEMATECH
    // e-Handbook of Statistical Methods, §1.3.6.6.2, from memory). Four standard errors of each estimate.
    let n = 20_000.0_f64;
    let sd = nominal * 0.1 / 3f64.sqrt();
    let mc = &t["monte_carlo"];
    assert!(
        (mc["mean"].as_f64().unwrap() - nominal).abs() < 4.0 * sd / n.sqrt(),
        "{mc}"
    );
    // The sample sd of a uniform has a standard error of about sd·√(0.8/n) (kurtosis 1.8).
    assert!(
        (mc["sd"].as_f64().unwrap() - sd).abs() < 4.0 * sd * (0.8 / n).sqrt(),
        "{mc}"
    );
    assert!(
        mc["min"].as_f64().unwrap() >= nominal * 0.9
            && mc["max"].as_f64().unwrap() <= nominal * 1.1
    );
    // The target is 6.6 V = nominal: half the band lies within ±5 %, all of it within ±10 %.
    let p5 = t["within_5"].as_f64().unwrap();
    assert!((p5 - 0.5).abs() < 4.0 * (0.25 / n).sqrt(), "{p5}");
    assert_eq!(t["within_10"].as_f64(), Some(1.0));
    assert_eq!(c["spread"]["yield_10"].as_f64(), Some(1.0));
    // The worst case is the band's ends; V ∝ R, so the sensitivity is exactly 1.
    let w = t["worst"].as_array().unwrap();
    assert!((w[0].as_f64().unwrap() - nominal * 0.9).abs() < 1e-9);
    assert!((w[1].as_f64().unwrap() - nominal * 1.1).abs() < 1e-9);
    let s = &c["spread"]["sensitivities"][0];
    assert_eq!(s["part"].as_str(), Some("R1"));
    assert!((s["effect"][0].as_f64().unwrap() - 1.0).abs() < 1e-6, "{s}");
}

#[test]
fn a_seed_repeats_its_builds_and_another_seed_does_not() {
    let args = [
        "examples/starters/follower.toml",
        "--use",
        "R1=9k1,R2=10k",
        "--runs",
        "3000",
    ];
    let a = spread(&args);
    let b = spread(&args);
    assert_eq!(a, b);
    let mut other = args.to_vec();
    other.extend(["--seed", "7"]);
    let c = spread(&other);
    assert_ne!(
        a["circuits"][0]["spread"]["targets"][0]["monte_carlo"],
        c["circuits"][0]["spread"]["targets"][0]["monte_carlo"]
    );
}

#[test]
fn the_worst_case_brackets_every_build_of_a_monotonic_circuit() {
    // The follower's output rises with R2 and falls with R1 and RL's share: the corner the signs choose
    // is the true extreme, so no random build lies outside it.
    let v = spread(&[
        "examples/starters/follower.toml",
        "--use",
        "R1=9k1,R2=10k",
        "--runs",
        "5000",
    ]);
    let t = &v["circuits"][0]["spread"]["targets"][0];
    let (lo, hi) = (
        t["worst"][0].as_f64().unwrap(),
        t["worst"][1].as_f64().unwrap(),
    );
    let (min, max) = (
        t["monte_carlo"]["min"].as_f64().unwrap(),
        t["monte_carlo"]["max"].as_f64().unwrap(),
    );
    assert!(
        lo <= min && max <= hi,
        "worst {lo}..{hi}, builds {min}..{max}"
    );
    // The check object rides along: the same keys `check` gives.
    let c = &v["circuits"][0];
    for key in ["nodes", "parts", "targets", "error", "checks", "spread"] {
        assert!(!c[key].is_null(), "{key}");
    }
}

#[test]
fn spread_text_names_the_rule_and_a_circuit_without_targets_is_refused() {
    let out = biasfit(&[
        "spread",
        "examples/starters/switch.toml",
        "--use",
        "RB=1k3",
        "--runs",
        "500",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("every target within ±10 %"), "{text}");
    assert!(text.contains("what moves each target"), "{text}");
    let bare = SOURCE.split("[[circuit.target]]").next().unwrap();
    let f = temp_file("bare.toml", bare);
    let out = biasfit(&["spread", f.to_str().unwrap(), "--use", "R1=3k3"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("has no [[circuit.target]]"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_switch_spread_counts_the_builds_that_saturate_as_the_beta_distribution_says() {
    // RB = 6k8 from the 3.3 V logic: IB = (3.3 − 0.7)/6800 − 0.7/10k = 312.4 µA against IC = (12 − 0.2)/400
    // = 29.5 mA, so a build saturates when its beta is at least IC/IB = 94.4, and is overdriven twice when
    // at least 188.9. Beta is drawn uniform on min..typ (60..150) half the time and on typ..max (150..300)
    // the other half, so P(saturation) = ½·(150 − 94.4)/90 + ½ and P(overdrive ≥ 2) = ½·(300 − 188.9)/150.
    // Parts at 0.1 % so that resistor spread barely moves the edges; four standard errors of 20 000 builds.
    let v = spread(&[
        "examples/starters/switch.toml",
        "--use",
        "RB=6k8",
        "--tolerance",
        "0.1%",
    ]);
    let sp = &v["circuits"][0]["spread"];
    let ib = (3.3 - 0.7) / 6800.0 - 0.7 / 10_000.0;
    let ic = (12.0 - 0.2) / 400.0;
    let sat = 0.5 * (150.0 - ic / ib) / 90.0 + 0.5;
    let od = 0.5 * (300.0 - 2.0 * ic / ib) / 150.0;
    let se = |p: f64| 4.0 * (p * (1.0 - p) / 20_000.0).sqrt() + 0.003;
    let req = sp["requirements"].as_array().unwrap();
    let got_sat = req[0]["met"].as_f64().unwrap();
    let got_od = req[1]["met"].as_f64().unwrap();
    assert_eq!(req[0]["what"].as_str(), Some("Q1 saturation"));
    assert!(
        (got_sat - sat).abs() < se(sat),
        "saturation {got_sat} vs {sat}"
    );
    assert!((got_od - od).abs() < se(od), "overdrive {got_od} vs {od}");
    assert_eq!(sp["requirements_met"].as_f64(), Some(got_od));
}

#[test]
fn two_circuits_and_no_choice_are_refused_by_spread_and_verify() {
    let two = format!(
        "{}\n{}",
        std::fs::read_to_string(root().join("examples/starters/led-string.toml")).unwrap(),
        std::fs::read_to_string(root().join("examples/starters/switch.toml")).unwrap()
    );
    let f = temp_file("two.toml", &two);
    let f = f.to_str().unwrap();
    for (args, says) in [
        (
            vec!["spread", f, "--use", "R1=470"],
            "pick the one to spread with --stage",
        ),
        (
            vec!["verify", f, "--use", "R1=470", "--measured", "a1=6"],
            "say which was built with --stage",
        ),
    ] {
        let out = biasfit(&args);
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert!(
            stderr(&out).contains(&format!(
                "has 2 circuits (circuit \"panel string\", circuit \"relay driver\"); {says}"
            )),
            "{}",
            stderr(&out)
        );
    }
    let chosen = biasfit(&[
        "spread",
        f,
        "--circuit",
        "relay driver",
        "--use",
        "RB=1k3",
        "--runs",
        "200",
    ]);
    assert_eq!(chosen.status.code(), Some(0), "{}", stderr(&chosen));
}
