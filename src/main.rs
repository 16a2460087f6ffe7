//! The `nearsky` binary: parses the command line and hands over to [`nearsky::cli`].

fn main() -> std::process::ExitCode {
    nearsky::cli::main()
}
