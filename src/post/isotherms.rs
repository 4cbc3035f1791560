//! Isotherms of the linear (P1) field: levels at round intervals ([`round_levels`]) and the
//! lines by marching triangles ([`isotherms`]): in each triangle the level set of a linear
//! function is a straight segment between two edge crossings; segments that share a crossing
//! (one mesh edge) are joined into polylines. Every vertex is the linear interpolation of the
//! field along a mesh edge, so the interpolated field there equals the level to round-off.

use crate::mesh::Mesh;
use std::collections::BTreeMap;

/// Fewest and most isotherm levels [`round_levels`] aims for.
pub const LEVEL_COUNT_RANGE: (usize, usize) = (8, 15);

/// The isotherm levels of a field between `t_min` and `t_max`, °C: the multiples of a round
/// step (1, 2, 2.5 or 5 × 10ⁿ K) strictly between the extremes, the step chosen as the largest
/// that gives 8 to 15 levels (or, where none does, the count nearest 11). Returns the step and
/// the levels; empty for a uniform or non-finite field.
pub fn round_levels(t_min: f64, t_max: f64) -> (f64, Vec<f64>) {
    let range = t_max - t_min;
    if !(range.is_finite() && range > 0.0) {
        return (0.0, Vec::new());
    }
    let top = range.log10().floor() as i32;
    let mut best: Option<(f64, Vec<f64>, usize)> = None;
    for n in (top - 2..=top + 1).rev() {
        for m10 in [50_i64, 25, 20, 10] {
            let levels = multiples(m10, n - 1, t_min, t_max);
            let count = levels.len();
            let step = scaled(m10, n - 1);
            let (lo, hi) = LEVEL_COUNT_RANGE;
            if (lo..=hi).contains(&count) {
                return (step, levels);
            }
            let miss = count.abs_diff(11);
            if best.as_ref().is_none_or(|b| miss < b.2) {
                best = Some((step, levels, miss));
            }
        }
    }
    best.map(|(s, l, _)| (s, l)).unwrap_or((0.0, Vec::new()))
}

/// `k` × 10^`e` as the correctly rounded decimal (exact integer arithmetic, then one division
/// by an exact power of ten), so that levels print as round numbers.
fn scaled(k: i64, e: i32) -> f64 {
    if e >= 0 {
        k as f64 * 10f64.powi(e)
    } else {
        k as f64 / 10f64.powi(-e)
    }
}

/// The multiples k·m10·10^e strictly between `lo` and `hi`.
fn multiples(m10: i64, e: i32, lo: f64, hi: f64) -> Vec<f64> {
    let step = scaled(m10, e);
    let first = (lo / step).floor() as i64;
    let last = (hi / step).ceil() as i64;
    if last - first > 1000 {
        return vec![0.0; 1001];
    }
    (first..=last)
        .map(|k| scaled(k * m10, e))
        .filter(|&v| v > lo && v < hi)
        .collect()
}

/// Number of decimals that print every level of step `step` exactly (0 for 5, 1 for 2.5 or
/// 0.5, 2 for 0.25, …).
pub fn level_decimals(step: f64) -> usize {
    if !(step.is_finite() && step > 0.0) {
        return 0;
    }
    (0..10)
        .find(|&d| {
            let s = step * 10f64.powi(d as i32);
            (s - s.round()).abs() < 1e-9 * s.max(1.0)
        })
        .unwrap_or(10)
}

/// One isotherm level and its lines.
#[derive(Debug, Clone, PartialEq)]
pub struct Isotherm {
    /// The level, °C.
    pub temperature: f64,
    /// Polylines in the section plane (m); a closed one repeats its first point at the end.
    /// Ordered by their first triangle; consecutive repeated points removed.
    pub lines: Vec<Vec<[f64; 2]>>,
}

/// A mesh edge by its node pair, smaller node first.
type EdgeKey = (usize, usize);

/// The isotherms of the nodal field `temperature` on `mesh` at `levels`.
pub fn isotherms(mesh: &Mesh, temperature: &[f64], levels: &[f64]) -> Vec<Isotherm> {
    levels
        .iter()
        .map(|&level| Isotherm {
            temperature: level,
            lines: level_lines(mesh, temperature, level),
        })
        .collect()
}

/// The crossing of `level` on edge `e` (interpolated from the smaller node to the larger, so
/// both triangles of the edge compute the same point), if the edge crosses it.
fn crossing(mesh: &Mesh, t: &[f64], e: EdgeKey, level: f64) -> Option<[f64; 2]> {
    let (ta, tb) = (t[e.0], t[e.1]);
    if (ta >= level) == (tb >= level) {
        return None;
    }
    let s = (level - ta) / (tb - ta);
    let (a, b) = (mesh.nodes[e.0], mesh.nodes[e.1]);
    Some([a[0] + s * (b[0] - a[0]), a[1] + s * (b[1] - a[1])])
}

