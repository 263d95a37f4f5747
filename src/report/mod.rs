//! Reports: pure renderers that turn a stage's results into drawings and pages.

pub mod svg;
