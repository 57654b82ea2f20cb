//! Progress events: how a long run tells its caller what it is doing.
//!
//! The library never prints. Training, fitting, cross-validation and sweeps
//! report [`Event`]s to the [`Observer`] in the options
//! ([`TrainingOptions::observer`](crate::train::TrainingOptions::observer),
//! set with [`FitOptions::observe`](crate::FitOptions::observe)); the caller
//! decides what to show. The command line prints progress lines from them, a
//! notebook may show them, and by default nobody listens.
//!
//! Events come from the threads that do the work: folds, restarts and sweep
//! trials run in parallel, so an observer is called concurrently and sees
//! events in completion order. Observing never changes a result: the same
//! options and seed give the same bits with or without an observer.
//!
//! ```
//! use stratanet::prelude::*;
//! use stratanet::observe::Event;
//! use std::sync::atomic::{AtomicUsize, Ordering};
//! use std::sync::Arc;
//!
//! let epochs = Arc::new(AtomicUsize::new(0));
//! let seen = epochs.clone();
//! let options = FitOptions::default().epochs(20).observe(move |event| {
//!     if let Event::Epoch { .. } = event {
//!         seen.fetch_add(1, Ordering::Relaxed);
//!     }
//! });
//! let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
//!     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
//! let fitted = fit(&data, &options, &mut seeded_rng(1))?;
//! assert_eq!(epochs.load(Ordering::Relaxed), fitted.report().epochs_run);
//! # Ok::<(), stratanet::Error>(())
//! ```

use std::fmt;
use std::sync::Arc;

/// Something a run has done.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum Event {
    /// One epoch of one network finished.
    Epoch {
        /// The cross-validation fold (from 0), when the network is a fold's.
        fold: Option<usize>,
        /// The restart (from 0).
        restart: usize,
        /// The epoch just finished (from 1).
        epoch: usize,
        /// The most epochs the network may run.
        epochs: usize,
        /// Mean training loss of the epoch.
        training_loss: f64,
        /// Mean validation loss after the epoch, when there are validation rows.
        validation_loss: Option<f64>,
    },
    /// One restart of a fit finished training.
    RestartFinished {
        /// The cross-validation fold (from 0), when the fit is a fold's.
        fold: Option<usize>,
        /// The restart (from 0).
        restart: usize,
        /// Restarts in the fit.
        restarts: usize,
        /// How many restarts of the fit have finished, this one included.
        finished: usize,
    },
    /// One cross-validation fold was fitted and scored.
    FoldFinished {
        /// The fold (from 0, in plan order).
        fold: usize,
        /// Folds in the plan (folds x repeats).
        folds: usize,
        /// How many folds have finished, this one included.
        finished: usize,
    },
    /// One sweep trial (a configuration on a fold) finished.
    TrialFinished {
        /// The trial (from 0, in plan order).
        trial: usize,
        /// Trials in the sweep.
        trials: usize,
        /// How many trials have finished, this one included.
        finished: usize,
    },
}

impl fmt::Display for Event {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let fold = |f: &mut fmt::Formatter<'_>, fold: &Option<usize>| match fold {
            Some(k) => write!(f, "fold {}: ", k + 1),
            None => Ok(()),
        };
        match self {
            Event::Epoch {
                fold: k,
                restart,
                epoch,
                epochs,
                training_loss,
                validation_loss,
            } => {
                fold(f, k)?;
                if *restart > 0 {
                    write!(f, "restart {}: ", restart + 1)?;
                }
                write!(
                    f,
                    "epoch {epoch}/{epochs}: training loss {training_loss:.6}"
                )?;
                if let Some(v) = validation_loss {
                    write!(f, ", validation loss {v:.6}")?;
                }
                Ok(())
            }
            Event::RestartFinished {
                fold: k,
                restart,
                restarts,
                finished,
            } => {
                fold(f, k)?;
                write!(
                    f,
                    "restart {} finished ({finished} of {restarts} done)",
                    restart + 1
                )
            }
            Event::FoldFinished {
                fold,
                folds,
                finished,
            } => write!(f, "fold {} finished ({finished} of {folds} done)", fold + 1),
            Event::TrialFinished {
                trial,
                trials,
                finished,
            } => write!(
                f,
                "trial {} finished ({finished} of {trials} done)",
                trial + 1
            ),
        }
    }
}

/// Who listens to a run's [`Event`]s: a function called with each event,
/// or nobody (the default).
///
/// Cloning shares the function. Two observers always compare equal, since
/// observing never changes a result.
#[derive(Clone, Default)]
pub struct Observer(Option<Arc<Listener>>);

/// The function an [`Observer`] calls.
type Listener = dyn Fn(&Event) + Send + Sync;

impl Observer {
    /// An observer that calls `f` with every event (from any thread).
    pub fn new(f: impl Fn(&Event) + Send + Sync + 'static) -> Observer {
        Observer(Some(Arc::new(f)))
    }

    /// Nobody listens.
    pub fn none() -> Observer {
        Observer(None)
    }

    /// Does anybody listen?
    pub fn is_listening(&self) -> bool {
        self.0.is_some()
    }

    /// Reports an event built only when somebody listens.
    pub(crate) fn notify(&self, event: impl FnOnce() -> Event) {
        if let Some(f) = &self.0 {
            f(&event());
        }
    }
}

impl PartialEq for Observer {
    fn eq(&self, _: &Observer) -> bool {
        true
    }
}

impl fmt::Debug for Observer {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(if self.0.is_some() {
            "Observer(listening)"
        } else {
            "Observer(none)"
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Mutex;

    #[test]
    fn events_read_as_progress_lines() {
        let e = Event::Epoch {
            fold: Some(2),
            restart: 1,
            epoch: 50,
            epochs: 500,
            training_loss: 0.25,
            validation_loss: Some(0.5),
        };
        assert_eq!(
            e.to_string(),
            "fold 3: restart 2: epoch 50/500: training loss 0.250000, validation loss 0.500000"
        );
        let e = Event::FoldFinished {
            fold: 3,
            folds: 5,
            finished: 2,
        };
        assert_eq!(e.to_string(), "fold 4 finished (2 of 5 done)");
    }

    #[test]
    fn events_are_built_only_for_a_listener() {
        let seen = std::sync::Arc::new(Mutex::new(Vec::new()));
        let s = seen.clone();
        let obs = Observer::new(move |e| s.lock().unwrap().push(e.to_string()));
        obs.notify(|| Event::TrialFinished {
            trial: 0,
            trials: 2,
            finished: 1,
        });
        assert_eq!(*seen.lock().unwrap(), ["trial 1 finished (1 of 2 done)"]);
        Observer::none().notify(|| panic!("built an event nobody hears"));
        assert_eq!(Observer::none(), obs);
    }
}
