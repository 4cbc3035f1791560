//! The section of the `scaling`, `mesh_stages`, `ordering`, `amg` and `adaptive_bench` examples
//! (invented numbers), shared by them.

/// The section for an area limit: 20 × 10 m, a 3 m lower layer of another material, two rows of
/// ten pipes (fixed 60 °C and 10 °C), fixed 5 °C base, convection to −5 °C on top.
pub fn model_text(max_area: f64) -> String {
    let mut s = format!(
        r#"[mesh]
max_area = {max_area}
[materials.concrete]
conductivity = 1.8
[materials.clay]
conductivity = 1.1
[outline]
material = "concrete"
points = [[0.0, 0.0], [20.0, 0.0], [20.0, 10.0], [0.0, 10.0]]
edges = ["base", "side", "top", "side"]
[[regions]]
material = "clay"
points = [[0.0, 0.0], [20.0, 0.0], [20.0, 3.0], [0.0, 3.0]]
[boundaries.base]
kind = "fixed"
temperature = 5.0
[boundaries.side]
kind = "insulated"
[boundaries.top]
kind = "convection"
h = 12.0
ambient = -5.0
[boundaries.supply]
kind = "fixed"
temperature = 60.0
[boundaries.return]
kind = "fixed"
temperature = 10.0
"#
    );
    for i in 0..10 {
        let x = 1.0 + 2.0 * f64::from(i);
        for (y, name) in [(5.0, "supply"), (7.5, "return")] {
            s.push_str(&format!(
                "[[holes]]\ncircle = {{ center = [{x}, {y}], radius = 0.15 }}\nboundary = \"{name}\"\n"
            ));
        }
    }
    s
}

/// Section area, m² (block minus 20 pipes).
pub fn area() -> f64 {
    200.0 - 20.0 * std::f64::consts::PI * 0.15 * 0.15
}
