//! Wide layouts made long: a plate-reader table with one row per dose and
//! one column per replicate (`rep1, rep2, rep3`) or per sample (`S1 … S12`)
//! becomes one row per cell, so every command sees an ordinary long table.
//! Columns are named by a list (`rep1,rep2`), a numbered range (`S1..S12`)
//! or a pattern (`rep*`, `S?`, `*` any run of characters, `?` one).

use super::text::TextBuilder;
use super::{DataError, Dataset};

/// True when an option's value names several columns (a list, a range or a
/// pattern) rather than one column.
pub fn is_column_spec(s: &str) -> bool {
    s.contains([',', '*', '?']) || s.contains("..")
}

/// The columns a list, range or pattern names, in the order named (a
/// pattern's matches in file order), each once. A value that is exactly a
/// column's name names that column. `option` is named in errors.
pub fn match_columns(data: &Dataset, spec: &str, option: &str) -> Result<Vec<String>, DataError> {
    if data.has_column(spec) {
        return Ok(vec![spec.to_string()]);
    }
    let none = |pattern: &str| DataError::NoColumnMatches {
        path: data.source.clone(),
        option: option.to_string(),
        pattern: pattern.to_string(),
        available: data.column_list(),
    };
    let unknown = |name: String| DataError::UnknownColumn {
        path: data.source.clone(),
        name,
        available: data.column_list(),
    };
    let mut out: Vec<String> = Vec::new();
    let add = |name: &str, out: &mut Vec<String>| {
        if !out.iter().any(|n| n == name) {
            out.push(name.to_string());
        }
    };
    for item in spec.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        if item.contains(['*', '?']) {
            let hits: Vec<&String> = data.columns.iter().filter(|c| glob(item, c)).collect();
            if hits.is_empty() {
                return Err(none(item));
            }
            for h in hits {
                add(h, &mut out);
            }
        } else if let Some(names) = range_names(item, data.columns.len()) {
            for name in names {
                if !data.has_column(&name) {
                    return Err(unknown(name));
                }
                add(&name, &mut out);
            }
        } else if data.has_column(item) {
            add(item, &mut out);
        } else if item.contains("..") {
            return Err(none(item));
        } else {
            return Err(unknown(item.to_string()));
        }
    }
    if out.is_empty() {
        return Err(none(spec));
    }
    Ok(out)
}

/// The names of a numbered range `S1..S12` (`S01..S12` keeps the width),
/// up to one more than `limit` names (enough to reach a missing one);
/// `None` when the item is not a range of one prefix with numbers.
fn range_names(item: &str, limit: usize) -> Option<Vec<String>> {
    let (a, b) = item.split_once("..")?;
    let split = |s: &str| -> Option<(String, u64, usize)> {
        let s = s.trim();
        let digits = s.len() - s.trim_end_matches(|c: char| c.is_ascii_digit()).len();
        if digits == 0 || digits > 18 {
            return None;
        }
        let (prefix, number) = s.split_at(s.len() - digits);
        Some((prefix.to_string(), number.parse().ok()?, digits))
    };
    let (pa, na, width) = split(a)?;
    let (pb, nb, _) = split(b)?;
    if pa != pb {
        return None;
    }
    let step: i64 = if nb >= na { 1 } else { -1 };
    let count = na.abs_diff(nb).min(limit as u64) + 1;
    Some(
        (0..count)
            .map(|k| {
                let n = (na as i64 + step * k as i64) as u64;
                format!("{pa}{n:0width$}")
            })
            .collect(),
    )
}

/// True when `name` matches the pattern (`*` any run of characters, `?` one).
fn glob(pattern: &str, name: &str) -> bool {
    let p: Vec<char> = pattern.chars().collect();
    let n: Vec<char> = name.chars().collect();
    // Iterative matching with one backtrack point for the last '*'.
    let (mut i, mut j) = (0, 0);
    let mut star: Option<(usize, usize)> = None;
    while j < n.len() {
        // A '*' of the pattern is a wildcard even where the name holds a '*'.
        if i < p.len() && p[i] == '*' {
            star = Some((i, j));
            i += 1;
        } else if i < p.len() && (p[i] == '?' || p[i] == n[j]) {
            i += 1;
            j += 1;
        } else if let Some((si, sj)) = star {
            i = si + 1;
            j = sj + 1;
            star = Some((si, sj + 1));
        } else {
            return false;
        }
    }
    p[i..].iter().all(|&c| c == '*')
}

/// A wide table made long, and what the reshaping did.
#[derive(Debug, Clone, PartialEq)]
pub struct Stacked {
    /// One row per non-empty cell of the stacked columns.
    pub data: Dataset,
    /// Rows of the wide table.
    pub rows_in: usize,
    /// Empty cells of the stacked columns, left out.
    pub empty_cells: usize,
}

