//! # sayso-solver
//!
//! The joint energy and the solver that finds its lowest-energy joint labelling.
//!
//! Owns: the joint energy's serialised form, its evaluation and validation (`energy`), max-flow,
//! alpha-expansion over Potts problems, and the coupled joint solve (`joint`).
//! Must not: know about language, files, HTTP or the meaning of classes; it works on numbers and graphs.

pub mod energy;
pub mod expansion;
pub mod expansion_reference;
pub mod joint;
mod joint_coupled;
mod joint_dual;
mod joint_labeller;
mod joint_moves;
pub mod joint_region;
pub mod labelling;
pub mod maxflow;
pub mod maxflow_reference;
mod potts_bound;
pub mod potts_labeller;
