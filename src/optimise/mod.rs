//! The selection: choose, for every slot of every stage on every board, a stocked network so that the
//! operating points land closest to their targets.
//!
//! Two steps, both exact. For each stage, an exact search with pruning lists its best distinct variants
//! (complete slot assignments with their exact error from the DC solver); then an integer program
//! ([`share`]) chooses how many copies of each variant to build so that the stock is shared and never
//! over-drawn.

pub mod circuit;
pub mod circuit_step;
pub mod design;
pub mod search;
pub mod share;

pub use share::{allocate, Allocation, ShareError, Variant};
