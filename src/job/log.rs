//! Messages: stderr for people, an optional log file for schedulers, a progress bar only on a
//! terminal. Control characters in messages are shown escaped ([`escape_controls`]), so a site
//! name or cell text cannot forge log lines or move the terminal's cursor.

use std::borrow::Cow;
use std::fs::File;
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

use anyhow::Context;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Where messages go.
pub struct Log {
    quiet: bool,
    file: Mutex<LogFile>,
    inputs: Mutex<Vec<PathBuf>>,
}

/// The log file: lines are held back until the file is known not to be an input or an output
/// of the run ([`Log::confirm`]); only then is it opened and appended to.
enum LogFile {
    None,
    Pending { path: PathBuf, lines: Vec<String> },
    Open(File),
}

impl Log {
    /// `quiet` keeps stderr to errors only; `path` appends timestamped lines to a log file,
    /// once [`Log::confirm`] has checked it against `inputs` (those known now, such as the
    /// command line's job file; more with [`Log::add_inputs`]) and the outputs.
    pub fn new(quiet: bool, path: Option<&Path>, inputs: &[PathBuf]) -> anyhow::Result<Self> {
        let file = match path {
            Some(p) => LogFile::Pending {
                path: p.to_path_buf(),
                lines: Vec::new(),
            },
            None => LogFile::None,
        };
        Ok(Self {
            quiet,
            file: Mutex::new(file),
            inputs: Mutex::new(inputs.to_vec()),
        })
    }

    /// More inputs the log file must not be (the files a job reads, its template).
    pub fn add_inputs(&self, more: &[PathBuf]) {
        self.inputs
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
            .extend_from_slice(more);
    }

    /// Check the log file against the inputs and `outputs` of the run: when it is one of them,
    /// nothing is ever written to it and the run stops; otherwise it is opened, the lines held
    /// back are written and later ones follow.
    ///
    /// Errors: the log file is an input or an output of the run (naming both), or cannot be
    /// opened.
    pub fn confirm(&self, outputs: &[(&str, PathBuf)]) -> anyhow::Result<()> {
        let mut f = self.lock();
        let LogFile::Pending { path, .. } = &*f else {
            return Ok(());
        };
        let path = path.clone();
        let mut all: Vec<(&str, PathBuf)> = vec![("log file", path.clone())];
        all.extend(outputs.iter().cloned());
        let inputs = self
            .inputs
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
            .clone();
        if let Err(m) = super::output::check_outputs(&all, &inputs) {
            *f = LogFile::None;
            anyhow::bail!(m);
        }
        let opened = File::options().create(true).append(true).open(&path);
        let LogFile::Pending { lines, .. } = std::mem::replace(&mut *f, LogFile::None) else {
            return Ok(());
        };
        let mut file =
            opened.with_context(|| format!("{}: cannot open the log file", path.display()))?;
        for l in &lines {
            let _ = writeln!(file, "{l}");
        }
        *f = LogFile::Open(file);
        Ok(())
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, LogFile> {
        self.file
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
    }

    fn to_file(&self, level: &str, msg: &str) {
        let mut f = self.lock();
        if matches!(*f, LogFile::None) {
            return;
        }
        let now = chrono::Utc::now().format("%Y-%m-%dT%H:%M:%SZ");
        for line in escape_controls(msg).lines() {
            let l = format!("{now} {level:<5} {line}");
            match &mut *f {
                LogFile::Pending { lines, .. } => lines.push(l),
                LogFile::Open(file) => {
                    let _ = writeln!(file, "{l}");
                }
                LogFile::None => {}
            }
        }
    }

    /// Progress and what was understood.
    pub fn info(&self, msg: &str) {
        if !self.quiet {
            eprintln!("{}", escape_controls(msg));
        }
        self.to_file("INFO", msg);
    }

    /// Something the user should look at; the run goes on.
    pub fn warn(&self, msg: &str) {
        if !self.quiet {
            eprintln!("warning: {}", escape_controls(msg));
        }
        self.to_file("WARN", msg);
    }

    /// The run cannot continue.
    pub fn error(&self, msg: &str) {
        self.to_file("ERROR", msg);
    }

    /// Pass a command's outcome through, writing a failure and `what` failed; nothing was
    /// written` to the log file first (stderr gets the error from `main`). A log file not yet
    /// confirmed is checked against the inputs known so far first, so a run that fails early
    /// does not append to its input either.
    pub fn outcome<T>(&self, what: &str, r: anyhow::Result<T>) -> anyhow::Result<T> {
        if let Err(e) = &r {
            if self.confirm(&[]).is_err() {
                return r;
            }
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

/// Show control characters as escapes: `\r`, `\t` and other C0/C1 controls, Unicode bidi
/// overrides and isolates (U+202A–U+202E, U+2066–U+2069) become `\r`, `\t`, `\u{1b}`, …. A
/// newline is kept only where it starts an indented continuation line (the message's own
/// layout, as in `error: …\n       Fix the job file…`); any other newline is shown as `\n`, so
/// no text from an input can start a line of its own in the log or on the terminal.
pub fn escape_controls(s: &str) -> Cow<'_, str> {
    let bidi = |c: char| matches!(c, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}');
    if !s.chars().any(|c| c.is_control() || bidi(c)) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\n' if chars.peek().is_some_and(|n| *n == ' ') => out.push('\n'),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if c.is_control() || bidi(c) => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn controls_are_escaped_and_continuations_kept() {
        assert_eq!(escape_controls("plain"), "plain");
        assert_eq!(
            escape_controls("site Gull\n2026-12-01T00:00:00Z INFO  done"),
            "site Gull\\n2026-12-01T00:00:00Z INFO  done"
        );
        assert_eq!(escape_controls("a\r\tb\u{1b}[2J"), "a\\r\\tb\\u{1b}[2J");
        assert_eq!(escape_controls("x\u{202E}y"), "x\\u{202e}y");
        assert_eq!(
            escape_controls("bad job\n       Fix the job file"),
            "bad job\n       Fix the job file"
        );
    }
}
