//! Opening input files: workbooks through calamine, csv and parquet through polars.
//! Every failure becomes an [`IngestError`] naming the file; nothing here panics.

use std::fs::File;
use std::io::{BufReader, Read};
use std::path::Path;

use calamine::{Data, DataRef, Dimensions, Range, Reader, Sheets, open_workbook_auto};
use polars::prelude::*;
use sha2::{Digest, Sha256};

use super::cells::{FrameColumn, FrameGrid, Grid, column_letter};
use super::detect;
use super::types::IngestError;

/// Largest decompressed size of one part of a workbook package (a sheet, the shared
/// strings) [bytes]: 1 GiB, several times the sheet XML of a full 1,048,576-row sheet of
/// campaign data. The zip reader holds every part to its declared size, so the declared
/// sizes bound what is decompressed.
pub(crate) const MAX_PART_BYTES: u64 = 1 << 30;
/// Largest decompressed size of a whole workbook package [bytes].
pub(crate) const MAX_PACKAGE_BYTES: u64 = 2 << 30;
/// Largest ratio of decompressed to compressed size of a part larger than
/// [`RATIO_FLOOR_BYTES`]: spreadsheet XML of real data compresses 5–50 fold; deflate can
/// reach about 1,000 fold only on runs of one repeated text (a "zip bomb").
pub(crate) const MAX_RATIO: u64 = 200;
/// Parts up to this size are not judged by their ratio [bytes].
pub(crate) const RATIO_FLOOR_BYTES: u64 = 16 << 20;
/// A sheet's used range is read only when it spans at most this many cells, or at most
/// [`MAX_SPARSENESS`] times the cells it holds (the cells of a sheet are held in a
/// rectangle over its used range).
pub(crate) const DENSE_CELLS: u64 = 1 << 22;
pub(crate) const MAX_SPARSENESS: u64 = 8;
/// Most fields of a csv line: the columns of a worksheet (XFD).
pub(crate) const MAX_CSV_FIELDS: usize = 16_384;

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
    check_package(path)?;
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

/// Refuse a zip package whose parts would decompress beyond the limits above (declared
/// sizes from the central directory; the zip reader enforces them while reading).
fn check_package(path: &Path) -> Result<(), IngestError> {
    let fail = |message: String| IngestError::Layout {
        path: path.display().to_string(),
        message,
    };
    let Ok(file) = File::open(path) else {
        return Ok(()); // opened a moment ago; the reader reports any later failure
    };
    let Ok(mut zip) = ::zip::ZipArchive::new(BufReader::new(file)) else {
        return Ok(()); // not a zip (xls), or already refused as damaged
    };
    let mut total: u64 = 0;
    for i in 0..zip.len() {
        let Ok(entry) = zip.by_index_raw(i) else {
            continue;
        };
        let (size, packed) = (entry.size(), entry.compressed_size());
        let name = entry.name().map(|n| n.into_owned()).unwrap_or_default();
        total = total.saturating_add(size);
        if size > MAX_PART_BYTES {
            return Err(fail(format!(
                "its part {name} decompresses to {} MB, more than the {} MB hazebook reads from one part (see \"Limits on input\" in the README)",
                size >> 20,
                MAX_PART_BYTES >> 20
            )));
        }
        if size > RATIO_FLOOR_BYTES && size / packed.max(1) > MAX_RATIO {
            return Err(fail(format!(
                "its part {name} decompresses {} fold ({} KB to {} MB), more than the {MAX_RATIO} fold of real spreadsheet data: the file looks like a decompression bomb (see \"Limits on input\" in the README)",
                size / packed.max(1),
                packed >> 10,
                size >> 20
            )));
        }
    }
    if total > MAX_PACKAGE_BYTES {
        return Err(fail(format!(
            "the package decompresses to {} MB, more than the {} MB hazebook reads from one workbook (see \"Limits on input\" in the README)",
            total >> 20,
            MAX_PACKAGE_BYTES >> 20
        )));
    }
    Ok(())
}

impl Workbook {
    /// Load one sheet's cells. xlsx, xlsm and xlsb sheets are read cell by cell, and a sheet
    /// whose used range is far larger than the cells it holds (a stray cell at XFD1048576)
    /// is refused before its rectangle is allocated.
    pub(crate) fn load(&mut self, name: &str) -> Result<Grid, IngestError> {
        let unreadable = |e: String| IngestError::Unreadable {
            path: self.path.clone(),
            reason: format!("sheet \"{name}\" cannot be read: {e}"),
        };
        let cells = match &mut self.book {
            Sheets::Xlsx(x) => match x.worksheet_cells_reader(name) {
                Ok(mut reader) => {
                    let mut cells = Vec::new();
                    while let Some(c) = reader.next_cell().map_err(|e| unreadable(e.to_string()))? {
                        keep_cell(&mut cells, c);
                    }
                    cells
                }
                Err(calamine::XlsxError::NotAWorksheet(_)) => Vec::new(),
                Err(e) => return Err(unreadable(e.to_string())),
            },
            Sheets::Xlsb(x) => {
                let mut reader = x
                    .worksheet_cells_reader(name)
                    .map_err(|e| unreadable(e.to_string()))?;
                let mut cells = Vec::new();
                while let Some(c) = reader.next_cell().map_err(|e| unreadable(e.to_string()))? {
                    keep_cell(&mut cells, c);
                }
                cells
            }
            book => {
                return book
                    .worksheet_range(name)
                    .map(Grid::Range)
                    .map_err(|e| unreadable(e.to_string()));
            }
        };
        check_used_range(&cells).map_err(|message| IngestError::Layout {
            path: self.path.clone(),
            message: format!("sheet \"{name}\": {message}"),
        })?;
        Ok(Grid::Range(Range::from_sparse(cells)))
    }

