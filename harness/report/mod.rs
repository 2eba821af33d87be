//! Reports of a run, in four formats, all read from [`crate::gate::RunResult`] only:
//!
//! - [`text()`]: the terminal report, ANSI colour only when asked for (the CLI asks when
//!   [`use_colour`] says so: standard output is a terminal and `NO_COLOR` is unset or empty);
//! - [`json()`]: the whole result for scripts, with every non-finite number spelled as a
//!   string (`"NaN"`, `"inf"`, `"-inf"`), see [`json()`] for the layout;
//! - [`junit()`]: JUnit XML, one `<testcase>` per check, the test-report format CI systems
//!   import;
//! - [`ledger()`]: the Markdown tolerance ledger, one table row per comparison: the error
//!   each check accepts, the written reason, and the worst error measured.
//!
//! **These functions never print**: each returns its text and the caller decides where it
//! goes. The one exception is [`Progress`], which the CLI creates to show a long run
//! advancing; it writes to standard error only when that is a terminal.

pub mod format;
mod json;
mod junit;
mod ledger;
pub mod pace;
mod text;

use std::cell::RefCell;
use std::ffi::OsStr;
use std::io::{IsTerminal as _, Write};

pub use pace::Pace;

mod html;

pub use html::html;
pub use json::{json, json_with, FORMAT as JSON_FORMAT, VERSION as JSON_VERSION};
pub use junit::{junit, junit_with};
pub use ledger::ledger;
pub use text::{text, text_with};

/// Whether a report carries timings. Without them two runs of the same code give
/// identical files (the CLI's `--deterministic`, and its default when `CI` is set).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Timings {
    Show,
    Omit,
}

/// Whether the terminal report should be coloured: standard output is a terminal and
/// `NO_COLOR` is unset or empty.
pub fn use_colour() -> bool {
    colour_wanted(
        std::io::stdout().is_terminal(),
        std::env::var_os("NO_COLOR").as_deref(),
    )
}

/// The rule behind [`use_colour`], given whether standard output is a terminal and the
/// value of `NO_COLOR` (any non-empty value turns colour off).
pub fn colour_wanted(stdout_is_terminal: bool, no_color: Option<&OsStr>) -> bool {
    stdout_is_terminal && no_color.is_none_or(|v| v.is_empty())
}

/// Progress of a long run: one line `[3/10] checking <name>…` as each check starts.
///
/// [`Progress::new`] writes to standard error, and only when standard error is a
/// terminal; otherwise every call does nothing, so piped output and CI logs stay clean.
/// Whole lines are written (never a line rewritten in place), so the report that
/// follows on standard output never lands in the middle of a progress line.
pub struct Progress {
    out: Option<RefCell<Box<dyn Write>>>,
}

impl Progress {
    /// Progress on standard error if it is a terminal, otherwise silent.
    pub fn new() -> Progress {
        if std::io::stderr().is_terminal() {
            Progress::writing_to(Box::new(std::io::stderr()))
        } else {
            Progress::silent()
        }
    }

    /// Progress written to `out`, whatever it is.
    pub fn writing_to(out: Box<dyn Write>) -> Progress {
        Progress {
            out: Some(RefCell::new(out)),
        }
    }

    /// Progress that shows nothing.
    pub fn silent() -> Progress {
        Progress { out: None }
    }

    /// Whether [`Progress::step`] writes anything.
    pub fn is_shown(&self) -> bool {
        self.out.is_some()
    }

    /// Check `i` (1-based) of `n`, called `name`, is starting.
    pub fn step(&self, i: usize, n: usize, name: &str) {
        if let Some(out) = &self.out {
            let mut out = out.borrow_mut();
            // Progress is a courtesy: a closed or full stderr must not stop the run.
            let _ = writeln!(out, "{}", Progress::line(i, n, name));
            let _ = out.flush();
        }
    }

    /// The line shown for check `i` of `n`.
    pub fn line(i: usize, n: usize, name: &str) -> String {
        format!("[{i}/{n}] checking {name}…")
    }
}

impl Default for Progress {
    fn default() -> Self {
        Progress::new()
    }
}

/// ANSI styling, or none.
#[derive(Clone, Copy)]
pub(crate) struct Style {
    pub on: bool,
}

impl Style {
    fn paint(self, code: &str, s: &str) -> String {
        if self.on && !s.is_empty() {
            format!("\x1b[{code}m{s}\x1b[0m")
        } else {
            s.to_string()
        }
    }
    pub fn pass(self, s: &str) -> String {
        self.paint("32;1", s)
    }
    pub fn fail(self, s: &str) -> String {
        self.paint("31;1", s)
    }
    pub fn error(self, s: &str) -> String {
        self.paint("35;1", s)
    }
    pub fn warn(self, s: &str) -> String {
        self.paint("33", s)
    }
    pub fn dim(self, s: &str) -> String {
        self.paint("2", s)
    }
    pub fn bold(self, s: &str) -> String {
        self.paint("1", s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::{Arc, Mutex};

    #[test]
    fn colour_needs_a_terminal_and_no_non_empty_no_color() {
        assert!(colour_wanted(true, None));
        assert!(colour_wanted(true, Some(OsStr::new(""))));
        assert!(!colour_wanted(true, Some(OsStr::new("1"))));
        assert!(!colour_wanted(false, None));
    }

    /// A writer that keeps what it is given, for the progress tests here
    /// and in `pace`.
    #[derive(Clone, Default)]
    pub(super) struct Sink(pub(super) Arc<Mutex<Vec<u8>>>);

    impl Sink {
        pub(super) fn text(&self) -> String {
            String::from_utf8(self.0.lock().unwrap().clone()).unwrap()
        }
    }

    impl Write for Sink {
        fn write(&mut self, b: &[u8]) -> std::io::Result<usize> {
            self.0.lock().unwrap().extend_from_slice(b);
            Ok(b.len())
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn progress_writes_one_line_per_check() {
        let sink = Sink::default();
        let p = Progress::writing_to(Box::new(sink.clone()));
        assert!(p.is_shown());
        p.step(1, 2, "ggx_lobe");
        p.step(2, 2, "fresnel");
        assert_eq!(
            sink.text(),
            "[1/2] checking ggx_lobe…\n[2/2] checking fresnel…\n"
        );
    }

    #[test]
    fn silent_progress_shows_nothing() {
        let p = Progress::silent();
        assert!(!p.is_shown());
        p.step(1, 1, "x");
    }
}
