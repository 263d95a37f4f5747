//! Issue 12, item 4: `biasfit verify` on circuits, through the real binary. A good build read at its own
//! node voltages is judged good; a build with one wrong part, read at the voltages that part gives, is
//! explained by that part; a tie names a node that separates the explanations.

mod common;
use common::*;
use serde_json::Value;

fn json(args: &[&str]) -> (Option<i32>, Value) {
    let out = biasfit(args);
    let v = serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("{args:?}: not JSON ({e}): {}{}", stdout(&out), stderr(&out)));
    (out.status.code(), v)
}

/// Every free node's voltage of a circuit built with `uses`, as `check` reports it, as NODE=VOLTS.
fn readings(file: &str, uses: &str) -> String {
    let (_, v) = json(&["check", file, "--use", uses, "--json"]);
    let c = &v["circuits"][0];
    let rails: Vec<String> = std::fs::read_to_string(root().join(file))
        .unwrap()
        .split("[circuit.rails]")
        .nth(1)
        .map(|r| {
            r.lines()
                .skip(1)
                .take_while(|l| !l.trim().is_empty() && !l.starts_with('['))
                .filter_map(|l| l.split('=').next())
                .map(|k| k.trim().to_string())
                .collect()
        })
        .unwrap_or_default();
    c["nodes"]
        .as_object()
        .unwrap()
        .iter()
        .filter(|(n, _)| n.as_str() != "gnd" && !rails.contains(n))
        .map(|(n, x)| format!("{n}={:.4}", x.as_f64().unwrap()))
        .collect::<Vec<_>>()
        .join(",")
}

const BUILDS: [(&str, &str); 4] = [
    ("examples/starters/follower.toml", "R1=9k1,R2=10k"),
    ("examples/starters/tail-pair.toml", "RT=7k5"),
    ("examples/starters/led-string.toml", "R1=470"),
    ("examples/starters/gain-pair.toml", "RF=10k,RG=2k7"),
];

#[test]
fn a_good_build_read_at_its_own_voltages_is_good() {
    for (file, uses) in BUILDS {
        let measured = readings(file, uses);
        let (code, v) = json(&[
            "verify",
            file,
            "--use",
            uses,
            "--measured",
            &measured,
            "--json",
        ]);
        assert_eq!(code, Some(0), "{file}: {v}");
        let c = &v["circuits"][0];
        assert_eq!(c["verdict"].as_str(), Some("good"), "{file}: {c}");
        assert_eq!(
            c["explanations"].as_array().map(Vec::len),
            Some(0),
            "{file}: {c}"
        );
    }
}

#[test]
fn one_wrong_slot_is_explained_by_that_slot() {
    // Built with the wrong value in one slot (a neighbour drawer's part), read everywhere, verified
    // against the design: the wrong slot is among the best explanations, fitted near the value fitted.
    for (file, design, built, slot, fitted) in [
        (
            "examples/starters/follower.toml",
            "R1=9k1,R2=10k",
            "R1=9k1,R2=4k7",
            "R2",
            4700.0,
        ),
        (
            "examples/starters/tail-pair.toml",
            "RT=7k5",
            "RT=3k3",
            "RT",
            3300.0,
        ),
        (
            "examples/starters/gain-pair.toml",
            "RF=10k,RG=2k7",
            "RF=27k,RG=2k7",
            "RF",
            27_000.0,
        ),
    ] {
        let measured = readings(file, built);
        let (code, v) = json(&[
            "verify",
            file,
            "--use",
            design,
            "--measured",
            &measured,
            "--json",
        ]);
        assert_eq!(code, Some(1), "{file}: {v}");
        let c = &v["circuits"][0];
        assert_eq!(c["verdict"].as_str(), Some("fault"));
        // Among the best (a follower's R1 too large and R2 too small read alike at every node, so they tie).
        let list = c["explanations"].as_array().unwrap();
        let best = list[0]["score"].as_f64().unwrap();
        let hit = list
            .iter()
            .find(|e| e["part"] == slot && e["fault"] == "value")
            .unwrap_or_else(|| panic!("{file}: {slot} not among {c}"));
        assert!(hit["score"].as_f64().unwrap() >= best - 0.05, "{file}: {c}");
        let got = hit["fitted"].as_f64().unwrap();
        assert!(
            (got / fitted - 1.0).abs() < 0.02,
            "{file}: fitted {got}, fitted {fitted} really"
        );
    }
    // An open slot (1 GΩ fitted) is named as open.
    let measured = readings("examples/starters/follower.toml", "R1=9k1,R2=1G");
    let (_, v) = json(&[
        "verify",
        "examples/starters/follower.toml",
        "--use",
        "R1=9k1,R2=10k",
        "--measured",
        &measured,
        "--json",
    ]);
    let e = &v["circuits"][0]["explanations"];
    assert!(
        e.as_array()
            .unwrap()
            .iter()
            .take(2)
            .any(|x| x["part"] == "R2" && x["fault"] == "open"),
        "{e}"
    );
}

