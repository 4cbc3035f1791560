//! `report.html`, written by every `solve`: one self-contained page a reviewer can file —
//! title, caution, key results, the picture (when one was drawn), the model (materials,
//! boundaries with kind and values, mesh), heat flows with the energy balance, items, cuts,
//! materials, coupling coefficients, ψ and temperature factors, probes and lines, load cases,
//! the error estimate, the self-checks, warnings, conventions and the files of the set.
//!
//! Nothing machine- or time-dependent is on the page (no date, no timings), so it is the same
//! byte for byte for a model whatever the thread count.

use super::ERROR_ESTIMATE_METHOD;
use super::html::{HtmlTable, Page, escape};
use crate::model::{BoundaryKind, Section};
use crate::post::Results;
use crate::run::coupling::Coupling;
use crate::run::{Check, CheckStatus, Solved};
use crate::text::{fixed, point, sci, sig3};

/// The file name of the report page in a result set.
pub const REPORT_FILE: &str = "report.html";

/// The report page of `sv`; `picture` is an SVG drawn of the field (embedded inline) and
/// `files` the other files of the set, listed at the end.
pub fn report_html(sv: &Solved, picture: Option<&str>, files: &[String]) -> Vec<u8> {
    let s = sv.section();
    let r = &sv.results;
    let mut page = Page::new();
    key_results(&mut page, sv);
    if let Some(svg) = picture {
        page.section("picture", "Temperature field");
        page.figure(
            svg,
            "Temperature field interpolated linearly on each triangle, isotherms, material interfaces and boundaries.",
        );
    }
    model_section(&mut page, sv);
    flows_section(&mut page, s, r);
    if let Some(c) = &sv.coupling {
        coupling_section(&mut page, c);
    }
    point_sources_section(&mut page, r);
    contacts_section(&mut page, sv);
    probes_section(&mut page, s, r);
    cases_section(&mut page, sv);
    accuracy_section(&mut page, sv);
    warnings_section(&mut page, &sv.warnings);
    conventions_section(&mut page, files);
    page.finish(&s.title, &header(s)).into_bytes()
}

fn header(s: &Section) -> String {
    format!(
        "<header class=\"page\">\n<h1>{}</h1>\n<p>Steady two-dimensional heat conduction through a cross-section by the finite element method (linear triangles, Galerkin) — xsheat {}.</p>\n<p>All values per metre of section depth, SI units: m, °C, W/(m·K), W/(m²·K), W/m², W/m.</p>\n</header>\n<p class=\"caution\"><strong>Caution.</strong> {}</p>\n",
        escape(&s.title),
        escape(crate::VERSION),
        escape(crate::CAUTION)
    )
}

fn checks_summary(checks: &[Check]) -> String {
    let failed = checks
        .iter()
        .filter(|c| c.status() == CheckStatus::Failed)
        .count();
    let warned = checks
        .iter()
        .filter(|c| c.status() == CheckStatus::Warning)
        .count();
    match (failed, warned) {
        (0, 0) => format!("all {} passed", checks.len()),
        (0, w) => format!("{w} of {} with a warning, none failed", checks.len()),
        (f, _) => format!("{f} of {} FAILED — do not use these results", checks.len()),
    }
}

fn key_results(page: &mut Page, sv: &Solved) {
    let r = &sv.results;
    page.section("summary", "Key results");
    let mut facts = vec![
        (
            "Temperature range".to_string(),
            format!(
                "{} °C at {} to {} °C at {}",
                fixed(r.t_min.value, 3),
                point(r.t_min.at, 4),
                fixed(r.t_max.value, 3),
                point(r.t_max.at, 4)
            ),
        ),
        (
            "Heat entering the section".to_string(),
            format!(
                "{} W/m (boundaries with positive flow and sources)",
                fixed(heat_in(r), 4)
            ),
        ),
        (
            "Energy balance".to_string(),
            format!(
                "{} W/m (relative {})",
                sci(r.energy_imbalance, 2),
                sci(r.energy_imbalance_relative, 2)
            ),
        ),
        (
            format!("{ERROR_ESTIMATE_METHOD} error estimate"),
            format!(
                "{} (relative, energy norm)",
                sig3(sv.error_estimate.relative)
            ),
        ),
        ("Self-checks".to_string(), checks_summary(&sv.checks)),
    ];
    if let Some(c) = &sv.coupling {
        for p in &c.psi {
            facts.push((
                format!("ψ {}", p.name),
                format!("{} W/(m·K)", fixed(p.psi, 5)),
            ));
        }
        if let Some(f) = c
            .temperature_factors
            .iter()
            .filter_map(|f| f.f_rsi.map(|x| (x, f)))
            .min_by(|a, b| a.0.total_cmp(&b.0))
        {
            facts.push((
                "Lowest temperature factor".to_string(),
                format!(
                    "f_Rsi = {} on \"{}\"{}",
                    fixed(f.0, 3),
                    f.1.boundary,
                    if f.1.below_minimum {
                        " — BELOW the declared limit"
                    } else {
                        ""
                    }
                ),
            ));
        }
    }
    page.facts(&facts);
    if !sv.checks_passed() {
        page.p_class(
            "fail",
            "A self-check failed: the numbers on this page are not reliable. See Self-checks.",
        );
    }
}

