//! Networks that do not reduce to series and parallel, solved by modified
//! nodal analysis. `netlist` describes a network by numbers; `solve`
//! solves one case of it.

pub mod diagnose;
pub mod netlist;
pub mod solve;
pub mod topology;

pub use netlist::{CouplingBy, Elem, ElemKind, Given, Net, GROUND, MAX_ELEMENTS, MAX_NODES};
pub use solve::{solve, Failure, Request, Solution};
pub use topology::{check as check_topology, TopoError};
pub mod program;
pub use program::{Field, NetProgram};
