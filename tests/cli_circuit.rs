//! Issue 12: `biasfit check` on circuits of the user's own, through the real binary: the JSON contract
//! (`"circuits"` beside `"stages"`), the numbers against laws from outside the project, the exit code of a
//! failed check, the cautions, and one-line refusals of slots that are not slots.

mod common;
use common::*;
use serde_json::Value;
use std::process::Output;

fn json(out: &Output) -> Value {
    serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {}", String::from_utf8_lossy(&out.stdout)))
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-12)
}

const LEDS: &str = "examples/starters/led-string.toml";

#[test]
fn a_led_string_checks_against_ohms_law_kirchhoff_and_the_shockley_law() {
    let out = biasfit(&["check", LEDS, "--use", "R1=470", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v = json(&out);
    assert_eq!(v["stages"], Value::Array(Vec::new()));
    let c = &v["circuits"][0];
    for key in ["name", "nodes", "parts", "targets", "error", "checks"] {
        assert!(!c[key].is_null(), "circuit JSON lacks '{key}': {c}");
    }
    let node = |n: &str| c["nodes"][n].as_f64().unwrap();
    let r1 = &c["parts"]["R1"];
    assert_eq!(r1["ohms"].as_f64(), Some(470.0));
    assert_eq!(r1["network"].as_str(), Some("470R"));
    let i = r1["current"].as_f64().unwrap();
    // Ohm's law across the slot, and Kirchhoff's voltage law round the string (rail 12 V in the file).
    assert!(close((node("v12") - node("a1")) / 470.0, i, 1e-9));
    let leds: f64 = ["D1", "D2", "D3"]
        .iter()
        .map(|d| c["parts"][*d]["across"].as_f64().unwrap())
        .sum();
    assert!(close(r1["across"].as_f64().unwrap() + leds, 12.0, 1e-9));
    // The Shockley diode law, V = Vf + n·kT/q·ln(I/If), with k and q from CODATA 2018 (exact in the 2019
    // SI) at the 25 °C ambient the file leaves as default; Vf 2.05 V at 10 mA and n = 2 are the file's.
    let vt = 1.380_649e-23 * 298.15 / 1.602_176_634e-19;
    let vf = 2.05 + 2.0 * vt * (i / 0.010).ln();
    for d in ["D1", "D2", "D3"] {
        let across = c["parts"][d]["across"].as_f64().unwrap();
        assert!(close(across, vf, 1e-6), "{d}: {across} V, law {vf} V");
        assert!(close(c["parts"][d]["current"].as_f64().unwrap(), i, 1e-9));
    }
    // The LED-resistor sizing formula R = (Vs − ΣVf)/I (textbook practice, e.g. Horowitz & Hill, The Art of
    // Electronics, 3rd ed., ch. 2, from memory) holds at the solved point.
    assert!(close((12.0 - 3.0 * vf) / i, 470.0, 1e-6));
    let t = &c["targets"][0];
    assert_eq!(t["what"].as_str(), Some("current R1"));
    assert!(close(
        t["deviation"].as_f64().unwrap(),
        i / 0.012 - 1.0,
        1e-9
    ));
    assert!(close(
        c["error"].as_f64().unwrap(),
        (i / 0.012 - 1.0).abs(),
        1e-9
    ));
    let power = c["checks"]
        .as_array()
        .unwrap()
        .iter()
        .find(|k| k["name"] == "power R1")
        .expect("a power check on the slot");
    // A 250 mW part at the default 50 % derating (common practice, no source).
    assert_eq!(power["limit"].as_f64(), Some(0.125));
    assert_eq!(power["ok"], Value::Bool(true));
}

#[test]
fn an_overloaded_string_fails_with_exit_1_and_warns_of_heat() {
    let out = biasfit(&["check", LEDS, "--use", "R1=47"]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("circuit \"panel string\""), "{text}");
    assert!(text.contains("FAIL"), "{text}");
    assert!(
        text.contains("caution:") && text.contains("hot enough to burn"),
        "{text}"
    );
}

#[test]
fn a_network_in_a_slot_shares_its_power_by_member() {
    // Two 1k in parallel at 250 mW each carry half the power each: the slot's limit is twice one part's.
    let out = biasfit(&["check", LEDS, "--use", "R1=1k|1k", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v = json(&out);
    let c = &v["circuits"][0];
    assert_eq!(c["parts"]["R1"]["ohms"].as_f64(), Some(500.0));
    assert_eq!(c["parts"]["R1"]["parts"].as_array().map(Vec::len), Some(2));
    // Each member is checked against its own derated rating (50 %), carrying half the power.
    let checks = c["checks"].as_array().unwrap();
    let members: Vec<&Value> = checks
        .iter()
        .filter(|k| k["name"].as_str().unwrap().starts_with("power R1 part "))
        .collect();
    assert_eq!(members.len(), 2, "{checks:?}");
    for m in members {
        assert!((m["limit"].as_f64().unwrap() - 0.125).abs() < 1e-12, "{m}");
        let half = c["parts"]["R1"]["power"].as_f64().unwrap() / 2.0;
        assert!(
            (m["value"].as_f64().unwrap() - half).abs() < 1e-12 * half,
            "{m}"
        );
    }
}

#[test]
fn the_tail_pair_reads_from_real_ground_with_signs() {
    let out = biasfit(&[
        "check",
        "examples/starters/tail-pair.toml",
        "--use",
        "RT=8k2",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let c = &json(&out)["circuits"][0];
    assert_eq!(c["nodes"]["vee"].as_f64(), Some(-9.0));
    let tail = c["nodes"]["tail"].as_f64().unwrap();
    assert!(
        tail < 0.0 && tail > -1.0,
        "the tail sits one VBE below the grounded bases: {tail}"
    );
    // The tail current splits between the two collectors (emitter = collector + base, KCL at the tail).
    let it = c["parts"]["RT"]["current"].as_f64().unwrap();
    let ie: f64 = ["Q1", "Q2"]
        .iter()
        .map(|q| {
            c["parts"][*q]["current"].as_f64().unwrap()
                + c["parts"][*q]["base_current"].as_f64().unwrap()
        })
        .sum();
    assert!(close(it, ie, 1e-9), "{it} vs {ie}");
    assert_eq!(c["parts"]["Q1"]["region"].as_str(), Some("active"));
}

#[test]
fn what_is_not_a_slot_is_refused_in_one_line() {
    for (uses, says) in [
        (
            "RX=1k",
            "RX is not a part of the circuit (did you mean R1?); circuit \"panel string\" has the slots R1",
        ),
        (
            "D1=1k",
            "D1 is a led; only a resistor without a value is a slot",
        ),
        ("R1=1k,R1=2k", "R1 is given twice"),
        ("R1=1k=2k", "holds more than one '='"),
        ("", "no value for R1"),
    ] {
        let out = biasfit(&["check", LEDS, "--use", uses]);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{uses}: {err}");
        assert_eq!(err.lines().count(), 1, "{uses}: {err}");
        assert!(err.contains(says), "{uses}: {err}");
    }
    let out = biasfit(&[
        "check",
        "examples/starters/tail-pair.toml",
        "--use",
        "RC1=1k,RT=8k2",
    ]);
    assert!(
        stderr(&out).contains("RC1 has its value in the file"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_file_with_a_stage_and_a_circuit_asks_which_and_takes_either() {
    let dir = std::env::temp_dir().join(format!("biasfit-mixed-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("bench.toml");
    let stage = std::fs::read_to_string(root().join("examples/line-driver.toml")).unwrap();
    let circuit = std::fs::read_to_string(root().join(LEDS)).unwrap();
    std::fs::write(&file, format!("{stage}\n{circuit}")).unwrap();
    let f = file.to_str().unwrap();

    let out = biasfit(&["check", f, "--use", "R1=470"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(
            "has 2 stages and circuits (\"line driver\", circuit \"panel string\"); pick the one"
        ),
        "{}",
        stderr(&out)
    );
    let by_name = biasfit(&["check", f, "--circuit", "panel string", "--use", "R1=470"]);
    assert_eq!(by_name.status.code(), Some(0), "{}", stderr(&by_name));
    let by_number = biasfit(&["check", f, "--stage", "2", "--use", "R1=470"]);
    assert_eq!(stdout(&by_name), stdout(&by_number));
    // The stage in the same file still checks as before, and `design` fills it, leaving the circuit alone.
    let stage = biasfit(&[
        "check",
        f,
        "--stage",
        "1",
        "--use",
        "R1=33k,R2=6k8,RC=2k7,RE=560",
    ]);
    assert!(
        stdout(&stage).contains("stage \"line driver\""),
        "{}",
        stderr(&stage)
    );
    // design fills the stage and the circuit from one stock; ideal still works on the stages only.
    let design = biasfit(&["design", f, "--stock", "stock/e12-kit.csv", "--json"]);
    let v: Value =
        serde_json::from_slice(&design.stdout).unwrap_or_else(|_| panic!("{}", stderr(&design)));
    assert_eq!(v["stages"][0]["name"], "line driver");
    assert!(v["circuits"][0]["name"].is_string(), "{v}");
    assert_eq!(v["circuits"][0]["copies"], 1);
    let ideal = biasfit(&["ideal", f]);
    assert!(
        stderr(&ideal).contains("also holds 1 [[circuit]] table; this command works on its [[stage]] tables and leaves it out"),
        "{}",
        stderr(&ideal)
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn stage_commands_on_a_circuit_only_file_say_what_reads_circuits() {
    let out = biasfit(&["ideal", LEDS]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains(
            "only [[circuit]] tables; circuits are read by `biasfit check`, `spread` and `verify`"
        ),
        "{err}"
    );
}

#[test]
fn the_circuit_build_sheet_holds_every_node_part_target_and_check() {
    let dir = std::env::temp_dir().join(format!("biasfit-csheet-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let html = dir.join("switch.html");
    let out = biasfit(&[
        "check",
        "examples/starters/switch.toml",
        "--use",
        "RB=1k3",
        "--html",
        html.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let c = &v["circuits"][0];
    let page = std::fs::read_to_string(&html).unwrap();
    // Well-formed enough for an XML parser once the doctype is set aside (every tag closed).
    let body = page.trim_start_matches("<!DOCTYPE html>\n");
    let xml = body
        .replace("<meta charset=\"utf-8\">", "<meta charset=\"utf-8\"/>")
        .replace("initial-scale=1\">", "initial-scale=1\"/>")
        .replace("content=\"biasfit\">", "content=\"biasfit\"/>");
    let doc = roxmltree::Document::parse(&xml).unwrap_or_else(|e| panic!("{e}"));
    let text: String = doc
        .descendants()
        .filter_map(|n| n.text())
        .collect::<Vec<_>>()
        .join("|");
    for node in c["nodes"].as_object().unwrap().keys() {
        assert!(text.contains(node.as_str()), "node {node} missing");
    }
    for part in c["parts"].as_object().unwrap().keys() {
        assert!(text.contains(part.as_str()), "part {part} missing");
    }
    for k in c["checks"].as_array().unwrap() {
        assert!(
            text.contains(k["name"].as_str().unwrap()),
            "check {k} missing"
        );
    }
    assert!(
        text.contains("Expected readings") && text.contains("50 V DC"),
        "{text}"
    );
    let svg = biasfit(&[
        "check",
        "examples/starters/switch.toml",
        "--use",
        "RB=1k3",
        "--svg",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(svg.status.code(), Some(2));
    assert!(stderr(&svg).contains("--html FILE writes the circuit's build sheet"));
    let _ = std::fs::remove_dir_all(&dir);
}

/// The circuit commands' output the docs show is run by tests/docs_console.rs (trycmd); here, that the
/// README's complete example is the shipped starter.
#[test]
fn the_docs_show_the_led_starter() {
    let docs = user_docs();
    // The README's complete example is the shipped starter, byte for byte.
    let led = std::fs::read_to_string(root().join(LEDS)).unwrap();
    assert!(
        docs.contains(&format!("```toml\n{led}```")),
        "README's LED string differs from the starter"
    );
}

#[test]
fn a_switch_left_off_fails_its_overdrive_and_fixed_parts_are_power_checked() {
    // RB open (1 GΩ): Q1 is off, so it has no overdrive at all; the check fails rather than reading ∞.
    let out = biasfit(&[
        "check",
        "examples/starters/switch.toml",
        "--use",
        "RB=1G",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let checks = v["circuits"][0]["checks"].as_array().unwrap().clone();
    let od = checks.iter().find(|k| k["name"] == "overdrive Q1").unwrap();
    assert_eq!(
        (od["value"].as_f64(), od["ok"].as_bool()),
        (Some(0.0), Some(false)),
        "{od}"
    );
    // The tail pair's fixed collector resistors give no rating: they are checked as the assumed 250 mW
    // parts at the 50 % derating (common practice, no source), as slots' parts are.
    let out = biasfit(&[
        "check",
        "examples/starters/tail-pair.toml",
        "--use",
        "RT=7k5",
        "--json",
    ]);
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let rc1 = v["circuits"][0]["checks"]
        .as_array()
        .unwrap()
        .iter()
        .find(|k| k["name"] == "power RC1")
        .cloned()
        .expect("a power check on the fixed RC1");
    assert_eq!(rc1["limit"].as_f64(), Some(0.125));
}
