fn main() {
    std::process::exit(skybearing::cli::main());
}
