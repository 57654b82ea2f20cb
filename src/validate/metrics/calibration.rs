//! Can the probabilities be taken at face value? Reliability-diagram data,
//! the expected and maximum calibration errors, and the Brier score's
//! partition into reliability, resolution and uncertainty.
//!
//! # What is compared
//!
//! A reliability diagram sets what a model said against what happened,
//! bin by bin. What it said is one number per row:
//!
//! ```text
//! two classes      p[s][1], the probability of the second class;
//!                  observed = share of the bin's rows whose truth is the second class
//! three or more    c[s] = max_k p[s][k], the top-class confidence (Guo et al. 2017);
//!                  observed = share of the bin's rows whose most probable class is right
//! ```
//!
//! # Binning
//!
//! [`Binning::EqualCount`] (the default, 10 bins) sorts the rows by that
//! number (ties by row order) and cuts them into `B` runs, run `b` holding
//! rows `floor(b n / B) .. floor((b + 1) n / B)`, so every bin holds `n / B`
//! rows give or take one (Naeini, Cooper & Hauskrecht 2015, "Obtaining well
//! calibrated probabilities using Bayesian binning", AAAI, who use 10 such
//! bins). [`Binning::EqualWidth`] cuts [0, 1] into `B` intervals
//! `[b / B, (b + 1) / B)`, the last one closed (Guo, Pleiss, Sun & Weinberger
//! 2017, "On calibration of modern neural networks", ICML, use 15); empty
//! bins are listed with 0 rows and left out of the sums.
//!
//! ```text
//! ECE = sum_b (n_b / n) |observed_b - mean_predicted_b|      (Naeini et al. 2015)
//! MCE = max_b |observed_b - mean_predicted_b|  over bins with rows
//! ```
//!
//! Both depend on the binning and are biased upward on few rows (a bin of 5
//! rows can only observe 0, 0.2, ..., 1): read them with the row count.
//!
//! # The Brier partition
//!
//! A. H. Murphy, "A new vector partition of the probability score", Journal
//! of Applied Meteorology 12 (1973) 595-600, for the multi-class Brier score
//! that [`brier_score`](super::brier_score) computes. Group the rows into
//! `T` groups; in group `t` of `n_t` rows let `f_t` be the mean forecast
//! vector and `o_t` the observed class shares; `o` is the shares over all rows:
//!
//! ```text
//! reliability = (1 / n) sum_t n_t |f_t - o_t|^2
//! resolution  = (1 / n) sum_t n_t |o_t - o|^2
//! uncertainty = sum_k o_k (1 - o_k)
//! brier = reliability - resolution + uncertainty
//!         + within_variance - 2 within_covariance
//! within_variance   = (1 / n) sum_t sum_{s in t} |p_s - f_t|^2
//! within_covariance = (1 / n) sum_t sum_{s in t} (p_s - f_t) . (y_s - o_t)
//! ```
//!
//! With one group per distinct forecast vector ([`brier_partition`],
//! Murphy's own grouping) both within-group terms are 0 and the three
//! classical terms add up to the Brier score exactly. With bins
//! ([`brier_partition_binned`]) the two within-bin terms keep the identity
//! exact (D. B. Stephenson, C. A. S. Coelho & I. T. Jolliffe, "Two extra
//! components in the Brier score decomposition", Weather and Forecasting 23
//! (2008) 752-757). For two classes every term is twice the common binary
//! form, as the score itself is.

use super::checks::check_probabilities;
use super::probability::most_probable_classes;
use crate::error::{Error, Result};
use ndarray::ArrayView2;
use std::cmp::Ordering;
use std::fmt;
use std::str::FromStr;

/// How rows are grouped into bins for a reliability diagram (see the
/// [module docs](self)).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Binning {
    /// `B` bins holding equal numbers of rows (give or take one).
    EqualCount(usize),
    /// `B` bins of equal width on [0, 1].
    EqualWidth(usize),
}

impl Binning {
    /// Most bins either rule accepts.
    pub const MAX_BINS: usize = 1000;

    /// The number of bins asked for.
    pub fn bins(self) -> usize {
        match self {
            Binning::EqualCount(b) | Binning::EqualWidth(b) => b,
        }
    }

    /// Checks the bin count.
    ///
    /// # Errors
    /// Fewer than 1 or more than [`Binning::MAX_BINS`] bins.
    pub fn validate(self) -> Result<()> {
        let b = self.bins();
        if b == 0 || b > Binning::MAX_BINS {
            return Err(Error::option(
                "bins",
                self,
                format!(
                    "needs 1 to {} bins, for example count:10",
                    Binning::MAX_BINS
                ),
            ));
        }
        Ok(())
    }
}

