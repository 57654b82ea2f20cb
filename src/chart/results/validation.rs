//! Charts of the honest-numbers results: permutation importance, nested
//! cross-validation and the reliability of out-of-fold probabilities, as
//! methods on the results themselves.

use super::{configuration_name, framed};
use crate::chart::draw::render;
use crate::chart::importance::{self, FeatureImportance};
use crate::chart::nested::{self, NestedOutcome, OuterFold};
use crate::chart::reliability::{self, ReliabilityBin};
use crate::chart::{group_digits, Chart, ChartOptions};
use crate::data::{Dataset, ScoredRows};
use crate::error::{Error, Result};
use crate::validate::importance::PermutationImportance;
use crate::validate::metrics::{Binning, Forecast, Reliability};
use crate::validate::nested::NestedCrossValidation;
use crate::validate::CrossValidation;

impl PermutationImportance {
    /// Every input column's drop in the metric when it is shuffled on each
    /// fold's held-out rows, largest first, with its 95% interval across
    /// folds; columns whose interval holds zero in grey.
    ///
    /// # Errors
    /// No column with a finite mean drop.
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// use stratanet::validate::importance::ImportanceOptions;
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let cv = cross_validate(&data, &FitOptions::default().hidden(&[4]).epochs(20),
    ///     &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
    /// let importance = cv.permutation_importance(&data, &ImportanceOptions::default(), &mut seeded_rng(2))?;
    /// assert!(importance.chart()?.as_svg().contains("out-of-fold rows"));
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn chart(&self) -> Result<Chart> {
        self.chart_with(&ChartOptions::default())
    }

    /// [`PermutationImportance::chart`] with options.
    ///
    /// # Errors
    /// As [`PermutationImportance::chart`].
    pub fn chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let columns: Vec<FeatureImportance> = self
            .columns
            .iter()
            .map(|c| FeatureImportance {
                name: c.column.clone(),
                mean_drop: c.summary.mean,
                interval: (c.summary.ci_low, c.summary.ci_high),
            })
            .collect();
        let options = with_rows(options, ScoredRows::OutOfFold);
        let figure = importance::prepare(&columns, self.metric.name(), &options)?;
        let line = format!(
            "{}: {} folds of about {} rows each, every column shuffled {} time{} per fold; interval: 95% across folds",
            options.rows.as_deref().unwrap_or("out-of-fold rows"),
            self.folds,
            group_digits(self.rows_per_fold.round() as usize),
            self.shuffles,
            if self.shuffles == 1 { "" } else { "s" }
        );
        let title = format!(
            "Permutation importance: drop in {}",
            self.metric.name().replace('_', " ")
        );
        render(&framed(figure, &options, title, vec![line]), &options)
    }
}

impl NestedCrossValidation {
    /// Each outer fold's score of the tuned procedure (sweep on the outer
    /// training rows, refit the winner), marked by the configuration that
    /// won there, and their mean with its 95% interval.
    ///
    /// # Errors
    /// No outer fold with a finite score.
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// use stratanet::validate::{nested_cross_validate, Grid};
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let grid = Grid { hidden_layers: vec![vec![2], vec![6]], ..Grid::default() };
    /// let small = CvOptions { folds: 3, ..Default::default() };
    /// let nested = nested_cross_validate(&data, &FitOptions::default().epochs(20),
    ///     &grid.into(), &small, &small, Metric::Accuracy, &mut seeded_rng(1))?;
    /// assert!(nested.chart()?.as_svg().contains("outer-fold rows"));
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn chart(&self) -> Result<Chart> {
        self.chart_with(&ChartOptions::default())
    }

