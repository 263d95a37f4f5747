//! Published worked examples of voltage-divider bias analysis, reproduced by the exact solver to the
//! precision the sources print. These are reference circuits from textbooks, not demo designs.

use biasfit::stage::{parse, Region, Slot, SlotValues};
use biasfit::units::{Celsius, Ohms};

/// A divider stage around a transistor with a single beta and a fixed VBE of 0.7 V, as the textbooks
/// assume. The target current is irrelevant to the analysis; it only has to be valid.
fn stage(supply: f64, beta: f64) -> biasfit::stage::Stage {
    let text = format!(
        "[[stage]]\ntopology = \"divider\"\nsupply = {supply}\nic = \"1mA\"\n\
         [stage.transistor]\nbeta = {beta}\nvbe = 0.7\n"
    );
    parse("reference.toml", &text).unwrap().stages.remove(0)
}

fn values(r1: f64, r2: f64, rc: f64, re: f64) -> SlotValues {
    SlotValues::from_pairs([
        (Slot::R1, Ohms(r1)),
        (Slot::R2, Ohms(r2)),
        (Slot::RC, Ohms(rc)),
        (Slot::RE, Ohms(re)),
    ])
}

/// Whether `x` rounds to the published figure: within half a unit of its last printed digit.
fn matches(x: f64, published: f64, last_digit: f64) -> bool {
    (x - published).abs() <= 0.5 * last_digit + 1e-12
}

#[test]
fn sedra_smith_divider_example() {
    // Sedra & Smith, Microelectronic Circuits, the worked example of a voltage-divider-biased stage "to
    // determine the voltages at all nodes and the currents through all branches" (example numbering varies
    // by edition): VCC = 15 V, RB1 = 100 kΩ, RB2 = 50 kΩ, RE = 3 kΩ, RC = 5 kΩ, β = 100, VBE = 0.7 V.
    // Published: VBB = 5 V, RBB = 33.3 kΩ, IE = 1.29 mA, IB = 0.0128 mA, VB = 4.57 V, IC = 1.28 mA,
    // VC = 8.6 V (values as reproduced in the expertsmind.com write-up of the example; VE = 3.87 V from
    // memory of the book).
    let st = stage(15.0, 100.0);
    let op = st.solve(&values(100e3, 50e3, 5e3, 3e3), 100.0, Celsius(25.0));
    assert_eq!(op.region, Region::Active);
    assert!(matches(op.ie.0 * 1e3, 1.29, 0.01), "IE {}", op.ie.0);
    assert!(matches(op.ib.0 * 1e3, 0.0128, 0.0001), "IB {}", op.ib.0);
    assert!(matches(op.vb.0, 4.57, 0.01), "VB {}", op.vb.0);
    assert!(matches(op.ve.0, 3.87, 0.01), "VE {}", op.ve.0);
    assert!(matches(op.ic.0 * 1e3, 1.28, 0.01), "IC {}", op.ic.0);
    assert!(matches(op.vc.0, 8.6, 0.1), "VC {}", op.vc.0);
}

#[test]
fn boylestad_nashelsky_exact_divider_example() {
    // Boylestad & Nashelsky, Electronic Devices and Circuit Theory, the exact analysis of the
    // voltage-divider configuration (Example 4.8 in the 11th edition): VCC = 22 V, R1 = 39 kΩ,
    // R2 = 3.9 kΩ, RC = 10 kΩ, RE = 1.5 kΩ, β = 140, VBE = 0.7 V. Published (from memory of the book; the
    // circuit's values are as restated on askfilo.com): RTh = 3.55 kΩ, ETh = 2 V, IB = 6.05 µA,
    // ICQ = 0.85 mA, VCEQ = 12.22 V.
    let st = stage(22.0, 140.0);
    let op = st.solve(&values(39e3, 3.9e3, 10e3, 1.5e3), 140.0, Celsius(25.0));
    assert_eq!(op.region, Region::Active);
    // The Thevenin source the base sees, with no base current: VB would equal ETh.
    let eth = 22.0 * 3.9 / 42.9;
    assert!(matches(eth, 2.0, 0.01));
    assert!(matches(39.0 * 3.9 / 42.9, 3.55, 0.01));
    assert!(matches(op.ib.0 * 1e6, 6.05, 0.01), "IB {}", op.ib.0);
    assert!(matches(op.ic.0 * 1e3, 0.85, 0.01), "IC {}", op.ic.0);
    // The book rounds IC to 0.85 mA and takes IE ≈ IC before forming VCE = 22 − IC·(RC + RE); with the
    // exact IC = 0.846 mA and IE = IC·141/140 the solver finds 12.26 V. Both agree to the 0.05 V that the
    // book's rounding of IC (±0.005 mA over 11.5 kΩ) allows.
    assert!((op.vce.0 - 12.22).abs() < 0.06, "VCE {}", op.vce.0);
    let book = 22.0 - 0.85e-3 * 11.5e3;
    assert!(
        matches(book, 12.22, 0.01),
        "the book's own arithmetic gives {book}"
    );
}
