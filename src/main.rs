//! The `loopwright` binary: a thin shell over [`loopwright::cli`].

fn main() {
    std::process::exit(loopwright::cli::main_with_args(std::env::args_os()));
}
