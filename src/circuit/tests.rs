//! Unit tests of the engine as a whole: small circuits solved by hand.

use super::*;
use crate::stage::junction::{Law, CUTOFF_FRACTION};
use crate::stage::{Beta, Polarity, Transistor, Vbe};
use crate::units::{Amps, Celsius, Ohms, Volts, Watts};

pub(crate) fn transistor(vbe: Vbe) -> Transistor {
    Transistor {
        beta: Beta {
            min: 90.0,
            typ: 160.0,
            max: 320.0,
        },
        vbe,
        vce_sat: Volts(0.15),
        max_power: Some(Watts(0.5)),
        max_ic: None,
        max_vce: None,
        vbe_tempco: -0.002,
        beta_tempco: 0.0,
        reference: Celsius(25.0),
        tj_max: Celsius(150.0),
    }
}

fn resistor(ohms: f64) -> Kind {
    Kind::Resistor {
        value: Some(Ohms(ohms)),
        power: None,
        tolerance: None,
    }
}

#[test]
fn divider_by_hand() {
    // 9 V across 2k2 + 6k8: 6.8/9·9 = 6.8 V at the middle, 9/9000 = 1 mA (hand arithmetic).
    let mut c = Circuit::new("div");
    c.rail("vcc", Volts(9.0)).unwrap();
    c.add("RA", resistor(2200.0), &["vcc", "mid"]).unwrap();
    c.add("RB", resistor(6800.0), &["mid", "gnd"]).unwrap();
    c.check().unwrap();
    let b = c.typical(&[]).unwrap();
    let s = solve(&c, &b).unwrap();
    let mid = c.find_node("mid").unwrap();
    assert!((s.nodes[mid].0 - 6.8).abs() < 1e-12);
    assert!((s.parts[0].current.0 - 1e-3).abs() < 1e-15);
    assert!(s.worst_residual() < 1e-9);
}

#[test]
fn one_transistor_fixed_vbe_by_hand() {
    // Base fed from 12 V through 560k, RC 2k7, emitter grounded, VBE 0.6 V, beta 160:
    // IB = 11.4/560k = 20.357 µA, IC = 3.2571 mA, VC = 12 − 2700·IC = 3.2057 V (hand arithmetic).
    let mut c = Circuit::new("q");
    c.rail("vcc", Volts(12.0)).unwrap();
    c.add("RB", resistor(560e3), &["vcc", "b"]).unwrap();
    c.add("RC", resistor(2700.0), &["vcc", "c"]).unwrap();
    c.add(
        "Q1",
        Kind::Bjt {
            polarity: Polarity::Npn,
            transistor: transistor(Vbe::Fixed(Volts(0.6))),
        },
        &["c", "b", "gnd"],
    )
    .unwrap();
    c.check().unwrap();
    let s = solve(&c, &c.typical(&[]).unwrap()).unwrap();
    let ib = 11.4 / 560e3;
    assert_eq!(s.parts[2].region, Some(Region::Active));
    assert!((s.parts[2].base_current.0 - ib).abs() < 1e-15);
    assert!((s.parts[2].current.0 - 160.0 * ib).abs() < 1e-13);
    let vc = c.find_node("c").unwrap();
    assert!((s.nodes[vc].0 - (12.0 - 2700.0 * 160.0 * ib)).abs() < 1e-10);
    assert!(s.worst_residual() < 1e-9, "{:?}", s.residuals);
}

#[test]
fn saturates_and_cuts_off() {
    let mut c = Circuit::new("sw");
    c.rail("vcc", Volts(5.0)).unwrap();
    c.rail("drive", Volts(5.0)).unwrap();
    c.add("RB", resistor(4700.0), &["drive", "b"]).unwrap();
    c.add("RC", resistor(1000.0), &["vcc", "c"]).unwrap();
    c.add(
        "Q1",
        Kind::Bjt {
            polarity: Polarity::Npn,
            transistor: transistor(Vbe::Diode {
                volts: Volts(0.65),
                at: Amps(1e-3),
                n: 1.0,
            }),
        },
        &["c", "b", "gnd"],
    )
    .unwrap();
    c.check().unwrap();
    let s = solve(&c, &c.typical(&[]).unwrap()).unwrap();
    assert_eq!(s.parts[2].region, Some(Region::Saturation));
    assert!((s.parts[2].across.0 - 0.15).abs() < 1e-12);
    assert!(s.worst_residual() < 1e-9);
    let drive = c.find_node("drive").unwrap();
    c.rails[drive] = Some(Volts(0.0));
    let s = solve(&c, &c.typical(&[]).unwrap()).unwrap();
    assert_eq!(s.parts[2].region, Some(Region::Cutoff));
    assert_eq!(s.parts[2].current.0, 0.0);
}

