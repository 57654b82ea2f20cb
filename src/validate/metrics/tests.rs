use super::score::*;
use super::*;
use crate::rng::{below, seeded_rng};
use ndarray::{array, Array2};
use std::cmp::Ordering;

fn close(a: f64, b: f64, tolerance: f64) -> bool {
    (a - b).abs() <= tolerance
}

// Fawcett 2006, Fig. 3: 20 instances (10 positive, 10 negative).
const FAWCETT_SCORES: [f64; 20] = [
    0.9, 0.8, 0.7, 0.6, 0.55, 0.54, 0.53, 0.52, 0.51, 0.505, 0.4, 0.39, 0.38, 0.37, 0.36, 0.35,
    0.34, 0.33, 0.30, 0.1,
];
const FAWCETT_LABELS: [u8; 20] = [1, 1, 0, 1, 1, 1, 0, 0, 1, 0, 1, 0, 1, 0, 0, 0, 1, 0, 1, 0];

fn fawcett_labels() -> Vec<bool> {
    FAWCETT_LABELS.iter().map(|&l| l == 1).collect()
}

/// Mann-Whitney U by brute force over all (positive, negative) pairs, ties 1/2.
fn brute_force_u(scores: &[f64], labels: &[bool]) -> f64 {
    let mut u = 0.0;
    for i in 0..scores.len() {
        for j in 0..scores.len() {
            if labels[i] && !labels[j] {
                u += match scores[i].partial_cmp(&scores[j]).unwrap() {
                    Ordering::Greater => 1.0,
                    Ordering::Equal => 0.5,
                    Ordering::Less => 0.0,
                };
            }
        }
    }
    u
}

#[test]
fn fawcett_2006_auc_is_0_68_and_equals_u_over_n1_n0() {
    // Source: T. Fawcett, "An introduction to ROC analysis", Pattern Recognition
    // Letters 27 (2006), Fig. 3 (20 instances): AUC 0.68; the Mann-Whitney U
    // statistic of the same scores is 68 = 0.68 n1 n0 (counted by hand below).
    let labels = fawcett_labels();
    let curve = roc_curve(&FAWCETT_SCORES, &labels).unwrap();
    assert!(close(curve.auc, 0.68, 1e-12), "{}", curve.auc);
    assert_eq!(brute_force_u(&FAWCETT_SCORES, &labels), 68.0);
    assert_eq!((curve.positives, curve.negatives), (10, 10));
    // No ties: one point per instance plus (0, 0); Fawcett's Fig. 3 starts
    // at (0, 0.1) for threshold .9 and ends at (1, 1).
    assert_eq!(curve.points.len(), 21);
    assert_eq!(curve.points[1].true_positive_rate, 0.1);
    assert_eq!(curve.points[1].false_positive_rate, 0.0);
    let last = curve.points.last().unwrap();
    assert_eq!(
        (last.false_positive_rate, last.true_positive_rate),
        (1.0, 1.0)
    );
    assert_eq!(last.threshold, 0.1);
}

#[test]
fn auc_equals_mann_whitney_u_on_random_data_with_many_ties() {
    // AUC = U / (n1 n0) with ties counted 1/2: Hanley & McNeil, Radiology 143 (1982).
    let mut rng = seeded_rng(2024);
    for trial in 0..20 {
        let n = 30 + below(&mut rng, 170);
        // Scores on a coarse grid of 6 values: many ties within and across classes.
        let scores: Vec<f64> = (0..n).map(|_| below(&mut rng, 6) as f64 / 5.0).collect();
        let mut labels: Vec<bool> = (0..n).map(|_| below(&mut rng, 3) == 0).collect();
        labels[0] = true;
        labels[1] = false;
        let n1 = labels.iter().filter(|&&l| l).count() as f64;
        let n0 = n as f64 - n1;
        let expected = brute_force_u(&scores, &labels) / (n1 * n0);
        let auc = roc_auc(&scores, &labels).unwrap();
        assert!(
            close(auc, expected, 1e-14),
            "trial {trial}: {auc} vs {expected}"
        );
    }
}

