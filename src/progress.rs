//! Progress of long runs on the console: which stage of a solve is running, and how many
//! items (sweep variants) are done. The library reports through [`stage`], [`items`] and
//! [`done`]; a [`Reporter`] installed once per process ([`install`]) receives them. Without one
//! every call is a no-op, so library callers and tests see nothing. The command-line tool
//! installs [`install_terminal`]: an indicatif line on stderr, only when stderr is a terminal
//! and `--quiet` is not given, shown only once a stage has run for more than a second (short
//! runs print nothing), and cleared before any other text is printed. Progress never reaches a
//! file.

use std::io::IsTerminal;
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, Instant};

/// Receives progress reports. Implementations must be cheap: the calls sit on the solve path.
pub trait Reporter: Send + Sync {
    /// A stage of a solve starts (`"meshing"`, `"solving"`, …).
    fn stage(&self, name: &str);
    /// `done` of `total` items of `what` (e.g. sweep variants) are finished.
    fn items(&self, what: &str, done: usize, total: usize);
    /// The run is over: remove anything shown.
    fn done(&self);
}

static REPORTER: OnceLock<Box<dyn Reporter>> = OnceLock::new();

/// Installs the process's reporter; `false` if one was installed before (it stays).
pub fn install(reporter: Box<dyn Reporter>) -> bool {
    REPORTER.set(reporter).is_ok()
}

/// Reports the start of a stage.
pub fn stage(name: &str) {
    if let Some(r) = REPORTER.get() {
        r.stage(name);
    }
}

/// Reports `done` of `total` items of `what`.
pub fn items(what: &str, done: usize, total: usize) {
    if let Some(r) = REPORTER.get() {
        r.items(what, done, total);
    }
}

/// Reports the end of the run (clears the console line).
pub fn done() {
    if let Some(r) = REPORTER.get() {
        r.done();
    }
}

/// A stage must run this long before the progress line appears.
pub const SHOW_AFTER: Duration = Duration::from_secs(1);

/// Installs the terminal reporter when stderr is a terminal; returns whether it did.
pub fn install_terminal() -> bool {
    if !std::io::stderr().is_terminal() {
        return false;
    }
    let terminal: &'static Terminal = Box::leak(Box::new(Terminal::new()));
    if !install(Box::new(terminal)) {
        return false;
    }
    std::thread::spawn(move || {
        loop {
            std::thread::sleep(Duration::from_millis(100));
            terminal.tick();
        }
    });
    true
}

/// What the terminal line shows.
#[derive(Debug)]
struct State {
    /// Current stage or item kind; `None` when idle.
    message: Option<String>,
    started: Instant,
    shown: bool,
    /// Items mode (a sweep): stage reports of the items' own solves are not shown.
    items: bool,
}

/// The terminal reporter: one indicatif line on stderr, hidden until a stage has run for
/// [`SHOW_AFTER`].
struct Terminal {
    bar: indicatif::ProgressBar,
    state: Mutex<State>,
}

impl Terminal {
    fn new() -> Self {
        let bar =
            indicatif::ProgressBar::with_draw_target(None, indicatif::ProgressDrawTarget::hidden());
        bar.set_style(spinner_style());
        Terminal {
            bar,
            state: Mutex::new(State {
                message: None,
                started: Instant::now(),
                shown: false,
                items: false,
            }),
        }
    }

    fn tick(&self) {
        let Ok(mut s) = self.state.lock() else {
            return;
        };
        if s.message.is_some() && !s.shown && s.started.elapsed() >= SHOW_AFTER {
            self.bar
                .set_draw_target(indicatif::ProgressDrawTarget::stderr());
            s.shown = true;
        }
        if s.shown {
            self.bar.tick();
        }
    }
}

fn spinner_style() -> indicatif::ProgressStyle {
    indicatif::ProgressStyle::with_template("{spinner} {msg} ({elapsed})")
        .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner())
}

fn items_style() -> indicatif::ProgressStyle {
    indicatif::ProgressStyle::with_template(
        "{msg} {pos}/{len} [{bar:30}] ({elapsed}, about {eta} left)",
    )
    .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
}

impl Reporter for &'static Terminal {
    fn stage(&self, name: &str) {
        let Ok(mut s) = self.state.lock() else {
            return;
        };
        if s.items {
            return;
        }
        s.message = Some(name.to_string());
        s.started = Instant::now();
        self.bar.set_message(name.to_string());
    }

    fn items(&self, what: &str, done: usize, total: usize) {
        let Ok(mut s) = self.state.lock() else {
            return;
        };
        if !s.items {
            s.items = true;
            s.started = Instant::now();
            self.bar.set_style(items_style());
            self.bar.set_length(total as u64);
        }
        s.message = Some(what.to_string());
        self.bar.set_message(what.to_string());
        self.bar.set_position(done as u64);
    }

    fn done(&self) {
        let Ok(mut s) = self.state.lock() else {
            return;
        };
        if s.shown {
            self.bar.finish_and_clear();
        }
        s.message = None;
        s.shown = false;
        s.items = false;
    }
}
