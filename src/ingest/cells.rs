//! Cells of a sheet, whatever the engine: calamine ranges for workbooks, polars columns for
//! csv and parquet. A [`Grid`] hands out borrowed [`Cell`]s by position without building a
//! per-cell object graph; numbers, text and fill values are interpreted here.

use calamine::{Data, ExcelDateTime, Range};
use polars::prelude::{BooleanChunked, Float64Chunked, Int64Chunked, StringChunked};

/// One cell as read, borrowed from its grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Cell<'a> {
    Empty,
    Number(f64),
    Text(&'a str),
    Bool(bool),
    /// A date-time or duration cell of a workbook (serial value and its date system).
    Excel(ExcelDateTime),
    /// A date-time from a typed (parquet) column [ms since 1970-01-01, naive].
    EpochMs(i64),
    /// A spreadsheet error such as `#DIV/0!`.
    Error(&'a calamine::CellErrorType),
}

impl Cell<'_> {
    /// The cell as a user would read it, for messages.
    pub(crate) fn display(&self) -> String {
        match self {
            Cell::Empty => "an empty cell".to_string(),
            Cell::Number(v) => format_number(*v),
            Cell::Text(s) => format!("\"{}\"", clip(s.trim())),
            Cell::Bool(b) => if *b { "TRUE" } else { "FALSE" }.to_string(),
            Cell::Excel(d) => match d.as_datetime() {
                Some(t) if d.is_datetime() => t.format("%Y-%m-%d %H:%M:%S").to_string(),
                _ => {
                    let secs = (d.as_f64() * 86_400.0).round();
                    if secs.is_finite() && secs.abs() < 1e12 {
                        let s = secs.abs() as i64;
                        let sign = if secs < 0.0 { "-" } else { "" };
                        format!(
                            "duration {sign}{}:{:02}:{:02}",
                            s / 3600,
                            s / 60 % 60,
                            s % 60
                        )
                    } else {
                        format!("duration {}", format_number(d.as_f64()))
                    }
                }
            },
            Cell::EpochMs(ms) => chrono::DateTime::from_timestamp_millis(*ms)
                .map(|t| t.format("%Y-%m-%d %H:%M:%S").to_string())
                .unwrap_or_else(|| format!("{ms} ms")),
            Cell::Error(e) => e.to_string(),
        }
    }

    /// The cell as plain text (for header and name cells).
    pub(crate) fn text(&self) -> Option<String> {
        match self {
            Cell::Empty => None,
            Cell::Text(s) => {
                let t = s.trim();
                (!t.is_empty()).then(|| t.to_string())
            }
            Cell::Number(v) => Some(format_number(*v)),
            other => Some(other.display()),
        }
    }
}

/// Most characters a cell may hold: the limit of a worksheet cell (Microsoft, "Excel
/// specifications and limits": 32,767 characters), which the report writer also enforces.
/// A longer text in a column that is read rejects its row.
pub(crate) const MAX_CELL_CHARS: usize = 32_767;

/// Characters of a cell value shown in a message; longer values are cut and end in `…`.
pub(crate) const SHOWN_CHARS: usize = 60;

/// A text as shown in a message: its first [`SHOWN_CHARS`] characters and `…` when longer.
pub(crate) fn clip(s: &str) -> std::borrow::Cow<'_, str> {
    match s.char_indices().nth(SHOWN_CHARS) {
        None => std::borrow::Cow::Borrowed(s),
        Some((i, _)) => std::borrow::Cow::Owned(format!("{}…", &s[..i])),
    }
}

/// Characters of a text when it is longer than [`MAX_CELL_CHARS`], else `None` (cheap for
/// short texts: a text of at most that many bytes has at most that many characters).
pub(crate) fn too_long(s: &str) -> Option<usize> {
    if s.len() <= MAX_CELL_CHARS {
        return None;
    }
    let n = s.chars().count();
    (n > MAX_CELL_CHARS).then_some(n)
}