#[test]
fn roc_all_ties_is_one_diagonal_and_auc_one_half() {
    // Fawcett 2006, section 5 / Algorithm 1: equal scores make one diagonal step.
    let scores = [0.3; 7];
    let labels = [true, false, false, true, false, true, false];
    let curve = roc_curve(&scores, &labels).unwrap();
    assert_eq!(curve.auc, 0.5);
    assert_eq!(curve.points.len(), 2);
    assert_eq!(curve.points[1].threshold, 0.3);
}

#[test]
fn roc_perfect_and_reversed_separation() {
    let scores = [0.9, 0.8, 0.7, 0.2, 0.1];
    let labels = [true, true, true, false, false];
    assert_eq!(roc_auc(&scores, &labels).unwrap(), 1.0);
    let reversed: Vec<bool> = labels.iter().map(|l| !l).collect();
    assert_eq!(roc_auc(&scores, &reversed).unwrap(), 0.0);
}

#[test]
fn roc_tie_between_classes_counts_one_half() {
    // By hand: positives {0.8, 0.5}, negatives {0.5, 0.2}. Pairs: (0.8>0.5)=1, (0.8>0.2)=1,
    // (0.5=0.5)=1/2, (0.5>0.2)=1 -> U = 3.5, AUC = 3.5 / 4 = 0.875.
    let scores = [0.8, 0.5, 0.5, 0.2];
    let labels = [true, true, false, false];
    let curve = roc_curve(&scores, &labels).unwrap();
    assert_eq!(curve.auc, 0.875);
    // Points: (0,0) +inf, (0,0.5) 0.8, (0.5,1) 0.5 (the diagonal), (1,1) 0.2.
    let xy: Vec<(f64, f64)> = curve
        .points
        .iter()
        .map(|p| (p.false_positive_rate, p.true_positive_rate))
        .collect();
    assert_eq!(xy, vec![(0.0, 0.0), (0.0, 0.5), (0.5, 1.0), (1.0, 1.0)]);
    // -0.0 and 0.0 are the same score.
    assert_eq!(roc_auc(&[0.0, -0.0], &[true, false]).unwrap(), 0.5);
}

#[test]
fn precision_recall_small_example_by_hand() {
    // By hand: scores .9 .8 .7 .7 .3, labels T F T F T (P = 3).
    //   t=.9: TP 1 FP 0 -> P 1,   R 1/3
    //   t=.8: TP 1 FP 1 -> P 1/2, R 1/3
    //   t=.7: TP 2 FP 2 -> P 1/2, R 2/3   (the tie enters together)
    //   t=.3: TP 3 FP 2 -> P 3/5, R 1
    // AP = 1/3 * 1 + 0 * 1/2 + 1/3 * 1/2 + 1/3 * 3/5 = (1 + 0.5 + 0.6) / 3 = 0.7
    let scores = [0.9, 0.8, 0.7, 0.7, 0.3];
    let labels = [true, false, true, false, true];
    let curve = precision_recall_curve(&scores, &labels).unwrap();
    let got: Vec<(f64, f64, f64)> = curve
        .points
        .iter()
        .map(|p| (p.threshold, p.precision, p.recall))
        .collect();
    assert_eq!(
        got,
        vec![
            (0.9, 1.0, 1.0 / 3.0),
            (0.8, 0.5, 1.0 / 3.0),
            (0.7, 0.5, 2.0 / 3.0),
            (0.3, 0.6, 1.0)
        ]
    );
    assert!(
        close(curve.average_precision, 0.7, 1e-15),
        "{}",
        curve.average_precision
    );
    // Without ties AP is the mean precision at each positive's rank (Manning et al. 2008,
    // ch. 8.4): ranks 1, 3, 5 of T F T F T -> (1 + 2/3 + 3/5) / 3.
    let distinct = [0.9, 0.8, 0.7, 0.6, 0.3];
    let ap = average_precision(&distinct, &labels).unwrap();
    assert!(close(ap, (1.0 + 2.0 / 3.0 + 0.6) / 3.0, 1e-15));
}

