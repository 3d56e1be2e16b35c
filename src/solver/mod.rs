//! The solver: finds the lowest-energy joint labelling.
//!
//! Owns: max-flow, alpha-expansion over Potts problems, and (in later modules) the coupled step.
//! Must not: know about language, files, HTTP or the meaning of classes; it works on numbers and graphs.

pub mod expansion;
pub mod expansion_reference;
pub mod labelling;
pub mod maxflow;
pub mod maxflow_reference;