#[test]
fn a_cross_coupled_pair_latches() {
    // An NPN and a PNP each feeding the other's base (the thyristor's structure): both off and both on are
    // operating points, and the solver says so.
    let mut c = Circuit::new("latch");
    c.rail("vcc", Volts(5.0)).unwrap();
    c.add("R1", resistor(10e3), &["vcc", "x"]).unwrap();
    c.add("R2", resistor(10e3), &["y", "gnd"]).unwrap();
    c.add(
        "Q1",
        Kind::Bjt {
            polarity: Polarity::Npn,
            transistor: transistor(Vbe::Fixed(Volts(0.6))),
        },
        &["x", "y", "gnd"],
    )
    .unwrap();
    c.add(
        "Q2",
        Kind::Bjt {
            polarity: Polarity::Pnp,
            transistor: transistor(Vbe::Fixed(Volts(0.6))),
        },
        &["y", "x", "vcc"],
    )
    .unwrap();
    c.check().unwrap();
    let s = solve(&c, &c.typical(&[]).unwrap()).unwrap();
    let latch = s.latch.expect("a latch");
    assert!(latch.points >= 2, "{latch:?}");
    assert!(latch.parts.contains(&"Q1".to_string()), "{latch:?}");
    // Without the search only one point is reported.
    let quick = Solver::new(&c)
        .solve(&c.typical(&[]).unwrap(), &Options { check_latch: false })
        .unwrap();
    assert!(quick.latch.is_none() && !quick.latch_checked);
}

/// The starter current mirror: RREF into the diode-connected Q1, Q2 copying into RL (diode-law VBE).
fn mirror() -> Circuit {
    let text = include_str!("../../examples/starters/mirror.toml");
    let mut list = file::parse("mirror.toml", text).unwrap_or_else(|e| panic!("{e}"));
    list.remove(0)
}

#[test]
fn the_mirror_has_one_operating_point() {
    // Regression: with RREF 8k2 the search once accepted a second point, Q1 held saturated with node m at
    // vce_sat (so VBE = 0.2 V, where the diode law passes ~1e-11 A) and Q2 off, although RREF drives
    // ~1.07 mA into m. The collector's share of a saturated diode-connected transistor is fixed by no
    // equation, so Newton stopped on a singular step with KCL at m unmet, and the verdict read IC = 0.
    let c = mirror();
    let q1 = c.find_part("Q1").unwrap();
    for rref in [8200.0, 1000.0, 4700.0, 22e3, 100e3] {
        let b = c.typical(&[Ohms(rref)]).unwrap();
        let s = solve(&c, &b).unwrap();
        assert!(s.latch_checked, "RREF {rref}");
        assert_eq!(s.latch, None, "RREF {rref}");
        assert_eq!(s.parts[q1].region, Some(Region::Active), "RREF {rref}");
        assert!(s.worst_residual() < 1e-9, "RREF {rref}: {:?}", s.residuals);
        assert_genuine(&c, &b, &s, &format!("mirror RREF {rref}"));
    }
}

#[test]
fn a_diode_connected_transistor_is_never_saturated() {
    // VCB = 0 keeps a diode-connected transistor at the edge of saturation, where IC = β·IB holds: even when
    // its VCE (= VBE) is below vce_sat it is reported active, never saturated. Here vce_sat 0.7 V sits above
    // the junction's 0.65 V at 1 mA, so the old rule would have sent it to saturation, where no point exists.
    let mut c = Circuit::new("diode-connected");
    c.rail("vcc", Volts(9.0)).unwrap();
    c.add("R1", resistor(8200.0), &["vcc", "m"]).unwrap();
    let mut t = transistor(Vbe::Diode {
        volts: Volts(0.65),
        at: Amps(1e-3),
        n: 1.0,
    });
    t.vce_sat = Volts(0.7);
    c.add(
        "Q1",
        Kind::Bjt {
            polarity: Polarity::Npn,
            transistor: t,
        },
        &["m", "m", "gnd"],
    )
    .unwrap();
    c.check().unwrap();
    let b = c.typical(&[]).unwrap();
    let s = solve(&c, &b).unwrap();
    assert_eq!(s.parts[1].region, Some(Region::Active));
    assert!(s.parts[1].across.0 < 0.7, "{:?}", s.parts[1]);
    assert!(s.worst_residual() < 1e-9);
    assert_genuine(&c, &b, &s, "diode-connected");
}

