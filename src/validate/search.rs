//! Which configurations a sweep tries: a [`Grid`] of values, a
//! [`RandomSearch`] over ranges, and optionally [`Halving`] rounds that
//! spend little training on many configurations and more on the best.

use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::network::Activation;
use crate::rng;
use crate::train::BatchSize;
use rand::RngCore;

/// The most configurations one sweep may try.
pub const MAX_CONFIGURATIONS: usize = 10_000;

/// Values to try for each knob; an empty list keeps the base value. Every
/// combination is tried.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Grid {
    /// Hidden layer widths to try.
    pub hidden_layers: Vec<Vec<usize>>,
    /// Hidden activations to try.
    pub activations: Vec<Activation>,
    /// Learning rates to try.
    pub learning_rates: Vec<f64>,
    /// Batch sizes to try.
    pub batch_sizes: Vec<BatchSize>,
    /// Weight decays to try.
    pub weight_decays: Vec<f64>,
}

impl Grid {
    /// Every combination, each with a readable name, in a fixed order
    /// (hidden layers slowest, weight decay fastest).
    ///
    /// # Errors
    /// When the grid holds more than [`MAX_CONFIGURATIONS`] configurations.
    pub fn configurations(&self, base: &FitOptions) -> Result<Vec<(String, FitOptions)>> {
        fn or_base<T: Clone>(values: &[T], base: T) -> (Vec<T>, bool) {
            if values.is_empty() {
                (vec![base], false)
            } else {
                (values.to_vec(), true)
            }
        }
        let (hidden, vary_h) = or_base(&self.hidden_layers, base.hidden_layers.clone());
        let (acts, vary_a) = or_base(&self.activations, base.activation);
        let (rates, vary_r) = or_base(&self.learning_rates, base.training.learning_rate);
        let (batches, vary_b) = match self.batch_sizes.is_empty() {
            true => (vec![base.training.batch_size], false),
            false => (self.batch_sizes.iter().map(|&b| Some(b)).collect(), true),
        };
        let (decays, vary_d) = or_base(&self.weight_decays, base.training.weight_decay);
        let total = hidden.len() * acts.len() * rates.len() * batches.len() * decays.len();
        if total > MAX_CONFIGURATIONS {
            return Err(Error::option(
                "grid",
                total,
                format!("has more than {MAX_CONFIGURATIONS} configurations; split it into smaller sweeps"),
            ));
        }
        let mut out = Vec::with_capacity(total);
        for h in &hidden {
            for &a in &acts {
                for &r in &rates {
                    for &b in &batches {
                        for &d in &decays {
                            let mut o = base.clone();
                            o.hidden_layers = h.clone();
                            o.activation = a;
                            o.training.learning_rate = r;
                            o.training.batch_size = b;
                            o.training.weight_decay = d;
                            let mut parts = Vec::new();
                            if vary_h || !vary_a && !vary_r && !vary_b && !vary_d {
                                parts.push(format!("hidden {}", widths(h)));
                            }
                            if vary_a {
                                parts.push(a.name().to_string());
                            }
                            if vary_r {
                                parts.push(format!("rate {r}"));
                            }
                            if let (true, Some(b)) = (vary_b, b) {
                                parts.push(format!("batch {b}"));
                            }
                            if vary_d {
                                parts.push(format!("decay {d}"));
                            }
                            out.push((parts.join(", "), o));
                        }
                    }
                }
            }
        }
        Ok(out)
    }
}

fn widths(h: &[usize]) -> String {
    if h.is_empty() {
        "none".into()
    } else {
        h.iter().map(usize::to_string).collect::<Vec<_>>().join("-")
    }
}

/// Random search: `configurations` draws, each knob with a range drawn
/// independently (Bergstra & Bengio, "Random search for hyper-parameter
/// optimization", JMLR 13, 2012); knobs without a range keep the base value.
///
/// Rates, penalties, widths and batch sizes are drawn log-uniformly, so that
/// each factor of ten in the range is as likely as any other:
///
/// ```text
/// x = exp( ln(low) + u (ln(high) - ln(low)) ),   u uniform on [0, 1)
/// ```
/// (rounded to the nearest whole number for widths and batch sizes, then
/// kept within the range). The draws come from the sweep's generator in a
/// fixed order: configuration by configuration, and within one the knobs in
/// the order of the fields below; `exp` and `ln` are the portable `libm`
/// ones, so a seed gives the same configurations on every machine.
#[derive(Clone, Debug, PartialEq)]
pub struct RandomSearch {
    /// How many configurations to draw (at least 1).
    pub configurations: usize,
    /// The learning rate's range (both ends > 0).
    pub learning_rate: Option<(f64, f64)>,
    /// The L2 weight decay's range (both ends > 0).
    pub weight_decay: Option<(f64, f64)>,
    /// The L1 penalty's range (both ends > 0).
    pub l1_penalty: Option<(f64, f64)>,
    /// The width of every hidden layer (of the base's layout, or one layer
    /// when the base has none), both ends at least 1.
    pub hidden_width: Option<(usize, usize)>,
    /// The batch size's range in rows (both ends at least 1).
    pub batch_size: Option<(usize, usize)>,
}

