//! Splitting delimited text into records of trimmed cells, each with the
//! 1-based line it starts on: one-byte delimiters through the `csv` crate
//! (quoted cells may hold the delimiter, `""` and line breaks), runs of
//! whitespace by our own splitter. Blank lines and lines starting with `#`
//! are skipped; a quote left open at the end of the text is an error.

use super::DataError;
use std::borrow::Cow;

/// How cells are separated on a line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Separator {
    /// One byte: `,` `;` `\t` `|` or any other given with `--delimiter`.
    Byte(u8),
    /// One or more spaces or tabs.
    Whitespace,
}

impl Separator {
    /// The separator as shown in messages and `--verbose` notes.
    pub fn describe(self) -> String {
        match self {
            Separator::Byte(b'\t') => "tab".into(),
            Separator::Byte(b';') => "semicolon".into(),
            Separator::Byte(b',') => "comma".into(),
            Separator::Byte(b'|') => "vertical bar".into(),
            Separator::Byte(b) => format!("'{}'", b as char),
            Separator::Whitespace => "runs of spaces".into(),
        }
    }
}

/// The text with lone carriage returns (old spreadsheet exports) made line feeds.
pub(crate) fn normalise_line_ends(text: &str) -> Cow<'_, str> {
    if text.contains('\r') && !text.contains('\n') {
        Cow::Owned(text.replace('\r', "\n"))
    } else {
        Cow::Borrowed(text)
    }
}

/// One record: the line it starts on and its cells, trimmed.
pub(crate) type Record = (usize, Vec<String>);

/// The records of `text` (line ends already normalised), in order.
pub(crate) fn records<'a>(
    text: &'a str,
    sep: Separator,
    source: &'a str,
) -> Box<dyn Iterator<Item = Result<Record, DataError>> + 'a> {
    match sep {
        Separator::Byte(b) => Box::new(CsvRecords::new(text, b, source)),
        Separator::Whitespace => Box::new(
            text.lines()
                .enumerate()
                .map(|(i, l)| (i + 1, l))
                .filter(|(_, l)| {
                    let t = l.trim();
                    !t.is_empty() && !t.starts_with('#')
                })
                .map(move |(line, l)| {
                    split_whitespace_cells(l)
                        .map(|cells| (line, cells))
                        .ok_or_else(|| DataError::UnterminatedQuote {
                            path: source.to_string(),
                            line,
                        })
                }),
        ),
    }
}

/// Records read by the `csv` crate, with blank and comment records dropped.
struct CsvRecords<'a> {
    text: &'a str,
    source: &'a str,
    delimiter: u8,
    reader: csv::Reader<&'a [u8]>,
    record: csv::StringRecord,
    done: bool,
}

impl<'a> CsvRecords<'a> {
    fn new(text: &'a str, delimiter: u8, source: &'a str) -> Self {
        let reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .delimiter(delimiter)
            .from_reader(text.as_bytes());
        CsvRecords {
            text,
            source,
            delimiter,
            reader,
            record: csv::StringRecord::new(),
            done: false,
        }
    }
}

impl Iterator for CsvRecords<'_> {
    type Item = Result<Record, DataError>;

    fn next(&mut self) -> Option<Self::Item> {
        while !self.done {
            match self.reader.read_record(&mut self.record) {
                Ok(true) => {}
                Ok(false) => {
                    self.done = true;
                    return None;
                }
                Err(e) => {
                    self.done = true;
                    return Some(Err(DataError::Io {
                        path: self.source.to_string(),
                        reason: e.to_string(),
                    }));
                }
            }
            let Some(pos) = self.record.position() else {
                continue;
            };
            let start = (pos.byte() as usize).min(self.text.len());
            let end = (self.reader.position().byte() as usize).clamp(start, self.text.len());
            let raw = self.text.get(start..end).unwrap_or("");
            let body = raw.trim_start();
            if body.trim().is_empty() || body.starts_with('#') {
                continue;
            }
            // The record's position counts from the blank lines the reader skipped before it.
            let lead = &raw[..raw.len() - body.len()];
            let line = pos.line() as usize + lead.matches('\n').count();
            if end == self.text.len() && quote_left_open(body, self.delimiter) {
                self.done = true;
                return Some(Err(DataError::UnterminatedQuote {
                    path: self.source.to_string(),
                    line,
                }));
            }
            let cells = self.record.iter().map(clean_cell).collect();
            return Some(Ok((line, cells)));
        }
        None
    }
}

