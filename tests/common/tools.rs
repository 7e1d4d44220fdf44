//! Outside reference tools a test runs (ngspice, a Python with numpy and
//! scipy, a browser): found, or the check skipped with a message, unless the
//! named environment variable asks for the tool (CI sets it), when the test
//! fails instead.

use std::process::Command;

/// Whether `program args` runs and exits successfully.
pub fn runs(program: &str, args: &[&str]) -> bool {
    Command::new(program).args(args).output().is_ok_and(|o| o.status.success())
}

/// `found`, or a skip message (a failure when `require_var` is set).
pub fn found_or_skipped<T>(
    found: Option<T>,
    require_var: &str,
    what: &str,
    install: &str,
) -> Option<T> {
    if found.is_none() {
        assert!(
            std::env::var_os(require_var).is_none(),
            "{what} is required ({require_var} is set) but not installed"
        );
        eprintln!("{what} not installed: check skipped ({install})");
    }
    found
}

/// ngspice on the PATH (Debian's `ngspice`), required by
/// `RIPPLECTL_REQUIRE_NGSPICE`.
pub fn ngspice_available() -> bool {
    let found = runs("ngspice", &["--version"]).then_some(());
    found_or_skipped(found, "RIPPLECTL_REQUIRE_NGSPICE", "ngspice", "apt-get install ngspice")
        .is_some()
}
