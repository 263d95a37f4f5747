//! The transistor in its network: given the affine picture every topology reduces to,
//!
//! ```text
//! VBE = a0 − ab·IB − ac·IC        (the base loop, by Kirchhoff's voltage law)
//! VCE = c0 − cb·IB − cc·IC        (the collector loop)
//! ```
//!
//! find the region and the currents. Active: IC = β·IB and VBE from its law. Saturated: VCE = vce_sat and
//! VBE from its law, with IC < β·IB. Cut off: no current. A fixed VBE gives closed forms; the diode law
//! VBE = V0 + n·VT·ln(IC/I0) is solved by Newton's method in ln IC inside a bracket that always holds the
//! one root, falling back to bisection, so it converges for every input.

use super::Region;

/// The network around the transistor, as the two loop equations' coefficients (volts and ohms).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Env {
    /// Base-loop open-circuit voltage: the VBE the network would give with no transistor current.
    pub a0: f64,
    /// Base-loop resistance seen by IB.
    pub ab: f64,
    /// Base-loop resistance seen by IC.
    pub ac: f64,
    /// Collector-loop open-circuit voltage: the VCE with the transistor off.
    pub c0: f64,
    /// Collector-loop resistance seen by IB.
    pub cb: f64,
    /// Collector-loop resistance seen by IC.
    pub cc: f64,
}

/// The VBE law at one temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Law {
    /// Constant VBE.
    Fixed {
        /// VBE in volts.
        vbe: f64,
    },
    /// VBE = v0 + nvt·ln(IC / i0).
    Diode {
        /// VBE at i0, volts.
        v0: f64,
        /// The reference current, amperes.
        i0: f64,
        /// n·kT/q, volts.
        nvt: f64,
    },
}

impl Law {
    /// VBE at a collector current.
    pub fn vbe_at(&self, ic: f64) -> f64 {
        match *self {
            Law::Fixed { vbe } => vbe,
            Law::Diode { v0, i0, nvt } => v0 + nvt * (ic / i0).ln(),
        }
    }
}

/// The transistor's solved state.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Junction {
    /// The region.
    pub region: Region,
    /// Base current, amperes.
    pub ib: f64,
    /// Collector current, amperes.
    pub ic: f64,
}

/// Below this fraction of the diode law's reference current the junction counts as off: VBE is then about
/// 14·n·VT (0.36 V at room temperature) under V0, well out of conduction.
pub const CUTOFF_FRACTION: f64 = 1e-6;

/// Solves for the region and currents. `beta` is at the solve's temperature already.
pub fn solve(env: &Env, law: &Law, beta: f64, vce_sat: f64) -> Junction {
    let off = Junction {
        region: Region::Cutoff,
        ib: 0.0,
        ic: 0.0,
    };
    // In the active region IB = IC/β, so the base loop is VBE = a0 − k·IC.
    let k = env.ab / beta + env.ac;
    let ic = match *law {
        Law::Fixed { vbe } => {
            let drive = env.a0 - vbe;
            if drive.is_nan() || drive <= 0.0 {
                return off;
            }
            drive / k
        }
        Law::Diode { v0, i0, nvt } => match active_diode(env.a0, k, v0, i0, nvt) {
            Some(ic) => ic,
            None => return off,
        },
    };
    let vce = env.c0 - env.cb * ic / beta - env.cc * ic;
    if vce >= vce_sat {
        return Junction {
            region: Region::Active,
            ib: ic / beta,
            ic,
        };
    }
    saturated(env, law, beta, vce_sat)
}

/// The active-region diode-law root, or None when it lies below the cutoff current.
///
/// g(x) = a0 − k·eˣ − v0 − nvt·(x − ln i0) falls strictly with x = ln IC, from +∞ to −∞, so it has exactly one
/// root. The bracket starts at the cutoff current and at a current where the linear term alone overwhelms.
fn active_diode(a0: f64, k: f64, v0: f64, i0: f64, nvt: f64) -> Option<f64> {
    let ln_i0 = i0.ln();
    let g = |x: f64| a0 - k * x.exp() - v0 - nvt * (x - ln_i0);
    let mut lo = (i0 * CUTOFF_FRACTION).ln();
    let g_lo = g(lo);
    if g_lo.is_nan() || g_lo <= 0.0 {
        return None;
    }
    // At IC ≥ i0 the log term is ≥ 0, so g ≤ a0 − v0 − k·IC, negative at twice (a0 − v0)/k.
    let mut hi = (i0.max(2.0 * (a0 - v0) / k)).ln();
    if g(hi) > 0.0 {
        // Only reachable through rounding; widen until the sign changes.
        for _ in 0..200 {
            hi += 1.0;
            if g(hi) <= 0.0 {
                break;
            }
        }
    }
    // Start where a fixed VBE of v0 would put IC: usually within a few n·VT of the root.
    let guess = ((a0 - v0) / k).ln();
    let mut x = if guess > lo && guess < hi {
        guess
    } else {
        0.5 * (lo + hi)
    };
    for _ in 0..200 {
        let gx = g(x);
        if gx == 0.0 {
            break;
        }
        if gx > 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let slope = -k * x.exp() - nvt;
        let mut next = x - gx / slope;
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if (next - x).abs() <= 1e-15 * x.abs().max(1.0) || hi - lo <= 1e-15 * hi.abs().max(1.0) {
            x = next;
            break;
        }
        x = next;
    }
    Some(x.exp())
}