#[test]
fn kappa_of_a_two_by_two_table_by_hand() {
    // An illustrative table (common textbook usage, not from a paper),
    // [[20, 5], [10, 15]], by hand: observed agreement 35/50 = 0.7, expected
    // (25 * 30 + 25 * 20) / 50^2 = 0.5, kappa (0.7 - 0.5) / (1 - 0.5) = 0.4.
    // The formula: J. Cohen, "A coefficient of agreement for nominal scales",
    // Educational and Psychological Measurement 20, 1960.
    let m = ConfusionMatrix::from_counts(vec![vec![20, 5], vec![10, 15]]).unwrap();
    assert_eq!(m.accuracy(), 0.7);
    let kappa = m.cohen_kappa();
    assert!(close(kappa.value, 0.4, 1e-15) && kappa.is_defined());
}

#[test]
fn matthews_f1_accuracy_of_counts_by_hand() {
    // Illustrative counts (not from a paper): TP 90, FN 5, FP 4, TN 1, by hand:
    // MCC (90 * 1 - 4 * 5) / sqrt(94 * 95 * 5 * 6) = 70 / 517.59 = 0.135242,
    // F1 180 / 189 = 0.952381, accuracy 0.91. The formula: B. W. Matthews,
    // "Comparison of the predicted and observed secondary structure of T4
    // phage lysozyme", Biochimica et Biophysica Acta 405, 1975 (the phi
    // coefficient of the 2 x 2 table).
    let counts = BinaryCounts {
        true_positives: 90,
        false_positives: 4,
        false_negatives: 5,
        true_negatives: 1,
    };
    assert!(close(counts.matthews_correlation().value, 0.135242, 5e-7));
    assert!(close(counts.f1().value, 0.952381, 5e-7));
    assert!(close(counts.accuracy().value, 0.91, 1e-15));
    // The same table as a confusion matrix (class 1 positive): Gorodkin's R_K agrees
    // with the binary formula for two classes.
    let m = ConfusionMatrix::from_counts(vec![vec![1, 4], vec![5, 90]]).unwrap();
    assert_eq!(m.binary_counts(1).unwrap(), counts);
    let general = m.matthews_correlation().value;
    assert!(close(general, counts.matthews_correlation().value, 1e-15));
    assert!(close(m.per_class()[1].f1.value, 0.952381, 5e-7));
    assert!(close(m.accuracy(), 0.91, 1e-15));
}

#[test]
fn gorodkin_agrees_with_binary_formula_on_random_tables() {
    let mut rng = seeded_rng(5);
    for _ in 0..200 {
        let c: Vec<u64> = (0..4).map(|_| below(&mut rng, 50) as u64 + 1).collect();
        let m = ConfusionMatrix::from_counts(vec![vec![c[0], c[1]], vec![c[2], c[3]]]).unwrap();
        let binary = m.binary_counts(1).unwrap().matthews_correlation().value;
        assert!(close(m.matthews_correlation().value, binary, 1e-14));
    }
}

#[test]
fn multiclass_matthews_by_hand() {
    // By hand: [[2,1,0],[0,2,1],[1,0,3]], s = 10, c = 7, t = (3,3,4), p = (3,3,4).
    // cov = 7*10 - (9+9+16) = 36; spreads = 100 - 34 = 66 each; MCC = 36/66.
    let m =
        ConfusionMatrix::from_counts(vec![vec![2, 1, 0], vec![0, 2, 1], vec![1, 0, 3]]).unwrap();
    assert!(close(m.matthews_correlation().value, 36.0 / 66.0, 1e-15));
    // Perfect predictions give 1, and a reversed binary table -1.
    let perfect = ConfusionMatrix::from_labels(&[0, 1, 2, 2], &[0, 1, 2, 2], 3).unwrap();
    assert_eq!(perfect.matthews_correlation().value, 1.0);
    let reversed = ConfusionMatrix::from_counts(vec![vec![0, 3], vec![2, 0]]).unwrap();
    assert!(close(reversed.matthews_correlation().value, -1.0, 1e-15));
}

