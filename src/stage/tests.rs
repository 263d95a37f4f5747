//! Unit tests of the stage models: the design file, the ideal design against the fraction rule, Kirchhoff's
//! laws at every topology's solution, the diode law against an independent solve, saturation and cutoff,
//! and the checks.

use super::*;
use crate::network::{Member, Network};
use crate::units::Tolerance;

/// One stage of every topology and polarity, invented for the tests (no textbook circuit).
fn toml_for(topology: Topology, polarity: Polarity, diode: bool) -> String {
    let (supply, extra, rule) = match topology {
        Topology::DualSupply => ("9", "supply_neg = -9\n", ""),
        Topology::DividerSplit => ("15", "", "[stage.rule]\ngain = 6\n"),
        Topology::CollectorFeedback | Topology::BaseResistor => {
            ("15", "", "[stage.rule]\nvrc = 0.4\nvce = 0.5\nvre = 0.1\n")
        }
        Topology::Divider => ("15", "", ""),
    };
    let vbe = if diode {
        "vbe = { volts = 0.66, at = \"2mA\", n = 1.2 }"
    } else {
        "vbe = 0.62"
    };
    format!(
        "[[stage]]\nname = \"t\"\ntopology = \"{}\"\npolarity = \"{}\"\nsupply = {supply}\n{extra}load = \"3k9\"\n\
         [stage.transistor]\nbeta = [90, 160, 320]\n{vbe}\nvce_sat = 0.15\nmax_power = \"0.5W\"\n{rule}",
        topology.name(),
        polarity.name()
    )
}

fn stage_of(text: &str) -> Stage {
    parse("test.toml", text)
        .unwrap_or_else(|e| panic!("{e}"))
        .stages
        .remove(0)
}

fn every_stage() -> Vec<Stage> {
    let mut out = Vec::new();
    for t in Topology::ALL {
        for p in [Polarity::Npn, Polarity::Pnp] {
            for diode in [false, true] {
                out.push(stage_of(&toml_for(t, p, diode)));
            }
        }
    }
    out
}

/// Kirchhoff's laws at a solution, from the node voltages and Ohm's law alone, in the real circuit's frame:
/// `s` = +1 for NPN, −1 for PNP (every rail, node voltage and terminal current reversed). Returns the largest
/// residual relative to the emitter current.
fn kirchhoff_residual(st: &Stage, r: &SlotValues, op: &OperatingPoint) -> f64 {
    let s = if st.polarity == Polarity::Npn {
        1.0
    } else {
        -1.0
    };
    let (vcc, vee) = (s * st.supply.0, -s * st.supply_neg.map_or(0.0, |v| v.0));
    let (vb, ve, vc) = (s * op.vb.0, s * op.ve.0, s * op.vc.0);
    // Terminal currents flowing into the base and collector, and out of the emitter (NPN sense).
    let (ib, ic, ie) = (s * op.ib.0, s * op.ic.0, s * op.ie.0);
    let g = |slot: Slot| r.get(slot).unwrap().0;
    let mut res = vec![ie - ib - ic];
    match st.topology {
        Topology::Divider | Topology::DividerSplit => {
            let re = if st.topology == Topology::Divider {
                g(Slot::RE)
            } else {
                g(Slot::RE1) + g(Slot::RE2)
            };
            res.push((vcc - vb) / g(Slot::R1) - vb / g(Slot::R2) - ib);
            res.push((vcc - vc) / g(Slot::RC) - ic);
            res.push(ie - ve / re);
        }
        Topology::CollectorFeedback => {
            let re = if st.has_slot(Slot::RE) {
                g(Slot::RE)
            } else {
                0.0
            };
            res.push((vcc - vc) / g(Slot::RC) - (vc - vb) / g(Slot::RB) - ic);
            res.push((vc - vb) / g(Slot::RB) - ib);
            res.push(ie * re - ve);
        }
        Topology::DualSupply => {
            res.push((0.0 - vb) / g(Slot::RB) - ib);
            res.push((vcc - vc) / g(Slot::RC) - ic);
            res.push(ie - (ve - vee) / g(Slot::RE));
        }
        Topology::BaseResistor => {
            let re = if st.has_slot(Slot::RE) {
                g(Slot::RE)
            } else {
                0.0
            };
            res.push((vcc - vb) / g(Slot::RB) - ib);
            res.push((vcc - vc) / g(Slot::RC) - ic);
            res.push(ie * re - ve);
        }
    }
    // The transistor's own laws, as voltages scaled to currents through the smallest resistance.
    let law = st.transistor.law(op.temperature);
    let scale = r.iter().map(|(_, o)| o.0).fold(f64::INFINITY, f64::min);
    match op.region {
        Region::Active => {
            res.push(ic - op.beta * ib);
            res.push((s * (vb - ve) - law.vbe_at(op.ic.0)) / scale);
        }
        Region::Saturation => {
            res.push((s * (vc - ve) - st.transistor.vce_sat.0) / scale);
            let alpha = op.beta / (op.beta + 1.0);
            res.push((s * (vb - ve) - law.vbe_at(alpha * op.ie.0)) / scale);
        }
        Region::Cutoff => res.push(ib.abs() + ic.abs()),
    }
    let norm = op.ie.0.abs().max(op.supply_current.0.abs()).max(1e-30);
    res.iter().map(|x| x.abs() / norm).fold(0.0, f64::max)
}

