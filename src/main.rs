//! The `mixband` command; everything it does lives in the library.

fn main() {
    std::process::exit(mixband::cli::main_with_args(std::env::args_os()));
}
