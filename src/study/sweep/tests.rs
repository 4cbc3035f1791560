//! Unit tests of sweep plans: variant order and values, shards.

use super::*;
use std::path::PathBuf;

fn plan_in(dir: &std::path::Path, plan: &str) -> Result<Plan> {
    let model = std::fs::read_to_string(
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("geometry/wall-junction.toml"),
    )
    .unwrap();
    std::fs::write(dir.join("m.toml"), model).unwrap();
    std::fs::write(dir.join("p.toml"), plan).unwrap();
    Plan::load(&dir.join("p.toml"))
}

#[test]
fn grid_order_has_the_last_parameter_fastest_and_list_pairs_values() {
    let d = tempfile::tempdir().unwrap();
    let grid = "model = \"m.toml\"\n[[parameters]]\nkey = \"materials.insulation.conductivity\"\n\
        values = [1.0, 2.0]\n[[parameters]]\nkey = \"mesh.min_angle\"\nvalues = [20, 25, 30]\n";
    let p = plan_in(d.path(), grid).unwrap();
    assert_eq!(p.variants, 6);
    let all: Vec<Vec<f64>> = (0..6).map(|i| p.values(i)).collect();
    assert_eq!(
        all,
        [
            [1., 20.],
            [1., 25.],
            [1., 30.],
            [2., 20.],
            [2., 25.],
            [2., 30.]
        ]
    );
    let text = p.variant_text(5).unwrap();
    assert!(text.contains("min_angle = 30\n") && text.contains("conductivity = 2.0\n"));
    let list = grid.replace("model = \"m.toml\"", "model = \"m.toml\"\nmode = \"list\"");
    let e = plan_in(d.path(), &list).unwrap_err();
    assert!(e.message().contains("equally long"), "{e}");
    let list = list.replace("[20, 25, 30]", "[20, 30]");
    let p = plan_in(d.path(), &list).unwrap();
    assert_eq!(p.variants, 2);
    assert_eq!(p.values(1), [2.0, 30.0]);
}

#[test]
fn shards_split_the_variants_by_index_modulo_n() {
    let s = Shard::parse("2/3").unwrap();
    assert_eq!(s.variants(8), [1, 4, 7]);
    assert!(s.has(4) && !s.has(5));
    let mut all: Vec<usize> = (1..=3)
        .flat_map(|i| Shard { index: i, count: 3 }.variants(8))
        .collect();
    all.sort_unstable();
    assert_eq!(all, (0..8).collect::<Vec<_>>());
    for bad in ["0/2", "3/2", "1/0", "1", "a/b", "1/2/3"] {
        let e = Shard::parse(bad).unwrap_err();
        assert_eq!(e.exit_code(), 2, "{bad}");
        assert!(e.message().contains("--shard"), "{bad}: {e}");
    }
}
