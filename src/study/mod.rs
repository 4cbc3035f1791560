//! Study stage: drivers above the single solve of [`crate::run`] — the mesh convergence study
//! with its GCI maths, adaptive refinement, the verification suite against published reference
//! solutions, and the grid (finite-difference) cross-checks.

pub mod adaptive;
pub mod converge;
pub mod crosscheck;
pub mod gci;
pub mod sweep;
pub mod verify;