/// Text of a number for messages: integers as such, others to 10 significant digits
/// (so 91.8 / 100 reads 0.918, not 0.9179999999999999).
pub(crate) fn format_number(v: f64) -> String {
    if v.is_finite() && v == v.trunc() && v.abs() < 1e15 {
        format!("{}", v as i64)
    } else if v.is_finite() && (v.abs() >= 1e15 || v.abs() < 1e-6) && v != 0.0 {
        // Very large or small: scientific, 10 significant digits (1e308, not 309 digits).
        let s = format!("{v:.9e}");
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') {
                    m.trim_end_matches('0').trim_end_matches('.')
                } else {
                    m
                };
                format!("{m}e{e}")
            }
            None => s,
        }
    } else if v.is_finite() && v != 0.0 {
        let digits = (9 - v.abs().log10().floor() as i32).clamp(0, 17) as usize;
        let s = format!("{v:.digits$}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    } else {
        format!("{v}")
    }
}

/// Column letters of a 0-based column index (`0` → `A`, `26` → `AA`).
pub(crate) fn column_letter(mut col: u32) -> String {
    let mut s = Vec::new();
    loop {
        s.push(b'A' + (col % 26) as u8);
        if col < 26 {
            break;
        }
        col = col / 26 - 1;
    }
    s.reverse();
    String::from_utf8(s).unwrap_or_default()
}

/// 0-based column index of column letters (`A` → 0), if the text is letters only.
pub(crate) fn column_index(letters: &str) -> Option<u32> {
    let t = letters.trim();
    if t.is_empty() || t.len() > 3 || !t.chars().all(|c| c.is_ascii_alphabetic()) {
        return None;
    }
    let mut n: u32 = 0;
    for c in t.chars() {
        n = n * 26 + (c.to_ascii_uppercase() as u32 - 'A' as u32 + 1);
    }
    Some(n - 1)
}

/// A typed column of a polars frame, borrowed cell by cell.
#[derive(Debug, Clone)]
pub(crate) enum FrameColumn {
    Text(StringChunked),
    Number(Float64Chunked),
    /// [ms since 1970-01-01, naive]
    Time(Int64Chunked),
    Bool(BooleanChunked),
}

/// Data of a csv or parquet file: a header row and typed columns.
#[derive(Debug, Clone)]
pub(crate) struct FrameGrid {
    pub header: Vec<String>,
    pub columns: Vec<FrameColumn>,
    /// Line (csv) or row (parquet) number of the header, as a user counts (1-based).
    pub header_line: u32,
    /// Line number of each data row (1-based).
    pub lines: Vec<u32>,
    /// What reading the file noticed (lines with extra fields).
    pub warnings: Vec<String>,
}

/// A sheet's cells. Row 0 of the grid is the first used row of the sheet.
#[derive(Debug, Clone)]
pub(crate) enum Grid {
    Range(Range<Data>),
    Frame(FrameGrid),
}

impl Grid {
    pub(crate) fn height(&self) -> usize {
        match self {
            Grid::Range(r) => r.height(),
            Grid::Frame(f) => f.lines.len() + 1,
        }
    }

    pub(crate) fn width(&self) -> usize {
        match self {
            Grid::Range(r) => r.width(),
            Grid::Frame(f) => f.header.len(),
        }
    }

    /// Row number as the spreadsheet shows it (1-based) of grid row `r`.
    pub(crate) fn row_number(&self, r: usize) -> u32 {
        match self {
            Grid::Range(range) => range.start().map_or(0, |s| s.0) + r as u32 + 1,
            Grid::Frame(f) => {
                if r == 0 {
                    f.header_line
                } else {
                    f.lines.get(r - 1).copied().unwrap_or(0)
                }
            }
        }
    }

    /// 0-based absolute column index of grid column `c`.
    pub(crate) fn column_number(&self, c: usize) -> u32 {
        match self {
            Grid::Range(range) => range.start().map_or(0, |s| s.1) + c as u32,
            Grid::Frame(_) => c as u32,
        }
    }

    /// A1 reference of grid cell (`r`, `c`).
    pub(crate) fn a1(&self, r: usize, c: usize) -> String {
        format!(
            "{}{}",
            column_letter(self.column_number(c)),
            self.row_number(r)
        )
    }

    /// Grid row index of a spreadsheet row number, if inside the grid.
    pub(crate) fn row_index(&self, row_number: u32) -> Option<usize> {
        (0..self.height()).find(|&r| self.row_number(r) == row_number)
    }

    /// Grid column index of an absolute 0-based column, if inside the grid.
    pub(crate) fn column_offset(&self, column: u32) -> Option<usize> {
        (0..self.width()).find(|&c| self.column_number(c) == column)
    }

