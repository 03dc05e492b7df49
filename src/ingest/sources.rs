//! Opening input files: workbooks through calamine, csv and parquet through polars.
//! Every failure becomes an [`IngestError`] naming the file; nothing here panics.

use std::fs::File;
use std::io::{BufReader, Read};
use std::path::Path;

use calamine::{Data, Range, Reader, Sheets, open_workbook_auto};
use polars::prelude::*;
use sha2::{Digest, Sha256};

use super::cells::{FrameColumn, FrameGrid, Grid};
use super::detect;
use super::types::IngestError;

/// The kind of an input file, from its extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum FileKind {
    Workbook,
    Csv,
    Parquet,
}

pub(crate) fn file_kind(path: &Path) -> Result<FileKind, IngestError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .unwrap_or_default();
    match ext.as_str() {
        "xlsx" | "xlsm" | "xls" | "ods" | "xlsb" => Ok(FileKind::Workbook),
        "csv" | "txt" | "tsv" => Ok(FileKind::Csv),
        "parquet" | "pq" => Ok(FileKind::Parquet),
        _ => Err(IngestError::Unreadable {
            path: path.display().to_string(),
            reason: format!(
                "the extension \"{ext}\" is not one of xlsx, xlsm, xls, ods, csv or parquet"
            ),
        }),
    }
}

/// Lower-case hex SHA-256 of a file, and its first bytes.
pub(crate) fn hash_file(path: &Path) -> Result<(String, Vec<u8>), IngestError> {
    let unreadable = |e: std::io::Error| IngestError::Unreadable {
        path: path.display().to_string(),
        reason: e.to_string(),
    };
    let mut f = File::open(path).map_err(unreadable)?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut head = Vec::new();
    loop {
        let n = f.read(&mut buf).map_err(unreadable)?;
        if n == 0 {
            break;
        }
        if head.len() < 8 {
            head.extend_from_slice(&buf[..n.min(8 - head.len())]);
        }
        hasher.update(&buf[..n]);
    }
    let hex = hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    Ok((hex, head))
}

/// An open workbook: its sheet names, date system and loaded sheets.
pub(crate) struct Workbook {
    book: Sheets<BufReader<File>>,
    pub names: Vec<String>,
    pub is_1904: bool,
    path: String,
}

const CFB_MAGIC: [u8; 8] = [0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];

/// Open a workbook (xlsx, xlsm, xls, ods).
///
/// Errors: [`IngestError::Unreadable`] for an empty, encrypted, truncated or foreign file.
pub(crate) fn open_workbook(path: &Path, head: &[u8]) -> Result<Workbook, IngestError> {
    let p = path.display().to_string();
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .unwrap_or_default();
    let fail = |reason: String| IngestError::Unreadable {
        path: p.clone(),
        reason,
    };
    if head.is_empty() {
        return Err(fail("the file is empty".into()));
    }
    if ext != "xls" && head.starts_with(&CFB_MAGIC) {
        return Err(fail(
            "the file is an OLE compound document, not a zip package: it is most likely password-protected (encrypted); save a copy without a password and read that"
                .into(),
        ));
    }
    if ext != "xls" && !head.starts_with(b"PK") {
        return Err(fail(format!(
            "a .{ext} file must be a zip package, and this one is not"
        )));
    }
    let book = open_workbook_auto(path).map_err(|e| {
        let msg = e.to_string();
        if msg.to_lowercase().contains("zip") || msg.contains("EOCD") {
            fail(format!(
                "the zip package is damaged or incomplete (truncated, or still being written): {msg}"
            ))
        } else {
            fail(msg)
        }
    })?;
    let is_1904 = match &book {
        Sheets::Xlsx(x) => x.has_1904_epoch(),
        Sheets::Xls(x) => x.has_1904_epoch(),
        Sheets::Xlsb(x) => x.has_1904_epoch(),
        Sheets::Ods(_) => false,
    };
    let names = book.sheet_names();
    Ok(Workbook {
        book,
        names,
        is_1904,
        path: p,
    })
}

impl Workbook {
    /// Load one sheet's cells.
    pub(crate) fn load(&mut self, name: &str) -> Result<Grid, IngestError> {
        self.book
            .worksheet_range(name)
            .map(Grid::Range)
            .map_err(|e| IngestError::Unreadable {
                path: self.path.clone(),
                reason: format!("sheet \"{name}\" cannot be read: {e}"),
            })
    }
}

/// Split one csv line into fields (double quotes respected).
fn split_line(line: &str, sep: char) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            '"' => quoted = !quoted,
            c if c == sep && !quoted => out.push(std::mem::take(&mut cur)),
            c => cur.push(c),
        }
    }
    out.push(cur);
    out
}