#[test]
fn kirchhoff_holds_for_every_topology_and_polarity() {
    for st in every_stage() {
        let ideal = st.ideal().unwrap_or_else(|e| panic!("{e}"));
        // The ideal values, and the same values pushed 7 % to 13 % off so the solution is not the designed one.
        let mut skewed = SlotValues::new();
        for (k, (slot, r)) in ideal.values.iter().enumerate() {
            skewed.set(slot, r * (1.07 + 0.02 * k as f64));
        }
        for r in [ideal.values, skewed] {
            for beta in [
                st.transistor.beta.min,
                st.transistor.beta.typ,
                st.transistor.beta.max,
            ] {
                for t in [Celsius(-20.0), Celsius(25.0), Celsius(70.0)] {
                    let op = st.solve(&r, beta, t);
                    let res = kirchhoff_residual(&st, &r, &op);
                    assert!(
                        res < 1e-9,
                        "{} {} {:?}: residual {res:e} at beta {beta} {t} ({})",
                        st.topology,
                        st.polarity,
                        st.transistor.vbe,
                        op.region
                    );
                }
            }
        }
    }
}

#[test]
fn ideal_design_reproduces_the_fraction_rule() {
    for st in every_stage() {
        let ideal = st.ideal().unwrap_or_else(|e| panic!("{e}"));
        let d = st.deviations(&ideal.values);
        assert!(
            st.error(&ideal.values) < 1e-12,
            "{} {}: {d:?}",
            st.topology,
            st.polarity
        );
        let op = st.typical(&ideal.values);
        assert_eq!(op.region, Region::Active);
        let vcc = st.supply.0;
        if st.topology != Topology::DualSupply {
            // VRC : VCE : VRE = vrc : vce : vre of the supply (KVL makes the three add up to it).
            let vrc = vcc - op.vc.0;
            assert!((vrc / vcc - st.rule.vrc).abs() < 1e-12, "{}", st.topology);
            assert!((op.vce.0 / vcc - st.rule.vce).abs() < 1e-12);
            assert!((op.ve.0 / vcc - st.rule.vre).abs() < 1e-12);
        } else {
            // The positive rail less VE splits vrc : vce between RC and the transistor.
            let vrc = vcc - op.vc.0;
            assert!((vrc / op.vce.0 - st.rule.vrc / st.rule.vce).abs() < 1e-12);
        }
        // RC matches RL.
        assert!((ideal.values.get(Slot::RC).unwrap().0 / 3900.0 - 1.0).abs() < 1e-12);
        // The ideal passes its own electrical constraints (fixed base bias aside: whether it stays active at
        // max beta depends on the supply shares, not on the design).
        if st.topology != Topology::BaseResistor {
            assert!(st.electrical_ok(&ideal.values), "{}", st.topology);
        }
    }
}

