//! Contact resistances (`[[contacts]]`): a thermal contact resistance R (m²·K/W) on every edge
//! where two named materials meet. This file owns their serde mirror, their validation into
//! [`Contact`]s and their echo. Where the materials meet is the mesh stage's business
//! (`mesh::contact` splits the nodes along those edges).

use super::suggest::{did_you_mean, known_list};
use super::{Material, ModelFile};
use crate::error::{Error, Result, printable};
use serde::{Deserialize, Serialize};

/// Largest contact resistance accepted, m²·K/W (a metre of still air is about 40).
pub const MAX_CONTACT_RESISTANCE: f64 = 1.0e6;

/// `[[contacts]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ContactFile {
    /// The two materials, by name.
    pub between: [String; 2],
    /// Contact resistance, m²·K/W (SI whatever `length_unit`).
    pub resistance: f64,
}

/// A validated contact: material ids `a < b` and the resistance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Contact {
    /// Material id of the first material (the smaller id).
    pub a: usize,
    /// Material id of the second material (the larger id).
    pub b: usize,
    /// Contact resistance, m²·K/W.
    pub resistance: f64,
}

impl Contact {
    /// `a/b` with the material names, for messages and files.
    pub fn label(&self, materials: &[Material]) -> String {
        format!("{}/{}", materials[self.a].name, materials[self.b].name)
    }
}

/// Contacts in file order: two defined, different materials, a positive finite resistance of at
/// most [`MAX_CONTACT_RESISTANCE`], no pair twice (in either order).
pub(super) fn validate_contacts(file: &ModelFile, materials: &[Material]) -> Result<Vec<Contact>> {
    let mut out: Vec<Contact> = Vec::with_capacity(file.contacts.len());
    for (i, c) in file.contacts.iter().enumerate() {
        let label = format!("contacts[{i}]");
        let mut ids = [0usize; 2];
        for (k, name) in c.between.iter().enumerate() {
            ids[k] = materials
                .iter()
                .find(|m| &m.name == name)
                .map(|m| m.id)
                .ok_or_else(|| {
                    Error::input(format!(
                        "{label}: between[{k}]: material \"{}\" is not defined under [materials] (defined: {}){}",
                        printable(name),
                        known_list(file.materials.keys()),
                        did_you_mean(name, file.materials.keys())
                    ))
                })?;
        }
        if ids[0] == ids[1] {
            return Err(Error::input(format!(
                "{label}: between names material \"{}\" twice; a contact joins two different materials",
                printable(&c.between[0])
            )));
        }
        let r = c.resistance;
        if !r.is_finite() || r <= 0.0 || r > MAX_CONTACT_RESISTANCE {
            return Err(Error::input(format!(
                "{label}: resistance = {r} m²·K/W must be positive, finite and at most {MAX_CONTACT_RESISTANCE} (a perfect contact is no contact entry)"
            )));
        }
        let (a, b) = (ids[0].min(ids[1]), ids[0].max(ids[1]));
        if let Some(j) = out.iter().position(|o| o.a == a && o.b == b) {
            return Err(Error::input(format!(
                "{label}: the pair \"{}\"/\"{}\" already has a contact (contacts[{j}])",
                printable(&c.between[0]),
                printable(&c.between[1])
            )));
        }
        out.push(Contact {
            a,
            b,
            resistance: r,
        });
    }
    Ok(out)
}

/// The contacts as written back by the echo (names in id order, resistance in SI).
pub(super) fn contact_files(contacts: &[Contact], materials: &[Material]) -> Vec<ContactFile> {
    contacts
        .iter()
        .map(|c| ContactFile {
            between: [materials[c.a].name.clone(), materials[c.b].name.clone()],
            resistance: c.resistance,
        })
        .collect()
}
