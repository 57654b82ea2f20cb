//! A classifier with a decision rule is scored on the classes it would
//! choose. The check is by definition (accuracy is the share of rows whose
//! chosen class is the true one; common practice, no source), on a rule
//! that always chooses one class, so the expected accuracy is that class's
//! share of the rows, counted here.

use super::cv::Scores;
use crate::data::CsvOptions;
use crate::fit::{fit, CostMatrix, FitOptions};
use crate::rng::seeded_rng;

fn table() -> String {
    let mut text = String::from("x,y\n");
    for i in 0..40 {
        let x = f64::from(i) / 40.0;
        text.push_str(&format!("{x},{}\n", if i < 28 { "low" } else { "high" }));
    }
    text
}

#[test]
fn scores_follow_the_decision_rule_not_the_most_probable_class() {
    let data = CsvOptions::new("y").read_str(&table(), "t.csv").unwrap();
    let options = FitOptions::default()
        .hidden(&[4])
        .early_stopping(None)
        .epochs(300);
    let model = fit(&data, &options, &mut seeded_rng(11))
        .unwrap()
        .into_model();
    let classes = model.target_names().to_vec();
    let (plain, _) = Scores::of(&model, &data).unwrap();
    // Choosing "high" costs 100 whatever the truth; choosing "low" costs 1
    // when the truth is "high": every row is decided "low".
    let high = classes.iter().position(|c| c == "high").unwrap();
    let costs: Vec<Vec<f64>> = (0..2)
        .map(|d| {
            (0..2)
                .map(|c| match (d == high, c == high) {
                    (true, _) => 100.0,
                    (false, true) => 1.0,
                    (false, false) => 0.0,
                })
                .collect()
        })
        .collect();
    let costs = CostMatrix::new(classes.clone(), classes.clone(), costs).unwrap();
    let decided = model.clone().with_costs(&costs).unwrap();
    let (by_rule, _) = Scores::of(&decided, &data).unwrap();
    let (Scores::Classification(plain), Scores::Classification(by_rule)) = (plain, by_rule) else {
        panic!("a classifier")
    };
    assert_eq!(by_rule.accuracy, 28.0 / 40.0, "every row decided \"low\"");
    assert!(plain.accuracy > by_rule.accuracy, "{}", plain.accuracy);
    // The probability scores do not depend on the rule.
    assert_eq!(plain.log_loss, by_rule.log_loss);
    assert_eq!(plain.auc, by_rule.auc);
}
