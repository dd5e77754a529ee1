//! Choosing the columns a model needs and dropping the rows where any of
//! them is missing, counting the dropped rows for a warning.

use super::{DataError, Dataset};

impl Dataset {
    /// A new dataset of just the named columns (in the order given, repeats
    /// ignored) without the rows that have a missing cell in any of them;
    /// `skipped_rows` of the result counts those rows. A named column that
    /// holds a cell that is not a number is refused with the error naming it.
    pub fn select<S: AsRef<str>>(&self, names: &[S]) -> Result<Dataset, DataError> {
        let mut wanted: Vec<&str> = Vec::new();
        for n in names {
            if !wanted.contains(&n.as_ref()) {
                wanted.push(n.as_ref());
            }
        }
        let mut cols: Vec<&[f64]> = Vec::with_capacity(wanted.len());
        for name in &wanted {
            cols.push(self.column(name).ok_or_else(|| DataError::UnknownColumn {
                path: self.source.clone(),
                name: name.to_string(),
                available: self.columns.join(", "),
            })?);
        }
        self.check_numeric(&wanted)?;
        let n = self.n_rows();
        let keep: Vec<usize> = (0..n)
            .filter(|&i| cols.iter().all(|c| c.get(i).is_some_and(|v| !v.is_nan())))
            .collect();
        if keep.is_empty() && n > 0 {
            return Err(DataError::NoCompleteRows {
                path: self.source.clone(),
                columns: wanted.join(", "),
            });
        }
        let values = cols
            .iter()
            .map(|c| keep.iter().filter_map(|&i| c.get(i).copied()).collect())
            .collect();
        Ok(Dataset {
            columns: wanted.iter().map(|s| s.to_string()).collect(),
            values,
            text: Vec::new(),
            source: self.source.clone(),
            skipped_rows: n - keep.len(),
        })
    }

    /// The names of the columns, joined for messages.
    pub fn column_list(&self) -> String {
        self.columns.join(", ")
    }
}

#[cfg(test)]
mod tests {
    use super::super::parse_delimited;
    use super::*;

    #[test]
    fn drops_rows_missing_in_selected_columns_only() {
        let d = parse_delimited("x,y,note\n1,2,\n,3,7\n4,,8\n5,6,9\n", "d.csv").unwrap();
        let s = d.select(&["x", "y", "x"]).unwrap();
        assert_eq!(s.columns, vec!["x", "y"]);
        assert_eq!(s.values, vec![vec![1.0, 5.0], vec![2.0, 6.0]]);
        assert_eq!(s.skipped_rows, 2);
        let s = d.select(&["note"]).unwrap();
        assert_eq!(s.values, vec![vec![7.0, 8.0, 9.0]]);
        assert_eq!(s.skipped_rows, 1);
    }

    #[test]
    fn unknown_column_and_no_complete_rows() {
        let d = parse_delimited("x,y\n1,\n,2\n", "d.csv").unwrap();
        assert_eq!(
            d.select(&["z"]).unwrap_err(),
            DataError::UnknownColumn {
                path: "d.csv".into(),
                name: "z".into(),
                available: "x, y".into()
            }
        );
        let e = d.select(&["x", "y"]).unwrap_err();
        assert_eq!(
            e,
            DataError::NoCompleteRows {
                path: "d.csv".into(),
                columns: "x, y".into()
            }
        );
    }
}
