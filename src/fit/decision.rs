//! From probabilities to a decision: the most probable class, the decision
//! with the least expected cost under a cost matrix, or, for two classes, a
//! threshold chosen for a target recall or precision.
//!
//! # Costs
//!
//! C. Elkan, "The foundations of cost-sensitive learning", IJCAI 2001,
//! section 2. A cost matrix gives `C[d][c]`, the cost of taking decision `d`
//! when the true class is `c` (a negative cost is a benefit). For a row with
//! class probabilities `p`, the expected cost of each decision and the one
//! taken are
//!
//! ```text
//! cost(d) = sum_c p[c] C[d][c]
//! decision = argmin_d cost(d)        (ties: the decision listed first)
//! ```
//!
//! The decisions need not be the classes ("hold for a second check" can be
//! a decision with no class of its own). With the zero-one matrix
//! (`C[d][c] = 0` if `d = c`, else 1), `cost(d) = 1 - p[d]` and the decision
//! is the most probable class. These decisions are only as good as the
//! probabilities: look at their calibration first.
//!
//! # Thresholds
//!
//! For two classes, deciding "positive" when `p(positive) >= t` trades
//! recall against precision. [`choose_threshold`] picks `t` among the
//! distinct scores of the rows it is given (the validation rows, when a fit
//! chooses it):
//!
//! ```text
//! target recall r      the largest t with recall(t) >= r   (the fewest rows called positive)
//! target precision q   the smallest t with precision(t) >= q (the most positives found)
//! recall(t) = TP / (TP + FN),   precision(t) = TP / (TP + FP),   counted on those rows
//! ```
//!
//! A threshold chosen on few rows is itself uncertain: cross-validation
//! reports the recall and precision it reaches on held-out rows.

use crate::error::{Error, Result};
use ndarray::{Array2, ArrayView2};
use std::fmt;
use std::path::Path;

/// The most decisions or classes a cost matrix may hold.
pub const MAX_COST_ENTRIES: usize = 256;

/// What each decision costs under each true class (see the [module docs](self)).
#[derive(Clone, Debug, PartialEq)]
pub struct CostMatrix {
    decisions: Vec<String>,
    classes: Vec<String>,
    /// `costs[d][c]`: decision `d` when the truth is class `c`.
    costs: Vec<Vec<f64>>,
}

impl CostMatrix {
    /// A cost matrix from decision names, class names and `costs[d][c]`.
    ///
    /// # Errors
    /// No decision, fewer than 2 classes, a repeated or empty name, a row of
    /// the wrong length, or a cost that is not a finite number.
    pub fn new(
        decisions: Vec<String>,
        classes: Vec<String>,
        costs: Vec<Vec<f64>>,
    ) -> Result<CostMatrix> {
        const WHAT: &str = "cost matrix";
        if decisions.is_empty() || decisions.len() > MAX_COST_ENTRIES {
            return Err(Error::input(
                WHAT,
                format!("needs 1 to {MAX_COST_ENTRIES} decisions (rows)"),
            ));
        }
        if classes.len() < 2 || classes.len() > MAX_COST_ENTRIES {
            return Err(Error::input(
                WHAT,
                format!("needs 2 to {MAX_COST_ENTRIES} classes (columns)"),
            ));
        }
        for (side, names) in [("decision", &decisions), ("class", &classes)] {
            for (i, name) in names.iter().enumerate() {
                if name.trim().is_empty() {
                    return Err(Error::input(
                        WHAT,
                        format!("{side} {} has an empty name", i + 1),
                    ));
                }
                if names[..i].contains(name) {
                    return Err(Error::input(
                        WHAT,
                        format!("the {side} \"{name}\" is listed twice"),
                    ));
                }
            }
        }
        if costs.len() != decisions.len() {
            return Err(Error::input(
                WHAT,
                format!(
                    "has {} decisions but {} rows of costs",
                    decisions.len(),
                    costs.len()
                ),
            ));
        }
        for (d, row) in costs.iter().enumerate() {
            if row.len() != classes.len() {
                return Err(Error::input(
                    WHAT,
                    format!(
                        "the row of decision \"{}\" has {} costs for {} classes",
                        decisions[d],
                        row.len(),
                        classes.len()
                    ),
                ));
            }
            if let Some(c) = row.iter().position(|v| !v.is_finite()) {
                return Err(Error::input(
                    WHAT,
                    format!(
                        "the cost of \"{}\" when the truth is \"{}\" is not a finite number",
                        decisions[d], classes[c]
                    ),
                ));
            }
        }
        Ok(CostMatrix {
            decisions,
            classes,
            costs,
        })
    }