    /// Merged ranges of an xlsx sheet (none for other formats).
    pub(crate) fn merged(&mut self, name: &str) -> Vec<Dimensions> {
        match &mut self.book {
            Sheets::Xlsx(x) => x.merge_cells_by_sheet_name(name).unwrap_or_default(),
            _ => Vec::new(),
        }
    }
}

fn keep_cell(cells: &mut Vec<calamine::Cell<Data>>, c: calamine::Cell<DataRef<'_>>) {
    if !matches!(c.get_value(), DataRef::Empty) {
        cells.push(calamine::Cell::new(
            c.get_position(),
            Data::from(c.get_value().clone()),
        ));
    }
}

/// Refuse cells whose bounding rectangle is absurd for how many they are.
fn check_used_range(cells: &[calamine::Cell<Data>]) -> Result<(), String> {
    let Some(first) = cells.first() else {
        return Ok(());
    };
    let (mut r0, mut c0) = first.get_position();
    let (mut r1, mut c1) = (r0, c0);
    let (mut far_row, mut far_col) = (first.get_position(), first.get_position());
    for c in cells {
        let (r, k) = c.get_position();
        r0 = r0.min(r);
        c0 = c0.min(k);
        if r > r1 {
            r1 = r;
            far_row = (r, k);
        }
        if k > c1 {
            c1 = k;
            far_col = (r, k);
        }
    }
    let area = u64::from(r1 - r0 + 1) * u64::from(c1 - c0 + 1);
    let held = cells.len() as u64;
    if area <= DENSE_CELLS.max(MAX_SPARSENESS * held) {
        return Ok(());
    }
    let a1 = |(r, c): (u32, u32)| format!("{}{}", column_letter(c), r + 1);
    Err(format!(
        "its used range {}:{} spans {area} cells but holds only {held}: cells far from the data (the last row has {}, the last column {}) make it too sparse to read (see \"Limits on input\" in the README). Delete the stray cells, or the empty rows and columns between them, and save again",
        a1((r0, c0)),
        a1((r1, c1)),
        a1(far_row),
        a1(far_col)
    ))
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
    let width = lines
        .iter()
        .map(|l| split_line(l, sep).len())
        .max()
        .unwrap_or(1);
    if width > MAX_CSV_FIELDS {
        return Err(fail(format!(
            "a line among the first has {width} fields, more than the {MAX_CSV_FIELDS} columns of a worksheet (see \"Limits on input\" in the README)"
        )));
    }
    let header_idx = match header_row {
        Some(n) if n >= 1 => n as usize - 1,
        Some(_) => return Err(fail("header row must be 1 or more".into())),
        None => {
            // Reuse the workbook detection on a small range of the first lines.
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
    // Line numbers of the data lines after the header (polars skips empty lines; lines of
    // blanks are read, and then skipped as blank rows), and lines with more fields than the
    // header (polars drops the extra fields: said in a warning).
    let mut line_numbers = Vec::new();
    let mut ragged: Vec<u32> = Vec::new();
    let mut header_fields: usize = 0;
    let mut fields: usize = 1;
    let mut in_quotes = false;
    let mut line_no: u32 = 0;
    let mut line_blank = true;
    let mut start_of_line = true;
    let sep_byte = sep as u8;
    let mut end_line = |line_no: u32, line_blank: bool, fields: usize| {
        let n = line_no as usize;
        if n == header_idx + 1 {
            header_fields = fields;
        } else if !line_blank && n > header_idx + 1 {
            line_numbers.push(line_no);
            if header_fields > 0 && fields > header_fields {
                ragged.push(line_no);
            }
        }
    };
    for &b in &bytes {
        if start_of_line {
            line_no += 1;
            line_blank = true;
            fields = 1;
            start_of_line = false;
        }
        match b {
            b'"' => {
                in_quotes = !in_quotes;
                line_blank = false;
            }
            b'\n' if !in_quotes => {
                end_line(line_no, line_blank, fields);
                start_of_line = true;
            }
            b'\r' => {}
            b if b == sep_byte && !in_quotes => {
                fields += 1;
                line_blank = false;
            }
            _ => line_blank = false,
        }
    }
    if !start_of_line {
        end_line(line_no, line_blank, fields);
    }
    let mut warnings = Vec::new();
    if !ragged.is_empty() {
        let shown: Vec<String> = ragged.iter().take(10).map(u32::to_string).collect();
        warnings.push(format!(
            "{p}: {} line(s) have more fields than the header's {header_fields}; the extra fields are not read (line{} {}{})",
            ragged.len(),
            if ragged.len() == 1 { "" } else { "s" },
            shown.join(", "),
            if ragged.len() > 10 {
                format!(" and {} more", ragged.len() - 10)
            } else {
                String::new()
            }
        ));
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
        warnings,
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
        warnings: Vec::new(),
    }))
}
