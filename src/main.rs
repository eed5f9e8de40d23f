use clap::Parser;

fn main() {
    let cli = mucurve::cli::Cli::parse();
    if let Err(failure) = mucurve::cli::run(cli) {
        eprintln!("error: {}", failure);
        std::process::exit(failure.code);
    }
}
