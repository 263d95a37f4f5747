//! Where a piecewise device sits. Each region is one smooth set of equations; the solver picks a region for
//! every device, solves, and keeps the assignment only when every device's solution lies inside the region
//! it was given (see [`super::solver`]).

use std::fmt;

/// A device's operating region.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Region {
    /// Bipolar: IC = β·IB with VBE from its law.
    Active,
    /// Bipolar: VCE held at vce_sat, IC < β·IB.
    Saturation,
    /// Bipolar or FET: no current.
    Cutoff,
    /// FET: VDS below the overdrive, the channel acts as a voltage-controlled resistor.
    Triode,
    /// FET: VDS at or above the overdrive, the drain current set by VGS alone (the square law).
    FetSaturation,
    /// Zener: conducting forward.
    Forward,
    /// Zener: neither forward nor in breakdown.
    Blocking,
    /// Zener: reverse breakdown, holding its voltage.
    Breakdown,
    /// Op-amp: output = gain × input difference.
    Linear,
    /// Op-amp: output at its upper limit.
    High,
    /// Op-amp: output at its lower limit.
    Low,
}

impl Region {
    /// The region's name in files and reports ("active", "saturation", "triode").
    pub fn name(self) -> &'static str {
        match self {
            Region::Active => "active",
            Region::Saturation | Region::FetSaturation => "saturation",
            Region::Cutoff => "cutoff",
            Region::Triode => "triode",
            Region::Forward => "forward",
            Region::Blocking => "blocking",
            Region::Breakdown => "breakdown",
            Region::Linear => "linear",
            Region::High => "high",
            Region::Low => "low",
        }
    }
}

impl fmt::Display for Region {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What a device says of the solution found in the region it was given.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Verdict {
    /// The solution lies inside the region.
    Inside,
    /// The solution lies outside; this region is where it points.
    Move(Region),
    /// A diode-law transistor held off while its junction sits above the cut-off voltage: consistent only
    /// if, made active with everything else unchanged, it would carry less than the cut-off current (the
    /// closed form's rule, [`crate::stage::junction::CUTOFF_FRACTION`]).
    Gap,
}
