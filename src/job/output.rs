//! Output naming and safe writing: names kept inside the output folder and distinct per site,
//! every output staged as a temporary file and renamed into place with the others at the end,
//! a lock per output folder (removed when the run ends), removal of temporary files on
//! SIGINT/SIGTERM and of stale ones left by killed runs, and refusal to write over an input.

use std::collections::BTreeMap;
use std::fs::File;
use std::path::{Component, Path, PathBuf};
use std::sync::{Mutex, MutexGuard, OnceLock, PoisonError};

use sha2::Digest;

/// Prefix of every temporary file a run creates in an output folder.
pub const TEMP_PREFIX: &str = ".hazebook-";
/// Suffix of every temporary file a run creates in an output folder.
pub const TEMP_SUFFIX: &str = ".part";
/// Name of the lock file, present in an output folder only while a run writes there.
pub const LOCK_NAME: &str = ".hazebook.lock";
/// File-name form of a site (or other token) whose name has no visible character left.
pub const UNNAMED: &str = "unnamed";

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
/// stay tidy without a period. Token values are made safe with [`token_value`].
///
/// Errors: an unknown `{token}`; a pattern that is not a plain file name (a folder part, `..`,
/// an absolute path, a leading `.`), or an expanded name that is not one ([`check_file_name`]):
/// every output stays visible inside its output folder.
pub fn expand_name(pattern: &str, t: &NameTokens) -> Result<String, String> {
    check_pattern(pattern)?;
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
            Some(v) => out.push_str(&token_value(&v)),
            None => {
                while out.ends_with(['-', '_', '.', ' ']) {
                    out.pop();
                }
            }
        }
        rest = &rest[open + close + 1..];
    }
    out.push_str(rest);
    check_file_name(&out).map_err(|why| format!("output name {pattern:?} gives {out:?}: {why}"))?;
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

/// A token value as it goes into a file name: [`sanitise`]d, leading dots made `_` (so that
/// `.` or `..` cannot name a folder and no output is hidden), and [`UNNAMED`] when nothing is
/// left (an empty site name).
pub fn token_value(s: &str) -> String {
    let clean = sanitise(s);
    let dots = clean.len() - clean.trim_start_matches('.').len();
    let clean = format!("{}{}", "_".repeat(dots), &clean[dots..]);
    if clean.is_empty() {
        UNNAMED.to_string()
    } else {
        clean
    }
}

/// An output name pattern must be a file name: the folder is `--out` or `[report] folder`.
fn check_pattern(pattern: &str) -> Result<(), String> {
    let why = if pattern.trim().is_empty() {
        Some("it is empty")
    } else if pattern.contains(['/', '\\']) || Path::new(pattern).is_absolute() {
        Some(
            "it holds a folder part; give a file name and set the folder with --out or [report] folder",
        )
    } else if pattern.starts_with('.') {
        Some("it starts with '.', which would hide the output or name a folder")
    } else {
        None
    };
    match why {
        Some(w) => Err(format!("output name {pattern:?}: {w}")),
        None => Ok(()),
    }
}

/// A visible file name directly inside its folder: one plain path component, not starting
/// with `.`, with no separator or control character.
pub fn check_file_name(name: &str) -> Result<(), String> {
    let mut parts = Path::new(name).components();
    let plain = matches!(parts.next(), Some(Component::Normal(_))) && parts.next().is_none();
    if name.is_empty() {
        Err("the name is empty".into())
    } else if !plain || name.contains(['/', '\\']) {
        Err("not a plain file name inside the output folder".into())
    } else if name.starts_with('.') {
        Err("the name starts with '.', which would hide the output".into())
    } else if name.chars().any(char::is_control) {
        Err("the name holds a control character".into())
    } else {
        Ok(())
    }
}