impl Default for Binning {
    /// Ten equal-count bins (Naeini et al. 2015).
    fn default() -> Self {
        Binning::EqualCount(10)
    }
}

impl fmt::Display for Binning {
    /// `count:B` or `width:B`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Binning::EqualCount(b) => write!(f, "count:{b}"),
            Binning::EqualWidth(b) => write!(f, "width:{b}"),
        }
    }
}

impl FromStr for Binning {
    type Err = Error;

    /// Reads `count:B` or `width:B`.
    fn from_str(text: &str) -> Result<Self> {
        let bad = || {
            Error::option(
                "bins",
                text,
                "write count:B (equal numbers of rows) or width:B (equal widths on [0, 1]), for example count:10",
            )
        };
        let (rule, count) = text.trim().split_once(':').ok_or_else(bad)?;
        let count: usize = count.trim().parse().map_err(|_| bad())?;
        let binning = match rule.trim() {
            "count" => Binning::EqualCount(count),
            "width" => Binning::EqualWidth(count),
            _ => return Err(bad()),
        };
        binning.validate()?;
        Ok(binning)
    }
}

/// What a reliability diagram's predicted value is (see the [module docs](self)).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Forecast {
    /// Two classes: the probability of class 1 (the second class).
    SecondClass,
    /// Three or more classes: the top-class confidence against accuracy.
    TopClass,
}

impl Forecast {
    /// What the diagram's two axes mean, in words.
    pub fn describe(&self) -> (&'static str, &'static str) {
        match self {
            Forecast::SecondClass => (
                "predicted probability of the second class",
                "observed share of the second class",
            ),
            Forecast::TopClass => (
                "confidence in the most probable class",
                "share of rows whose most probable class is right",
            ),
        }
    }
}

/// One bin of a reliability diagram.
#[derive(Clone, Debug, PartialEq)]
pub struct ReliabilityBin {
    /// The bin's lower edge (equal width) or its smallest value (equal count).
    pub lower: f64,
    /// The bin's upper edge (equal width) or its largest value (equal count).
    pub upper: f64,
    /// Rows in the bin.
    pub rows: usize,
    /// Mean predicted value of the bin's rows (the bin's centre when empty).
    pub mean_predicted: f64,
    /// Observed share of the bin's rows (0 when empty).
    pub observed: f64,
}

/// Reliability-diagram data with the calibration errors it implies.
#[derive(Clone, Debug, PartialEq)]
pub struct Reliability {
    /// What the predicted value is.
    pub forecast: Forecast,
    /// How the rows were binned.
    pub binning: Binning,
    /// The bins, lowest values first.
    pub bins: Vec<ReliabilityBin>,
    /// Rows scored.
    pub rows: usize,
    /// Expected calibration error (module docs).
    pub expected_error: f64,
    /// Maximum calibration error over bins with rows (module docs).
    pub maximum_error: f64,
}

/// One number per row for the diagram, and whether it came true.
fn forecasts(truth: &[usize], probabilities: ArrayView2<f64>) -> (Forecast, Vec<(f64, f64)>) {
    if probabilities.ncols() == 2 {
        let points = truth
            .iter()
            .zip(probabilities.outer_iter())
            .map(|(&t, row)| (row[1], if t == 1 { 1.0 } else { 0.0 }))
            .collect();
        (Forecast::SecondClass, points)
    } else {
        let predicted = most_probable_classes(probabilities);
        let points = truth
            .iter()
            .zip(probabilities.outer_iter())
            .zip(&predicted)
            .map(|((&t, row), &p)| (row[p], if t == p { 1.0 } else { 0.0 }))
            .collect();
        (Forecast::TopClass, points)
    }
}

/// The bin of each row under `binning` (values in [0, 1]).
fn bin_rows(values: &[f64], binning: Binning) -> Vec<Vec<usize>> {
    let n = values.len();
    match binning {
        Binning::EqualWidth(b) => {
            let mut bins = vec![Vec::new(); b];
            for (s, &v) in values.iter().enumerate() {
                let i = ((v * b as f64).floor() as usize).min(b - 1);
                bins[i].push(s);
            }
            bins
        }
        Binning::EqualCount(b) => {
            let mut order: Vec<usize> = (0..n).collect();
            order.sort_by(|&i, &j| values[i].total_cmp(&values[j]).then(i.cmp(&j)));
            let b = b.min(n).max(1);
            (0..b)
                .map(|k| order[k * n / b..(k + 1) * n / b].to_vec())
                .collect()
        }
    }
}