/// Read a csv file: detect the separator and the header line from the first lines, then let
/// polars read the rest as text columns (values are interpreted cell by cell, as for
/// workbooks).
pub(crate) fn read_csv(path: &Path, header_row: Option<u32>) -> Result<Grid, IngestError> {
    let p = path.display().to_string();
    let fail = |reason: String| IngestError::Unreadable {
        path: p.clone(),
        reason,
    };
    let bytes = std::fs::read(path).map_err(|e| fail(e.to_string()))?;
    let text = String::from_utf8_lossy(&bytes[..bytes.len().min(1 << 20)]);
    let lines: Vec<&str> = text.lines().take(detect::HEADER_SEARCH_ROWS).collect();
    if lines.iter().all(|l| l.trim().is_empty()) {
        return Err(fail("the file is empty".into()));
    }
    let sep = [',', ';', '\t']
        .into_iter()
        .max_by_key(|s| lines.iter().map(|l| l.matches(*s).count()).sum::<usize>())
        .unwrap_or(',');
    let header_idx = match header_row {
        Some(n) if n >= 1 => n as usize - 1,
        Some(_) => return Err(fail("header row must be 1 or more".into())),
        None => {
            // Reuse the workbook detection on a small range of the first lines.
            let width = lines
                .iter()
                .map(|l| split_line(l, sep).len())
                .max()
                .unwrap_or(1);
            let mut range = Range::new((0, 0), (lines.len() as u32 - 1, width as u32 - 1));
            for (r, l) in lines.iter().enumerate() {
                for (c, f) in split_line(l, sep).into_iter().enumerate() {
                    if !f.trim().is_empty() {
                        range.set_value((r as u32, c as u32), Data::String(f));
                    }
                }
            }
            detect::find_header_row(&Grid::Range(range), true).unwrap_or(0)
        }
    };
    // Line numbers of the data lines after the header (polars skips blank lines).
    let mut line_numbers = Vec::new();
    let mut in_quotes = false;
    let mut line_no: u32 = 0;
    let mut line_blank = true;
    let mut start_of_line = true;
    for &b in &bytes {
        if start_of_line {
            line_no += 1;
            line_blank = true;
            start_of_line = false;
        }
        match b {
            b'"' => {
                in_quotes = !in_quotes;
                line_blank = false;
            }
            b'\n' if !in_quotes => {
                if !line_blank && line_no as usize > header_idx + 1 {
                    line_numbers.push(line_no);
                }
                start_of_line = true;
            }
            b'\r' | b' ' | b'\t' => {}
            _ => line_blank = false,
        }
    }
    if !start_of_line && !line_blank && line_no as usize > header_idx + 1 {
        line_numbers.push(line_no);
    }
    let parse = CsvParseOptions::default()
        .with_separator(sep as u8)
        .with_truncate_ragged_lines(true)
        .with_missing_is_null(true);
    let df = CsvReadOptions::default()
        .with_has_header(false)
        .with_skip_rows(header_idx)
        .with_infer_schema_length(Some(0))
        .with_raise_if_empty(false)
        .with_parse_options(parse)
        .try_into_reader_with_file_path(Some(path.to_path_buf()))
        .and_then(|r| r.finish())
        .map_err(|e| fail(format!("the csv cannot be parsed: {e}")))?;
    let height = df.height();
    if height == 0 {
        return Err(fail("the file has no lines after the header".into()));
    }
    let mut header = Vec::new();
    let mut columns = Vec::new();
    for col in df.columns() {
        let s = col.str().map_err(|e| fail(e.to_string()))?;
        header.push(s.get(0).unwrap_or("").trim().to_string());
        columns.push(FrameColumn::Text(s.slice(1, height - 1)));
    }
    // polars drops empty lines; our own count must agree, else fall back to plain numbering.
    if line_numbers.len() != height - 1 {
        line_numbers = (0..height as u32 - 1)
            .map(|i| header_idx as u32 + 2 + i)
            .collect();
    }
    Ok(Grid::Frame(FrameGrid {
        header,
        columns,
        header_line: header_idx as u32 + 1,
        lines: line_numbers,
    }))
}

/// Read a parquet file: column names are the header, columns keep their types.
pub(crate) fn read_parquet(path: &Path) -> Result<Grid, IngestError> {
    let p = path.display().to_string();
    let fail = |reason: String| IngestError::Unreadable {
        path: p.clone(),
        reason,
    };
    let file = File::open(path).map_err(|e| fail(e.to_string()))?;
    let df = ParquetReader::new(file)
        .finish()
        .map_err(|e| fail(format!("not a readable parquet file: {e}")))?;
    let mut header = Vec::new();
    let mut columns = Vec::new();
    for col in df.columns() {
        header.push(col.name().to_string());
        let conv = |e: PolarsError| fail(format!("column \"{}\": {e}", col.name()));
        let fc = match col.dtype() {
            DataType::String => FrameColumn::Text(col.str().map_err(conv)?.clone()),
            DataType::Boolean => FrameColumn::Bool(col.bool().map_err(conv)?.clone()),
            DataType::Datetime(_, _) | DataType::Date => {
                let c = col
                    .cast(&DataType::Datetime(TimeUnit::Milliseconds, None))
                    .and_then(|c| c.cast(&DataType::Int64))
                    .map_err(conv)?;
                FrameColumn::Time(c.i64().map_err(conv)?.clone())
            }
            dt if dt.is_primitive_numeric() => {
                let c = col.cast(&DataType::Float64).map_err(conv)?;
                FrameColumn::Number(c.f64().map_err(conv)?.clone())
            }
            _ => {
                let c = col.cast(&DataType::String).map_err(conv)?;
                FrameColumn::Text(c.str().map_err(conv)?.clone())
            }
        };
        columns.push(fc);
    }
    let lines = (1..=df.height() as u32).collect();
    Ok(Grid::Frame(FrameGrid {
        header,
        columns,
        header_line: 0,
        lines,
    }))
}
