//! `xsheat compare`: a user's grid results against the element field.

use super::*;

/// Compare a user's grid results with a solved element model. Points outside the section are
/// skipped and listed; a file with no point inside is an input error.
pub fn compare(solved: &Solved, user: &UserGrid, fe_overridden: bool) -> Result<Comparison> {
    let field = ElementField::new(solved);
    let mut points = Vec::with_capacity(user.points.len());
    let mut outside = Vec::new();
    let mut snapped = 0;
    for u in &user.points {
        let placement = field.place([u.x, u.y], 0.0);
        match (field.temperature(&placement), placement) {
            (Some(t_fe), pl) => {
                if matches!(pl, Placement::Snapped(_)) {
                    snapped += 1;
                }
                points.push(PointDiff {
                    x: u.x,
                    y: u.y,
                    t_other: u.temperature,
                    t_fe,
                    diff: u.temperature - t_fe,
                });
            }
            (None, pl) => outside.push(OutsidePoint {
                line: u.line,
                x: u.x,
                y: u.y,
                distance: match pl {
                    Placement::Outside { distance } => distance,
                    _ => f64::NAN,
                },
            }),
        }
    }
    if points.is_empty() {
        let Some(&first) = outside.first() else {
            return Err(Error::input(format!(
                "{}: no points to compare",
                user.source
            )));
        };
        return Err(Error::input(format!(
            "{}: none of the {} points lies inside the section (e.g. line {} at ({}, {}), {:.6e} m \
             from its boundary); are the coordinates in m and in the model's frame?",
            user.source,
            user.points.len(),
            first.line,
            first.x,
            first.y,
            first.distance
        )));
    }
    Ok(Comparison {
        source: user.source.clone(),
        element: element_info(solved, fe_overridden),
        stats: DiffStats::of(&points),
        points,
        snapped,
        outside,
        warnings: solved.warnings.clone(),
    })
}