    #[inline]
    pub(crate) fn cell(&self, r: usize, c: usize) -> Cell<'_> {
        match self {
            Grid::Range(range) => match range.get((r, c)) {
                None | Some(Data::Empty) => Cell::Empty,
                Some(Data::Float(v)) => Cell::Number(*v),
                Some(Data::Int(v)) => Cell::Number(*v as f64),
                Some(Data::String(s)) | Some(Data::DateTimeIso(s)) | Some(Data::DurationIso(s)) => {
                    Cell::Text(s)
                }
                Some(Data::Bool(b)) => Cell::Bool(*b),
                Some(Data::DateTime(d)) => Cell::Excel(*d),
                Some(Data::Error(e)) => Cell::Error(e),
            },
            Grid::Frame(f) => {
                if r == 0 {
                    return f.header.get(c).map_or(Cell::Empty, |h| Cell::Text(h));
                }
                let i = r - 1;
                match f.columns.get(c) {
                    None => Cell::Empty,
                    Some(FrameColumn::Text(s)) => s.get(i).map_or(Cell::Empty, Cell::Text),
                    Some(FrameColumn::Number(v)) => v.get(i).map_or(Cell::Empty, Cell::Number),
                    Some(FrameColumn::Time(v)) => v.get(i).map_or(Cell::Empty, Cell::EpochMs),
                    Some(FrameColumn::Bool(v)) => v.get(i).map_or(Cell::Empty, Cell::Bool),
                }
            }
        }
    }

    /// Fill the empty cells of column `c` (grid index), from grid row `from` on, that lie in
    /// a merged range with the value of the range's top-left cell, as a spreadsheet shows
    /// them. `merges` are absolute (row, column) ranges. Returns the ranges that filled a
    /// cell, as A1 text. Only workbook grids have merges.
    pub(crate) fn fill_merged(
        &mut self,
        c: usize,
        from: usize,
        merges: &[calamine::Dimensions],
    ) -> Vec<String> {
        let Grid::Range(range) = self else {
            return Vec::new();
        };
        let (Some(start), Some(end)) = (range.start(), range.end()) else {
            return Vec::new();
        };
        let col = start.1 + c as u32;
        let first_row = start.0 + from as u32;
        // Overlapping or repeated ranges are not valid; a budget keeps hostile lists cheap.
        let mut budget = 4 * (end.0 - start.0 + 1) as u64 + 1024;
        let mut filled = Vec::new();
        for d in merges {
            if !(d.start.1 <= col && col <= d.end.1) || d.end.0 <= d.start.0 {
                continue;
            }
            let value = match range.get_value(d.start) {
                Some(v) if *v != Data::Empty => v.clone(),
                _ => continue,
            };
            let mut any = false;
            for row in d.start.0.max(first_row)..=d.end.0.min(end.0) {
                if budget == 0 {
                    return filled;
                }
                budget -= 1;
                if (row, col) == d.start {
                    continue;
                }
                if matches!(range.get_value((row, col)), None | Some(Data::Empty)) {
                    range.set_value((row, col), value.clone());
                    any = true;
                }
            }
            if any {
                filled.push(format!(
                    "{}{}:{}{}",
                    column_letter(d.start.1),
                    d.start.0 + 1,
                    column_letter(d.end.1),
                    d.end.0 + 1
                ));
            }
        }
        filled
    }

    /// True when every cell of grid row `r` is empty or blank text.
    pub(crate) fn row_is_empty(&self, r: usize) -> bool {
        (0..self.width()).all(|c| match self.cell(r, c) {
            Cell::Empty => true,
            Cell::Text(s) => s.trim().is_empty(),
            _ => false,
        })
    }
}

/// Values read as missing.
#[derive(Debug, Clone, Default)]
pub(crate) struct FillValues {
    texts: Vec<String>,
    numbers: Vec<f64>,
}

/// Built-in fill values: common practice in campaign and network data files.
const BUILT_IN_FILL_TEXT: &[&str] = &["nan", "n/a", "na", "-", "--", "null", "none", "missing"];
const BUILT_IN_FILL_NUMBERS: &[f64] = &[-999.0, -9999.0, -99.99, -99999.0, -999.9];

impl FillValues {
    pub(crate) fn new(extra: &[String]) -> Self {
        let mut texts: Vec<String> = BUILT_IN_FILL_TEXT.iter().map(|s| s.to_string()).collect();
        let mut numbers = BUILT_IN_FILL_NUMBERS.to_vec();
        for e in extra {
            let t = e.trim();
            if let Ok(v) = t.parse::<f64>() {
                numbers.push(v);
            }
            texts.push(t.to_lowercase());
        }
        Self { texts, numbers }
    }

