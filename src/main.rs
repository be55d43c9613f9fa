fn main() {
    // Parsing and lowering are bounded (see syntax::parser::Limits); a
    // roomy stack is a second line of defence, not the first.
    let child = std::thread::Builder::new()
        .stack_size(64 * 1024 * 1024)
        .spawn(|| ohmsheet::cli::main_with(std::env::args_os().collect()));
    let code = match child {
        Ok(h) => h.join().unwrap_or(101),
        Err(_) => ohmsheet::cli::main_with(std::env::args_os().collect()),
    };
    std::process::exit(code);
}