    /// The zero-one matrix over `classes`: every wrong class costs 1, the
    /// right one 0 (its decisions are the most probable classes).
    ///
    /// # Errors
    /// As [`CostMatrix::new`].
    pub fn zero_one(classes: &[String]) -> Result<CostMatrix> {
        let costs = (0..classes.len())
            .map(|d| {
                (0..classes.len())
                    .map(|c| f64::from(u8::from(c != d)))
                    .collect()
            })
            .collect();
        CostMatrix::new(classes.to_vec(), classes.to_vec(), costs)
    }

    /// Reads a cost matrix from CSV text: a header naming the true classes
    /// after one first cell (any label), then one row per decision, its name
    /// first and then one cost per class:
    ///
    /// ```text
    /// decision,accept,rework,scrap
    /// accept,0,40,300
    /// rework,15,10,120
    /// scrap,60,50,20
    /// ```
    ///
    /// # Errors
    /// A malformed line (named with its line number) or what
    /// [`CostMatrix::new`] refuses; `source` names the file in messages.
    pub fn from_csv_str(text: &str, source: &str) -> Result<CostMatrix> {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .trim(csv::Trim::All)
            .from_reader(text.as_bytes());
        let mut records = Vec::new();
        for (i, record) in reader.records().enumerate() {
            let record = record.map_err(|e| {
                Error::input(
                    format!("{source}: line {}", i + 1),
                    format!("is not CSV: {e}"),
                )
            })?;
            if record.iter().all(str::is_empty) {
                continue;
            }
            if records.len() > MAX_COST_ENTRIES {
                return Err(Error::input(
                    source,
                    format!("holds more than {MAX_COST_ENTRIES} decisions"),
                ));
            }
            let line = record.position().map_or(i as u64 + 1, |p| p.line());
            records.push((line, record.iter().map(str::to_string).collect::<Vec<_>>()));
        }
        let Some((_, header)) = records.first() else {
            return Err(Error::input(
                source,
                "is empty; write a header (a label, then the classes) and one row per decision",
            ));
        };
        let classes: Vec<String> = header[1..].to_vec();
        let mut decisions = Vec::new();
        let mut costs = Vec::new();
        for (line, record) in &records[1..] {
            let at = |column: usize| format!("{source}: line {line}, column {column}");
            if record.len() != header.len() {
                return Err(Error::input(
                    format!("{source}: line {line}"),
                    format!(
                        "has {} cells but the header has {}; give the decision's name and one cost per class",
                        record.len(),
                        header.len()
                    ),
                ));
            }
            decisions.push(record[0].clone());
            let row = record[1..]
                .iter()
                .enumerate()
                .map(|(j, cell)| {
                    cell.parse::<f64>()
                        .ok()
                        .filter(|v| v.is_finite())
                        .ok_or_else(|| {
                            Error::input(
                                at(j + 2),
                                format!(
                                    "\"{cell}\" is not a number; write each cost as a plain number"
                                ),
                            )
                        })
                })
                .collect::<Result<Vec<f64>>>()?;
            costs.push(row);
        }
        CostMatrix::new(decisions, classes, costs).map_err(|e| e.context(source.to_string()))
    }

    /// Reads a cost matrix file (see [`CostMatrix::from_csv_str`]).
    ///
    /// # Errors
    /// The file cannot be read (or is larger than 1 MiB), or its content is refused.
    pub fn read(path: impl AsRef<Path>) -> Result<CostMatrix> {
        let path = path.as_ref();
        let source = path.display().to_string();
        let size = std::fs::metadata(path)
            .map_err(|e| Error::io(path, "reading", e))?
            .len();
        if size > 1 << 20 {
            return Err(Error::input(
                &source,
                "is larger than 1 MiB; a cost matrix is a few lines",
            ));
        }
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
        CostMatrix::from_csv_str(&text, &source)
    }

    /// The decisions, in the order given.
    pub fn decisions(&self) -> &[String] {
        &self.decisions
    }

    /// The true classes, in the order of the cost columns.
    pub fn classes(&self) -> &[String] {
        &self.classes
    }

    /// `costs()[d][c]`: decision `d` when the truth is class `c`.
    pub fn costs(&self) -> &[Vec<f64>] {
        &self.costs
    }