/// Segments of one level (one per crossed triangle, by the two edges it joins) joined into
/// polylines: open ones start at an edge used once (the section boundary), the rest are loops.
fn level_lines(mesh: &Mesh, t: &[f64], level: f64) -> Vec<Vec<[f64; 2]>> {
    let mut segs: Vec<[EdgeKey; 2]> = Vec::new();
    let mut points: BTreeMap<EdgeKey, [f64; 2]> = BTreeMap::new();
    for tri in &mesh.triangles {
        let above = tri.map(|n| t[n] >= level);
        if above[0] == above[1] && above[1] == above[2] {
            continue;
        }
        let mut ends = Vec::with_capacity(2);
        for k in 0..3 {
            let (a, b) = (tri[k], tri[(k + 1) % 3]);
            let key = (a.min(b), a.max(b));
            if let Some(p) = crossing(mesh, t, key, level) {
                points.insert(key, p);
                ends.push(key);
            }
        }
        if let [a, b] = ends[..] {
            segs.push([a, b]);
        }
    }
    let mut at: BTreeMap<EdgeKey, Vec<usize>> = BTreeMap::new();
    for (i, s) in segs.iter().enumerate() {
        for k in s {
            at.entry(*k).or_default().push(i);
        }
    }
    let mut used = vec![false; segs.len()];
    let mut lines = Vec::new();
    let starts: Vec<(usize, EdgeKey)> = segs
        .iter()
        .enumerate()
        .flat_map(|(i, s)| s.iter().map(move |k| (i, *k)))
        .filter(|(_, k)| at[k].len() == 1)
        .chain(segs.iter().enumerate().map(|(i, s)| (i, s[0])))
        .collect();
    for (s, from) in starts {
        if used[s] {
            continue;
        }
        let keys = walk(&segs, &at, &mut used, s, from);
        let mut line: Vec<[f64; 2]> = Vec::with_capacity(keys.len());
        for k in keys {
            let p = points[&k];
            if line.last() != Some(&p) {
                line.push(p);
            }
        }
        if line.len() >= 2 {
            lines.push(line);
        }
    }
    lines
}

/// Follows segments from segment `s`, entered at edge `from`, until no unused segment
/// continues; returns the edges passed.
fn walk(
    segs: &[[EdgeKey; 2]],
    at: &BTreeMap<EdgeKey, Vec<usize>>,
    used: &mut [bool],
    mut s: usize,
    mut from: EdgeKey,
) -> Vec<EdgeKey> {
    let mut keys = vec![from];
    loop {
        used[s] = true;
        let next = if segs[s][0] == from {
            segs[s][1]
        } else {
            segs[s][0]
        };
        keys.push(next);
        match at[&next].iter().find(|&&o| !used[o]) {
            Some(&o) => {
                s = o;
                from = next;
            }
            None => return keys,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_levels_pick_round_steps_with_8_to_15_lines() {
        let (step, levels) = round_levels(-5.0, 20.0);
        assert_eq!(step, 2.5);
        assert_eq!(levels.len(), 9);
        assert_eq!(levels[0], -2.5);
        assert_eq!(levels[8], 17.5);
        let (step, levels) = round_levels(0.013, 0.094);
        assert_eq!(step, 0.01);
        assert_eq!(levels.len(), 8);
        assert_eq!(levels[0], 0.02);
        assert_eq!(levels[7], 0.09);
        for (lo, hi) in [(0.0, 1.0), (3.3, 3.31), (-40.0, 900.0), (12.0, 13.7)] {
            let (s, l) = round_levels(lo, hi);
            assert!((8..=15).contains(&l.len()), "{lo}..{hi}: {s} {l:?}");
        }
        assert!(round_levels(5.0, 5.0).1.is_empty());
        assert_eq!(level_decimals(2.5), 1);
        assert_eq!(level_decimals(0.25), 2);
        assert_eq!(level_decimals(5.0), 0);
        assert_eq!(level_decimals(0.005), 3);
    }

    #[test]
    fn a_linear_field_on_two_squares_gives_straight_lines_at_the_level() {
        // 2 × 1 strip of four triangles (rising diagonals), T = 10·x: the 5 °C isotherm is x = 0.5 from y = 0 to 1.
        let mesh = crate::fem::testutil::rectangle_mesh(2.0, 1.0, 2, 1, [None; 4], |_| 0);
        let t: Vec<f64> = mesh.nodes.iter().map(|p| 10.0 * p[0]).collect();
        let iso = isotherms(&mesh, &t, &[5.0, 15.0]);
        assert_eq!(iso.len(), 2);
        for (i, x) in [(0, 0.5), (1, 1.5)] {
            assert_eq!(iso[i].lines.len(), 1);
            let line = &iso[i].lines[0];
            assert_eq!(line.len(), 3, "{line:?}");
            for p in line {
                assert!((p[0] - x).abs() < 1e-15);
            }
            let ys: Vec<f64> = line.iter().map(|p| p[1]).collect();
            assert!(ys.contains(&0.0) && ys.contains(&1.0));
        }
    }
}
