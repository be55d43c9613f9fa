//! Networks that do not reduce to series and parallel, solved by modified
//! nodal analysis. `netlist` describes a network by numbers; `solve`
//! solves one case of it.

pub mod diagnose;
pub mod netlist;
pub mod solve;
pub mod topology;

pub use netlist::{CouplingBy, Elem, ElemKind, Given, Net, GROUND, MAX_ELEMENTS, MAX_NODES};
pub use solve::{solve, solve_by, Failure, Method, Request, Solution, Workspace, SPARSE_FROM};
pub use topology::{check as check_topology, TopoError};
pub mod program;
pub use program::{with_workspace, Field, NetProgram};