/// Heat entering the section: positive boundary flows plus a positive net source, W/m.
fn heat_in(r: &Results) -> f64 {
    r.boundaries
        .iter()
        .map(|b| b.heat_flow.max(0.0))
        .sum::<f64>()
        + r.heat_source.max(0.0)
}

fn condition(kind: &BoundaryKind) -> String {
    match *kind {
        BoundaryKind::Fixed { temperature } => format!("T = {} °C", fixed_short(temperature)),
        BoundaryKind::Insulated => "no heat flow".to_string(),
        BoundaryKind::Flux { flux } => format!("q = {} W/m² into the section", fixed_short(flux)),
        BoundaryKind::Convection { h, ambient } => format!(
            "h = {} W/(m²·K), ambient {} °C",
            fixed_short(h),
            fixed_short(ambient)
        ),
        BoundaryKind::Radiation {
            emissivity,
            surroundings,
        } => format!(
            "emissivity {}, surroundings {} °C",
            fixed_short(emissivity),
            fixed_short(surroundings)
        ),
    }
}

/// A model value as typed: the shortest decimal that reads back.
fn fixed_short(x: f64) -> String {
    crate::text::format_f64(x)
}

fn model_section(page: &mut Page, sv: &Solved) {
    let s = sv.section();
    page.section("model", "Model");
    let mut t = HtmlTable::new(
        &[
            "material",
            "conductivity W/(m·K)",
            "heat source W/m³",
            "role",
        ],
        "lrrl",
    );
    for m in &s.materials {
        let role = if m.id == s.outline_material {
            "outline"
        } else {
            "region"
        };
        t.row(vec![
            m.name.clone(),
            match m.conductivity.isotropic() {
                Some(k) => fixed_short(k),
                None => m.conductivity.to_string(),
            },
            match m.source_field {
                Some(f) => crate::model::Field::Linear(f).describe("W/m³"),
                None => fixed_short(m.heat_source),
            },
            role.to_string(),
        ]);
    }
    page.h3("Materials");
    page.table(&t);
    let mut t = HtmlTable::new(&["boundary", "kind", "condition", "length m"], "lllr");
    for b in &sv.results.boundaries {
        let cond = s.boundaries.iter().find(|x| x.name == b.name).map_or_else(
            || "no heat flow (edges without a name)".to_string(),
            |x| {
                let id = s.boundaries.iter().position(|y| y.name == x.name);
                match (x.kind, id.and_then(|i| s.radiation(i))) {
                    (BoundaryKind::Convection { .. }, Some(r)) => format!(
                        "{}; radiation: emissivity {}, surroundings {} °C",
                        condition(&x.kind),
                        fixed_short(r.emissivity),
                        fixed_short(r.surroundings)
                    ),
                    _ => match &x.field {
                        // a temperature that varies with position
                        Some(f) => format!(
                            "{}: {}",
                            x.kind.name(),
                            f.describe(if matches!(x.kind, BoundaryKind::Fixed { .. }) {
                                "°C (T)"
                            } else {
                                "°C (ambient)"
                            })
                        ),
                        None => condition(&x.kind),
                    },
                }
            },
        );
        t.row(vec![
            b.name.clone(),
            b.kind.as_str().to_string(),
            cond,
            fixed(b.length, 4),
        ]);
    }
    page.h3("Boundaries");
    page.table(&t);
    let st = &sv.mesh.stats;
    page.h3("Mesh");
    page.facts(&[
        (
            "Size".to_string(),
            format!(
                "{} triangles, {} nodes, {} boundary edges",
                st.triangles, st.nodes, st.boundary_edges
            ),
        ),
        (
            "Quality".to_string(),
            format!(
                "smallest angle {}° (limit {}°); triangle areas {} to {} m² (limit {} m²)",
                fixed(st.min_angle_deg, 2),
                fixed_short(s.mesh.min_angle),
                sci(st.min_area, 3),
                sci(st.max_area, 3),
                sci(s.mesh.max_area, 3)
            ),
        ),
        (
            "Meshed area".to_string(),
            format!("{} m²", fixed(st.area, 6)),
        ),
    ]);
}