#[test]
fn a_tie_names_the_node_that_tells_the_explanations_apart() {
    // The MOSFET's drain alone low: a gate divider off (R1 or R2) or a drain or source resistor off read
    // alike there; the source tells the divider faults from the others, since only they move the gate.
    let file = "examples/starters/mosfet-divider.toml";
    let (_, v) = json(&[
        "verify",
        file,
        "--use",
        "R1=3M3,R2=1M2",
        "--measured",
        "d=12.6",
        "--json",
    ]);
    let c = &v["circuits"][0];
    let next = &c["next_reading"];
    assert_eq!(next["node"].as_str(), Some("s"), "{c}");
    let p = next["predictions"].as_object().unwrap();
    let by = |part: &str| {
        p.iter()
            .find(|(k, _)| k.starts_with(&format!("{part} ")))
            .unwrap_or_else(|| panic!("{part} not among {p:?}"))
            .1
            .as_f64()
            .unwrap()
    };
    let (r1, rd) = (by("R1"), by("RD"));
    assert!((r1 - rd).abs() >= 0.1, "R1 {r1} V vs RD {rd} V");
    // Reading the source where the divider faults put it leaves only them at the top.
    let (_, v) = json(&[
        "verify",
        file,
        "--use",
        "R1=3M3,R2=1M2",
        "--measured",
        &format!("d=12.6,s={r1:.4}"),
        "--json",
    ]);
    let e = v["circuits"][0]["explanations"].as_array().unwrap().clone();
    let best = e[0]["score"].as_f64().unwrap();
    let top: Vec<&str> = e
        .iter()
        .filter(|x| x["score"].as_f64().unwrap() >= best - 0.05)
        .map(|x| x["part"].as_str().unwrap())
        .collect();
    assert!(
        top.iter().all(|p| *p == "R1" || *p == "R2") && !top.is_empty(),
        "{e:?}"
    );
}

#[test]
fn a_part_at_the_end_of_its_range_is_a_good_part() {
    // Readings a good build gives with Q1 at the low end of its beta: judged good, not a fault, since
    // the design is fitted within its devices' ranges before it is judged.
    let file = "examples/starters/follower.toml";
    let (_, v) = json(&[
        "verify",
        file,
        "--use",
        "R1=9k1,R2=10k",
        "--measured",
        "b=6.10,out=5.44",
        "--json",
    ]);
    let c = &v["circuits"][0];
    assert_eq!(c["verdict"].as_str(), Some("good"), "{c}");
    assert_eq!(c["explanations"].as_array().map(Vec::len), Some(0));
    // A saturated switch's collector at 160 mV where 200 mV is expected is within 5 % + 50 mV: good.
    let out = biasfit(&[
        "verify",
        "examples/starters/switch.toml",
        "--use",
        "RB=1k3",
        "--measured",
        "c=0.16,b=0.7",
        "--json",
    ]);
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        v["circuits"][0]["readings"][0]["judged"].as_str(),
        Some("good"),
        "{v}"
    );
}

#[test]
fn readings_that_are_not_readings_are_refused_in_one_line() {
    for (measured, says) in [
        ("c3=4", "the circuit has no node 'c3' (did you mean 'c1'?)"),
        ("gnd=0", "'gnd' is the 0 V reference"),
        ("c1=4,c1=4.1", "'c1' is read twice"),
        ("c1", "is not a reading; expected NODE=VOLTS"),
        ("c1=4,7", "write decimals with a point (11.7, not 11,7)"),
        ("c1=four", "c1=four"),
    ] {
        let out = biasfit(&[
            "verify",
            "examples/starters/tail-pair.toml",
            "--use",
            "RT=7k5",
            "--measured",
            measured,
        ]);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{measured}: {err}");
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(says), "{measured}: {err}");
    }
}
