//! Helpers to write test workbooks: rust_xlsxwriter for ordinary ones, and a minimal
//! hand-made xlsx package for the 1904 date system (rust_xlsxwriter writes 1900-dated
//! workbooks only).

#![allow(dead_code)]

use std::path::{Path, PathBuf};

use hazebook::ingest::{Ingested, InputSpec, read_inputs};

/// A cell to write.
#[derive(Debug, Clone)]
pub enum W {
    S(&'static str),
    Str(String),
    N(f64),
    /// Date-time text `yyyy-mm-dd hh:mm:ss`, written as a true date-time cell.
    D(&'static str),
    Blank,
}

/// Write one sheet per (name, rows) with rust_xlsxwriter.
pub fn write_xlsx(path: &Path, sheets: &[(&str, Vec<Vec<W>>)]) {
    let mut wb = rust_xlsxwriter::Workbook::new();
    let date = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd hh:mm:ss");
    for (name, rows) in sheets {
        let ws = wb.add_worksheet();
        ws.set_name(*name).unwrap();
        for (r, row) in rows.iter().enumerate() {
            for (c, cell) in row.iter().enumerate() {
                let (r, c) = (r as u32, c as u16);
                match cell {
                    W::S(s) => {
                        ws.write_string(r, c, *s).unwrap();
                    }
                    W::Str(s) => {
                        ws.write_string(r, c, s).unwrap();
                    }
                    W::N(v) => {
                        ws.write_number(r, c, *v).unwrap();
                    }
                    W::D(s) => {
                        let d = rust_xlsxwriter::ExcelDateTime::parse_from_str(s).unwrap();
                        ws.write_datetime_with_format(r, c, &d, &date).unwrap();
                    }
                    W::Blank => {}
                }
            }
        }
    }
    wb.save(path).unwrap();
}

pub fn spec(paths: &[&Path]) -> InputSpec {
    InputSpec {
        paths: paths.iter().map(|p| p.to_path_buf()).collect(),
        ..Default::default()
    }
}

pub fn read(path: &Path) -> Ingested {
    read_inputs(&spec(&[path])).unwrap_or_else(|e| panic!("{e}"))
}

pub fn tmp(dir: &tempfile::TempDir, name: &str) -> PathBuf {
    dir.path().join(name)
}

/// The counts reconcile: read = computed + rejected + outside the period, and every
/// accepted row has its origin, observation and warnings.
pub fn assert_reconciles(ing: &Ingested) {
    let c = ing.counts;
    assert_eq!(c.read, c.computed + c.rejected + c.outside_period, "{c:?}");
    assert_eq!(c.computed, ing.observations.len());
    assert_eq!(c.computed, ing.origins.len());
    assert_eq!(c.computed, ing.row_warnings.len());
    assert_eq!(c.computed, ing.sites.len());
    assert_eq!(c.computed, ing.frame.height());
    assert_eq!(c.rejected, ing.rejected.len());
}

fn crc32(data: &[u8]) -> u32 {
    // CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320), as the zip format uses.
    let mut crc = 0xFFFF_FFFFu32;
    for &b in data {
        crc ^= b as u32;
        for _ in 0..8 {
            crc = if crc & 1 != 0 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

/// A zip archive of stored (uncompressed) entries (PKWARE APPNOTE 6.3.x, §4.3).
pub fn stored_zip(entries: &[(&str, String)]) -> Vec<u8> {
    let mut out = Vec::new();
    let mut central = Vec::new();
    for (name, text) in entries {
        let data = text.as_bytes();
        let crc = crc32(data);
        let offset = out.len() as u32;
        let le16 = |v: u16| v.to_le_bytes();
        let le32 = |v: u32| v.to_le_bytes();
        out.extend_from_slice(&le32(0x0403_4b50));
        out.extend_from_slice(&le16(20));
        out.extend_from_slice(&le16(0));
        out.extend_from_slice(&le16(0));
        out.extend_from_slice(&le16(0));
        out.extend_from_slice(&le16(0x21));
        out.extend_from_slice(&le32(crc));
        out.extend_from_slice(&le32(data.len() as u32));
        out.extend_from_slice(&le32(data.len() as u32));
        out.extend_from_slice(&le16(name.len() as u16));
        out.extend_from_slice(&le16(0));
        out.extend_from_slice(name.as_bytes());
        out.extend_from_slice(data);
        central.extend_from_slice(&le32(0x0201_4b50));
        central.extend_from_slice(&le16(20));
        central.extend_from_slice(&le16(20));
        central.extend_from_slice(&le16(0));
        central.extend_from_slice(&le16(0));
        central.extend_from_slice(&le16(0));
        central.extend_from_slice(&le16(0x21));
        central.extend_from_slice(&le32(crc));
        central.extend_from_slice(&le32(data.len() as u32));
        central.extend_from_slice(&le32(data.len() as u32));
        central.extend_from_slice(&le16(name.len() as u16));
        central.extend_from_slice(&[0; 12]);
        central.extend_from_slice(&le32(offset));
        central.extend_from_slice(name.as_bytes());
    }
    let cd_offset = out.len() as u32;
    let n = entries.len() as u16;
    out.extend_from_slice(&central);
    out.extend_from_slice(&0x0605_4b50u32.to_le_bytes());
    out.extend_from_slice(&[0; 4]);
    out.extend_from_slice(&n.to_le_bytes());
    out.extend_from_slice(&n.to_le_bytes());
    out.extend_from_slice(&(central.len() as u32).to_le_bytes());
    out.extend_from_slice(&cd_offset.to_le_bytes());
    out.extend_from_slice(&[0; 2]);
    out
}

/// A one-sheet xlsx (ECMA-376 SpreadsheetML) in the 1900 or 1904 date system. `rows` hold
/// cells as text; a cell `=date:<serial>` is a number with a date format, `=num:<v>` a
/// number, anything else an inline string.
pub fn write_minimal_xlsx(path: &Path, date1904: bool, rows: &[Vec<String>]) {
    let ns = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";
    let rns = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";
    let mut sheet = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><worksheet xmlns=\"{ns}\"><sheetData>"
    );
    for (r, row) in rows.iter().enumerate() {
        sheet.push_str(&format!("<row r=\"{}\">", r + 1));
        for (c, v) in row.iter().enumerate() {
            let a1 = format!("{}{}", (b'A' + c as u8) as char, r + 1);
            if let Some(s) = v.strip_prefix("=date:") {
                sheet.push_str(&format!("<c r=\"{a1}\" s=\"1\"><v>{s}</v></c>"));
            } else if let Some(s) = v.strip_prefix("=num:") {
                sheet.push_str(&format!("<c r=\"{a1}\"><v>{s}</v></c>"));
            } else if !v.is_empty() {
                sheet.push_str(&format!(
                    "<c r=\"{a1}\" t=\"inlineStr\"><is><t>{v}</t></is></c>"
                ));
            }
        }
        sheet.push_str("</row>");
    }
    sheet.push_str("</sheetData></worksheet>");
    let entries = vec![
        ("[Content_Types].xml", "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\"><Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/><Default Extension=\"xml\" ContentType=\"application/xml\"/><Override PartName=\"/xl/workbook.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml\"/><Override PartName=\"/xl/worksheets/sheet1.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml\"/><Override PartName=\"/xl/styles.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml\"/></Types>".to_string()),
        ("_rels/.rels", "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\"><Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument\" Target=\"xl/workbook.xml\"/></Relationships>".to_string()),
        ("xl/workbook.xml", format!("<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><workbook xmlns=\"{ns}\" xmlns:r=\"{rns}\"><workbookPr{}/><sheets><sheet name=\"data\" sheetId=\"1\" r:id=\"rId1\"/></sheets></workbook>", if date1904 { " date1904=\"1\"" } else { "" })),
        ("xl/_rels/workbook.xml.rels", "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\"><Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet\" Target=\"worksheets/sheet1.xml\"/><Relationship Id=\"rId2\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/styles\" Target=\"styles.xml\"/></Relationships>".to_string()),
        ("xl/styles.xml", format!("<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?><styleSheet xmlns=\"{ns}\"><numFmts count=\"1\"><numFmt numFmtId=\"164\" formatCode=\"yyyy\\-mm\\-dd\\ hh:mm\"/></numFmts><fonts count=\"1\"><font/></fonts><fills count=\"1\"><fill/></fills><borders count=\"1\"><border/></borders><cellStyleXfs count=\"1\"><xf/></cellStyleXfs><cellXfs count=\"2\"><xf numFmtId=\"0\"/><xf numFmtId=\"164\" applyNumberFormat=\"1\"/></cellXfs></styleSheet>")),
        ("xl/worksheets/sheet1.xml", sheet),
    ];
    std::fs::write(path, stored_zip(&entries)).unwrap();
}

/// A one-sheet OpenDocument spreadsheet (ODF 1.2, part 1, §9.1). Cells: `=date:<ISO>` a
/// date cell, `=num:<v>` a float cell, anything else a string cell.
pub fn write_minimal_ods(path: &Path, sheet: &str, rows: &[Vec<String>]) {
    let mut table = format!("<table:table table:name=\"{sheet}\">");
    for row in rows {
        table.push_str("<table:table-row>");
        for v in row {
            if let Some(d) = v.strip_prefix("=date:") {
                table.push_str(&format!("<table:table-cell office:value-type=\"date\" office:date-value=\"{d}\"><text:p>{d}</text:p></table:table-cell>"));
            } else if let Some(n) = v.strip_prefix("=num:") {
                table.push_str(&format!("<table:table-cell office:value-type=\"float\" office:value=\"{n}\"><text:p>{n}</text:p></table:table-cell>"));
            } else if v.is_empty() {
                table.push_str("<table:table-cell/>");
            } else {
                table.push_str(&format!("<table:table-cell office:value-type=\"string\"><text:p>{v}</text:p></table:table-cell>"));
            }
        }
        table.push_str("</table:table-row>");
    }
    table.push_str("</table:table>");
    let content = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?><office:document-content xmlns:office=\"urn:oasis:names:tc:opendocument:xmlns:office:1.0\" xmlns:table=\"urn:oasis:names:tc:opendocument:xmlns:table:1.0\" xmlns:text=\"urn:oasis:names:tc:opendocument:xmlns:text:1.0\" office:version=\"1.2\"><office:body><office:spreadsheet>{table}</office:spreadsheet></office:body></office:document-content>"
    );
    let manifest = "<?xml version=\"1.0\" encoding=\"UTF-8\"?><manifest:manifest xmlns:manifest=\"urn:oasis:names:tc:opendocument:xmlns:manifest:1.0\" manifest:version=\"1.2\"><manifest:file-entry manifest:full-path=\"/\" manifest:media-type=\"application/vnd.oasis.opendocument.spreadsheet\"/><manifest:file-entry manifest:full-path=\"content.xml\" manifest:media-type=\"text/xml\"/></manifest:manifest>";
    let entries = vec![
        (
            "mimetype",
            "application/vnd.oasis.opendocument.spreadsheet".to_string(),
        ),
        ("META-INF/manifest.xml", manifest.to_string()),
        ("content.xml", content),
    ];
    std::fs::write(path, stored_zip(&entries)).unwrap();
}
