//! Starter models written by `xsheat new --template NAME`: commented model files of our own
//! scenarios (invented numbers), kept in `assets/templates/` and compiled into the program.
//! Each solves as written with every self-check passing (tested).

use crate::error::{Error, Result};

/// The templates: name, one-line description, model text.
pub const TEMPLATES: [(&str, &str, &str); 3] = [
    (
        "wall",
        "an insulated external wall strip: three layers, surface resistances, environments",
        include_str!("../../assets/templates/wall.toml"),
    ),
    (
        "pipes",
        "two heating pipes buried in layered ground: circles as holes, a cut",
        include_str!("../../assets/templates/pipes.toml"),
    ),
    (
        "tunnel",
        "a box utility tunnel in ground: a lining region, an air-space hole, a line profile",
        include_str!("../../assets/templates/tunnel.toml"),
    ),
];

/// The model text of template `name`, or an error listing the templates.
pub fn template(name: &str) -> Result<&'static str> {
    TEMPLATES
        .iter()
        .find(|(n, _, _)| *n == name)
        .map(|(_, _, text)| *text)
        .ok_or_else(|| {
            let list: Vec<String> = TEMPLATES
                .iter()
                .map(|(n, d, _)| format!("{n} ({d})"))
                .collect();
            Error::input(format!(
                "--template {}: no such template; choose one of: {}",
                crate::error::printable(name),
                list.join("; ")
            ))
        })
}