/// A cell trimmed; a quoted cell after spaces (`a, "b c"`), which the `csv`
/// crate keeps with its quotes, loses them as a quoted cell would.
fn clean_cell(cell: &str) -> String {
    let t = cell.trim();
    let spaced_quote = cell.starts_with(char::is_whitespace)
        && t.len() >= 2
        && t.starts_with('"')
        && t.ends_with('"');
    if spaced_quote {
        t[1..t.len() - 1].replace("\"\"", "\"").trim().to_string()
    } else {
        t.to_string()
    }
}

/// True when the raw text of the last record ends inside a quoted cell
/// (the `csv` crate ends such a cell silently at the end of the input).
fn quote_left_open(raw: &str, delimiter: u8) -> bool {
    let bytes = raw.as_bytes();
    let (mut i, mut field_start, mut in_quotes) = (0, true, false);
    while i < bytes.len() {
        let b = bytes[i];
        if in_quotes {
            if b == b'"' {
                if bytes.get(i + 1) == Some(&b'"') {
                    i += 1;
                } else {
                    in_quotes = false;
                }
            }
        } else if field_start && b == b'"' {
            in_quotes = true;
            field_start = false;
        } else {
            field_start = b == delimiter || b == b'\n' || b == b'\r';
        }
        i += 1;
    }
    in_quotes
}

/// Splits one line at runs of whitespace into trimmed cells; double quotes
/// may wrap a cell; `None` when a quote is left open.
pub(crate) fn split_whitespace_cells(line: &str) -> Option<Vec<String>> {
    let mut cells = Vec::new();
    let mut cur = String::new();
    let mut started = false;
    let mut in_quotes = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if in_quotes {
            if c == '"' {
                if chars.peek() == Some(&'"') {
                    cur.push('"');
                    chars.next();
                } else {
                    in_quotes = false;
                }
            } else {
                cur.push(c);
            }
            continue;
        }
        if c.is_whitespace() {
            if started {
                cells.push(cur.trim().to_string());
                cur.clear();
            }
            started = false;
        } else if c == '"' && cur.trim().is_empty() {
            cur.clear();
            in_quotes = true;
            started = true;
        } else {
            cur.push(c);
            started = true;
        }
    }
    if in_quotes {
        return None;
    }
    if started {
        cells.push(cur.trim().to_string());
    }
    Some(cells)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn all(text: &str, sep: Separator) -> Result<Vec<Record>, DataError> {
        records(text, sep, "t.csv").collect()
    }

    #[test]
    fn quoted_line_breaks_and_line_numbers() {
        let r = all(
            "x,note\n\n1,\"two\nlines\"\n# c\n  \n2, \"q \"\"z\"\"\"\n",
            Separator::Byte(b','),
        )
        .unwrap();
        assert_eq!(
            r,
            vec![
                (1, vec!["x".into(), "note".into()]),
                (3, vec!["1".into(), "two\nlines".into()]),
                (7, vec!["2".into(), "q \"z\"".into()]),
            ]
        );
    }

    #[test]
    fn open_quote_at_the_end_is_an_error() {
        let e = all("x,y\n1,\"2\n3,4\n", Separator::Byte(b',')).unwrap_err();
        assert_eq!(
            e,
            DataError::UnterminatedQuote {
                path: "t.csv".into(),
                line: 2
            }
        );
        assert!(all("x,y\n1,\"2\"\"\"\n", Separator::Byte(b',')).is_ok());
        assert!(all("x y\n\"1 2\n", Separator::Whitespace).is_err());
    }

    #[test]
    fn whitespace_runs() {
        let r = all("x   y\n  1 \"a b\"\n", Separator::Whitespace).unwrap();
        assert_eq!(r[1], (2, vec!["1".into(), "a b".into()]));
    }
}