/// Reliability-diagram data, expected and maximum calibration error (see
/// the [module docs](self) for what is binned and the formulas).
///
/// # Errors
/// As [`log_loss`](super::log_loss), and a bin count outside 1 to
/// [`Binning::MAX_BINS`].
///
/// # Example
/// ```
/// use stratanet::ndarray::array;
/// use stratanet::validate::metrics::{reliability, Binning};
/// // Four rows said 0.25 for the second class; one of them was.
/// let p = array![[0.75, 0.25], [0.75, 0.25], [0.75, 0.25], [0.75, 0.25]];
/// let r = reliability(&[0, 1, 0, 0], p.view(), Binning::EqualWidth(4))?;
/// assert_eq!(r.bins[1].rows, 4);
/// assert_eq!(r.expected_error, 0.0);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn reliability(
    truth: &[usize],
    probabilities: ArrayView2<f64>,
    binning: Binning,
) -> Result<Reliability> {
    check_probabilities("reliability diagram", truth, probabilities)?;
    binning.validate()?;
    let (forecast, points) = forecasts(truth, probabilities);
    let values: Vec<f64> = points.iter().map(|p| p.0).collect();
    let n = points.len() as f64;
    let width = 1.0 / binning.bins() as f64;
    let mut bins = Vec::new();
    let (mut expected_error, mut maximum_error) = (0.0_f64, 0.0_f64);
    for (b, rows) in bin_rows(&values, binning).iter().enumerate() {
        let (lower, upper) = match binning {
            Binning::EqualWidth(_) => (b as f64 * width, (b as f64 + 1.0) * width),
            Binning::EqualCount(_) => rows
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &s| {
                    (lo.min(values[s]), hi.max(values[s]))
                }),
        };
        if rows.is_empty() {
            bins.push(ReliabilityBin {
                lower,
                upper,
                rows: 0,
                mean_predicted: (lower + upper) / 2.0,
                observed: 0.0,
            });
            continue;
        }
        let m = rows.len() as f64;
        let mean_predicted = rows.iter().map(|&s| points[s].0).sum::<f64>() / m;
        let observed = rows.iter().map(|&s| points[s].1).sum::<f64>() / m;
        let gap = (observed - mean_predicted).abs();
        expected_error += m / n * gap;
        maximum_error = maximum_error.max(gap);
        bins.push(ReliabilityBin {
            lower,
            upper,
            rows: rows.len(),
            mean_predicted,
            observed,
        });
    }
    Ok(Reliability {
        forecast,
        binning,
        bins,
        rows: points.len(),
        expected_error,
        maximum_error,
    })
}

/// How the rows of a [`BrierPartition`] were grouped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Grouping {
    /// One group per distinct forecast vector (Murphy 1973).
    DistinctForecasts,
    /// The bins of a reliability diagram (Stephenson et al. 2008).
    Bins(Binning),
}

/// The Brier score's partition (see the [module docs](self) for the formulas).
#[derive(Clone, Debug, PartialEq)]
pub struct BrierPartition {
    /// How the rows were grouped.
    pub grouping: Grouping,
    /// Groups with rows.
    pub groups: usize,
    /// The multi-class Brier score, computed directly.
    pub brier: f64,
    /// How far each group's mean forecast is from what happened (lower is better).
    pub reliability: f64,
    /// How far each group's outcomes are from the overall shares (higher is better).
    pub resolution: f64,
    /// The spread of the outcomes themselves: the Brier score of always
    /// forecasting the overall class shares.
    pub uncertainty: f64,
    /// Spread of the forecasts inside their groups (0 for distinct forecasts).
    pub within_variance: f64,
    /// Covariance of forecasts and outcomes inside their groups (0 for distinct forecasts).
    pub within_covariance: f64,
}

impl BrierPartition {
    /// The sum the partition says equals the Brier score:
    /// `reliability - resolution + uncertainty + within_variance - 2 within_covariance`.
    pub fn total(&self) -> f64 {
        self.reliability - self.resolution + self.uncertainty + self.within_variance
            - 2.0 * self.within_covariance
    }
}

