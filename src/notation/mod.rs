//! How values are written and read: resistances in the IEC 60062 letter code, other quantities with SI
//! prefixes, and IEC 60063 preferred-number series (the network notation, a+b and a|b, lives with the network
//! it describes, in `network::notation`).
//!
//! Everything here is pure text-to-value conversion; it knows nothing of stock or circuits.

pub mod eseries;
pub mod quantity;
pub mod text;
pub mod value;

pub use eseries::Series;
pub use quantity::{
    amps, engineering, parse_amps, parse_power, parse_tolerance, parse_volts, parse_watts,
    signed_percent, trim_number, volts, QuantityError,
};
pub use text::{excerpt, printable};
pub use value::{code, parse_ohms, Code, ValueError};
