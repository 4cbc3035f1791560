//! Adaptive refinement driven by the Zienkiewicz–Zhu indicator (Dörfler marking), with the
//! limits that make it stop: a minimum triangle size below which nothing is marked, the
//! triangle cap checked before each cycle, and a warning naming where the error sits when the
//! target cannot be reached.

use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::mesh::{self, MeshOptions};
use crate::run::{Cycle, Prepared, Solved, solve_mesh};
use std::time::Instant;

/// Fraction of the squared error estimate the marked triangles must carry (Dörfler marking).
pub const DORFLER_FRACTION: f64 = 0.5;
/// Largest number of adaptive cycles.
pub const MAX_CYCLES: usize = 30;
/// Triangles whose longest edge is below this factor times the section's diagonal are never
/// marked (their indicator still counts towards the Dörfler fraction).
pub const MIN_SIZE_FACTOR: f64 = 1e-5;
/// Triangles a marked triangle is assumed to become at least, before any cycle has been
/// measured; afterwards the largest growth seen so far, times [`GROWTH_MARGIN`], is used.
pub const MIN_GROWTH_PER_MARK: f64 = 4.0;
/// Safety factor on the measured growth per marked triangle when checking the cap.
pub const GROWTH_MARGIN: f64 = 1.5;
/// Triangles with the largest indicators named in the warning when the target is missed.
const HOT_SPOTS: usize = 3;

/// Accept a target relative error (`--target-error`): a fraction strictly between 0 and 1.
pub fn check_target_error(target: f64) -> Result<()> {
    if !(target.is_finite() && target > 0.0 && target < 1.0) {
        return Err(Error::input(format!(
            "--target-error = {target}: give a fraction between 0 and 1 (e.g. 0.05)"
        )));
    }
    Ok(())
}

/// Whether an adaptive solve met its target: false when refinement stopped above it.
pub fn target_reached(solved: &Solved, target: f64) -> bool {
    solved
        .adaptivity
        .last()
        .is_none_or(|c| c.relative_error <= target)
}

/// The triangles Dörfler marking picks, as points to insert (their centroids).
struct Marked {
    points: Vec<Point>,
    /// Triangles among the largest indicators that were too small to mark.
    too_small: usize,
}

fn centroid(s: &Solved, t: usize) -> Point {
    let [a, b, c] = s.mesh.triangles[t];
    let (pa, pb, pc) = (s.mesh.nodes[a], s.mesh.nodes[b], s.mesh.nodes[c]);
    [(pa[0] + pb[0] + pc[0]) / 3.0, (pa[1] + pb[1] + pc[1]) / 3.0]
}

fn longest_edge(s: &Solved, t: usize) -> f64 {
    let [a, b, c] = s.mesh.triangles[t];
    let n = &s.mesh.nodes;
    geom::distance(n[a], n[b])
        .max(geom::distance(n[b], n[c]))
        .max(geom::distance(n[c], n[a]))
}

/// Triangle indices by indicator, largest first (ties: lower triangle index).
fn by_indicator(s: &Solved) -> Vec<usize> {
    let eta = &s.error_estimate.indicator;
    let mut order: Vec<usize> = (0..eta.len()).collect();
    order.sort_by(|&a, &b| eta[b].total_cmp(&eta[a]).then(a.cmp(&b)));
    order
}

/// Dörfler marking, largest indicators first: triangles until they carry the fraction of the
/// squared estimate; those with the longest edge below `min_edge` count but are not marked.
fn mark(s: &Solved, min_edge: f64) -> Marked {
    let eta = &s.error_estimate.indicator;
    let total: f64 = eta.iter().map(|x| x * x).sum();
    let mut acc = 0.0;
    let mut out = Marked {
        points: Vec::new(),
        too_small: 0,
    };
    for t in by_indicator(s) {
        if acc >= DORFLER_FRACTION * total {
            break;
        }
        acc += eta[t] * eta[t];
        if longest_edge(s, t) < min_edge {
            out.too_small += 1;
        } else {
            out.points.push(centroid(s, t));
        }
    }
    out
}

/// Where the error sits: the triangles with the largest indicators, each named by the corner
/// where fixed boundaries of different temperatures meet if it lies next to one.
fn hot_spots(s: &Solved) -> String {
    let section = &s.prepared.section;
    let corners = &s.prepared.pslg.jump_corners;
    let mut named: Vec<String> = Vec::new();
    for t in by_indicator(s).into_iter().take(HOT_SPOTS) {
        let c = centroid(s, t);
        let reach = 3.0 * longest_edge(s, t);
        let text = match corners.iter().find(|k| geom::distance(k.at, c) <= reach) {
            Some(k) => format!(
                "{} (where fixed boundaries \"{}\" and \"{}\" of different temperatures meet: the exact solution's gradient is unbounded there, so no mesh reaches the target)",
                geom::format_point(k.at),
                section.boundaries[k.boundaries[0]].name,
                section.boundaries[k.boundaries[1]].name
            ),
            None => format!("near {}", geom::format_point(c)),
        };
        if !named.contains(&text) {
            named.push(text);
        }
    }
    named.join("; ")
}

