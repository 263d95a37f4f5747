//! Unit tests of the engine as a whole: small circuits solved by hand.

use super::*;
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