/// Asserts that `s` is an operating point of build `b`, from its reported quantities rather than the
/// solver's own verdicts: KCL within 1e-9 at every node, and every transistor inside the region it is
/// reported in (the region rules of the module docs of `bjt`). The diode law is the model's: the exponential
/// continued as a straight line past 80·n·VT above the reference voltage ([`bjt::exp_safe`]), which only a
/// junction straight across a rail with no resistor reaches (currents above 1e30 A).
fn assert_genuine(c: &Circuit, b: &Build, s: &Solution, what: &str) {
    let law = |scale: f64, u: f64| bjt::exp_safe(scale, u).0;
    assert!(
        s.worst_residual() < 1e-9,
        "{what}: KCL residuals {:?}",
        s.residuals
    );
    for (i, (p, el)) in c.parts.iter().zip(&b.elements).enumerate() {
        let Element::Bjt(q) = el else { continue };
        let st = &s.parts[i];
        let (ib, ic, vbe, vce) = (st.base_current.0, st.current.0, st.control.0, st.across.0);
        let near = |a: f64, b: f64| (a - b).abs() <= 1e-9 * (a.abs() + b.abs()) + 1e-18;
        let name = &p.name;
        match st.region {
            Some(Region::Active) => {
                assert!(
                    ib >= -1e-18 && near(ic, q.beta * ib),
                    "{what}: {name} {st:?}"
                );
                if p.pins[0] != p.pins[1] {
                    assert!(vce >= q.vce_sat - 1e-9, "{what}: {name} {st:?}");
                }
                if let Law::Diode { v0, i0, nvt } = q.law {
                    assert!(near(ic, law(i0, (vbe - v0) / nvt)), "{what}: {name}");
                    assert!(ic >= i0 * CUTOFF_FRACTION, "{what}: {name} {st:?}");
                } else {
                    assert!(near(vbe, q.law.vbe_at(0.0)), "{what}: {name} {st:?}");
                }
            }
            Some(Region::Saturation) => {
                assert_ne!(p.pins[0], p.pins[1], "{what}: {name} diode-connected");
                assert!((vce - q.vce_sat).abs() < 1e-9, "{what}: {name} {st:?}");
                assert!(ib >= 0.0 && ic >= 0.0, "{what}: {name} {st:?}");
                assert!(ic <= q.beta * ib * (1.0 + 1e-12), "{what}: {name} {st:?}");
                if let Law::Diode { v0, i0, nvt } = q.law {
                    let alpha = q.beta / (q.beta + 1.0);
                    let ie = law(i0 / alpha, (vbe - v0) / nvt);
                    assert!(near(ib + ic, ie), "{what}: {name} {st:?}");
                }
            }
            Some(Region::Cutoff) => {
                assert!(ib == 0.0 && ic == 0.0, "{what}: {name} {st:?}");
                let on = match q.law {
                    Law::Fixed { vbe: v } => v,
                    Law::Diode { v0, .. } => v0,
                };
                assert!(vbe <= on + 1e-9, "{what}: {name} {st:?}");
            }
            r => panic!("{what}: {name} in {r:?}"),
        }
    }
}

/// The thyristor-like cross-coupled pair of `a_cross_coupled_pair_latches`, with its resistors and law.
fn cross_pair(r1: f64, r2: f64, vbe: Vbe) -> Circuit {
    let mut c = Circuit::new("latch");
    c.rail("vcc", Volts(5.0)).unwrap();
    c.add("R1", resistor(r1), &["vcc", "x"]).unwrap();
    c.add("R2", resistor(r2), &["y", "gnd"]).unwrap();
    let bjt = |polarity| Kind::Bjt {
        polarity,
        transistor: transistor(vbe),
    };
    c.add("Q1", bjt(Polarity::Npn), &["x", "y", "gnd"]).unwrap();
    c.add("Q2", bjt(Polarity::Pnp), &["y", "x", "vcc"]).unwrap();
    c.check().unwrap();
    c
}

