//! A one-line progress display on standard error for building and evaluating
//! large level models (`levels`, `lines`, `fit`).
//!
//! Written by hand rather than with a progress-bar crate: one line of counts,
//! rewritten in place, is all these commands need. It shows only when standard
//! error is a terminal, after the work has run for a moment, so that pipes, logs
//! and small models see nothing.

use std::io::{self, IsTerminal, Write};
use std::time::{Duration, Instant};

use crate::structure::{BuildProgress, LevelsProgress};

/// Nothing is shown for work shorter than this.
const SHOW_AFTER: Duration = Duration::from_millis(300);

/// The line is redrawn at most this often.
const REDRAW: Duration = Duration::from_millis(100);

/// Progress of one command on standard error.
#[derive(Debug)]
pub(crate) struct ModelProgress {
    command: &'static str,
    enabled: bool,
    start: Instant,
    last: Option<Instant>,
}

impl ModelProgress {
    /// Progress for `termsight <command>`; `quiet` silences it.
    pub fn new(command: &'static str, quiet: bool) -> ModelProgress {
        ModelProgress {
            command,
            enabled: !quiet && io::stderr().is_terminal(),
            start: Instant::now(),
            last: None,
        }
    }

    fn show(&mut self, text: std::fmt::Arguments<'_>) {
        if !self.enabled || self.start.elapsed() < SHOW_AFTER {
            return;
        }
        let now = Instant::now();
        if self.last.is_some_and(|t| now.duration_since(t) < REDRAW) {
            return;
        }
        self.last = Some(now);
        let mut stderr = io::stderr().lock();
        let _ = write!(stderr, "\r\x1b[Ktermsight {}: {text}", self.command);
        let _ = stderr.flush();
    }

    /// Report a step of [`crate::structure::LevelStructure::build_with_progress`].
    pub fn build(&mut self, p: BuildProgress) {
        if p.blocks_done < p.blocks_total {
            self.show(format_args!(
                "building the level model: parity block {} of {}, step {} of {}",
                p.blocks_done + 1,
                p.blocks_total,
                p.steps_done,
                p.steps_total
            ));
        }
    }

    /// Report a step of [`crate::structure::LevelStructure::levels_with_progress`].
    pub fn levels(&mut self, p: LevelsProgress) {
        self.show(format_args!(
            "diagonalising: {} of {} LS states",
            p.states_done, p.states_total
        ));
    }

    /// Clear the line, if anything was shown.
    pub fn finish(&mut self) {
        if self.last.take().is_some() {
            let _ = write!(io::stderr().lock(), "\r\x1b[K");
        }
    }
}
