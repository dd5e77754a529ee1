//! Guessing how a table is laid out when the user has not said: the
//! delimiter (the candidate found the same number of times on the most
//! lines), the decimal mark (a comma only where that is unambiguous: a
//! `;`-separated file with `1,5` cells and no `1.5` cells), and the header
//! row (the first row of non-empty names that is followed by a row holding
//! a number). The same header rule serves text files and workbooks.

use super::records::{Record, Separator};
use super::DataError;

/// The decimal mark of number cells.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum DecimalMark {
    /// `1.5` (the default).
    #[default]
    Point,
    /// `1,5`: a cell holding a point is then not a number.
    Comma,
}

/// Lines looked at to guess the delimiter and the header.
pub(crate) const SNIFF_ROWS: usize = 50;

/// Delimiters tried, in order of preference when two fit equally well: a
/// comma last, since it may be a decimal mark.
const CANDIDATES: [u8; 4] = [b'\t', b';', b'|', b','];

/// The delimiter that appears the same number of times (at least once) on
/// the most of the first [`SNIFF_ROWS`] lines (at least half of them);
/// runs of whitespace when none does.
pub(crate) fn detect_separator(text: &str) -> Separator {
    let lines: Vec<&str> = text
        .lines()
        .filter(|l| {
            let t = l.trim();
            !t.is_empty() && !t.starts_with('#')
        })
        .take(SNIFF_ROWS)
        .collect();
    let mut best: Option<(usize, u8)> = None;
    for &d in &CANDIDATES {
        let counts: Vec<usize> = lines.iter().map(|l| count_outside_quotes(l, d)).collect();
        // The most common non-zero count, and on how many lines it is found.
        let mut score = 0;
        for &c in counts.iter().filter(|&&c| c > 0) {
            score = score.max(counts.iter().filter(|&&k| k == c).count());
        }
        // Found on at least half the lines, and on two when there are two.
        let enough = score > 0 && 2 * score >= lines.len() && (score >= 2 || lines.len() == 1);
        if enough && best.map_or(true, |(s, _)| score > s) {
            best = Some((score, d));
        }
    }
    best.map_or(Separator::Whitespace, |(_, d)| Separator::Byte(d))
}

/// How often `d` occurs on the line outside double quotes.
fn count_outside_quotes(line: &str, d: u8) -> usize {
    let mut in_quotes = false;
    let mut n = 0;
    for &b in line.as_bytes() {
        if b == b'"' {
            in_quotes = !in_quotes;
        } else if b == d && !in_quotes {
            n += 1;
        }
    }
    n
}

/// True for `12,5`, `-0,25`, `3,1e-4`: digits, one comma, digits.
pub(crate) fn comma_number(cell: &str) -> bool {
    let s = cell.strip_prefix(['-', '+']).unwrap_or(cell);
    let Some((a, b)) = s.split_once(',') else {
        return false;
    };
    let b = b.split_once(['e', 'E']).map_or(b, |(m, _)| m);
    !a.is_empty()
        && !b.is_empty()
        && a.bytes().all(|c| c.is_ascii_digit())
        && b.bytes().all(|c| c.is_ascii_digit())
        && cell.replacen(',', ".", 1).parse::<f64>().is_ok()
}

/// True for a number written with a decimal point (`1.5`, `.5`, `2.`).
fn point_number(cell: &str) -> bool {
    cell.contains('.') && cell.parse::<f64>().is_ok()
}

/// Where the first cell of a kind was seen: (line, column name or number).
type Seen = Option<(usize, usize)>;

/// The decimal mark of a `;`-separated file read in full: a comma when some
/// cells are written `1,5` and none `1.5`; refused when both appear. Other
/// delimiters keep the point (a comma there needs `--decimal ,`).
pub(crate) fn detect_decimal<I>(
    sep: Separator,
    records: I,
    source: &str,
) -> Result<DecimalMark, DataError>
where
    I: Iterator<Item = Result<Record, DataError>>,
{
    if sep != Separator::Byte(b';') {
        return Ok(DecimalMark::Point);
    }
    let (mut comma, mut point): (Seen, Seen) = (None, None);
    for r in records {
        let (line, cells) = r?;
        for (j, c) in cells.iter().enumerate() {
            if comma.is_none() && comma_number(c) {
                comma = Some((line, j + 1));
            }
            if point.is_none() && point_number(c) {
                point = Some((line, j + 1));
            }
        }
        if comma.is_some() && point.is_some() {
            break;
        }
    }
    match (comma, point) {
        (Some(c), Some(p)) => Err(DataError::AmbiguousDecimal {
            path: source.to_string(),
            comma_line: c.0,
            comma_column: c.1,
            point_line: p.0,
            point_column: p.1,
        }),
        (Some(_), None) => Ok(DecimalMark::Comma),
        _ => Ok(DecimalMark::Point),
    }
}

/// A cell's value with this decimal mark: NaN for an empty cell (missing);
/// `Err(true)` for text that is not a number, `Err(false)` for NaN,
/// infinities and overflowing numbers.
pub(crate) fn parse_number(cell: &str, mark: DecimalMark) -> Result<f64, bool> {
    if cell.is_empty() {
        return Ok(f64::NAN);
    }
    let parsed = match mark {
        DecimalMark::Point => cell.parse::<f64>(),
        DecimalMark::Comma if cell.contains('.') => return Err(true),
        DecimalMark::Comma => cell.replacen(',', ".", 1).parse::<f64>(),
    };
    match parsed {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(false),
        Err(_) => Err(true),
    }
}

