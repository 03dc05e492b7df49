//! Output naming and safe writing: temporary file + rename, a lock per output folder, and
//! refusal to write over an input.

use std::fs::File;
use std::path::{Path, PathBuf};

/// Values of the tokens of an output name.
#[derive(Debug, Clone, Default)]
pub struct NameTokens {
    pub job: String,
    pub site: Option<String>,
    pub period: Option<String>,
    pub date: String,
}

/// Expand `{job}`, `{site}`, `{period}` and `{date}` in an output name. A token whose value is
/// absent is dropped with the separator before it (`a-{period}.xlsx` → `a.xlsx`), so names
/// stay tidy without a period.
///
/// Errors: an unknown `{token}`.
pub fn expand_name(pattern: &str, t: &NameTokens) -> Result<String, String> {
    let mut out = String::new();
    let mut rest = pattern;
    while let Some(open) = rest.find('{') {
        out.push_str(&rest[..open]);
        let Some(close) = rest[open..].find('}') else {
            return Err(format!("output name {pattern:?}: unclosed '{{'"));
        };
        let token = &rest[open + 1..open + close];
        let value = match token {
            "job" => Some(t.job.clone()),
            "site" => t.site.clone(),
            "period" => t.period.clone(),
            "date" => Some(t.date.clone()),
            other => {
                return Err(format!(
                    "output name {pattern:?}: unknown token {{{other}}}; known: {{job}}, {{site}}, {{period}}, {{date}}"
                ));
            }
        };
        match value {
            Some(v) => out.push_str(&sanitise(&v)),
            None => {
                while out.ends_with(['-', '_', '.', ' ']) {
                    out.pop();
                }
            }
        }
        rest = &rest[open + close + 1..];
    }
    out.push_str(rest);
    Ok(out)
}

/// Keep names portable: letters, digits, `-`, `_`, `.`; everything else becomes `_`.
pub fn sanitise(s: &str) -> String {
    s.chars()
        .map(|c| {
            if c.is_alphanumeric() || matches!(c, '-' | '_' | '.') {
                c
            } else {
                '_'
            }
        })
        .collect()
}

/// An exclusive lock on an output folder, held while a run writes there, so two runs on the
/// same outputs do not interleave; the later one waits and then replaces the files whole.
pub struct FolderLock {
    _file: File,
    path: PathBuf,
}

impl FolderLock {
    /// Take the lock, waiting for another run to finish.
    pub fn acquire(dir: &Path) -> std::io::Result<Self> {
        let path = dir.join(".hazebook.lock");
        let file = File::options()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&path)?;
        file.lock()?;
        Ok(Self { _file: file, path })
    }

    pub fn path(&self) -> &Path {
        &self.path
    }
}

/// Whether `output` would overwrite one of `inputs` (compared after resolving links).
pub fn overwrites_input(output: &Path, inputs: &[PathBuf]) -> Option<PathBuf> {
    let out = normalise(output);
    inputs.iter().find(|i| normalise(i) == out).cloned()
}

fn normalise(p: &Path) -> PathBuf {
    if let Ok(c) = p.canonicalize() {
        return c;
    }
    // The output may not exist yet: resolve its folder.
    match (p.parent(), p.file_name()) {
        (Some(dir), Some(name)) => {
            let dir = if dir.as_os_str().is_empty() {
                Path::new(".")
            } else {
                dir
            };
            dir.canonicalize()
                .map(|d| d.join(name))
                .unwrap_or_else(|_| p.to_path_buf())
        }
        _ => p.to_path_buf(),
    }
}

/// Write bytes atomically: temporary file in the same folder, flushed, then renamed.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    use std::io::Write;
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let mut tmp = tempfile::Builder::new()
        .prefix(".hazebook-")
        .suffix(".tmp")
        .tempfile_in(dir)?;
    tmp.write_all(bytes)?;
    tmp.as_file().sync_all()?;
    set_readable(tmp.as_file())?;
    tmp.persist(path).map_err(|e| e.error)?;
    Ok(())
}

/// Temporary files are created private (0600); a finished output is as readable as any file
/// the user writes (0644 before the umask is not consulted: collaborators must read reports).
pub fn set_readable(file: &File) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        file.set_permissions(std::fs::Permissions::from_mode(0o644))?;
    }
    #[cfg(not(unix))]
    let _ = file;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tokens(period: Option<&str>, site: Option<&str>) -> NameTokens {
        NameTokens {
            job: "estuary".into(),
            site: site.map(Into::into),
            period: period.map(Into::into),
            date: "2026-12-01".into(),
        }
    }

    #[test]
    fn tokens_expand() {
        let n = expand_name(
            "{job}-{site}-{period}.xlsx",
            &tokens(Some("2026-11"), Some("Gull Spit")),
        )
        .unwrap();
        assert_eq!(n, "estuary-Gull_Spit-2026-11.xlsx");
    }

    #[test]
    fn absent_tokens_drop_their_separator() {
        let n = expand_name("{job}-{period}-report.xlsx", &tokens(None, None)).unwrap();
        assert_eq!(n, "estuary-report.xlsx");
    }

    #[test]
    fn unknown_token_is_an_error() {
        assert!(
            expand_name("{jobb}.xlsx", &tokens(None, None))
                .unwrap_err()
                .contains("{jobb}")
        );
    }

    #[test]
    fn atomic_write_replaces_whole() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("a.txt");
        write_atomic(&p, b"one").unwrap();
        write_atomic(&p, b"two").unwrap();
        assert_eq!(std::fs::read(&p).unwrap(), b"two");
        let leftovers: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(leftovers.len(), 1);
    }

    #[test]
    fn input_is_detected_through_relative_paths() {
        let dir = tempfile::tempdir().unwrap();
        let input = dir.path().join("in.xlsx");
        std::fs::write(&input, b"x").unwrap();
        let via = dir.path().join(".").join("in.xlsx");
        assert!(overwrites_input(&via, std::slice::from_ref(&input)).is_some());
        assert!(overwrites_input(&dir.path().join("out.xlsx"), &[input]).is_none());
    }
}