    /// [`NestedCrossValidation::chart`] with options.
    ///
    /// # Errors
    /// As [`NestedCrossValidation::chart`].
    pub fn chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let scores = self.outer.metric(self.metric)?;
        let folds = self
            .choices
            .iter()
            .map(|c| {
                let score = scores.values.get(c.fold).copied().ok_or_else(|| {
                    Error::input(
                        "nested cross-validation chart",
                        format!("outer fold {} has no score", c.fold + 1),
                    )
                })?;
                Ok(OuterFold {
                    score,
                    winner: c.configuration.clone(),
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let outcome = NestedOutcome {
            folds,
            metric: self.metric.name().to_string(),
            higher_is_better: self.metric.higher_is_better(),
            summary: Some((
                scores.summary.mean,
                (scores.summary.ci_low, scores.summary.ci_high),
            )),
        };
        let options = with_rows(options, self.scored_rows());
        let figure = nested::prepare(&outcome, &options)?;
        let (_, held) = self.outer.mean_rows();
        let line = format!(
            "{}: {}-fold outer cross-validation{} of {} rows (about {} held out per fold); inside each, a sweep of {} configurations",
            options.rows.as_deref().unwrap_or("outer-fold rows"),
            self.outer.cv.folds,
            if self.outer.cv.repeats > 1 {
                format!(" repeated {} times", self.outer.cv.repeats)
            } else {
                String::new()
            },
            group_digits(self.outer.n_rows),
            group_digits(held.round() as usize),
            self.configurations
        );
        let title = format!(
            "Nested cross-validation: {} of the tuned procedure",
            self.metric.name().replace('_', " ")
        );
        render(&framed(figure, &options, title, vec![line]), &options)
    }
}

impl Reliability {
    /// The reliability diagram of these bins: observed share against mean
    /// predicted value with 95% Wilson intervals, the diagonal, and the
    /// bins' row counts below. `event` names the predicted value in the
    /// axis label ("P(scrap)"); the options' `rows` name the rows.
    ///
    /// # Errors
    /// No bin holds rows.
    pub fn chart_with(&self, event: &str, options: &ChartOptions) -> Result<Chart> {
        let bins: Vec<ReliabilityBin> = self
            .bins
            .iter()
            .map(|b| ReliabilityBin {
                mean_predicted: b.mean_predicted,
                observed: b.observed,
                count: b.rows,
            })
            .collect();
        let mut options = options.clone();
        if options.y_label.is_none() {
            options.y_label = Some(self.forecast.describe().1.to_string());
        }
        let mut figure = reliability::prepare(&bins, event, &options)?;
        // One line says it all, with the library's own calibration errors.
        if options.subtitle.is_none() {
            figure.frame.subtitle.clear();
        }
        let binning = match self.binning {
            Binning::EqualCount(b) => format!("{b} bins of equal row counts"),
            Binning::EqualWidth(b) => format!("{b} bins of equal width"),
        };
        let rows = match &options.rows {
            Some(r) => format!("{r}: {} rows", group_digits(self.rows)),
            None => format!("{} rows", group_digits(self.rows)),
        };
        let line = format!(
            "{rows} in {binning}; expected calibration error {:.3} (largest in a bin {:.3})",
            self.expected_error, self.maximum_error
        );
        let title = super::title_on_rows("Reliability", &options);
        render(&framed(figure, &options, title, vec![line]), &options)
    }
}

impl CrossValidation {
    /// The reliability diagram of the pooled out-of-fold probabilities
    /// ([`CrossValidation::reliability`]): each row predicted by the fold
    /// model that never saw it (first repeat). With two classes it shows
    /// the probability of the second class; with more, the confidence in
    /// the most probable class against how often it is right.
    ///
    /// # Errors
    /// As [`CrossValidation::reliability`]: a regression, or a table other
    /// than the one cross-validated.
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// use stratanet::validate::metrics::Binning;
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let cv = cross_validate(&data, &FitOptions::default().hidden(&[4]).epochs(20),
    ///     &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
    /// let chart = cv.reliability_chart(&data, Binning::EqualCount(10))?;
    /// assert!(chart.as_svg().contains("out-of-fold rows"));
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn reliability_chart(&self, data: &Dataset, binning: Binning) -> Result<Chart> {
        self.reliability_chart_with(data, binning, &ChartOptions::default())
    }

    /// [`CrossValidation::reliability_chart`] with options.
    ///
    /// # Errors
    /// As [`CrossValidation::reliability_chart`].
    pub fn reliability_chart_with(
        &self,
        data: &Dataset,
        binning: Binning,
        options: &ChartOptions,
    ) -> Result<Chart> {
        let reliability = self.reliability(data, binning)?;
        let event = match (&reliability.forecast, data.class_names()) {
            (Forecast::SecondClass, Some(names)) if names.len() == 2 => {
                format!("P({})", names[1])
            }
            (Forecast::SecondClass, _) => "P(second class)".to_string(),
            (Forecast::TopClass, _) => "confidence".to_string(),
        };
        let mut options = with_rows(options, self.scored_rows());
        if options.title.is_none() {
            options.title = Some(format!(
                "Reliability of {} on the out-of-fold rows",
                configuration_name(&self.options)
            ));
        }
        reliability.chart_with(&event, &options)
    }
}

/// The options with `rows` named, unless they name their own.
fn with_rows(options: &ChartOptions, rows: ScoredRows) -> ChartOptions {
    if options.rows.is_some() {
        options.clone()
    } else {
        options.clone().scored(rows)
    }
}