/// What a cell holds, for finding the header.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Class {
    Empty,
    Number,
    Text,
}

/// The class of a text cell under this decimal mark; `1,5` counts as a
/// number under either mark (it is no column name: a data row of a file
/// whose decimal comma was not given).
pub(crate) fn class_of(cell: &str, mark: DecimalMark) -> Class {
    if cell.is_empty() {
        Class::Empty
    } else if parse_number(cell, mark).is_ok() || comma_number(cell) {
        Class::Number
    } else {
        Class::Text
    }
}

/// The index of the header among the first rows: the first row whose cells
/// are all non-empty and not all numbers, followed by a row (of the same
/// width when `same_width`) holding at least one number. `None` when no row
/// fits; the caller then takes the first row and its checks say what is wrong.
pub(crate) fn find_header(rows: &[Vec<Class>], same_width: bool) -> Option<usize> {
    rows.windows(2).position(|w| {
        let (head, next) = (&w[0], &w[1]);
        !head.is_empty()
            && head.iter().all(|c| *c != Class::Empty)
            && head.contains(&Class::Text)
            && next.contains(&Class::Number)
            && (!same_width || head.len() == next.len())
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::records::records;

    #[test]
    fn delimiters() {
        assert_eq!(
            detect_separator("x;y\n0,5;1,25\n1,5;2\n"),
            Separator::Byte(b';')
        );
        assert_eq!(detect_separator("x\ty\n0,5\t1\n"), Separator::Byte(b'\t'));
        assert_eq!(
            detect_separator("Plate 3, run 2\nx,y\n1,2\n3,4\n"),
            Separator::Byte(b',')
        );
        assert_eq!(detect_separator("a|b|c\n1|2|3\n"), Separator::Byte(b'|'));
        assert_eq!(
            detect_separator("x,note\n1,\"a;b\"\n2,c;d;e\n"),
            Separator::Byte(b',')
        );
        assert_eq!(detect_separator("x y\n1 2\n"), Separator::Whitespace);
        assert_eq!(detect_separator("y\n1\n"), Separator::Whitespace);
        assert_eq!(
            detect_separator("x   y\n 1 2\n3\t 4.5\n"),
            Separator::Whitespace
        );
        assert_eq!(detect_separator("a,b"), Separator::Byte(b','));
    }

    fn decimal(text: &str) -> Result<DecimalMark, DataError> {
        let sep = detect_separator(text);
        detect_decimal(sep, records(text, sep, "t.csv"), "t.csv")
    }

    #[test]
    fn decimal_marks() {
        assert_eq!(decimal("x;y\n0,5;1\n").unwrap(), DecimalMark::Comma);
        assert_eq!(decimal("x;y\n0.5;1\n").unwrap(), DecimalMark::Point);
        assert_eq!(decimal("x;y\n5;1\n").unwrap(), DecimalMark::Point);
        // Commas in a tab-separated file need --decimal.
        assert_eq!(decimal("x\ty\n0,5\t1\n").unwrap(), DecimalMark::Point);
        let e = decimal("x;y\n0,5;1\n2;1.5\n").unwrap_err();
        assert_eq!(
            e,
            DataError::AmbiguousDecimal {
                path: "t.csv".into(),
                comma_line: 2,
                comma_column: 1,
                point_line: 3,
                point_column: 2
            }
        );
    }

    #[test]
    fn numbers_under_each_mark() {
        assert_eq!(parse_number("1,25", DecimalMark::Comma), Ok(1.25));
        assert_eq!(parse_number("-3,5e2", DecimalMark::Comma), Ok(-350.0));
        assert_eq!(parse_number("1.25", DecimalMark::Comma), Err(true));
        assert_eq!(parse_number("1,25", DecimalMark::Point), Err(true));
        assert!(parse_number("", DecimalMark::Comma).unwrap().is_nan());
        assert_eq!(parse_number("inf", DecimalMark::Point), Err(false));
        assert!(comma_number("12,5") && comma_number("-0,25") && !comma_number("1,2,3"));
        assert!(!comma_number("a,b") && !comma_number(",5"));
    }

    #[test]
    fn header_after_title_rows() {
        use Class::*;
        let rows = vec![
            vec![Text],
            vec![Text, Empty, Empty],
            vec![Text, Text, Text],
            vec![Number, Number, Empty],
        ];
        assert_eq!(find_header(&rows, true), Some(2));
        assert_eq!(find_header(&rows[2..], true), Some(0));
        // Numbers only, or a name missing: no header found.
        assert_eq!(find_header(&[vec![Number], vec![Number]], true), None);
        assert_eq!(
            find_header(&[vec![Text, Empty], vec![Number, Number]], true),
            None
        );
        // A title as wide as the table, right above the header.
        assert_eq!(
            find_header(
                &[vec![Text, Text], vec![Text, Text], vec![Number, Text]],
                true
            ),
            Some(1)
        );
    }
}
