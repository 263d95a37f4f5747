//! PLACEHOLDER until the slot-fix branch lands: the Candidate type only.
use super::{Network, PartId};
use crate::units::Ohms;

/// One candidate network for a slot, built from stock parts.
#[derive(Clone, Debug, PartialEq)]
pub struct Candidate {
    /// The network.
    pub network: Network,
    /// Its nominal resistance.
    pub ohms: Ohms,
    /// Stock parts used, sorted by part id, with counts.
    pub uses: Vec<(PartId, u32)>,
    /// Resistors in it.
    pub parts: usize,
}