    /// The same matrix with its columns in the order of `classes` (a
    /// model's), so that column `c` is class `c`.
    ///
    /// # Errors
    /// A class of the model missing from the matrix, or a class in the
    /// matrix the model does not know.
    pub fn for_classes(&self, classes: &[String]) -> Result<CostMatrix> {
        let missing: Vec<&str> = classes
            .iter()
            .filter(|c| !self.classes.contains(c))
            .map(String::as_str)
            .collect();
        let extra: Vec<&str> = self
            .classes
            .iter()
            .filter(|c| !classes.contains(c))
            .map(String::as_str)
            .collect();
        if !missing.is_empty() || !extra.is_empty() {
            return Err(Error::input(
                "cost matrix",
                format!(
                    "its classes do not match the model's (missing: [{}]; unknown: [{}]); the header must name each of: {}",
                    missing.join(", "),
                    extra.join(", "),
                    classes.join(", ")
                ),
            ));
        }
        let order: Vec<usize> = classes
            .iter()
            .map(|c| {
                self.classes
                    .iter()
                    .position(|k| k == c)
                    .expect("checked above")
            })
            .collect();
        CostMatrix::new(
            self.decisions.clone(),
            classes.to_vec(),
            self.costs
                .iter()
                .map(|row| order.iter().map(|&j| row[j]).collect())
                .collect(),
        )
    }

    /// Does every cost lie at or above 0?
    pub fn is_non_negative(&self) -> bool {
        self.costs.iter().flatten().all(|&v| v >= 0.0)
    }

    /// The expected cost of each decision for each row (rows x decisions;
    /// module docs). Probability columns are the matrix's classes in order.
    ///
    /// # Errors
    /// A probability table whose width is not the number of classes.
    pub fn expected_costs(&self, probabilities: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        if probabilities.ncols() != self.classes.len() {
            return Err(Error::shape(
                "class probabilities for a cost matrix",
                (probabilities.nrows(), self.classes.len()),
                probabilities.dim(),
            ));
        }
        Ok(Array2::from_shape_fn(
            (probabilities.nrows(), self.decisions.len()),
            |(s, d)| {
                probabilities
                    .row(s)
                    .iter()
                    .zip(&self.costs[d])
                    .map(|(p, c)| p * c)
                    .sum()
            },
        ))
    }

    /// The decision with the least expected cost for each row (ties: the
    /// decision listed first).
    ///
    /// # Errors
    /// As [`CostMatrix::expected_costs`].
    pub fn decide(&self, probabilities: ArrayView2<'_, f64>) -> Result<Vec<usize>> {
        let costs = self.expected_costs(probabilities)?;
        Ok(costs
            .outer_iter()
            .map(|row| {
                let mut best = 0;
                for (d, &v) in row.iter().enumerate() {
                    if v < row[best] {
                        best = d;
                    }
                }
                best
            })
            .collect())
    }

    /// The mean cost per row of `decisions` against the true classes.
    ///
    /// # Errors
    /// Lists of different lengths, no rows, or an index out of range.
    pub fn mean_cost(&self, decisions: &[usize], truth: &[usize]) -> Result<f64> {
        if decisions.len() != truth.len() || truth.is_empty() {
            return Err(Error::input(
                "cost per row",
                format!(
                    "{} decisions for {} true classes; give one of each per row, at least one",
                    decisions.len(),
                    truth.len()
                ),
            ));
        }
        let mut total = 0.0;
        for (&d, &c) in decisions.iter().zip(truth) {
            let cost = self
                .costs
                .get(d)
                .and_then(|row| row.get(c))
                .ok_or_else(|| {
                    Error::input(
                        "cost per row",
                        format!("decision {d} or class {c} is not in the matrix"),
                    )
                })?;
            total += cost;
        }
        Ok(total / truth.len() as f64)
    }
}

impl fmt::Display for CostMatrix {
    /// The matrix as the CSV text [`CostMatrix::from_csv_str`] reads.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "decision,{}", self.classes.join(","))?;
        for (d, row) in self.costs.iter().enumerate() {
            let cells: Vec<String> = row.iter().map(|v| v.to_string()).collect();
            writeln!(f, "{},{}", self.decisions[d], cells.join(","))?;
        }
        Ok(())
    }
}

/// What a threshold is chosen for.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ThresholdTarget {
    /// At least this share of the positive rows found.
    Recall(f64),
    /// At least this share of the rows called positive truly positive.
    Precision(f64),
}

