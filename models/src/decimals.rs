//! Decimal commas in a user's table file: the one rule, decided once per file from its number cells.
//!
//! Spreadsheets in many locales write decimals with a comma (`12,5`) and then
//! separate cells with `;` (or a tab). Order traces, the measured from-to
//! chart and the routing, demand, location and department tables all read
//! their number cells through this rule:
//!
//! - A *number* here is a word of a cell (words are split at spaces and `/`)
//!   made of digits, one `,` or `.`, digits, and then nothing but letters or
//!   `%` (`12,5`, `0,92`, `6,5h`, `92,5%`); `[12,8]` or `1.234,5` are not.
//! - In a `;`- or tab-separated file, the file writes decimals with a comma
//!   when any number cell holds such a comma; a number with a point in the
//!   same file is then refused, naming both cells (is `1.000` one or a
//!   thousand?). The choice is the file's, never a cell's.
//! - A cell holding YAML (`{ gamma: { mean: 40 min, cv: 0.4 } }`, `[...]`)
//!   is YAML: its numbers are written with points whatever the file does,
//!   and it is neither evidence nor changed.
//! - A `,`-separated file cannot have decimal commas in unquoted cells (the
//!   comma ends the cell), and a quoted `"12,5"` there could as well be
//!   twelve and a half as a thousands group: it is refused, with the fix.

/// How a file writes its decimals, decided by [`decide`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Decimals {
    /// `12.5`, as YAML and every plain CSV writes it.
    Point,
    /// `12,5`: every number's comma is read as a point ([`Decimals::read`]).
    Comma,
}

/// A number cell refused by the rule: where, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Refused {
    /// The file's line or the sheet's row.
    pub line: u64,
    /// The column's header.
    pub column: String,
    /// What is wrong with the cell.
    pub message: String,
    /// What to do.
    pub hint: String,
}

/// Splits a cell into its words (at spaces and `/`), with their byte ranges.
fn words(cell: &str) -> impl Iterator<Item = (usize, &str)> {
    cell.split(|c: char| c.is_whitespace() || c == '/')
        .scan(0usize, move |at, w| {
            let start = *at;
            *at += w.len() + 1;
            Some((start, w))
        })
        .filter(|(_, w)| !w.is_empty())
}

/// The decimal mark of `word` when it is a number with one (digits, the mark,
/// digits, then only letters or `%`): its byte offset and the mark.
fn mark(word: &str) -> Option<(usize, char)> {
    let body = word.strip_prefix(['+', '-']).unwrap_or(word);
    let sign = word.len() - body.len();
    let whole = body.find(|c: char| !c.is_ascii_digit())?;
    if whole == 0 {
        return None;
    }
    let m = body[whole..].chars().next()?;
    if m != ',' && m != '.' {
        return None;
    }
    let rest = &body[whole + 1..];
    let frac = rest.find(|c: char| !c.is_ascii_digit()).unwrap_or(rest.len());
    if frac == 0 || !rest[frac..].chars().all(|c| c.is_alphabetic() || c == '%') {
        return None;
    }
    Some((sign + whole, m))
}

/// Whether `cell` is YAML written in a cell (a mapping or a list).
fn is_yaml(cell: &str) -> bool {
    cell.trim_start().starts_with(['{', '['])
}

/// Whether a number in `cell` (not YAML) is written with `m` as its decimal mark.
fn has(cell: &str, m: char) -> bool {
    !is_yaml(cell) && words(cell).any(|(_, w)| mark(w).is_some_and(|(_, c)| c == m))
}

/// Decides how a file separated by `separator` writes decimals, from its
/// number cells in file order (`(line, column header, cell)`).
pub fn decide<'a, I>(separator: u8, cells: I) -> Result<Decimals, Refused>
where
    I: IntoIterator<Item = (u64, &'a str, &'a str)>,
    I::IntoIter: Clone,
{
    let cells = cells.into_iter();
    let first_comma = cells.clone().find(|(_, _, c)| has(c, ','));
    let Some((comma_line, comma_column, comma_cell)) = first_comma else {
        return Ok(Decimals::Point);
    };
    if separator == b',' {
        return Err(Refused {
            line: comma_line,
            column: comma_column.to_string(),
            message: format!(
                "\"{comma_cell}\" has a decimal comma, but this file separates its cells with commas, \
                 so it could as well be a thousands group"
            ),
            hint: "write the number with a point (12.5), or save the file with `;` between cells, as \
                   spreadsheets do where the comma is the decimal sign"
                .into(),
        });
    }
    if let Some((line, column, cell)) = cells.clone().find(|(_, _, c)| has(c, '.')) {
        return Err(Refused {
            line,
            column: column.to_string(),
            message: format!(
                "\"{cell}\" has a decimal point, but this file writes decimals with a comma \
                 (line {comma_line}, column {comma_column})"
            ),
            hint: "write every number in the file one way: 2,5 (or 2.5 in a comma-separated file)".into(),
        });
    }
    Ok(Decimals::Comma)
}

impl Decimals {
    /// `cell` with every number's decimal comma made a point (unchanged with [`Decimals::Point`]).
    pub fn read(self, cell: &str) -> String {
        let mut out = cell.to_string();
        if self == Decimals::Comma && !is_yaml(cell) {
            for (start, w) in words(cell) {
                if let Some((at, ',')) = mark(w) {
                    out.replace_range(start + at..start + at + 1, ".");
                }
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_with_a_mark_and_words_that_are_not() {
        for (w, m) in [("12,5", Some(',')), ("0.92", Some('.')), ("6,5h", Some(',')), ("92,5%", Some(','))] {
            assert_eq!(mark(w).map(|x| x.1), m, "{w}");
        }
        for w in ["12", "[12,8]", "1.234,5", "a,5", "12,", ",5", "2026-03-02", "1,2,3"] {
            assert_eq!(mark(w), None, "{w}");
        }
    }

    #[test]
    fn a_semicolon_file_with_commas_reads_them_as_points() {
        let cells = [(2, "time", "12,5 min"), (3, "probability", "92,5% / 7,5%"), (4, "id", "saw")];
        let d = decide(b';', cells).unwrap();
        assert_eq!(d, Decimals::Comma);
        assert_eq!(d.read("12,5 min"), "12.5 min");
        assert_eq!(d.read("92,5% / 7,5%"), "92.5% / 7.5%");
        assert_eq!(d.read("12,5 / 8"), "12.5 / 8");
        let yaml = "{ gamma: { mean: 40 min, cv: 0.4 } }";
        assert_eq!(d.read(yaml), yaml, "YAML in a cell writes points");
        assert_eq!(
            decide(b';', [(2, "t", "12,5"), (3, "t", yaml)]).unwrap(),
            Decimals::Comma,
            "nor is it evidence"
        );
        assert_eq!(decide(b';', [(2, "x", "12.5")]).unwrap(), Decimals::Point);
    }

    #[test]
    fn mixed_marks_and_commas_in_a_comma_file_are_refused() {
        let e = decide(b'\t', [(2, "time", "12,5"), (5, "mean", "1.000")]).unwrap_err();
        assert_eq!((e.line, e.column.as_str()), (5, "mean"));
        assert!(e.message.contains("writes decimals with a comma (line 2, column time)"), "{}", e.message);
        let e = decide(b',', [(3, "time", "12,5")]).unwrap_err();
        assert!(e.message.contains("separates its cells with commas"), "{}", e.message);
    }
}
