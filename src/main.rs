use clap::Parser;

fn main() {
    restore_default_sigpipe();
    let cli = mucurve::cli::Cli::parse();
    if let Err(failure) = mucurve::cli::run(cli) {
        eprintln!("error: {}", failure);
        std::process::exit(failure.code);
    }
}

/// Rust ignores SIGPIPE, which turns a closed pipe (`mucurve library list | head`) into a panic
/// inside `println!`. A command-line tool should simply stop, as other Unix tools do.
fn restore_default_sigpipe() {
    #[cfg(unix)]
    // SAFETY: called first thing in main, before any other thread exists; SIG_DFL is a valid
    // disposition for SIGPIPE.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}