/// File-name forms of site names that stay distinct: each site's [`token_value`], except that
/// sites whose forms coincide (letter case ignored, as on macOS and Windows file systems) get
/// `-` and the first 8 hex digits of the SHA-256 of their exact name appended — first those
/// whose name was changed by sanitising, then, if forms still coincide, all of them. The
/// result depends only on the set of names, so runs partitioned with `--site` over the same
/// inputs agree.
///
/// Errors: two sites whose forms still coincide (a hash collision; not expected).
pub fn site_file_names(sites: &[String]) -> Result<BTreeMap<String, String>, String> {
    let mut names: Vec<&String> = sites.iter().collect();
    names.sort();
    names.dedup();
    let mut map: BTreeMap<String, String> = names
        .iter()
        .map(|s| ((*s).clone(), token_value(s)))
        .collect();
    let hashed = |s: &str, form: &str| {
        let h = sha2::Sha256::digest(s.as_bytes());
        format!("{form}-{:02x}{:02x}{:02x}{:02x}", h[0], h[1], h[2], h[3])
    };
    for only_changed in [true, false] {
        let mut by_form: BTreeMap<String, Vec<String>> = BTreeMap::new();
        for (site, form) in &map {
            by_form
                .entry(form.to_lowercase())
                .or_default()
                .push(site.clone());
        }
        for group in by_form.values().filter(|g| g.len() > 1) {
            for site in group {
                if !only_changed || token_value(site) != *site {
                    let form = map[site].clone();
                    map.insert(site.clone(), hashed(site, &form));
                }
            }
        }
    }
    let mut seen: BTreeMap<String, &String> = BTreeMap::new();
    for (site, form) in &map {
        if let Some(other) = seen.insert(form.to_lowercase(), site) {
            return Err(format!(
                "sites {other:?} and {site:?} give the same file name {form:?}; rename one of them in the input"
            ));
        }
    }
    Ok(map)
}

/// An exclusive lock on an output folder, held while a run writes there, so two runs on the
/// same outputs do not interleave; the later one waits and then replaces the files whole.
///
/// The lock file ([`LOCK_NAME`]) exists only while a run holds it: it is removed, still
/// locked, when the lock is dropped, and a waiting run that then holds a removed file tries
/// again on a new one. While a lock is held, SIGINT, SIGTERM and SIGHUP remove the temporary
/// files of the run and the lock file before the process exits (status 128 + signal number).
pub struct FolderLock {
    file: Option<File>,
    path: PathBuf,
    dir: PathBuf,
}

impl FolderLock {
    /// Take the lock, waiting for another run to finish.
    pub fn acquire(dir: &Path) -> std::io::Result<Self> {
        let path = dir.join(LOCK_NAME);
        let dir_key = dir.canonicalize().unwrap_or_else(|_| dir.to_path_buf());
        loop {
            let file = File::options()
                .create(true)
                .truncate(false)
                .write(true)
                .open(&path)?;
            file.lock()?;
            // The holder before us removed the file it locked: ours must still be the one at
            // `path`, or a third run could lock a new file beside us.
            let current = same_file::Handle::from_path(&path).ok();
            let ours = same_file::Handle::from_file(file.try_clone()?)?;
            if current.as_ref() == Some(&ours) {
                signals::register(&dir_key);
                return Ok(Self {
                    file: Some(file),
                    path,
                    dir: dir_key,
                });
            }
        }
    }

    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Remove the temporary files ([`TEMP_PREFIX`]…[`TEMP_SUFFIX`]) that earlier runs left in
    /// the folder when they were killed. Safe because every run writing here holds this lock
    /// while its temporary files exist. Returns the names removed.
    pub fn remove_stale_temporaries(&self) -> Vec<String> {
        remove_temporaries(&self.dir)
    }
}

impl Drop for FolderLock {
    fn drop(&mut self) {
        let mut folders = signals::folders();
        let _ = std::fs::remove_file(&self.path);
        self.file.take();
        if let Some(i) = folders.iter().position(|d| *d == self.dir) {
            folders.remove(i);
        }
    }
}

