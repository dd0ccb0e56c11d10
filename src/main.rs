use clap::Parser;

fn main() {
    let cli = polyflat::cli::Cli::parse();
    std::process::exit(polyflat::cli::run(cli));
}
