//! Running the real `hazebook` binary from integration tests.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The binary, with a clean environment for reproducible documents and no progress bar.
pub fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_hazebook"));
    c.env_remove("SOURCE_DATE_EPOCH").env("CI", "true");
    c
}

/// The bundled (invented) sample inputs.
#[allow(dead_code)] // not every test crate that includes this module reads the samples
pub fn samples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-inputs")
}

/// Run the binary in `cwd` and collect its output.
pub fn run(args: &[&str], cwd: &Path) -> Output {
    bin()
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("binary runs")
}

/// Lossy UTF-8 of a stream.
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}