/// Remove `.hazebook-*.part` files of `dir`; the names removed.
fn remove_temporaries(dir: &Path) -> Vec<String> {
    let mut removed = Vec::new();
    if let Ok(entries) = std::fs::read_dir(dir) {
        for e in entries.flatten() {
            let name = e.file_name().to_string_lossy().into_owned();
            if name.starts_with(TEMP_PREFIX)
                && name.ends_with(TEMP_SUFFIX)
                && e.file_type().is_ok_and(|t| t.is_file())
                && std::fs::remove_file(e.path()).is_ok()
            {
                removed.push(name);
            }
        }
    }
    removed.sort();
    removed
}

/// Clean-up on SIGINT, SIGTERM and SIGHUP while an output folder is locked.
mod signals {
    use super::*;

    /// Folders locked by this process. Committing outputs holds this mutex, so a signal waits
    /// for the renames to finish: the outputs are then all in place, never some.
    pub(super) fn folders() -> MutexGuard<'static, Vec<PathBuf>> {
        static FOLDERS: OnceLock<Mutex<Vec<PathBuf>>> = OnceLock::new();
        FOLDERS
            .get_or_init(|| Mutex::new(Vec::new()))
            .lock()
            .unwrap_or_else(PoisonError::into_inner)
    }

    pub(super) fn register(dir: &Path) {
        install();
        folders().push(dir.to_path_buf());
    }

    #[cfg(unix)]
    fn install() {
        static INSTALLED: OnceLock<()> = OnceLock::new();
        INSTALLED.get_or_init(|| {
            use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
            let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP])
            else {
                return;
            };
            std::thread::spawn(move || {
                if let Some(sig) = signals.forever().next() {
                    let folders = folders();
                    for dir in folders.iter() {
                        remove_temporaries(dir);
                        let _ = std::fs::remove_file(dir.join(LOCK_NAME));
                    }
                    eprintln!(
                        "error: interrupted by signal {sig}; temporary files removed (outputs not yet renamed into place are unchanged)"
                    );
                    std::process::exit(128 + sig);
                }
            });
        });
    }

    #[cfg(not(unix))]
    fn install() {}
}

/// Which of hazebook's own outputs `path` is, judged by its content, or `None`:
/// - "report": an xlsx/xlsm workbook whose document author is hazebook (every report sets it);
/// - "side output": a csv whose header line, or a parquet file whose columns, are all Results
///   column keys (at least five of them);
/// - "partial results": a `.partial.json` bundle.
///
/// A file that cannot be opened is `None` (the reader then gives its own message).
pub fn own_output_kind(path: &Path) -> Option<&'static str> {
    use std::io::{BufRead, Read};
    let name = path.file_name()?.to_string_lossy().to_lowercase();
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_lowercase())
        .unwrap_or_default();
    let all_keys = |names: &mut dyn Iterator<Item = String>| {
        let keys = crate::report::frame::column_keys();
        let mut n = 0;
        for raw in names {
            // Tolerate a unit after the key ("dre_toa [W m-2]") and csv quoting.
            let field = raw.trim().trim_matches('"');
            let key = field.split([' ', '[', '(']).next().unwrap_or("");
            if !keys.contains(&key) {
                return false;
            }
            n += 1;
        }
        n >= 5
    };
    if name.ends_with(".partial.json") {
        return Some("partial results");
    }
    match ext.as_str() {
        "xlsx" | "xlsm" => {
            let mut zip = zip::ZipArchive::new(File::open(path).ok()?).ok()?;
            let mut core = String::new();
            zip.by_name("docProps/core.xml")
                .ok()?
                .take(64 * 1024)
                .read_to_string(&mut core)
                .ok()?;
            core.contains("<dc:creator>hazebook</dc:creator>")
                .then_some("report")
        }
        "csv" => {
            let reader = std::io::BufReader::new(File::open(path).ok()?.take(64 * 1024));
            reader
                .lines()
                .take(3)
                .map_while(Result::ok)
                .any(|l| all_keys(&mut l.split(',').map(String::from)))
                .then_some("side output")
        }
        "parquet" | "pq" => {
            use polars::prelude::SerReader;
            let mut r = polars::prelude::ParquetReader::new(File::open(path).ok()?);
            let schema = r.schema().ok()?;
            all_keys(&mut schema.iter_names().map(|n| n.to_string())).then_some("side output")
        }
        _ => None,
    }
}