/// The warning for a target missed: why refinement stopped, and where the error sits.
fn missed_warning(s: &Solved, target: f64, why: &str) -> String {
    format!(
        "adaptive refinement stopped at {} triangles with a relative error estimate of {:.3e}, above the target {target}: {why}; the largest error indicators lie at {}",
        s.mesh.triangles.len(),
        s.error_estimate.relative,
        hot_spots(s)
    )
}

fn cycle_of(s: &Solved, cycle: usize) -> Cycle {
    Cycle {
        cycle,
        triangles: s.mesh.triangles.len(),
        nodes: s.mesh.nodes.len(),
        relative_error: s.error_estimate.relative,
        energy_norm_error: s.error_estimate.energy_norm,
    }
}

/// Adaptive refinement: solve, estimate the error, refine where the indicator carries half the
/// squared estimate (Dörfler marking), until the relative energy-norm estimate is at most
/// `target`. Refinement stops short of the target — keeping the last mesh that stayed within
/// `opts.max_triangles` and passed its self-checks, with a warning naming where the largest
/// indicators lie — when the next cycle could exceed the cap, when every triangle marked is
/// below the minimum size ([`MIN_SIZE_FACTOR`]), when a refinement or solve of a later cycle
/// fails or its self-checks fail, or after [`MAX_CYCLES`] cycles. Errors of the first mesh and
/// solve are returned as they are.
pub fn solve_adaptive(prepared: Prepared, opts: &MeshOptions, target: f64) -> Result<Solved> {
    check_target_error(target)?;
    let min_edge = MIN_SIZE_FACTOR * prepared.section.diameter();
    let mut mesher = mesh::Mesher::new(&prepared.section, &prepared.pslg, opts)?;
    let t0 = Instant::now();
    mesher.refine(None, &[])?;
    let mut current = solve_mesh(prepared.clone(), mesher.mesh()?, t0.elapsed().as_secs_f64())?;
    let mut history = vec![cycle_of(&current, 0)];
    let mut growth = MIN_GROWTH_PER_MARK;
    let missed = loop {
        if current.error_estimate.relative <= target {
            break None;
        }
        // A cycle: marking, refinement, extraction, assembly, solve, post-processing.
        crate::progress::stage(&format!("adaptive cycle {}", history.len()));
        if history.len() >= MAX_CYCLES {
            break Some(format!("{MAX_CYCLES} cycles done"));
        }
        let marked = mark(&current, min_edge);
        if marked.points.is_empty() {
            break Some(format!(
                "the {} triangles carrying the error are below the minimum size ({min_edge:.3e} m longest edge, {MIN_SIZE_FACTOR:e} × the section's diagonal)",
                marked.too_small
            ));
        }
        let n = current.mesh.triangles.len();
        let expected = n as f64 + GROWTH_MARGIN * growth * marked.points.len() as f64;
        if expected > opts.max_triangles as f64 {
            break Some(format!(
                "the next cycle could exceed --max-triangles {} (about {expected:.0} triangles)",
                opts.max_triangles
            ));
        }
        let t0 = Instant::now();
        let next = mesher
            .refine(None, &marked.points)
            .and_then(|()| mesher.mesh())
            .and_then(|m| solve_mesh(prepared.clone(), m, t0.elapsed().as_secs_f64()));
        let next = match next {
            Err(e) => break Some(format!("cycle {} failed ({e})", history.len())),
            Ok(s) => s,
        };
        let added = next.mesh.triangles.len().saturating_sub(n) as f64;
        growth = growth.max(added / marked.points.len() as f64);
        if next.mesh.triangles.len() > opts.max_triangles {
            break Some(format!(
                "cycle {} would have {} triangles, above --max-triangles {}",
                history.len(),
                next.mesh.triangles.len(),
                opts.max_triangles
            ));
        }
        if !next.checks_passed() {
            break Some(format!("the self-checks of cycle {} failed", history.len()));
        }
        current = next;
        history.push(cycle_of(&current, history.len()));
    };
    if let Some(why) = missed {
        let w = missed_warning(&current, target, &why);
        current.warnings.push(w);
    }
    current.adaptivity = history;
    Ok(current)
}