#[test]
fn divider_ideal_by_hand() {
    // 15 V, RL 3k9, 45/45/10, stiffness 10, beta 90/160/320, VBE 0.62 (the test stage above):
    // IC* = 6.75/3900 = 1.730769 mA; VE* = 1.5 V; IE* = IC*·161/160; VB* = 2.12 V;
    // I2 = 10·IC*/90; R2 = 2.12/I2 = 11.0244 kΩ; R1 = 12.88/(I2 + IC*/160).
    let st = stage_of(&toml_for(Topology::Divider, Polarity::Npn, false));
    let v = st.ideal().unwrap().values;
    let ic = 6.75 / 3900.0;
    let i2 = 10.0 * ic / 90.0;
    assert!((v.get(Slot::RC).unwrap().0 - 3900.0).abs() < 1e-9);
    assert!((v.get(Slot::RE).unwrap().0 - 1.5 / (ic * 161.0 / 160.0)).abs() < 1e-9);
    assert!((v.get(Slot::R2).unwrap().0 - 2.12 / i2).abs() < 1e-9);
    assert!((v.get(Slot::R1).unwrap().0 - 12.88 / (i2 + ic / 160.0)).abs() < 1e-9);
}

#[test]
fn pnp_mirrors_npn() {
    for t in Topology::ALL {
        let n = stage_of(&toml_for(t, Polarity::Npn, true));
        let p = stage_of(&toml_for(t, Polarity::Pnp, true));
        let r = n.ideal().unwrap().values;
        assert_eq!(r, p.ideal().unwrap().values);
        let (a, b) = (n.typical(&r), p.typical(&r));
        assert_eq!(a, b, "{t}");
    }
}

/// An independent solve of a divider stage under the diode law: bisection on the base node voltage for KCL
/// at the base, with an inner bisection on the emitter voltage for the emitter's own equation.
#[allow(clippy::too_many_arguments)]
fn divider_by_node_bisection(
    vcc: f64,
    r1: f64,
    r2: f64,
    re: f64,
    beta: f64,
    v0: f64,
    i0: f64,
    nvt: f64,
) -> f64 {
    let ic_for = |vb: f64| {
        // VE = RE·IE, IE = IC·(β+1)/β, IC = i0·exp((VB − VE − v0)/nvt): the left side rises with VE, the
        // right falls, so bisect VE in [0, VB].
        let (mut lo, mut hi) = (0.0, vb);
        for _ in 0..200 {
            let ve = 0.5 * (lo + hi);
            let ic = i0 * ((vb - ve - v0) / nvt).exp();
            if ve > re * ic * (beta + 1.0) / beta {
                hi = ve;
            } else {
                lo = ve;
            }
        }
        let ve = 0.5 * (lo + hi);
        i0 * ((vb - ve - v0) / nvt).exp()
    };
    let (mut lo, mut hi) = (0.0, vcc);
    for _ in 0..200 {
        let vb = 0.5 * (lo + hi);
        let kcl = (vcc - vb) / r1 - vb / r2 - ic_for(vb) / beta;
        if kcl > 0.0 {
            lo = vb;
        } else {
            hi = vb;
        }
    }
    ic_for(0.5 * (lo + hi))
}

#[test]
fn diode_law_matches_an_independent_solve() {
    let st = stage_of(&toml_for(Topology::Divider, Polarity::Npn, true));
    let (r1, r2, rc, re) = (47e3, 10e3, 3.9e3, 820.0);
    let r = SlotValues::from_pairs([
        (Slot::R1, Ohms(r1)),
        (Slot::R2, Ohms(r2)),
        (Slot::RC, Ohms(rc)),
        (Slot::RE, Ohms(re)),
    ]);
    for t in [Celsius(0.0), Celsius(25.0), Celsius(60.0)] {
        let op = st.solve(&r, 160.0, t);
        // n·VT from the CODATA constants, V0 shifted by the default −2 mV/°C from 25 °C.
        let nvt = 1.2 * thermal_voltage(t).0;
        let v0 = 0.66 - 0.002 * (t.0 - 25.0);
        let ic = divider_by_node_bisection(15.0, r1, r2, re, 160.0, v0, 2e-3, nvt);
        assert!(
            (op.ic.0 / ic - 1.0).abs() < 1e-9,
            "{t}: {} vs {ic}",
            op.ic.0
        );
    }
}