/// Whether `output` would overwrite one of `inputs`: the same path after resolving links and
/// `.`/`..`, or the same file under another name (a hard link; same device and inode).
pub fn overwrites_input(output: &Path, inputs: &[PathBuf]) -> Option<PathBuf> {
    inputs.iter().find(|i| same_file(output, i)).cloned()
}

/// Whether two paths name one file (existing or to be created).
pub fn same_file(a: &Path, b: &Path) -> bool {
    normalise(a) == normalise(b) || same_file::is_same_file(a, b).unwrap_or(false)
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

/// Refuse a set of outputs that clash: an output that is an input, or two outputs that are one
/// file (letter case ignored, as on case-insensitive file systems).
///
/// - `outputs`: (what, path), e.g. ("report", …), ("log file", …)
///
/// Errors: a message naming both files and what to do.
pub fn check_outputs(outputs: &[(&str, PathBuf)], inputs: &[PathBuf]) -> Result<(), String> {
    for (what, path) in outputs {
        if let Some(input) = overwrites_input(path, inputs) {
            return Err(format!(
                "{}: the {what} would overwrite the input {}; nothing written. Choose another --out folder, output name or log file",
                path.display(),
                input.display()
            ));
        }
    }
    for (i, (what, path)) in outputs.iter().enumerate() {
        let key = normalise(path).to_string_lossy().to_lowercase();
        for (other_what, other) in &outputs[..i] {
            if normalise(other).to_string_lossy().to_lowercase() == key {
                return Err(format!(
                    "{}: the {what} and the {other_what} ({}) would be one file; nothing written. Choose distinct names",
                    path.display(),
                    other.display()
                ));
            }
        }
    }
    Ok(())
}

/// The outputs of one run, each written first to a temporary file in its folder
/// (`.hazebook-*.part`) and renamed into place together by [`Staged::commit`]. Dropped without
/// a commit (an error, a panic), the temporary files are removed: nothing new is in place.
#[derive(Default)]
pub struct Staged {
    files: Vec<(tempfile::TempPath, PathBuf)>,
}

impl Staged {
    pub fn new() -> Self {
        Self::default()
    }

    /// A temporary file for `target` in the same folder, to write the output into.
    pub fn add(&mut self, target: &Path) -> std::io::Result<PathBuf> {
        let tmp = temp_builder()
            .tempfile_in(folder_of(target))?
            .into_temp_path();
        let p = tmp.to_path_buf();
        self.files.push((tmp, target.to_path_buf()));
        Ok(p)
    }

    /// The final paths, in the order added.
    pub fn targets(&self) -> Vec<PathBuf> {
        self.files.iter().map(|(_, t)| t.clone()).collect()
    }

    /// Rename every staged file into place. An existing target is kept as a hard link first;
    /// if a rename fails, the targets already replaced get their old files back and the new
    /// ones are removed, so the outputs change all together or not at all.
    ///
    /// Errors: the rename that failed, naming the target.
    pub fn commit(self) -> std::io::Result<Vec<PathBuf>> {
        let _guard = signals::folders();
        let mut backups: Vec<Option<tempfile::NamedTempFile<()>>> = Vec::new();
        for (_, target) in &self.files {
            let backup = if target.exists() {
                temp_builder()
                    .make_in(folder_of(target), |p| std::fs::hard_link(target, p))
                    .ok()
            } else {
                None
            };
            backups.push(backup);
        }
        let targets = self.targets();
        let mut done: Vec<PathBuf> = Vec::new();
        for (tmp, target) in self.files {
            if let Err(e) = tmp.persist(&target) {
                for (i, t) in done.iter().enumerate() {
                    match &backups[i] {
                        Some(b) => {
                            let _ = std::fs::rename(b.path(), t);
                        }
                        None => {
                            let _ = std::fs::remove_file(t);
                        }
                    }
                }
                return Err(std::io::Error::new(
                    e.error.kind(),
                    format!(
                        "{}: cannot move the output into place: {}",
                        target.display(),
                        e.error
                    ),
                ));
            }
            done.push(target);
        }
        drop(backups);
        Ok(targets)
    }
}

/// Temporary files of outputs: hidden, removed by a later run when stale, and created with
/// the permissions an ordinary new file gets (0o666 less the umask on Unix) so the renamed
/// output is as readable as any other file the user writes.
fn temp_builder() -> tempfile::Builder<'static, 'static> {
    let mut b = tempfile::Builder::new();
    b.prefix(TEMP_PREFIX).suffix(TEMP_SUFFIX);
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        b.permissions(std::fs::Permissions::from_mode(0o666));
    }
    b
}

fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
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
    fn patterns_and_names_stay_inside_the_folder() {
        for bad in [
            "../x-{job}.xlsx",
            "/tmp/x.xlsx",
            "a/b.xlsx",
            "a\\b.xlsx",
            ".x.xlsx",
            "",
        ] {
            assert!(expand_name(bad, &tokens(None, None)).is_err(), "{bad:?}");
        }
        for (site, want) in [
            (".", "_.xlsx"),
            ("..", "__.xlsx"),
            ("", "unnamed.xlsx"),
            ("a/..", "a_...xlsx"),
        ] {
            let n = expand_name("{site}.xlsx", &tokens(None, Some(site))).unwrap();
            assert_eq!(n, want, "{site:?}");
        }
    }

    #[test]
    fn sites_that_sanitise_alike_get_distinct_names() {
        let sites: Vec<String> = [
            "Gull/Spit",
            "Gull_Spit",
            "Gull Spit",
            "Gull:Spit",
            "gull_spit",
            "Tern",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        let m = site_file_names(&sites).unwrap();
        assert_eq!(m["Tern"], "Tern");
        let mut forms: Vec<String> = m.values().map(|f| f.to_lowercase()).collect();
        forms.sort();
        forms.dedup();
        assert_eq!(forms.len(), sites.len(), "{m:?}");
        assert!(
            m["Gull/Spit"].starts_with("Gull_Spit-") && m["Gull/Spit"].len() == 18,
            "{m:?}"
        );
        // The same names in another order, or with fewer rows of each, give the same forms.
        let mut rev = sites.clone();
        rev.reverse();
        rev.push("Tern".into());
        assert_eq!(site_file_names(&rev).unwrap(), m);
    }

    #[test]
    fn staged_outputs_appear_together_or_not_at_all() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a.txt");
        let b = dir.path().join("b.txt");
        std::fs::write(&a, b"old a").unwrap();
        let mut s = Staged::new();
        std::fs::write(s.add(&a).unwrap(), b"new a").unwrap();
        std::fs::write(s.add(&b).unwrap(), b"new b").unwrap();
        drop(s);
        assert_eq!(std::fs::read(&a).unwrap(), b"old a");
        assert!(!b.exists());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
        let mut s = Staged::new();
        std::fs::write(s.add(&a).unwrap(), b"new a").unwrap();
        std::fs::write(s.add(&b).unwrap(), b"new b").unwrap();
        assert_eq!(s.commit().unwrap(), vec![a.clone(), b.clone()]);
        assert_eq!(std::fs::read(&a).unwrap(), b"new a");
        assert_eq!(std::fs::read(&b).unwrap(), b"new b");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);
    }

    #[test]
    fn the_lock_file_is_removed_when_the_lock_ends() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join(".hazebook-old.part"), b"x").unwrap();
        let lock = FolderLock::acquire(dir.path()).unwrap();
        assert!(lock.path().exists());
        assert_eq!(lock.remove_stale_temporaries(), vec![".hazebook-old.part"]);
        drop(lock);
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
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
