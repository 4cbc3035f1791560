//! Grid model: refused inputs. Each must be `Error::Input` (exit 2) naming the offending item.

mod common;

use xsheat::Error;
use xsheat::grid;
use xsheat::model::{self, Section};

fn section(text: &str) -> Section {
    model::validate(&model::parse(text).expect("parse")).expect("valid model")
}

fn input_error(r: xsheat::Result<grid::GridModel>) -> String {
    match r {
        Err(Error::Input(m)) => m,
        Err(e) => panic!("expected an input error, got {e:?}"),
        Ok(_) => panic!("expected an input error, got a model"),
    }
}

/// The wall-strip fixture (tests/fixtures/wall-strip.toml).
const BLOCK: &str = common::WALL_STRIP;

#[test]
fn spacing_must_be_positive_and_finite() {
    let s = section(BLOCK);
    for h in [0.0, -0.1, f64::NAN, f64::INFINITY] {
        let m = input_error(grid::build(&s, h));
        assert!(m.contains("spacing h ="), "{m}");
        assert!(m.contains("positive finite"), "{m}");
    }
}

#[test]
fn too_fine_a_spacing_is_refused_with_the_estimate() {
    let s = section(BLOCK);
    let m = input_error(grid::build(&s, 1e-4));
    // 9001 × 6001 grid points ≈ 5.4e7
    assert!(m.contains("9001 × 6001"), "{m}");
    assert!(m.contains("5.402e7"), "{m}");
    assert!(m.contains("limit of 4000000"), "{m}");
}

#[test]
fn too_coarse_a_spacing_is_refused() {
    let s = section(BLOCK);
    let m = input_error(grid::build(&s, 0.35));
    assert!(m.contains("too coarse"), "{m}");
}

#[test]
fn off_grid_convection_edge_is_refused() {
    let s = section(
        r#"
[materials.brick]
conductivity = 0.7
[outline]
material = "brick"
points = [[0.0, 0.0], [0.9, 0.0], [0.9, 0.6], [0.0, 0.6]]
boundary = "room"
[[holes]]
circle = { center = [0.45, 0.3], radius = 0.1, segments = 64 }
boundary = "flue"
[boundaries.room]
kind = "fixed"
temperature = 20.0
[boundaries.flue]
kind = "convection"
h = 12.0
ambient = 180.0
"#,
    );
    let m = input_error(grid::build(&s, 0.05));
    assert!(
        m.contains(
            "boundary \"flue\" on holes[0] does not lie on grid lines; only fixed edges may be off-grid"
        ),
        "{m}"
    );
}

#[test]
fn off_grid_unnamed_edge_is_refused() {
    // A sloped segment without a name is insulated, and insulated edges must be on grid lines.
    let s = section(
        r#"
[materials.brick]
conductivity = 0.7
[outline]
material = "brick"
points = [[0.0, 0.0], [0.9, 0.0], [0.6, 0.6], [0.0, 0.6]]
edges = ["base", "", "top", "top"]
[boundaries.base]
kind = "fixed"
temperature = 20.0
[boundaries.top]
kind = "fixed"
temperature = 5.0
"#,
    );
    let m = input_error(grid::build(&s, 0.1));
    assert!(
        m.contains("unnamed (insulated) segment 1 of outline does not lie on grid lines"),
        "{m}"
    );
    // The same slope as a fixed edge is accepted (Shortley–Weller).
    let fixed = BLOCK
        .replace("[0.9, 0.6]", "[0.6, 0.6]")
        .replace("\"inside\", \"\"", "\"inside\", \"inside\"");
    let m = grid::build(&section(&fixed), 0.1).expect("fixed sloped edge");
    assert!(m.shortley_weller_nodes > 0);
    grid::solve(&m).expect("solve");
}

#[test]
fn grid_aligned_edge_ending_between_grid_points_is_refused() {
    let s = section(BLOCK);
    let m = input_error(grid::build(&s, 0.2));
    // 0.9 m is not a multiple of 0.2 m: the insulated right side is off the grid.
    assert!(
        m.contains("segment 1 of outline does not lie on grid lines"),
        "{m}"
    );
}

#[test]
fn undetermined_temperature_is_refused() {
    let s = section(
        r#"
[materials.brick]
conductivity = 0.7
heat_source = 10.0
[outline]
material = "brick"
points = [[0.0, 0.0], [0.9, 0.0], [0.9, 0.6], [0.0, 0.6]]
edges = ["out", "", "", ""]
[boundaries.out]
kind = "flux"
flux = -5.0
"#,
    );
    let m = grid::build(&s, 0.1).expect("model");
    match grid::solve(&m) {
        Err(Error::Input(msg)) => assert!(msg.contains("no fixed or convection"), "{msg}"),
        other => panic!("expected an input error, got {other:?}"),
    }
}
