//! Unit tests of the parent module.

use super::*;

#[test]
fn spacings_are_sorted_halved_and_checked() {
    assert_eq!(spacings(&[0.1], Some(3)).unwrap(), [0.1, 0.05, 0.025]);
    assert_eq!(spacings(&[0.05, 0.1], None).unwrap(), [0.1, 0.05]);
    assert!(matches!(spacings(&[], None), Err(Error::Input(_))));
    assert!(matches!(spacings(&[0.1], Some(0)), Err(Error::Input(_))));
    assert!(matches!(spacings(&[0.1], Some(13)), Err(Error::Input(_))));
    assert!(matches!(spacings(&[f64::NAN], None), Err(Error::Input(_))));
}

#[test]
fn observed_order_of_a_quadratic_error_is_two() {
    let o = observed_order(4e-3, 1e-3, 0.2, 0.1).unwrap();
    assert!((o - 2.0).abs() < 1e-12);
    assert_eq!(observed_order(0.0, 1e-3, 0.2, 0.1), None);
    assert_eq!(observed_order(1e-3, 1e-3, 0.1, 0.1), None);
}

#[test]
fn user_grid_accepts_bom_crlf_blank_lines_and_extra_columns() {
    let g = parse_user_grid(
        "\u{feff}x,y,temperature,id\r\n0.5, 0.25 ,12.5,a\r\n\r\n1,2,3,b\r\n",
        "t.csv",
    )
    .unwrap();
    assert_eq!(g.points.len(), 2);
    assert_eq!(
        g.points[0],
        UserPoint {
            line: 2,
            x: 0.5,
            y: 0.25,
            temperature: 12.5
        }
    );
    assert_eq!(g.points[1].line, 4);
    let e = parse_user_grid("x, y, temperature\n1,2,3\n", "t.csv").unwrap_err();
    assert!(e.message().contains("\"x, y, temperature\""), "{e}");
}

#[test]
fn stats_take_the_first_largest_difference() {
    let p = |x: f64, d: f64| PointDiff {
        x,
        y: 0.0,
        t_other: d,
        t_fe: 0.0,
        diff: d,
    };
    let s = DiffStats::of(&[p(0.0, 1.0), p(1.0, -3.0), p(2.0, 3.0)]);
    assert_eq!(s.max_abs, 3.0);
    assert_eq!(s.max_at, [1.0, 0.0]);
    assert!((s.mean - 1.0 / 3.0).abs() < 1e-15);
    assert!((s.rms - (19.0f64 / 3.0).sqrt()).abs() < 1e-15);
}
