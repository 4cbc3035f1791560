//! Grid model of an invented L-shaped concrete plinth: fixed base, convective top faces.
//! Run with `cargo run --release --example grid_slab`.

use xsheat::{grid, model};

const PLINTH: &str = r#"
title = "L-shaped plinth"
[materials.concrete]
conductivity = 1.8
[outline]
material = "concrete"
points = [[0.0, 0.0], [1.5, 0.0], [1.5, 0.3], [0.4, 0.3], [0.4, 0.9], [0.0, 0.9]]
edges = ["base", "side", "top", "side", "top", "side"]
[boundaries.base]
kind = "fixed"
temperature = 6.0
[boundaries.top]
kind = "convection"
h = 15.0
ambient = 24.0
[boundaries.side]
kind = "insulated"
"#;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let section = model::validate(&model::parse(PLINTH)?)?;
    for h in [0.05, 0.025] {
        let m = grid::build(&section, h)?;
        let sol = grid::solve(&m)?;
        println!("h = {h} m: {} nodes", m.nodes.len());
        for p in [[0.2, 0.85], [1.0, 0.15], [1.45, 0.3]] {
            let t = sol.temperature_at(p).unwrap_or(f64::NAN);
            println!("  T({}, {}) = {t:.4} °C", p[0], p[1]);
        }
        for (name, q) in &sol.heat_flow {
            println!("  heat flow into the section through {name}: {q:.4} W/m");
        }
        println!("  imbalance {:.2e} W/m", sol.imbalance);
    }
    Ok(())
}
