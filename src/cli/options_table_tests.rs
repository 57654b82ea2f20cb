//! Every network and training flag reaches the library (issue 19): a table
//! of flags, each parsed as typed and turned into `FitOptions`, with the
//! field it must set; and a check that the table covers every flag of the
//! group, so a new flag without a row fails here.

use super::*;
use crate::cli::args::{Cli, Command, NetArgs};
use crate::data::Scaling;
use crate::fit::{Calibration, ClassWeights, ThresholdTarget};
use crate::network::{Activation, Arithmetic, Init, Precision};
use crate::train::{BatchSize, Loss, Optimiser, Schedule};
use clap::{Args, Parser};

fn options(extra: &[&str]) -> Result<FitOptions> {
    let mut argv = vec!["stratanet", "fit", "table.csv", "--target", "y"];
    argv.extend_from_slice(extra);
    let cli = Cli::try_parse_from(argv).map_err(|e| Error::input("flags", e.to_string()))?;
    match cli.command {
        Command::Fit(f) => fit_options(&f.net),
        _ => unreachable!("parsed as fit"),
    }
}

type Check = fn(&FitOptions) -> bool;

/// (flag, value, what the options must then hold). The values differ from
/// the defaults, so a flag that is dropped fails its row.
const TABLE: &[(&str, &str, Check)] = &[
    ("--hidden", "7,3", |o| o.hidden_layers == [7, 3]),
    ("--activation", "relu", |o| o.activation == Activation::Relu),
    ("--init", "small:0.3", |o| {
        o.init == Init::SmallUniform { range: 0.3 }
    }),
    ("--scaling", "min-max", |o| o.scaling == Scaling::MinMax),
    ("--target-scaling", "none", |o| {
        o.target_scaling == Scaling::None
    }),
    ("--class-weights", "balanced", |o| {
        o.class_weights == ClassWeights::Balanced
    }),
    ("--calibration", "temperature", |o| {
        o.calibration == Calibration::Temperature
    }),
    ("--target-recall", "0.9", |o| {
        o.threshold_target == Some(ThresholdTarget::Recall(0.9))
    }),
    ("--target-precision", "0.8", |o| {
        o.threshold_target == Some(ThresholdTarget::Precision(0.8))
    }),
    ("--positive-class", "yes", |o| {
        o.positive_class.as_deref() == Some("yes")
    }),
    ("--precision", "f32", |o| o.precision == Precision::F32),
    ("--arithmetic", "fast", |o| {
        o.training.arithmetic == Arithmetic::Fast
    }),
    ("--epochs", "77", |o| o.training.epochs == 77),
    ("--batch-size", "full", |o| {
        o.training.batch_size == Some(BatchSize::Full)
    }),
    ("--learning-rate", "0.125", |o| {
        o.training.learning_rate == 0.125
    }),
    ("--optimiser", "nesterov:0.7", |o| {
        o.training.optimiser == Optimiser::Nesterov { mu: 0.7 }
    }),
    ("--schedule", "step:10:0.5", |o| {
        o.training.schedule
            == Schedule::Step {
                every: 10,
                factor: 0.5,
            }
    }),
    ("--loss", "squared_error", |o| {
        o.training.loss == Some(Loss::SquaredError)
    }),
    ("--weight-decay", "0.25", |o| {
        o.training.weight_decay == 0.25
    }),
    ("--l1-penalty", "0.0625", |o| {
        o.training.l1_penalty == 0.0625
    }),
    ("--validation-share", "0.3", |o| {
        o.validation_share == Some(0.3)
    }),
    ("--patience", "9", |o| {
        o.training.early_stopping.map(|e| e.patience) == Some(9)
    }),
    ("--min-improvement", "0.001", |o| {
        o.training.early_stopping.map(|e| e.min_improvement) == Some(0.001)
    }),
    ("--no-early-stopping", "", |o| {
        o.training.early_stopping.is_none()
    }),
    ("--restarts", "4", |o| o.restarts == 4),
];

#[test]
fn every_network_flag_sets_its_option() {
    let defaults = options(&[]).unwrap();
    for (flag, value, check) in TABLE {
        let mut argv: Vec<&str> = if value.is_empty() {
            vec![flag]
        } else {
            vec![flag, value]
        };
        // The positive class only means something with a threshold target.
        if *flag == "--positive-class" {
            argv.extend(["--target-recall", "0.9"]);
        }
        let o = options(&argv).unwrap_or_else(|e| panic!("{flag} {value}: {e}"));
        assert!(check(&o), "{flag} {value} did not reach the options: {o:?}");
        // Without the flag, the option is not already so.
        assert!(
            !check(&defaults),
            "{flag}: the default already passes its row"
        );
    }
}

// --seed is read by the command, not by FitOptions: it is checked end to end
// in the command-line tests; every other flag of the group has a row above.
#[test]
fn the_table_covers_every_network_flag() {
    let group = NetArgs::augment_args(clap::Command::new("net"));
    let mut missing = Vec::new();
    for arg in group.get_arguments() {
        let Some(long) = arg.get_long() else { continue };
        let flag = format!("--{long}");
        if flag != "--seed" && !TABLE.iter().any(|(f, _, _)| *f == flag) {
            missing.push(flag);
        }
    }
    assert!(
        missing.is_empty(),
        "flags with no row in the table: {missing:?}"
    );
}

// Values out of range are refused at the front door, naming the flag's option.
#[test]
fn out_of_range_values_are_refused() {
    for (argv, option) in [
        (&["--weight-decay=-1"][..], "weight_decay"),
        (&["--l1-penalty=-0.5"][..], "l1_penalty"),
        (&["--learning-rate", "0"][..], "learning_rate"),
        (&["--patience", "0"][..], "patience"),
        (&["--no-early-stopping", "--patience", "5"][..], "patience"),
    ] {
        let err = options(argv).unwrap_err().to_string();
        assert!(err.contains(option), "{argv:?}: {err}");
    }
    // Schedules and optimisers out of range are refused by clap with the
    // library's reason.
    for argv in [
        &["--schedule", "exponential:0"][..],
        &["--schedule", "step:0:0.5"][..],
        &["--optimiser", "momentum:1"][..],
    ] {
        assert!(options(argv).is_err(), "{argv:?} was accepted");
    }
}