fn flows_section(page: &mut Page, s: &Section, r: &Results) {
    page.section("flows", "Heat flows");
    let mut t = HtmlTable::new(
        &[
            "boundary",
            "kind",
            "heat flow W/m",
            "mean °C",
            "min °C",
            "max °C",
        ],
        "llrrrr",
    )
    .caption("Per boundary name; positive into the section.");
    for b in &r.boundaries {
        t.row(vec![
            b.name.clone(),
            b.kind.as_str().to_string(),
            fixed(b.heat_flow, 5),
            fixed(b.mean_temperature, 3),
            fixed(b.min_temperature, 3),
            fixed(b.max_temperature, 3),
        ]);
    }
    t.row(vec![
        "heat sources".to_string(),
        String::new(),
        fixed(r.heat_source, 5),
        String::new(),
        String::new(),
        String::new(),
    ]);
    t.row_class(
        vec![
            "balance (sum)".to_string(),
            String::new(),
            sci(r.energy_imbalance, 2),
            String::new(),
            String::new(),
            format!("relative {}", sci(r.energy_imbalance_relative, 2)),
        ],
        "total",
    );
    page.table(&t);
    if r.items.len() > r.boundaries.len() {
        let mut t = HtmlTable::new(
            &["item", "boundary", "length m", "heat flow W/m"],
            "llrr",
        )
        .caption("Per hole and per run of outline or hole edges (segment indices as written in the model file).");
        for i in &r.items {
            t.row(vec![
                i.item.clone(),
                i.result.name.clone(),
                fixed(i.result.length, 4),
                fixed(i.result.heat_flow, 5),
            ]);
        }
        page.h3("Per item");
        page.table(&t);
    }
    if !s.cuts.is_empty() {
        let mut t = HtmlTable::new(
            &["cut", "length m", "inside m", "skipped m", "heat flow W/m"],
            "lrrrr",
        )
        .caption("Positive from the right of the direction of travel to the left; a closed cut drawn anticlockwise gives the heat flowing into the area it encloses. Parts outside the section or in holes carry no flow (skipped).");
        for c in &r.cuts {
            t.row(vec![
                c.name.clone(),
                fixed(c.length, 4),
                fixed(c.inside_length, 4),
                fixed(c.skipped_length(), 4),
                fixed(c.heat_flow, 5),
            ]);
        }
        page.h3("Across cuts");
        page.table(&t);
    }
    let mut t = HtmlTable::new(
        &[
            "material",
            "area m²",
            "generated W/m",
            "mean °C",
            "min °C",
            "max °C",
        ],
        "lrrrrr",
    );
    for m in &r.materials {
        t.row(vec![
            m.name.clone(),
            fixed(m.area, 5),
            fixed(m.heat_generated, 5),
            fixed(m.mean_temperature, 3),
            fixed(m.min_temperature, 3),
            fixed(m.max_temperature, 3),
        ]);
    }
    page.h3("Per material");
    page.table(&t);
}

