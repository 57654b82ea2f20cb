//! [`ScoredRows`]: which rows a score comes from, so that every number
//! shown says how far it can be trusted.

use std::fmt;

/// Which rows a score was computed on. Every score stratanet shows (text,
/// JSON, notebook tables, chart titles) names one of these.
///
/// From the most optimistic to the most honest for new rows:
///
/// ```text
/// training      the rows the network learnt from
/// in-sample     a whole table the model was fitted on (its training and validation rows)
/// validation    rows held out of training that still chose things: the stopping
///               epoch, the restart kept, a temperature or threshold; mildly optimistic
/// out-of-fold   cross-validation: each row scored by the fold model that never saw it
/// outer-fold    nested cross-validation: rows no fit and no choice of configuration saw
/// hold-out      a test set kept apart from every choice, with how often it was scored
/// new           rows of a table other than the one the model was fitted on
/// ```
///
/// (Common practice, no source; the optimism of reusing rows that made a
/// choice is shown for sweeps by Cawley & Talbot, JMLR 11, 2010.)
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ScoredRows {
    /// The rows the network learnt from.
    Training,
    /// A whole table the model was fitted on.
    InSample,
    /// Validation rows: held out of training but used for choices.
    Validation,
    /// Cross-validation's held-out rows, each scored by a model that never saw it.
    OutOfFold,
    /// Nested cross-validation's outer held-out rows.
    OuterFold,
    /// A kept-apart test set, scored for the `uses`-th time.
    HoldOut {
        /// How many times the set has been scored, this time included.
        uses: usize,
    },
    /// Rows of another table than the one the model was fitted on.
    New,
}

impl ScoredRows {
    /// A short name for tables and JSON: `training`, `in-sample`,
    /// `validation`, `out-of-fold`, `outer-fold`, `hold-out`, `new`.
    pub fn name(self) -> &'static str {
        match self {
            ScoredRows::Training => "training",
            ScoredRows::InSample => "in-sample",
            ScoredRows::Validation => "validation",
            ScoredRows::OutOfFold => "out-of-fold",
            ScoredRows::OuterFold => "outer-fold",
            ScoredRows::HoldOut { .. } => "hold-out",
            ScoredRows::New => "new",
        }
    }

    /// What the rows are and how far their score can be trusted, in words.
    pub fn explain(self) -> String {
        match self {
            ScoredRows::Training => {
                "training rows: the network learnt from them, so their score is optimistic".into()
            }
            ScoredRows::InSample => {
                "in-sample rows: the model was fitted on this table, so the score is optimistic; score new rows or cross-validate".into()
            }
            ScoredRows::Validation => {
                "validation rows: held out of training, but they chose the stopping epoch and the network kept, so the score is mildly optimistic".into()
            }
            ScoredRows::OutOfFold => {
                "out-of-fold rows: each row scored by a fold model that never saw it".into()
            }
            ScoredRows::OuterFold => {
                "outer-fold rows: no fit and no choice of configuration saw them".into()
            }
            ScoredRows::HoldOut { uses: 1 } => {
                "hold-out rows, scored for the first time: an honest final estimate".into()
            }
            ScoredRows::HoldOut { uses } => format!(
                "hold-out rows, scored {uses} times: if an earlier score steered a choice, this one is optimistic"
            ),
            ScoredRows::New => {
                "new rows: a table other than the one the model was fitted on".into()
            }
        }
    }

    /// A label for chart titles and table headers: the name, with the use
    /// count for a hold-out set (`hold-out, use 2`).
    pub fn label(self) -> String {
        match self {
            ScoredRows::HoldOut { uses } => format!("hold-out rows, use {uses}"),
            other => format!("{} rows", other.name()),
        }
    }
}

impl fmt::Display for ScoredRows {
    /// The [`label`](ScoredRows::label).
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.label())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_has_a_distinct_name_and_an_explanation() {
        let all = [
            ScoredRows::Training,
            ScoredRows::InSample,
            ScoredRows::Validation,
            ScoredRows::OutOfFold,
            ScoredRows::OuterFold,
            ScoredRows::HoldOut { uses: 3 },
            ScoredRows::New,
        ];
        for (i, a) in all.iter().enumerate() {
            assert!(all[..i].iter().all(|b| b.name() != a.name()));
            assert!(a.explain().contains("rows"), "{a:?}");
        }
        assert_eq!(
            ScoredRows::HoldOut { uses: 2 }.to_string(),
            "hold-out rows, use 2"
        );
        assert!(ScoredRows::HoldOut { uses: 2 }
            .explain()
            .contains("2 times"));
        assert_eq!(ScoredRows::OutOfFold.to_string(), "out-of-fold rows");
    }
}
