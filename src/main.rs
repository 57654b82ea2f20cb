//! The `stratanet` command line; see `stratanet --help` and the README.

fn main() {
    std::process::exit(stratanet::command_line_main());
}