fn coupling_section(page: &mut Page, c: &Coupling) {
    page.section(
        "coupling",
        "Coupling coefficients, ψ and temperature factors",
    );
    page.p("Environments are groups of convection boundaries that share one ambient. The thermal coupling coefficient L2D between two environments is the heat flow per metre of depth between them per kelvin of difference (ISO 10211), computed by one solve per environment with that environment at 1 °C, the others and every fixed boundary at 0 °C, sources and imposed fluxes zero, on the same mesh and matrix. The discrete system is symmetric, so both directions agree to round-off (reciprocal column).");
    let mut t = HtmlTable::new(&["between", "and", "L2D W/(m·K)", "reciprocal"], "llrr");
    for p in &c.pairs {
        t.row(vec![
            p.between[0].clone(),
            p.between[1].clone(),
            fixed(p.value, 6),
            fixed(p.reciprocal, 6),
        ]);
    }
    page.table(&t);
    if !c.psi.is_empty() {
        page.h3("Linear thermal transmittance");
        page.p("ψ = L2D − Σ U·l over the declared one-dimensional reference elements (ISO 10211). Which dimensions (internal, overall internal, external) the lengths follow is the modeller's declaration.");
        let mut t = HtmlTable::new(
            &[
                "junction",
                "coupling",
                "L2D W/(m·K)",
                "Σ U·l W/(m·K)",
                "ψ W/(m·K)",
            ],
            "llrrr",
        );
        for p in &c.psi {
            t.row(vec![
                p.name.clone(),
                format!("{} – {}", p.coupling[0], p.coupling[1]),
                fixed(p.l2d, 6),
                fixed(p.reference, 6),
                fixed(p.psi, 6),
            ]);
        }
        page.table(&t);
    }
    if !c.temperature_factors.is_empty() {
        page.h3("Temperature factors");
        let limit = c.f_rsi_min.map_or_else(
            || "No lowest acceptable value was declared.".to_string(),
            |m| format!("Lowest acceptable value declared: {}.", fixed(m, 3)),
        );
        page.p(&format!("f_Rsi = (θ_s − θ_e)/(θ_i − θ_e) (ISO 13788), θ_i the ambient of the boundary's own environment, θ_e the other's, θ_s the surface temperature that gives the smallest factor: the lowest on the warmer side, the highest on the colder. {limit} National annexes and codes decide the limit."));
        let mut t = HtmlTable::new(
            &["boundary", "environment", "θ_s °C", "", "at m", "f_Rsi"],
            "llrllr",
        );
        for f in &c.temperature_factors {
            let cells = vec![
                f.boundary.clone(),
                f.environment.clone(),
                fixed(f.surface_temperature, 3),
                if f.highest { "highest" } else { "lowest" }.to_string(),
                point(f.at, 4),
                f.f_rsi.map_or("undefined".to_string(), |x| fixed(x, 4)),
            ];
            if f.below_minimum {
                t.row_class(cells, "fail");
            } else {
                t.row(cells);
            }
        }
        page.table(&t);
    }
}

fn point_sources_section(page: &mut Page, r: &Results) {
    if r.point_sources.is_empty() {
        return;
    }
    page.section("point-sources", "Point sources");
    page.p(
        "Line sources along the depth, each a load P at the mesh node at its position. Their powers are part of the heat source of the energy balance. The temperature at a source's node depends on the mesh (the exact field is logarithmic, infinite at the line): read temperatures at probes standing off the source.",
    );
    let mut t = HtmlTable::new(
        &[
            "point source",
            "x m",
            "y m",
            "power W/m",
            "node temperature °C",
        ],
        "lrrrr",
    );
    for p in &r.point_sources {
        t.row(vec![
            p.name.clone(),
            fixed(p.at[0], 4),
            fixed(p.at[1], 4),
            fixed(p.power, 4),
            fixed(p.temperature, 4),
        ]);
    }
    page.table(&t);
}

fn contacts_section(page: &mut Page, sv: &Solved) {
    let s = sv.section();
    if s.contacts.is_empty() {
        return;
    }
    page.section("contacts", "Contact resistances");
    page.p(
        "Zero-thickness interfaces where two materials meet, each a conductance 1/R per unit length between duplicated nodes. The jump is T_a − T_b (length-weighted mean); the heat flow is from the a side to the b side, from the same interface elements the solved system holds.",
    );
    let mut t = HtmlTable::new(
        &[
            "contact a/b",
            "length m",
            "R m²·K/W",
            "mean jump K",
            "heat flow W/m",
        ],
        "lrrrr",
    );
    for c in crate::post::contacts::contact_flows(s, &sv.mesh, &sv.results.temperature) {
        t.row(vec![
            format!("{}/{}", c.between[0], c.between[1]),
            fixed(c.interface_length_m, 6),
            sci(c.resistance_m2k_per_w, 4),
            fixed(c.mean_temperature_jump_k, 4),
            fixed(c.heat_flow_a_to_b_w_per_m, 6),
        ]);
    }
    page.table(&t);
}

fn probes_section(page: &mut Page, s: &Section, r: &Results) {
    if r.probes.is_empty() && r.lines.is_empty() {
        return;
    }
    page.section("probes", "Probes and lines");
    if !r.probes.is_empty() {
        let mut t = HtmlTable::new(&["probe", "x m", "y m", "temperature °C", ""], "lrrrl");
        for p in &r.probes {
            t.row(vec![
                p.name.clone(),
                fixed(p.x, 4),
                fixed(p.y, 4),
                fixed(p.temperature, 4),
                if p.snapped {
                    "taken at the nearest boundary point".to_string()
                } else {
                    String::new()
                },
            ]);
        }
        page.table(&t);
    }
    if !r.lines.is_empty() {
        let mut t = HtmlTable::new(
            &["line", "from", "to", "samples inside", "skipped", "file"],
            "lllrrl",
        );
        for (l, def) in r.lines.iter().zip(&s.lines) {
            t.row(vec![
                l.name.clone(),
                point(def.from, 4),
                point(def.to, 4),
                l.samples.len().to_string(),
                l.skipped.len().to_string(),
                format!("line-{}.csv", l.name),
            ]);
        }
        page.table(&t);
    }
}

