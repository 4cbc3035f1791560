//! The mesh picture of `mesh --plot` (`NAME.svg` beside the `.vtu`): triangles filled by
//! material (Okabe–Ito colour-blind-safe palette, Okabe and Ito 2008, "Color Universal
//! Design"), their edges, boundaries, the triangles with the smallest angles circled and
//! labelled with that angle, a legend, title and scale bar.

use super::canvas::{Anchor, Canvas, Occupied, Text, num, text_box};
use super::field::{group_thousands, interface_edges};
use super::layout::{Layout, PlotSize};
use crate::error::Result;
use crate::mesh::Mesh;
use crate::model::Section;
use std::fmt::Write as _;

/// Okabe–Ito palette without black, in the order materials take it (by id, cycling).
pub const MATERIAL_COLOURS: [&str; 7] = [
    "#e69f00", "#56b4e9", "#009e73", "#f0e442", "#0072b2", "#d55e00", "#cc79a7",
];

/// How many of the worst triangles are marked.
pub const WORST_MARKED: usize = 10;

/// The triangles with the smallest angles (up to `n`), worst first (ties: lower index), with
/// that angle in degrees.
pub fn worst_triangles(mesh: &Mesh, n: usize) -> Vec<(usize, f64)> {
    let mut all: Vec<(usize, f64)> = mesh
        .triangles
        .iter()
        .enumerate()
        .map(|(t, tri)| (t, crate::geom::min_angle_deg(tri.map(|v| mesh.nodes[v]))))
        .collect();
    all.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
    all.truncate(n);
    all
}

/// Draws the mesh picture (SVG bytes) at `size`.
pub fn mesh_picture(section: &Section, mesh: &Mesh, size: PlotSize) -> Result<Vec<u8>> {
    let bbox = crate::geom::bbox(mesh.nodes.iter().copied());
    let layout = Layout::new(size, bbox, 260.0);
    let u = layout.u;
    let mut c = Canvas::new(size.width, size.height);
    let mut occupied = Occupied::default();
    let worst = worst_triangles(mesh, WORST_MARKED);
    let subtitle = format!(
        "Mesh: {} triangles, {} nodes, smallest angle {}° · circled: the {} smallest angles",
        group_thousands(mesh.triangles.len()),
        group_thousands(mesh.nodes.len()),
        crate::text::fixed(mesh.stats.min_angle_deg, 1),
        worst.len()
    );
    layout.title(&mut c, &mut occupied, &section.title, &subtitle);
    let edge_width = num((0.35 * u).max(0.2));
    for m in &section.materials {
        let mut d = String::new();
        for (t, tri) in mesh.triangles.iter().enumerate() {
            if mesh.material[t] != m.id {
                continue;
            }
            let p = tri.map(|v| layout.px(mesh.nodes[v]));
            let _ = write!(
                d,
                "M{} {}L{} {}L{} {}Z",
                num(p[0][0]),
                num(p[0][1]),
                num(p[1][0]),
                num(p[1][1]),
                num(p[2][0]),
                num(p[2][1])
            );
        }
        if !d.is_empty() {
            c.raw(&format!(
                r##"<path d="{d}" fill="{}" stroke="#333" stroke-width="{edge_width}" stroke-linejoin="round"/>"##,
                MATERIAL_COLOURS[m.id % MATERIAL_COLOURS.len()]
            ));
        }
    }
    let mut d = String::new();
    for [a, b] in interface_edges(mesh)
        .into_iter()
        .chain(mesh.boundary_edges.iter().map(|e| e.nodes))
    {
        super::canvas::path_data(
            &mut d,
            &[layout.px(mesh.nodes[a]), layout.px(mesh.nodes[b])],
        );
    }
    c.raw(&format!(
        r##"<path d="{d}" fill="none" stroke="#111" stroke-width="{}" stroke-linecap="round"/>"##,
        num(1.6 * u)
    ));
    mark_worst(&mut c, &mut occupied, &layout, mesh, &worst);
    legend(&mut c, &layout, section);
    layout.scale_bar(&mut c);
    c.svg(None)
}

fn mark_worst(
    c: &mut Canvas,
    occupied: &mut Occupied,
    layout: &Layout,
    mesh: &Mesh,
    worst: &[(usize, f64)],
) {
    let u = layout.u;
    let r = 9.0 * u;
    for &(t, _) in worst {
        let centre = centroid_px(layout, mesh, t);
        c.raw(&format!(
            r##"<circle cx="{}" cy="{}" r="{}" fill="none" stroke="#fff" stroke-width="{}"/><circle cx="{0}" cy="{1}" r="{2}" fill="none" stroke="#c00" stroke-width="{}"/>"##,
            num(centre[0]),
            num(centre[1]),
            num(r),
            num(4.0 * u),
            num(2.0 * u)
        ));
        occupied.take(
            [centre[0] - r, centre[1] - r, centre[0] + r, centre[1] + r],
            0.0,
        );
    }
    let (w, h) = (f64::from(layout.size.width), f64::from(layout.size.height));
    for &(t, angle) in worst {
        let centre = centroid_px(layout, mesh, t);
        let label = format!("{}°", crate::text::fixed(angle, 1));
        for (dx, anchor) in [(r + 4.0 * u, Anchor::Start), (-r - 4.0 * u, Anchor::End)] {
            let mut tx = Text::new([centre[0] + dx, centre[1]], 12.0 * u, &label);
            tx.anchor = anchor;
            tx.centred = true;
            tx.halo = true;
            let b = text_box(&tx);
            if b[0] >= 0.0 && b[2] <= w && b[1] >= 0.0 && b[3] <= h && occupied.is_free(b) {
                c.text(&tx);
                occupied.take(b, 2.0 * u);
                break;
            }
        }
    }
}

fn centroid_px(layout: &Layout, mesh: &Mesh, t: usize) -> [f64; 2] {
    let p = mesh.triangles[t].map(|v| mesh.nodes[v]);
    layout.px([
        (p[0][0] + p[1][0] + p[2][0]) / 3.0,
        (p[0][1] + p[1][1] + p[2][1]) / 3.0,
    ])
}

fn legend(c: &mut Canvas, layout: &Layout, section: &Section) {
    let u = layout.u;
    let x = f64::from(layout.size.width) - 240.0 * u;
    let mut y = 130.0 * u;
    let mut head = Text::new([x, y - 20.0 * u], 16.0 * u, "Materials");
    head.strong = true;
    c.text(&head);
    for m in &section.materials {
        c.raw(&format!(
            r##"<rect x="{}" y="{}" width="{}" height="{}" fill="{}" stroke="#333" stroke-width="{}"/>"##,
            num(x),
            num(y - 2.0 * u),
            num(22.0 * u),
            num(16.0 * u),
            MATERIAL_COLOURS[m.id % MATERIAL_COLOURS.len()],
            num(u)
        ));
        let mut t = Text::new([x + 30.0 * u, y + 6.0 * u], 14.0 * u, &m.name);
        t.centred = true;
        c.text(&t);
        y += 26.0 * u;
    }
    y += 14.0 * u;
    c.raw(&format!(
        r##"<circle cx="{}" cy="{}" r="{}" fill="none" stroke="#c00" stroke-width="{}"/>"##,
        num(x + 11.0 * u),
        num(y + 6.0 * u),
        num(8.0 * u),
        num(2.0 * u)
    ));
    let mut t = Text::new([x + 30.0 * u, y + 6.0 * u], 14.0 * u, "smallest angles");
    t.centred = true;
    c.text(&t);
}