#[test]
fn undefined_values_are_zero_with_a_note_never_nan() {
    // Class 2 absent from truth and never predicted; class 1 never predicted.
    let m = ConfusionMatrix::from_labels(&[0, 0, 1], &[0, 0, 0], 3).unwrap();
    let per_class = m.per_class();
    assert_eq!(per_class[1].precision, Score::undefined(NEVER_PREDICTED));
    assert_eq!(per_class[1].recall, Score::defined(0.0));
    assert_eq!(per_class[1].f1, Score::defined(0.0));
    assert_eq!(per_class[2].recall, Score::undefined(ABSENT_FROM_TRUTH));
    assert_eq!(per_class[2].f1, Score::undefined(ABSENT_EVERYWHERE));
    // Predictions all one class: MCC has a zero denominator; kappa is defined (0).
    assert_eq!(
        m.matthews_correlation(),
        Score::undefined(MCC_ZERO_DENOMINATOR)
    );
    assert_eq!(m.cohen_kappa(), Score::defined(0.0));
    // Macro F1 over classes 0 and 1 (class 2 appears nowhere): (0.8 + 0) / 2.
    assert!(close(m.macro_f1(), 0.4, 1e-15));
    // Balanced accuracy over classes present in truth: (1 + 0) / 2.
    assert_eq!(m.balanced_accuracy(), 0.5);
    // All one class everywhere: kappa's expected agreement is 1.
    let single = ConfusionMatrix::from_labels(&[1, 1], &[1, 1], 2).unwrap();
    assert_eq!(single.cohen_kappa(), Score::undefined(KAPPA_NO_CHANCE_ROOM));
    let normalised = single.row_normalised();
    assert_eq!(normalised, vec![vec![0.0, 0.0], vec![0.0, 1.0]]);
    assert!(!format!("{}", single.cohen_kappa()).contains("NaN"));
}

#[test]
fn per_class_and_averages_by_hand() {
    // truth    0 0 0 1 1 2
    // predict  0 0 1 1 2 2
    // class 0: TP 2, FP 0, FN 1 -> P 1, R 2/3, F1 4/5
    // class 1: TP 1, FP 1, FN 1 -> P 1/2, R 1/2, F1 1/2
    // class 2: TP 1, FP 1, FN 0 -> P 1/2, R 1, F1 2/3
    let m = ConfusionMatrix::from_labels(&[0, 0, 0, 1, 1, 2], &[0, 0, 1, 1, 2, 2], 3).unwrap();
    let f1: Vec<f64> = m.per_class().iter().map(|c| c.f1.value).collect();
    assert_eq!(f1, vec![0.8, 0.5, 2.0 / 3.0]);
    assert!(close(m.macro_f1(), (0.8 + 0.5 + 2.0 / 3.0) / 3.0, 1e-15));
    assert!(close(
        m.weighted_f1(),
        (3.0 * 0.8 + 2.0 * 0.5 + 2.0 / 3.0) / 6.0,
        1e-15
    ));
    assert!(close(
        m.balanced_accuracy(),
        (2.0 / 3.0 + 0.5 + 1.0) / 3.0,
        1e-15
    ));
    assert_eq!(m.total(), 6);
    assert_eq!(m.supports(), vec![3, 2, 1]);
    assert_eq!(m.predicted_totals(), vec![2, 2, 2]);
    assert_eq!(m.row_normalised()[1], vec![0.0, 0.5, 0.5]);
}

