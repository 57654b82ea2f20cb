//! Progress lines on stderr, from the library's events.
//!
//! Shown when `--progress` is given, or by default when stderr is a
//! terminal; never with `--quiet`. Lines come in completion order (folds,
//! restarts and trials run in parallel). On runs longer than a few seconds
//! each count-based line ends with an estimate of the time left: the mean
//! time per finished unit so far times the units still to run (common
//! practice, no source; it is only an estimate, and says so).

use super::args::OutputArgs;
use crate::observe::{Event, Observer};
use std::io::{IsTerminal, Write};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Epoch lines are printed every this many epochs of a single fit.
const EPOCH_EVERY: usize = 50;

/// Count lines are printed at most this often (the last one always).
const EVERY: Duration = Duration::from_millis(500);

/// The command's progress printer.
#[derive(Clone)]
pub(crate) struct Progress {
    on: bool,
}

struct Clock {
    start: Instant,
    last: Option<Instant>,
}

impl Progress {
    /// Whether progress lines go to stderr: asked with `--progress`, or by
    /// default when stderr is a terminal; never with `--quiet`.
    pub fn new(o: &OutputArgs) -> Progress {
        Progress {
            on: !o.quiet && (o.progress || std::io::stderr().is_terminal()),
        }
    }

    /// Prints one line on stderr (ignoring a closed pipe).
    pub fn say(&self, line: &str) {
        if self.on {
            let mut err = std::io::stderr().lock();
            let _ = writeln!(err, "{line}");
        }
    }

    /// An observer printing this command's events (nobody when progress is
    /// off).
    pub fn observer(&self) -> Observer {
        if !self.on {
            return Observer::none();
        }
        let clock = Arc::new(Mutex::new(Clock {
            start: Instant::now(),
            last: None,
        }));
        Observer::new(move |event| {
            let line = match event {
                // A single fit's epochs; inside cross-validation the folds
                // report instead.
                Event::Epoch {
                    fold: None, epoch, ..
                } if epoch % EPOCH_EVERY == 0 => Some(event.to_string()),
                Event::Epoch { .. } => None,
                Event::RestartFinished {
                    fold: None,
                    restarts,
                    finished,
                    ..
                } if *restarts > 1 => counted(&clock, event, *finished, *restarts),
                Event::RestartFinished { .. } => None,
                Event::FoldFinished {
                    folds, finished, ..
                } => counted(&clock, event, *finished, *folds),
                Event::TrialFinished {
                    trials, finished, ..
                } => counted(&clock, event, *finished, *trials),
            };
            if let Some(line) = line {
                let mut err = std::io::stderr().lock();
                let _ = writeln!(err, "{line}");
            }
        })
    }
}

/// A count line with the time left, at most every [`EVERY`] (and always
/// for the last unit).
fn counted(clock: &Mutex<Clock>, event: &Event, finished: usize, total: usize) -> Option<String> {
    let mut c = clock.lock().unwrap_or_else(|p| p.into_inner());
    let now = Instant::now();
    let last_one = finished == total;
    if !last_one && c.last.is_some_and(|t| now - t < EVERY) {
        return None;
    }
    c.last = Some(now);
    let elapsed = (now - c.start).as_secs_f64();
    let mut line = event.to_string();
    if !last_one && elapsed > 3.0 && finished > 0 {
        let left = elapsed / finished as f64 * (total - finished) as f64;
        line.push_str(&format!(", about {} left", duration(left)));
    }
    Some(line)
}

/// A rough duration: "40 s", "3 min", "2 h 5 min".
fn duration(seconds: f64) -> String {
    let s = seconds.round() as u64;
    match s {
        0..=59 => format!("{s} s"),
        60..=3599 => format!("{} min", (s + 30) / 60),
        _ => format!("{} h {} min", s / 3600, (s % 3600 + 30) / 60),
    }
}

#[cfg(test)]
mod tests {
    use super::duration;

    #[test]
    fn durations_read_roughly() {
        assert_eq!(duration(12.4), "12 s");
        assert_eq!(duration(150.0), "3 min");
        assert_eq!(duration(7500.0), "2 h 5 min");
    }
}
