#![no_main]
//! Fuzz target: see `stratanet_fuzz::harness::record_files` for what it checks.
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| stratanet_fuzz::harness::record_files(data));