/// Stacks `columns` into one column `value`: each row of the table gives
/// one row per non-empty cell of those columns (row by row, columns in the
/// order given), the other columns repeated. With `label`, a text column of
/// that name holds the name of the column each value came from (groups for
/// `--by`). A stacked column holding a cell that is not a number is refused.
pub fn stack_columns(
    data: &Dataset,
    columns: &[String],
    value: &str,
    label: Option<&str>,
) -> Result<Stacked, DataError> {
    data.check_numeric(columns)?;
    let stacked: Vec<&[f64]> = columns.iter().filter_map(|c| data.column(c)).collect();
    let kept: Vec<usize> = (0..data.columns.len())
        .filter(|&j| !columns.contains(&data.columns[j]))
        .collect();
    for name in std::iter::once(value).chain(label) {
        if kept.iter().any(|&j| data.columns[j] == name) {
            return Err(DataError::ReshapeNameTaken {
                path: data.source.clone(),
                name: name.to_string(),
            });
        }
    }
    // (row, stacked column) of every non-empty cell, in output order.
    let n = data.n_rows();
    let cells: Vec<(usize, usize)> = (0..n)
        .flat_map(|i| (0..stacked.len()).map(move |k| (i, k)))
        .filter(|&(i, k)| stacked[k].get(i).is_some_and(|v| !v.is_nan()))
        .collect();
    let mut out = Dataset {
        source: data.source.clone(),
        ..Dataset::default()
    };
    for &j in &kept {
        let name = &data.columns[j];
        out.columns.push(name.clone());
        out.values
            .push(cells.iter().map(|&(i, _)| data.values[j][i]).collect());
        if let Some(t) = data.text_column(name) {
            let mut b = TextBuilder::with_rows(cells.len());
            for &(i, _) in &cells {
                b.push(t.cell(i).unwrap_or(""));
            }
            out.text.push(b.finish(name, t.first_bad.clone(), t.at));
        }
    }
    out.columns.push(value.to_string());
    out.values
        .push(cells.iter().map(|&(i, k)| stacked[k][i]).collect());
    if let Some(label) = label {
        out.columns.push(label.to_string());
        out.values.push(vec![f64::NAN; cells.len()]);
        let mut b = TextBuilder::with_rows(cells.len());
        for &(_, k) in &cells {
            b.push(&columns[k]);
        }
        let first = DataError::LabelColumn {
            path: data.source.clone(),
            column: label.to_string(),
        };
        out.text
            .push(b.finish(label, first, (0, out.columns.len() - 1)));
    }
    Ok(Stacked {
        empty_cells: n * stacked.len() - cells.len(),
        rows_in: n,
        data: out,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::parse_delimited;

    fn plate() -> Dataset {
        parse_delimited(
            "dose,rep1,rep2,rep3,plate\n0.1,1,2,,P1\n0.2,4,5,6,P2\n",
            "plate.csv",
        )
        .unwrap()
    }

    #[test]
    fn lists_ranges_and_patterns() {
        let d = plate();
        let m = |s: &str| match_columns(&d, s, "--y");
        assert_eq!(m("rep*").unwrap(), vec!["rep1", "rep2", "rep3"]);
        assert_eq!(m("rep3, rep1").unwrap(), vec!["rep3", "rep1"]);
        assert_eq!(m("rep1..rep3").unwrap(), vec!["rep1", "rep2", "rep3"]);
        assert_eq!(m("rep?,rep2").unwrap(), vec!["rep1", "rep2", "rep3"]);
        assert_eq!(m("dose").unwrap(), vec!["dose"]);
        let e = m("S*").unwrap_err();
        assert!(matches!(&e, DataError::NoColumnMatches { pattern, .. } if pattern == "S*"));
        assert_eq!(
            e.to_string(),
            "--y 'S*' matches no column of plate.csv (columns: dose, rep1, rep2, rep3, plate)"
        );
        let e = m("rep1..rep4").unwrap_err();
        assert!(matches!(&e, DataError::UnknownColumn { name, .. } if name == "rep4"));
        assert!(matches!(
            m("rep1,rep9").unwrap_err(),
            DataError::UnknownColumn { .. }
        ));
        assert!(glob("S*1", "S11") && glob("*", "") && !glob("S?", "S10"));
        // Found by the read_table fuzzer: a name holding '*' itself.
        assert!(glob("*", "*1") && glob("a*", "a*b") && glob("*b", "*b"));
        assert_eq!(
            range_names("S08..S10", 100).unwrap(),
            vec!["S08", "S09", "S10"]
        );
        assert_eq!(range_names("A1..B2", 100), None);
        // A huge range stops one past the table's width.
        assert_eq!(range_names("S1..S99999999", 3).unwrap().len(), 4);
    }

    #[test]
    fn stacking_skips_empty_cells_and_repeats_the_rest() {
        let d = plate();
        let cols = match_columns(&d, "rep*", "--y").unwrap();
        let s = stack_columns(&d, &cols, "y", None).unwrap();
        assert_eq!(s.rows_in, 2);
        assert_eq!(s.empty_cells, 1);
        assert_eq!(s.data.columns, vec!["dose", "plate", "y"]);
        assert_eq!(s.data.column("dose").unwrap(), &[0.1, 0.1, 0.2, 0.2, 0.2]);
        assert_eq!(s.data.column("y").unwrap(), &[1.0, 2.0, 4.0, 5.0, 6.0]);
        let p = s.data.text_column("plate").unwrap();
        assert_eq!(p.cell(1), Some("P1"));
        assert_eq!(p.cell(2), Some("P2"));

        let s = stack_columns(&d, &cols, "signal", Some("sample")).unwrap();
        let g = s.data.text_column("sample").unwrap();
        assert_eq!(g.labels, vec!["rep1", "rep2", "rep3"]);
        assert_eq!(g.cell(4), Some("rep3"));
        assert!(s.data.select(&["sample"]).is_err());

        let e = stack_columns(&d, &cols, "dose", None).unwrap_err();
        assert!(matches!(e, DataError::ReshapeNameTaken { .. }));
        let e = stack_columns(&d, &["plate".to_string()], "y", None).unwrap_err();
        assert!(matches!(e, DataError::NotANumber { .. }));
    }
}