#[test]
fn every_latch_reported_is_a_genuine_second_operating_point() {
    // A case sweep: the cross-coupled pair over resistances and both VBE laws (it latches: both off and both
    // on), and the mirror over its two resistors (it must not). Every latch reported must carry a second
    // point that meets KCL and its regions, in regions that differ where the latch says; the count keeps the
    // sweep from passing on no latch at all.
    let ohms = [470.0, 2200.0, 10e3, 47e3, 220e3];
    let laws = [
        Vbe::Fixed(Volts(0.6)),
        Vbe::Diode {
            volts: Volts(0.62),
            at: Amps(1e-3),
            n: 1.3,
        },
    ];
    let mut latches = 0;
    for vbe in laws {
        for &r1 in &ohms {
            for &r2 in &ohms {
                let c = cross_pair(r1, r2, vbe);
                let b = c.typical(&[]).unwrap();
                let s = solve(&c, &b).unwrap();
                let what = format!("pair {r1} {r2} {vbe:?}");
                assert_genuine(&c, &b, &s, &what);
                if let Some(l) = &s.latch {
                    latches += 1;
                    assert!(l.points >= 2, "{what}: {l:?}");
                    assert_genuine(&c, &b, &l.second, &format!("{what}, second point"));
                    let moved = |name: &String| {
                        let i = c.find_part(name).unwrap();
                        l.second.parts[i].region != s.parts[i].region
                    };
                    assert!(!l.parts.is_empty() && l.parts.iter().any(moved), "{what}");
                    assert!(l.second.nodes != s.nodes, "{what}");
                }
            }
        }
    }
    assert!(latches >= 10, "only {latches} latches in the sweep");
    let m = mirror();
    let rl = m.find_part("RL").unwrap();
    for &rref in &ohms {
        for rload in [100.0, 2200.0, 10e3] {
            let mut m = m.clone();
            m.parts[rl].kind = resistor(rload);
            let b = m.typical(&[Ohms(rref)]).unwrap();
            let s = solve(&m, &b).unwrap();
            if let Some(l) = &s.latch {
                assert_genuine(
                    &m,
                    &b,
                    &l.second,
                    &format!("mirror {rref} {rload}, second point"),
                );
            }
            assert!(
                s.latch_checked && s.latch.is_none(),
                "mirror {rref} {rload}"
            );
            assert_genuine(&m, &b, &s, &format!("mirror {rref} {rload}"));
        }
    }
}

#[test]
fn parallel_fixed_vbe_junctions_are_refused() {
    // Two fixed-VBE transistors on one base and emitter: the equations fix only the sum of their base
    // currents, so the circuit is refused with both names and the way out.
    let build = |vbe2: Vbe, polarity2: Polarity| {
        let mut c = Circuit::new("mirror");
        c.rail("v9", Volts(9.0)).unwrap();
        c.add("RREF", resistor(8200.0), &["v9", "m"]).unwrap();
        c.add("RL", resistor(2200.0), &["v9", "out"]).unwrap();
        let fixed = Vbe::Fixed(Volts(0.65));
        c.add(
            "Q1",
            Kind::Bjt {
                polarity: Polarity::Npn,
                transistor: transistor(fixed),
            },
            &["m", "m", "gnd"],
        )
        .unwrap();
        c.add(
            "Q2",
            Kind::Bjt {
                polarity: polarity2,
                transistor: transistor(vbe2),
            },
            &["out", "m", "gnd"],
        )
        .unwrap();
        c
    };
    let err = build(Vbe::Fixed(Volts(0.65)), Polarity::Npn)
        .check()
        .unwrap_err();
    assert!(matches!(err, ModelError::ParallelJunctions { .. }), "{err}");
    let text = err.to_string();
    assert!(!text.contains('\n'), "{text}");
    for word in [
        "Q1",
        "Q2",
        "'m'",
        "'gnd'",
        "diode law",
        "vbe = { volts, at, n }",
    ] {
        assert!(text.contains(word), "{word}: {text}");
    }
    // One junction by the diode law decides the split (the fixed one sets VBE, the law gives the other's
    // current): accepted, and solved with both transistors carrying current.
    let c = build(
        Vbe::Diode {
            volts: Volts(0.65),
            at: Amps(1e-3),
            n: 1.0,
        },
        Polarity::Npn,
    );
    c.check().unwrap();
    let b = c.typical(&[]).unwrap();
    let s = solve(&c, &b).unwrap();
    assert!(s.parts[3].current.0 > 0.0 && s.parts[2].current.0 > 0.0);
    assert_genuine(&c, &b, &s, "one fixed, one by the law");
    // A PNP's junction points the other way: not in parallel with the NPN's, and not refused.
    let c = build(Vbe::Fixed(Volts(0.65)), Polarity::Pnp);
    assert!(c.check().is_ok());
}