impl RandomSearch {
    /// A random search of `configurations` draws with no range yet.
    pub fn new(configurations: usize) -> RandomSearch {
        RandomSearch {
            configurations,
            learning_rate: None,
            weight_decay: None,
            l1_penalty: None,
            hidden_width: None,
            batch_size: None,
        }
    }

    /// Checks the counts and ranges.
    ///
    /// # Errors
    /// The first bad range or count, named.
    pub fn validate(&self) -> Result<()> {
        if self.configurations == 0 || self.configurations > MAX_CONFIGURATIONS {
            return Err(Error::option(
                "random",
                self.configurations,
                format!("must be between 1 and {MAX_CONFIGURATIONS} configurations"),
            ));
        }
        for (name, r) in [
            ("range_learning_rate", self.learning_rate),
            ("range_weight_decay", self.weight_decay),
            ("range_l1_penalty", self.l1_penalty),
        ] {
            if let Some((lo, hi)) = r {
                if !(lo > 0.0 && hi >= lo && hi.is_finite()) {
                    return Err(Error::option(
                        name,
                        format!("{lo}:{hi}"),
                        "must be LOW:HIGH with 0 < LOW <= HIGH (drawn log-uniformly)",
                    ));
                }
            }
        }
        for (name, r) in [
            ("range_hidden", self.hidden_width),
            ("range_batch_size", self.batch_size),
        ] {
            if let Some((lo, hi)) = r {
                if !(lo >= 1 && hi >= lo) {
                    return Err(Error::option(
                        name,
                        format!("{lo}:{hi}"),
                        "must be LOW:HIGH with 1 <= LOW <= HIGH",
                    ));
                }
            }
        }
        if self.learning_rate.is_none()
            && self.weight_decay.is_none()
            && self.l1_penalty.is_none()
            && self.hidden_width.is_none()
            && self.batch_size.is_none()
        {
            return Err(Error::option(
                "random",
                self.configurations,
                "needs at least one range to draw from",
            ));
        }
        Ok(())
    }

    /// Draws the configurations from `rng` (see the type's docs for the
    /// order), each named by its drawn values.
    pub fn configurations<R: RngCore + ?Sized>(
        &self,
        base: &FitOptions,
        rng: &mut R,
    ) -> Vec<(String, FitOptions)> {
        fn log_uniform<R: RngCore + ?Sized>(rng: &mut R, lo: f64, hi: f64) -> f64 {
            let u = rng::uniform01(rng);
            libm::exp(libm::log(lo) + u * (libm::log(hi) - libm::log(lo))).clamp(lo, hi)
        }
        fn whole<R: RngCore + ?Sized>(rng: &mut R, lo: usize, hi: usize) -> usize {
            let v = log_uniform(rng, lo as f64, hi as f64 + 0.5).round() as usize;
            v.clamp(lo, hi)
        }
        (0..self.configurations)
            .map(|i| {
                let mut o = base.clone();
                let mut parts = vec![format!("draw {}", i + 1)];
                if let Some((lo, hi)) = self.learning_rate {
                    let v = log_uniform(rng, lo, hi);
                    o.training.learning_rate = v;
                    parts.push(format!("rate {v:.3e}"));
                }
                if let Some((lo, hi)) = self.weight_decay {
                    let v = log_uniform(rng, lo, hi);
                    o.training.weight_decay = v;
                    parts.push(format!("decay {v:.3e}"));
                }
                if let Some((lo, hi)) = self.l1_penalty {
                    let v = log_uniform(rng, lo, hi);
                    o.training.l1_penalty = v;
                    parts.push(format!("l1 {v:.3e}"));
                }
                if let Some((lo, hi)) = self.hidden_width {
                    let v = whole(rng, lo, hi);
                    let layers = base.hidden_layers.len().max(1);
                    o.hidden_layers = vec![v; layers];
                    parts.push(format!("hidden {}", widths(&o.hidden_layers)));
                }
                if let Some((lo, hi)) = self.batch_size {
                    let v = whole(rng, lo, hi);
                    o.training.batch_size = Some(BatchSize::Rows(v));
                    parts.push(format!("batch {v}"));
                }
                (parts.join(", "), o)
            })
            .collect()
    }
}

/// Where a sweep's configurations come from.
#[derive(Clone, Debug, PartialEq)]
pub enum Candidates {
    /// Every combination of a grid.
    Grid(Grid),
    /// Random draws over ranges.
    Random(RandomSearch),
}