    pub(crate) fn is_fill_number(&self, v: f64) -> bool {
        v.is_nan()
            || self
                .numbers
                .iter()
                .any(|&f| (v - f).abs() <= 1e-9 * f.abs().max(1.0))
    }

    pub(crate) fn is_fill_text(&self, s: &str) -> bool {
        let t = s.trim();
        if t.is_empty() {
            return true;
        }
        if self.texts.iter().any(|f| f.eq_ignore_ascii_case(t)) {
            return true;
        }
        t.parse::<f64>().is_ok_and(|v| self.is_fill_number(v))
    }

    /// True when the cell reads as missing.
    pub(crate) fn is_missing(&self, cell: &Cell<'_>) -> bool {
        match cell {
            Cell::Empty => true,
            Cell::Number(v) => self.is_fill_number(*v),
            Cell::Text(s) => self.is_fill_text(s),
            Cell::Error(calamine::CellErrorType::NA) => true,
            _ => false,
        }
    }
}

/// A numeric cell, interpreted.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum NumberRead {
    Missing,
    Value(f64),
    /// Not a number; what was expected, e.g. `expected a number`.
    Bad(&'static str),
}

/// Read a cell as a number: numbers, numeric text (with `.` decimals), fill values.
pub(crate) fn read_number(cell: &Cell<'_>, fill: &FillValues) -> NumberRead {
    match cell {
        Cell::Empty => NumberRead::Missing,
        Cell::Number(v) => {
            if fill.is_fill_number(*v) {
                NumberRead::Missing
            } else if v.is_finite() {
                NumberRead::Value(*v)
            } else {
                NumberRead::Bad("expected a finite number")
            }
        }
        Cell::Text(s) => {
            if fill.is_fill_text(s) {
                return NumberRead::Missing;
            }
            let t = s.trim();
            match t.parse::<f64>() {
                Ok(v) if v.is_finite() => NumberRead::Value(v),
                Ok(_) => NumberRead::Bad("expected a finite number"),
                Err(_) => {
                    if t.contains(',') && t.replace(',', ".").parse::<f64>().is_ok() {
                        NumberRead::Bad("expected a number with a decimal point (not a comma)")
                    } else {
                        NumberRead::Bad("expected a number")
                    }
                }
            }
        }
        Cell::Bool(_) => NumberRead::Bad("expected a number"),
        Cell::Excel(_) | Cell::EpochMs(_) => NumberRead::Bad("expected a number, not a date"),
        Cell::Error(calamine::CellErrorType::NA) => NumberRead::Missing,
        Cell::Error(_) => NumberRead::Bad("expected a number"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn letters_round_trip() {
        for (i, s) in [
            (0, "A"),
            (25, "Z"),
            (26, "AA"),
            (27, "AB"),
            (701, "ZZ"),
            (702, "AAA"),
        ] {
            assert_eq!(column_letter(i), s);
            assert_eq!(column_index(s), Some(i));
        }
        assert_eq!(column_index("a1"), None);
    }

    #[test]
    fn fill_values() {
        let f = FillValues::new(&["-8888".to_string(), "bad".to_string()]);
        for c in [
            Cell::Empty,
            Cell::Number(-999.0),
            Cell::Number(-9999.0),
            Cell::Number(-99.99),
            Cell::Number(f64::NAN),
            Cell::Text("N/A"),
            Cell::Text(" - "),
            Cell::Text("NaN"),
            Cell::Text("-999"),
            Cell::Number(-8888.0),
            Cell::Text("BAD"),
        ] {
            assert_eq!(read_number(&c, &f), NumberRead::Missing, "{c:?}");
        }
        assert_eq!(
            read_number(&Cell::Text(" 0.25 "), &f),
            NumberRead::Value(0.25)
        );
        assert!(matches!(
            read_number(&Cell::Text("abc"), &f),
            NumberRead::Bad(_)
        ));
        assert!(matches!(
            read_number(&Cell::Text("0,25"), &f),
            NumberRead::Bad(_)
        ));
        assert_eq!(
            read_number(&Cell::Number(-99.0), &f),
            NumberRead::Value(-99.0)
        );
    }
}
