//! CSV tables with a header row whose column names carry their units (`time_s`, `u_m_per_s`).

/// One column of a CSV table.
#[derive(Clone, Copy, Debug)]
pub enum Column<'a> {
    /// Measured or computed values: full precision (`{:e}`, shortest round-trip form), NaN as
    /// an empty cell.
    Real(&'a [f64]),
    /// Counts (particles, steps, cells): written as integers ("30", never "3e1").
    Count(&'a [u64]),
    /// Words and sentences: quoted when they hold a comma, a quote or a line break (RFC 4180).
    Text(&'a [String]),
}

/// A CSV cell of text, quoted only when it must be (RFC 4180).
fn text_cell(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

impl Column<'_> {
    fn len(&self) -> usize {
        match self {
            Column::Real(c) => c.len(),
            Column::Count(c) => c.len(),
            Column::Text(c) => c.len(),
        }
    }

    fn cell(&self, row: usize) -> String {
        match self {
            Column::Real(c) if c[row].is_nan() => String::new(),
            Column::Real(c) => format!("{:e}", c[row]),
            Column::Count(c) => c[row].to_string(),
            Column::Text(c) => text_cell(&c[row]),
        }
    }
}

/// A CSV document of equal-length columns of real values ([`Column::Real`]); see
/// [`csv_table`] for tables with count columns.
pub fn csv_document(headers: &[&str], columns: &[&[f64]]) -> Result<String, String> {
    let columns: Vec<Column<'_>> = columns.iter().map(|c| Column::Real(c)).collect();
    csv_table(headers, &columns)
}

/// A CSV document of equal-length columns, each written as its kind says ([`Column`]); a
/// header is quoted like a text cell when it must be.
pub fn csv_table(headers: &[&str], columns: &[Column<'_>]) -> Result<String, String> {
    if headers.len() != columns.len() {
        return Err(format!(
            "{} headers for {} columns",
            headers.len(),
            columns.len()
        ));
    }
    let rows = columns.first().map_or(0, |c| c.len());
    if let Some((h, c)) = headers.iter().zip(columns).find(|(_, c)| c.len() != rows) {
        return Err(format!(
            "column {h} has {} rows, the first has {rows}",
            c.len()
        ));
    }
    let headers: Vec<String> = headers.iter().map(|h| text_cell(h)).collect();
    let mut out = headers.join(",");
    out.push('\n');
    for r in 0..rows {
        let cells: Vec<String> = columns.iter().map(|c| c.cell(r)).collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_cells_are_quoted_only_when_needed() {
        assert_eq!(text_cell("plain"), "plain");
        assert_eq!(text_cell("a, b"), "\"a, b\"");
        assert_eq!(text_cell("say \"x\""), "\"say \"\"x\"\"\"");
        let notes = ["".to_string(), "a, b".to_string()];
        let x = [0.5, f64::NAN];
        let text = csv_table(&["x", "note"], &[Column::Real(&x), Column::Text(&notes)]).unwrap();
        assert_eq!(text, "x,note\n5e-1,\n,\"a, b\"\n");
    }

    #[test]
    fn writes_header_and_rows() {
        let t = [0.0, 0.5];
        let u = [1.25e-5, f64::NAN];
        let text = csv_document(&["time_s", "u_m_per_s"], &[&t, &u]).unwrap();
        assert_eq!(text, "time_s,u_m_per_s\n0e0,1.25e-5\n5e-1,\n");
        let parsed: f64 = text
            .lines()
            .nth(1)
            .unwrap()
            .split(',')
            .nth(1)
            .unwrap()
            .parse()
            .unwrap();
        assert_eq!(parsed, 1.25e-5);
        assert!(csv_document(&["a"], &[&t, &u]).is_err());
        assert!(csv_document(&["a", "b"], &[&t, &[1.0]]).is_err());
    }

    #[test]
    fn counts_are_written_as_integers() {
        // A real 30.0 is "3e1"; a count of 30 particles must read "30".
        let y = [2.0e-5, 6.0e-5, 1.0e-4];
        let n = [30u64, 0, 1_000_000];
        let text = csv_table(
            &["y_m", "particles"],
            &[Column::Real(&y), Column::Count(&n)],
        )
        .unwrap();
        assert_eq!(text, "y_m,particles\n2e-5,30\n6e-5,0\n1e-4,1000000\n");
        assert!(
            csv_table(
                &["y_m", "particles"],
                &[Column::Real(&y), Column::Count(&n[..2])]
            )
            .is_err()
        );
    }
}
