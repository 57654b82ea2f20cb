//! One call from a CSV file to a fitted, validated network and its report:
//! [`fit_csv`]. The result displays in a notebook as one HTML output with
//! the tables and the charts embedded (evcxr shows only the last output of
//! each kind per cell, so a combined report must be a single block).

use crate::chart::Chart;
use crate::data::{CsvOptions, Dataset};
use crate::error::Result;
use crate::fit::{fit_with_seed, FitOptions, Fitted};
use crate::notebook::{notes, show};
use crate::validate::Scores;
use std::path::Path;

/// A fit with its table, validation scores and charts.
#[derive(Clone, Debug)]
pub struct Analysis {
    /// The table as read (all rows).
    pub data: Dataset,
    /// The fitted model, its training report and its split.
    pub fitted: Fitted,
    /// Scores on the validation rows (none when `validation_fraction` is 0).
    pub validation: Option<Scores>,
    /// Learning curves of every restart.
    pub learning_curves: Chart,
    /// A decision map over the first two numeric columns (classifiers with
    /// at least two numeric columns).
    pub decision_map: Option<Chart>,
    /// The seed given.
    pub seed: u64,
}

/// Reads `path`, predicts `target` (dropping the columns in `drop`), fits
/// with `options` from `seed`, and scores the validation rows.
///
/// # Errors
/// Any reading, option or training error, naming where.
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// let path = concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv");
/// let analysis = fit_csv(path, "verdict", &["part_id"], &FitOptions::default().hidden(&[6]).epochs(50), 42)?;
/// assert!(analysis.to_html().contains("<svg"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn fit_csv(
    path: impl AsRef<Path>,
    target: &str,
    drop: &[&str],
    options: &FitOptions,
    seed: u64,
) -> Result<Analysis> {
    let data = CsvOptions::new(target).drop(drop).read(path)?;
    analyse(data, options, seed)
}

fn analyse(data: Dataset, options: &FitOptions, seed: u64) -> Result<Analysis> {
    let fitted = fit_with_seed(&data, options, seed)?;
    let split = fitted.split();
    let validation = if split.validation.is_empty() {
        None
    } else {
        Some(Scores::of(fitted.model(), &data.select(&split.validation))?.0)
    };
    let learning_curves = fitted.learning_curves_chart()?;
    let filled = fitted.model().filled(&data)?;
    let decision_map = match (
        fitted.model().is_classifier(),
        crate::chart::decision_features(&filled),
    ) {
        (true, Some((x, y))) => {
            let train = filled.select(&split.train);
            Some(fitted.model().decision_map_chart(&train, &x, &y)?)
        }
        _ => None,
    };
    Ok(Analysis {
        data,
        fitted,
        validation,
        learning_curves,
        decision_map,
        seed,
    })
}

impl Analysis {
    /// The whole report as one HTML fragment with the charts inline: the
    /// same sections as `stratanet fit --report` (the table, training,
    /// validation scores with baselines, what the model learned).
    pub fn to_html(&self) -> String {
        let mut page = super::page::Page::new("Analysis");
        let built = super::sections::table_section(&mut page, &self.data).and_then(|()| {
            super::sections::fit_sections(&mut page, &self.data, &self.fitted, None)
        });
        let mut h = match built {
            Ok(()) => page.fragment(),
            Err(e) => format!("<p>{}</p>", crate::notebook::escape(&e.to_string())),
        };
        h.push_str(&notes(&[format!(
            "Seed {}: a rerun gives the same numbers and charts.",
            self.seed
        )]));
        h
    }

    /// Shows the report in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}