#[test]
fn log_loss_and_brier_by_hand() {
    // An illustration recomputed from the definition (log-loss, Good
    // 1952): p = [0.01544932, 0.63116335, 0.35338733], true class 2,
    // loss 1.04019057 = -ln(0.35338733).
    let p = array![[0.01544932, 0.63116335, 0.35338733]];
    assert!(close(log_loss(&[2], p.view()).unwrap(), 1.04019057, 1e-7));
    // Brier by hand: 0.01544932^2 + 0.63116335^2 + (1 - 0.35338733)^2.
    let expected = 0.01544932f64.powi(2) + 0.63116335f64.powi(2) + 0.64661267f64.powi(2);
    assert!(close(brier_score(&[2], p.view()).unwrap(), expected, 1e-12));
    // Clipping: a certain mistake costs -ln(1e-15), not infinity.
    let certain = array![[1.0, 0.0]];
    assert!(close(
        log_loss(&[1], certain.view()).unwrap(),
        -(1e-15f64).ln(),
        1e-9
    ));
    // Brier of a certain mistake is 2, the top of its range.
    assert_eq!(brier_score(&[1], certain.view()).unwrap(), 2.0);
}

#[test]
fn one_vs_rest_auc_with_a_class_absent() {
    let truth = [0, 0, 1, 1];
    let p = array![
        [0.7, 0.2, 0.1],
        [0.5, 0.3, 0.2],
        [0.2, 0.7, 0.1],
        [0.4, 0.5, 0.1]
    ];
    let auc = one_vs_rest_auc(&truth, p.view()).unwrap();
    assert_eq!(auc.per_class[0], Score::defined(1.0));
    assert_eq!(auc.per_class[1], Score::defined(1.0));
    assert_eq!(auc.per_class[2], Score::undefined(AUC_CLASS_ABSENT));
    assert_eq!(auc.macro_average, Score::defined(1.0));
}

#[test]
fn classification_summary_in_one_call() {
    let truth = [0, 0, 1, 1, 1];
    let p = array![[0.9, 0.1], [0.4, 0.6], [0.3, 0.7], [0.2, 0.8], [0.6, 0.4]];
    let s = ClassificationMetrics::from_probabilities(&truth, p.view())
        .unwrap()
        .with_class_names(&["no", "yes"])
        .unwrap();
    assert_eq!(s.accuracy, 0.6);
    assert_eq!(s.confusion.counts(), &[vec![1, 1], vec![1, 2]]);
    // AUC by hand from column 1: positives (truth 1) .7 .8 .4, negatives .1 .6 -> pairs: .7>.1,.7>.6,.8>.1,.8>.6,.4>.1,.4<.6 -> U = 5, AUC 5/6.
    assert!(close(s.auc.unwrap(), 5.0 / 6.0, 1e-15));
    assert_eq!(s.per_class[1].name, "yes");
    assert_eq!(
        s.value("auc".parse().unwrap()).unwrap(),
        Score::defined(s.auc.unwrap())
    );
    assert_eq!(
        s.value(" Balanced-Accuracy ".parse().unwrap())
            .unwrap()
            .value,
        s.balanced_accuracy
    );
    assert!(s.notes.is_empty());
    // A malformed confusion matrix is refused.
    assert!(ConfusionMatrix::from_counts(vec![vec![1, 1], vec![1]]).is_err());
}