impl ThresholdTarget {
    /// Checks the share.
    ///
    /// # Errors
    /// A share outside (0, 1].
    pub fn validate(self) -> Result<()> {
        let (name, v) = match self {
            ThresholdTarget::Recall(v) => ("target_recall", v),
            ThresholdTarget::Precision(v) => ("target_precision", v),
        };
        if !(v > 0.0 && v <= 1.0) {
            return Err(Error::option(
                name,
                v,
                "must be a share above 0 and at most 1, for example 0.95",
            ));
        }
        Ok(())
    }
}

impl fmt::Display for ThresholdTarget {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ThresholdTarget::Recall(v) => write!(f, "recall >= {v}"),
            ThresholdTarget::Precision(v) => write!(f, "precision >= {v}"),
        }
    }
}

/// A threshold chosen for a target, and what it reached on the rows it was
/// chosen on.
#[derive(Clone, Debug, PartialEq)]
pub struct ChosenThreshold {
    /// The target.
    pub target: ThresholdTarget,
    /// Decide "positive" when the positive class's probability is at least this.
    pub threshold: f64,
    /// Recall on the rows it was chosen on.
    pub recall: f64,
    /// Precision on the rows it was chosen on.
    pub precision: f64,
    /// Rows it was chosen on.
    pub rows: usize,
    /// Positive rows among them.
    pub positives: usize,
}

/// Chooses a threshold on `scores` (the positive class's probabilities)
/// for `target` (see the [module docs](self)).
///
/// # Errors
/// Lists of different lengths, no positive row, a non-finite score, or a
/// precision no threshold reaches on these rows (the best is named).
///
/// # Example
/// ```
/// use stratanet::fit::{choose_threshold, ThresholdTarget};
/// let scores = [0.9, 0.8, 0.7, 0.6, 0.4, 0.3, 0.2, 0.1];
/// let labels = [true, true, false, true, false, true, false, false];
/// // 3 of the 4 positives lie at or above 0.6.
/// let t = choose_threshold(&scores, &labels, ThresholdTarget::Recall(0.75))?;
/// assert_eq!((t.threshold, t.recall, t.precision), (0.6, 0.75, 0.75));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn choose_threshold(
    scores: &[f64],
    labels: &[bool],
    target: ThresholdTarget,
) -> Result<ChosenThreshold> {
    const WHAT: &str = "choosing a threshold";
    target.validate()?;
    if scores.len() != labels.len() {
        return Err(Error::input(
            WHAT,
            format!("{} scores for {} labels", scores.len(), labels.len()),
        ));
    }
    if scores.iter().any(|v| !v.is_finite()) {
        return Err(Error::input(WHAT, "a score is not a finite number"));
    }
    let positives = labels.iter().filter(|&&l| l).count();
    if positives == 0 {
        return Err(Error::input(
            WHAT,
            format!("the {} rows hold no positive row, so recall and precision are undefined; use more validation rows", labels.len()),
        ));
    }
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_by(|&i, &j| scores[j].total_cmp(&scores[i]));
    // Sweep thresholds from the highest score down; at each distinct score
    // t, rows with score >= t are called positive.
    let mut candidates = Vec::new();
    let (mut tp, mut called) = (0usize, 0usize);
    let mut i = 0;
    while i < order.len() {
        let t = scores[order[i]];
        while i < order.len() && scores[order[i]] == t {
            called += 1;
            tp += usize::from(labels[order[i]]);
            i += 1;
        }
        candidates.push((t, tp as f64 / positives as f64, tp as f64 / called as f64));
    }
    let chosen = match target {
        ThresholdTarget::Recall(r) => candidates.iter().find(|c| c.1 >= r),
        ThresholdTarget::Precision(q) => candidates.iter().rev().find(|c| c.2 >= q),
    };
    let Some(&(threshold, recall, precision)) = chosen else {
        let best = candidates.iter().map(|c| c.2).fold(0.0, f64::max);
        return Err(Error::input(
            WHAT,
            format!(
                "no threshold reaches {target} on these {} rows (the highest precision is {best:.4}); lower the target or use more rows",
                labels.len()
            ),
        ));
    };
    Ok(ChosenThreshold {
        target,
        threshold,
        recall,
        precision,
        rows: labels.len(),
        positives,
    })
}

