fn main() {
    std::process::exit(fluxpick::cli::main());
}