#[test]
fn classification_summary_notes_and_labels_only() {
    let s = ClassificationMetrics::from_labels(&[0, 0], &[0, 0], 2).unwrap();
    let lines = s.note_lines();
    assert!(lines
        .iter()
        .any(|l| l.starts_with("precision of class 1 (\"1\"): class never predicted")));
    let mcc = s.value("mcc".parse().unwrap()).unwrap();
    assert_eq!(mcc, Score::undefined(MCC_ZERO_DENOMINATOR));
    let kappa = s.value("kappa".parse().unwrap()).unwrap();
    assert_eq!(kappa, Score::undefined(KAPPA_NO_CHANCE_ROOM));
    let err = s
        .value("log_loss".parse().unwrap())
        .unwrap_err()
        .to_string();
    assert!(err.contains("needs class probabilities"), "{err}");
    let err = s.value("rmse".parse().unwrap()).unwrap_err().to_string();
    assert!(err.contains("is a regression metric"), "{err}");
    // The binary AUC of a one-class truth is flagged, not an error.
    let p = array![[0.9, 0.1], [0.4, 0.6]];
    let s = ClassificationMetrics::from_probabilities(&[0, 0], p.view()).unwrap();
    assert_eq!(
        s.value("auc".parse().unwrap()).unwrap(),
        Score::undefined(AUC_ONE_CLASS)
    );
}

#[test]
fn metric_names_round_trip_and_direction() {
    for m in Metric::ALL {
        assert_eq!(Metric::from_name(m.name()).unwrap(), m);
        assert_eq!(m.to_string().parse::<Metric>().unwrap(), m);
    }
    assert_eq!(
        Metric::from_name("RMSE").unwrap(),
        Metric::RootMeanSquaredError
    );
    assert!(!Metric::LogLoss.higher_is_better());
    assert!(!Metric::Brier.higher_is_better());
    assert!(Metric::Auc.higher_is_better() && Metric::Auc.needs_probabilities());
    assert!(Metric::RSquared.is_regression() && Metric::RSquared.higher_is_better());
    let err = Metric::from_name("acuracy").unwrap_err().to_string();
    assert!(
            err.starts_with("option metric = acuracy: must be one of accuracy, balanced_accuracy, macro_f1, weighted_f1, log_loss, brier, auc, mcc, kappa, mean_squared_error"),
            "{err}"
        );
    let mut aucs = vec![0.6, 0.9, 0.7];
    aucs.sort_by(|a, b| Metric::Auc.best_first(*a, *b));
    assert_eq!(aucs, vec![0.9, 0.7, 0.6]);
}

#[test]
fn regression_by_hand() {
    // truth 1 2 3 4, predicted 1 2 3 5: SS_res 1, mean 2.5, SS_tot 5.
    let truth = [1.0, 2.0, 3.0, 4.0];
    let predicted = [1.0, 2.0, 3.0, 5.0];
    assert_eq!(mean_squared_error(&truth, &predicted).unwrap(), 0.25);
    assert_eq!(root_mean_squared_error(&truth, &predicted).unwrap(), 0.5);
    assert_eq!(mean_absolute_error(&truth, &predicted).unwrap(), 0.25);
    assert_eq!(r_squared(&truth, &predicted).unwrap(), Score::defined(0.8));
    let s = RegressionMetrics::from_slices(&truth, &predicted).unwrap();
    assert_eq!(s.value("r2".parse().unwrap()).unwrap(), Score::defined(0.8));
    assert_eq!(s.value("mae".parse().unwrap()).unwrap().value, 0.25);
    assert!(s.value("accuracy".parse().unwrap()).is_err());
    // Constant truth: R^2 flagged.
    assert_eq!(
        r_squared(&[2.0, 2.0], &[2.0, 3.0]).unwrap(),
        Score::undefined(R_SQUARED_CONSTANT)
    );
}

#[test]
fn regression_multi_output_averages_columns() {
    let truth = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0], [4.0, 5.0]];
    let predicted = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0], [5.0, 7.0]];
    let s = RegressionMetrics::from_arrays(truth.view(), predicted.view()).unwrap();
    // Column 0: MSE 0.25, RMSE 0.5; column 1: MSE 1, RMSE 1, R^2 undefined (constant).
    assert_eq!(s.mean_squared_error, 0.625);
    assert_eq!(s.root_mean_squared_error, 0.75);
    assert_eq!(s.r_squared, 0.8);
    assert_eq!(
        s.notes,
        vec![Note::new("r_squared", Some(1), R_SQUARED_CONSTANT)]
    );
    assert!(s.value("r_squared".parse().unwrap()).unwrap().is_defined());
}