#[test]
fn diode_law_hand_value() {
    // Base bias, no RE: IC = 2·I0 exactly when RB = β·(VCC − VBE)/IC with VBE = V0 + VT·ln 2.
    // VT at 25 °C = 1.380649e-23 × 298.15 / 1.602176634e-19 = 25.6926 mV (CODATA 2018, exact constants),
    // so VBE = 0.65 + 0.0256926·0.693147 = 0.667809 V.
    let text = "[[stage]]\ntopology = \"base-resistor\"\nsupply = 9\nic = \"2mA\"\n\
                [stage.transistor]\nbeta = 200\nvbe = { volts = 0.65, at = \"1mA\" }\n\
                [stage.rule]\nvrc = 0.5\nvce = 0.5\nvre = 0\n";
    let st = stage_of(text);
    let vbe = 0.65 + 0.025_692_6 * 2f64.ln();
    let rb = 200.0 * (9.0 - vbe) / 2e-3;
    let r = SlotValues::from_pairs([(Slot::RB, Ohms(rb)), (Slot::RC, Ohms(2250.0))]);
    let op = st.typical(&r);
    assert!((op.ic.0 - 2e-3).abs() < 2e-9, "{}", op.ic.0);
    assert!((op.vbe.0 - 0.667_809).abs() < 1e-6, "{}", op.vbe.0);
}

#[test]
fn saturation_by_hand() {
    // 9 V, RB 47k, RC 2k2, no RE, beta 150, VBE 0.65, VCE(sat) 0.2 (invented): β·IB = 26.6 mA is far more than
    // the (9 − 0.2)/2200 = 4 mA RC can pass, so the transistor saturates with IC = 4 mA exactly and
    // IB = 8.35/47000 = 177.66 µA.
    let text = "[[stage]]\ntopology = \"base-resistor\"\nsupply = 9\nload = \"2k2\"\n\
                [stage.transistor]\nbeta = 150\nvbe = 0.65\nvce_sat = 0.2\n\
                [stage.rule]\nvrc = 0.5\nvce = 0.5\nvre = 0\n";
    let st = stage_of(text);
    let r = SlotValues::from_pairs([(Slot::RB, Ohms(47e3)), (Slot::RC, Ohms(2200.0))]);
    let op = st.typical(&r);
    assert_eq!(op.region, Region::Saturation);
    assert!((op.ic.0 - 8.8 / 2200.0).abs() < 1e-15);
    assert!((op.ib.0 - 8.35 / 47e3).abs() < 1e-15);
    assert!((op.vce.0 - 0.2).abs() < 1e-12);
    assert!(!st.electrical_ok(&r));
    assert!(kirchhoff_residual(&st, &r, &op) < 1e-9);
    // The diode law saturates too, and meets its own law at alpha·IE.
    let st = stage_of(&text.replace("vbe = 0.65", "vbe = { volts = 0.65, at = \"1mA\" }"));
    let op = st.typical(&r);
    assert_eq!(op.region, Region::Saturation);
    assert!(kirchhoff_residual(&st, &r, &op) < 1e-9);
}

#[test]
fn cutoff_by_hand() {
    // 9 V divider of 100k over 4k7: VTh = 9·4.7/104.7 = 0.404 V, short of VBE 0.65: nothing flows, the
    // collector sits at the supply and the base at VTh.
    let text = "[[stage]]\ntopology = \"divider\"\nsupply = 9\nload = \"4k7\"\n\
                [stage.transistor]\nbeta = [80, 150, 250]\nvbe = 0.65\n";
    let st = stage_of(text);
    let r = SlotValues::from_pairs([
        (Slot::R1, Ohms(100e3)),
        (Slot::R2, Ohms(4700.0)),
        (Slot::RC, Ohms(4700.0)),
        (Slot::RE, Ohms(1000.0)),
    ]);
    let op = st.typical(&r);
    assert_eq!(op.region, Region::Cutoff);
    assert_eq!(op.ic.0, 0.0);
    assert!((op.vc.0 - 9.0).abs() < 1e-12);
    assert!((op.vb.0 - 9.0 * 4.7 / 104.7).abs() < 1e-12);
    // IC = 0 is 100 % off, and VCE = 9 V against 4.05 V is 122 % off.
    assert!(
        (st.error(&r) - (9.0 / 4.05 - 1.0)).abs() < 1e-12,
        "{}",
        st.error(&r)
    );
    assert!(!st.electrical_ok(&r));
}

