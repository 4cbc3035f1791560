//! `xsheat gridcheck`: the grid (finite-difference) model against the element model of the
//! same section, through the command-line tool.

mod common;

use common::{Run, tmp, xsheat};
use std::path::Path;

/// Rows of a CSV file as (header, rows of fields).
fn read_csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let rows = lines
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    (header, rows)
}

fn col(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
}

/// The section is the L-shaped fixture (tests/fixtures/l-section.toml): every edge on the grid
/// lines of h = 0.1, 0.05, 0.025 m, a fixed base, convection on the step and the crown,
/// insulated end, riser and back. The element mesh (`max_area`) is much finer than the finest
/// grid (edge ≈ 0.0059 m against h = 0.025 m).
///
/// The fixed base meets only insulated edges. With a fixed crown meeting a convection riser at
/// 45 K difference (and convection on both sides of the re-entrant corner) the flows converged
/// more slowly (order ≈ 1.4, still 3–4 % apart at h = 0.025 m): the gradient is singular at
/// such corners, a property of the problem that both models share, so it is left out here.
#[test]
fn l_section_difference_falls_with_h_and_heat_flows_agree() {
    let scratch = tmp();
    let d = scratch.path();
    let model = d.join("model.toml");
    std::fs::write(&model, common::L_SECTION).unwrap();
    let out = d.join("out");
    let Run {
        code,
        stdout,
        stderr,
    } = xsheat([
        "gridcheck",
        model.to_str().unwrap(),
        "--spacing",
        "0.1",
        "--levels",
        "3",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    eprintln!("{stdout}");
    assert!(stdout.contains("element model:"), "{stdout}");
    assert!(stdout.contains("edge ≈"), "{stdout}");
    assert!(
        !stdout.contains("not much finer"),
        "the reference mesh should count as fine: {stdout}"
    );

    let (h, rows) = read_csv(&out.join("gridcheck-levels.csv"));
    assert_eq!(rows.len(), 3);
    let num = |r: &Vec<String>, c: &str| -> f64 { r[col(&h, c)].parse().unwrap() };
    let spacing: Vec<f64> = rows.iter().map(|r| num(r, "spacing_m")).collect();
    assert_eq!(spacing, [0.1, 0.05, 0.025]);
    let max: Vec<f64> = rows.iter().map(|r| num(r, "max_abs_diff_k")).collect();
    let rms: Vec<f64> = rows.iter().map(|r| num(r, "rms_diff_k")).collect();
    // Both models discretise the same boundary-value problem (steady conduction, the same
    // fixed, convection and insulated edges); the 5-point grid and linear triangles are both
    // second-order in h for smooth solutions (e.g. LeVeque, Finite Difference Methods for
    // ODEs and PDEs, SIAM 2007, ch. 3; Strang & Fix, An Analysis of the Finite Element Method,
    // 1973, ch. 3), so with the element mesh much finer the difference is the grid's error
    // and falls with h. The re-entrant corner lowers the order (the r^(2/3) corner
    // singularity: Grisvard, Elliptic Problems in Nonsmooth Domains, Pitman 1985, ch. 4; Strang
    // & Fix ch. 8), hence only "falls" is asserted for the max (observed 0.7, 0.8), and an
    // RMS order above 1 (observed 1.22, 1.34).
    assert!(max[0] > max[1] && max[1] > max[2], "max |diff| {max:?}");
    assert!(rms[0] > rms[1] && rms[1] > rms[2], "RMS diff {rms:?}");
    let order_rms = num(&rows[2], "observed_order_rms");
    assert!(order_rms > 1.0, "observed RMS order {order_rms}");
    assert_eq!(rows[0][col(&h, "observed_order_max")], "");

    // Heat flows at the finest spacing: within 2 % of the element flows (the element model on
    // a fine mesh is the reference; both conserve energy to round-off).
    let last = &rows[2];
    for b in ["base", "step", "crown"] {
        let grid = num(last, &format!("grid_heat_flow_{b}_w_per_m"));
        let fe = num(last, &format!("fe_heat_flow_{b}_w_per_m"));
        let diff = num(last, &format!("heat_flow_diff_{b}_w_per_m"));
        assert!((diff - (grid - fe)).abs() <= 1e-9 * fe.abs().max(1.0));
        assert!(
            (grid - fe).abs() <= 0.02 * fe.abs(),
            "{b}: grid {grid} W/m, element {fe} W/m"
        );
    }
    for b in ["end", "riser", "back"] {
        assert_eq!(num(last, &format!("grid_heat_flow_{b}_w_per_m")), 0.0);
    }

    // gridcheck.csv holds the finest grid: 0.8/0.025 + 1 = 33 points a side, minus the
    // removed quarter's 16 × 16 points.
    let (gh, grows) = read_csv(&out.join("gridcheck.csv"));
    assert_eq!(gh, ["x_m", "y_m", "t_grid_c", "t_fe_c", "diff_k"]);
    assert_eq!(grows.len(), 33 * 33 - 16 * 16);
    assert_eq!(num(last, "grid_nodes") as usize, grows.len());
    let mut worst: f64 = 0.0;
    for r in &grows {
        let v: Vec<f64> = r.iter().map(|x| x.parse().unwrap()).collect();
        assert!((v[4] - (v[2] - v[3])).abs() <= 1e-12 * v[2].abs().max(1.0));
        worst = worst.max(v[4].abs());
    }
    assert_eq!(worst, max[2]);
    assert!(out.join("grid.vtu").is_file());
}

#[test]
fn gridcheck_writes_both_files_with_exact_headers() {
    let scratch = tmp();
    let d = scratch.path();
    let model = d.join("model.toml");
    std::fs::write(&model, common::WALL_STRIP).unwrap();
    let out = d.join("out");
    let Run {
        code,
        stdout,
        stderr,
    } = xsheat([
        "gridcheck",
        model.to_str().unwrap(),
        "--spacing",
        "0.05",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    for want in [
        "max |diff| =",
        "RMS diff",
        "heat flow per boundary",
        "inside",
        "outside",
    ] {
        assert!(stdout.contains(want), "{want}: {stdout}");
    }
    let mut files: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    files.sort();
    assert_eq!(files, ["grid.vtu", "gridcheck.csv", "manifest.json"]);
    let text = std::fs::read_to_string(out.join("gridcheck.csv")).unwrap();
    assert!(text.starts_with("x_m,y_m,t_grid_c,t_fe_c,diff_k\n"));
    assert_eq!(text.lines().count(), 1 + 19 * 13);
    let vtu = std::fs::read_to_string(out.join("grid.vtu")).unwrap();
    assert!(vtu.contains("<VTKFile") && vtu.contains("Name=\"temperature_c\""));

    // Levels with a replaced element max_area: the levels table appears and is written.
    let out2 = d.join("out2");
    let Run {
        code,
        stdout,
        stderr,
    } = xsheat([
        "gridcheck",
        model.to_str().unwrap(),
        "--spacing",
        "0.1",
        "--spacing",
        "0.05",
        "--fe-max-area",
        "0.002",
        "--out",
        out2.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains("--fe-max-area"), "{stdout}");
    // A coarse reference mesh is flagged.
    assert!(stdout.contains("not much finer"), "{stdout}");
    let levels = std::fs::read_to_string(out2.join("gridcheck-levels.csv")).unwrap();
    assert!(levels.starts_with(
        "spacing_m,grid_nodes,max_abs_diff_k,max_at_x_m,max_at_y_m,rms_diff_k,mean_diff_k,\
         observed_order_max,observed_order_rms,grid_heat_flow_inside_w_per_m,\
         fe_heat_flow_inside_w_per_m,heat_flow_diff_inside_w_per_m,\
         grid_heat_flow_outside_w_per_m,fe_heat_flow_outside_w_per_m,\
         heat_flow_diff_outside_w_per_m\n"
    ));
    assert_eq!(levels.lines().count(), 3);

    // Deterministic bytes: a second run writes the same files.
    let out3 = d.join("out3");
    let Run { code, stderr, .. } = xsheat([
        "gridcheck",
        model.to_str().unwrap(),
        "--spacing",
        "0.05",
        "--out",
        out3.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    for f in ["gridcheck.csv", "grid.vtu"] {
        assert_eq!(
            std::fs::read(out.join(f)).unwrap(),
            std::fs::read(out3.join(f)).unwrap(),
            "{f}"
        );
    }
}