#[test]
fn errors_name_what_is_wrong_and_the_valid_range() {
    let e = ConfusionMatrix::from_labels(&[0, 1], &[0], 2)
        .unwrap_err()
        .to_string();
    assert_eq!(
        e,
        "confusion matrix: truth has 2 values but predicted has 1; give one of each per sample"
    );
    let e = ConfusionMatrix::from_labels(&[0, 3], &[0, 1], 3)
        .unwrap_err()
        .to_string();
    assert_eq!(
            e,
            "confusion matrix: true label 3 at position 1 is not a class; with 3 classes labels must be in 0..3 (0 to 2)"
        );
    let e = ConfusionMatrix::from_labels(&[], &[], 2)
        .unwrap_err()
        .to_string();
    assert!(e.contains("no samples"), "{e}");
    let e = ConfusionMatrix::from_labels(&[0], &[0], 1)
        .unwrap_err()
        .to_string();
    assert!(
        e.starts_with("option n_classes = 1: must be at least 2"),
        "{e}"
    );
    let e = ConfusionMatrix::from_counts(vec![vec![1, 2], vec![3]])
        .unwrap_err()
        .to_string();
    assert!(e.contains("row 1 has 1 counts but there are 2 rows"), "{e}");

    let p = array![[0.5, 0.5], [0.2, 0.8]];
    let e = log_loss(&[0], p.view()).unwrap_err().to_string();
    assert_eq!(
            e,
            "log-loss: class probabilities (one row per true label): expected 1 rows x 2 columns, found 2 x 2"
        );
    let e = log_loss(&[0, 2], p.view()).unwrap_err().to_string();
    assert!(
        e.contains(
            "true label 2 at position 1 is not a class; with 2 classes labels must be in 0..2"
        ),
        "{e}"
    );
    let raw = array![[2.0, -1.0]];
    let e = brier_score(&[0], raw.view()).unwrap_err().to_string();
    assert!(
        e.contains("probability 2 at row 0, column 0 is not in [0, 1]"),
        "{e}"
    );
    let unnormalised = array![[0.5, 0.4]];
    let e = log_loss(&[0], unnormalised.view()).unwrap_err().to_string();
    assert!(
        e.contains("row 0 of the class probabilities sums to 0.9, not 1"),
        "{e}"
    );
    let narrow = Array2::<f64>::ones((2, 1));
    let e = log_loss(&[0, 0], narrow.view()).unwrap_err().to_string();
    assert!(e.contains("one column per class, at least 2"), "{e}");

    let e = roc_curve(&[0.1, 0.2], &[true, true])
        .unwrap_err()
        .to_string();
    assert_eq!(
            e,
            "ROC curve: the labels hold 2 positive and 0 negative samples; a ROC curve needs at least one of each"
        );
    let e = roc_curve(&[0.1, f64::NAN], &[true, false])
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("score value NaN at position 1 is not a finite number"),
        "{e}"
    );
    let e = precision_recall_curve(&[0.1], &[false])
        .unwrap_err()
        .to_string();
    assert!(e.contains("no positive sample"), "{e}");
    let e = mean_squared_error(&[1.0], &[]).unwrap_err().to_string();
    assert!(e.contains("truth has 1 values but predicted has 0"), "{e}");
    let e = ClassificationMetrics::from_labels(&[0, 1], &[0, 1], 2)
        .unwrap()
        .with_class_names(&["a"])
        .unwrap_err()
        .to_string();
    assert!(e.contains("1 names given for 2 classes"), "{e}");
    let m = ConfusionMatrix::from_labels(&[0, 1], &[0, 1], 2).unwrap();
    let e = m.binary_counts(2).unwrap_err().to_string();
    assert!(e.contains("must be in 0..2"), "{e}");
}