#[test]
fn checks_cover_stiffness_divider_power_and_transistor() {
    let st = stage_of(&toml_for(Topology::Divider, Polarity::Npn, false));
    let v = st.ideal().unwrap().values;
    let one = |o: Ohms| Network::Single(Member::loose(o, Tolerance(0.05), Watts(0.25)));
    // RE as two equal halves in series: each takes half the slot's power.
    let re = v.get(Slot::RE).unwrap();
    let mut nets = SlotNetworks::from_pairs(v.iter().map(|(s, o)| (s, one(o))));
    nets.set(
        Slot::RE,
        Network::Series(vec![one(re * 0.5), one(re * 0.5)]),
    );
    let checks = st.checks(&nets);
    let find = |n: &str| {
        checks
            .iter()
            .find(|c| c.name == n)
            .unwrap_or_else(|| panic!("{n}"))
    };
    assert!(find("stiffness").ok && find("stiffness").value >= 10.0);
    assert!(find("divider current").ok);
    assert!(find("headroom at min beta").ok && find("headroom at max beta").ok);
    assert!(find("transistor power").ok);
    // IE at max beta through each 0.5·RE half: P = IE²·RE/2.
    let op = st.solve(&v, 320.0, Celsius(25.0));
    let half = op.ie.0 * op.ie.0 * re.0 * 0.5;
    let p = checks
        .iter()
        .find(|c| c.name.starts_with("power RE part 1"))
        .unwrap();
    assert!((p.value - half).abs() < 1e-15 && (p.limit - 0.125).abs() < 1e-15);
    // A stiff-breaking divider (both resistors ten times larger) fails stiffness and electrical_ok.
    let mut loose = v;
    loose.set(Slot::R1, v.get(Slot::R1).unwrap() * 10.0);
    loose.set(Slot::R2, v.get(Slot::R2).unwrap() * 10.0);
    assert!(!st.electrical_ok(&loose));
    let nets = SlotNetworks::from_pairs(loose.iter().map(|(s, o)| (s, one(o))));
    assert!(
        !st.checks(&nets)
            .iter()
            .find(|c| c.name == "stiffness")
            .unwrap()
            .ok
    );
    // A divider drawing three times its design current fails the divider-current limit.
    let mut thirsty = v;
    thirsty.set(Slot::R1, v.get(Slot::R1).unwrap() / 3.0);
    thirsty.set(Slot::R2, v.get(Slot::R2).unwrap() / 3.0);
    assert!(!st.electrical_ok(&thirsty));
}

#[test]
fn base_resistor_shows_poor_beta_stability() {
    let st = stage_of(&toml_for(Topology::BaseResistor, Polarity::Npn, false));
    let v = st.ideal().unwrap().values;
    let one = |o: Ohms| Network::Single(Member::loose(o, Tolerance(0.05), Watts(0.25)));
    let checks = st.checks(&SlotNetworks::from_pairs(
        v.iter().map(|(s, o)| (s, one(o))),
    ));
    let spread = checks.iter().find(|c| c.name == "beta spread").unwrap();
    // IC tracks beta almost in proportion: (320 − 90)/160 = 1.44 with a little RE feedback.
    assert!(!spread.ok && spread.value > 1.0, "{spread:?}");
    let st = stage_of(&toml_for(Topology::Divider, Polarity::Npn, false));
    let v = st.ideal().unwrap().values;
    let checks = st.checks(&SlotNetworks::from_pairs(
        v.iter().map(|(s, o)| (s, one(o))),
    ));
    assert!(checks.iter().find(|c| c.name == "beta spread").unwrap().ok);
}

