//! Every command's `--help` teaches by example: an "Examples:" block whose first
//! example runs that very command.

use std::process::Command;

#[test]
fn every_command_help_ends_with_examples_of_itself() {
    for cmd in [
        "inspect",
        "flatten",
        "compare",
        "reflatten",
        "batch",
        "serve",
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_polyflat"))
            .args([cmd, "--help"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "{cmd} --help");
        let help = String::from_utf8_lossy(&out.stdout);
        let examples = help
            .split_once("Examples:\n")
            .unwrap_or_else(|| panic!("{cmd} --help has no Examples block:\n{help}"))
            .1;
        assert!(
            examples
                .trim_start()
                .starts_with(&format!("polyflat {cmd} ")),
            "{cmd} --help examples:\n{examples}"
        );
    }
}
