//! The progress reports of a solve: the library announces its stages in pipeline order to an
//! installed reporter (the CLI's terminal line is installed only when stderr is a terminal, so
//! the other tests, whose stderr is a pipe, never see it).
use std::sync::{Arc, Mutex};
use xsheat::progress::{self, Reporter};
use xsheat::{mesh::MeshOptions, model, run};

struct Recorder(Arc<Mutex<Vec<String>>>);

impl Reporter for Recorder {
    fn stage(&self, name: &str) {
        self.0.lock().unwrap().push(name.to_string());
    }
    fn items(&self, what: &str, done: usize, total: usize) {
        self.0
            .lock()
            .unwrap()
            .push(format!("{what} {done}/{total}"));
    }
    fn done(&self) {
        self.0.lock().unwrap().push("done".to_string());
    }
}

#[test]
fn a_solve_reports_its_stages_in_pipeline_order() {
    let log = Arc::new(Mutex::new(Vec::new()));
    assert!(progress::install(Box::new(Recorder(Arc::clone(&log)))));
    // A second reporter is refused; the first stays.
    assert!(!progress::install(Box::new(Recorder(Arc::new(
        Mutex::new(Vec::new())
    )))));
    let text = r#"
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
edges = ["cold", "", "hot", ""]
[boundaries.cold]
kind = "fixed"
temperature = 0.0
[boundaries.hot]
kind = "fixed"
temperature = 10.0
"#;
    let prepared = run::prepare_model(model::parse(text).unwrap()).unwrap();
    run::solve(prepared, &MeshOptions::default()).unwrap();
    progress::done();
    let log = log.lock().unwrap().clone();
    assert_eq!(
        log,
        [
            "meshing",
            "assembling",
            "solving",
            "post-processing",
            "coupling and load cases",
            "done"
        ]
    );
}
