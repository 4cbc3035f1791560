//! fem stage placeholder
use crate::error::Result;
use crate::{mesh::Mesh, model::Section};
#[derive(Debug, Clone)]
pub struct System;
pub fn assemble(_s: &Section, _m: &Mesh) -> Result<System> { todo!() }
