//! The `termsight` command. All the work is in the library; see [`termsight::cli`].

fn main() -> std::process::ExitCode {
    termsight::cli::main()
}
