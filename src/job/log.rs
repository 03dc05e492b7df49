//! Messages: stderr for people, an optional log file for schedulers, a progress bar only on a
//! terminal.

use std::fs::File;
use std::io::{IsTerminal, Write};
use std::path::Path;
use std::sync::Mutex;

use anyhow::Context;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Where messages go.
pub struct Log {
    quiet: bool,
    file: Option<Mutex<File>>,
}

impl Log {
    /// `quiet` keeps stderr to errors only; `path` appends timestamped lines to a log file.
    pub fn new(quiet: bool, path: Option<&Path>) -> anyhow::Result<Self> {
        let file = match path {
            Some(p) => Some(Mutex::new(
                File::options()
                    .create(true)
                    .append(true)
                    .open(p)
                    .with_context(|| format!("{}: cannot open the log file", p.display()))?,
            )),
            None => None,
        };
        Ok(Self { quiet, file })
    }

    fn to_file(&self, level: &str, msg: &str) {
        if let Some(f) = &self.file
            && let Ok(mut f) = f.lock()
        {
            let now = chrono::Utc::now().format("%Y-%m-%dT%H:%M:%SZ");
            for line in msg.lines() {
                let _ = writeln!(f, "{now} {level:<5} {line}");
            }
        }
    }

    /// Progress and what was understood.
    pub fn info(&self, msg: &str) {
        if !self.quiet {
            eprintln!("{msg}");
        }
        self.to_file("INFO", msg);
    }

    /// Something the user should look at; the run goes on.
    pub fn warn(&self, msg: &str) {
        if !self.quiet {
            eprintln!("warning: {msg}");
        }
        self.to_file("WARN", msg);
    }

    /// The run cannot continue.
    pub fn error(&self, msg: &str) {
        self.to_file("ERROR", msg);
    }

    /// Pass a command's outcome through, writing a failure and `what` failed; nothing was
    /// written` to the log file first (stderr gets the error from `main`).
    pub fn outcome<T>(&self, what: &str, r: anyhow::Result<T>) -> anyhow::Result<T> {
        if let Err(e) = &r {
            self.error(&format!("{e:#}"));
            self.error(&format!("{what} failed; nothing was written"));
        }
        r
    }

    /// A progress bar on a terminal (never under cron, in CI, in quiet mode or in the log).
    pub fn progress(&self, len: u64, what: &str) -> ProgressBar {
        let on_terminal = std::io::stderr().is_terminal() && std::env::var_os("CI").is_none();
        if self.quiet || !on_terminal {
            return ProgressBar::with_draw_target(Some(len), ProgressDrawTarget::hidden());
        }
        let pb = ProgressBar::new(len);
        if let Ok(style) = ProgressStyle::with_template(
            "{msg:>8} [{bar:30}] {pos}/{len} rows ({per_sec}, {eta} left)",
        ) {
            pb.set_style(style.progress_chars("=> "));
        }
        pb.set_message(what.to_string());
        pb
    }
}