#[test]
fn unknown_keys_name_the_nearest() {
    let text = toml_for(Topology::Divider, Polarity::Npn, false).replace("vce_sat", "vce_sta");
    let err = parse("d.toml", &text).unwrap_err().to_string();
    assert!(
        err.starts_with("d.toml:10: unknown key 'vce_sta' in [stage.transistor]"),
        "{err}"
    );
    assert!(err.contains("did you mean 'vce_sat'"), "{err}");
    let err = parse("d.toml", "[[stage]]\ntopolgy = \"divider\"\n")
        .unwrap_err()
        .to_string();
    assert!(err.contains("did you mean 'topology'"), "{err}");
}

#[test]
fn bad_values_name_file_line_and_field() {
    let base = toml_for(Topology::Divider, Polarity::Npn, false);
    for (from, to, needle) in [
        (
            "beta = [90, 160, 320]",
            "beta = [320, 160, 90]",
            "stage.transistor.beta = [320, 160, 90]",
        ),
        ("load = \"3k9\"", "load = \"3x9\"", "stage.load = \"3x9\""),
        (
            "topology = \"divider\"",
            "topology = \"devider\"",
            "did you mean divider",
        ),
        ("supply = 15", "supply = \"fifteen\"", "stage.supply"),
        ("vbe = 0.62", "vbe = 7", "stage.transistor.vbe = 7"),
        ("load = \"3k9\"", "ic = \"2mA\"\nload = \"3k9\"", "not both"),
    ] {
        let text = base.replace(from, to);
        let err = parse("d.toml", &text).unwrap_err().to_string();
        assert!(err.starts_with("d.toml:"), "{err}");
        assert!(err.contains(needle), "{needle}: {err}");
    }
    let err = parse("d.toml", "[[stage]\n").unwrap_err().to_string();
    assert!(err.starts_with("d.toml:1: not valid TOML"), "{err}");
    let err = parse("d.toml", "").unwrap_err().to_string();
    assert!(err.contains("no [[stage]]"), "{err}");
    let sum = format!("{base}[stage.rule]\nvrc = 0.5\n");
    let err = parse("d.toml", &sum).unwrap_err().to_string();
    assert!(err.contains("add up to 1.05"), "{err}");
}

#[test]
fn slot_names_round_trip() {
    for s in Slot::ALL {
        assert_eq!(s.name().parse::<Slot>().unwrap(), s);
        assert_eq!(s.name().to_lowercase().parse::<Slot>().unwrap(), s);
    }
    assert!("R3".parse::<Slot>().is_err());
}

#[test]
fn temperature_shifts_vbe_and_beta() {
    let text = toml_for(Topology::Divider, Polarity::Npn, false).replace(
        "vce_sat = 0.15",
        "vce_sat = 0.15\nbeta_tempco = 0.005\nvbe_tempco = -0.0021",
    );
    let st = stage_of(&text);
    let r = st.ideal().unwrap().values;
    // At 65 °C, 40 °C above the 25 °C reference: beta 160·(1 + 0.2) = 192 and VBE 0.62 − 0.084 = 0.536 V.
    let op = st.solve(&r, 160.0, Celsius(65.0));
    assert!((op.beta - 192.0).abs() < 1e-12);
    assert!((op.vbe.0 - 0.536).abs() < 1e-12, "{}", op.vbe.0);
    // Less VBE and more beta both raise IC.
    assert!(op.ic > st.typical(&r).ic);
}

