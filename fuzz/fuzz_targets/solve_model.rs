//! Arbitrary bytes as a model file, taken through the whole pipeline: parse → validate →
//! geometry → mesh (at most 5,000 triangles) → assemble → solve (linear or nonlinear, load
//! cases, environments) → post-processing. Reaches the physics that the other two targets do
//! not build (contacts, point sources, values that vary with position, k(T), radiation).
//! Errors are fine; a panic, an abort or a hang is a bug.
#![no_main]

use libfuzzer_sys::fuzz_target;
use xsheat::mesh::MeshOptions;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let Ok(file) = xsheat::model::parse(&text) else {
        return;
    };
    let Ok(prepared) = xsheat::run::prepare_model(file) else {
        return;
    };
    let Ok(opts) = MeshOptions::with_max_triangles(5_000) else {
        return;
    };
    let _ = xsheat::run::solve(prepared, &opts);
});
