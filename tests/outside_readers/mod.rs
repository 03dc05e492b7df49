//! Reports kept for an independent reader. When the environment variable
//! `HAZEBOOK_TEST_REPORTS` names a folder, tests copy the reports they write there under a
//! name of their own; `.ci/run` sets it and opens every report in the folder with
//! `tests/reference/open_report.py` (openpyxl), and fails if the folder stays empty.

use std::path::Path;

/// Copy the report at `path` to `$HAZEBOOK_TEST_REPORTS/<name>.xlsx` (nothing when unset).
pub fn keep(path: &Path, name: &str) {
    if let Some(dir) = std::env::var_os("HAZEBOOK_TEST_REPORTS") {
        let dir = Path::new(&dir);
        std::fs::create_dir_all(dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        let to = dir.join(format!("{name}.xlsx"));
        std::fs::copy(path, &to)
            .unwrap_or_else(|e| panic!("{} → {}: {e}", path.display(), to.display()));
    }
}