#[test]
fn split_emitter_ac_figures_by_hand() {
    let st = stage_of(&toml_for(Topology::DividerSplit, Polarity::Npn, false));
    let r = st.ideal().unwrap().values;
    let op = st.typical(&r);
    let ac = st.ac(&r).unwrap();
    let g = |s: Slot| r.get(s).unwrap().0;
    // re' = VT/IE with VT at 25 °C (fixed VBE: n = 1); gain (RC∥RL)/(re' + RE1) is the rule's 6 exactly.
    let re_prime = thermal_voltage(Celsius(25.0)).0 / op.ie.0;
    assert!((ac.re_prime.0 - re_prime).abs() < 1e-9);
    assert!((ac.gain - 6.0).abs() < 1e-9, "{}", ac.gain);
    let rac = g(Slot::RC) * 3900.0 / (g(Slot::RC) + 3900.0);
    let rth = g(Slot::R1) * g(Slot::R2) / (g(Slot::R1) + g(Slot::R2));
    let zb = 161.0 * (re_prime + g(Slot::RE1));
    assert!((ac.input.0 - rth * zb / (rth + zb)).abs() < 1e-6);
    assert_eq!(ac.output.0, g(Slot::RC));
    let swing = (op.ic.0 * rac).min((op.vce.0 - 0.15) * rac / (rac + g(Slot::RE1)));
    assert!((ac.swing.0 - swing).abs() < 1e-12);
    // A gain the operating point cannot give is refused with the reason.
    let greedy =
        toml_for(Topology::DividerSplit, Polarity::Npn, false).replace("gain = 6", "gain = 500");
    // It is refused when the file is read, at the stage's line, since no resistor values can meet it.
    let err = parse("test.toml", &greedy).unwrap_err().to_string();
    assert!(
        err.starts_with("test.toml:1: [[stage]] \"t\": no resistor values can meet")
            && err.contains("more than this operating point can give"),
        "{err}"
    );
}

#[test]
fn pnp_supply_may_be_written_negative() {
    let pos = stage_of(&toml_for(Topology::Divider, Polarity::Pnp, false));
    let neg = stage_of(
        &toml_for(Topology::Divider, Polarity::Pnp, false).replace("supply = 15", "supply = -15"),
    );
    assert_eq!(pos.supply, neg.supply);
    let npn_neg =
        toml_for(Topology::Divider, Polarity::Npn, false).replace("supply = 15", "supply = -15");
    assert!(parse("n.toml", &npn_neg)
        .unwrap_err()
        .to_string()
        .contains("polarity = \"pnp\""));
}

mod solver_properties {
    use super::super::junction::{solve, Env, Law};
    use super::super::Region;
    use proptest::prelude::*;

    proptest! {
        /// The diode-law solve converges for any network a real stage can make, and its answer meets the
        /// loop equations and the law to within 1e-9 V.
        #[test]
        fn diode_law_always_converges(
            a0 in 0.0f64..60.0,
            rb in 10.0f64..1e7,
            re in 0.0f64..1e5,
            rc in 1.0f64..1e5,
            c0 in 0.5f64..60.0,
            beta in 1.0f64..2000.0,
            v0 in 0.3f64..0.9,
            i0 in 1e-6f64..1e-1,
            n in 0.8f64..2.0,
            feedback in any::<bool>(),
        ) {
            // The divider-like loop shape, or collector feedback's (RC shared by both loops, cb = cc).
            let env = if feedback {
                Env { a0: c0, ab: rc + rb + re, ac: rc + re, c0, cb: rc + re, cc: rc + re }
            } else {
                Env { a0, ab: rb + re, ac: re, c0, cb: re, cc: rc + re }
            };
            let nvt = n * 0.025_852;
            let law = Law::Diode { v0, i0, nvt };
            let j = solve(&env, &law, beta, 0.1);
            prop_assert!(j.ib.is_finite() && j.ic.is_finite() && j.ib >= 0.0 && j.ic >= 0.0);
            let vbe = env.a0 - env.ab * j.ib - env.ac * j.ic;
            let vce = env.c0 - env.cb * j.ib - env.cc * j.ic;
            match j.region {
                Region::Active => {
                    prop_assert!((vbe - law.vbe_at(j.ic)).abs() < 1e-9);
                    prop_assert!((j.ic - beta * j.ib).abs() <= 1e-12 * j.ic);
                    prop_assert!(vce >= 0.1 - 1e-9);
                }
                Region::Saturation => {
                    prop_assert!((vce - 0.1).abs() < 1e-9 || j.ic == 0.0);
                    prop_assert!(j.ic <= beta * j.ib * (1.0 + 1e-9));
                }
                Region::Cutoff => prop_assert!(j.ic == 0.0 && j.ib == 0.0),
            }
        }
    }
}