/// The saturated solution: VCE = vce_sat. The two loop equations are then linear in (IB, IC) for a given
/// VBE, so IB and IC are affine in VBE.
fn saturated(env: &Env, law: &Law, beta: f64, vce_sat: f64) -> Junction {
    let det = env.ab * env.cc - env.ac * env.cb;
    let cs = env.c0 - vce_sat;
    let currents = |vbe: f64| {
        let ib = ((env.a0 - vbe) * env.cc - env.ac * cs) / det;
        let ic = (env.ab * cs - env.cb * (env.a0 - vbe)) / det;
        (ib, ic)
    };
    let vbe = match *law {
        Law::Fixed { vbe } => vbe,
        Law::Diode { v0, i0, nvt } => {
            // In saturation the junction's law is written for the forward transport current, α·IE, which
            // equals IC in the active region: the two solutions meet at the edge of saturation.
            let alpha = beta / (beta + 1.0);
            let ie = |v: f64| {
                let (ib, ic) = currents(v);
                ib + ic
            };
            let h = |v: f64| v - v0 - nvt * (alpha * ie(v) / i0).ln();
            // IE falls as VBE rises (slope −(cc − cb)/det, and cc ≥ cb), so h rises: one root.
            let slope = (env.cc - env.cb) / det;
            if slope <= 0.0 {
                // IE does not depend on VBE (collector feedback): the law gives VBE directly.
                v0 + nvt * (alpha * ie(v0) / i0).ln()
            } else {
                // IE reaches zero at v_max; h → +∞ there.
                let v_max = env.a0 + cs * (env.ab - env.ac) / (env.cc - env.cb);
                let mut hi = v_max;
                let mut lo = v0.min(v_max) - 1.0;
                for _ in 0..200 {
                    if h(lo) < 0.0 {
                        break;
                    }
                    lo -= 1.0;
                }
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if mid <= lo || mid >= hi {
                        break;
                    }
                    let hm = h(mid);
                    if hm.is_nan() || hm > 0.0 {
                        hi = mid;
                    } else {
                        lo = mid;
                    }
                }
                0.5 * (lo + hi)
            }
        }
    };
    let (ib, ic) = currents(vbe);
    if ib <= 0.0 && ic <= 0.0 {
        return Junction {
            region: Region::Cutoff,
            ib: 0.0,
            ic: 0.0,
        };
    }
    // A base driven so hard that the collector current would reverse is beyond this model: hold IC at 0.
    if ic < 0.0 {
        let ib = (env.a0 - vbe) / env.ab;
        return Junction {
            region: Region::Saturation,
            ib,
            ic: 0.0,
        };
    }
    Junction {
        region: Region::Saturation,
        ib,
        ic,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn env() -> Env {
        // A divider-like network: Thevenin 3 V behind 8 kΩ, RE 1k5, RC 3k3, 15 V supply (invented values).
        Env {
            a0: 3.0,
            ab: 8_000.0 + 1_500.0,
            ac: 1_500.0,
            c0: 15.0,
            cb: 1_500.0,
            cc: 3_300.0 + 1_500.0,
        }
    }

    #[test]
    fn fixed_active_by_hand() {
        // IB = (3 − 0.7)/(8000 + 151·1500) = 2.3/234500 A; IC = 150·IB = 1.47122 mA.
        let j = solve(&env(), &Law::Fixed { vbe: 0.7 }, 150.0, 0.2);
        assert_eq!(j.region, Region::Active);
        assert!((j.ib - 2.3 / 234_500.0).abs() < 1e-15);
        assert!((j.ic - 150.0 * 2.3 / 234_500.0).abs() < 1e-13);
    }

    #[test]
    fn diode_law_root_satisfies_its_equation() {
        let law = Law::Diode {
            v0: 0.65,
            i0: 1e-3,
            nvt: 0.025_852,
        };
        let e = env();
        let j = solve(&e, &law, 150.0, 0.2);
        assert_eq!(j.region, Region::Active);
        let vbe_network = e.a0 - e.ab * j.ib - e.ac * j.ic;
        assert!((vbe_network - law.vbe_at(j.ic)).abs() < 1e-12);
    }

    #[test]
    fn no_drive_is_cutoff() {
        // 0.2 V of drive: under a fixed 0.65 V nothing flows, and under the diode law the root lies below a
        // millionth of the reference current (the cutoff line sits near V0 − 14·VT = 0.29 V).
        let mut e = env();
        e.a0 = 0.2;
        assert_eq!(
            solve(&e, &Law::Fixed { vbe: 0.65 }, 150.0, 0.2).region,
            Region::Cutoff
        );
        let law = Law::Diode {
            v0: 0.65,
            i0: 1e-3,
            nvt: 0.025_852,
        };
        assert_eq!(solve(&e, &law, 150.0, 0.2).region, Region::Cutoff);
    }
}