/// Murphy's (1973) partition with one group per distinct forecast vector
/// (rows whose probabilities are equal bit for bit): reliability, resolution
/// and uncertainty add up to the Brier score exactly (up to rounding).
///
/// # Errors
/// As [`log_loss`](super::log_loss).
///
/// # Example
/// ```
/// use stratanet::validate::metrics::brier_partition;
/// // Five rows forecast 0.2 for the second class (one came true), five 0.8 (four did).
/// let mut p = Vec::new();
/// let truth = [1, 0, 0, 0, 0, 1, 1, 1, 1, 0];
/// for s in 0..10 { let q = if s < 5 { 0.2 } else { 0.8 }; p.extend([1.0 - q, q]); }
/// let p = stratanet::ndarray::Array2::from_shape_vec((10, 2), p).unwrap();
/// let part = brier_partition(&truth, p.view())?;
/// assert!(part.reliability.abs() < 1e-15);      // the forecasts came true as often as they said
/// assert!((part.uncertainty - 0.5).abs() < 1e-15);
/// assert!((part.total() - part.brier).abs() < 1e-15);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn brier_partition(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<BrierPartition> {
    check_probabilities("Brier partition", truth, probabilities)?;
    let n = truth.len();
    let mut order: Vec<usize> = (0..n).collect();
    let row_cmp = |i: usize, j: usize| -> Ordering {
        probabilities
            .row(i)
            .iter()
            .zip(probabilities.row(j).iter())
            .map(|(a, b)| a.total_cmp(b))
            .find(|o| o.is_ne())
            .unwrap_or(Ordering::Equal)
    };
    order.sort_by(|&i, &j| row_cmp(i, j).then(i.cmp(&j)));
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for &s in &order {
        match groups.last_mut() {
            Some(g) if row_cmp(g[0], s).is_eq() => g.push(s),
            _ => groups.push(vec![s]),
        }
    }
    Ok(partition(
        truth,
        probabilities,
        &groups,
        Grouping::DistinctForecasts,
    ))
}

/// The partition over the bins of a reliability diagram (the same binned
/// value as [`reliability`]), with the two within-bin terms that keep it
/// exact (Stephenson et al. 2008).
///
/// # Errors
/// As [`reliability`].
pub fn brier_partition_binned(
    truth: &[usize],
    probabilities: ArrayView2<f64>,
    binning: Binning,
) -> Result<BrierPartition> {
    check_probabilities("Brier partition", truth, probabilities)?;
    binning.validate()?;
    let (_, points) = forecasts(truth, probabilities);
    let values: Vec<f64> = points.iter().map(|p| p.0).collect();
    let groups = bin_rows(&values, binning);
    Ok(partition(
        truth,
        probabilities,
        &groups,
        Grouping::Bins(binning),
    ))
}

