//! Reading a table file into rows of text cells: CSV (`,` `;` or tab, found per file) and spreadsheet sheets.
//!
//! A leaf: it knows files and cells, not scenarios. Each row keeps the number
//! a person sees for it (the CSV line, the spreadsheet row) so that messages
//! can point at it.

use std::path::Path;

/// A table as read: its header row and the rows below it, every cell trimmed text.
#[derive(Debug)]
pub(crate) struct Table {
    /// The sheet read, for a spreadsheet.
    pub sheet: Option<String>,
    /// The cell separator of a CSV file (`None` for a sheet, whose cells need none).
    pub separator: Option<u8>,
    /// The header row's number (1-based).
    pub header_row: usize,
    pub headers: Vec<String>,
    pub rows: Vec<Row>,
}

/// One row below the header.
#[derive(Debug)]
pub(crate) struct Row {
    /// 1-based, as the file (the CSV line) or the sheet numbers it.
    pub number: usize,
    pub cells: Vec<String>,
    /// Where a sheet stored a number rather than text: that cell's text is
    /// ours (`12.5`), so it says nothing about how the file writes decimals.
    pub stored_numbers: Vec<bool>,
}

impl Row {
    /// The cell in column `c`, empty when the row is short.
    pub(crate) fn cell(&self, c: usize) -> &str {
        self.cells.get(c).map_or("", String::as_str)
    }
}

/// Why a table could not be read: what, where (a row) and what to do.
#[derive(Debug)]
pub(crate) struct ReadError {
    pub message: String,
    pub row: Option<usize>,
    pub hint: Option<String>,
}

impl ReadError {
    fn new(message: impl Into<String>, row: Option<usize>, hint: Option<&str>) -> Self {
        ReadError { message: message.into(), row, hint: hint.map(str::to_string) }
    }
}

/// Whether `path` names a spreadsheet (by its extension) rather than a CSV file.
pub(crate) fn is_spreadsheet(path: &Path) -> bool {
    path.extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| ["xlsx", "xlsm", "xls", "ods"].contains(&e.to_ascii_lowercase().as_str()))
}

/// Reads the CSV file at `path`: UTF-8 with or without a byte-order mark,
/// LF or CRLF line ends, the separator (`,` `;` or tab) found from the header line.
pub(crate) fn read_csv(path: &Path) -> Result<Table, ReadError> {
    let text = crate::textfile::read_text(path).map_err(|e| match e {
        crate::textfile::TextError::Io(e) => ReadError::new(
            format!("cannot read the table: {e}"),
            None,
            Some("table files are named relative to the scenario file"),
        ),
        crate::textfile::TextError::Encoding { line, message, hint, .. } => {
            ReadError::new(message, line, Some(hint))
        }
    })?;
    parse_csv(&text)
}

/// The separator of a CSV text: whichever of `,` `;` and tab its first
/// non-blank line holds most often outside quotes (a comma when none).
/// Semicolons are what spreadsheets write where the comma is the decimal sign.
pub(crate) fn separator(text: &str) -> u8 {
    let first = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for c in first.chars() {
        match c {
            '"' => quoted = !quoted,
            ',' if !quoted => counts[0] += 1,
            ';' if !quoted => counts[1] += 1,
            '\t' if !quoted => counts[2] += 1,
            _ => {}
        }
    }
    let seps = [b',', b';', b'\t'];
    // Ties go to the earlier in the list: a comma, then a semicolon.
    let best = (0..3).rev().max_by_key(|&i| counts[i]).unwrap_or(0);
    if counts[best] == 0 {
        b','
    } else {
        seps[best]
    }
}