/// How a model turns its probabilities into decisions (kept in the model
/// file and applied by [`Model::decide`](super::Model::decide)).
#[derive(Clone, Debug, PartialEq)]
pub enum DecisionRule {
    /// The decision with the least expected cost (Elkan 2001); the matrix's
    /// columns are the model's classes in order.
    Costs(CostMatrix),
    /// Two classes: decide `positive` when its probability is at least the
    /// threshold, chosen on the fit's validation rows.
    Threshold {
        /// The positive class (index into the model's classes).
        positive: usize,
        /// The threshold and what it reached on the validation rows.
        chosen: ChosenThreshold,
    },
}

/// The decisions a model takes for some rows.
#[derive(Clone, Debug, PartialEq)]
pub struct Decisions {
    /// The decisions' names (a cost matrix's decisions, or the classes).
    pub names: Vec<String>,
    /// Each row's decision (index into `names`).
    pub chosen: Vec<usize>,
    /// Each row's expected cost of its decision (cost matrices only).
    pub expected_cost: Option<Vec<f64>>,
}

impl DecisionRule {
    /// The decisions for rows with class probabilities `p` (one column per
    /// class, the model's order); `classes` names them.
    ///
    /// # Errors
    /// A probability table of the wrong width.
    pub fn decide(&self, p: ArrayView2<'_, f64>, classes: &[String]) -> Result<Decisions> {
        match self {
            DecisionRule::Costs(m) => {
                let costs = m.expected_costs(p)?;
                let chosen = m.decide(p)?;
                let expected = chosen
                    .iter()
                    .enumerate()
                    .map(|(row, &d)| costs[[row, d]])
                    .collect();
                Ok(Decisions {
                    names: m.decisions().to_vec(),
                    chosen,
                    expected_cost: Some(expected),
                })
            }
            DecisionRule::Threshold { positive, chosen } => {
                if p.ncols() != 2 || *positive > 1 {
                    return Err(Error::shape(
                        "probabilities for a threshold",
                        (p.nrows(), 2),
                        p.dim(),
                    ));
                }
                let negative = 1 - positive;
                Ok(Decisions {
                    names: classes.to_vec(),
                    chosen: p
                        .rows()
                        .into_iter()
                        .map(|r| {
                            if r[*positive] >= chosen.threshold {
                                *positive
                            } else {
                                negative
                            }
                        })
                        .collect(),
                    expected_cost: None,
                })
            }
        }
    }
}

impl DecisionRule {
    /// The rule in words, naming the positive class from `classes`.
    pub fn describe(&self, classes: &[String]) -> String {
        match self {
            DecisionRule::Threshold { positive, .. } => {
                let name = classes.get(*positive).map_or("?", String::as_str);
                self.to_string()
                    .replacen("the positive class", &format!("\"{name}\""), 1)
            }
            DecisionRule::Costs(_) => self.to_string(),
        }
    }
}