/// Successive halving (Jamieson & Talwalkar, "Non-stochastic best arm
/// identification and hyperparameter optimization", AISTATS 2016; the inner
/// loop of Hyperband, Li, Jamieson, DeSalvo, Rostamizadeh & Talwalkar, JMLR
/// 18, 2018): every configuration is cross-validated with a small share of
/// the epochs, the best `1/eta` go on to a round with `eta` times as many,
/// and so on until the last round trains the survivors with the full
/// budget `E` (the base options' epochs). With `n` configurations:
///
/// ```text
/// rounds  R = max(1, ceil(log_eta n))
/// round r (from 0): n_r = ceil(n / eta^r) configurations,  E_r = max(1, ceil(E / eta^(R-1-r))) epochs
/// kept after round r: the best ceil(n_r / eta) by the sweep's metric (ties: the earlier configuration)
/// ```
/// Every round uses the same folds and fold seeds, so scores stay paired.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Halving {
    /// The reduction factor (at least 2).
    pub eta: usize,
}

impl Halving {
    /// Checks the factor.
    ///
    /// # Errors
    /// A factor below 2.
    pub fn validate(&self) -> Result<()> {
        if self.eta < 2 {
            return Err(Error::option("halving", self.eta, "must be at least 2"));
        }
        Ok(())
    }

    /// The number of rounds for `n` configurations.
    pub fn rounds(&self, n: usize) -> usize {
        let mut rounds = 0;
        let mut power = 1usize;
        while power < n {
            power = power.saturating_mul(self.eta);
            rounds += 1;
        }
        rounds.max(1)
    }

    /// The epochs of round `round` (from 0) of `rounds`, for a full budget
    /// of `epochs`.
    pub fn epochs(&self, round: usize, rounds: usize, epochs: usize) -> usize {
        let mut e = epochs as u128;
        let mut div = 1u128;
        for _ in 0..(rounds - 1 - round) {
            div = div.saturating_mul(self.eta as u128);
        }
        e = e.div_ceil(div);
        (e as usize).max(1)
    }

    /// How many of `n` configurations go on to the next round.
    pub fn kept(&self, n: usize) -> usize {
        n.div_ceil(self.eta).max(1)
    }
}

/// What a sweep tries: candidates, and optionally halving rounds.
#[derive(Clone, Debug, PartialEq)]
pub struct Search {
    /// The configurations.
    pub candidates: Candidates,
    /// Successive halving over them (`None`: every configuration gets the
    /// full budget in one round).
    pub halving: Option<Halving>,
}

impl Search {
    /// Checks the candidates and the halving factor.
    ///
    /// # Errors
    /// The first bad option, named.
    pub fn validate(&self) -> Result<()> {
        if let Candidates::Random(r) = &self.candidates {
            r.validate()?;
        }
        if let Some(h) = self.halving {
            h.validate()?;
        }
        Ok(())
    }
}

impl From<Grid> for Search {
    fn from(grid: Grid) -> Search {
        Search {
            candidates: Candidates::Grid(grid),
            halving: None,
        }
    }
}

impl From<RandomSearch> for Search {
    fn from(random: RandomSearch) -> Search {
        Search {
            candidates: Candidates::Random(random),
            halving: None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::seeded_rng;

    // Successive halving's schedule from its definition (Jamieson &
    // Talwalkar 2016): 27 configurations, eta 3, 90 epochs: rounds of
    // 27, 9 and 3 configurations at 10, 30 and 90 epochs.
    #[test]
    fn halving_rounds_follow_the_definition() {
        let h = Halving { eta: 3 };
        assert_eq!(h.rounds(27), 3);
        assert_eq!(
            (0..3).map(|r| h.epochs(r, 3, 90)).collect::<Vec<_>>(),
            [10, 30, 90]
        );
        assert_eq!((h.kept(27), h.kept(9), h.kept(3)), (9, 3, 1));
        assert_eq!(h.rounds(1), 1);
        assert_eq!(h.rounds(4), 2);
        assert_eq!(Halving { eta: 2 }.epochs(0, 3, 5), 2);
    }

    #[test]
    fn random_draws_stay_in_range_and_are_log_uniform() {
        let mut r = RandomSearch::new(4000);
        r.learning_rate = Some((1e-4, 1e-1));
        r.hidden_width = Some((4, 64));
        r.validate().unwrap();
        let draws = r.configurations(&FitOptions::default(), &mut seeded_rng(3));
        let rates: Vec<f64> = draws
            .iter()
            .map(|(_, o)| o.training.learning_rate)
            .collect();
        assert!(rates.iter().all(|&v| (1e-4..=1e-1).contains(&v)));
        // Log-uniform: each decade holds about a third of the draws.
        for (lo, hi) in [(1e-4, 1e-3), (1e-3, 1e-2), (1e-2, 1e-1)] {
            let share = rates.iter().filter(|&&v| v >= lo && v < hi).count() as f64 / 4000.0;
            assert!((share - 1.0 / 3.0).abs() < 0.03, "{share}");
        }
        assert!(draws
            .iter()
            .all(|(_, o)| o.hidden_layers.len() == 1 && (4..=64).contains(&o.hidden_layers[0])));
        let again = r.configurations(&FitOptions::default(), &mut seeded_rng(3));
        assert_eq!(draws, again);
    }
}