/// The partition of the Brier score over any grouping of the rows.
fn partition(
    truth: &[usize],
    probabilities: ArrayView2<f64>,
    groups: &[Vec<usize>],
    grouping: Grouping,
) -> BrierPartition {
    let (n, k) = probabilities.dim();
    let nf = n as f64;
    let mut overall = vec![0.0; k];
    truth.iter().for_each(|&t| overall[t] += 1.0 / nf);
    let uncertainty: f64 = overall.iter().map(|o| o * (1.0 - o)).sum();
    let mut part = BrierPartition {
        grouping,
        groups: 0,
        brier: 0.0,
        reliability: 0.0,
        resolution: 0.0,
        uncertainty,
        within_variance: 0.0,
        within_covariance: 0.0,
    };
    for (s, &t) in truth.iter().enumerate() {
        for c in 0..k {
            let y = if c == t { 1.0 } else { 0.0 };
            part.brier += (probabilities[[s, c]] - y).powi(2) / nf;
        }
    }
    for rows in groups.iter().filter(|g| !g.is_empty()) {
        part.groups += 1;
        let m = rows.len() as f64;
        let mut mean = vec![0.0; k];
        let mut observed = vec![0.0; k];
        for &s in rows {
            for c in 0..k {
                mean[c] += probabilities[[s, c]] / m;
            }
            observed[truth[s]] += 1.0 / m;
        }
        if grouping == Grouping::DistinctForecasts {
            // The rows are equal bit for bit: their mean is any one of them,
            // with no rounding left in the within-group terms.
            mean = probabilities.row(rows[0]).to_vec();
        }
        for c in 0..k {
            part.reliability += m * (mean[c] - observed[c]).powi(2) / nf;
            part.resolution += m * (observed[c] - overall[c]).powi(2) / nf;
        }
        for &s in rows {
            for c in 0..k {
                let y = if c == truth[s] { 1.0 } else { 0.0 };
                let d = probabilities[[s, c]] - mean[c];
                part.within_variance += d * d / nf;
                part.within_covariance += d * (y - observed[c]) / nf;
            }
        }
    }
    part
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::{seeded_rng, uniform01 as uniform};
    use ndarray::{array, Array2};

    fn close(a: f64, b: f64, tol: f64) {
        assert!((a - b).abs() <= tol, "{a} vs {b}");
    }

    /// Worked here by hand from Murphy's (1973) definitions (no published
    /// worked example to hand): five rows forecast 0.2 for the second class
    /// and one came true, five forecast 0.8 and four came true. Reliability
    /// 0; resolution (5 (0.09 + 0.09) + 5 (0.09 + 0.09)) / 10 = 0.18;
    /// uncertainty 0.25 + 0.25 = 0.5; Brier 0.5 - 0.18 = 0.32, twice the
    /// binary-form 0.16 = (0.64 + 4 x 0.04 + 4 x 0.04 + 0.64) / 10.
    #[test]
    fn partition_of_a_hand_worked_two_class_example() {
        let truth = [1, 0, 0, 0, 0, 1, 1, 1, 1, 0];
        let p = Array2::from_shape_fn((10, 2), |(s, c)| {
            let q = if s < 5 { 0.2 } else { 0.8 };
            if c == 1 {
                q
            } else {
                1.0 - q
            }
        });
        let part = brier_partition(&truth, p.view()).unwrap();
        assert_eq!(part.groups, 2);
        close(part.reliability, 0.0, 1e-15);
        close(part.resolution, 0.18, 1e-15);
        close(part.uncertainty, 0.5, 1e-15);
        close(part.brier, 0.32, 1e-15);
        assert_eq!((part.within_variance, part.within_covariance), (0.0, 0.0));
    }

    /// A three-class example table (an illustration, no source) whose terms
    /// were recomputed with numpy 2.4 (grouping by `numpy.unique(axis=0)`);
    /// formula: Murphy 1973.
    #[test]
    fn partition_matches_an_independent_recomputation() {
        let p = array![
            [0.7, 0.2, 0.1],
            [0.7, 0.2, 0.1],
            [0.7, 0.2, 0.1],
            [0.7, 0.2, 0.1],
            [0.2, 0.5, 0.3],
            [0.2, 0.5, 0.3],
            [0.2, 0.5, 0.3],
            [0.1, 0.1, 0.8],
            [0.1, 0.1, 0.8],
            [0.1, 0.1, 0.8],
            [0.4, 0.4, 0.2],
            [0.4, 0.4, 0.2]
        ];
        let truth = [0, 0, 1, 0, 1, 2, 1, 2, 2, 0, 1, 0];
        let part = brier_partition(&truth, p.view()).unwrap();
        assert_eq!(part.groups, 4);
        close(part.brier, 0.483_333_333_333_333_4, 1e-14);
        close(part.reliability, 0.052_777_777_777_777_785, 1e-14);
        close(part.resolution, 0.222_222_222_222_222_18, 1e-14);
        close(part.uncertainty, 0.652_777_777_777_777_8, 1e-14);
        close(
            part.brier,
            super::super::brier_score(&truth, p.view()).unwrap(),
            1e-15,
        );
        // Top-class confidence in two equal-width bins, same recomputation:
        // ECE 0.0416666... (the tie in the last rows goes to class 0 in both).
        let r = reliability(&truth, p.view(), Binning::EqualWidth(2)).unwrap();
        assert_eq!(r.forecast, Forecast::TopClass);
        close(r.expected_error, 0.041_666_666_666_666_685, 1e-14);
    }

    /// The identity reliability - resolution + uncertainty (+ the within-bin
    /// terms when binned) = Brier holds on random inputs, for any grouping
    /// (Murphy 1973; Stephenson, Coelho & Jolliffe 2008).
    #[test]
    fn partition_identity_holds_on_random_forecasts() {
        let mut rng = seeded_rng(17);
        for trial in 0..40 {
            let k = 2 + trial % 4;
            let n = 5 + (uniform(&mut rng) * 200.0) as usize;
            // A few distinct forecasts, reused, so groups hold several rows.
            let distinct: Vec<Vec<f64>> = (0..1 + n / 4)
                .map(|_| {
                    let raw: Vec<f64> = (0..k).map(|_| uniform(&mut rng) + 1e-3).collect();
                    let sum: f64 = raw.iter().sum();
                    raw.iter().map(|v| v / sum).collect()
                })
                .collect();
            let pick: Vec<usize> = (0..n)
                .map(|_| (uniform(&mut rng) * distinct.len() as f64) as usize)
                .collect();
            let p = Array2::from_shape_fn((n, k), |(s, c)| distinct[pick[s]][c]);
            let truth: Vec<usize> = (0..n)
                .map(|_| (uniform(&mut rng) * k as f64) as usize)
                .collect();
            let exact = brier_partition(&truth, p.view()).unwrap();
            close(exact.total(), exact.brier, 1e-12);
            assert!(exact.groups <= distinct.len());
            for binning in [
                Binning::EqualCount(5),
                Binning::EqualWidth(7),
                Binning::EqualCount(1),
            ] {
                let binned = brier_partition_binned(&truth, p.view(), binning).unwrap();
                close(binned.total(), binned.brier, 1e-12);
                close(binned.uncertainty, exact.uncertainty, 1e-15);
            }
        }
    }

    /// Hand-worked: probabilities of the second class 0.1, 0.3 (bin 1 of 2:
    /// mean 0.2, observed 1/2) and 0.6, 0.9 (bin 2: mean 0.75, observed 1):
    /// ECE = 0.5 x 0.3 + 0.5 x 0.25 = 0.275, MCE 0.3 (Naeini et al. 2015's
    /// definitions).
    #[test]
    fn calibration_errors_of_a_hand_worked_example() {
        let p = array![[0.9, 0.1], [0.7, 0.3], [0.4, 0.6], [0.1, 0.9]];
        let r = reliability(&[0, 1, 1, 1], p.view(), Binning::EqualWidth(2)).unwrap();
        assert_eq!(r.forecast, Forecast::SecondClass);
        close(r.expected_error, 0.275, 1e-15);
        close(r.maximum_error, 0.3, 1e-15);
        assert_eq!(r.bins.iter().map(|b| b.rows).collect::<Vec<_>>(), [2, 2]);
        close(r.bins[0].mean_predicted, 0.2, 1e-15);
        // Equal counts of 2 give the same bins here.
        let same = reliability(&[0, 1, 1, 1], p.view(), Binning::EqualCount(2)).unwrap();
        close(same.expected_error, 0.275, 1e-15);
        assert_eq!((same.bins[1].lower, same.bins[1].upper), (0.6, 0.9));
    }

    /// Forecasts that are calibrated by construction (y ~ Bernoulli(p))
    /// have a small ECE on many rows, and a forecast pushed towards 0 and 1
    /// a large one (common practice, no source).
    #[test]
    fn calibrated_forecasts_score_near_zero_and_overconfident_ones_do_not() {
        let mut rng = seeded_rng(3);
        let n = 40_000;
        let q: Vec<f64> = (0..n).map(|_| uniform(&mut rng)).collect();
        let truth: Vec<usize> = q
            .iter()
            .map(|&q| usize::from(uniform(&mut rng) < q))
            .collect();
        let calibrated =
            Array2::from_shape_fn((n, 2), |(s, c)| if c == 1 { q[s] } else { 1.0 - q[s] });
        let r = reliability(&truth, calibrated.view(), Binning::default()).unwrap();
        assert!(r.expected_error < 0.01, "{}", r.expected_error);
        let sharp = |q: f64| 1.0 / (1.0 + (-(3.0 * (q / (1.0 - q)).ln())).exp());
        let over = Array2::from_shape_fn((n, 2), |(s, c)| {
            if c == 1 {
                sharp(q[s])
            } else {
                1.0 - sharp(q[s])
            }
        });
        let r = reliability(&truth, over.view(), Binning::default()).unwrap();
        assert!(r.expected_error > 0.08, "{}", r.expected_error);
    }

    #[test]
    fn binning_reads_and_refuses_by_name() {
        assert_eq!(
            "count:10".parse::<Binning>().unwrap(),
            Binning::EqualCount(10)
        );
        assert_eq!(
            "width:15".parse::<Binning>().unwrap(),
            Binning::EqualWidth(15)
        );
        assert_eq!(Binning::EqualWidth(15).to_string(), "width:15");
        for bad in ["10", "count:0", "size:3", "width:x", "count:1001"] {
            let e = bad.parse::<Binning>().unwrap_err().to_string();
            assert!(e.contains("bins"), "{bad}: {e}");
        }
        // More bins than rows: one row per bin, none empty.
        let p = array![[0.5, 0.5], [0.2, 0.8]];
        let r = reliability(&[0, 1], p.view(), Binning::EqualCount(10)).unwrap();
        assert_eq!(r.bins.len(), 2);
    }
}