impl fmt::Display for DecisionRule {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DecisionRule::Costs(m) => write!(
                f,
                "the least expected cost over {} decisions ({})",
                m.decisions().len(),
                m.decisions().join(", ")
            ),
            DecisionRule::Threshold { chosen, .. } => write!(
                f,
                "a threshold: the positive class when its probability is at least {:.6}, else the other (chosen for {} on {} validation rows: recall {:.4}, precision {:.4})",
                chosen.threshold, chosen.target, chosen.rows, chosen.recall, chosen.precision
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    /// Worked here by hand from Elkan's (2001) rule. Row p = (0.7, 0.2, 0.1)
    /// over accept, rework, scrap with the matrix below:
    /// accept 0.7 x 0 + 0.2 x 40 + 0.1 x 300 = 38;
    /// rework 0.7 x 15 + 0.2 x 10 + 0.1 x 120 = 24.5;
    /// scrap  0.7 x 60 + 0.2 x 50 + 0.1 x 20 = 54;
    /// so "rework" (24.5), although "accept" is the most probable class.
    #[test]
    fn a_hand_computed_expected_cost() {
        let m = CostMatrix::from_csv_str(
            "decision,accept,rework,scrap\naccept,0,40,300\nrework,15,10,120\nscrap,60,50,20\n",
            "costs.csv",
        )
        .unwrap();
        let p = array![[0.7, 0.2, 0.1], [0.95, 0.04, 0.01]];
        let costs = m.expected_costs(p.view()).unwrap();
        let want = [38.0, 24.5, 54.0];
        for (d, w) in want.iter().enumerate() {
            assert!(
                (costs[[0, d]] - w).abs() < 1e-12,
                "{} vs {w}",
                costs[[0, d]]
            );
        }
        // Second row: accept 0.95x0 + 0.04x40 + 0.01x300 = 4.6; rework 15.85; scrap 59.7.
        assert!((costs[[1, 0]] - 4.6).abs() < 1e-12);
        assert_eq!(m.decide(p.view()).unwrap(), vec![1, 0]);
        // Realised cost of those decisions if the truths were scrap and accept: (120 + 0) / 2.
        assert_eq!(m.mean_cost(&[1, 0], &[2, 0]).unwrap(), 60.0);
    }

    /// With the zero-one matrix the expected cost of d is 1 - p[d], so the
    /// decision is the most probable class (Elkan 2001; common practice).
    #[test]
    fn zero_one_costs_decide_the_most_probable_class() {
        use crate::rng::{seeded_rng, uniform01};
        let classes = names(&["a", "b", "c", "d"]);
        let m = CostMatrix::zero_one(&classes).unwrap();
        let mut rng = seeded_rng(4);
        let p = ndarray::Array2::from_shape_fn((500, 4), |_| uniform01(&mut rng) + 1e-3);
        let sums = p.sum_axis(ndarray::Axis(1));
        let p = &p / &sums.insert_axis(ndarray::Axis(1));
        let most: Vec<usize> = p
            .outer_iter()
            .map(|row| crate::network::argmax(row.as_slice().unwrap()))
            .collect();
        assert_eq!(m.decide(p.view()).unwrap(), most);
    }

    #[test]
    fn columns_follow_the_model_classes_and_mismatches_are_named() {
        let m = CostMatrix::from_csv_str("d,yes,no\nact,0,5\nwait,3,0\n", "c.csv").unwrap();
        let r = m.for_classes(&names(&["no", "yes"])).unwrap();
        assert_eq!(r.costs(), &[vec![5.0, 0.0], vec![0.0, 3.0]]);
        let e = m
            .for_classes(&names(&["no", "maybe"]))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("missing: [maybe]") && e.contains("unknown: [yes]"),
            "{e}"
        );
        for (text, want) in [
            ("", "is empty"),
            ("d,a,b\nx,1\n", "line 2"),
            ("d,a,b\nx,1,two\n", "line 2, column 3"),
            ("d,a,b\nx,1,2\nx,3,4\n", "listed twice"),
            ("d,a\nx,1\n", "2 to"),
            ("d,a,b\nx,1,inf\n", "not a number"),
        ] {
            let e = CostMatrix::from_csv_str(text, "c.csv")
                .unwrap_err()
                .to_string();
            assert!(e.contains(want) && e.contains("c.csv"), "{text:?}: {e}");
        }
        assert_eq!(
            CostMatrix::from_csv_str(&m.to_string(), "again").unwrap(),
            m
        );
    }

    /// Thresholds worked by hand on eight rows (scores falling, labels
    /// `+ + - + - + - -`): recall 0.75 is first reached at 0.6 (3 of 4
    /// found, precision 3/4); precision 1 last holds at 0.8 (2 of 2);
    /// recall 1 needs 0.3 (precision 4/6).
    #[test]
    fn thresholds_for_targets_worked_by_hand() {
        let s = [0.9, 0.8, 0.7, 0.6, 0.4, 0.3, 0.2, 0.1];
        let l = [true, true, false, true, false, true, false, false];
        let t = choose_threshold(&s, &l, ThresholdTarget::Precision(1.0)).unwrap();
        assert_eq!((t.threshold, t.recall, t.precision), (0.8, 0.5, 1.0));
        let t = choose_threshold(&s, &l, ThresholdTarget::Recall(1.0)).unwrap();
        assert_eq!(t.threshold, 0.3);
        assert!((t.precision - 4.0 / 6.0).abs() < 1e-15);
        // Tied scores move together.
        let t = choose_threshold(
            &[0.5, 0.5, 0.2],
            &[true, false, true],
            ThresholdTarget::Recall(0.5),
        )
        .unwrap();
        assert_eq!((t.threshold, t.precision), (0.5, 0.5));
        let e = choose_threshold(&s, &[false; 8], ThresholdTarget::Recall(0.9))
            .unwrap_err()
            .to_string();
        assert!(e.contains("no positive row"), "{e}");
        let e = choose_threshold(&[0.9, 0.1], &[false, true], ThresholdTarget::Precision(0.9))
            .unwrap_err()
            .to_string();
        assert!(e.contains("highest precision is 0.5000"), "{e}");
        assert!(ThresholdTarget::Recall(1.5).validate().is_err());
    }
}