/// Parses CSV text (already decoded) into a table.
pub(crate) fn parse_csv(text: &str) -> Result<Table, ReadError> {
    let sep = separator(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .delimiter(sep)
        .from_reader(text.as_bytes());
    // A record's own position is where the reader started looking for it,
    // before any blank lines, so a record's line is taken from where it
    // ends: the line of the byte before the reader's position. Counting
    // moves forward only: one pass over the text.
    let mut counted = (0usize, 1usize);
    let mut line_before = |end: u64| {
        let end = (end as usize).min(text.len()).max(1) - 1;
        let newlines = text.as_bytes()[counted.0.min(end)..end].iter().filter(|&&b| b == b'\n').count();
        counted = (end, counted.1 + newlines);
        counted.1
    };
    let mut header: Option<(usize, Vec<String>)> = None;
    let mut rows = Vec::new();
    let mut rec = csv::StringRecord::new();
    loop {
        let more = reader.read_record(&mut rec);
        let line = line_before(reader.position().byte());
        if !more.map_err(|e| ReadError::new(format!("not readable as CSV: {e}"), Some(line), None))? {
            break;
        }
        let cells: Vec<String> = rec.iter().map(str::to_string).collect();
        if cells.iter().all(String::is_empty) {
            continue;
        }
        if header.is_none() {
            header = Some((line, cells));
        } else {
            rows.push(Row { number: line, cells, stored_numbers: Vec::new() });
        }
    }
    let Some((header_row, headers)) = header else {
        return Err(ReadError::new(
            "the table is empty",
            None,
            Some("the first line must be a header row naming the columns"),
        ));
    };
    Ok(Table { sheet: None, separator: Some(sep), header_row, headers, rows })
}

/// Reads sheet `sheet` (the first sheet when `None`) of the spreadsheet at
/// `path` (.xlsx, .xlsm, .xls or .ods).
pub(crate) fn read_sheet(path: &Path, sheet: Option<&str>) -> Result<Table, ReadError> {
    use calamine::{open_workbook_auto, Data, Reader};
    let mut book = open_workbook_auto(path).map_err(|e| {
        ReadError::new(
            format!("cannot read the spreadsheet: {e}"),
            None,
            Some("table files are named relative to the scenario file; save spreadsheets as .xlsx or .ods"),
        )
    })?;
    let names = book.sheet_names();
    let name = match sheet {
        Some(s) => {
            if !names.iter().any(|n| n == s) {
                let list = names.join(", ");
                return Err(ReadError {
                    message: format!(
                        "the spreadsheet has no sheet \"{s}\"{}",
                        crate::suggest::did_you_mean(s, names.iter().map(String::as_str))
                    ),
                    row: None,
                    hint: Some(format!("its sheets are: {list}")),
                });
            }
            s.to_string()
        }
        None => names
            .first()
            .cloned()
            .ok_or_else(|| ReadError::new("the spreadsheet has no sheets", None, None))?,
    };
    let range = book
        .worksheet_range(&name)
        .map_err(|e| ReadError::new(format!("cannot read sheet \"{name}\": {e}"), None, None))?;
    let first_row = range.start().map_or(0, |(r, _)| r as usize);
    let first_col = range.start().map_or(0, |(_, c)| c as usize);
    let mut header: Option<(usize, Vec<String>)> = None;
    let mut rows = Vec::new();
    for (i, r) in range.rows().enumerate() {
        // Cells to the left of the used range are empty; keep columns where the sheet has them.
        let mut cells = vec![String::new(); first_col];
        let mut stored_numbers = vec![false; first_col];
        stored_numbers.extend(r.iter().map(|c| matches!(c, Data::Float(_) | Data::Int(_))));
        cells.extend(r.iter().map(|c| match c {
            Data::Empty => String::new(),
            Data::String(s) => s.trim().to_string(),
            // Shortest text that reads back as the same number: 10, 0.92, 1.5.
            Data::Float(f) => format!("{f}"),
            Data::Int(i) => format!("{i}"),
            Data::Bool(b) => format!("{b}"),
            other => other.to_string().trim().to_string(),
        }));
        if cells.iter().all(String::is_empty) {
            continue;
        }
        let number = first_row + i + 1;
        if header.is_none() {
            header = Some((number, cells));
        } else {
            rows.push(Row { number, cells, stored_numbers });
        }
    }
    let Some((header_row, headers)) = header else {
        return Err(ReadError::new(
            format!("sheet \"{name}\" is empty"),
            None,
            Some("the first row must be a header row naming the columns"),
        ));
    };
    Ok(Table { sheet: Some(name), separator: None, header_row, headers, rows })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_separator_is_found_per_file() {
        assert_eq!(separator("a,b,c\n1,2,3"), b',');
        assert_eq!(separator("a;b;c\r\n1,5;2;3"), b';');
        assert_eq!(separator("a\tb\tc"), b'\t');
        assert_eq!(separator("\"x;y\",b,c"), b',', "a separator inside quotes does not count");
        assert_eq!(separator("single"), b',');
    }

    #[test]
    fn rows_keep_their_line_numbers_across_blank_lines_and_crlf() {
        let t = parse_csv("Part;Op\r\n\r\nA;10\r\nB;20\r\n").unwrap();
        assert_eq!(t.headers, ["Part", "Op"]);
        assert_eq!(t.header_row, 1);
        let numbers: Vec<usize> = t.rows.iter().map(|r| r.number).collect();
        assert_eq!(numbers, [3, 4]);
        assert_eq!(t.rows[1].cell(1), "20");
        assert_eq!(t.rows[1].cell(5), "", "a short row reads as empty cells");
    }
}