fn cases_section(page: &mut Page, sv: &Solved) {
    if sv.cases.is_empty() {
        return;
    }
    page.section("cases", "Load cases");
    page.p("Each case is solved on the same mesh; heat flows per boundary in W/m, positive into the section. Files of each case are in its own directory of the set.");
    let names: Vec<&str> = sv
        .results
        .boundaries
        .iter()
        .map(|b| b.name.as_str())
        .collect();
    let mut header = vec!["case", "factorisation"];
    header.extend(names.iter().copied());
    header.push("min °C");
    header.push("max °C");
    header.push("self-checks");
    let align = format!("ll{}rrl", "r".repeat(names.len()));
    let mut t = HtmlTable::new(&header, &align);
    let mut row = |name: &str, how: &str, r: &Results, checks: &[Check]| {
        let mut cells = vec![name.to_string(), how.to_string()];
        for n in &names {
            cells.push(
                r.boundaries
                    .iter()
                    .find(|b| b.name == *n)
                    .map_or(String::new(), |b| fixed(b.heat_flow, 4)),
            );
        }
        cells.push(fixed(r.t_min.value, 3));
        cells.push(fixed(r.t_max.value, 3));
        cells.push(checks_summary(checks));
        t.row(cells);
    };
    row("base", "", &sv.results, &sv.checks);
    for c in &sv.cases {
        row(&c.name, c.factorisation.as_str(), &c.results, &c.checks);
    }
    page.table(&t);
}

fn accuracy_section(page: &mut Page, sv: &Solved) {
    page.section("accuracy", "Accuracy and self-checks");
    page.p(&format!(
        "{ERROR_ESTIMATE_METHOD} estimate (gradient recovery, energy norm): relative {}, estimated error {} (W·K/m)^½. It measures the discretisation error of this mesh; the inputs' uncertainty is not in it. A mesh-independence study (xsheat converge) gives observed orders and a grid convergence index.",
        sig3(sv.error_estimate.relative),
        sci(sv.error_estimate.energy_norm, 3)
    ));
    if !sv.adaptivity.is_empty() {
        let mut t = HtmlTable::new(&["cycle", "triangles", "nodes", "estimate"], "rrrr")
            .caption("Adaptive refinement cycles");
        for c in &sv.adaptivity {
            t.row(vec![
                c.cycle.to_string(),
                c.triangles.to_string(),
                c.nodes.to_string(),
                sig3(c.relative_error),
            ]);
        }
        page.table(&t);
    }
    let mut t = HtmlTable::new(
        &["check", "result", "value", "tolerance", "detail"],
        "llrrl",
    );
    for c in &sv.checks {
        let (label, class) = match c.status() {
            CheckStatus::Passed => ("pass", None),
            CheckStatus::Warning => ("warning", Some("warn")),
            CheckStatus::Failed => ("FAILED", Some("fail")),
        };
        let cells = vec![
            c.name.clone(),
            label.to_string(),
            sci(c.value, 2),
            sci(c.tolerance, 2),
            c.detail.clone(),
        ];
        match class {
            Some(k) => t.row_class(cells, k),
            None => t.row(cells),
        }
    }
    page.table(&t);
}

fn warnings_section(page: &mut Page, warnings: &[String]) {
    page.section("warnings", "Warnings");
    if warnings.is_empty() {
        page.p("None.");
    } else {
        page.list(warnings);
    }
}

fn conventions_section(page: &mut Page, files: &[String]) {
    page.section("conventions", "Method, conventions and files");
    page.list(&[
        "Method: steady conduction −∇·(k∇T) = Q on the section, linear triangles (P1), Galerkin weak form; film (Robin), fixed (Dirichlet), flux and insulated edges; sparse Cholesky factorisation.".to_string(),
        "Heat flows are per metre of section depth (W/m), from the nodal residuals of the discrete system, positive into the section; the energy balance is their sum with the sources.".to_string(),
        "Heat flux in field.vtu is −k∇T per triangle (W/m²); boundary.vtp holds the normal flux on each boundary edge, positive into the section.".to_string(),
        "Coordinates in m, temperatures in °C.".to_string(),
    ]);
    if !files.is_empty() {
        page.h3("Files of this result set");
        page.p("summary.json lists every file with its size and SHA-256, and holds every number of this page.");
        page.list_class("files", files);
    }
}
