//! stratanet's integration tests, in one binary (see DEVELOPERS.md).
//!
//! Every check against an outside source names it beside the check.

mod architecture;
mod arithmetic;
mod classic_problems;
mod cli;
mod cli_safety;
mod coverage;
mod csv_errors;
mod demo_data;
mod determinism;
mod diabetes;
mod fast_kernels;
mod fuzz_replay;
mod gradients;
mod honest;
mod hostile;
mod iris;
mod leak_free;
mod magic;
mod model_files;
mod nothing_lost;
mod portable;
mod properties;
mod report_page;
mod rerun;
mod restarts;
mod support;
mod sweeps;
mod tables;
mod validation;
mod worked_examples;
