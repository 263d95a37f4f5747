//! Circuits of your own: any small DC network of resistors, rails, sources and semiconductors, described
//! by name and solved exactly.
//!
//! A [`Circuit`] holds named nodes (`gnd` is 0 V), rails (nodes at fixed voltages), parts with their pins,
//! targets and hard requirements ([`model`]). A [`Build`] fixes every slot's resistance and every ranged
//! parameter; [`solver`] finds its DC operating point by modified nodal analysis and Newton's method, with
//! the piecewise device models (bipolar transistor, FET, zener, op-amp) handled exactly by a search over
//! region assignments. [`target`] turns a solution into the circuit's error and its checks, and [`file`]
//! reads `[[circuit]]` tables. One file per device model: [`bjt`] (the stage model's transistor and VBE
//! law, reused), [`diode`], [`zener`], [`fet`] (the square law) with [`jfet`] and [`mosfet`], [`source`],
//! [`reference`] and [`opamp`]. [`of_stage`] writes a closed-form stage as a circuit: the engine's first
//! test. Relies on [`crate::stage`] and [`crate::units`].

pub mod bjt;
pub mod diode;
pub mod fet;
pub mod file;
pub mod ideal;
pub mod jfet;
mod mna;
pub mod model;
pub mod mosfet;
pub mod of_stage;
pub mod opamp;
pub mod reference;
pub mod region;
mod resistor;
pub mod solver;
mod source;
pub mod target;
pub mod zener;

pub use model::{
    Build, Circuit, Element, Kind, ModelError, NodeId, Part, Pick, Quantity, Ranged, Requirement,
    SlotRule, Target, GROUND,
};
pub use region::Region;
pub use solver::{solve, Latch, Options, PartState, Solution, SolveError, Solver};

#[cfg(test)]
mod tests;
